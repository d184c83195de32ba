"""pKa(T): integrated van 't Hoff with ΔCp, against published temperature data.

Sources:
- Goldberg, Kishore & Lennen, J. Phys. Chem. Ref. Data 31 (2002) 231, eq. (9) and the
  catalog's ΔH°/ΔCp° (each with its source key in catalog/data/steps.csv).
- Roy et al. (MOPS, J. Chem. Eng. Data, measured pK2 at 37 °C = 7.044; read in the
  abstract): tolerance 0.02.
- Good et al., Biochemistry 5 (1966) 467: dpKa/dT of Tris -0.031 K⁻¹ and Goldberg 2002:
  -0.028 K⁻¹ (both from memory): tolerance 0.003.
- HEPES dpKa/dT ≈ -0.014 K⁻¹ (Good 1966, from memory): tolerance 0.003.
"""

import math

import numpy as np
import pytest

from catalog import load_catalog
from selector.chemistry.thermo import apparent_pka, apparent_pka_shift, dpka_dt, pka_at_temperature

R = 8.314462618  # J/(K mol), CODATA 2018


def step(system_id, number=None):
    system = load_catalog().systems[system_id]
    return system.steps[-1 if number is None else number - 1]


def hand_van_t_hoff(pka25, dh_kj, dcp, temperature_c):
    """Eq. (9) of Goldberg 2002 written out again, as ln K, for an independent check."""
    t, theta = temperature_c + 273.15, 298.15
    ln_k = (-pka25 * math.log(10) - dh_kj * 1000 / R * (1 / t - 1 / theta)
            + dcp / R * (theta / t - 1 + math.log(t / theta)))
    return -ln_k / math.log(10)


@pytest.mark.parametrize("system_id, number", [
    ("tris", 1), ("hepes", 2), ("mops", 1), ("phosphate", 2), ("acetate", 1)])
def test_pka_at_37c_follows_the_compilation_equation(system_id, number):
    s = step(system_id, number)
    expected = hand_van_t_hoff(s.pka_25c.value, s.dh_kj_mol.value, s.dcp_j_k_mol.value, 37.0)
    assert float(pka_at_temperature(s.pka_25c.value, s.dh_kj_mol.value, s.dcp_j_k_mol.value, 37.0)) == \
        pytest.approx(expected, abs=1e-9)


def test_mops_pka_at_37c_against_measurement():
    s = step("mops")
    assert float(pka_at_temperature(s.pka_25c.value, s.dh_kj_mol.value, s.dcp_j_k_mol.value, 37.0)) == \
        pytest.approx(7.044, abs=0.02)


def test_tris_pka_falls_about_0_028_per_kelvin():
    s = step("tris")
    assert float(dpka_dt(s.dh_kj_mol.value, s.dcp_j_k_mol.value, 25.0)) == pytest.approx(-0.028, abs=0.003)
    drop = float(pka_at_temperature(s.pka_25c.value, s.dh_kj_mol.value, s.dcp_j_k_mol.value, 37.0)) - s.pka_25c.value
    # 25 -> 37 °C at -0.028 K⁻¹ (Goldberg 2002, from memory): -0.336; tolerance 0.02.
    assert drop == pytest.approx(-0.028 * 12, abs=0.02)


def test_hepes_temperature_coefficient():
    s = step("hepes")
    assert float(dpka_dt(s.dh_kj_mol.value, s.dcp_j_k_mol.value, 25.0)) == pytest.approx(-0.014, abs=0.003)


def test_acetate_pka_nearly_flat_with_temperature():
    # ΔH° of acetic acid is close to zero: pKa changes < 0.01 between 25 and 37 °C
    # (Harned & Ehlers data as summarised by Goldberg 2002; from memory).
    s = step("acetate")
    assert abs(float(pka_at_temperature(s.pka_25c.value, s.dh_kj_mol.value, s.dcp_j_k_mol.value, 37.0))
               - s.pka_25c.value) < 0.01


# Apparent pKa'(T, I).  No published pKa' on the pH scale was read for these cases: the
# check is the equation itself, pKa' = pKa(T) + (1 − 2z) log10 γ₁, worked by hand with the
# Davies equation (Davies 1962, p. 41) and A = 0.5108 at 25 °C (Robinson & Stokes, as
# quoted in selector/chemistry/water.py).  Hand value at I = 0.1 mol/L:
# log10 γ₁ = −0.5108 (√0.1/(1 + √0.1) − 0.03) = −0.10740; tolerance 2e-4 (A to 4 digits).


def test_apparent_pka_at_zero_ionic_strength_is_the_thermodynamic_pka():
    s = step("tris")
    temperatures = np.array([5.0, 25.0, 37.0, 60.0])
    thermodynamic = pka_at_temperature(s.pka_25c.value, s.dh_kj_mol.value, s.dcp_j_k_mol.value, temperatures)
    apparent = apparent_pka(s.pka_25c.value, s.dh_kj_mol.value, s.dcp_j_k_mol.value, temperatures, 0.0, 1)
    assert apparent.shape == (4,)
    assert np.array_equal(apparent, thermodynamic)


@pytest.mark.parametrize("acid_charge, factor", [(0, 1), (1, -1), (-1, 3), (-2, 5)])
def test_apparent_pka_follows_the_charge_rule_at_0_1_molar(acid_charge, factor):
    # Acetic acid (z = 0) falls by 0.1074, TrisH⁺ (z = +1) rises by as much, H2PO4⁻
    # (z = −1) falls by three times that, HPO4²⁻ (z = −2) by five times.
    apparent = float(apparent_pka(4.756, 0.0, 0.0, 25.0, 0.1, acid_charge))
    assert apparent == pytest.approx(4.756 - factor * 0.10740, abs=2e-4 * abs(factor))


def test_apparent_pka_broadcasts_steps_against_ionic_strengths():
    ionic = np.array([[0.0], [0.05], [0.15]])
    charges = np.array([0, -1, -2])
    out = apparent_pka(np.array([2.15, 7.20, 12.35]), 0.0, 0.0, 25.0, ionic, charges)
    assert out.shape == (3, 3)
    assert np.array_equal(out[0], [2.15, 7.20, 12.35])
    assert np.all(np.diff(out[:, 1]) < 0)
    log_gamma_unit = out[:, :1] - 2.15   # the z = 0 step moves by log10 γ₁ itself
    assert np.allclose(out - out[0], apparent_pka_shift(charges, log_gamma_unit), atol=1e-12)
