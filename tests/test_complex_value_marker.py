"""complex_values.csv's ``rejected`` marker: a value judged wrong is listed, never used, and needs why.

The shipped rejected values (llnl.dat's CoSO4, FeSO4+, Fe(SO4)2-; minteq.v4.dat's Ni(SO4)2-2) and the
spread they leave are checked against the database files in tests/test_catalog_nist46.py.
"""

from __future__ import annotations

import pytest

from catalog import read_catalog
from tests.test_catalog_loader import edit


def test_a_rejected_value_needs_its_reason(catalog_copy):
    edit(catalog_copy, "complex_values.csv", {"complex_id": "NaHPO4-"}, {"chosen": "rejected", "why": ""})
    edit(catalog_copy, "complex_values.csv", {"complex_id": "KHPO4-"}, {"chosen": "maybe"})
    with pytest.raises(Exception) as raised:
        read_catalog(catalog_copy)
    message = str(raised.value)
    assert "complex_values.csv:2: why: expected the reason a value marked rejected is judged wrong" in message
    assert "complex_values.csv:3: chosen: expected one of true, false, rejected, got 'maybe'" in message


def test_a_rejected_value_of_better_rank_is_passed_over(catalog_copy):
    # llnl.dat's CoSO4 0.0436, given a better kind than the complexes.csv row, would replace it;
    # marked rejected it is passed over and complexes.csv's 2.3 stays.
    edit(catalog_copy, "complex_values.csv", {"complex_id": "CoSO4"},
         {"source_kind": "measured-review", "chosen": "rejected"})
    edit(catalog_copy, "complexes.csv", {"complex_id": "CoSO4"}, {"source_kind": "handbook"})
    co = {c.complex_id: c for c in read_catalog(catalog_copy).complexes}["CoSO4"]
    assert (co.log_beta.value, co.log_beta.source) == (2.3, "minteq4")
    edit(catalog_copy, "complex_values.csv", {"complex_id": "CoSO4"}, {"chosen": "false"})
    co = {c.complex_id: c for c in read_catalog(catalog_copy).complexes}["CoSO4"]
    assert (co.log_beta.value, co.log_beta.source) == (0.0436, "llnl")  # the marker, not the data, decided
