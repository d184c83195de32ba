"""The minimum-cost optimiser: cases on paper, brute force, monotonicity, conflicts, golden LP.

Lab-notebook style: each case states the spec, the check value and where it comes from,
and the tolerance.  Prices are the catalog's invented demo prices.
"""

from __future__ import annotations

import itertools
import math
import re
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import linprog

from selector.admissible import admissible
from selector.chemistry.linear import linear_coefficients
from selector.errors import InfeasibleSpecError, SolverError
from selector.optimise import (
    Solver,
    build_min_cost_model,
    make_problem,
    solve_min_cost,
)
from selector.prices import demo_price_book
from selector.spec import make_spec

GOLDEN = Path(__file__).parent / "data" / "golden_min_cost.lp"
SMALL_STOCK = ["mops", "mops_na", "hepes", "hepes_na", "tris", "tris_hcl", "imidazole", "mes", "mes_na",
               "hcl", "naoh", "nacl"]   # a stock list names the titrants and the salt too


def test_tris_hcl_on_paper_ideal(shipped_catalog):
    # Case: 100 mM Tris titrated with HCl to pH = pKa − log10(3) at 25 °C, activity 1.
    # pKa(Tris, 25 °C) = 8.0719 (catalog value: Bates & Hetzer 1961 eq. 3).  Henderson-
    # Hasselbalch on paper: 3/4 of the Tris is protonated, so Cl⁻ = 75 mM minus
    # ([OH⁻] − [H⁺]) = 3.65e-7 M (Kw = 1.0e-14 at 25 °C, from memory).
    ph = 8.0719 - math.log10(3.0)
    spec = make_spec(ph=ph, buffer_conc_mol_l=0.1, in_stock=["tris", "hcl"], counter_ion="none")
    result = solve_min_cost(spec, catalog=shipped_catalog, ideal=True)
    h = 10 ** -ph
    oh = 1.0e-14 / h
    assert result.reagents_mol_l["tris"] == pytest.approx(0.1, rel=1e-9)
    assert result.reagents_mol_l["hcl"] == pytest.approx(0.075 + h - oh, rel=2e-5)
    # Cost on paper (demo prices): Tris 0.1 mol × 121.1352 g/mol / 0.998 × 120 EUR/kg
    # + HCl 0.075 mol × 36.4608 g/mol / 0.37 × 15 EUR/kg = 1.45654 + 0.11086 EUR/L.
    assert result.cost_per_l == pytest.approx(1.45654 + 0.11086, rel=1e-4)
    assert abs(result.verified.ph - ph) < 0.005
    assert result.dominant_reagent == "tris"


def _brute_force(spec, catalog, k):
    """Cheapest mix over every subset of <= k admitted systems: one scipy LP per subset,
    each with its own activity rounds (I recomputed from the LP's mix)."""
    allowed = admissible(spec, catalog)
    prices = demo_price_book(catalog)
    strong = [allowed.acid_id, allowed.base_id, allowed.salt_id]
    best = math.inf
    for n in range(1, k + 1):
        for subset in itertools.combinations(allowed.systems, n):
            ids = [r for r in allowed.reagents if catalog.reagents[r].system_id in subset] + strong
            cost = np.array([prices.price_per_kg(r) * catalog.reagents[r].molar_mass_g_mol
                             / catalog.reagents[r].purity_fraction / 1000 for r in ids])
            upper = [min(catalog.reagents[r].solubility_g_l_25c.value / catalog.reagents[r].molar_mass_g_mol
                         if catalog.reagents[r].solubility_g_l_25c else 1.0, 1.0) for r in ids]
            ionic = 0.05
            value = math.inf
            for _ in range(30):
                lc = linear_coefficients(ids, spec.ph, spec.temperature_c, ionic, catalog)
                a_ub = [-lc.capacity[0]]
                b_ub = [lc.water_capacity[0] - spec.capacity_mol_l_per_ph]
                if spec.ionic_strength_max_mol_l is not None:
                    a_ub.append(lc.ionic[0])
                    b_ub.append(spec.ionic_strength_max_mol_l - lc.water_ionic[0])
                lp = linprog(cost, A_ub=np.array(a_ub), b_ub=b_ub, A_eq=lc.charge[:1],
                             b_eq=[-lc.water_charge[0]], bounds=list(zip([0] * len(ids), upper)), method="highs")
                if lp.status != 0:
                    break
                new = float(lc.ionic[0] @ lp.x + lc.water_ionic[0])
                value = lp.fun
                if abs(new - ionic) < 1e-6:
                    break
                ionic = new
            best = min(best, value)
    return best


