"""Single-ion activity coefficient models.

Every model here has the form log10 γ_z = z² · g(I, A): the coefficient of an ion of
charge z is the unit-charge value raised to z².  The engine therefore only needs
``g`` (:func:`log_gamma_unit`), and a model is one function of (I, A).

References
----------
.. [Davies1962] C. W. Davies, Ion Association, Butterworths, London (1962), p. 41.
.. [BG1960] R. G. Bates, E. A. Guggenheim, "Report on the standardization of pH and
   related terminology", Pure Appl. Chem. 1 (1960) 163-168.
.. [Guntelberg] E. Güntelberg, Z. Phys. Chem. 123 (1926) 199 (extended limiting law with
   a common distance of closest approach, B·a = 1).
"""

from __future__ import annotations

import numpy as np

from selector.errors import InputError

#: Ionic strength above which the Davies equation is no longer a fair model [mol/L]
#: (Davies 1962 states it for I up to about 0.1-0.5; 0.5 is the usual upper limit).
DAVIES_MAX_IONIC_STRENGTH_MOL_L = 0.5


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
    root = np.sqrt(np.asarray(ionic_strength_mol_l, dtype=float))
    return -a_dh * (root / (1.0 + root) - 0.3 * root**2)


def log_gamma_unit_bates_guggenheim(ionic_strength_mol_l, a_dh):
    """Bates-Guggenheim convention for a unit charge: log10 γ₁ = −A√I/(1 + 1.5√I).

    Notes
    -----
    The convention that fixes pH(PS) of the primary standards for I ≤ 0.1 mol/kg
    [BG1960]: it is the chloride ion's coefficient in the assignment of pH(PS) (I in
    mol/kg); applied here to every ion.  Against the seven primary standards at 0-50 °C
    it fits phosphate better than Davies (1:3.5 at 50 °C: +0.022 against +0.028 pH) and
    carbonate worse (-0.017 against -0.011 pH) with today's constants (measured in
    ``tests/test_ph_standards.py``), so it is an option, not the default.
    """
    root = np.sqrt(np.asarray(ionic_strength_mol_l, dtype=float))
    return -a_dh * root / (1.0 + 1.5 * root)


def log_gamma_unit_guntelberg(ionic_strength_mol_l, a_dh):
    """Güntelberg form for a unit charge: log10 γ₁ = −A√I/(1 + √I) [Guntelberg]."""
    root = np.sqrt(np.asarray(ionic_strength_mol_l, dtype=float))
    return -a_dh * root / (1.0 + root)


ACTIVITY_MODELS = {
    "davies": log_gamma_unit_davies,
    "bates-guggenheim": log_gamma_unit_bates_guggenheim,
    "guntelberg": log_gamma_unit_guntelberg,
}


def activity_model(name: str):
    """The unit-charge function of the named activity model."""
    try:
        return ACTIVITY_MODELS[name]
    except KeyError:
        raise InputError(f"unknown activity model {name!r}; "
                         f"choose one of: {', '.join(ACTIVITY_MODELS)}") from None


def log_gamma_unit(ionic_strength_mol_l, a_dh, model: str = "davies"):
    """log10 γ of a unit charge under ``model`` (a name of :data:`ACTIVITY_MODELS`)."""
    return activity_model(model)(ionic_strength_mol_l, a_dh)


def log_gamma(charge, ionic_strength_mol_l, a_dh, model: str = "davies"):
    """log10 γ of ions of the given ``charge`` (broadcast) under ``model``."""
    return np.asarray(charge, dtype=float) ** 2 * log_gamma_unit(ionic_strength_mol_l, a_dh, model)
