"""Designs beyond one buffer: a pH series, a broad-range mixture, a plate from stocks.

Every member, grid pH and well is re-solved here by the exact engine from the composition
or volumes the design prints (JSON), and checked against the tolerances issue 17 states:
series pH within 0.005 and I within 1 % of target; plate pH within 0.01 and I within 2 %;
span pH within 0.005 (the optimiser's report tolerance) and β at least the floor.  The
pH series and plate specs are invented test cases (no lab's protocol).  The brute force
enumerates, for a tiny plate, every set of stocks each well could draw from and checks the
MILP's choice against it.
"""

from __future__ import annotations

import dataclasses
import itertools

import numpy as np
import pytest

from catalog import load_catalog
from selector.chemistry.equilibrium import mix_solutions, solve_equilibrium
from selector.chemistry.linear import linear_coefficients
from selector.designs.plate import solve_plate, well_names
from selector.designs.series import solve_series
from selector.designs.span import solve_span
from selector.designs.stocks import STOCK_WEIGHT_PER_WELL, Stock, mix_from_stocks
from selector.errors import InfeasibleSpecError, InputError
from selector.spec import make_spec

CATALOG = load_catalog()
#: Issue 17's tolerances.
SERIES_PH_TOL, SERIES_I_TOL = 0.005, 0.01
PLATE_PH_TOL, PLATE_I_TOL = 0.01, 0.02
SPAN_PH_TOL = 0.005


def exact(composition: dict[str, float], temperature_c: float = 25.0):
    ids = list(composition)
    return solve_equilibrium(ids, [composition[r] for r in ids], temperature_c, catalog=CATALOG)


@pytest.fixture(scope="module")
def series():
    spec = make_spec({"ph": 6.5, "buffer_conc_mol_l": 0.05, "ionic_strength_mol_l": 0.15, "volume_l": 0.1})
    return solve_series(spec, [6.5, 7.0, 7.5], catalog=CATALOG, max_systems=2).as_json()


def test_series_members_re_solved_from_their_printed_compositions(series):
    assert [m["target_ph"] for m in series["members"]] == [6.5, 7.0, 7.5]
    for member in series["members"]:
        eq = exact(member["composition_mol_l"])
        assert abs(float(eq.ph[0]) - member["target_ph"]) <= SERIES_PH_TOL
        assert abs(float(eq.ionic_strength_mol_l[0]) - 0.15) <= SERIES_I_TOL * 0.15
        assert abs(member["verified_ph"] - float(eq.ph[0])) < 1e-9
        # the same buffer concentration in every member (the series' point)
        units = sum(v * CATALOG.reagents[r].system_units for r, v in member["composition_mol_l"].items()
                    if CATALOG.reagents[r].system_id)
        assert units == pytest.approx(0.05, rel=1e-6)
        recipe = member["recipe"]
        assert recipe["composition_mol_l"] == pytest.approx(member["composition_mol_l"])
        assert abs(recipe["verified_ph_at_use"] - member["target_ph"]) <= SERIES_PH_TOL
        assert any("take precedence" in c for c in recipe["cautions"])


def test_series_shares_one_reagent_set(series):
    used = [set(m["composition_mol_l"]) for m in series["members"]]
    assert set().union(*used) <= set(series["reagents"])
    assert len(series["systems"]) <= 2


def test_series_mixing_plan_re_solved_from_stocks_and_volumes(series):
    plan = series["mixing_plan"]
    stocks = {s["name"]: s["composition_mol_l"] for s in plan["stocks"]}
    assert "water" in stocks
    for member in plan["members"]:
        parts = [(stocks[name], ml / 1000.0) for name, ml in member["volumes_ml"].items() if ml > 0]
        assert sum(member["volumes_ml"].values()) == pytest.approx(100.0, abs=1e-6)
        eq = exact(mix_solutions(parts))
        assert abs(float(eq.ph[0]) - member["target_ph"]) <= SERIES_PH_TOL
        assert abs(float(eq.ionic_strength_mol_l[0]) - 0.15) <= SERIES_I_TOL * 0.15


def test_series_infeasible_ionic_strength_explained_in_words():
    # 100 mM phosphate at pH 6.5-7.5 cannot stay at I = 50 mM: H2PO4⁻/HPO4²⁻ and their Na⁺
    # alone exceed it.  Check value: the exact engine on 100 mM NaH2PO4 (the least charged
    # form of the three members' buffer) already gives I ≥ 0.1 mol/L (I = ½Σcz², Na⁺ + H2PO4⁻).
    assert float(exact({"nah2po4": 0.1}).ionic_strength_mol_l[0]) > 0.05
    spec = make_spec({"ph": 6.5, "buffer_conc_mol_l": 0.1, "ionic_strength_mol_l": 0.05,
                      "in_stock": ["nah2po4", "na2hpo4", "nacl", "hcl", "naoh"]})
    with pytest.raises(InfeasibleSpecError) as caught:
        solve_series(spec, [6.5, 7.0, 7.5], catalog=CATALOG, max_systems=1, plan=False)
    message = str(caught.value)
    assert "buffer alone" in message and "above the target 50 mM" in message
    assert len(caught.value.conflicts) == 3      # every member named