@pytest.mark.parametrize("k", [1, 2])
def test_optimum_equals_brute_force(shipped_catalog, k):
    # Case: pH 7.2 at 25 °C, β ≥ 15 mM/pH, I ≤ 80 mM, nine Good's/amine reagents in
    # stock.  Check value: the cheapest of every subset of <= k systems, each an
    # independent LP (scipy linprog) on the same linear coefficients; tolerance 0.1 %.
    spec = make_spec(ph=7.2, capacity_mol_l_per_ph=0.015, ionic_strength_max_mol_l=0.08, in_stock=SMALL_STOCK)
    result = solve_min_cost(spec, catalog=shipped_catalog, max_systems=k)
    expected = _brute_force(spec, shipped_catalog, k)
    assert result.cost_per_l == pytest.approx(expected, rel=1e-3)
    assert abs(result.verified.ph - 7.2) < 0.005
    assert len(result.systems) <= k


def test_adding_a_constraint_never_lowers_the_cost(shipped_catalog):
    # Each added requirement shrinks the feasible set, so the optimum cannot fall
    # (common practice of LP; tolerance 1e-9 EUR/L for solver noise).
    base = dict(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.02)
    costs = [solve_min_cost(make_spec(**base), catalog=shipped_catalog).cost_per_l]
    for extra in ({"ionic_strength_mol_l": 0.15}, {"metals": [{"metal": "Ca", "max_bound_fraction": 0.05}]},
                  {"loads": [{"kind": "acid", "conc_mol_l": 0.005}]}, {"exclude": ["phosphate"]}):
        base.update(extra)
        result = solve_min_cost(make_spec(**base), catalog=shipped_catalog)
        assert abs(result.verified.ph - 7.4) < 0.005
        costs.append(result.cost_per_l)
    assert all(b >= a - 1e-9 for a, b in zip(costs, costs[1:])), costs


def test_window_and_load_are_verified(shipped_catalog):
    # Case: made at 20 °C, used at 37 °C, must stay within ±0.3 and hold a 2 mM acid
    # load at every grid temperature.  Check: the exact engine's pH at each of the 5 grid
    # temperatures and under the load (band from the spec; 0.002 slack for the linear
    # model's ionic-strength estimate at the load points).
    spec = make_spec(ph=7.4, temperature_c=37.0, temperature_min_c=20.0, temperature_max_c=37.0,
                     tolerance_ph=0.3, capacity_mol_l_per_ph=0.02, loads=[{"kind": "acid", "conc_mol_l": 0.002}])
    result = solve_min_cost(spec, catalog=shipped_catalog)
    assert sorted(result.verified.ph_by_temperature) == [20.0, 24.25, 28.5, 32.75, 37.0]
    for ph in result.verified.ph_by_temperature.values():
        assert 7.1 - 0.002 <= ph <= 7.7 + 0.002
    assert len(result.verified.ph_under_loads) == 5
    assert all(check.ph >= 7.1 - 0.002 for check in result.verified.ph_under_loads)


def test_metal_limit_is_met_when_verified(shipped_catalog):
    # Ca²⁺ ≤ 5 % bound: the verified bound fraction (catalog log K, f = B/(1+B)) obeys it.
    spec = make_spec(ph=7.4, capacity_mol_l_per_ph=0.02, metals=[{"metal": "Ca", "max_bound_fraction": 0.05}])
    result = solve_min_cost(spec, catalog=shipped_catalog)
    assert result.verified.bound_fraction["Ca"] <= 0.05 + 1e-6
    assert "phosphate" not in result.systems and "citrate" not in result.systems


