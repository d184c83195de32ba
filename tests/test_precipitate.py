"""Precipitation in ranking, optimiser and recipes: saturation indices of the listed metals'
solids (catalog ``solids.csv``) with the metal at its stated concentration, the warning when
SI > 0 and ``--no-precipitate`` / ``no_precipitate`` (a slow-forming solid, hydroxyapatite,
warns only).

Reference: PHREEQC with ``minteq.v4.dat`` (package ``phreeqc``, run through ``phreeqpython``),
the database whose PHASES lines the solids cite.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from catalog import load_catalog
from selector.rank import rank_systems
from selector.spec import make_spec
from tests.cli_helpers import run

CATALOG = load_catalog()
#: pH 7.4 at 37 °C, 20 mM buffer (invented demo case).
ASSAY = {"ph": 7.4, "temperature_c": 37, "buffer_conc_mol_l": 0.02}


def _row(system: str, **fields):
    spec = make_spec({**ASSAY, **fields})
    return next(r for r in rank_systems(spec, catalog=CATALOG, only=system, assess=False) if r.system_id == system)


phreeqc = pytest.importorskip("phreeqc")
phreeqpython = pytest.importorskip("phreeqpython")
DATABASES = Path(phreeqc.__file__).parent / "databases"


def test_no_precipitate_excludes_phosphate_with_5_mM_calcium_and_the_si_agrees_with_phreeqc():
    # Case: phosphate for pH 7.4 at 37 °C (prepared at 25 °C), 20 mM, with Ca:0.9@5mM.  Without
    # the option the row is feasible and warns; brushite's SI at 37 °C on the verified mix plus
    # 5 mM CaCl2 agrees with PHREEQC/minteq.v4.dat (phase CaHPO4:2H2O) within 0.1 (the tolerance
    # of tests/test_solids.py: the database's activity law against Davies).  With
    # --no-precipitate the row is rejected, brushite named in the reason.
    warned = _row("phosphate", metals=["Ca:0.9@5mM"])
    assert warned.feasible, warned.reason
    assert warned.saturation_indices["brushite"] > 0
    assert any(w.startswith("brushite (calcium hydrogen phosphate dihydrate) SI +") and "may precipitate" in w
               for w in warned.precipitation)
    mix = warned.reagents_mol_l
    elements = {"Ca": 5.0, "Cl": 10.0 + 1000 * mix.get("hcl", 0.0), "Na": 0.0, "K": 0.0, "P": 0.0}
    for reagent, conc in mix.items():
        for ion, count in CATALOG.reagents[reagent].ions:
            if ion in elements and ion != "Cl":
                elements[ion] += 1000 * conc * count
        if CATALOG.reagents[reagent].system_id == "phosphate":
            elements["P"] += 1000 * conc
    minteq = phreeqpython.PhreeqPython(database="minteq.v4.dat", database_directory=DATABASES)
    solution = minteq.add_solution({"units": "mmol/kgw", "temp": 37.0, **elements, "pH": "7 charge"})
    theirs = solution.si("CaHPO4:2H2O")
    # The pH with the metal: PHREEQC within 0.1 of poise's (I = 0.055 mol/L, where the limiting
    # law of the database and Davies part for Ca²⁺ and the charged complexes; below I = 0.03 the
    # gap is 0.022, tests/test_complex_equilibrium.py).
    assert solution.pH == pytest.approx(warned.ph_with_metals, abs=0.1)
    solution.forget()
    from selector.chemistry.complexation import saturation_of_metals
    from selector.chemistry.equilibrium import solve_equilibrium
    ids = [*mix, "cacl2"]
    eq = solve_equilibrium(ids, [[*mix.values(), 5e-3]] * 2, [37.0, 37.0], catalog=CATALOG)
    at_37 = {s.solid_id: s.saturation_index for s in saturation_of_metals(eq, [0, 1], 1, {"Ca"}, CATALOG)[0]}
    # Measured (2026-12): poise +1.245, PHREEQC +1.228.
    assert at_37["brushite"] == pytest.approx(theirs, abs=0.1)
    assert at_37["brushite"] > 0 and theirs > 0
    rejected = _row("phosphate", metals=["Ca:0.9@5mM"], no_precipitate=True)
    assert not rejected.feasible
    assert "brushite (calcium hydrogen phosphate dihydrate) SI +" in rejected.reason
    assert "supersaturated (no_precipitate)" in rejected.reason


def test_hydroxyapatite_warns_but_does_not_exclude():
    # Case: the same phosphate with 20 µM Ca: only the slow-forming solids (hydroxyapatite,
    # β-tricalcium phosphate; solids.csv forms_slowly) are supersaturated, brushite is not.
    row = _row("phosphate", metals=["Ca:0.9@20uM"], no_precipitate=True)
    assert row.feasible, row.reason
    assert row.saturation_indices["hydroxyapatite"] > 0 > row.saturation_indices["brushite"]
    assert any(w.startswith("hydroxyapatite SI +") and "forms slowly" in w for w in row.precipitation)


def test_the_catalog_flag_stays_without_a_concentration():
    # Case: --metal Ca:0.9 (no @): phosphate is left out by the catalog's "precipitates" flag;
    # with @5mM the computed statement replaces it (previous test).
    row = _row("phosphate", metals=["Ca:0.9"])
    assert not row.feasible and row.reason == "precipitates Ca²⁺"


def test_rank_text_and_json_carry_the_warnings(capsys):
    argv = ["rank", "--ph", "7.4", "--temperature", "37", "--conc", "20mM", "--metal", "Ca:0.9@5mM"]
    code, out, _ = run(capsys, *argv)
    assert code == 0 and "warning: brushite (calcium hydrogen phosphate dihydrate) SI +" in out
    code, out, _ = run(capsys, *argv, "--json")
    rows = {r["system"]: r for r in json.loads(out)}
    assert rows["phosphate"]["saturation_indices"]["brushite"] > 0
    assert set(rows["phosphate"]["metal_bound_fraction"]) == {"Ca"}
    assert rows["hepes"]["saturation_indices"]["portlandite"] < 0      # Ca(OH)2 far from forming


def test_recipe_warns_and_no_precipitate_refuses_it(capsys):
    argv = ["recipe", "phosphate", "--ph", "7.4", "--temperature", "37", "--conc", "20mM", "--metal", "Ca:0.9@5mM",
            "--route", "titrate"]
    code, out, _ = run(capsys, *argv, "--json")
    assert code == 0
    warnings = json.loads(out)[0]["warnings"] if isinstance(json.loads(out), list) else json.loads(out)["warnings"]
    assert any(w.startswith("with 5 mM Ca²⁺ added (the assay's metals, not in this recipe) the pH at 37 °C is")
               for w in warnings)
    assert any("brushite" in w and "may precipitate" in w for w in warnings)
    code, out, err = run(capsys, *argv, "--no-precipitate")
    assert code == 2 and len(err.strip().splitlines()) == 1 and "brushite" in err and "no_precipitate" in err


def test_optimise_rejects_a_supersaturated_mix(capsys):
    code, _, err = run(capsys, "optimise", "--ph", "7.4", "--temperature", "37", "--conc", "20mM",
                       "--metal", "Ca:0.9@5mM", "--no-precipitate", "--in-stock", "KH2PO4", "--in-stock", "K2HPO4",
                       "--in-stock", "HCl", "--in-stock", "KOH", "--in-stock", "NaOH")
    assert code == 2 and "supersaturated (no_precipitate)" in err


def test_the_app_ranking_warns_and_the_panel_rejects_with_its_checkbox():
    # The app's ranking page with Ca 5000 µM (5 mM) at pH 7.4, 37 °C, 20 mM: phosphate is ranked with
    # the brushite warning; ticking the panel's no-precipitate box moves it to the infeasible rows.
    pytest.importorskip("streamlit")
    from streamlit.testing.v1 import AppTest
    at = AppTest.from_file(str(Path(__file__).resolve().parent.parent / "app" / "main.py"), default_timeout=240)
    at.run()
    at.number_input(key="spec_temperature").set_value(37.0).run()
    at.text_input(key="spec_conc").set_value("20mM").run()
    at.multiselect(key="spec_metals").set_value(["Ca"]).run()
    at.number_input(key="spec_metal_fraction_Ca").set_value(0.9).run()
    at.number_input(key="spec_metal_conc_Ca").set_value(5000.0).run()
    assert not at.exception, [e.message for e in at.exception]
    assert any(w.value.startswith("Phosphate: brushite") for w in at.warning)   # systems by name in the app
    table = next(d.value for d in at.dataframe if "score" in d.value.columns)
    assert "Phosphate (orthophosphoric acid)" in list(table["system"]) and "largest SI" in table.columns
    at.checkbox(key="spec_no_precipitate").check().run()
    assert not at.exception, [e.message for e in at.exception]
    table = next(d.value for d in at.dataframe if "score" in d.value.columns)
    assert "Phosphate (orthophosphoric acid)" not in list(table["system"])
