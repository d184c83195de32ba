"""The exact metal check of the verification: a listed metal at its stated concentration
(``--metal Ca:0.05@2mM``, default 1 µM) is in every verified solution, and the fraction the
buffer binds is read from the solved complexes (:func:`selector.chemistry.complexation.bound_by_ligands`),
worst over the temperature window.

Reference: PHREEQC with ``minteq.v4.dat`` (package ``phreeqc``, run through ``phreeqpython``),
the database the catalog's complexes come from (``complexes.csv`` cites its lines).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from catalog import load_catalog
from selector.chemistry.complexation import bound_by_ligands
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.linear import linear_coefficients, metal_binding_terms
from selector.rank import rank_systems
from selector.spec import TRACE_METAL_CONC_MOL_L, MetalLimit, make_spec, read_spec, spec_to_toml
from tests.cli_helpers import run

CATALOG = load_catalog()


def _buffer_row(system: str, spec_fields: dict):
    """The ranking's row of one system for a spec made of ``spec_fields``."""
    spec = make_spec(spec_fields)
    return next(r for r in rank_systems(spec, catalog=CATALOG, only=system, assess=False) if r.system_id == system)


# --- against PHREEQC / minteq.v4.dat -------------------------------------------------------------

phreeqc = pytest.importorskip("phreeqc")
phreeqpython = pytest.importorskip("phreeqpython")
DATABASES = Path(phreeqc.__file__).parent / "databases"
#: PHREEQC input of each catalog reagent: element -> mmol per mmol of reagent.
ELEMENTS = {"cacl2": {"Ca": 1, "Cl": 2}, "citric_acid": {"Citrate": 1}, "citric_acid_h2o": {"Citrate": 1},
            "na3_citrate_2h2o": {"Na": 3, "Citrate": 1}, "kh2po4": {"K": 1, "P": 1},
            "na2hpo4": {"Na": 2, "P": 1}, "nah2po4": {"Na": 1, "P": 1}, "hcl": {"Cl": 1}, "naoh": {"Na": 1},
            "nacl": {"Na": 1, "Cl": 1}}
#: The minteq.v4.dat species of a ligand (what its Ca complexes' names contain).
LIGAND_TOKEN = {"citrate": "Citrate", "phosphate": "PO4"}


def _phreeqc_bound(reagents_mol_l: dict[str, float], temperature_c: float, ligand: str) -> tuple[float, float]:
    """(pH, fraction of Ca in complexes with ``ligand``) by PHREEQC/minteq.v4.dat; mol/L entered as
    mol/kg water (at these concentrations the two differ by < 1 %, which moves a bound fraction
    by < 0.002)."""
    elements: dict[str, float] = {}
    for reagent, conc in reagents_mol_l.items():
        for element, count in ELEMENTS[reagent].items():
            elements[element] = elements.get(element, 0.0) + 1000.0 * conc * count
    minteq = phreeqpython.PhreeqPython(database="minteq.v4.dat", database_directory=DATABASES)
    solution = minteq.add_solution({"units": "mmol/kgw", "temp": temperature_c, **elements, "pH": "7 charge"})
    bound = sum(m for name, m in solution.species.items() if name.startswith("Ca") and LIGAND_TOKEN[ligand] in name)
    ph, fraction = solution.pH, bound / (solution.total("Ca") / 1000.0)    # species mol/kgw, total mmol/kgw
    solution.forget()
    return ph, fraction


def _poise_bound(reagents_mol_l: dict[str, float], temperature_c: float, ligand: str) -> tuple[float, float]:
    ids = list(reagents_mol_l)
    eq = solve_equilibrium(ids, [[reagents_mol_l[i] for i in ids]], temperature_c, catalog=CATALOG)
    mask = np.array([[s == ligand for s in eq.speciation.systems.system_ids]])
    metals = eq.speciation.metals
    return float(eq.ph[0]), float(bound_by_ligands(metals, mask)[0, metals.metal_ids.index("Ca")])


