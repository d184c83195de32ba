"""A pH series at one ionic strength and one buffer concentration (or capacity): one model.

The model
---------
Members n = 1..N at pH p_n; reagents r (the union of what the spec admits at each p_n,
:func:`selector.designs.common.admitted_over`); x_nr ≥ 0 [mol/L]; y_s ∈ {0, 1} system s
used (shared by the members, or one per member with ``per_member``); z_r ∈ {0, 1} reagent
r used by the series (shared set only); member n may use only the reagents its own pH
admits (the useful-range rule of :mod:`selector.admissible`, member by member).  With q_nr, b_nr, i_nr the charge, β and I per
mol/L of r at (p_n, T, I*) (:func:`selector.chemistry.linear.linear_coefficients`) and
w, bw, iw the terms of H⁺ and OH⁻:

    Σ_r q_nr x_nr + w_n = 0                   (pH p_n)
    Σ_r i_nr x_nr + iw_n = I*                  (the same ionic strength)
    Σ_r u_r x_nr = c      or   Σ_r b_nr x_nr + bw_n ≥ β_min
    x_nr ≤ U_r y_s(r),  Σ_s y_s ≤ k;   x_nr ≤ U_r z_r (shared set)
    minimise Σ_n Σ_r c_r x_nr + λ Σ_r z_r      (λ: :data:`REAGENT_WEIGHT_PER_L` per member)

in two stages: first the fewest systems (minimise Σ y: a single system where one spans the
range, two or three with overlapping ranges otherwise), then, at that many, the cheapest.

U_r and c_r are the optimiser's (:func:`selector.optimise.model_data`).  The coefficients
are taken at the target I*, and I = I* is a row, so the linear model is self-consistent at
its solution: one activity round.  Each member is then corrected on the exact engine
(titrant and salt, one batch, :func:`selector.designs.common.correct_batch`), verified
(pH within :data:`PH_TOL`, I within :data:`IONIC_TOL_RELATIVE`) and made a bench recipe;
the series also comes as a mixing plan from shared stocks (:mod:`selector.designs.stocks`).

An infeasible series is explained in words: the model is solved once more without the
ionic-strength rows, minimising Σ_n I_n; the members whose buffer alone already exceeds I*
are named with that least ionic strength (computed with the activity coefficients of the
target I, so a figure in words, not a verified one).
"""

from __future__ import annotations

import dataclasses
import time
from dataclasses import dataclass
from typing import Any, Sequence

import numpy as np

from catalog import Catalog, load_catalog
from selector.designs.bench import Roles, bench_recipe
from selector.designs.common import (
    AMOUNT_ZERO_MOL_L,
    admitted_each,
    admitted_mask,
    admitted_over,
    coefficients_at,
    composition_of,
    correct_batch,
    model_ionic_strength,
    refuse_metal_options,
    solve_strict,
    system_columns,
    system_notes,
    titration_columns,
)
from selector.errors import InfeasibleSpecError, InputError, SolverError
from selector.prices import PriceBook, demo_price_book
from selector.recipe import Recipe
from selector.spec import BufferSpec

#: Largest distance of a verified member pH from its target [pH] (issue 17).
PH_TOL = 0.005
#: Largest relative distance of a verified member I from the target (issue 17: 1 %).
IONIC_TOL_RELATIVE = 0.01
#: Weight of one reagent more in the shared set [currency per L per member]; a design
#: choice (fewer bottles on the bench), not chemistry.
REAGENT_WEIGHT_PER_L = 0.01
#: Tie-break weight on the total amount (the optimiser's).
TIE_BREAK = 1e-6


@dataclass(frozen=True)
class SeriesMember:
    """One verified member: target, composition [mol/L], exact figures, bench recipe."""

    target_ph: float
    composition_mol_l: dict[str, float]
    verified_ph: float
    ionic_strength_mol_l: float
    capacity_mol_l_per_ph: float
    buffer_conc_mol_l: float
    cost_per_l: float | None
    recipe: Recipe

    def as_json(self) -> dict:
        return {"target_ph": self.target_ph, "composition_mol_l": dict(self.composition_mol_l),
                "verified_ph": self.verified_ph, "ionic_strength_mol_l": self.ionic_strength_mol_l,
                "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph, "buffer_conc_mol_l": self.buffer_conc_mol_l,
                "cost_per_l": self.cost_per_l, "recipe": self.recipe.as_json()}


