"""Solubility products (catalog ``solids.csv``) and saturation indices
(:mod:`selector.chemistry.solids`).

References read at test time from the PHREEQC databases shipped in the ``phreeqc`` package
(test extra): ``minteq.v4.dat`` and ``sit.dat`` (the sources the rows cite) and ``phreeqc.dat``
(an independent compilation, for the cross-check).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

from catalog import load_catalog
from selector.chemistry.solids import saturation_indices, solubility_log_k

phreeqc = pytest.importorskip("phreeqc")
DATABASES = Path(phreeqc.__file__).parent / "databases"
CATALOG = load_catalog()


def read_phases(path: Path) -> dict[str, dict]:
    """PHASES of a PHREEQC database: name -> log_k, delta_h [kJ/mol] (kcal converted with the
    thermochemical calorie, 4.184 J), analytic coefficients, the line of log_k (Parkhurst &
    Appelo, USGS Techniques and Methods 6-A43 (2013), keyword PHASES)."""
    phases: dict[str, dict] = {}
    inside, current = False, None
    for number, raw in enumerate(path.read_text(encoding="latin-1").splitlines(), 1):
        if re.match(r"^[A-Z_]{4,}\s*$", raw):
            inside, current = raw.strip() == "PHASES", None
            continue
        line = raw.split("#")[0].strip()
        if not inside or not line:
            continue
        if not raw[0].isspace() and " = " not in line:     # a phase name (sit.dat leaves its reaction unindented)
            current = phases.setdefault(line, {"delta_h": None, "analytic": None})
            continue
        words = line.lstrip("-").replace(";", " ").split()
        if current is None or not words:
            continue
        if words[0] == "log_k":
            current.setdefault("log_k", float(words[1]))
        elif words[0] == "delta_h":
            value = float(words[1])
            current["delta_h"] = value * 4.184 if len(words) > 2 and words[2].startswith("kcal") else value
        elif words[0] == "analytic":
            current["analytic"] = [float(w) for w in words[1:]]
    return phases


def test_every_solid_is_the_value_its_database_line_gives():
    # Case: each row's log K and ΔH equal the phase it cites, exactly (a typo would show here).
    files = {"minteq.v4.dat": read_phases(DATABASES / "minteq.v4.dat"), "sit.dat": read_phases(DATABASES / "sit.dat")}
    assert len(CATALOG.solids) >= 20
    for solid in CATALOG.solids.values():
        database, phase = re.match(r"^(\S+) phase (\S+?),", solid.reference).groups()
        entry = files[database][phase]
        assert solid.log_k_25c.value == entry["log_k"], solid.solid_id
        published_dh = entry["delta_h"] or None           # "delta_h -0": the file has no value
        assert solid.dh_kj_mol == published_dh, solid.solid_id


@pytest.mark.parametrize("solid_id, phase, tolerance", [
    ("calcite", "Calcite", 0.02), ("aragonite", "Aragonite", 0.05), ("fluorite", "Fluorite", 0.15),
    ("gypsum", "Gypsum", 0.05)])
def test_solubility_products_agree_with_an_independent_compilation(solid_id, phase, tolerance):
    # Case: log Ksp at 25 °C against phreeqc.dat (same reaction form). Tolerance: the spread between
    # evaluated compilations for these solids (0.0-0.1 log unit, common practice).
    other = read_phases(DATABASES / "phreeqc.dat")[phase]["log_k"]
    assert CATALOG.solids[solid_id].log_k_25c.value == pytest.approx(other, abs=tolerance)


def test_calcite_ksp_follows_temperature_like_the_published_fit():
    # Case: calcite log Ksp at 5 and 40 °C; reference: the fit of Plummer & Busenberg (1982) as
    # carried in phreeqc.dat (-analytic 17.118 -0.046528 -3496: log K = A1 + A2 T + A3/T).
    # Tolerance 0.1: poise uses minteq.v4.dat's ΔH° (-8 kJ/mol) with ΔCp° = 0, while the fit's slope at
    # 25 °C is -12 kJ/mol and it curves; 0.1 log unit is below the ±0.2-0.5 band within which a
    # saturation index is read as "at saturation" (common practice).
    a1, a2, a3 = read_phases(DATABASES / "phreeqc.dat")["Calcite"]["analytic"][:3]
    for temperature_c in (5.0, 40.0):
        t_k = temperature_c + 273.15
        fitted = a1 + a2 * t_k + a3 / t_k
        assert float(solubility_log_k(CATALOG.solids["calcite"], temperature_c)) == pytest.approx(fitted, abs=0.1)


def test_saturation_index_by_hand():
    # Case: a(Ca²⁺) = 1e-3, a(HPO4²⁻ as PO4³⁻ 1e-9), pH 7.0 at 25 °C. Brushite: IAP = a(Ca) a(H) a(PO4)
    # = 1e-3 · 1e-7 · 1e-9 = 1e-19; log Ksp -18.995 (minteq.v4.dat) -> SI = -19 + 18.995 = -0.005. Exact.
    si = saturation_indices(CATALOG.solids, {"Ca": np.array([-3.0]), "phosphate(-3)": np.array([-9.0])},
                            np.array([7.0]), 25.0)
    assert si["brushite"][0] == pytest.approx(-0.005, abs=1e-9)
    assert "calcite" not in si                 # no carbonate present: not reported
    # Portlandite, Ca(OH)2 + 2 H+ = Ca2+ + 2 H2O (log K 22.804): IAP = a(Ca)/a(H)² = 1e-3/1e-14 -> SI = 11 - 22.804.
    assert si["portlandite"][0] == pytest.approx(11.0 - 22.804, abs=1e-9)


def test_a_solid_with_an_unknown_ion_is_a_catalog_error(tmp_path):
    import shutil

    from catalog import CatalogError, read_catalog
    data = Path(load_catalog.__code__.co_filename).parent / "data"
    for table in data.glob("*.csv"):
        shutil.copy(table, tmp_path / table.name)
    path = tmp_path / "solids.csv"
    path.write_text(path.read_text(encoding="utf-8").replace("Ca:1;fluoride(-1):2", "Xx:1;fluoride(-9):2"),
                    encoding="utf-8")
    with pytest.raises(CatalogError) as error:
        read_catalog(tmp_path)
    assert "solids.csv" in str(error.value) and "'Xx'" in str(error.value) and "fluoride(-9)" in str(error.value)


phreeqpython = pytest.importorskip("phreeqpython")


@pytest.mark.parametrize("temperature_c", [25.0, 37.0])
def test_calcium_phosphate_saturation_agrees_with_phreeqc_minteq(temperature_c):
    # Case: 2 mmol/kg CaCl2 in 10 mmol/kg KH2PO4 + 10 mmol/kg Na2HPO4. Reference: PHREEQC with
    # minteq.v4.dat (the database the solids and complexes come from), SI of brushite and monetite.
    # Tolerance 0.1: the database's activity law differs from poise's Davies for most species
    # (the same reason as the free-metal comparison in tests/test_complex_equilibrium.py).
    from selector.chemistry.equilibrium import molal_to_molar, solve_equilibrium
    from selector.chemistry.properties import solution_saturation

    minteq = phreeqpython.PhreeqPython(database="minteq.v4.dat", database_directory=DATABASES)
    theirs = minteq.add_solution({"units": "mmol/kgw", "temp": temperature_c, "Ca": 2, "Cl": 4, "K": 10, "Na": 20,
                                  "P": 20, "pH": "7 charge"})
    molal = {"cacl2": 2e-3, "kh2po4": 10e-3, "na2hpo4": 10e-3}
    ids = list(molal)
    eq = solve_equilibrium(ids, [float(molal_to_molar(molal[i], temperature_c)) for i in ids], temperature_c)
    ours = solution_saturation(eq, CATALOG, 0)
    assert ours["brushite"] == pytest.approx(theirs.si("CaHPO4:2H2O"), abs=0.1)
    assert ours["monetite"] == pytest.approx(theirs.si("CaHPO4"), abs=0.1)
    theirs.forget()


def test_poise_ph_reports_saturation_and_warns(capsys):
    from tests.cli_helpers import run
    code, out, _ = run(capsys, "ph", "CaCl2=2mM", "KH2PO4=10mM", "Na2HPO4=10mM", "--json")
    report = __import__("json").loads(out)
    assert code == 0 and report["saturation_indices"]["brushite"] > 0
    assert any("supersaturated in brushite" in w for w in report["warnings"])
