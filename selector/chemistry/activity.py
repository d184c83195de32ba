"""Single-ion activity coefficient models.

Most models here have the form log10 γ_z = z² · g(I, A): the coefficient of an ion of
charge z is the unit-charge value raised to z².  The engine's acid–base solver only needs
``g`` (:func:`log_gamma_unit`), and such a model is one function of (I, A)
(:data:`ACTIVITY_MODELS`), with a plain-float twin for one composition
(:data:`FLOAT_ACTIVITY_MODELS`): both call the model's one formula, written on √I.

The ion-size model ``truesdell-jones`` (:func:`log_gamma_truesdell_jones`) gives each
species its own ion size å and coefficient b (catalog table ``ion_size.csv``), so it is a
function of the species, not of the charge alone (:data:`SPECIES_ACTIVITY_MODELS`);
:func:`selector.chemistry.equilibrium.solve_equilibrium` solves it with the
multicomponent solver, where every species has its own γ.

References
----------
.. [Davies1962] C. W. Davies, Ion Association, Butterworths, London (1962), p. 41.
.. [BG1960] R. G. Bates, E. A. Guggenheim, "Report on the standardization of pH and
   related terminology", Pure Appl. Chem. 1 (1960) 163-168.
.. [Guntelberg] E. Güntelberg, Z. Phys. Chem. 123 (1926) 199 (extended limiting law with
   a common distance of closest approach, B·a = 1).
.. [TJ1974] A. H. Truesdell, B. F. Jones, "WATEQ, a computer program for calculating
   chemical equilibria of natural waters", J. Res. U.S. Geol. Surv. 2 (1974) 233-248: the
   extended Debye-Hückel equation with a per-ion b term (the form used here; the per-ion
   å and b are read where the catalog row says, not in this paper).
.. [PA2013] D. L. Parkhurst, C. A. J. Appelo, "Description of input and examples for
   PHREEQC version 3", U.S. Geological Survey Techniques and Methods 6-A43 (2013): the
   ``-gamma a b`` parameters of phreeqc.dat; species without them take the Davies equation,
   uncharged species log10 γ = 0.1 I (from memory; measured on PHREEQC with phreeqc.dat in
   ``tests/test_ion_size_activity.py``).
.. [CODATA2018] E. Tiesinga et al., "CODATA recommended values of the fundamental physical
   constants: 2018", Rev. Mod. Phys. 93 (2021) 025010 (N_A, e, k exact; ε0).
"""

from __future__ import annotations

import math
from typing import Callable

import numpy as np

from selector.chemistry.water import KELVIN_OFFSET, debye_huckel_a, water_density_g_cm3, water_permittivity
from selector.errors import InputError

#: Ionic strength above which the Davies equation is no longer a fair model [mol/L]
#: (Davies 1962 states it for I up to about 0.1-0.5; 0.5 is the usual upper limit).
DAVIES_MAX_IONIC_STRENGTH_MOL_L = 0.5


# The one formula of each unit-charge model, written on √I in plain arithmetic so that it serves
# numpy arrays (the ``log_gamma_unit_*`` functions) and Python floats (their ``*_float`` twins,
# for the engine's one-composition path) alike, operation for operation.

def _davies_unit(root, a_dh):
    """−A (√I/(1 + √I) − 0.3 I) from ``root`` = √I [Davies1962]."""
    return -a_dh * (root / (1.0 + root) - 0.3 * (root * root))


def _bates_guggenheim_unit(root, a_dh):
    """−A√I/(1 + 1.5√I) from ``root`` = √I [BG1960]."""
    return -a_dh * root / (1.0 + 1.5 * root)


def _guntelberg_unit(root, a_dh):
    """−A√I/(1 + √I) from ``root`` = √I [Guntelberg]."""
    return -a_dh * root / (1.0 + root)


def _float_root(ionic_strength_mol_l: float) -> float:
    """√I of a float as ``np.sqrt`` gives it (NaN below zero, where ``math.sqrt`` raises)."""
    return math.sqrt(ionic_strength_mol_l) if ionic_strength_mol_l >= 0.0 else math.nan


def log_gamma_unit_davies(ionic_strength_mol_l, a_dh):
    """Davies equation for a unit charge: log10 γ₁ = −A (√I/(1+√I) − 0.3 I).

    Notes
    -----
    [Davies1962]; with A from :func:`selector.chemistry.water.debye_huckel_a`.

    Examples
    --------
    >>> round(float(log_gamma_unit_davies(0.1, 0.5108)), 4)
    -0.1074
    """
    return _davies_unit(np.sqrt(np.asarray(ionic_strength_mol_l, dtype=float)), a_dh)