@dataclass(frozen=True)
class SeriesResult:
    """A verified series: members in pH order, the systems and reagents used, the mixing plan."""

    members: tuple[SeriesMember, ...]
    systems: tuple[str, ...]
    reagents: tuple[str, ...]
    temperature_c: float
    ionic_strength_mol_l: float
    buffer_conc_mol_l: float | None
    capacity_mol_l_per_ph: float | None
    currency: str
    plan: Any            # selector.designs.stocks.MixingPlan or None
    solve_seconds: float
    max_ph_error: float
    max_ionic_error_relative: float
    notes: tuple[str, ...] = ()

    def as_json(self) -> dict:
        return {"systems": list(self.systems), "reagents": list(self.reagents), "notes": list(self.notes),
                "temperature_c": self.temperature_c, "ionic_strength_mol_l": self.ionic_strength_mol_l,
                "buffer_conc_mol_l": self.buffer_conc_mol_l, "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph,
                "currency": self.currency, "members": [m.as_json() for m in self.members],
                "mixing_plan": None if self.plan is None else self.plan.as_json(),
                "max_ph_error": self.max_ph_error, "max_ionic_error_relative": self.max_ionic_error_relative}


@dataclass(frozen=True)
class SeriesData:
    """The numbers of a series model (shapes: N members, R reagents, S systems)."""

    reagent_ids: tuple[str, ...]
    ph: np.ndarray                  # [N]
    charge: np.ndarray              # [N, R]
    water_charge: np.ndarray        # [N]
    capacity: np.ndarray            # [N, R]
    water_capacity: np.ndarray      # [N]
    ionic: np.ndarray               # [N, R]
    water_ionic: np.ndarray         # [N]
    units: np.ndarray               # [R] system units per reagent
    system_of: tuple[int | None, ...]
    n_systems: int
    upper_mol_l: np.ndarray         # [R]
    admitted: np.ndarray            # [N, R] bool: member n's pH admits reagent r
    cost_per_mol: np.ndarray        # [R]
    ionic_target: np.ndarray | None  # [N] mol/L; None: no ionic row (the explanation's re-solve)
    buffer_conc_mol_l: np.ndarray | None  # [N] mol/L, or None (a capacity floor instead)
    capacity_min: float | None
    max_systems: int
    per_member: bool


def _check_spec(spec: BufferSpec, conc_given: bool = False) -> None:
    if spec.ionic_strength_mol_l is None:
        raise InputError("a series is at one ionic strength: give --ionic-strength (e.g. 0.15 or 150mM)")
    if spec.buffer_conc_mol_l is None and spec.capacity_mol_l_per_ph is None and not conc_given:
        raise InputError("a series needs a buffer concentration (--conc, e.g. 50mM) or a capacity (--capacity, mM/pH)")
    if spec.ionic_strength_min_mol_l is not None or spec.ionic_strength_max_mol_l is not None:
        raise InputError("a series (and a plate) sets each member's ionic strength: --ionic-strength-max and "
                         "ionic-strength bounds do not apply; give --ionic-strength")
    refuse_metal_options(spec, "series")
    if spec.loads or spec.temperature_min_c is not None or spec.metals or spec.fixed_amounts:
        raise InputError("a series takes pH, temperature, concentration or capacity, ionic strength and the "
                         "reagent filters; loads, temperature windows, metal limits and fixed amounts are "
                         "for 'poise optimise'")