def test_impossible_spec_names_the_conflict(shipped_catalog):
    # 200 mM/pH of capacity needs far more buffer than a 10 mM ionic-strength cap allows
    # with ionic buffers; the conflict must name both and say how far the nearest mix is.
    spec = make_spec(ph=7.4, capacity_mol_l_per_ph=0.2, ionic_strength_max_mol_l=0.01, in_stock=SMALL_STOCK)
    with pytest.raises(InfeasibleSpecError) as caught:
        solve_min_cost(spec, catalog=shipped_catalog)
    text = " | ".join(caught.value.conflicts)
    assert "capacity: best reachable" in text
    assert "10 mM ionic-strength cap" in text


def test_a_violated_ionic_strength_cap_never_reads_as_met(shipped_catalog):
    # Carbonate (NaHCO3 and the titrants alone) at pH 7.0, 50 mM, a 20 mM acid load, I <= 50 mM:
    # the nearest mix lies 0.04 mM over the cap (measured on this model, 50.036 mM).  Printed to 3
    # significant figures it read "nearest mix 50 mM (the 50 mM ionic-strength cap)"; digits are
    # added until it differs from the cap (selector.digits.apart_g).  The error's nearest value of
    # the cap is that I in the field's unit, mol/L, where a remedy's search starts.
    spec = make_spec(ph=7.0, buffer_conc_mol_l=0.05, ionic_strength_max_mol_l=0.05,
                     loads=[{"kind": "acid", "conc_mol_l": 0.02}], in_stock=["nahco3", "hcl", "naoh", "nacl"])
    with pytest.raises(InfeasibleSpecError) as caught:
        solve_min_cost(spec, catalog=shipped_catalog, max_systems=1)
    assert "ionic strength: nearest mix 50.04 mM (the 50 mM ionic-strength cap)" in caught.value.conflicts
    assert caught.value.nearest["ionic_strength_max_mol_l"] == pytest.approx(0.05004, abs=1e-5)


def test_every_system_excluded_is_infeasible_with_reasons(shipped_catalog):
    # Only phosphate reagents in stock and phosphate excluded: nothing is left.
    spec = make_spec(ph=7.0, in_stock=["kh2po4"], exclude=["phosphate"])
    with pytest.raises(InfeasibleSpecError) as caught:
        solve_min_cost(spec, catalog=shipped_catalog)
    assert any(c.startswith("phosphate: phosphate (excluded)") for c in caught.value.conflicts)


def test_objectives_change_the_mix(shipped_catalog):
    # Same spec, other objectives: the ionic-strength objective cannot give a higher I
    # than the cost objective, the drift objective no larger |dpH/dT| (verified).
    spec = make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.02, in_stock=SMALL_STOCK + ["kh2po4",
                                                                                                   "k2hpo4"])
    cheap = solve_min_cost(spec, catalog=shipped_catalog)
    low_i = solve_min_cost(spec, catalog=shipped_catalog, objective="ionic-strength")
    flat = solve_min_cost(spec, catalog=shipped_catalog, objective="temperature-drift")
    few = solve_min_cost(spec, catalog=shipped_catalog, objective="reagents")
    assert low_i.verified.ionic_strength_mol_l <= cheap.verified.ionic_strength_mol_l + 1e-6
    assert abs(flat.verified.dph_dt_per_k) <= abs(cheap.verified.dph_dt_per_k) + 1e-4
    assert len(few.reagents_mol_l) <= len(cheap.reagents_mol_l)
    for result in (cheap, low_i, flat, few):
        assert abs(result.verified.ph - 7.4) < 0.005


def test_max_reagents_is_respected(shipped_catalog):
    spec = make_spec(ph=7.4, capacity_mol_l_per_ph=0.02, ionic_strength_mol_l=0.15, in_stock=SMALL_STOCK)
    result = solve_min_cost(spec, catalog=shipped_catalog, max_reagents=2)
    assert len(result.reagents_mol_l) <= 2


