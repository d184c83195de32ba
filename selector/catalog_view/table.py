"""The system table: every system's steps at a chosen temperature and ionic strength.

Notes
-----
Species j of a system has lost j protons and has charge z_j = z0 − j.  The step j
(species j−1 → species j + H⁺) has the thermodynamic constant K_j(T) from pKa(25 °C),
ΔH° and ΔCp° by the integrated van 't Hoff equation ([GKL2002], eq. 9).  At ionic
strength I the conditional constant on the pH scale (pH = −log10 a(H⁺)) is
K'_j = K_j γ_{j−1}/γ_j (as in :mod:`selector.chemistry.speciation`), and with
log10 γ_z = z² log10 γ₁(I):

    pKa'_j = pKa_j(T) + (z_j² − z_{j−1}²) log10 γ₁ = pKa_j(T) − (2 z_j + 1) log10 γ₁

so that pH = pKa'_j + log10([species j]/[species j−1]) (computed by
:func:`selector.chemistry.thermo.apparent_pka`).  For acetic acid (z_1 = −1)
pKa' = pKa + log10 γ₁ falls with I; for TrisH⁺ (z_1 = 0) pKa' = pKa − log10 γ₁ rises.
The useful range of a step is pKa'_j ± 1
(:data:`selector.chemistry.thermo.USEFUL_RANGE_HALF_WIDTH_PH`, common practice).

References
----------
.. [GKL2002] R. N. Goldberg, N. Kishore, R. M. Lennen, J. Phys. Chem. Ref. Data 31
   (2002) 231-370, eq. (9).
"""

from __future__ import annotations

import numpy as np

from catalog import Catalog, load_catalog
from catalog.selection import read_share
from selector.catalog_view.records import Conditions, StepAtConditions, SystemRow, SystemTable
from selector.chemistry.activity import DAVIES_MAX_IONIC_STRENGTH_MOL_L, log_gamma_unit
from selector.chemistry.arrays import engine_tables
from selector.chemistry.thermo import USEFUL_RANGE_HALF_WIDTH_PH, apparent_pka, dpka_dt, pka_at_temperature
from selector.chemistry.water import debye_huckel_a
from selector.errors import InputError
from selector.units import check_temperature

#: Largest ionic strength the catalog view accepts [mol/L] (the spec's limit too).
MAX_IONIC_STRENGTH_MOL_L = 5.0


def check_ionic_strength(ionic_strength_mol_l) -> float:
    """The ionic strength as a float, or InputError if it is not a finite number ≥ 0."""
    try:
        value = float(ionic_strength_mol_l)
    except (TypeError, ValueError):
        raise InputError(f"ionic strength {ionic_strength_mol_l!r} is not a number; give mol/L "
                         "of zero or more, e.g. 0.15 or 150mM") from None
    if not np.isfinite(value):
        raise InputError(f"ionic strength {value:g} is not a finite number; give mol/L of zero or more, "
                         "e.g. 0.15 or 150mM")
    if value < 0:
        raise InputError(f"ionic strength {value:g} mol/L is negative; give zero or more, e.g. 0.15 or 150mM")
    if value > MAX_IONIC_STRENGTH_MOL_L:
        raise InputError(f"ionic strength {value:g} mol/L is beyond what the activity models can describe; "
                         f"give at most {MAX_IONIC_STRENGTH_MOL_L:g} mol/L")
    return value


def view_conditions(temperature_c, ionic_strength_mol_l, activity) -> Conditions:
    """Checked temperature [°C], ionic strength [mol/L] and activity model, with log10 γ₁ and warnings."""
    temperature = float(check_temperature(temperature_c))
    ionic = check_ionic_strength(ionic_strength_mol_l)
    log_gamma = float(log_gamma_unit(ionic, debye_huckel_a(temperature), activity)) + 0.0  # no -0.0
    warnings = []
    if ionic > DAVIES_MAX_IONIC_STRENGTH_MOL_L:
        warnings.append(f"ionic strength {ionic:g} mol/L is above {DAVIES_MAX_IONIC_STRENGTH_MOL_L:g} mol/L, "
                        "the range of the activity model; the apparent pKa are less certain")
    return Conditions(temperature, ionic, activity, log_gamma, tuple(warnings))


def steps_at_conditions(catalog: Catalog, conditions: Conditions) -> dict[str, tuple[StepAtConditions, ...]]:
    """Every system's steps at the conditions, computed on the padded arrays at once."""
    arrays = engine_tables(catalog).systems
    t = conditions.temperature_c
    pka_t = pka_at_temperature(arrays.pka_25c, arrays.dh_kj_mol, arrays.dcp_j_k_mol, t)
    j = np.arange(1, arrays.max_steps + 1)[None, :]
    base_charge = arrays.charge_most_protonated[:, None] - j
    pka_apparent = apparent_pka(arrays.pka_25c, arrays.dh_kj_mol, arrays.dcp_j_k_mol, t,
                                conditions.ionic_strength_mol_l, base_charge + 1, conditions.activity_model)
    slope = dpka_dt(arrays.dh_kj_mol, arrays.dcp_j_k_mol, t)
    inside = (arrays.t_min_c <= t) & (t <= arrays.t_max_c)
    out = {}
    for s, system_id in enumerate(arrays.system_ids):
        out[system_id] = tuple(
            StepAtConditions(
                step=k + 1,
                acid_charge=int(base_charge[s, k] + 1),
                base_charge=int(base_charge[s, k]),
                pka_25c=float(arrays.pka_25c[s, k]),
                pka_thermodynamic=float(pka_t[s, k]),
                pka_apparent=float(pka_apparent[s, k]),
                useful_ph_low=float(pka_apparent[s, k] - USEFUL_RANGE_HALF_WIDTH_PH),
                useful_ph_high=float(pka_apparent[s, k] + USEFUL_RANGE_HALF_WIDTH_PH),
                dpka_dt_per_k=float(slope[s, k]),
                within_data_range=bool(inside[s, k]),
            )
            for k in range(int(arrays.n_steps[s])))
    return out


def system_table(temperature_c=25.0, ionic_strength_mol_l=0.0, activity: str = "davies",
                 catalog: Catalog | None = None) -> SystemTable:
    """Every system with its steps' apparent pKa at ``temperature_c`` and ``ionic_strength_mol_l``.

    Parameters
    ----------
    temperature_c : float
        Temperature [°C], 0-95.
    ionic_strength_mol_l : float
        Ionic strength [mol/L], ≥ 0.
    activity : str
        Activity model (a name of :data:`selector.chemistry.activity.ACTIVITY_MODELS`).

    Raises
    ------
    InputError for a temperature, ionic strength or activity model that cannot be used.

    Notes
    -----
    pKa'_j = pKa_j(T) − (2 z_j + 1) log10 γ₁(I); see the module notes.
    """
    catalog = catalog if catalog is not None else load_catalog()
    conditions = view_conditions(temperature_c, ionic_strength_mol_l, activity)
    steps = steps_at_conditions(catalog, conditions)
    rows = tuple(
        SystemRow(
            system_id=system.system_id,
            name=system.name,
            steps=steps[system.system_id],
            flags=tuple(dict.fromkeys(f.flag for f in catalog.flags_of(system.system_id))),
            hazardous=system.hazardous,
            uv_cutoff_nm=(catalog.uv_cutoffs[system.system_id].uv_cutoff_nm.value
                          if system.system_id in catalog.uv_cutoffs else None),
        )
        for system in catalog.systems.values())
    read, used = read_share(step for system in catalog.systems.values() for step in system.steps)
    return SystemTable(conditions, rows, read, used)