def log_gamma_unit_bates_guggenheim(ionic_strength_mol_l, a_dh):
    """Bates-Guggenheim convention for a unit charge: log10 γ₁ = −A√I/(1 + 1.5√I).

    Notes
    -----
    The convention that fixes pH(PS) of the primary standards for I ≤ 0.1 mol/kg
    [BG1960]: it is the chloride ion's coefficient in the assignment of pH(PS) (I in
    mol/kg); applied here to every ion.  Against the seven primary standards at 0-50 °C
    it fits phosphate better than Davies (1:3.5 at 50 °C: +0.021 against +0.027 pH) and
    carbonate worse (-0.017 against -0.011 pH at 15 °C) with today's constants (measured in
    ``tests/test_ph_standards.py``): any model of the form log γ_z = z² g(I) moves both
    standards alike, and their errors differ by 0.020 pH, so neither this convention applied
    to every ion nor Davies meets 0.010 for all seven; it is an option, not the default.
    """
    return _bates_guggenheim_unit(np.sqrt(np.asarray(ionic_strength_mol_l, dtype=float)), a_dh)


def log_gamma_unit_guntelberg(ionic_strength_mol_l, a_dh):
    """Güntelberg form for a unit charge: log10 γ₁ = −A√I/(1 + √I) [Guntelberg]."""
    return _guntelberg_unit(np.sqrt(np.asarray(ionic_strength_mol_l, dtype=float)), a_dh)


#: Ionic strength up to which the ion-size (Truesdell–Jones) model is used here [mol/L]: the
#: range over which it was measured against PHREEQC/phreeqc.dat (tests/test_against_phreeqc.py).
#: Truesdell & Jones fitted their b terms to mean activity coefficients up to a few mol/kg
#: for NaCl, but the buffer species' å alone (b = 0) are extended Debye-Hückel values, fair
#: to about 0.1-0.5 mol/kg (common practice); the same 0.5 mol/L as Davies is kept, so the
#: engine's one ionic-strength warning (at :data:`DAVIES_MAX_IONIC_STRENGTH_MOL_L`) serves both.
TRUESDELL_JONES_MAX_IONIC_STRENGTH_MOL_L = 0.5

#: log10 γ = b I of an uncharged species under the ion-size model [kg/mol] (PHREEQC's
#: convention for uncharged species [PA2013], from memory; measured: γ(NH3) = 1.0233 at
#: I = 0.100 mol/kg in PHREEQC with phreeqc.dat, 10^(0.1·0.1) = 1.0233).
UNCHARGED_B_KG_MOL = 0.1

# CODATA 2018 [CODATA2018]: Avogadro constant, elementary charge, Boltzmann constant (exact),
# vacuum permittivity.
_AVOGADRO_PER_MOL = 6.02214076e23
_ELEMENTARY_CHARGE_C = 1.602176634e-19
_BOLTZMANN_J_K = 1.380649e-23
_VACUUM_PERMITTIVITY_F_M = 8.8541878128e-12


def debye_huckel_b(temperature_c):
    """Debye-Hückel constant B of the ion-size term [Å⁻¹ kg^½ mol^-½].

    Notes
    -----
    B = κ/√I, the inverse Debye length per root ionic strength:
    B = (2 N_A e² ρ_w / (ε₀ ε_r k T))^½ (I in mol/kg, ρ_w in kg/m³, result in m⁻¹, × 1e-10
    for Å⁻¹), with the same water density [Kell1975] and permittivity [MM1956] as
    :func:`selector.chemistry.water.debye_huckel_a` and CODATA 2018 constants.  Gives 0.3287 at
    25 °C (the familiar 50.29 (ρ/εT)^½ of Robinson & Stokes, from memory).

    Examples
    --------
    >>> round(float(debye_huckel_b(25.0)), 4)
    0.3287
    """
    t = np.asarray(temperature_c, dtype=float)
    kappa_sq = (2.0 * _AVOGADRO_PER_MOL * _ELEMENTARY_CHARGE_C**2 * water_density_g_cm3(t) * 1000.0
                / (_VACUUM_PERMITTIVITY_F_M * water_permittivity(t) * _BOLTZMANN_J_K * (t + KELVIN_OFFSET)))
    return np.sqrt(kappa_sq) * 1e-10


