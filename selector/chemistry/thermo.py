"""Dissociation constants at temperature and ionic strength: pKa(T) and the apparent pKa'(T, I).

References
----------
.. [GKL2002] R. N. Goldberg, N. Kishore, R. M. Lennen, "Thermodynamic quantities for the
   ionization reactions of buffers", J. Phys. Chem. Ref. Data 31 (2002) 231-370, eq. (9)
   (integrated van 't Hoff equation with constant ΔrCp°).
.. [Davies1962] C. W. Davies, Ion Association, Butterworths, London (1962), p. 41 (the
   default activity model of :mod:`selector.chemistry.activity`).
"""

from __future__ import annotations

import numpy as np

from selector.chemistry.activity import log_gamma_unit
from selector.chemistry.water import GAS_CONSTANT_J_MOL_K, KELVIN_OFFSET, LN10, debye_huckel_a

REFERENCE_TEMPERATURE_K = 298.15

#: Half-width of a step's useful buffering range around its apparent pKa' [pH] (common
#: practice: at pKa' ± 1 the buffer term of β for a monoprotic pair, ∝ r/(1 + r)² with
#: r = 10, is 10/121 ÷ 1/4 ≈ 0.33 of its maximum).
USEFUL_RANGE_HALF_WIDTH_PH = 1.0


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


def apparent_pka_shift(acid_charge, log10_gamma_unit):
    """Activity correction pKa' − pKa of a step whose acid form has charge ``acid_charge``.

    Parameters
    ----------
    acid_charge : int or array_like of int
        Charge z of the acid form HA of the step (the base form A has z − 1).
    log10_gamma_unit : float or array_like
        log10 γ₁ of a unit charge at the solution's ionic strength [dimensionless];
        broadcast against ``acid_charge``.

    Returns
    -------
    numpy.ndarray
        pKa' − pKa(T) [pH units].

    Notes
    -----
    pH is −log10 a(H⁺) (the operational scale), so the apparent constant keeps a(H⁺) and
    writes the buffer pair as concentrations: K' = K γ(HA)/γ(A), pH = pKa' + log10([A]/[HA]).
    With log10 γ_i = z_i² log10 γ₁ (every model of :mod:`selector.chemistry.activity`):

    .. math:: pKa' − pKa = log10 γ(A) − log10 γ(HA) = ((z − 1)² − z²) log10 γ₁ = (1 − 2z) log10 γ₁

    Acetic acid (z = 0) gains log10 γ₁ (< 0: pKa' falls with I); TrisH⁺ (z = +1) loses it.
    """
    factor = 1 - 2 * np.asarray(acid_charge)
    return factor * np.asarray(log10_gamma_unit, dtype=float)


def apparent_pka(pka_25c, dh_kj_mol, dcp_j_k_mol, temperature_c, ionic_strength_mol_l, acid_charge,
                 activity: str = "davies"):
    """Apparent pKa' of a step at ``temperature_c`` and ``ionic_strength_mol_l`` (pH scale).

    Parameters
    ----------
    pka_25c : array_like
        pKa at 298.15 K and I = 0.
    dh_kj_mol : array_like
        Standard enthalpy of ionisation ΔrH° at 298.15 K [kJ/mol].
    dcp_j_k_mol : array_like
        Standard heat-capacity change ΔrCp° [J/(K mol)], taken as constant.
    temperature_c : array_like
        Temperature [°C].
    ionic_strength_mol_l : array_like
        Ionic strength I [mol/L], ≥ 0.
    acid_charge : array_like of int
        Charge z of the acid form of the step.
    activity : str
        Activity model, a name of :data:`selector.chemistry.activity.ACTIVITY_MODELS`
        (default Davies [Davies1962]).

    Returns
    -------
    numpy.ndarray
        pKa' [pH units], the arguments broadcast together.

    Notes
    -----
    .. math:: pKa'(T, I) = pKa(T) + (1 − 2z) log10 γ₁(I, A(T))

    pKa(T) from :func:`pka_at_temperature` ([GKL2002], eq. 9); the activity term from
    :func:`apparent_pka_shift`, with A(T) from :func:`selector.chemistry.water.debye_huckel_a`.
    At I = 0, log10 γ₁ = 0 and pKa' = pKa(T) exactly.

    Examples
    --------
    Acetic acid (z = 0, pKa 4.756, ΔH° 0.41 kJ/mol, ΔCp° −142 J/(K mol); values from
    memory) at 25 °C: I = 0 gives 4.756; at I = 0.1 mol/L the Davies term, −0.1074 at
    A = 0.5108, lowers it:

    >>> [round(float(v), 4) for v in apparent_pka(4.756, 0.41, -142.0, 25.0, [0.0, 0.1], 0)]
    [4.756, 4.6486]
    """
    pka_t = pka_at_temperature(pka_25c, dh_kj_mol, dcp_j_k_mol, temperature_c)
    log_g = log_gamma_unit(ionic_strength_mol_l, debye_huckel_a(temperature_c), activity)
    return pka_t + apparent_pka_shift(acid_charge, log_g)
