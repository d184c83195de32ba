"""The remedy search (selector.remedies.find_remedy) on hand-made feasibility rules: where it starts
(the nearest mix's value of the violated limit), where it may end, and that every value it returns
was checked.  No published value or source is involved: these are properties of the search, each rule a
threshold written here (feasible at or below a concentration, or at or below a capacity floor)."""

from __future__ import annotations

import pytest

from selector.remedies import find_remedy
from selector.spec import make_spec

SPEC = make_spec(ph=7.4, buffer_conc_mol_l=0.05)


def conc_rule(limit_mol_l: float):
    """A system feasible with a buffer concentration at or below ``limit_mol_l``; the asked values kept."""
    asked: list[float | None] = []

    def check(spec, system_id):
        asked.append(spec.buffer_conc_mol_l)
        ok = spec.buffer_conc_mol_l is not None and spec.buffer_conc_mol_l <= limit_mol_l
        return ok, spec.buffer_conc_mol_l if ok else None
    return check, asked


def test_the_nearest_value_is_the_remedy_after_one_check():
    # The nearest mix reaches 5.52 mM (say, a free acid at its solubility): 5.5 mM, 2 significant
    # figures on the feasible side, checked once, is the remedy.
    check, asked = conc_rule(0.00552)
    remedy, reason = find_remedy("x", SPEC, check, nearest={"buffer_conc_mol_l": 0.00552})
    assert reason is None and remedy is not None
    assert (remedy.option, remedy.value, remedy.field_value) == ("--conc", "5.5mM", pytest.approx(0.0055))
    assert asked == [pytest.approx(0.0055)]


def test_a_nearest_value_beyond_the_scan_is_no_remedy():
    # The nearest mix keeps a metal below its bound only at 99 nM of buffer: 0.2 % of the spec's 50 mM,
    # below the 1 % the scan goes to (SCAN_FACTORS).  Offered before as "lower --conc from 50mM to
    # 9.9e-05mM"; now, as the search without the hint says, no single change.
    check, asked = conc_rule(1e-7)
    remedy, reason = find_remedy("x", SPEC, check, nearest={"buffer_conc_mol_l": 9.9e-8})
    assert remedy is None and reason.startswith("no single change")
    assert all(c is None or c >= 0.01 * 0.05 for c in asked), asked


def test_a_nearest_value_that_fails_its_check_falls_back_to_the_search():
    # A hint on the infeasible side (the limit 19.5 mM, the hint 20.8 mM): 20 mM and 20.8 mM fail
    # their checks, then the scan and bisection find the limit as before (within the bisection's
    # 5 steps and the rounding to 2 figures: 13.5 to 19.5 mM).
    check, asked = conc_rule(0.0195)
    remedy, _ = find_remedy("x", SPEC, check, nearest={"buffer_conc_mol_l": 0.0208})
    assert asked[:2] == [pytest.approx(0.020), pytest.approx(0.0208)]
    assert remedy is not None and 0.0135 <= remedy.field_value <= 0.0195
    assert check(remedy.apply(SPEC), "x")[0]


def test_a_capacity_at_or_below_the_default_is_still_searched_without_a_hint():
    # A spec with no concentration and no load assumes the default floor (10 mM/pH, common
    # practice: selector.optimise.DEFAULT_CAPACITY_MOL_L_PER_PH) when its capacity is left out, so
    # "no capacity" is no relaxation of 8 mM/pH.  A system feasible at a floor of 2 mM/pH or less,
    # and no nearest value (the nearest mix also broke another limit): the bisection still finds
    # the floor (2 mM/pH, within its 5 steps and the rounding).  Before: "no single change".
    from selector.optimise import assumed_capacity

    spec = make_spec(ph=7.4, capacity_mol_l_per_ph=0.008)

    def check(changed, system_id):
        return assumed_capacity(changed) <= 0.002, None

    remedy, reason = find_remedy("x", spec, check)
    assert reason is None and remedy is not None and remedy.option == "--capacity"
    assert 0.0015 <= remedy.field_value <= 0.002


def test_a_nearest_capacity_beyond_the_bisection_is_no_remedy():
    # pH 8.5, 25 mM/pH, I <= 10 mM, Mg <= 10 % at 1 mM: the nearest pyrophosphate mix meets the
    # metal limit only at 7.4 µM/pH of capacity, and "lower --capacity from 25 to 0.0074" was offered.
    # The bisection goes down to 25/32 = 0.78 mM/pH at most: a hint below that is no remedy.
    spec = make_spec(ph=8.5, capacity_mol_l_per_ph=0.025)
    asked = []

    def check(changed, system_id):
        asked.append(changed.capacity_mol_l_per_ph)
        return changed.capacity_mol_l_per_ph <= 7.5e-6, None

    remedy, reason = find_remedy("x", spec, check, nearest={"capacity_mol_l_per_ph": 7.4e-6})
    assert remedy is None and reason.startswith("no single change")
    assert min(asked) >= 0.025 / 32


def test_the_ionic_strength_cap_is_bisected_on_a_log_scale():
    # A cap of 10 mM, feasible from 31 mM up.  Between 10 mM and the relaxed 5 mol/L a linear
    # bisection's 5 steps end at 166 mM ("raise to 0.17", 16 times the change needed); on a log
    # scale they end within a factor 500^(1/32) = 1.21 of the limit: 31-38 mM, then rounded.
    spec = make_spec(ph=7.4, buffer_conc_mol_l=0.02, ionic_strength_max_mol_l=0.01)

    def check(changed, system_id):
        return changed.ionic_strength_max_mol_l is not None and changed.ionic_strength_max_mol_l >= 0.031, None

    remedy, _ = find_remedy("x", spec, check)
    assert remedy is not None and remedy.option == "--ionic-strength-max"
    assert 0.031 <= remedy.field_value <= 0.038
