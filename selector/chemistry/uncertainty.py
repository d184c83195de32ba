"""Uncertainty of a solved solution's pH and buffer capacity, from its constants and its activity model.

Every step constant the catalog selects carries an uncertainty (``Step.pka_25c.uncertainty``,
``.dh_kj_mol.uncertainty``, ``.dcp_j_k_mol.uncertainty``; the rule that gave it is
``.uncertainty_rule``, see :mod:`catalog.selection`).  :func:`propagate_uncertainty` carries
them to the pH and the capacity β of a batch of solved solutions by first-order propagation
with uncorrelated inputs [GUM2008]_ and adds a stated term for the activity model.  So are
the ion product of water (u(pKw) of :func:`selector.chemistry.water.pkw_uncertainty`) and,
where metals are components, the log β of every complex with a ligand
(``complexes.csv``'s stated uncertainty, else
:data:`catalog.selection.DEFAULT_LOG_BETA_UNCERTAINTY`, common practice); these also move
the free metal (u(pM), pM = −log10 of the free metal concentration).

All perturbed solutions of a batch are solved in ONE call of the vectorised engine: for P
perturbations (each constant of each step of each system present, moved by +u and by −u) the
S systems are copied 2P times, copy k carrying perturbation k, and the N compositions are
stacked 2P times, block k holding its totals on copy k only (a block-diagonal batch of
N·2P rows over S·2P systems) where metals are components, a complex's log β moved on its own
copy of the complexes (see :func:`selector.chemistry.complex_equilibrium.replicate_complexes`);
without metals only the solutions holding the perturbed system are stacked, that system's total
moved onto one extra copy carrying the moved constant (S + 2P systems).  A second call solves the
N compositions with the other activity model.  Kw enters by its sensitivity coefficient at fixed
activity coefficients, ∂pH/∂pKw = ln10 [OH⁻]/β (the charge balance differentiated; exact to first
order, no solve).

References
----------
.. [GUM2008] JCGM 100:2008, Evaluation of measurement data — Guide to the expression of
   uncertainty in measurement, §5.1.2 eq. (10) (law of propagation of uncertainty,
   uncorrelated input quantities) and §5.1.3 (sensitivity coefficients; evaluated here by a
   central difference over ± u(x_i), the numerical route that section allows; section
   numbers from memory).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from catalog import Catalog, load_catalog
from catalog.records import STEP_QUANTITIES
from catalog.selection import log_beta_uncertainty
from selector.chemistry.arrays import ComplexArrays, SystemArrays, binding_species_id
from selector.chemistry.complex_equilibrium import replicate_complexes, solve_same_components
from selector.chemistry.equilibrium import Equilibrium
from selector.chemistry.speciation import STATUS_CONVERGED, Speciation, solve_speciation
from selector.chemistry.water import LN10, pkw_uncertainty

#: The activity model compared with the one in use for the activity-model term: Davies and
#: the Bates–Guggenheim convention are each other's alternative; any other model is compared
#: with Davies (common practice: the spread between two accepted models at the solution's I
#: stands for the model's own uncertainty).
ALTERNATIVE_ACTIVITY_MODEL = {"davies": "bates-guggenheim"}
DEFAULT_ALTERNATIVE_MODEL = "davies"

#: Words for the quantities of a step in messages.
QUANTITY_LABELS = {"pka_25c": "pKa", "dh_kj_mol": "ΔH°", "dcp_j_k_mol": "ΔCp°", "log_beta": "log β",
                   "pkw": "pKw"}

#: ``quantity`` of a complex's constant and of the ion product of water in a ConstantEffect.
LOG_BETA = "log_beta"
PKW = "pkw"

#: Source kind of the Kw formulation (an internationally evaluated formulation, [MF1981] of
#: :mod:`selector.chemistry.water`).
PKW_SOURCE_KIND = "measured-review"


def alternative_activity_model(activity: str) -> str:
    """The model whose result is compared with ``activity``'s for the activity-model term."""
    return ALTERNATIVE_ACTIVITY_MODEL.get(activity, DEFAULT_ALTERNATIVE_MODEL)