def test_binding_and_sensitivity_in_words(shipped_catalog):
    spec = make_spec(ph=7.4, capacity_mol_l_per_ph=0.02, in_stock=SMALL_STOCK)
    result = solve_min_cost(spec, catalog=shipped_catalog)
    assert "capacity β ≥ 20 mM/pH" in result.binding
    assert any(s.startswith("capacity: 1 mM/pH more capacity changes the cost by +") for s in result.sensitivity)
    assert result.cost_for_volume == pytest.approx(result.cost_per_l * spec.volume_l)


def test_any_other_solver_status_is_a_solver_error(shipped_catalog, monkeypatch):
    # Strict status map: a time-limit stop must not become a result.
    import highspy

    spec = make_spec(ph=7.4, in_stock=SMALL_STOCK)
    problem = make_problem(spec, catalog=shipped_catalog)
    solver = Solver()
    monkeypatch.setattr(solver, "run", lambda: highspy.HighsModelStatus.kTimeLimit)
    with pytest.raises(SolverError, match="(?i)time limit"):
        solver.solve(problem.model)


def _normalised_lp(text: str) -> str:
    lines = []
    for line in text.splitlines():
        line = line.strip()
        if not line or line.startswith("\\*"):
            continue
        line = re.sub(r"[-+]?\d+\.\d+(?:[eE][-+]?\d+)?|[-+]?\d+[eE][-+]?\d+",
                      lambda m: f"{float(m.group(0)):.6g}", line)
        lines.append(line)
    return "\n".join(lines) + "\n"


def test_golden_lp_file(shipped_catalog, tmp_path):
    # The formulation of one small model (MOPS free acid + Na salt, HCl, NaOH, NaCl;
    # pH 7.2, β ≥ 10 mM/pH, I = 100 mM, a 2 mM acid load; activity 1) pinned as an LP
    # file.  A deliberate formulation change regenerates tests/data/golden_min_cost.lp.
    spec = make_spec(ph=7.2, capacity_mol_l_per_ph=0.01, ionic_strength_mol_l=0.1, in_stock=["mops", "mops_na", "hcl", "naoh", "nacl"],
                     loads=[{"kind": "acid", "conc_mol_l": 0.002}])
    import pyomo.environ  # noqa: F401  (registers the LP writer; the optimiser itself imports pyomo.core only)

    problem = make_problem(spec, catalog=shipped_catalog, max_systems=1, ideal=True)
    path = tmp_path / "model.lp"
    build_min_cost_model(problem.data).model.write(str(path), io_options={"symbolic_solver_labels": True})
    assert _normalised_lp(path.read_text()) == GOLDEN.read_text()


def test_solves_from_several_threads_at_once_and_print_nothing(shipped_catalog, capfd):
    # The app runs sessions in threads: solves there must neither fail nor write to the
    # terminal (HiGHS prints a banner to fd 1 unless silenced).  No published value here.
    from concurrent.futures import ThreadPoolExecutor

    spec = make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.01)
    with ThreadPoolExecutor(3) as pool:
        results = list(pool.map(lambda _: solve_min_cost(spec, catalog=shipped_catalog, max_systems=1), range(3)))
    assert len({round(r.cost_per_l, 9) for r in results}) == 1
    out, err = capfd.readouterr()
    assert "HiGHS" not in out and "HiGHS" not in err


def test_importing_the_optimiser_installs_nothing_and_a_solve_restores_everything(shipped_catalog):
    # Silencing is scoped to each solve: file descriptor 1 goes to the null device inside
    # it and is the same file before and after.  No published value here.
    import os

    from selector.optimise import quiet_solver_output

    before = os.fstat(1)
    with quiet_solver_output():
        assert os.fstat(1).st_ino == os.stat(os.devnull).st_ino
    solve_min_cost(make_spec(ph=7.4, in_stock=SMALL_STOCK), catalog=shipped_catalog, max_systems=1)
    assert (os.fstat(1).st_dev, os.fstat(1).st_ino) == (before.st_dev, before.st_ino)