@pytest.mark.parametrize("temperature_c", [25.0, 37.0])
@pytest.mark.parametrize("ligand, buffer", [
    ("citrate", {"citric_acid_h2o": 4e-3, "na3_citrate_2h2o": 6e-3}),
    ("phosphate", {"kh2po4": 5e-3, "na2hpo4": 5e-3}),
])
@pytest.mark.parametrize("calcium_mol_l", [1e-6, 2e-3])
def test_exact_bound_fraction_agrees_with_phreeqc_minteq(ligand, buffer, calcium_mol_l, temperature_c):
    # Case: 10 mM citrate (pH about 5) or 10 mM phosphate (pH about 6.9) with trace or 2 mM CaCl2.
    # Reference: PHREEQC/minteq.v4.dat, Σ Ca–ligand complexes / total Ca.  Tolerances: 0.05 pH,
    # 0.1 in log10 of the unbound share (1 − f) — those of the free-metal comparison in
    # tests/test_complex_equilibrium.py, for the same reason: the database gives most species
    # the limiting Debye–Hückel law where poise uses Davies, and the ~0.03 pH that follows moves
    # the share of the binding species — and 0.03 in f.  Measured (2026-12): largest |ΔpH|
    # 0.042, |Δ log10(1 − f)| 0.058, |Δf| 0.024 (citrate with 2 mM Ca at 37 °C; poise higher).
    reagents = {**buffer, "cacl2": calcium_mol_l}
    ph, fraction = _poise_bound(reagents, temperature_c, ligand)
    their_ph, theirs = _phreeqc_bound(reagents, temperature_c, ligand)
    assert ph == pytest.approx(their_ph, abs=0.05)
    assert np.log10((1 - fraction) / (1 - theirs)) == pytest.approx(0.0, abs=0.1)
    assert fraction == pytest.approx(theirs, abs=0.03)
    assert 0.05 < fraction < 0.95          # a case where binding matters


def test_verified_fraction_of_a_ranked_citrate_mix_agrees_with_phreeqc():
    # Case: the ranking's citrate mix for pH 5.5 at 37 °C, 10 mM, with Ca:0.99@2mM.  The metal
    # check holds the 2 mM Ca (its chloride): PHREEQC/minteq.v4.dat on the mix plus 2 mM CaCl2
    # gives the same pH with the metal (within 0.05) and the same bound fraction (within 0.03,
    # as above); the buffer as made is at the target.
    row = _buffer_row("citrate", {"ph": 5.5, "temperature_c": 37, "buffer_conc_mol_l": 0.01,
                                  "metals": ["Ca:0.99@2mM"]})
    assert row.feasible, row.reason
    their_ph, theirs = _phreeqc_bound({**row.reagents_mol_l, "cacl2": 2e-3}, 37.0, "citrate")
    assert row.ph_with_metals is not None and row.ph_with_metals < 5.5 - 0.05     # Ca citrate releases protons
    assert their_ph == pytest.approx(row.ph_with_metals, abs=0.05)
    assert row.bound_fraction["Ca"] == pytest.approx(theirs, abs=0.03)
    assert row.as_json()["metal_bound_fraction"] == {"Ca": row.bound_fraction["Ca"]}


def test_the_ph_target_is_the_buffer_as_made_and_the_metal_moves_it():
    # Case: phosphate 10 mM, pH 7.0 at 25 °C.  The target holds for the buffer as made (what the
    # recipe makes and the meter reads): the mix is the same with 1 µM or 2 mM Ca; with 2 mM Ca
    # present the pH is lower (Ca phosphate complexes release protons), reported beside it.
    fields = {"ph": 7.0, "temperature_c": 25, "buffer_conc_mol_l": 0.01}
    trace = _buffer_row("phosphate", {**fields, "metals": ["Ca:0.99"]})
    present = _buffer_row("phosphate", {**fields, "metals": ["Ca:0.99@2mM"]})
    assert not trace.feasible and trace.reason == "precipitates Ca²⁺"    # no concentration: the catalog flag
    assert present.feasible, present.reason
    ids = list(present.reagents_mol_l)
    made = solve_equilibrium(ids, [[present.reagents_mol_l[i] for i in ids]], 25.0, catalog=CATALOG)
    assert float(made.ph[0]) == pytest.approx(7.0, abs=5e-4)
    assert present.ph_with_metals is not None and present.ph_with_metals < 7.0 - 0.02