@dataclass(frozen=True)
class ConstantEffect:
    """How far one constant's uncertainty moves the figures of each solution of a batch.

    Attributes
    ----------
    system_id : str
    step : int  (0 for a complex's log β and for pKw)
    quantity : str  one of ``pka_25c``, ``dh_kj_mol``, ``dcp_j_k_mol``, ``log_beta``, ``pkw``
    uncertainty : float  u(x_i), in the quantity's unit (pK units, kJ/mol, J/(K mol), log units)
    source_kind : str  of the selected value (``from-memory`` marks a recalled one)
    ph_shift : [N]  c_i·u(x_i) for the pH [pH units], signed
    capacity_shift_mol_l_per_ph : [N]  c_i·u(x_i) for β [mol/L per pH], signed
    species : str  the complex of a ``log_beta`` constant ('' otherwise)
    system_name : str  the system's short name for text ('' : ``system_id`` is used)
    """

    system_id: str
    step: int
    quantity: str
    uncertainty: float
    source_kind: str
    ph_shift: np.ndarray
    capacity_shift_mol_l_per_ph: np.ndarray
    species: str = ""
    system_name: str = ""

    @property
    def label(self) -> str:
        """``pKa of step 2 of Phosphate``, ``log β of CaHPO4``, ``pKw of water``."""
        if self.quantity == LOG_BETA:
            return f"log β of {self.species}"
        if self.quantity == PKW:
            return "pKw of water"
        return f"{QUANTITY_LABELS[self.quantity]} of step {self.step} of {self.system_name or self.system_id}"


@dataclass(frozen=True)
class FigureUncertainty:
    """Standard uncertainties of the pH and β of N solutions (NaN where a solution or one of
    its perturbed copies did not converge).

    Attributes
    ----------
    ph_from_constants : [N]  √Σ (c_i u(x_i))² over the step constants [pH]
    ph_from_activity_model : [N]  |pH(model) − pH(alternative model)| [pH]
    ph : [N]  √(constants² + activity model²) [pH]
    capacity_from_constants_mol_l_per_ph, capacity_from_activity_model_mol_l_per_ph,
    capacity_mol_l_per_ph : [N]  the same for β [mol/L per pH]
    activity_model, alternative_model : str
    effects : tuple of ConstantEffect, one per perturbed constant
    metal_ids : tuple of str, the metals that are components (empty without metals)
    p_free_metal_from_constants, p_free_metal_from_activity_model, p_free_metal : [N, M]
        the same for pM = −log10 of each metal's free concentration [mol/L] (NaN where the
        metal is absent)
    """

    ph_from_constants: np.ndarray
    ph_from_activity_model: np.ndarray
    ph: np.ndarray
    capacity_from_constants_mol_l_per_ph: np.ndarray
    capacity_from_activity_model_mol_l_per_ph: np.ndarray
    capacity_mol_l_per_ph: np.ndarray
    activity_model: str
    alternative_model: str
    effects: tuple[ConstantEffect, ...]
    metal_ids: tuple[str, ...] = ()
    p_free_metal_from_constants: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)))
    p_free_metal_from_activity_model: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)))
    p_free_metal: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)))

    def largest_ph_shifts(self, threshold_ph: float, source_kind: str | None = None) -> list[tuple[ConstantEffect, float]]:
        """Constants (of ``source_kind``, if given) whose largest |pH shift| over the batch exceeds
        ``threshold_ph``, with that shift, largest first."""
        out = []
        for effect in self.effects:
            if source_kind is not None and effect.source_kind != source_kind:
                continue
            shift = float(np.nanmax(np.abs(effect.ph_shift))) if effect.ph_shift.size else 0.0
            if shift > threshold_ph:
                out.append((effect, shift))
        return sorted(out, key=lambda pair: -pair[1])


