"""Properties of liquid water at 0.1 MPa, 0-100 °C: density, permittivity, Kw, Debye-Hückel A.

Each function takes ``temperature_c`` as a scalar or array (°C) and returns the same shape.

References
----------
.. [Kell1975] G. S. Kell, "Density, thermal expansivity, and compressibility of liquid
   water from 0° to 150 °C", J. Chem. Eng. Data 20 (1975) 97-105.
.. [MM1956] C. G. Malmberg, A. A. Maryott, "Dielectric constant of water from 0° to
   100 °C", J. Res. Natl. Bur. Stand. 56 (1956) 1-8.
.. [MF1981] W. L. Marshall, E. U. Franck, "Ion product of water substance, 0-1000 °C,
   1-10,000 bars. New international formulation and its background", J. Phys. Chem.
   Ref. Data 10 (1981) 295-304.  Its abstract (as indexed by DTIC, record ADD095185): the
   equation "is believed to describe within ± 0.01 units of log Kw ... many of the
   measurements at saturated vapor pressure up to 200 °C".
.. [RS1959] R. A. Robinson, R. H. Stokes, Electrolyte Solutions, 2nd ed., Butterworths,
   London (1959), Appendix 7.1 (Debye-Hückel constants).
"""

from __future__ import annotations

import numpy as np

KELVIN_OFFSET = 273.15
GAS_CONSTANT_J_MOL_K = 8.314462618
LN10 = float(np.log(10.0))


def water_density_g_cm3(temperature_c):
    """Density of air-free water at 0.1 MPa [g/cm³], Kell's rational fit, 0-150 °C.

    Notes
    -----
    ρ = (999.83952 + 16.945176 t − 7.9870401e-3 t² − 46.170461e-6 t³ + 105.56302e-9 t⁴
    − 280.54253e-12 t⁵) / (1 + 16.879850e-3 t) kg/m³ with t in °C, eq. (16) of [Kell1975].

    Examples
    --------
    >>> round(float(water_density_g_cm3(25.0)), 5)
    0.99704
    """
    t = np.asarray(temperature_c, dtype=float)
    numerator = (999.83952 + 16.945176 * t - 7.9870401e-3 * t**2 - 46.170461e-6 * t**3
                 + 105.56302e-9 * t**4 - 280.54253e-12 * t**5)
    return numerator / (1.0 + 16.879850e-3 * t) / 1000.0


def water_permittivity(temperature_c):
    """Relative permittivity (dielectric constant) of water, 0-100 °C [dimensionless].

    Notes
    -----
    ε = 87.740 − 0.40008 t + 9.398e-4 t² − 1.410e-6 t³, t in °C, eq. (2) of [MM1956].
    """
    t = np.asarray(temperature_c, dtype=float)
    return 87.740 - 0.40008 * t + 9.398e-4 * t**2 - 1.410e-6 * t**3


def debye_huckel_a(temperature_c):
    """Debye-Hückel limiting-law constant A for log10 γ on the molal scale [kg^½ mol^-½].

    Notes
    -----
    A = 1.82483e6 ρ^½ (εT)^-3/2 with ρ in g/cm³ and T in K ([RS1959], eq. 9.7), with ρ from
    [Kell1975] and ε from [MM1956].  Gives 0.4918 at 0 °C, 0.5108 at 25 °C, 0.5373 at 50 °C.
    """
    t = np.asarray(temperature_c, dtype=float)
    temperature_k = t + KELVIN_OFFSET
    return 1.82483e6 * np.sqrt(water_density_g_cm3(t)) / (water_permittivity(t) * temperature_k) ** 1.5


def log10_kw(temperature_c):
    """log10 of the ion product of water Kw (molal, thermodynamic) at 0.1 MPa.

    Notes
    -----
    log Kw = A + B/T + C/T² + D/T³ + (E + F/T + G/T²) log ρ, with ρ in g/cm³ and
    A = −4.098, B = −3245.2 K, C = 2.2362e5 K², D = −3.984e7 K³, E = 13.957,
    F = −1262.3 K, G = 8.5641e5 K²: eq. (1) and Table 1 of [MF1981]; ρ from [Kell1975].
    Gives pKw 14.94 at 0 °C, 14.00 at 25 °C, 13.27 at 50 °C.
    """
    t = np.asarray(temperature_c, dtype=float)
    temperature_k = t + KELVIN_OFFSET
    density = water_density_g_cm3(t)
    return (-4.098 - 3245.2 / temperature_k + 2.2362e5 / temperature_k**2
            - 3.984e7 / temperature_k**3
            + (13.957 - 1262.3 / temperature_k + 8.5641e5 / temperature_k**2) * np.log10(density))


#: Standard uncertainty of log10 Kw (= of pKw) at 0.1 MPa and 0-100 °C [pK units]: ± 0.01,
#: the agreement [MF1981]_ states for its equation with the measurements at saturated
#: vapour pressure up to 200 °C (read in the abstract), taken as a standard uncertainty.
PKW_UNCERTAINTY = 0.01


def pkw_uncertainty(temperature_c):
    """Standard uncertainty of pKw from :func:`log10_kw` [pK units], same shape as ``temperature_c``.

    Notes
    -----
    [MF1981]_ state ± 0.01 in log Kw for their equation up to 200 °C at saturated vapour
    pressure, so the uncertainty does not change over the 0-100 °C the engine uses.

    Examples
    --------
    >>> float(pkw_uncertainty(37.0))
    0.01
    """
    return np.full_like(np.asarray(temperature_c, dtype=float), PKW_UNCERTAINTY)
