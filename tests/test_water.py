"""Water at 0.1 MPa: Kw, density, permittivity and the Debye-Hückel constant.

Check values, each with its source:
- pKw: Marshall & Franck, J. Phys. Chem. Ref. Data 10 (1981) 295, table of pKw at
  saturation pressure, as reprinted in the CRC Handbook of Chemistry and Physics, 86th ed.
  (2005), "Ionization constant of normal and heavy water", p. 8-79.
- density: Kell, J. Chem. Eng. Data 20 (1975) 97 (997.047 kg/m3 at 25 °C, from memory of
  Kell's table).
- permittivity: Malmberg & Maryott, J. Res. NBS 56 (1956) 1: 78.30 at 25 °C.
- A: Robinson & Stokes, Electrolyte Solutions (1959), Appendix 7.1: 0.5108 (molal, 25 °C,
  from memory) ; 0.4918 at 0 °C (from memory).
"""

import numpy as np
import pytest

from selector.chemistry.water import (
    debye_huckel_a,
    log10_kw,
    water_density_g_cm3,
    water_permittivity,
)

# °C -> pKw, Marshall & Franck 1981 via CRC 86th ed. p. 8-79
MARSHALL_FRANCK_PKW = {0: 14.938, 10: 14.528, 25: 13.995, 37: None, 50: 13.275, 75: 12.712, 95: 12.345}


@pytest.mark.parametrize("temperature_c, pkw", [(t, p) for t, p in MARSHALL_FRANCK_PKW.items() if p])
def test_pkw_matches_marshall_franck_table(temperature_c, pkw):
    # The fit reproduces its own table to the table's 0.001 rounding.
    assert -float(log10_kw(temperature_c)) == pytest.approx(pkw, abs=0.0015)


def test_pkw_is_vectorised_and_falls_with_temperature():
    t = np.array([0.0, 25.0, 50.0, 95.0])
    pkw = -log10_kw(t)
    assert pkw.shape == (4,)
    assert np.all(np.diff(pkw) < 0)


def test_water_density_kell_at_25c():
    # Kell (1975): 997.047 kg/m3 at 25 °C (from memory); full precision 0.9970449 g/cm3.
    assert float(water_density_g_cm3(25.0)) == pytest.approx(0.997047, abs=5e-6)
    # Maximum density near 4 °C (Kell 1975: 999.972 kg/m3 at 3.98 °C, from memory).
    grid = np.linspace(0, 10, 1001)
    assert grid[np.argmax(water_density_g_cm3(grid))] == pytest.approx(3.98, abs=0.05)


def test_permittivity_malmberg_maryott_at_25c():
    # Malmberg & Maryott (1956): 78.30 at 25 °C.
    assert float(water_permittivity(25.0)) == pytest.approx(78.30, abs=0.01)


@pytest.mark.parametrize("temperature_c, a_molal", [(0.0, 0.4918), (25.0, 0.5108)])
def test_debye_huckel_a_robinson_stokes(temperature_c, a_molal):
    # Robinson & Stokes (1959) Appendix 7.1, molal scale (from memory); regression values
    # 0.49180089 and 0.51080729.
    assert float(debye_huckel_a(temperature_c)) == pytest.approx(a_molal, abs=2e-4)
