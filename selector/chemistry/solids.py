"""Saturation indices of the solids a buffer lab meets (calcium phosphates, carbonates,
fluorides, sulfate, oxalate, metal hydroxides).

For a solid with dissolution reaction  solid = Σ ν_i X_i  (catalog ``solids.csv``):

    SI = log10 IAP − log10 Ksp(T),   IAP = Π a_i^ν_i

with a_i the activities of the free ions and buffer species and of H⁺ (a_H = 10^−pH); SI > 0
is supersaturated (the solid may form), SI < 0 undersaturated.  Ksp(T) follows the van 't Hoff
equation with the source's ΔH° (constant ΔCp° = 0; :func:`selector.chemistry.thermo.pka_at_temperature`),
at 25 °C only where the source publishes no ΔH°.  Definitions: Stumm & Morgan, Aquatic
Chemistry, 3rd ed. (Wiley 1996), ch. 7 (saturation index and the van 't Hoff equation).
Pure numpy over a batch, no I/O.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np

from catalog.records import Solid
from selector.chemistry.thermo import pka_at_temperature

#: The token of the proton in a solid's reaction; its log10 activity is −pH.
PROTON = "H"


def solubility_log_k(solid: Solid, temperature_c) -> np.ndarray:
    """log10 Ksp of ``solid`` at ``temperature_c`` [°C] (van 't Hoff with its ΔH°, or the 25 °C
    value where the source gives none)."""
    dh_kj_mol = 0.0 if solid.dh_kj_mol is None else solid.dh_kj_mol
    return -pka_at_temperature(-solid.log_k_25c.value, dh_kj_mol, 0.0, temperature_c)


def relevant_solids(solids: Mapping[str, Solid], present: set[str]) -> tuple[Solid, ...]:
    """The solids every component of which (the proton aside) is among the ``present`` tokens."""
    return tuple(s for s in solids.values() if all(token == PROTON or token in present for token, _ in s.components))


def saturation_indices(solids: Mapping[str, Solid], log10_activity: Mapping[str, Any], ph,
                       temperature_c) -> dict[str, np.ndarray]:
    """SI of every solid whose components all have an activity, over a batch.

    Parameters
    ----------
    solids : the catalog's solids by id
    log10_activity : token (``Ca``, ``phosphate(-3)`` …) -> log10 activity, shape (n,) or scalar;
        a species or ion with no amount present is simply left out (its solids are skipped)
    ph : pH of each solution, shape (n,)
    temperature_c : °C, shape (n,) or scalar

    Returns
    -------
    dict of solid id -> SI, shape (n,)

    Examples
    --------
    >>> from catalog import load_catalog
    >>> si = saturation_indices(load_catalog().solids, {"Ca": -3.0, "fluoride(-1)": -4.0}, 7.0, 25.0)
    >>> round(float(si["fluorite"][0]), 6)      # log(1e-3 · (1e-4)²) − (−10.5)
    -0.5
    """
    ph = np.atleast_1d(np.asarray(ph, dtype=float))
    out: dict[str, np.ndarray] = {}
    for solid in relevant_solids(solids, set(log10_activity)):
        log_iap = np.zeros_like(ph)
        for token, count in solid.components:
            log_iap = log_iap + count * (-ph if token == PROTON else np.asarray(log10_activity[token], dtype=float))
        out[solid.solid_id] = log_iap - solubility_log_k(solid, temperature_c)
    return out
