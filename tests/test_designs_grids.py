"""The FROM:TO:STEP readers of the designs: any text gives a grid or one InputError."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.designs.grids import MAX_GRID_POINTS, ionic_values, ph_values
from selector.errors import InputError


def test_ph_grid_includes_both_ends():
    assert ph_values("6.0:8.0:0.5") == [6.0, 6.5, 7.0, 7.5, 8.0]
    assert ph_values("4:5", "optional", 0.25) == [4.0, 4.25, 4.5, 4.75, 5.0]
    assert ph_values("7", "optional") == [7.0]


def test_ionic_grid_reads_units():
    assert ionic_values("50mM:150mM:50mM") == pytest.approx([0.05, 0.1, 0.15])
    assert ionic_values("0.1") == [0.1]


@pytest.mark.parametrize("text", ["", "6:8", "8:6:1", "6:8:0", "6:8:-1", "a:b:c", "6:16:1", "6:8:0.001", "nan:8:1"])
def test_bad_ph_ranges_are_refused(text):
    with pytest.raises(InputError):
        ph_values(text)


@settings(max_examples=300, deadline=None)
@given(st.text(max_size=30))
def test_any_text_gives_a_grid_or_input_error(text):
    for read in (lambda t: ph_values(t, "optional", 0.1), ionic_values):
        try:
            values = read(text)
        except InputError:
            continue
        assert 1 <= len(values) <= MAX_GRID_POINTS
        assert values == sorted(values)