def combine_in_quadrature(contributions, axis: int = 0) -> np.ndarray:
    """Combined standard uncertainty of uncorrelated contributions c_i·u(x_i).

    .. math:: u_c(y) = \\sqrt{\\sum_i (c_i u(x_i))^2}

    [GUM2008]_ §5.1.2 eq. (10).  NaN in any contribution gives NaN (no figure).

    Examples
    --------
    >>> float(combine_in_quadrature([0.03, 0.04]))
    0.05
    """
    values = np.asarray(contributions, dtype=float)
    return np.sqrt(np.sum(values**2, axis=axis))


def _perturbations(eq: Equilibrium, catalog: Catalog) -> list[tuple[int, int, str, float, str]]:
    """(system index, step index, quantity, uncertainty, source kind) of every constant that can move
    the result: each step of each system present, each quantity with a non-zero uncertainty."""
    out = []
    for s, system_id in enumerate(eq.system_ids):
        for j, step in enumerate(catalog.systems[system_id].steps):
            for quantity in STEP_QUANTITIES:
                selected = getattr(step, quantity)
                if selected.uncertainty > 0:
                    out.append((s, j, quantity, float(selected.uncertainty), selected.source_kind))
    return out


def _complex_perturbations(sp: Speciation, catalog: Catalog) -> list[tuple[int, float, str]]:
    """(complex index, uncertainty of log β, source kind) of every complex with a ligand among the
    components of ``sp`` (hydroxo complexes are shared by every copy of a block-diagonal batch and
    are not moved)."""
    metals = sp.metals
    if metals is None:
        return []
    rows = {c.complex_id: c for c in catalog.complexes}
    bindings = {binding_species_id(m): m for m in catalog.metal_binding if m.selected and m.log_k is not None}
    out = []
    for c, complex_id in enumerate(metals.complexes.complex_ids):
        if not metals.complexes.ligand_count[c].any():
            continue
        row = rows.get(complex_id)
        if row is not None:
            u, _ = log_beta_uncertainty(row.uncertainty)
            kind = row.log_beta.source_kind
        else:
            u, _ = log_beta_uncertainty(None)
            binding = bindings.get(complex_id)
            kind = binding.source_kind if binding is not None else "from-memory"
        out.append((c, float(u), kind))
    return out


def _copies(systems: SystemArrays, perturbations, signs: np.ndarray, copies: int) -> SystemArrays:
    """``systems`` repeated ``copies`` times, copy k (k < 2P) moved by signs[k % 2]·u of step perturbation k // 2."""
    arrays = {q: np.tile(getattr(systems, q), (copies, 1)) for q in STEP_QUANTITIES}
    n_systems = len(systems.system_ids)
    for p, (s, j, quantity, u, _) in enumerate(perturbations):
        for k, sign in enumerate(signs):
            arrays[quantity][(p * len(signs) + k) * n_systems + s, j] += sign * u
    return SystemArrays(
        system_ids=tuple(f"{sid}#{k}" for k in range(copies) for sid in systems.system_ids),
        charge_most_protonated=np.tile(systems.charge_most_protonated, copies),
        n_steps=np.tile(systems.n_steps, copies),
        pka_25c=arrays["pka_25c"], dh_kj_mol=arrays["dh_kj_mol"], dcp_j_k_mol=arrays["dcp_j_k_mol"],
        t_min_c=np.tile(systems.t_min_c, (copies, 1)), t_max_c=np.tile(systems.t_max_c, (copies, 1)),
    )