def series_data(spec: BufferSpec, ph_values: Sequence[float], catalog: Catalog, prices: PriceBook,
                max_systems: int = 2, per_member: bool = False,
                ionic_values: Sequence[float] | None = None,
                conc_values: Sequence[float] | None = None) -> tuple[SeriesData, Any]:
    """The model numbers of the series at ``ph_values`` (and per-member I, default the spec's),
    and the admitted reagents."""
    from selector.optimise import model_data

    each = admitted_each(spec, ph_values, catalog, prices)
    allowed = admitted_over(each)
    base = model_data(dataclasses.replace(spec, ph=float(ph_values[0])), allowed, prices, catalog)
    ph = np.asarray(ph_values, dtype=float)
    ionic = (np.asarray(ionic_values, dtype=float) if ionic_values is not None
             else np.full(ph.shape, float(spec.ionic_strength_mol_l or 0.0)))
    conc = (np.asarray(conc_values, dtype=float) if conc_values is not None
            else None if spec.buffer_conc_mol_l is None else np.full(ph.shape, spec.buffer_conc_mol_l))
    lc = coefficients_at(base.reagent_ids, ph, spec.temperature_c, ionic, catalog)
    data = SeriesData(
        reagent_ids=base.reagent_ids, ph=ph, charge=lc.charge, water_charge=lc.water_charge,
        capacity=lc.capacity, water_capacity=lc.water_capacity, ionic=lc.ionic, water_ionic=lc.water_ionic,
        units=lc.system_units.sum(axis=1), system_of=tuple(system_columns(lc)), n_systems=len(lc.system_ids),
        upper_mol_l=base.upper_mol_l, admitted=admitted_mask(each, base.reagent_ids), cost_per_mol=base.cost_per_mol, ionic_target=ionic,
        buffer_conc_mol_l=conc, capacity_min=spec.capacity_mol_l_per_ph,
        max_systems=max_systems, per_member=per_member)
    return data, (allowed, lc.system_ids)


def build_series_model(data: SeriesData) -> Any:
    """The Pyomo model of a series (pure: nothing solved).  See the module for the maths."""
    import pyomo.core as pyo

    n_members, n_reagents = data.charge.shape
    m = pyo.ConcreteModel(name="poise_series")
    m.N = pyo.RangeSet(0, n_members - 1)
    m.R = pyo.RangeSet(0, n_reagents - 1)
    m.S = pyo.RangeSet(0, max(data.n_systems - 1, 0)) if data.n_systems else pyo.Set(initialize=[])
    upper = data.upper_mol_l
    m.x = pyo.Var(m.N, m.R, bounds=lambda _, n, r: (0.0, float(upper[r]) if data.admitted[n, r] else 0.0),
                  initialize=0.0)
    if data.per_member:
        m.y = pyo.Var(m.N, m.S, within=pyo.Binary)
        m.max_systems = pyo.Constraint(m.N, rule=lambda _, n: sum(m.y[n, s] for s in m.S) <= data.max_systems)
        used = lambda n, s: m.y[n, s]   # noqa: E731
    else:
        m.y = pyo.Var(m.S, within=pyo.Binary)
        m.max_systems = pyo.Constraint(expr=sum(m.y[s] for s in m.S) <= data.max_systems)
        used = lambda n, s: m.y[s]   # noqa: E731
    buffers = [r for r in range(n_reagents) if data.system_of[r] is not None]
    m.on = pyo.Constraint(m.N, buffers, rule=lambda _, n, r: m.x[n, r] <= float(upper[r]) * used(n, data.system_of[r]))
    m.charge = pyo.Constraint(m.N, rule=lambda _, n: sum(float(data.charge[n, r]) * m.x[n, r] for r in m.R)
                              + float(data.water_charge[n]) == 0.0)
    ionic_target = data.ionic_target
    if ionic_target is not None:
        m.ionic = pyo.Constraint(m.N, rule=lambda _, n: sum(float(data.ionic[n, r]) * m.x[n, r] for r in m.R)
                                 + float(data.water_ionic[n]) == float(ionic_target[n]))
    buffer_conc = data.buffer_conc_mol_l
    if buffer_conc is not None:
        m.conc = pyo.Constraint(m.N, rule=lambda _, n: sum(float(data.units[r]) * m.x[n, r] for r in buffers)
                                == float(buffer_conc[n]))
    if data.capacity_min is not None:
        m.capacity = pyo.Constraint(m.N, rule=lambda _, n: sum(float(data.capacity[n, r]) * m.x[n, r] for r in m.R)
                                    + float(data.water_capacity[n]) >= data.capacity_min)
    cost = sum(float(data.cost_per_mol[r]) * m.x[n, r] for n in m.N for r in m.R)
    total = sum(m.x[n, r] for n in m.N for r in m.R)
    objective = cost + TIE_BREAK * total
    if not data.per_member:
        m.z = pyo.Var(m.R, within=pyo.Binary)
        m.shared = pyo.Constraint(m.N, m.R, rule=lambda _, n, r: m.x[n, r] <= float(upper[r]) * m.z[r])
        objective += REAGENT_WEIGHT_PER_L * n_members * sum(m.z[r] for r in m.R)
    m.objective = pyo.Objective(expr=objective)
    return m