def test_unknown_objective_lists_the_registry(shipped_catalog):
    from selector.errors import InputError
    from selector.optimise import OBJECTIVES

    with pytest.raises(InputError, match="choose one of: cost, ionic-strength, temperature-drift, reagents"):
        make_problem(make_spec(ph=7.4), catalog=shipped_catalog, objective="speed")
    assert list(OBJECTIVES) == ["cost", "ionic-strength", "temperature-drift", "reagents"]


def test_rows_of_the_golden_model_are_typed_records(shipped_catalog):
    # The model of the golden LP file: its rows as the reports read them (kind, sense,
    # bound, words), in report order: the load rows, capacity, ionic strength, then the
    # per-reagent bounds.  Values from the spec (β ≥ 10 mM/pH, I = 100 mM, 2 mM acid load,
    # the default band of ±0.05 pH).
    from selector.optimise import RowKind

    spec = make_spec(ph=7.2, capacity_mol_l_per_ph=0.01, ionic_strength_mol_l=0.1, in_stock=["mops", "mops_na", "hcl", "naoh", "nacl"],
                     loads=[{"kind": "acid", "conc_mol_l": 0.002}])
    problem = make_problem(spec, catalog=shipped_catalog, max_systems=1, ideal=True)
    rows = problem.built.rows
    assert [r.kind for r in rows] == [RowKind.ACID_HOLD, RowKind.BASE_HOLD, RowKind.CAPACITY,
                                      RowKind.IONIC_TARGET] + [RowKind.UPPER] * 5
    capacity = rows[2]
    assert (capacity.sense, capacity.bound, capacity.words) == (">=", 0.01, "capacity β ≥ 10 mM/pH")
    assert rows[0].words == "acid load at 25 °C (pH ≥ 7.150)" and rows[0].bound == 0.002
    assert [r.index for r in rows[4:]] == list(problem.data.reagent_ids)
    assert problem.built.charge.kind is RowKind.CHARGE
    # every slack of the model belongs to exactly one row, and all are fixed at zero
    slacks = problem.built.slacks
    assert len({id(v) for v in slacks}) == len(slacks) == 2 + 2 + 1 + 2 + 5
    assert all(v.fixed and v.value == 0 for v in slacks)


def test_phosphate_exclusion_is_the_catalog_flag(shipped_catalog):
    # The "phosphate" exclusion reads the catalog's flag rows (flags.csv), not a list of system ids.
    flagged = {f.system_id for f in shipped_catalog.flags if f.flag == "phosphate"}
    assert flagged == {"phosphate", "pyrophosphate"}


def test_several_systems_coefficients_in_one_call_equal_each_alone(shipped_catalog):
    # The ranking's side-by-side activity rounds take every system's coefficients at its own I
    # in one engine call (at_ionic_strengths); each must be the very numbers of that system
    # alone (exact equality): a system's mix must not depend on the systems beside it.
    from selector.optimise import at_ionic_strengths
    from selector.optimise.data import at_ionic_strength

    spec = make_spec(ph=7.4, temperature_c=37.0, temperature_min_c=20.0, temperature_max_c=37.0,
                     tolerance_ph=0.3, capacity_mol_l_per_ph=0.02, metals=[{"metal": "Ca", "max_bound_fraction": 0.05}])
    problem = make_problem(spec, catalog=shipped_catalog, max_systems=1)
    systems = list(problem.data.system_ids[:4])
    columns = [problem.columns_of(s) for s in systems]
    ionic = [0.012, 0.031, 0.0475, 0.2]
    together = at_ionic_strengths([problem.data] * 4, ionic, shipped_catalog, "davies", columns)
    for data, i, cols in zip(together, ionic, columns):
        alone = at_ionic_strength(problem.data, i, shipped_catalog, "davies", cols)
        for name in ("charge", "water_charge", "capacity", "ionic", "metal_ratio"):
            assert np.array_equal(getattr(data, name), getattr(alone, name)), name
        assert (data.water_capacity, data.water_ionic, data.ionic_strength_mol_l) == \
            (alone.water_capacity, alone.water_ionic, alone.ionic_strength_mol_l)