def test_series_needs_an_ionic_strength_and_a_concentration():
    with pytest.raises(InputError, match="--ionic-strength"):
        solve_series(make_spec({"ph": 7, "buffer_conc_mol_l": 0.05}), [7.0], catalog=CATALOG)
    with pytest.raises(InputError, match="--conc"):
        solve_series(make_spec({"ph": 7, "ionic_strength_mol_l": 0.1}), [7.0], catalog=CATALOG)


@pytest.fixture(scope="module")
def span():
    spec = make_spec({"ph": 5.0, "capacity_mol_l_per_ph": 0.01, "volume_l": 0.5})
    return solve_span(spec, [5.0, 5.5, 6.0, 6.5, 7.0, 7.5, 8.0], catalog=CATALOG, max_systems=2)


def test_span_every_grid_ph_re_solved_from_the_table(span):
    data = span.as_json()
    for key in ("composition_mol_l", "titrant", "table", "min_capacity_mol_l_per_ph", "recipe"):
        assert key in data
    rows = data["table"]
    assert [r["ph"] for r in rows] == [5.0, 5.5, 6.0, 6.5, 7.0, 7.5, 8.0]
    betas = []
    for row in rows:
        composition = dict(data["composition_mol_l"])
        composition[data["titrant"]] = composition.get(data["titrant"], 0.0) + row["titrant_mol_l"]
        eq = exact(composition)
        assert abs(float(eq.ph[0]) - row["ph"]) <= SPAN_PH_TOL
        betas.append(float(eq.capacity_mol_l_per_ph[0]))
        assert row["titrant_ml_per_l"] == pytest.approx(row["titrant_mol_l"] * 1000.0)   # 1 M stock
    assert min(betas) >= 0.01 * (1 - 0.005)
    assert data["min_capacity_mol_l_per_ph"] == pytest.approx(min(betas), rel=1e-6)


def test_span_uses_one_titrant_in_one_direction(span):
    amounts = [r.titrant_mol_l for r in span.table]
    assert all(a >= 0 for a in amounts)
    assert span.titrant in ("hcl", "naoh")
    # more acid at lower pH, or more base at higher pH: monotone along the grid
    steps = np.diff(amounts)
    assert np.all(steps <= 1e-9) if span.titrant == "hcl" else np.all(steps >= -1e-9)


def test_span_linear_curve_is_straighter_within_the_cost_slack(span):
    spec = make_spec({"ph": 5.0, "capacity_mol_l_per_ph": 0.01})
    straight = solve_span(spec, [5.0, 5.5, 6.0, 6.5, 7.0, 7.5, 8.0], catalog=CATALOG, max_systems=2, linear=True)

    def bend(result):
        ph = np.array([r.ph for r in result.table])
        t = np.array([r.titrant_mol_l for r in result.table])
        fit = np.polyfit(ph, t, 1)
        return float(np.abs(t - np.polyval(fit, ph)).sum())
    assert bend(straight) <= bend(span) + 1e-6
    assert straight.cost_per_l <= span.cost_per_l * 1.1 + 1e-9


@pytest.fixture(scope="module")
def plate():
    spec = make_spec({"ph": 6.5, "buffer_conc_mol_l": 0.05})
    return solve_plate(spec, [6.5, 7.0], [0.1, 0.2], 200.0, 96, 1.0, 20.0, catalog=CATALOG)


def test_plate_wells_re_solved_from_printed_volumes(plate):
    data = plate.as_json()
    stocks = {s["name"]: s["composition_mol_l"] for s in data["stocks"]}
    assert [w["well"] for w in data["wells"]] == ["A1", "A2", "A3", "A4"]
    assert [(w["target_ph"], w["target_ionic_strength_mol_l"]) for w in data["wells"]] == [
        (6.5, 0.1), (7.0, 0.1), (6.5, 0.2), (7.0, 0.2)]        # pH fastest, then I
    for well in data["wells"]:
        assert sum(well["volumes_ul"].values()) == pytest.approx(200.0, abs=1e-6)
        for volume in well["volumes_ul"].values():
            assert volume == 0 or volume >= 1.0
        parts = [(stocks[name], ul * 1e-6) for name, ul in well["volumes_ul"].items()]
        eq = exact(mix_solutions(parts))
        assert abs(float(eq.ph[0]) - well["target_ph"]) <= PLATE_PH_TOL
        target = well["target_ionic_strength_mol_l"]
        assert abs(float(eq.ionic_strength_mol_l[0]) - target) <= PLATE_I_TOL * target


