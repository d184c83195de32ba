"""Temperature dependence of dissociation constants.

References
----------
.. [GKL2002] R. N. Goldberg, N. Kishore, R. M. Lennen, "Thermodynamic quantities for the
   ionization reactions of buffers", J. Phys. Chem. Ref. Data 31 (2002) 231-370, eq. (9)
   (integrated van 't Hoff equation with constant ΔrCp°).
"""

from __future__ import annotations

import numpy as np

from selector.chemistry.water import GAS_CONSTANT_J_MOL_K, KELVIN_OFFSET, LN10

REFERENCE_TEMPERATURE_K = 298.15


def pka_at_temperature(pka_25c, dh_kj_mol, dcp_j_k_mol, temperature_c):
    """Thermodynamic pKa at ``temperature_c`` from its 25 °C value, ΔH° and ΔCp°.

    Parameters
    ----------
    pka_25c : array_like
        pKa at 298.15 K and I = 0.
    dh_kj_mol : array_like
        Standard enthalpy of ionisation ΔrH° at 298.15 K [kJ/mol].
    dcp_j_k_mol : array_like
        Standard heat-capacity change ΔrCp° [J/(K mol)], taken as constant.
    temperature_c : array_like
        Temperature [°C]; broadcast against the other arguments.

    Notes
    -----
    With θ = 298.15 K, eq. (9) of [GKL2002]:

    pK(T) = pK(θ) + ΔH°/(R ln10) (1/T − 1/θ) − ΔCp°/(R ln10) (θ/T − 1 + ln(T/θ))

    Examples
    --------
    Tris with pK 8.072, ΔH° 47.45 kJ/mol and ΔCp° −59 J/(K mol) (values recalled as those
    of [GKL2002], from memory):

    >>> round(float(pka_at_temperature(8.072, 47.45, -59.0, 37.0)), 3)
    7.753
    """
    temperature_k = np.asarray(temperature_c, dtype=float) + KELVIN_OFFSET
    theta = REFERENCE_TEMPERATURE_K
    dh_j_mol = np.asarray(dh_kj_mol, dtype=float) * 1000.0
    dcp = np.asarray(dcp_j_k_mol, dtype=float)
    enthalpy_term = dh_j_mol / (GAS_CONSTANT_J_MOL_K * LN10) * (1.0 / temperature_k - 1.0 / theta)
    heat_capacity_term = dcp / (GAS_CONSTANT_J_MOL_K * LN10) * (
        theta / temperature_k - 1.0 + np.log(temperature_k / theta))
    return np.asarray(pka_25c, dtype=float) + enthalpy_term - heat_capacity_term


def dpka_dt(dh_kj_mol, dcp_j_k_mol, temperature_c):
    """Slope dpKa/dT [1/K] at ``temperature_c`` from ΔH° and ΔCp° (derivative of eq. 9).

    Notes
    -----
    dpK/dT = −ΔH(T)/(R ln10 T²), ΔH(T) = ΔH° + ΔCp° (T − θ).
    """
    temperature_k = np.asarray(temperature_c, dtype=float) + KELVIN_OFFSET
    dh_at_t = np.asarray(dh_kj_mol, dtype=float) * 1000.0 + np.asarray(dcp_j_k_mol, dtype=float) * (
        temperature_k - REFERENCE_TEMPERATURE_K)
    return -dh_at_t / (GAS_CONSTANT_J_MOL_K * LN10 * temperature_k**2)
