"""The engine against an outside engine: PHREEQC (phreeqpython, phreeqc.dat database).

PHREEQC's phreeqc.dat uses the WATEQ extended Debye-Hückel model and ion pairs
(NaHPO4⁻, KHPO4⁻, NaCO3⁻, NaHCO3⁰, NaB(OH)4 ...), which the default model does not have, and
its own constants (the ion-size model ``truesdell-jones`` has them: see the grid below).  Expected difference: up to about 0.03 pH for phosphate, borate and ammonium
buffers of 25-100 mmol/kg (tolerance 0.04).  For the sodium carbonate standard PHREEQC's
NaCO3⁻ and NaHCO3⁰ ion pairs take up part of the carbonate and its pH comes out 0.1-0.3
lower than poise's; there poise stays with the IUPAC value (10.012 at 25 °C, Buck et al.
2002) and PHREEQC does not, which the second test records.  Compositions are mmol per kg
of water in both engines (poise is given them as mol/L with the water density).
"""

import numpy as np
import pytest

phreeqpython = pytest.importorskip("phreeqpython")

from selector.chemistry.equilibrium import molal_to_molar, solve_equilibrium  # noqa: E402

CASES = [
    # name, poise reagents (mol/kg), PHREEQC solution (mmol/kgw)
    ("phosphate 1:1", {"kh2po4": 0.025, "na2hpo4": 0.025}, {"K": 25, "Na": 50, "P": 50}),
    ("phosphate 1:3.5", {"kh2po4": 0.008695, "na2hpo4": 0.03043}, {"K": 8.695, "Na": 60.86, "P": 39.125}),
    ("borax", {"borax": 0.01}, {"Na": 20, "B": 40}),
    ("ammonium 2:1 with NaOH", {"nh4cl": 0.05, "naoh": 0.025}, {"N(-3)": 50, "Cl": 50, "Na": 25}),
]


@pytest.fixture(scope="module")
def phreeqc():
    return phreeqpython.PhreeqPython(database="phreeqc.dat")


@pytest.mark.parametrize("name, ours, theirs", CASES, ids=[c[0] for c in CASES])
@pytest.mark.parametrize("temperature_c", [10.0, 25.0, 40.0])
def test_ph_agrees_with_phreeqc(phreeqc, name, ours, theirs, temperature_c):
    solution = phreeqc.add_solution({"units": "mmol/kgw", "temp": temperature_c, **theirs,
                                         "pH": "7 charge"})
    ids = list(ours)
    amounts = [float(molal_to_molar(ours[i], temperature_c)) for i in ids]
    ph = solve_equilibrium(ids, amounts, temperature_c).ph[0]
    assert ph == pytest.approx(solution.pH, abs=0.04), f"{name} at {temperature_c} °C"
    solution.forget()


def test_carbonate_standard_differs_by_phreeqc_ion_pairs(phreeqc):
    solution = phreeqc.add_solution({"units": "mmol/kgw", "temp": 25.0, "Na": 75, "C(4)": 50,
                                         "pH": "7 charge"})
    amounts = [float(molal_to_molar(0.025, 25.0))] * 2
    ph = solve_equilibrium(["nahco3", "na2co3"], amounts, 25.0).ph[0]
    assert 0.05 < ph - solution.pH < 0.3
    # IUPAC pH(PS) 10.012 at 25 °C (Buck et al. 2002): poise is the closer of the two.
    assert abs(ph - 10.012) < abs(solution.pH - 10.012)
    solution.forget()


# --- 120 working buffers with NaCl against PHREEQC with phreeqc.dat, by activity model ----------
#
# Case: tests/phreeqc_db.buffer_grid(), 30 each of phosphate (KH2PO4/Na2HPO4), carbonate
# (NaHCO3/Na2CO3), borate (boric acid + NaOH) and ammonium (NH4Cl + NaOH), 10-100 mmol/kg with
# NaCl 0-0.45 mol/kg at 10, 25 or 37 °C (invented compositions), I up to 0.55 mol/kg.  Reference:
# PHREEQC 3 (IPhreeqc of the package phreeqc) with its phreeqc.dat (dated 22/05/2024, the file
# sources.csv cites as phreeqc_dat).  |ΔpH| median / max, measured, by PHREEQC's I [mol/kg]:
#
#   model, pairs                       I < 0.1        0.1-0.2        0.2-0.55       all I <= 0.5
#   davies                             0.022/0.037    0.038/0.049    0.063/0.182    0.041/0.180
#   davies, NIST SRD 46 pairs          0.022/0.222    0.118/0.376    0.124/0.582    0.112/0.582
#   truesdell-jones                    0.004/0.025    0.024/0.044    0.018/0.089    0.018/0.082
#   truesdell-jones, its pairs         0.002/0.019    0.003/0.018    0.002/0.019    0.002/0.019
#
# (n = 13 / 23 / 81.)  Under truesdell-jones, ion_pairs=True takes the pairs of phreeqc.dat
# (complex_values.csv: NaHPO4⁻, KHPO4⁻ log K 0.29 on HPO4²⁻, NaHCO3 -0.06 on HCO3⁻, no NaCO3⁻),
# the database its ion sizes were fitted with (selector.chemistry.arrays.model_ion_pairs).
# Tolerances: the target (0.01 median, 0.04 max up to I = 0.5) for the ion-size model
# with its pairs; the others are held at their measured figures rounded up.

from tests.phreeqc_db import buffer_grid, phreeqc_grid_ph  # noqa: E402

GRID = buffer_grid()


@pytest.fixture(scope="module")
def grid_reference():
    pytest.importorskip("phreeqc")
    return np.array(phreeqc_grid_ph(GRID))


def grid_ph(activity: str, ion_pairs: bool) -> np.ndarray:
    ph = np.empty(len(GRID))
    families = sorted({case[0] for case in GRID})
    for family in families:
        rows = [k for k, case in enumerate(GRID) if case[0] == family]
        ids = GRID[rows[0]][1]
        temperature = np.array([GRID[k][4] for k in rows])
        amounts = np.array([GRID[k][2] for k in rows]) * molal_to_molar(1.0, temperature)[:, None]
        ph[rows] = solve_equilibrium(list(ids), amounts, temperature, activity=activity, ion_pairs=ion_pairs).ph
    return ph


@pytest.mark.parametrize("activity, ion_pairs, median_ceiling, max_ceiling", [
    ("truesdell-jones", True, 0.010, 0.040),   # measured 0.002 / 0.019: the target
    ("truesdell-jones", False, 0.020, 0.090),  # measured 0.018 / 0.082
    ("davies", False, 0.045, 0.190),           # measured 0.041 / 0.180 (the default)
])
def test_grid_agrees_with_phreeqc_up_to_half_molal(grid_reference, activity, ion_pairs, median_ceiling,
                                                   max_ceiling):
    ph = grid_ph(activity, ion_pairs)
    within = grid_reference[:, 1] <= 0.5
    gap = np.abs(ph - grid_reference[:, 0])[within]
    assert within.sum() > 100
    assert np.median(gap) <= median_ceiling, f"median {np.median(gap):.4f}"
    assert gap.max() <= max_ceiling, f"max {gap.max():.4f}"