def _moved_complexes(complexes: ComplexArrays, n_systems: int, first_block: int, perturbations,
                     signs: np.ndarray, copies: int) -> ComplexArrays:
    """The complexes over ``copies`` copies of the systems, complex c of perturbation p moved by
    signs[k]·u on copy ``first_block + 2p + k`` only."""
    replicated = replicate_complexes(complexes, copies)
    log_beta = replicated.log_beta_25c.copy()
    ids = np.array(replicated.complex_ids, dtype=object)
    for p, (c, u, _) in enumerate(perturbations):
        for k, sign in enumerate(signs):
            block = first_block + p * len(signs) + k
            on_copy = replicated.ligand_count[:, block * n_systems:(block + 1) * n_systems].any(axis=1)
            log_beta[on_copy & (ids == complexes.complex_ids[c])] += sign * u
    return replace(replicated, log_beta_25c=log_beta)


def _p_free(sp: Speciation) -> np.ndarray:
    """pM of every metal [N, M] (NaN where absent or not converged)."""
    if sp.metals is None:
        return np.zeros((sp.ph.shape[0], 0))
    free = sp.metals.free_mol_l
    with np.errstate(divide="ignore", invalid="ignore"):
        p_free = -np.log10(np.where(free > 0, free, np.nan))
    return np.where((sp.status == STATUS_CONVERGED)[:, None], p_free, np.nan)


def _kw_effect(sp: Speciation, ph: np.ndarray) -> ConstantEffect:
    """pKw's effect: ∂pH/∂pKw = ln10 [OH⁻]/β and ∂β/∂pKw = −ln10² [OH⁻] at fixed γ, times u(pKw)."""
    u = pkw_uncertainty(sp.temperature_c)
    with np.errstate(divide="ignore", invalid="ignore"):
        ph_shift = np.where(np.isfinite(ph), LN10 * sp.oh_mol_l / sp.capacity_mol_l_per_ph * u, np.nan)
    capacity_shift = np.where(np.isfinite(ph), -LN10**2 * sp.oh_mol_l * u, np.nan)
    return ConstantEffect("water", 0, PKW, float(np.max(u)) if u.size else 0.0, PKW_SOURCE_KIND, ph_shift,
                          capacity_shift)


def _moved_compact(sp, ph: np.ndarray, capacity: np.ndarray, strong_charge: np.ndarray, strong_ionic: np.ndarray,
                   perturbations, signs: np.ndarray, activity: str) -> tuple[np.ndarray, np.ndarray]:
    """pH and β [P, 2, N] of every perturbed solution, without metals, in one engine call.

    Only the solutions that hold the perturbed system are solved again: block k of the batch
    (perturbation p, sign) holds those solutions with the perturbed system's total moved onto
    one extra copy of that system carrying the moved constant (S + 2P systems in all).  A
    solution without the system keeps its own figures (its shift is exactly 0, or NaN where
    it did not converge, as the block-diagonal layout gives).
    """
    n, n_systems = sp.totals_mol_l.shape
    moved_ph = np.broadcast_to(ph, (len(perturbations), len(signs), n)).copy()
    moved_capacity = np.broadcast_to(capacity, (len(perturbations), len(signs), n)).copy()
    holds = sp.totals_mol_l > 0
    block_system = np.repeat([s for s, *_ in perturbations], len(signs))
    block_rows = [np.flatnonzero(holds[:, s]) for s in block_system]
    rows = np.concatenate(block_rows)
    if rows.size == 0:
        return moved_ph, moved_capacity
    block = np.repeat(np.arange(block_system.size), [r.size for r in block_rows])
    systems = sp.systems.subset(np.concatenate([np.arange(n_systems), block_system]))
    for p, (_, j, quantity, u, _) in enumerate(perturbations):
        for k, sign in enumerate(signs):
            getattr(systems, quantity)[n_systems + p * len(signs) + k, j] += sign * u
    totals = np.zeros((rows.size, n_systems + block_system.size))
    totals[:, :n_systems] = sp.totals_mol_l[rows]
    at = np.arange(rows.size)
    totals[at, n_systems + block] = totals[at, block_system[block]]
    totals[at, block_system[block]] = 0.0
    moved = solve_speciation(totals, strong_charge[rows], strong_ionic[rows], sp.temperature_c[rows], systems,
                             activity=activity)
    flat_ph = moved_ph.reshape(-1, n)
    flat_capacity = moved_capacity.reshape(-1, n)
    flat_ph[block, rows] = _converged(moved.ph, moved.status)
    flat_capacity[block, rows] = _converged(moved.capacity_mol_l_per_ph, moved.status)
    return moved_ph, moved_capacity