def fewest_systems_model(data: SeriesData) -> Any:
    """The series model with the objective Σ y (fewest systems; the first of the two stages)."""
    import pyomo.core as pyo

    m = build_series_model(data)
    m.objective.deactivate()
    m.fewest = pyo.Objective(expr=sum(m.y.values()))
    return m


def _amounts(m: Any, shape: tuple[int, int]) -> np.ndarray:
    x = np.array([[m.x[n, r].value or 0.0 for r in range(shape[1])] for n in range(shape[0])])
    x[np.abs(x) < AMOUNT_ZERO_MOL_L] = 0.0
    return np.maximum(x, 0.0)


def explain_infeasible(data: SeriesData, system_ids: Sequence[str]) -> InfeasibleSpecError:
    """Why no series meets the spec, in words (see the module)."""
    import pyomo.core as pyo

    relaxed = dataclasses.replace(data, ionic_target=None)
    m = build_series_model(relaxed)
    m.objective.deactivate()
    n_members, n_reagents = data.charge.shape
    m.least_ionic = pyo.Objective(expr=sum(float(data.ionic[n, r]) * m.x[n, r] for n in m.N for r in m.R))
    asked = (f"{data.buffer_conc_mol_l.max() * 1000:g} mM buffer" if data.buffer_conc_mol_l is not None
             else f"β ≥ {(data.capacity_min or 0) * 1000:g} mM/pH")
    if solve_strict(m) != "optimal":
        return InfeasibleSpecError(
            f"no series meets the spec: even without the ionic-strength target no mix of at most "
            f"{data.max_systems} admitted system(s) gives {asked} at every pH "
            f"{data.ph[0]:g}-{data.ph[-1]:g} when each member uses only systems whose useful range (pKa' ± 1) "
            f"holds its pH; allow more systems (--max-systems) or narrow the pH range",
            [f"{asked} at every pH of the series", f"at most {data.max_systems} system(s)"])
    x = _amounts(m, (n_members, n_reagents))
    least = model_ionic_strength(data.ionic, data.water_ionic, x)
    targets = data.ionic_target if data.ionic_target is not None else np.zeros(len(data.ph))
    over = [(float(p), float(i)) for p, i, t in zip(data.ph, least, targets) if i > t * (1 + 1e-9)]
    target = float(targets.min()) * 1000
    if not over:
        return InfeasibleSpecError(f"no series meets the spec at ionic strength {target:g} mM; the buffer alone stays "
                                   "below it at every pH, so another row (solubility, system count) conflicts",
                                   ["ionic strength"])
    p, i = max(over, key=lambda t: t[1])
    words = [f"at pH {q:g} the buffer alone ({asked}) gives at least I = {j * 1000:.1f} mM" for q, j in over]
    return InfeasibleSpecError(
        f"no series meets the spec: at pH {p:g} the buffer alone ({asked}) already gives an ionic strength of at "
        f"least {i * 1000:.1f} mM, above the target {target:g} mM; raise --ionic-strength to at least "
        f"{max(j for _, j in over) * 1000:.1f} mM or lower the concentration", words)


def _systems_used(x: np.ndarray, data: SeriesData, system_ids: Sequence[str]) -> tuple[str, ...]:
    used = {data.system_of[r] for r in range(x.shape[1]) if data.system_of[r] is not None and x[:, r].any()}
    return tuple(system_ids[s] for s in sorted(s for s in used if s is not None))


