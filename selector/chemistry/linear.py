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
from catalog.records import MetalBinding
from selector.chemistry.arrays import EngineTables, SystemArrays, engine_tables
from selector.chemistry.complexation import BindingConstant, binding_constants_of, binding_log_k
from selector.chemistry.speciation import speciate_at_ph
from selector.chemistry.water import LN10

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
    systems = _systems_subset(tables, present)
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


#: Subsets of the engine's system arrays per (tables, systems present): the activity rounds
#: ask for the same few again and again.  The tables are kept beside their id.
_SUBSETS: dict[tuple[int, bytes], tuple[EngineTables, SystemArrays]] = {}
_SUBSETS_MAX = 256


def _systems_subset(tables: EngineTables, present: np.ndarray) -> SystemArrays:
    key = (id(tables), present.tobytes())
    cached = _SUBSETS.get(key)
    if cached is not None and cached[0] is tables:
        return cached[1]
    systems = tables.systems.subset(present)
    if len(_SUBSETS) >= _SUBSETS_MAX:
        _SUBSETS.clear()
    _SUBSETS[key] = (tables, systems)
    return systems


@dataclass(frozen=True)
class MetalBindingTerms:
    """Trace-metal binding per reagent: bound/free ratio of metal M per mol/L of reagent.

    ``ratio`` [G, R]: Σ_s U_rs Σ_c K′_c(I, T) α_s,j(c) (conditional 1:1 constants of every
    selected complex c at each point's I and T).
    ``unquantified`` : system ids that bind M by a qualitative statement only (weak,
    moderate, strong, precipitates), or by complexes that are not 1:1 with the divalent
    ion, and so cannot be placed in the linear model.
    ``statements`` : per system, the constants used (value, conditions, spread) or the word.
    ``spread_log_k`` : per system, the largest spread of the published values of the
    constants used (see :class:`selector.chemistry.complexation.BindingConstant`).
    The bound fraction of a mix is f = B/(1 + B) with B = Σ_r ratio_r x_r.
    """

    metal: str
    ratio: np.ndarray
    unquantified: tuple[str, ...]
    statements: dict[str, str]
    spread_log_k: dict[str, float]


def is_linear_binding(binding: MetalBinding) -> bool:
    """Whether a catalog constant enters the linear model: a 1:1 complex of the divalent ion.

    The bound/free ratio of an ML_n complex is β_n [L]^n, linear in the ligand amount only
    for n = 1; a constant of another oxidation state (Cu⁺ cyanides) is not one of the ion
    the spec limits.  Such rows still say the system binds (the safe side).
    """
    return binding.log_k is not None and binding.ligand_count == 1 and binding.metal_charge == 2


def _binding_text(constant: BindingConstant) -> str:
    b = constant.binding
    n = f"log β{b.ligand_count}" if b.ligand_count > 1 else "log K"
    text = (f"{n} {b.log_k.value:g} (I = {b.ionic_strength_mol_l:g} mol/L, {b.temperature_c:g} °C; "
            f"{b.source or b.source_kind})" if b.log_k is not None else b.qualitative)
    if constant.spread_log_k is not None:
        text += f", published values within ±{constant.spread_log_k:.2f}"
    return text


def metal_binding_terms(metal: str, coefficients: LinearCoefficients, catalog: Catalog | None = None,
                        activity: str = "davies") -> MetalBindingTerms:
    """Binding of a trace metal by each reagent's system, from the catalog's selected log K.

    Notes
    -----
    Every selected 1:1 constant of the metal (:func:`is_linear_binding`) is moved from the
    ionic strength and temperature it was published at to each point's I and T by
    :func:`selector.chemistry.complexation.log_k_at_conditions` (activity correction with
    the engine's activity model, van 't Hoff with ΔH where published), and the complexes of
    a system add: B_s = Σ_c K′_c α_s,j(c) (each complex binds its own ligand species j).
    Which constants apply (and the words about them) depends on the catalog, the systems,
    the metal and the activity model alone: it is worked out once per set of those
    (:func:`_binding_plan`); each call computes the numbers at its points.
    """
    catalog = catalog if catalog is not None else load_catalog()
    g = coefficients.ph.shape[0]
    plan = _binding_plan(catalog, tuple(coefficients.system_ids), metal, activity)
    per_system = np.zeros((g, len(coefficients.system_ids)))
    if plan.used:
        # One vectorised correction of every constant used to every point's I and T: [G, C].
        log_k_now = binding_log_k(list(plan.used), coefficients.ionic_strength_mol_l, coefficients.temperature_c,
                                  activity)
        terms = 10.0 ** log_k_now * coefficients.fractions[:, plan.columns, plan.species]
        per_system = terms @ plan.owner
    ratio = per_system @ coefficients.system_units.T
    return MetalBindingTerms(metal, ratio, plan.unquantified, dict(plan.statements), dict(plan.spreads))


