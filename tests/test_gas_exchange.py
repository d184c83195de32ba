"""CO₂ from the air: the open-vessel equilibrium (selector.chemistry.gas_exchange).

Henry's constant is phreeqc.dat's CO2(g) (log K −1.468 at 25 °C and its analytic log K(T),
catalog ``gases.csv``); the outer solve fixes the carbonate total where the dissolved H₂CO₃*
equals K_H·pCO₂.  A CO₂ given as ppm of dry air has the partial pressure x·(1 atm − p_H₂O(T)),
p_H₂O from phreeqc.dat's H2O(g) (``gases.csv`` row ``h2o``).  Checks: the catalog rows against
the file they cite; the vapour pressure against PHREEQC; pure water and bicarbonate against
published worked examples; NaHCO₃, NaOH, borax and Tris solutions against PHREEQC (phreeqpython,
phreeqc.dat, EQUILIBRIUM_PHASES CO2(g) at log p = log 4.2e-4 = −3.377, the same partial pressure
given to poise as a pressure); the Henry condition itself; batches, metals and bad input.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

from catalog import CatalogError, load_catalog, read_catalog
from selector.chemistry.equilibrium import molal_to_molar, solve_equilibrium
from selector.chemistry.gas_exchange import (
    DEFAULT_CO2_DRY_AIR_FRACTION,
    dissolved_gas_mol_l,
    henry_log_k,
    open_vessel,
    partial_pressure_in_moist_air_atm,
    solve_open_equilibrium,
    water_vapour_pressure_atm,
)
from selector.chemistry.speciation import STATUS_CONVERGED
from selector.errors import InputError

CO2 = load_catalog().gases["co2"]
VAPOUR = load_catalog().gases["h2o"]
#: The partial pressure the PHREEQC comparisons give both programs [atm]: 420 ppm of 1 atm.
PCO2_ATM = 4.2e-4


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


def test_water_vapour_constant_is_the_one_phreeqc_dat_gives():
    # phreeqc.dat (same file) lines 1212-1216:
    #   H2O(g) / H2O = H2O / -log_k 1.506; delta_h -44.03 kJ / … / -analytic -16.5066 -2.0013E-3 2710.7 3.7646 0 2.24E-6
    phreeqc = pytest.importorskip("phreeqc", reason="the phreeqc package (test extra) ships phreeqc.dat")
    lines = (Path(phreeqc.__file__).parent / "databases" / "phreeqc.dat").read_text(encoding="latin-1").splitlines()
    assert lines[1211].strip() == "H2O(g)" and lines[1212].split() == ["H2O", "=", "H2O"]
    assert lines[1213].split() == ["-log_k", "1.506;", "delta_h", "-44.03", "kJ"]
    assert VAPOUR.log_k_25c.value == 1.506 and VAPOUR.dh_kj_mol == -44.03 and VAPOUR.system_id is None
    assert lines[1215].split()[0] == "-analytic"
    assert tuple(float(x) for x in lines[1215].split()[1:]) == VAPOUR.analytic


def test_water_vapour_pressure():
    # p_H₂O = 10^-log K(T) of H2O(g) = H2O(l).  Steam tables: 3.17 kPa = 0.0313 atm at 25 °C,
    # 6.28 kPa = 0.0620 atm at 37 °C (from memory); tolerance 1 % (the fit's 25 °C value is
    # 1.503 against the file's log_k 1.506).
    p = water_vapour_pressure_atm(np.array([10.0, 25.0, 37.0]))
    assert p[1] == pytest.approx(0.0313, rel=0.01) and p[2] == pytest.approx(0.0620, rel=0.01)
    assert p == pytest.approx([0.01228700, 0.03141787, 0.06195768], rel=1e-6)        # regression
    # Dalton: 420 ppm of dry air in air saturated at 25 °C is 4.07e-4 atm, not 4.20e-4.
    assert partial_pressure_in_moist_air_atm(420e-6, 25.0) == pytest.approx(4.2e-4 * (1 - p[1]), rel=1e-12)


def test_water_vapour_pressure_agrees_with_phreeqc():
    # PHREEQC (phreeqpython, its phreeqc.dat): SI(H2O(g)) of pure water = log10 p_H₂O [atm]
    # (a_w = 1).  Measured |Δ log p| < 1e-15 at 10, 25, 37 °C (the same expression); tolerance 0.002.
    phreeqpython = pytest.importorskip("phreeqpython")
    engine = phreeqpython.PhreeqPython(database="phreeqc.dat")
    for temperature_c in (10.0, 25.0, 37.0):
        solution = engine.add_solution({"temp": temperature_c})
        ours = float(np.log10(water_vapour_pressure_atm(temperature_c)))
        assert ours == pytest.approx(solution.si("H2O(g)"), abs=0.002), temperature_c
        solution.forget()


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
    # Course notes CH3041 (chemistry, James Cook University), part 5, slide "pH [CO2] calculation"
    # (cnsfse01.jcu.edu.au/Schools/Chemistry/CourseCompass/Ch3041/Broadcasts/Lecture5_files/slide0136.htm):
    # 350 ppm CO₂, K_H 3.38e-2 mol/(L·atm), pKa1 6.35: [CO₂] 1.183e-5 mol/L and pH 5.64.
    # poise takes K_H 10^-1.468 = 3.40e-2 and pKa1 6.352, and Davies γ (I ≈ 2e-6): tolerance 0.01.
    result = solve_open_equilibrium(["hcl"], [0.0], 25.0, pressure_atm=350e-6)
    assert result.dissolved_mol_l[0] == pytest.approx(1.183e-5, rel=0.01)
    assert result.ph_open[0] == pytest.approx(5.64, abs=0.01)
    assert result.ph_open[0] == pytest.approx(5.638267, abs=1e-5)          # regression


#: An open-system worked example: course handout "Carbonate chemistry" (file "carb",
#: coursehero.com/file/6491933/carb/), "Open system (logC-pH diagram)", Example 1: base added to
#: water open to air of 10^-3.5 atm CO₂ (365e-6 atm), K_H 3.4e-2 M/atm (10^-1.47), K_a1 10^-6.3,
#: K_a2 10^-10.3: [H₂CO₃*] = 1.24e-5 M and, at pH 6.3, [HCO₃⁻] = 1.24e-5 M (read); its equation
#: [HCO₃⁻] = K_H K_a1 pCO₂/[H⁺] gives 1.24e-3 M at pH 8.3, the example's next pH.  The solution
#: holding that bicarbonate is NaHCO₃ at its alkalinity [HCO₃⁻] + 2[CO₃²⁻] + [OH⁻] − [H⁺]
#: (1.19e-5 and 1.267e-3 M).
HANDOUT_PCO2_ATM = 365e-6
HANDOUT_CASES = [
    # pH of the example, its [HCO3-] [mol/L], NaHCO3 at that alkalinity [mol/L], poise's pH (regression)
    (6.3, 1.24e-5, 1.24e-5 - 10**-6.3, 6.348124),
    (8.3, 1.24e-3, 1.24e-3 + 2 * 1.24e-5 + 10**-5.7 - 10**-8.3, 8.333835),
]


@pytest.mark.parametrize("ph, bicarbonate, nahco3, regression", HANDOUT_CASES, ids=["pH 6.3", "pH 8.3"])
def test_bicarbonate_open_to_air_against_a_worked_example(ph, bicarbonate, nahco3, regression):
    # Given as a pressure, 365e-6 atm is the handout's partial pressure itself.  Tolerance 0.06 pH:
    # the handout rounds K_a1 to 10^-6.3 where poise has 6.352 (+0.05) and takes no activity
    # (Davies at 1.3 mM: −0.017); [H₂CO₃*] and [HCO₃⁻] within 1 % (K_H 10^-1.468 against 3.4e-2).
    result = solve_open_equilibrium(["nahco3"], [nahco3], 25.0, pressure_atm=HANDOUT_PCO2_ATM)
    assert result.dissolved_mol_l[0] == pytest.approx(1.24e-5, rel=0.01)
    assert result.ph_open[0] == pytest.approx(ph, abs=0.06)
    s = result.open.system_ids.index("carbonate")
    held = result.open.speciation.fractions[0, s, 1] * result.total_open_mol_l[0]
    assert held == pytest.approx(bicarbonate, rel=0.01)
    assert result.ph_open[0] == pytest.approx(regression, abs=1e-5)
    # Open to air only the alkalinity counts: NaOH of the same sodium ends at the same state.
    base = solve_open_equilibrium(["naoh"], [nahco3], 25.0, pressure_atm=HANDOUT_PCO2_ATM)
    assert base.ph_open[0] == pytest.approx(result.ph_open[0], abs=1e-8)


# --------------------------------------------------------------------------- PHREEQC

phreeqpython = pytest.importorskip("phreeqpython")

LOG_PCO2 = float(np.log10(PCO2_ATM))

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
    result = solve_open_equilibrium(ids, amounts, temperature_c, pressure_atm=PCO2_ATM)
    assert result.ph_open[0] == pytest.approx(ph, abs=TOLERANCE_PH), f"{name} at {temperature_c} °C"
    # Carbonate at equilibrium (mol/L back to mol/kg): within 3 % (the same γ differences).
    ours_mol_kg = result.total_open_mol_l[0] / float(molal_to_molar(1.0, temperature_c))
    assert ours_mol_kg == pytest.approx(carbon_mol_kg, rel=0.03)


def _phreeqc_moist_air(engine, temperature_c, dry_fraction):
    """1 mM NaHCO₃ (1 kg water) under a large gas phase held at 1 atm (PHREEQC GAS_PHASE
    -fixed_pressure, its Peng-Robinson gas): dry air of ``dry_fraction`` CO₂ (N₂ the rest) already
    saturated with water vapour, so no water evaporates.  Returns (pH, fugacity of CO₂ [atm])."""
    pure = engine.add_solution({"temp": temperature_c})
    p_water = 10.0 ** pure.si("H2O(g)")
    pure.forget()
    engine.ip.run_string(
        f"SOLUTION 1\n  temp {temperature_c}\n  units mmol/kgw\n  Na 1\n  C(4) 1\n  pH 8 charge\n"
        f"GAS_PHASE 1\n  -fixed_pressure\n  -pressure 1.0\n  -volume 1e5\n  -temperature {temperature_c}\n"
        f"  CO2(g) {dry_fraction * (1 - p_water)}\n  N2(g) {(1 - dry_fraction) * (1 - p_water)}\n"
        f"  H2O(g) {p_water}\n"
        "SELECTED_OUTPUT\n  -reset false\n  -pH true\nUSER_PUNCH\n  -headings pCO2\n"
        '  10 PUNCH 10^SI("CO2(g)")\nEND\n')
    rows = engine.ip.get_selected_output_array()
    return float(rows[-1][0]), float(rows[-1][1])


@pytest.mark.parametrize("temperature_c", [10.0, 25.0, 37.0])
def test_moist_air_agrees_with_phreeqcs_gas_phase(temperature_c):
    # An independent check of p = x (1 atm - p_H2O): PHREEQC's own gas phase at 1 atm holding
    # 420 ppm of the dry gas.  Its CO₂ fugacity is ours times the Peng-Robinson fugacity
    # coefficient at 1 atm, 0.996 (measured 4.130e-4, 4.052e-4, 3.925e-4 atm against our partial
    # pressures 4.148e-4, 4.068e-4, 3.940e-4 at 10, 25, 37 °C): within 1 %.  pH measured
    # 8.099, 8.193, 8.286 against our 8.095, 8.188, 8.277 (the activity-model gaps of the cases
    # above): the same tolerance, 0.02.
    engine = phreeqpython.PhreeqPython(database="phreeqc.dat")       # its own: the raw input numbers SOLUTION 1
    ph, fugacity = _phreeqc_moist_air(engine, temperature_c, DEFAULT_CO2_DRY_AIR_FRACTION)
    result = solve_open_equilibrium(["nahco3"], [float(molal_to_molar(1e-3, temperature_c))], temperature_c)
    assert result.pressure_atm[0] == pytest.approx(fugacity, rel=0.01)
    assert result.ph_open[0] == pytest.approx(ph, abs=TOLERANCE_PH)


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
    assert solve_open_equilibrium(ids, amounts, 25.0, pressure_atm=PCO2_ATM).ph_open[0] == pytest.approx(
        ph, abs=TOLERANCE_PH)


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
    moist = partial_pressure_in_moist_air_atm(DEFAULT_CO2_DRY_AIR_FRACTION, temperature)
    assert result.pressure_atm == pytest.approx(moist, rel=1e-12)
    target = dissolved_gas_mol_l(CO2, moist, temperature)
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
    assert free == pytest.approx(dissolved_gas_mol_l(CO2, result.pressure_atm[0], 25.0), rel=1e-7)
    assert result.ph_open[0] > result.ph_closed[0]


def test_higher_pco2_lowers_the_open_ph():
    low, high = (open_vessel({"naoh": 1e-3}, 25.0, dry_air_fraction=x).ph_open for x in (420e-6, 4200e-6))
    # Bicarbonate-dominated: a tenfold pCO₂ lowers the pH by about one unit (Henderson-Hasselbalch).
    assert low - high == pytest.approx(1.0, abs=0.05)


@pytest.mark.parametrize("pressure", [0.0, -1e-4, 2.0, float("nan")])
def test_bad_pressure_is_refused(pressure):
    with pytest.raises(InputError, match="partial pressure"):
        solve_open_equilibrium(["naoh"], [1e-3], 25.0, pressure_atm=pressure)
    with pytest.raises(InputError, match="fraction of dry air"):
        solve_open_equilibrium(["naoh"], [1e-3], 25.0, dry_air_fraction=pressure)


# --------------------------------------------------------------------------- water vapour

#: Open pH of 1 mM NaHCO₃ with 420 ppm of dry air in moist air, minus that with 4.2e-4 atm
#: (water vapour ignored), measured: +0.0053, +0.0136, +0.0270 at 10, 25, 37 °C.  At fixed
#: bicarbonate pH moves with −log p, so the shift is −log10(1 − p_H₂O/1 atm): 0.0054, 0.0139,
#: 0.0278 (tolerance 0.002: carbonate and OH⁻ take a little of the shift).
VAPOUR_SHIFT = {10.0: 0.0054, 25.0: 0.0139, 37.0: 0.0278}


@pytest.mark.parametrize("temperature_c", sorted(VAPOUR_SHIFT))
def test_moist_air_raises_the_open_ph_of_bicarbonate(temperature_c):
    moist = solve_open_equilibrium(["nahco3"], [1e-3], temperature_c)
    dry = solve_open_equilibrium(["nahco3"], [1e-3], temperature_c, pressure_atm=PCO2_ATM)
    shift = float(moist.ph_open[0] - dry.ph_open[0])
    expected = -np.log10(1 - float(water_vapour_pressure_atm(temperature_c)))
    assert shift == pytest.approx(expected, abs=0.002)
    assert shift == pytest.approx(VAPOUR_SHIFT[temperature_c], abs=0.001)
    assert moist.dry_air_fraction is not None and dry.dry_air_fraction is None


def test_a_batch_takes_each_rows_own_vapour_pressure():
    result = solve_open_equilibrium(["naoh"], [[1e-3], [1e-3]], np.array([10.0, 37.0]))
    assert result.pressure_atm == pytest.approx(
        partial_pressure_in_moist_air_atm(DEFAULT_CO2_DRY_AIR_FRACTION, np.array([10.0, 37.0])), rel=1e-12)
    one = open_vessel({"naoh": 1e-3}, 37.0)
    assert one.ph_open == pytest.approx(float(result.ph_open[1]), abs=1e-9) and one.ppm_dry_air == pytest.approx(420)


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


def test_only_water_vapour_stands_without_a_system(catalog_copy):
    _edit_gas(catalog_copy, system_id="")
    with pytest.raises(CatalogError, match=r"gases.csv:2: system_id: expected a system of systems.csv \(only water"):
        read_catalog(catalog_copy)


def test_water_vapour_is_no_gas_to_equilibrate_a_buffer_with():
    with pytest.raises(InputError, match="dissolves into a buffer system"):
        solve_open_equilibrium(["naoh"], [1e-3], 25.0, gas_id="h2o")