def test_plate_stock_volumes_include_the_dead_volume_and_the_worklist_matches(plate):
    data = plate.as_json()
    for stock in data["stocks"]:
        used = sum(w["volumes_ul"].get(stock["name"], 0.0) for w in data["wells"])
        assert stock["volume_ml"] == pytest.approx((used + 20.0) / 1000.0)
        assert used > 0
    lines = plate.worklist_csv().splitlines()
    assert lines[0] == "source,destination well,volume_ul"
    assert len(lines) - 1 == sum(len([v for v in w["volumes_ul"].values() if v > 0]) for w in data["wells"])


def test_plate_refuses_too_many_conditions_and_a_large_minimum():
    with pytest.raises(InputError, match="do not fit"):
        well_names(97, 96)
    spec = make_spec({"ph": 6.5, "buffer_conc_mol_l": 0.05})
    with pytest.raises(InputError, match="exceeds the well volume"):
        solve_plate(spec, [6.5], [0.1], 10.0, 96, 20.0, 0.0, catalog=CATALOG)


# --- brute force on a tiny plate -----------------------------------------------------------

#: Three MOPS stocks (100 mM, a third, half and all of it as the sodium salt) and water;
#: invented for the test.
TINY_STOCKS = [Stock("low", {"mops": 0.1 * 2 / 3, "mops_na": 0.1 / 3}, "buffer"),
               Stock("mid", {"mops": 0.05, "mops_na": 0.05}, "buffer"),
               Stock("high", {"mops": 0.02, "mops_na": 0.08}, "buffer"),
               Stock("water", {}, "water")]


def _rows(ph: float, conc: float, ionic: float) -> tuple[np.ndarray, np.ndarray]:
    """The equality rows (charge scaled, buffer total, fill) of one well over the 4 columns."""
    ids = ["mops", "mops_na"]
    lc = linear_coefficients(ids, [ph], 25.0, [ionic], CATALOG)
    matrix = np.array([[s.composition_mol_l.get(r, 0.0) for r in ids] for s in TINY_STOCKS])
    charge = lc.charge[0] @ matrix.T / 200.0
    scale = max(np.abs(charge).max(), abs(lc.water_charge[0]))
    a = np.vstack([charge / scale, matrix.sum(axis=1) / 200.0, np.ones(4)])
    b = np.array([-lc.water_charge[0] / scale, conc, 200.0])
    return a, b


def test_tiny_plate_milp_matches_brute_force():
    ph = np.array([7.0, 7.4, 7.0, 7.4])
    conc = np.array([0.02, 0.02, 0.04, 0.04])
    ionic = np.array([0.02, 0.03, 0.04, 0.05])
    minimum = 10.0
    milp = mix_from_stocks(TINY_STOCKS, ph, None, conc, 200.0, minimum, 1e-6, 25.0, CATALOG, ionic_guess_mol_l=ionic)
    options = []
    for w in range(4):
        a, b = _rows(ph[w], conc[w], ionic[w])
        found = []
        for size in (1, 2, 3):
            for subset in itertools.combinations(range(4), size):
                v, *_ = np.linalg.lstsq(a[:, subset], b, rcond=None)
                if np.allclose(a[:, subset] @ v, b, rtol=0, atol=1e-7) and np.all(v >= minimum - 1e-9):
                    full = np.zeros(4)
                    full[list(subset)] = v
                    found.append((subset, full))
        options.append(found)
    def objective(volumes: np.ndarray) -> float:
        """Transfers plus the weight of each stock used (the MILP's objective, ties aside)."""
        return float(np.count_nonzero(volumes) + STOCK_WEIGHT_PER_WELL * 4 * np.count_nonzero(volumes.any(axis=0)))
    best = min(objective(np.array([v for _, v in pick])) for pick in itertools.product(*options))
    assert objective(milp.volumes) == best
    for w in range(4):      # each well's volumes are one of the enumerated exact solutions
        assert any(np.allclose(milp.volumes[w], v, atol=1e-4) for _, v in options[w])


def test_series_plan_can_be_left_out():
    spec = make_spec({"ph": 7.0, "buffer_conc_mol_l": 0.02, "ionic_strength_mol_l": 0.1})
    result = solve_series(spec, [7.0, 7.2], catalog=CATALOG, max_systems=1, plan=False)
    assert result.plan is None and result.as_json()["mixing_plan"] is None
    assert dataclasses.asdict(result.members[0])["target_ph"] == 7.0