def log_gamma_truesdell_jones(charge, ionic_strength_mol_l, a_dh, b_dh, ion_size_angstrom, b_kg_mol):
    r"""Ion-size (Truesdell–Jones) log10 γ of each species [dimensionless].

    Parameters
    ----------
    charge : array [P]
        Charge of each species.
    ionic_strength_mol_l : float or array [N]
        Ionic strength I [mol/L].
    a_dh, b_dh : float or array [N]
        Debye-Hückel A [kg^½ mol^-½] and B [Å⁻¹ kg^½ mol^-½] at the solutions' temperature.
    ion_size_angstrom, b_kg_mol : array [P]
        Each species' å [Å] and b [kg/mol] (``ion_size.csv``); NaN where the species has none.

    Returns
    -------
    array [N, P] (or [P] for scalar I)

    Notes
    -----
    .. math:: \log_{10}\gamma_i = -\frac{A z_i^2 \sqrt{I}}{1 + B å_i \sqrt{I}} + b_i I

    ([TJ1974]; the per-species å, b of [PA2013]).  A charged species without å takes the
    Davies equation (:func:`log_gamma_unit_davies` × z², as PHREEQC does); an uncharged
    species takes log10 γ = b I with its own b, else :data:`UNCHARGED_B_KG_MOL` · I.

    Which ion pairs go with it: the å and b come from one database (phreeqc.dat), fitted
    together with that database's own Na⁺/K⁺ pairs, so under this model ``ion_pairs=True``
    takes those pairs (:func:`selector.chemistry.arrays.model_ion_pairs`) and not the stronger
    NIST SRD 46 ones, which would count the same non-ideality twice.  With them it follows
    PHREEQC/phreeqc.dat to a median 0.002 and a largest 0.019 pH on 120 buffers in NaCl up to
    I = 0.5 mol/kg (``tests/test_against_phreeqc.py``).  Range: the buffer ions have b = 0 (the
    extended Debye–Hückel law, fair to about 0.5 mol/L, common practice); past
    :data:`TRUESDELL_JONES_MAX_IONIC_STRENGTH_MOL_L` results carry the ionic-strength warning.

    Examples
    --------
    Na⁺ (å 4.08 Å, b 0.082) at I = 0.1 mol/L, 25 °C:

    >>> round(float(log_gamma_truesdell_jones([1], 0.1, 0.5108, 0.3286, [4.08], [0.082])[0]), 4)
    -0.1052
    """
    z_sq = np.asarray(charge, dtype=float) ** 2
    size = np.asarray(ion_size_angstrom, dtype=float)
    b_ion = np.asarray(b_kg_mol, dtype=float)
    ionic = np.asarray(ionic_strength_mol_l, dtype=float)[..., None]
    root = np.sqrt(ionic)
    a = np.asarray(a_dh, dtype=float)[..., None]
    b = np.asarray(b_dh, dtype=float)[..., None]
    has_size = ~np.isnan(size)
    sized = -a * z_sq * root / (1.0 + b * np.where(has_size, size, 0.0) * root) + np.where(has_size, b_ion, 0.0) * ionic
    davies = z_sq * log_gamma_unit_davies(ionic, a)
    charged = np.where(has_size, sized, davies)
    return np.where(z_sq > 0, charged, np.where(has_size, b_ion, UNCHARGED_B_KG_MOL) * ionic)


def species_parameters(tokens, ion_sizes) -> tuple[np.ndarray, np.ndarray]:
    """å [Å] and b [kg/mol] of each species token (``ion_size.csv`` keys), NaN where it has none."""
    rows = [ion_sizes.get(token) for token in tokens]
    size = np.array([np.nan if r is None else r.ion_size_angstrom.value for r in rows], dtype=float)
    b = np.array([np.nan if r is None else r.b_kg_mol for r in rows], dtype=float)
    return size, b


def log_gamma_species(tokens, charge, ionic_strength_mol_l, temperature_c, ion_sizes):
    """log10 γ [N, P] of named species under the ion-size model at their temperature [°C].

    ``tokens`` name the species as ``ion_size.csv`` does; ``ion_sizes`` is that table
    (:attr:`catalog.records.Catalog.ion_sizes`).  A and B at ``temperature_c`` [N].
    """
    size, b = species_parameters(tokens, ion_sizes)
    return log_gamma_truesdell_jones(charge, ionic_strength_mol_l, debye_huckel_a(temperature_c),
                                     debye_huckel_b(temperature_c), size, b)


