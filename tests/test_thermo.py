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

import pytest

from catalog import load_catalog
from selector.chemistry.thermo import dpka_dt, pka_at_temperature

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