def test_series_uses_one_system_where_one_spans_the_range():
    # pH 6.5-7.5 lies within pKa' ± 1 of several single systems (phosphate, MOPS, HEPES …),
    # so even with three allowed the series takes one.
    spec = make_spec({"ph": 6.5, "buffer_conc_mol_l": 0.05, "ionic_strength_mol_l": 0.15})
    result = solve_series(spec, [6.5, 7.0, 7.5], catalog=CATALOG, max_systems=3, plan=False)
    assert len(result.systems) == 1


def test_plate_by_concentration_re_solved_from_printed_volumes():
    spec = make_spec({"ph": 7.0, "buffer_conc_mol_l": 0.02})
    result = solve_plate(spec, [7.0, 7.5], [0.15], 200.0, 96, 1.0, 20.0, catalog=CATALOG, max_systems=1,
                         conc_values_mol_l=[0.02, 0.04])
    data = result.as_json()
    stocks = {s["name"]: s["composition_mol_l"] for s in data["stocks"]}
    assert [(w["target_ph"], w["target_conc_mol_l"]) for w in data["wells"]] == [
        (7.0, 0.02), (7.5, 0.02), (7.0, 0.04), (7.5, 0.04)]
    for well in data["wells"]:
        mixed = mix_solutions([(stocks[name], ul * 1e-6) for name, ul in well["volumes_ul"].items()])
        eq = exact(mixed)
        assert abs(float(eq.ph[0]) - well["target_ph"]) <= PLATE_PH_TOL
        assert abs(float(eq.ionic_strength_mol_l[0]) - 0.15) <= PLATE_I_TOL * 0.15
        total = sum(v * CATALOG.reagents[r].system_units for r, v in mixed.items() if CATALOG.reagents[r].system_id)
        assert total == pytest.approx(well["target_conc_mol_l"], rel=1e-3)   # volumes rounded to 0.01 µL


def test_plate_takes_one_range_beside_the_ph():
    spec = make_spec({"ph": 7.0, "buffer_conc_mol_l": 0.02})
    with pytest.raises(InputError, match="not both"):
        solve_plate(spec, [7.0], [0.1, 0.2], 200.0, catalog=CATALOG, conc_values_mol_l=[0.02, 0.04])


def test_a_design_names_the_catalog_flags_of_its_systems():
    # carbonate's catalog rows flag CO2 exchange in an open vessel (flags.csv, common practice)
    spec = make_spec({"ph": 9.5, "buffer_conc_mol_l": 0.05, "ionic_strength_mol_l": 0.2,
                      "in_stock": ["nahco3", "na2co3", "hcl", "naoh", "nacl"]})
    result = solve_series(spec, [9.5, 10.0], catalog=CATALOG, max_systems=1, plan=False)
    assert result.systems == ("carbonate",)
    assert any("co2_uptake" in note and "--exclude co2_uptake" in note for note in result.notes)


def test_series_per_member_and_by_capacity_re_solved():
    # each member its own systems; a capacity floor instead of a concentration
    spec = make_spec({"ph": 6.0, "capacity_mol_l_per_ph": 0.02, "ionic_strength_mol_l": 0.2, "volume_l": 0.1})
    result = solve_series(spec, [6.0, 7.0, 8.0], catalog=CATALOG, max_systems=1, per_member=True).as_json()
    for member in result["members"]:
        eq = exact(member["composition_mol_l"])
        assert abs(float(eq.ph[0]) - member["target_ph"]) <= SERIES_PH_TOL
        assert abs(float(eq.ionic_strength_mol_l[0]) - 0.2) <= SERIES_I_TOL * 0.2
        assert float(eq.capacity_mol_l_per_ph[0]) >= 0.02 * (1 - 1e-6)
        systems = {CATALOG.reagents[r].system_id for r in member["composition_mol_l"]} - {None}
        assert len(systems) == 1
    stocks = {s["name"]: s["composition_mol_l"] for s in result["mixing_plan"]["stocks"]}
    for member in result["mixing_plan"]["members"]:
        eq = exact(mix_solutions([(stocks[n], ml / 1000.0) for n, ml in member["volumes_ml"].items() if ml > 0]))
        assert abs(float(eq.ph[0]) - member["target_ph"]) <= SERIES_PH_TOL


def test_span_infeasible_floor_explained_in_words():
    spec = make_spec({"ph": 4.0, "capacity_mol_l_per_ph": 0.5})
    with pytest.raises(InfeasibleSpecError, match="keeps β ≥ 500 mM/pH at every pH 4-9"):
        solve_span(spec, [4.0, 5.0, 6.0, 7.0, 8.0, 9.0], catalog=CATALOG, max_systems=1)