def _converged(values: np.ndarray, status: np.ndarray) -> np.ndarray:
    return np.where(status == STATUS_CONVERGED, values, np.nan)


def propagate_uncertainty(eq: Equilibrium, catalog: Catalog | None = None,
                          activity: str = "davies") -> FigureUncertainty:
    """Standard uncertainty of the pH and β of every solution of a solved batch.

    Parameters
    ----------
    eq : Equilibrium
        The solved batch (N solutions), from
        :func:`selector.chemistry.equilibrium.solve_equilibrium` with ``activity``.
    catalog : Catalog, optional
        The catalog ``eq`` was solved with (its constants' uncertainties are propagated).
    activity : str
        The activity model ``eq`` was solved with.

    Returns
    -------
    FigureUncertainty

    Notes
    -----
    For each selected constant x_i (pKa at 25 °C, ΔH°, ΔCp° of each step of each system
    present) with standard uncertainty u(x_i), its contribution to a figure y is the central
    difference

    .. math:: c_i u(x_i) \\approx \\tfrac12 [y(x_i + u(x_i)) - y(x_i - u(x_i))]

    and the constants' part is combined in quadrature, inputs taken as uncorrelated
    ([GUM2008]_ §5.1.2 eq. (10)).  The activity-model term is the difference between the
    results of the model in use and of :func:`alternative_activity_model` at the solution's
    own ionic strength (common practice), added in quadrature:

    .. math:: u(y) = \\sqrt{\\sum_i (c_i u(x_i))^2 + (y_{model} - y_{alt})^2}

    At 25 °C ΔH° and ΔCp° contribute nothing (the pKa is given at 25 °C).  The log β of
    each complex with a ligand enters the same way (and moves pM too); hydroxo complexes do
    not enter.  pKw enters through its sensitivity coefficient ln10 [OH⁻]/β at fixed γ (for
    β: −ln10² [OH⁻], its direct term), with u(pKw) of
    :func:`selector.chemistry.water.pkw_uncertainty`.
    """
    catalog = catalog if catalog is not None else load_catalog()
    sp = eq.speciation
    n = sp.ph.shape[0]
    charge = np.asarray(eq.strong_ion_charge, dtype=float)
    strong_charge = eq.strong_ion_mol_l @ charge
    strong_ionic = 0.5 * eq.strong_ion_mol_l @ charge**2
    perturbations = _perturbations(eq, catalog)
    complex_perturbations = _complex_perturbations(sp, catalog)
    signs = np.array([1.0, -1.0])
    step_blocks = len(perturbations) * len(signs)
    blocks = step_blocks + len(complex_perturbations) * len(signs)
    ph = _converged(sp.ph, sp.status)
    capacity = _converged(sp.capacity_mol_l_per_ph, sp.status)
    p_free = _p_free(sp)
    n_metals = p_free.shape[1]
    kw = _kw_effect(sp, ph)
    effects: list[ConstantEffect] = [kw]
    ph_parts = kw.ph_shift[None, :]
    capacity_parts = kw.capacity_shift_mol_l_per_ph[None, :]
    p_free_parts = np.zeros((0, n, n_metals))
    if blocks:
        if sp.metals is None:   # no complexes to move: only the solutions holding each system again
            moved_ph, moved_capacity = _moved_compact(sp, ph, capacity, strong_charge, strong_ionic,
                                                      perturbations, signs, activity)
            moved_p_free: np.ndarray = np.zeros(moved_ph.shape + (n_metals,))
        else:
            totals = np.kron(np.eye(blocks), sp.totals_mol_l)   # block k: the N compositions on copy k
            complexes = None if not complex_perturbations else _moved_complexes(
                sp.metals.complexes, len(sp.systems.system_ids), step_blocks, complex_perturbations, signs, blocks)
            moved = solve_same_components(sp, totals, np.tile(strong_charge, blocks), np.tile(strong_ionic, blocks),
                                          np.tile(sp.temperature_c, blocks),
                                          _copies(sp.systems, perturbations, signs, blocks),
                                          activity=activity, copies=blocks, complexes=complexes)
            moved_ph = _converged(moved.ph, moved.status).reshape(blocks // 2, len(signs), n)
            moved_capacity = _converged(moved.capacity_mol_l_per_ph, moved.status).reshape(blocks // 2, len(signs), n)
            moved_p_free = _p_free(moved).reshape(blocks // 2, len(signs), n, n_metals)
        moved_ph_parts = 0.5 * (moved_ph[:, 0] - moved_ph[:, 1])
        moved_capacity_parts = 0.5 * (moved_capacity[:, 0] - moved_capacity[:, 1])
        p_free_parts = 0.5 * (moved_p_free[:, 0] - moved_p_free[:, 1])
        ph_parts = np.concatenate([ph_parts, moved_ph_parts])
        capacity_parts = np.concatenate([capacity_parts, moved_capacity_parts])
        effects += [ConstantEffect(eq.system_ids[s], j + 1, quantity, u, kind, moved_ph_parts[p],
                                   moved_capacity_parts[p], system_name=catalog.systems[eq.system_ids[s]].short_name)
                    for p, (s, j, quantity, u, kind) in enumerate(perturbations)]
        metals = sp.metals
        effects += [ConstantEffect(_ligand_of(metals.complexes, c, eq.system_ids), 0, LOG_BETA, u, kind,
                                   moved_ph_parts[len(perturbations) + p], moved_capacity_parts[len(perturbations) + p],
                                   species=metals.complexes.complex_ids[c])
                    for p, (c, u, kind) in enumerate(complex_perturbations)] if metals is not None else []
    alternative = alternative_activity_model(activity)
    other = solve_same_components(sp, sp.totals_mol_l, strong_charge, strong_ionic, sp.temperature_c, sp.systems,
                                  activity=alternative)
    ph_model = np.abs(_converged(other.ph, other.status) - ph)
    capacity_model = np.abs(_converged(other.capacity_mol_l_per_ph, other.status) - capacity)
    p_free_model = np.abs(_p_free(other) - p_free)
    ph_constants = combine_in_quadrature(ph_parts)
    capacity_constants = combine_in_quadrature(capacity_parts)
    p_free_constants = combine_in_quadrature(p_free_parts)
    return FigureUncertainty(
        ph_from_constants=ph_constants,
        ph_from_activity_model=ph_model,
        ph=combine_in_quadrature([ph_constants, ph_model]),
        capacity_from_constants_mol_l_per_ph=capacity_constants,
        capacity_from_activity_model_mol_l_per_ph=capacity_model,
        capacity_mol_l_per_ph=combine_in_quadrature([capacity_constants, capacity_model]),
        activity_model=activity,
        alternative_model=alternative,
        effects=tuple(effects),
        metal_ids=sp.metals.metal_ids if sp.metals is not None else (),
        p_free_metal_from_constants=p_free_constants,
        p_free_metal_from_activity_model=p_free_model,
        p_free_metal=combine_in_quadrature([p_free_constants, p_free_model]),
    )


def _ligand_of(complexes: ComplexArrays, index: int, system_ids) -> str:
    """The system bound in complex ``index``."""
    return system_ids[int(np.argmax(complexes.ligand_count[index]))]
