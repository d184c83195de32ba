"""Uncertainty of a solved solution's pH and buffer capacity, from its constants and its activity model.

Every step constant the catalog selects carries an uncertainty (``Step.pka_25c.uncertainty``,
``.dh_kj_mol.uncertainty``, ``.dcp_j_k_mol.uncertainty``; the rule that gave it is
``.uncertainty_rule``, see :mod:`catalog.selection`).  :func:`propagate_uncertainty` carries
them to the pH and the capacity β of a batch of solved solutions by first-order propagation
with uncorrelated inputs [GUM2008]_ and adds a stated term for the activity model.

All perturbed solutions of a batch are solved in ONE call of the vectorised engine: for P
perturbations (each constant of each step of each system present, moved by +u and by −u) the
S systems are copied 2P times, copy k carrying perturbation k, and the N compositions are
stacked 2P times, block k holding its totals on copy k only (a block-diagonal batch of
N·2P rows over S·2P systems) where metals are components; without metals only the
solutions holding the perturbed system are stacked, that system's total moved onto one
extra copy carrying the moved constant (S + 2P systems; a batch of many one-system mixes
costs about what each alone would).  A second call solves the N compositions with the other
activity model.

References
----------
.. [GUM2008] JCGM 100:2008, Evaluation of measurement data — Guide to the expression of
   uncertainty in measurement, §5.1.2 eq. (10) (law of propagation of uncertainty,
   uncorrelated input quantities) and §5.1.3 (sensitivity coefficients; evaluated here by a
   central difference over ± u(x_i), the numerical route that section allows; section
   numbers from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from catalog import Catalog, load_catalog
from catalog.records import STEP_QUANTITIES
from selector.chemistry.arrays import SystemArrays
from selector.chemistry.complex_equilibrium import solve_same_components
from selector.chemistry.equilibrium import Equilibrium
from selector.chemistry.speciation import STATUS_CONVERGED, solve_speciation

#: The activity model compared with the one in use for the activity-model term: Davies and
#: the Bates–Guggenheim convention are each other's alternative; any other model is compared
#: with Davies (common practice: the spread between two accepted models at the solution's I
#: stands for the model's own uncertainty).
ALTERNATIVE_ACTIVITY_MODEL = {"davies": "bates-guggenheim"}
DEFAULT_ALTERNATIVE_MODEL = "davies"

#: Words for the quantities of a step in messages.
QUANTITY_LABELS = {"pka_25c": "pKa", "dh_kj_mol": "ΔH°", "dcp_j_k_mol": "ΔCp°"}


def alternative_activity_model(activity: str) -> str:
    """The model whose result is compared with ``activity``'s for the activity-model term."""
    return ALTERNATIVE_ACTIVITY_MODEL.get(activity, DEFAULT_ALTERNATIVE_MODEL)


@dataclass(frozen=True)
class ConstantEffect:
    """How far one constant's uncertainty moves the figures of each solution of a batch.

    Attributes
    ----------
    system_id : str
    step : int
    quantity : str  one of ``pka_25c``, ``dh_kj_mol``, ``dcp_j_k_mol``
    uncertainty : float  u(x_i), in the quantity's unit (pK units, kJ/mol, J/(K mol))
    source_kind : str  of the selected value (``from-memory`` marks a recalled one)
    ph_shift : [N]  c_i·u(x_i) for the pH [pH units], signed
    capacity_shift_mol_l_per_ph : [N]  c_i·u(x_i) for β [mol/L per pH], signed
    """

    system_id: str
    step: int
    quantity: str
    uncertainty: float
    source_kind: str
    ph_shift: np.ndarray
    capacity_shift_mol_l_per_ph: np.ndarray

    @property
    def label(self) -> str:
        """``pKa of step 2 of phosphate``."""
        return f"{QUANTITY_LABELS[self.quantity]} of step {self.step} of {self.system_id}"


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


def _copies(systems: SystemArrays, perturbations, signs: np.ndarray) -> SystemArrays:
    """``systems`` repeated once per (perturbation, sign), copy k moved by signs[k]·u of perturbation k."""
    copies = len(perturbations) * len(signs)
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

    At 25 °C ΔH° and ΔCp° contribute nothing (the pKa is given at 25 °C).  The constants of
    metal complexes do not enter (the constants of the acid–base steps do).
    """
    catalog = catalog if catalog is not None else load_catalog()
    sp = eq.speciation
    n = sp.ph.shape[0]
    charge = np.asarray(eq.strong_ion_charge, dtype=float)
    strong_charge = eq.strong_ion_mol_l @ charge
    strong_ionic = 0.5 * eq.strong_ion_mol_l @ charge**2
    perturbations = _perturbations(eq, catalog)
    signs = np.array([1.0, -1.0])
    blocks = len(perturbations) * len(signs)
    ph = _converged(sp.ph, sp.status)
    capacity = _converged(sp.capacity_mol_l_per_ph, sp.status)
    effects: list[ConstantEffect] = []
    ph_parts = np.zeros((0, n))
    capacity_parts = np.zeros((0, n))
    if blocks:
        if sp.metals is None:
            moved_ph, moved_capacity = _moved_compact(sp, ph, capacity, strong_charge, strong_ionic,
                                                      perturbations, signs, activity)
        else:
            totals = np.kron(np.eye(blocks), sp.totals_mol_l)   # block k: the N compositions on copy k
            moved = solve_same_components(sp, totals, np.tile(strong_charge, blocks), np.tile(strong_ionic, blocks),
                                          np.tile(sp.temperature_c, blocks), _copies(sp.systems, perturbations, signs),
                                          activity=activity, copies=blocks)
            moved_ph = _converged(moved.ph, moved.status).reshape(len(perturbations), len(signs), n)
            moved_capacity = _converged(moved.capacity_mol_l_per_ph, moved.status).reshape(len(perturbations),
                                                                                           len(signs), n)
        ph_parts = 0.5 * (moved_ph[:, 0] - moved_ph[:, 1])
        capacity_parts = 0.5 * (moved_capacity[:, 0] - moved_capacity[:, 1])
        effects = [ConstantEffect(eq.system_ids[s], j + 1, quantity, u, kind, ph_parts[p], capacity_parts[p])
                   for p, (s, j, quantity, u, kind) in enumerate(perturbations)]
    alternative = alternative_activity_model(activity)
    other = solve_same_components(sp, sp.totals_mol_l, strong_charge, strong_ionic, sp.temperature_c, sp.systems,
                                  activity=alternative)
    ph_model = np.abs(_converged(other.ph, other.status) - ph)
    capacity_model = np.abs(_converged(other.capacity_mol_l_per_ph, other.status) - capacity)
    ph_constants = combine_in_quadrature(ph_parts)
    capacity_constants = combine_in_quadrature(capacity_parts)
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
    )
