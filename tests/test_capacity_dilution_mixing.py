"""Buffer capacity, dilution value and real mixing volumes.

Sources beside each check value:
- Van Slyke, J. Biol. Chem. 52 (1922) 525: buffer value of a monoprotic weak acid
  β = ln10 (C Ka h/(Ka + h)² + h + Kw/h) (ideal solution); at pH = pKa it is
  ln10·C/4 = 0.5756 C (plus water terms).
- Buck et al., Pure Appl. Chem. 74 (2002) 2169 / Bates, Determination of pH (1973):
  dilution value of the 0.025/0.025 mol/kg phosphate standard ΔpH½ = +0.080 (from memory),
  buffer value β = 0.029 mol/L per pH (read in Lange's Handbook, 15th ed., Table 8.15 notes).
"""

import math

import numpy as np
import pytest

from selector.chemistry.equilibrium import mix_solutions, solve_equilibrium
from selector.chemistry.properties import dilution_value, dph_dt
from selector.chemistry.water import log10_kw


def test_van_slyke_closed_form_for_equimolar_acetate():
    # 0.1 M acetic acid half-neutralised with NaOH, ideal solution (γ = 1: I held at 0).
    eq = solve_equilibrium(["acetic_acid", "naoh"], [0.1, 0.05], 25.0, fixed_ionic_strength_mol_l=0.0)
    h = 10.0 ** -eq.ph[0]
    kw = 10.0 ** float(log10_kw(25.0))
    ka = 10.0 ** -float(eq_pka("acetate"))
    closed_form = math.log(10) * (0.1 * ka * h / (ka + h) ** 2 + h + kw / h)
    assert eq.capacity_mol_l_per_ph[0] == pytest.approx(closed_form, rel=1e-9)
    # Near pH = pKa the acid term is ln10·C/4 (Van Slyke 1922): 0.05756 mol/L per pH.
    assert eq.capacity_mol_l_per_ph[0] == pytest.approx(0.05756, rel=0.01)


def eq_pka(system_id):
    from catalog import load_catalog
    return load_catalog().systems[system_id].steps[0].pka_25c.value


def test_capacity_equals_numerical_derivative_of_titration():
    # β is dC_base/dpH at fixed γ; compare with a finite difference of added NaOH.
    base = np.array([0.0495, 0.0505])
    eq = solve_equilibrium(["acetic_acid", "naoh"], np.column_stack([[0.1, 0.1], base]), 25.0,
                           fixed_ionic_strength_mol_l=0.05)
    mid = solve_equilibrium(["acetic_acid", "naoh"], [0.1, 0.05], 25.0, fixed_ionic_strength_mol_l=0.05)
    numerical = (base[1] - base[0]) / (eq.ph[1] - eq.ph[0])
    assert mid.capacity_mol_l_per_ph[0] == pytest.approx(numerical, rel=1e-4)


def test_phosphate_standard_buffer_value():
    # β = 0.029 mol/L per pH for the 1:1 phosphate standard (Lange's Handbook, read).
    eq = solve_equilibrium(["kh2po4", "na2hpo4"], [0.025, 0.025], 25.0)
    assert eq.capacity_mol_l_per_ph[0] == pytest.approx(0.029, abs=0.001)


def test_phosphate_standard_dilution_value():
    # IUPAC/Bates: ΔpH½ = +0.080.  The Davies equation gives +0.065 (regression 0.0651):
    # its activity coefficients of HPO4 2- change less between I = 0.1 and 0.05 than the
    # real ones, so the expected difference is about -0.015; tolerance 0.02.
    value = dilution_value(["kh2po4", "na2hpo4"], [0.025, 0.025], 25.0)[0]
    assert value == pytest.approx(0.080, abs=0.02)
    assert value > 0


def test_phosphate_standard_temperature_coefficient():
    # dpH/dT of the 1:1 phosphate standard: -0.0028 per K at 25 °C (Bates 1973, from memory;
    # consistent with the IUPAC table, 6.881 at 20 °C and 6.853 at 30 °C).
    assert dph_dt(["kh2po4", "na2hpo4"], [0.025, 0.025], 25.0)[0] == pytest.approx(-0.0028, abs=0.0005)


def test_mixing_equal_volumes_acid_and_base():
    # Equal volumes of 0.2 M acetic acid and 0.1 M NaOH: 0.1 M total acetate, 0.05 M Na
    # (not 0.2 + 0.1), so 0.05 M acetic acid + 0.05 M acetate.
    mixed = mix_solutions([({"acetic_acid": 0.2}, 0.5), ({"naoh": 0.1}, 0.5)])
    assert mixed == pytest.approx({"acetic_acid": 0.1, "naoh": 0.05})
    eq = solve_equilibrium(list(mixed), list(mixed.values()), 25.0)
    species = dict(zip(eq.species_ids, eq.species_mol_l[0]))
    assert species["acetate(0)"] == pytest.approx(0.05, abs=5e-4)
    assert species["acetate(-1)"] == pytest.approx(0.05, abs=5e-4)


def test_mixing_rejects_zero_total_volume():
    from selector.errors import InputError
    with pytest.raises(InputError, match="volume"):
        mix_solutions([({"naoh": 0.1}, 0.0)])