ACTIVITY_MODELS = {
    "davies": log_gamma_unit_davies,
    "bates-guggenheim": log_gamma_unit_bates_guggenheim,
    "guntelberg": log_gamma_unit_guntelberg,
}


def log_gamma_unit_davies_float(ionic_strength_mol_l: float, a_dh: float) -> float:
    """:func:`log_gamma_unit_davies` of one plain float I [mol/L] and A: the same formula and
    the same float operations, without numpy's cost per call (about 1 µs per ufunc on a scalar).

    Examples
    --------
    >>> log_gamma_unit_davies_float(0.1, 0.5108) == float(log_gamma_unit_davies(0.1, 0.5108))
    True
    """
    return _davies_unit(_float_root(ionic_strength_mol_l), a_dh)


def log_gamma_unit_bates_guggenheim_float(ionic_strength_mol_l: float, a_dh: float) -> float:
    """:func:`log_gamma_unit_bates_guggenheim` of one plain float I [mol/L] and A."""
    return _bates_guggenheim_unit(_float_root(ionic_strength_mol_l), a_dh)


def log_gamma_unit_guntelberg_float(ionic_strength_mol_l: float, a_dh: float) -> float:
    """:func:`log_gamma_unit_guntelberg` of one plain float I [mol/L] and A."""
    return _guntelberg_unit(_float_root(ionic_strength_mol_l), a_dh)


#: The plain-float twin of each model of :data:`ACTIVITY_MODELS` (same names, same formula:
#: each pair calls one formula; ``tests/test_engine_one_composition.py`` holds them equal to
#: the bit).  The engine's one-composition path calls these with Python floats.
FLOAT_ACTIVITY_MODELS: dict[str, Callable[[float, float], float]] = {
    "davies": log_gamma_unit_davies_float,
    "bates-guggenheim": log_gamma_unit_bates_guggenheim_float,
    "guntelberg": log_gamma_unit_guntelberg_float,
}


#: Models with per-species parameters: name -> the unit-charge model the engine starts from
#: (and uses for a species without parameters).
SPECIES_ACTIVITY_MODELS = {"truesdell-jones": "davies"}

#: Every model name a user may choose, in the order offered.
ACTIVITY_MODEL_NAMES = (*ACTIVITY_MODELS, *SPECIES_ACTIVITY_MODELS)

def check_activity_model(name: str) -> str:
    """``name`` if it is a model of :data:`ACTIVITY_MODEL_NAMES`, else InputError listing them."""
    if name not in ACTIVITY_MODEL_NAMES:
        raise InputError(f"unknown activity model {name!r}; choose one of: {', '.join(ACTIVITY_MODEL_NAMES)}")
    return name


def per_species(name: str) -> bool:
    """True for a model whose γ depends on the species, not only on its charge."""
    return check_activity_model(name) in SPECIES_ACTIVITY_MODELS


def unit_charge_model(name: str) -> str:
    """The charge-only model standing for ``name`` where only the charge is known."""
    return SPECIES_ACTIVITY_MODELS.get(check_activity_model(name), name)


def activity_model(name: str):
    """The unit-charge function of the named activity model.

    A per-species model (``truesdell-jones``) has none: asking for it here is an InputError
    naming where it can be used.
    """
    if name in SPECIES_ACTIVITY_MODELS:
        raise InputError(f"activity model {name!r} needs each species' ion size and is available for "
                         f"solved solutions only; here choose one of: {', '.join(ACTIVITY_MODELS)}")
    try:
        return ACTIVITY_MODELS[name]
    except KeyError:
        raise InputError(f"unknown activity model {name!r}; "
                         f"choose one of: {', '.join(ACTIVITY_MODEL_NAMES)}") from None


def float_activity_model(name: str) -> Callable[[float, float], float]:
    """The plain-float twin (:data:`FLOAT_ACTIVITY_MODELS`) of :func:`activity_model` ``(name)``."""
    activity_model(name)   # the same errors for a per-species or unknown name
    return FLOAT_ACTIVITY_MODELS[name]


def log_gamma_unit(ionic_strength_mol_l, a_dh, model: str = "davies"):
    """log10 γ of a unit charge under ``model`` (a name of :data:`ACTIVITY_MODELS`)."""
    return activity_model(model)(ionic_strength_mol_l, a_dh)


def log_gamma(charge, ionic_strength_mol_l, a_dh, model: str = "davies"):
    """log10 γ of ions of the given ``charge`` (broadcast) under ``model``."""
    return np.asarray(charge, dtype=float) ** 2 * log_gamma_unit(ionic_strength_mol_l, a_dh, model)
