"""A ± below the printed precision prints with the digits that show it (selector.digits.uncertainty_digits).

Case: the 0.025/0.025 mol/kg phosphate standard's buffer capacity β is 28.79 mM per pH with a
standard uncertainty from the constants of about 2e-4 mM per pH (at pH ≈ pKa2, β is at its
maximum, so the pKa's uncertainty moves it only to second order; measured here 2.13e-7 mol/L
per pH).  Printed at two decimals it read "± 0.00", as if β were exact.
"""

from __future__ import annotations

import pytest
from cli_helpers import run

from selector.digits import uncertainty_digits
from selector.report import plus_minus


@pytest.mark.parametrize(("uncertainty", "decimals", "text"), [
    (0.000213, 2, "0.0002"),   # below the precision: the first non-zero digit shows
    (0.00096, 3, "0.001"),     # rounds up into the precision: unchanged
    (0.021, 2, "0.02"),        # at the precision: unchanged
    (1.5, 2, "1.50"),
    (0.0, 2, "0.00"),          # an exact zero stays at the precision
    (1e-12, 3, "0.000000000"),  # beyond selector.digits.MOST_DIGITS: equal for any reader
])
def test_uncertainty_shows_a_digit(uncertainty, decimals, text):
    assert uncertainty_digits(uncertainty, decimals) == text


def test_plus_minus_uses_it_for_fixed_point_only():
    assert plus_minus(2.13e-7, ".2f", 1000) == " ± 0.0002"
    assert plus_minus(0.0291, ".3f") == " ± 0.029"
    assert plus_minus(0.0291, ".3g") == " ± 0.0291"
    assert plus_minus(None, ".2f") == ""


def test_ph_text_capacity_plus_minus_is_not_zero(capsys):
    code, out, _ = run(capsys, "ph", "KH2PO4=25mM", "Na2HPO4=25mM")
    line = next(line for line in out.splitlines() if "buffer capacity" in line)
    assert code == 0 and "28.79 ± 0.0002 mM per pH unit" in line