# --- the linear estimate against the exact check --------------------------------------------------

def test_a_mix_the_linear_estimate_accepts_and_the_exact_check_rejects():
    # Case: 2 mM citrate for pH 5.5 at 25 °C, kept within ±1 pH from 20 to 37 °C, at most 89 % of
    # trace Ca bound.  The optimiser's linear estimate (f = B/(1 + B), B = Σ ρ_r x_r at 25 °C)
    # gives 0.886 and accepts the mix; the exact check, at every temperature of the window,
    # finds 0.8995 at 20 °C (where the pH of the mix, and with it the share of the binding
    # citrate species, moves) and rejects it with the reason.  Measured values, pinned to 0.003.
    fields = {"ph": 5.5, "temperature_c": 25, "buffer_conc_mol_l": 0.002, "tolerance_ph": 1.0,
              "temperature_min_c": 20, "temperature_max_c": 37}
    wide = _buffer_row("citrate", {**fields, "metals": ["Ca:0.99"]})
    ids = list(wide.reagents_mol_l)
    x = np.array([wide.reagents_mol_l[i] for i in ids])
    lc = linear_coefficients(ids, np.array([5.5]), 25.0, np.array([wide.ionic_strength_mol_l]), CATALOG, "davies")
    b = float(np.sum(metal_binding_terms("Ca", lc, CATALOG, "davies").ratio[0] * x))
    linear = b / (1 + b)
    assert linear == pytest.approx(0.886, abs=0.003) and linear < 0.89
    assert wide.bound_fraction["Ca"] == pytest.approx(0.900, abs=0.003)
    tight = _buffer_row("citrate", {**fields, "metals": ["Ca:0.89"]})
    assert not tight.feasible
    assert "exact check: Ca²⁺ 89.9 % bound at 20 °C (limit 89 %)" in tight.reason


def test_the_exact_check_accepts_what_the_linear_estimate_would_reject():
    # Case: 0.5 mM phosphate (30 % NaH2PO4, 70 % Na2HPO4) with 2 mM CaCl2 at 37 °C.  The
    # trace-metal linear form at the solution's pH and I says 7.9 % bound; the exact equilibrium,
    # where 2 mM Ca uses up part of the 0.5 mM ligand, says 6.2 %: a 7 % limit passes the exact
    # check only.  Measured values, pinned to 0.002.
    ids, rows = ["nah2po4", "na2hpo4", "cacl2"], [[0.15e-3, 0.35e-3, 2e-3]]
    eq = solve_equilibrium(ids, rows, 37.0, catalog=CATALOG)
    mask = np.array([[s == "phosphate" for s in eq.speciation.systems.system_ids]])
    exact = float(bound_by_ligands(eq.speciation.metals, mask)[0, eq.speciation.metals.metal_ids.index("Ca")])
    lc = linear_coefficients(ids[:2], eq.ph, 37.0, eq.ionic_strength_mol_l, CATALOG, "davies")
    b = float(np.sum(metal_binding_terms("Ca", lc, CATALOG, "davies").ratio[0] * np.array(rows[0][:2])))
    assert exact == pytest.approx(0.062, abs=0.002) and exact < 0.07
    assert b / (1 + b) == pytest.approx(0.079, abs=0.002) and b / (1 + b) > 0.07


def test_bound_by_ligands_by_hand():
    # Case: one metal, two complexes, one with the marked ligand: f = 0.3 mM / 1 mM.
    from types import SimpleNamespace
    metals = SimpleNamespace(complex_ligand_count=np.array([[1, 0], [0, 1]]), complex_mol_l=np.array([[3e-4, 2e-4]]),
                             complex_metal_count=np.array([[1.0], [1.0]]), totals_mol_l=np.array([[1e-3]]))
    assert bound_by_ligands(metals, np.array([[True, False]]))[0, 0] == pytest.approx(0.3, rel=1e-12)
    assert bound_by_ligands(metals, np.array([[False, False]]))[0, 0] == 0.0