@dataclass(frozen=True)
class _BindingPlan:
    """The constants of one metal that enter the linear model for a tuple of systems, and the words."""

    used: tuple[MetalBinding, ...]
    columns: np.ndarray          # [C] the system of each constant used
    species: np.ndarray          # [C] the ligand species j (protons lost) it binds
    owner: np.ndarray            # [C, S] 1 where constant c belongs to system s
    unquantified: tuple[str, ...]
    statements: dict[str, str]
    spreads: dict[str, float]


#: Plans per (catalog, systems, metal, activity): the catalog kept beside its id, as in
#: :func:`selector.chemistry.arrays.engine_tables`.
_PLANS: dict[tuple, tuple[Catalog, _BindingPlan]] = {}
_PLANS_MAX = 256


def _binding_plan(catalog: Catalog, system_ids: tuple[str, ...], metal: str, activity: str) -> _BindingPlan:
    key = (id(catalog), system_ids, metal, activity)
    cached = _PLANS.get(key)
    if cached is not None and cached[0] is catalog:
        return cached[1]
    unquantified, statements, spreads = [], {}, {}
    order = list(QUALITATIVE_LOG_K)
    by_system = binding_constants_of(catalog, system_ids, metal, activity)
    words: dict[str, list[MetalBinding]] = {}
    for m in catalog.metal_binding:
        if m.metal == metal and m.log_k is None:
            words.setdefault(m.system_id, []).append(m)
    columns, species, used = [], [], []
    for s, system_id in enumerate(system_ids):
        system = catalog.systems[system_id]
        constants = [c for c in by_system[system_id]
                     if 0 <= system.charge_most_protonated - c.binding.ligand_species_charge <= system.n_steps]
        linear = [c for c in constants if is_linear_binding(c.binding)]
        if linear:
            for c in linear:
                columns.append(s)
                species.append(system.charge_most_protonated - c.binding.ligand_species_charge)
                used.append(c.binding)
            spread = [c.spread_log_k for c in linear if c.spread_log_k is not None]
            if spread:
                spreads[system_id] = max(spread)
            statements[system_id] = f"{metal}: " + "; ".join(_binding_text(c) for c in linear)
            continue
        qualitative = words.get(system_id, [])
        if constants:
            statements[system_id] = (f"{metal}: " + "; ".join(_binding_text(c) for c in constants)
                                     + " (not a 1:1 complex of the divalent ion: treated as binding)")
            unquantified.append(system_id)
        elif qualitative:
            worst = max(qualitative, key=lambda m: order.index(m.qualitative))
            statements[system_id] = f"{worst.qualitative} binding of {metal} (no constant published)"
            if QUALITATIVE_LOG_K[worst.qualitative] is None:
                unquantified.append(system_id)
    cols = np.array(columns, dtype=int)
    owner = np.zeros((cols.size, len(system_ids)))
    owner[np.arange(cols.size), cols] = 1.0  # complex c belongs to system cols[c]
    plan = _BindingPlan(tuple(used), cols, np.array(species, dtype=int), owner, tuple(unquantified),
                        statements, spreads)
    if len(_PLANS) >= _PLANS_MAX:
        _PLANS.clear()
    _PLANS[key] = (catalog, plan)
    return plan
