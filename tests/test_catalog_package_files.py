"""Step values the catalog took from data files shipped in registry packages, re-read from the files.

Case: every ``step_values.csv`` row whose source is ``obigt`` (the OBIGT database as shipped by the
``pychnosz`` package, test extra) or ``bates_hetzer1961`` (the Tris pK(T) equation as transcribed in
the ``pytzer`` package), and the Tris pK computed from the ΔH° and ΔS° printed in the ``tris_orn1987``
abstract.  The packages are located through their installed metadata and only their data files are
read: neither is imported (pytzer needs jax, pychnosz matplotlib).

References and the arithmetic:

- OBIGT, ``pychnosz/data/extdata/OBIGT/organic_aq.csv``: standard molal G° and H° of formation at
  298.15 K in cal/mol (1 cal = 4.184 J).  For acid = base + H⁺ (G°, H° of H⁺ zero by convention),
  pK = [G°(base) − G°(acid)] / (R T ln 10), ΔH° = H°(base) − H°(acid).
- Pytzer, ``pytzer/dissociation.py``, ``trisH_BH61``: log10 K = −(A/T + B + C T), R. G. Bates,
  H. B. Hetzer, J. Phys. Chem. 65 (1961) 667, eq. (3).  pK(298.15 K), ΔH° = R ln10 (A − C T²),
  ΔCp° = −2 R ln10 C T.

Tolerances: the rounding of the entered values (pK to 3 or 4 decimals, ΔH° to 0.01 kJ/mol, ΔCp° to
0.1 J/(K mol)).
"""

from __future__ import annotations

import csv
import importlib.metadata
import math
import re
from pathlib import Path

import pytest

from catalog import load_catalog
from selector.chemistry.water import GAS_CONSTANT_J_MOL_K

T_K = 298.15
CAL_J = 4.184
LN10 = math.log(10.0)

#: OBIGT species (acid, base) of each catalog step that has an ``obigt`` row.
OBIGT_STEPS = {
    ("histidine", 1): ("histidinium+2", "histidinium"),
    ("histidine", 2): ("histidinium", "histidine"),
    ("histidine", 3): ("histidine", "histidinate"),
    ("glycylglycine", 1): ("diglycine+", "diglycine"),
    ("glycylglycine", 2): ("diglycine", "diglycine-"),
}


def package_file(distribution: str, relative: str) -> Path:
    """A data file of an installed distribution, found without importing the package; skip if absent."""
    try:
        path = Path(str(importlib.metadata.distribution(distribution).locate_file(relative)))
    except importlib.metadata.PackageNotFoundError:
        pytest.skip(f"the {distribution} package is not installed")
    if not path.is_file():
        pytest.skip(f"{relative} is not in the installed {distribution}")
    return path


def entered(system_id: str, step: int, quantity: str, source: str) -> float:
    """The value a ``step_values.csv`` row of ``source`` gives for a step's quantity."""
    values = getattr(load_catalog().systems[system_id].steps[step - 1], quantity).values
    return next(v.value for v in values if v.source == source)


def obigt_rows() -> dict[str, dict[str, str]]:
    path = package_file("pychnosz", "pychnosz/data/extdata/OBIGT/organic_aq.csv")
    with path.open(encoding="utf-8", newline="") as handle:
        return {row["name"]: row for row in csv.DictReader(handle) if row["state"] == "aq"}


def test_every_obigt_row_is_covered():
    # Every catalog step value cited as ``obigt`` is one the re-reading test below checks.
    catalog = load_catalog()
    cited = {(s.system_id, s.step) for system in catalog.systems.values() for s in system.steps
             for q in (s.pka_25c, s.dh_kj_mol, s.dcp_j_k_mol) for v in q.values if v.source == "obigt"}
    assert cited == set(OBIGT_STEPS)


@pytest.mark.parametrize("system_id, step", list(OBIGT_STEPS), ids=[f"{s}-{j}" for s, j in OBIGT_STEPS])
def test_obigt_rows_are_what_the_file_says(system_id, step):
    # Case: pK and ΔH° of the step from the file's G° and H° (e.g. histidine step 1, histidinium+2 →
    # histidinium: G° −58750 → −56570 cal/mol gives pK 1.598).  Tolerance: 5e-4 in pK, 0.005 kJ/mol.
    rows = obigt_rows()
    acid, base = (rows[name] for name in OBIGT_STEPS[(system_id, step)])
    assert acid["E_units"] == base["E_units"] == "cal"
    pk = (float(base["G"]) - float(acid["G"])) * CAL_J / (GAS_CONSTANT_J_MOL_K * T_K * LN10)
    dh_kj_mol = (float(base["H"]) - float(acid["H"])) * CAL_J / 1000.0
    assert entered(system_id, step, "pka_25c", "obigt") == pytest.approx(pk, abs=5e-4)
    assert entered(system_id, step, "dh_kj_mol", "obigt") == pytest.approx(dh_kj_mol, abs=0.005)


def test_tris_equation_rows_are_what_pytzer_says():
    # Case: Tris, Bates & Hetzer 1961 eq. (3) as transcribed in pytzer: pK(298.15 K) 8.0719,
    # ΔH° 47.60 kJ/mol, ΔCp° −63.6 J/(K mol).  Tolerance: the rounding of the entered values.
    source = package_file("pytzer", "pytzer/dissociation.py").read_text(encoding="utf-8")
    match = re.search(r"def trisH_BH61\(.*?log10ktrisH = -\(([\d.]+) / T ([+-]) ([\d.]+) ([+-]) ([\d.]+) \* T\)",
                      source, re.DOTALL)
    assert match, "pytzer no longer carries the trisH_BH61 equation in the form read"
    a = float(match.group(1))
    b = float(match.group(3)) * (1 if match.group(2) == "+" else -1)
    c = float(match.group(5)) * (1 if match.group(4) == "+" else -1)
    assert entered("tris", 1, "pka_25c", "bates_hetzer1961") == pytest.approx(a / T_K + b + c * T_K, abs=5e-5)
    assert entered("tris", 1, "dh_kj_mol", "bates_hetzer1961") == pytest.approx(
        GAS_CONSTANT_J_MOL_K * LN10 * (a - c * T_K**2) / 1000.0, abs=0.005)
    assert entered("tris", 1, "dcp_j_k_mol", "bates_hetzer1961") == pytest.approx(
        -2.0 * GAS_CONSTANT_J_MOL_K * LN10 * c * T_K, abs=0.05)


def test_tris_pk_computed_from_the_oak_ridge_abstract():
    # Case: Tris, tris_orn1987 abstract (I = 0, 25 °C, association): ΔH° −47.53 kJ/mol, ΔS° −4.9 J/(K mol).
    # The dissociation pK = (ΔH° − T ΔS°)/(R T ln 10) with the signs reversed: 8.071 (the abstract's
    # printed log K 8.701 is the transposition the row notes).  Tolerance: 5e-4 (the rounding).
    pk = (47530.0 - T_K * 4.9) / (GAS_CONSTANT_J_MOL_K * T_K * LN10)
    assert entered("tris", 1, "pka_25c", "tris_orn1987") == pytest.approx(pk, abs=5e-4)
    assert entered("tris", 1, "pka_25c", "tris_orn1987") == pytest.approx(
        entered("tris", 1, "pka_25c", "bates_hetzer1961"), abs=0.009)   # within the abstract's ± 0.009