# --- the spec: old files, new forms, bad input ------------------------------------------------------

def test_old_spec_files_still_load(tmp_path):
    # Case: a spec file written before the metal's concentration existed, and one with conc_mol_l.
    old = tmp_path / "old.toml"
    old.write_text('ph = 7.4\nmetals = [{ metal = "Ca", max_bound_fraction = 0.05 }]\n', encoding="utf-8")
    assert read_spec(old).metals == (MetalLimit("Ca", 0.05, TRACE_METAL_CONC_MOL_L),)
    stated = tmp_path / "stated.json"
    stated.write_text(json.dumps({"ph": 7.4, "metals": [{"metal": "Mg", "max_bound_fraction": 0.1,
                                                          "conc_mol_l": 0.002}]}), encoding="utf-8")
    assert read_spec(stated).metals == (MetalLimit("Mg", 0.1, 0.002),)


@pytest.mark.parametrize("metals", [
    ["Ca:0.05@2mM"],
    [{"metal": "Ca", "max_bound_fraction": 0.05, "conc": "2mM"}],
    [{"metal": "Ca", "max_bound_fraction": 0.05, "conc": 0.002}],
    {"Ca": "0.05@2mM"},
    {"Ca": {"max_bound_fraction": 0.05, "conc": "2 mM"}},
])
def test_the_written_forms_of_a_metal_limit(metals):
    spec = make_spec(ph=7.4, metals=metals)
    assert spec.metals == (MetalLimit("Ca", 0.05, 0.002),)
    again = make_spec(__import__("tomllib").loads(spec_to_toml(spec)))
    assert again == spec


def test_no_precipitate_is_a_spec_key_written_only_when_set():
    assert "no_precipitate" not in spec_to_toml(make_spec(ph=7.4))
    assert "no_precipitate = true" in spec_to_toml(make_spec(ph=7.4, no_precipitate=True))


@pytest.mark.parametrize("value, words", [
    ("Ca", "expected ION:MAX_BOUND_FRACTION[@CONC], e.g. Ca:0.05 or Ca:0.05@2mM"),
    ("Ca:0.05@", "expected ION:MAX_BOUND_FRACTION[@CONC]"),
    ("Ca:0.05@2", "has no unit"),
    ("Ca:0.05@2xM", "unknown unit"),
    ("Xx:0.05@2mM", "expected one of Ca, Mg"),
    ("Ca:1.5@2mM", "expected < 1"),
    ("Ca:0.05@2M", "expected <= 1"),
])
def test_bad_metal_values_exit_2_with_one_line(capsys, value, words):
    code, out, err = run(capsys, "rank", "--ph", "7.4", "--metal", value)
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and words in err and "Traceback" not in err


def test_a_bad_metal_text_in_a_spec_file_names_the_key(tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text('ph = 7.4\nmetals = ["Ca@2mM"]\n', encoding="utf-8")
    with pytest.raises(Exception) as error:
        read_spec(path)
    assert "metals[0]" in str(error.value) and "ION:MAX_BOUND_FRACTION[@CONC]" in str(error.value)


def test_an_optimised_mix_with_a_stated_metal_keeps_its_bench_recipe(capsys):
    # Case: the optimiser at pH 7.4, 37 °C, 20 mM with Ca:0.9@5mM.  The target is the buffer as
    # made, so the bench recipe of the optimal mix verifies (it did not while the metal was in the
    # pH check: 7.45 against 7.4); the pH with 5 mM Ca is reported beside it, lower.
    code, out, err = run(capsys, "optimise", "--ph", "7.4", "--temperature", "37", "--conc", "20mM",
                         "--metal", "Ca:0.9@5mM", "--exclude", "primary_amine", "--json")
    assert code == 0, err
    verified = json.loads(out)["verified"]
    assert verified["ph"] == pytest.approx(7.4, abs=5e-4)
    assert verified["ph_with_metals"] < 7.4 - 0.02 and set(verified["metal_bound_fraction"]) == {"Ca"}