def solve_series(spec: BufferSpec, ph_values: Sequence[float], prices: PriceBook | None = None,
                 catalog: Catalog | None = None, max_systems: int = 2, per_member: bool = False,
                 plan: bool = True, ionic_values: Sequence[float] | None = None,
                 conc_values: Sequence[float] | None = None) -> SeriesResult:
    """One buffer per pH of ``ph_values`` at the spec's ionic strength and concentration, verified.

    Parameters
    ----------
    spec : BufferSpec
        Temperature [°C], ionic strength [mol/L], buffer concentration [mol/L] or capacity
        [mol/L per pH], volume [L] of each member, the reagent filters; its ``ph`` is ignored.
    ph_values : the members' target pH, increasing
    max_systems : at most this many systems for the series (each member with ``per_member``)
    per_member : each member chooses its own systems and reagents
    plan : also design the mixing plan from shared stocks
    ionic_values : per-member ionic strength [mol/L] instead of the spec's one (the plate's
        stocks come from members at its lowest and highest I)
    conc_values : per-member buffer concentration [mol/L] instead of the spec's one

    Raises
    ------
    InputError
        no ionic strength, no concentration or capacity, an option a series does not take.
    InfeasibleSpecError
        no series meets the spec (in words: which member's buffer alone exceeds I).
    SolverError
        a member misses its pH or I after the exact correction.
    """
    started = time.perf_counter()
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    _check_spec(spec, conc_values is not None)
    ph_values = [float(p) for p in ph_values]
    data, (allowed, system_ids) = series_data(spec, ph_values, catalog, prices, max_systems, per_member,
                                              ionic_values, conc_values)
    m = fewest_systems_model(data)
    if solve_strict(m) != "optimal":
        raise explain_infeasible(data, system_ids)
    fewest = int(round(sum(var.value or 0 for var in m.y.values())))
    data = dataclasses.replace(data, max_systems=fewest if not per_member else data.max_systems)
    m = build_series_model(data)
    if solve_strict(m) != "optimal":     # the first model found a series with these systems
        raise SolverError("the series model lost feasibility between its two stages; no result reported")
    x = _amounts(m, data.charge.shape)
    ids = data.reagent_ids
    target_i = np.array(data.ionic_target)
    columns = titration_columns(ids, allowed)
    x, eq = correct_batch(ids, x, np.array(ph_values), spec.temperature_c, catalog, columns, target_i)
    ph_error = np.abs(eq.ph - np.array(ph_values))
    i_error = np.abs(eq.ionic_strength_mol_l - target_i) / target_i
    misses = [f"pH {p:g}: verified pH {v:.4f}, I {i * 1000:.2f} mM" for p, v, i, e, f
              in zip(ph_values, eq.ph, eq.ionic_strength_mol_l, ph_error, i_error)
              if e > PH_TOL or f > IONIC_TOL_RELATIVE]
    if misses:
        raise SolverError("series members miss their targets after the exact correction: " + "; ".join(misses))
    roles = Roles(tuple(r for r in (allowed.acid_id, allowed.base_id) if r), allowed.salt_id)
    members = []
    for n, p in enumerate(ph_values):
        composition = composition_of(ids, x[n])
        members.append(SeriesMember(
            target_ph=p, composition_mol_l=composition, verified_ph=float(eq.ph[n]),
            ionic_strength_mol_l=float(eq.ionic_strength_mol_l[n]),
            capacity_mol_l_per_ph=float(eq.capacity_mol_l_per_ph[n]),
            buffer_conc_mol_l=float(x[n] @ data.units), cost_per_l=prices.cost(composition, 1.0, catalog),
            recipe=bench_recipe(composition, spec, p, roles, catalog, prices)))
    mixing = None
    if plan:
        from selector.designs.stocks import series_plan

        mixing = series_plan(spec, members, ids, roles, catalog, prices)
    systems = _systems_used(x, data, system_ids)
    return SeriesResult(
        members=tuple(members), systems=systems, notes=system_notes(systems, catalog),
        reagents=tuple(r for r in ids if x[:, ids.index(r)].any()), temperature_c=spec.temperature_c,
        ionic_strength_mol_l=float(spec.ionic_strength_mol_l or 0.0), buffer_conc_mol_l=spec.buffer_conc_mol_l,
        capacity_mol_l_per_ph=spec.capacity_mol_l_per_ph, currency=prices.currency, plan=mixing,
        solve_seconds=time.perf_counter() - started, max_ph_error=float(ph_error.max()),
        max_ionic_error_relative=float(i_error.max()))
