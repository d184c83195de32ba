"""Linear coefficients of reagents at fixed pH, temperature and ionic strength.

At a fixed pH and fixed activity coefficients every species is a fixed fraction of its
system's total, so the charge balance, buffer capacity β, ionic strength, osmolarity and
the trace-metal binding term of a mix are linear in the reagent amounts x_r [mol/L]:

    R(pH)  = Σ_r charge_r x_r + ([H⁺] − [OH⁻])            (charge balance, = 0 at the pH)
    β(pH)  = Σ_r capacity_r x_r + ln10 ([H⁺] + [OH⁻])
    I(pH)  = Σ_r ionic_r x_r + ½ ([H⁺] + [OH⁻])
    osm    = Σ_r particles_r x_r + [H⁺] + [OH⁻]
    B_M    = Σ_r binding_M,r x_r     (bound/free ratio of a trace metal M)

Adding a strong acid load L lowers R by L, so the pH stays above p − δ while R(p − δ) ≥ L
(R falls with pH); a base load L keeps it below p + δ while R(p + δ) ≤ −L.

These are what the optimiser and the ranking are built from; every returned mix is then
re-solved with the exact engine (:func:`selector.chemistry.equilibrium.solve_equilibrium`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from catalog import Catalog, load_catalog
from selector.chemistry.activity import activity_model
from selector.chemistry.arrays import engine_tables
from selector.chemistry.speciation import speciate_at_ph
from selector.chemistry.water import LN10, debye_huckel_a

#: Qualitative binding statements and the log K poise assumes for them where no number
#: is published: None means "do not quantify; treat as binding" (common practice).
QUALITATIVE_LOG_K = {"none": -np.inf, "negligible": -np.inf, "weak": None, "moderate": None,
                     "strong": None, "precipitates": None}


@dataclass(frozen=True)
class LinearCoefficients:
    """Per-reagent coefficients at G points (pH, T, I).  Shapes: [G, R] unless noted.

    Attributes
    ----------
    reagent_ids : tuple, length R
    ph, temperature_c, ionic_strength_mol_l : [G]
    charge : mol of charge per mol of reagent (systems at their speciation + strong ions)
    capacity : β per mol/L of reagent [mol/L per pH per mol/L]
    ionic : ionic strength per mol/L of reagent
    particles : [R] dissolved particles per formula unit (ideal osmolarity)
    water_charge, water_capacity, water_ionic, water_particles : [G] terms of H⁺ and OH⁻
    system_ids : tuple, length S   systems carried by the reagents
    system_units : [R, S]
    fractions : [G, S, J+1] α_j of each system
    """

    reagent_ids: tuple[str, ...]
    ph: np.ndarray
    temperature_c: np.ndarray
    ionic_strength_mol_l: np.ndarray
    charge: np.ndarray
    capacity: np.ndarray
    ionic: np.ndarray
    particles: np.ndarray
    water_charge: np.ndarray
    water_capacity: np.ndarray
    water_ionic: np.ndarray
    water_particles: np.ndarray
    system_ids: tuple[str, ...]
    system_units: np.ndarray
    fractions: np.ndarray


def linear_coefficients(reagent_ids: Sequence[str], ph, temperature_c, ionic_strength_mol_l,
                        catalog: Catalog | None = None, activity: str = "davies") -> LinearCoefficients:
    """Coefficients of the linear model at the (pH, T, I) points given (broadcast to G)."""
    catalog = catalog if catalog is not None else load_catalog()
    tables = engine_tables(catalog)
    reagent_ids = tuple(reagent_ids)
    rows = np.array([tables.reagent_index(r) for r in reagent_ids], dtype=int)
    units = tables.system_units[rows]
    present = np.flatnonzero(units.any(axis=0)) if rows.size else np.zeros(0, dtype=int)
    systems = tables.systems.subset(present)
    units = units[:, present]
    fixed = speciate_at_ph(systems, ph, temperature_c, ionic_strength_mol_l, activity)
    z0 = systems.charge_most_protonated.astype(float)
    counts = tables.strong_ion_counts[rows]
    z = tables.strong_ion_charge
    strong_charge = counts @ z
    strong_ionic = 0.5 * counts @ (z * z)
    charge = (z0[None, :] - fixed.mean_protons_lost) @ units.T + strong_charge[None, :]
    capacity = LN10 * fixed.variance_protons_lost @ units.T
    ionic = 0.5 * fixed.mean_charge_squared @ units.T + strong_ionic[None, :]
    h, oh = fixed.h_mol_l, fixed.oh_mol_l
    g = h.shape[0]
    return LinearCoefficients(
        reagent_ids=reagent_ids,
        ph=np.broadcast_to(np.asarray(ph, dtype=float), (g,)).copy(),
        temperature_c=np.broadcast_to(np.asarray(temperature_c, dtype=float), (g,)).copy(),
        ionic_strength_mol_l=np.broadcast_to(np.asarray(ionic_strength_mol_l, dtype=float), (g,)).copy(),
        charge=charge, capacity=capacity, ionic=ionic,
        particles=units.sum(axis=1) + counts.sum(axis=1),
        water_charge=h - oh, water_capacity=LN10 * (h + oh), water_ionic=0.5 * (h + oh),
        water_particles=h + oh,
        system_ids=systems.system_ids, system_units=units, fractions=fixed.fractions,
    )


@dataclass(frozen=True)
class MetalBindingTerms:
    """Trace-metal binding per reagent: bound/free ratio of metal M per mol/L of reagent.

    ``ratio`` [G, R]: Σ_s U_rs K'_Ms α_s,L (conditional 1:1 constants at each point's I).
    ``unquantified`` : system ids that bind M by a qualitative statement only (weak,
    moderate, strong, precipitates) and so cannot be placed in the linear model.
    The bound fraction of a mix is f = B/(1 + B) with B = Σ_r ratio_r x_r.
    """

    metal: str
    ratio: np.ndarray
    unquantified: tuple[str, ...]
    statements: dict[str, str]


def metal_binding_terms(metal: str, coefficients: LinearCoefficients, catalog: Catalog | None = None,
                        activity: str = "davies") -> MetalBindingTerms:
    """Binding of a trace metal by each reagent's system, from the catalog's log K.

    Notes
    -----
    For M + L ⇌ ML with log K⁰ at I = 0 (the catalog's value, moved from its stated ionic
    strength to I = 0 with the activity model), the conditional constant at ionic strength
    I is log K' = log K⁰ + log γ_M + log γ_L − log γ_ML.  Where a system has several
    numeric rows for the metal, the largest K is kept (the most binding, the safe side).
    No temperature correction is applied (no ΔH of binding in the catalog).
    """
    catalog = catalog if catalog is not None else load_catalog()
    gamma_unit = activity_model(activity)
    g = coefficients.ph.shape[0]
    a_now = debye_huckel_a(coefficients.temperature_c)
    log_g_now = gamma_unit(np.maximum(coefficients.ionic_strength_mol_l, 0.0), a_now)
    per_system = np.zeros((g, len(coefficients.system_ids)))
    unquantified, statements = [], {}
    for s, system_id in enumerate(coefficients.system_ids):
        system = catalog.systems[system_id]
        rows = [m for m in catalog.metal_binding_of(system_id) if m.metal == metal]
        numeric = [(m, m.log_k.value) for m in rows if m.log_k is not None]
        qualitative = [m for m in rows if m.log_k is None]
        if numeric:
            best = None
            for m, log_k in numeric:
                z_metal, z_ligand = 2.0, float(m.ligand_species_charge)
                z_complex = z_metal + z_ligand
                ref_i = m.ionic_strength_mol_l or 0.0
                ref_a = float(debye_huckel_a(m.temperature_c if m.temperature_c is not None else 25.0))
                ref_log_g = float(gamma_unit(ref_i, ref_a))
                log_k0 = log_k - ref_log_g * (z_metal**2 + z_ligand**2 - z_complex**2)
                log_k_now = log_k0 + log_g_now * (z_metal**2 + z_ligand**2 - z_complex**2)
                j = system.charge_most_protonated - m.ligand_species_charge
                if not 0 <= j <= system.n_steps:
                    continue
                term = 10.0 ** log_k_now * coefficients.fractions[:, s, j]
                best = term if best is None else np.maximum(best, term)
                statements[system_id] = f"log K {log_k:g} for {metal}"
            if best is not None:
                per_system[:, s] = best
        elif qualitative:
            worst = max(qualitative, key=lambda m: list(QUALITATIVE_LOG_K).index(m.qualitative))
            statements[system_id] = f"{worst.qualitative} binding of {metal} (no constant published)"
            if QUALITATIVE_LOG_K[worst.qualitative] is None:
                unquantified.append(system_id)
    ratio = per_system @ coefficients.system_units.T
    return MetalBindingTerms(metal, ratio, tuple(unquantified), statements)
