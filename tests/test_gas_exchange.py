"""CO₂ from the air: the open-vessel equilibrium (selector.chemistry.gas_exchange).

Henry's constant is phreeqc.dat's CO2(g) (log K −1.468 at 25 °C and its analytic log K(T),
catalog ``gases.csv``); the outer solve fixes the carbonate total where the dissolved H₂CO₃*
equals K_H·pCO₂.  Checks: the catalog row against the file it cites; pure water against a
published worked example; NaHCO₃, NaOH, borax and Tris solutions against PHREEQC
(phreeqpython, phreeqc.dat, EQUILIBRIUM_PHASES CO2(g) at log p = log 4.2e-4 = −3.377); the
Henry condition itself; batches, metals and bad input.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

from catalog import CatalogError, load_catalog, read_catalog
from selector.chemistry.equilibrium import molal_to_molar, solve_equilibrium
from selector.chemistry.gas_exchange import (
    DEFAULT_PCO2_ATM,
    dissolved_gas_mol_l,
    henry_log_k,
    open_vessel,
    solve_open_equilibrium,
)
from selector.chemistry.speciation import STATUS_CONVERGED
from selector.errors import InputError

CO2 = load_catalog().gases["co2"]


# --------------------------------------------------------------------------- the constant

def test_henry_constant_is_the_one_phreeqc_dat_gives():
    # phreeqc.dat (phreeqc package 1.1.1, file dated 22/05/2024) lines 1204-1208:
    #   CO2(g) / CO2 = CO2 / -log_k -1.468 / -delta_h -4.776 kcal / -analytic 10.5624 -2.3547e-2 -3972.8 0 5.8746e5 1.9194e-5
    phreeqc = pytest.importorskip("phreeqc", reason="the phreeqc package (test extra) ships phreeqc.dat")
    lines = (Path(phreeqc.__file__).parent / "databases" / "phreeqc.dat").read_text(encoding="latin-1").splitlines()
    assert lines[1203].strip() == "CO2(g)" and lines[1204].split() == ["CO2", "=", "CO2"]
    assert float(lines[1205].split()[1]) == CO2.log_k_25c.value == -1.468
    assert float(lines[1206].split()[1]) * 4.184 == pytest.approx(CO2.dh_kj_mol, abs=5e-4)
    assert tuple(float(x) for x in lines[1207].split()[1:]) == CO2.analytic


def test_henry_constant_over_temperature():
    # The analytic expression gives the file's 25 °C value (−1.468, to its 3 decimals) and
    # agrees with van 't Hoff on the file's ΔH° (−19.98 kJ/mol) within 0.01 over 15-35 °C
    # (they part by 0.04 at 0 °C, where the expression's curvature matters).
    log_k = henry_log_k(CO2, np.array([0.0, 15.0, 25.0, 35.0, 37.0]))
    assert log_k[2] == pytest.approx(-1.468, abs=5e-4)
    van_t_hoff = -1.468 + 19.983e3 / (8.314462618 * np.log(10)) * (1 / (np.array([15.0, 35.0]) + 273.15) - 1 / 298.15)
    assert log_k[[1, 3]] == pytest.approx(van_t_hoff, abs=0.01)
    assert np.all(np.diff(log_k) < 0)          # CO₂ is less soluble in warmer water
    # Full-precision regression values (this implementation, 2026-12):
    assert log_k == pytest.approx([-1.10812442, -1.34100770, -1.46816625, -1.57680965, -1.59656324], abs=1e-7)


# --------------------------------------------------------------------------- published value

def test_pure_water_in_air_against_a_worked_example():
    # James Cook University, CH3041 lecture 5, slide "pH [CO2] calculation"
    # (cnsfse01.jcu.edu.au/Schools/Chemistry/CourseCompass/Ch3041/Broadcasts/Lecture5_files/slide0136.htm):
    # 350 ppm CO₂, K_H 3.38e-2 mol/(L·atm), pKa1 6.35: [CO₂] 1.183e-5 mol/L and pH 5.64.
    # poise takes K_H 10^-1.468 = 3.40e-2 and pKa1 6.352, and Davies γ (I ≈ 2e-6): tolerance 0.01.
    result = solve_open_equilibrium(["hcl"], [0.0], 25.0, pressure_atm=350e-6)
    assert result.dissolved_mol_l[0] == pytest.approx(1.183e-5, rel=0.01)
    assert result.ph_open[0] == pytest.approx(5.64, abs=0.01)
    assert result.ph_open[0] == pytest.approx(5.638267, abs=1e-5)          # regression


# --------------------------------------------------------------------------- PHREEQC

phreeqpython = pytest.importorskip("phreeqpython")

LOG_PCO2 = float(np.log10(DEFAULT_PCO2_ATM))

CASES = [
    # name, poise reagents (mol/kg), PHREEQC solution (mmol/kgw)
    ("NaHCO3 1 mM", {"nahco3": 1e-3}, {"Na": 1, "C(4)": 1}),
    ("NaHCO3 10 mM", {"nahco3": 1e-2}, {"Na": 10, "C(4)": 10}),
    ("NaOH 1 mM", {"naoh": 1e-3}, {"Na": 1}),
    ("NaOH 10 mM", {"naoh": 1e-2}, {"Na": 10}),
    ("borax 10 mM", {"borax": 1e-2}, {"Na": 20, "B": 40}),
    ("pure water", {"hcl": 0.0}, {}),
]

#: Largest |ΔpH| against PHREEQC measured on CASES at 10, 25, 37 °C: 0.0125 (NaOH/NaHCO₃
#: 10 mM, 37 °C) and 0.011 (borax, 10 °C).  Its causes: phreeqc.dat's WATEQ ion-size γ and
#: its CO₂ salting-out term (log γ = 0.066 I) against Davies and γ = 1 for neutral species,
#: and the NaCO3⁻/NaHCO3⁰ pairs poise leaves out.  Tolerance 0.02.
TOLERANCE_PH = 0.02


@pytest.fixture(scope="module")
def phreeqc():
    return phreeqpython.PhreeqPython(database="phreeqc.dat")


def _phreeqc_open(engine, solution, temperature_c):
    s = engine.add_solution({"units": "mmol/kgw", "temp": temperature_c, **solution, "pH": "7 charge"})
    s.equalize(["CO2(g)"], [LOG_PCO2])
    out = s.pH, s.total_element("C") / 1000.0  # mol/kgw
    s.forget()
    return out


@pytest.mark.parametrize("name, ours, theirs", CASES, ids=[c[0] for c in CASES])
@pytest.mark.parametrize("temperature_c", [10.0, 25.0, 37.0])
def test_open_ph_agrees_with_phreeqc(phreeqc, name, ours, theirs, temperature_c):
    ph, carbon_mol_kg = _phreeqc_open(phreeqc, theirs, temperature_c)
    ids = list(ours)
    amounts = [float(molal_to_molar(ours[i], temperature_c)) for i in ids]
    result = solve_open_equilibrium(ids, amounts, temperature_c)
    assert result.ph_open[0] == pytest.approx(ph, abs=TOLERANCE_PH), f"{name} at {temperature_c} °C"
    # Carbonate at equilibrium (mol/L back to mol/kg): within 3 % (the same γ differences).
    ours_mol_kg = result.total_open_mol_l[0] / float(molal_to_molar(1.0, temperature_c))
    assert ours_mol_kg == pytest.approx(carbon_mol_kg, rel=0.03)


@pytest.mark.parametrize("tris_mm, hcl_mm", [(10, 0), (10, 5), (50, 25)])
def test_tris_open_ph_agrees_with_phreeqc(tris_mm, hcl_mm):
    # phreeqc.dat has no Tris: it is given the catalog's own pKa and ΔH°, so this checks the
    # gas exchange, not the constant.  Measured |ΔpH| ≤ 0.003 at 25 °C (tolerance 0.02, as above).
    engine = phreeqpython.PhreeqPython(database="phreeqc.dat")
    step = load_catalog().systems["tris"].steps[0]
    engine.ip.run_string(
        "SOLUTION_MASTER_SPECIES\n    Tr Tr 0 Tr 121.14\nSOLUTION_SPECIES\n    Tr = Tr\n        log_k 0\n"
        f"    Tr + H+ = TrH+\n        log_k {step.pka_25c.value}\n        delta_h {-step.dh_kj_mol.value} kJ\n")
    ph, _ = _phreeqc_open(engine, {"Tr": tris_mm, **({"Cl": hcl_mm} if hcl_mm else {})}, 25.0)
    ids = ["tris"] + (["hcl"] if hcl_mm else [])
    amounts = [float(molal_to_molar(x * 1e-3, 25.0)) for x in [tris_mm] + ([hcl_mm] if hcl_mm else [])]
    assert solve_open_equilibrium(ids, amounts, 25.0).ph_open[0] == pytest.approx(ph, abs=TOLERANCE_PH)


# --------------------------------------------------------------------------- the solve itself

def test_henry_condition_holds_and_closed_ph_is_the_engines():
    ids = ["nahco3", "na2co3", "tris", "hcl"]
    amounts = np.array([[0.05, 0, 0, 0], [0.001, 0, 0, 0], [0, 0, 0.05, 0.02], [0, 0, 0, 1e-4]])
    temperature = np.array([25.0, 4.0, 37.0, 20.0])
    result = solve_open_equilibrium(ids, amounts, temperature)
    closed = solve_equilibrium(ids, amounts, temperature)
    assert np.array_equal(result.ph_closed, closed.ph)
    s = result.open.system_ids.index("carbonate")
    free = result.open.speciation.fractions[:, s, 0] * result.open.speciation.totals_mol_l[:, s]
    target = dissolved_gas_mol_l(CO2, DEFAULT_PCO2_ATM, temperature)
    assert free == pytest.approx(target, rel=1e-7)
    assert result.uptake_mol_l[0] < 0 < result.uptake_mol_l[2]      # 50 mM NaHCO₃ loses CO₂, Tris takes it up
    assert np.all(result.status == STATUS_CONVERGED)


def test_a_batch_agrees_with_its_members_one_by_one():
    rng = np.random.default_rng(7)
    ids = ["naoh", "nahco3", "tris", "hcl", "kh2po4"]
    amounts = rng.uniform(0, 0.02, (40, len(ids)))
    temperature = rng.uniform(5, 40, 40)
    batch = solve_open_equilibrium(ids, amounts, temperature)
    for k in (0, 17, 39):
        one = solve_open_equilibrium(ids, amounts[k], temperature[k])
        assert one.ph_open[0] == pytest.approx(batch.ph_open[k], abs=1e-8)


def test_one_bad_row_costs_the_batch_nothing():
    # 19 mol/L HCl is beyond the model (pH below its range): that row has NaN figures, the
    # others are solved.
    amounts = np.array([[1e-3], [19.0], [1e-2]])
    result = solve_open_equilibrium(["hcl"], amounts, 25.0, strict=False)
    assert result.status[1] != STATUS_CONVERGED and np.isnan(result.ph_open[1])
    assert np.isfinite(result.ph_open[[0, 2]]).all()
    with pytest.raises(InputError):
        solve_open_equilibrium(["hcl"], amounts, 25.0)


def test_with_calcium_present():
    # CaCl₂ with bicarbonate: the complexation solver is the one inside; the Henry condition
    # holds on the free H₂CO₃*.
    result = solve_open_equilibrium(["cacl2_2h2o", "nahco3"], [1e-3, 2e-3], 25.0)
    assert result.open.speciation.metals is not None
    s = result.open.system_ids.index("carbonate")
    free = result.open.speciation.fractions[0, s, 0] * result.open.speciation.totals_mol_l[0, s]
    assert free == pytest.approx(dissolved_gas_mol_l(CO2, DEFAULT_PCO2_ATM, 25.0), rel=1e-7)
    assert result.ph_open[0] > result.ph_closed[0]


def test_higher_pco2_lowers_the_open_ph():
    low, high = (open_vessel({"naoh": 1e-3}, 25.0, p).ph_open for p in (420e-6, 4200e-6))
    # Bicarbonate-dominated: a tenfold pCO₂ lowers the pH by about one unit (Henderson-Hasselbalch).
    assert low - high == pytest.approx(1.0, abs=0.05)


@pytest.mark.parametrize("pressure", [0.0, -1e-4, 2.0, float("nan")])
def test_bad_pressure_is_refused(pressure):
    with pytest.raises(InputError, match="partial pressure"):
        solve_open_equilibrium(["naoh"], [1e-3], 25.0, pressure_atm=pressure)


# --------------------------------------------------------------------------- the catalog table

def _edit_gas(folder: Path, **changes) -> None:
    path = folder / "gases.csv"
    rows = list(csv.DictReader(path.open(encoding="utf-8")))
    rows[0].update(changes)
    with path.open("w", encoding="utf-8", newline="") as handle:
        writer = csv.DictWriter(handle, fieldnames=list(rows[0]))
        writer.writeheader()
        writer.writerows(rows)


def test_a_mistyped_analytic_coefficient_is_caught(catalog_copy):
    _edit_gas(catalog_copy, analytic="10.5624;-2.3547e-2;-3972.8;0;5.8746e4;1.9194e-5")
    with pytest.raises(CatalogError, match=r"gases.csv:2: analytic: expected the expression to give log_k_25c"):
        read_catalog(catalog_copy)


def test_a_gas_needs_a_system_with_a_neutral_acid_form(catalog_copy):
    _edit_gas(catalog_copy, system_id="tris")
    with pytest.raises(CatalogError, match=r"gases.csv:2: system_id: expected a system whose most protonated form"):
        read_catalog(catalog_copy)
