"""A broad-range mixture: β at least a floor at every pH of an interval, adjusted with one titrant.

The model
---------
Grid pHs p_j (j = 1..G); buffer reagents r admitted somewhere in the interval
(:func:`selector.designs.common.admitted_over`) with x_r ≥ 0 [mol/L], shared by every grid
pH (one mixture); titrant amounts t_ja ≥ 0 of the acid and the base titrant a at each p_j;
y_s ∈ {0, 1} system used, τ_a ∈ {0, 1} titrant used.  With the linear coefficients at
(p_j, T, I_j) (:func:`selector.chemistry.linear.linear_coefficients`):

    Σ_r q_jr x_r + Σ_a q_ja t_ja + w_j = 0      (the mixture brought to p_j)
    Σ_r b_jr x_r + bw_j ≥ β_min                 (a strong titrant adds no capacity)
    x_r ≤ U_r y_s(r),  Σ_s y_s ≤ k;   t_ja ≤ U_t τ_a,  Σ_a τ_a ≤ 1  (one titrant)
    minimise Σ_r c_r x_r + 10⁻⁶ (Σ x + Σ t)

With ``linear`` the titration curve is then made as straight as the cost allows: the cost
is held within :data:`LINEAR_COST_SLACK` of its minimum and Σ_j e_j is minimised, with
e_j ≥ |T_j − (a + b p_j)| and T_j = t_j,base − t_j,acid.

Activity: I_j at each grid pH comes from the model (titrant included); the coefficients are
recomputed at each I_j and the model solved again (system and titrant choice held: LPs)
until every I_j moves by less than 10⁻⁴ mol/L.  Every grid pH is then corrected and
verified by the exact engine in one batch.
"""

from __future__ import annotations

import dataclasses
import time
from dataclasses import dataclass
from typing import Any, Sequence

import numpy as np

from catalog import Catalog, load_catalog
from selector.designs.bench import Roles, bench_recipe, titrant_ml_per_l
from selector.designs.common import (
    ACTIVITY_TOL_MOL_L,
    AMOUNT_ZERO_MOL_L,
    MAX_ROUNDS,
    Titration,
    admitted_each,
    admitted_over,
    coefficients_at,
    composition_of,
    correct_batch,
    hold_binaries,
    model_ionic_strength,
    own_ph,
    refuse_metal_options,
    solve_strict,
    system_columns,
    system_notes,
)
from selector.errors import InfeasibleSpecError, InputError, SolverError
from selector.prices import PriceBook, demo_price_book
from selector.recipe import Recipe
from selector.spec import BufferSpec

#: Largest distance of a verified grid pH from its target [pH] (the optimiser's report tolerance).
PH_TOL = 0.005
#: The verified β may fall this far below the floor (relative) before the design is refused:
#: the activity rounds stop at 10⁻⁴ mol/L, which moves β by far less.
CAPACITY_TOL_RELATIVE = 0.005
#: With ``linear``, the cost may rise this much (relative) to straighten the curve (a design choice).
LINEAR_COST_SLACK = 0.1
#: Upper bound of a titrant amount [mol/L] (the optimiser's cap on any reagent).
TITRANT_CAP_MOL_L = 1.0
#: Grid step when the range gives none [pH].
DEFAULT_STEP_PH = 0.1
#: First guess of every I_j [mol/L] (the admissibility default, common practice).
FIRST_IONIC_MOL_L = 0.1


@dataclass(frozen=True)
class SpanRow:
    """One grid pH: titrant [mol/L and mL of the 1 M stock per L], verified pH and β."""

    ph: float
    titrant_mol_l: float
    titrant_ml_per_l: float
    verified_ph: float
    capacity_mol_l_per_ph: float
    ionic_strength_mol_l: float

    def as_json(self) -> dict:
        return dataclasses.asdict(self)


@dataclass(frozen=True)
class SpanResult:
    """A verified broad-range mixture and its titration table."""

    composition_mol_l: dict[str, float]
    titrant: str
    table: tuple[SpanRow, ...]
    capacity_floor_mol_l_per_ph: float
    min_capacity_mol_l_per_ph: float
    systems: tuple[str, ...]
    cost_per_l: float | None
    currency: str
    temperature_c: float
    linear: bool
    recipe: Recipe
    own_ph: float
    activity_rounds: int
    solve_seconds: float
    max_ph_error: float
    notes: tuple[str, ...] = ()

    def as_json(self) -> dict:
        return {"composition_mol_l": dict(self.composition_mol_l), "titrant": self.titrant, "notes": list(self.notes),
                "table": [r.as_json() for r in self.table],
                "capacity_floor_mol_l_per_ph": self.capacity_floor_mol_l_per_ph,
                "min_capacity_mol_l_per_ph": self.min_capacity_mol_l_per_ph, "systems": list(self.systems),
                "cost_per_l": self.cost_per_l, "currency": self.currency, "temperature_c": self.temperature_c,
                "linear": self.linear, "own_ph": self.own_ph, "activity_rounds": self.activity_rounds,
                "max_ph_error": self.max_ph_error, "recipe": self.recipe.as_json()}


@dataclass(frozen=True)
class SpanData:
    """Numbers of a span model: G grid pHs, B buffer reagents, A titrants (acid, base)."""

    ph: np.ndarray               # [G]
    charge: np.ndarray           # [G, B]
    titrant_charge: np.ndarray   # [G, A]
    water_charge: np.ndarray     # [G]
    capacity: np.ndarray         # [G, B]
    water_capacity: np.ndarray   # [G]
    system_of: tuple[int | None, ...]
    n_systems: int
    upper_mol_l: np.ndarray      # [B]
    cost_per_mol: np.ndarray     # [B]
    floor: float
    max_systems: int


def build_span_model(data: SpanData, held: dict[str, Any] | None = None, linear_cost_cap: float | None = None) -> Any:
    """The Pyomo model of a span (pure).  ``held``: y and τ values to fix (the later rounds);
    ``linear_cost_cap``: minimise the curve's bend under this cost instead of the cost."""
    import pyomo.core as pyo

    g_count, b_count = data.charge.shape
    a_count = data.titrant_charge.shape[1]
    m = pyo.ConcreteModel(name="poise_span")
    m.G, m.B = pyo.RangeSet(0, g_count - 1), pyo.RangeSet(0, b_count - 1)
    m.A, m.S = pyo.RangeSet(0, a_count - 1), pyo.RangeSet(0, data.n_systems - 1)
    m.x = pyo.Var(m.B, bounds=lambda _, r: (0.0, float(data.upper_mol_l[r])))
    m.t = pyo.Var(m.G, m.A, bounds=(0.0, TITRANT_CAP_MOL_L))
    m.y = pyo.Var(m.S, within=pyo.Binary)
    m.tau = pyo.Var(m.A, within=pyo.Binary)
    m.on = pyo.Constraint(m.B, rule=lambda _, r: m.x[r] <= float(data.upper_mol_l[r]) * m.y[data.system_of[r]])
    m.max_systems = pyo.Constraint(expr=sum(m.y[s] for s in m.S) <= data.max_systems)
    m.one_titrant = pyo.Constraint(expr=sum(m.tau[a] for a in m.A) <= 1)
    m.titrant_on = pyo.Constraint(m.G, m.A, rule=lambda _, j, a: m.t[j, a] <= TITRANT_CAP_MOL_L * m.tau[a])
    m.charge = pyo.Constraint(m.G, rule=lambda _, j: sum(float(data.charge[j, r]) * m.x[r] for r in m.B)
                              + sum(float(data.titrant_charge[j, a]) * m.t[j, a] for a in m.A)
                              + float(data.water_charge[j]) == 0.0)
    m.capacity = pyo.Constraint(m.G, rule=lambda _, j: sum(float(data.capacity[j, r]) * m.x[r] for r in m.B)
                                + float(data.water_capacity[j]) >= data.floor)
    cost = sum(float(data.cost_per_mol[r]) * m.x[r] for r in m.B)
    m.cost = pyo.Expression(expr=cost)
    tie = 1e-6 * (sum(m.x[r] for r in m.B) + sum(m.t[j, a] for j in m.G for a in m.A))
    if held:
        hold_binaries(m.y, held["y"])
        hold_binaries(m.tau, held["tau"])
    if linear_cost_cap is None:
        m.objective = pyo.Objective(expr=cost + tie)
        return m
    m.cost_cap = pyo.Constraint(expr=cost <= linear_cost_cap)
    m.a0, m.a1 = pyo.Var(), pyo.Var()
    m.e = pyo.Var(m.G, bounds=(0.0, None))
    signed = {j: m.t[j, a_count - 1] - (m.t[j, 0] if a_count > 1 else 0.0) for j in m.G}
    m.bend_up = pyo.Constraint(m.G, rule=lambda _, j: m.e[j] >= signed[j] - m.a0 - m.a1 * float(data.ph[j]))
    m.bend_down = pyo.Constraint(m.G, rule=lambda _, j: m.e[j] >= m.a0 + m.a1 * float(data.ph[j]) - signed[j])
    m.objective = pyo.Objective(expr=sum(m.e[j] for j in m.G) + tie)
    return m


def _values(var: Any) -> dict[Any, int]:
    return {k: int(round(v.value or 0)) for k, v in var.items()}


@dataclass
class _Design:
    """What the rounds carry: ids, columns, the data at the current I and the last amounts."""

    buffer_ids: tuple[str, ...]
    titrant_ids: tuple[str, ...]
    upper: np.ndarray
    cost: np.ndarray
    data: SpanData
    ionic: np.ndarray


def _data_at(design: _Design, ionic: np.ndarray, catalog: Catalog, temperature_c: float) -> SpanData:
    ids = design.buffer_ids + design.titrant_ids
    lc = coefficients_at(ids, design.data.ph, temperature_c, ionic, catalog)
    b = len(design.buffer_ids)
    return dataclasses.replace(design.data, charge=lc.charge[:, :b], titrant_charge=lc.charge[:, b:],
                               water_charge=lc.water_charge, capacity=lc.capacity[:, :b],
                               water_capacity=lc.water_capacity)


def _ionic_of(design: _Design, x: np.ndarray, t: np.ndarray, catalog: Catalog, temperature_c: float) -> np.ndarray:
    ids = design.buffer_ids + design.titrant_ids
    lc = coefficients_at(ids, design.data.ph, temperature_c, design.ionic, catalog)
    return model_ionic_strength(lc.ionic, lc.water_ionic, np.hstack([np.tile(x, (len(t), 1)), t]))


def _rounds(design: _Design, catalog: Catalog, temperature_c: float,
            linear_cost_cap: float | None = None, held: dict | None = None) -> tuple[Any, np.ndarray, np.ndarray, int]:
    """Solve with activity rounds; (model, x [B], t [G, A], rounds)."""
    for rounds in range(1, MAX_ROUNDS + 1):
        m = build_span_model(design.data, held, linear_cost_cap)
        if solve_strict(m) != "optimal":
            if rounds == 1 and held is None:
                raise InfeasibleSpecError(
                    f"no mixture of at most {design.data.max_systems} admitted system(s) keeps β ≥ "
                    f"{design.data.floor * 1000:g} mM/pH at every pH {design.data.ph[0]:g}-{design.data.ph[-1]:g} "
                    "with one titrant; lower --capacity, narrow the range or allow more systems (--max-systems)",
                    [f"capacity ≥ {design.data.floor * 1000:g} mM/pH over the range",
                     f"at most {design.data.max_systems} system(s)"])
            raise SolverError("the span's activity rounds lost feasibility; try a coarser pH step")
        held = {"y": _values(m.y), "tau": _values(m.tau)}
        x = np.array([m.x[r].value or 0.0 for r in m.B])
        x[x < AMOUNT_ZERO_MOL_L] = 0.0
        t = np.array([[m.t[j, a].value or 0.0 for a in m.A] for j in m.G])
        t[t < AMOUNT_ZERO_MOL_L] = 0.0
        ionic = _ionic_of(design, x, t, catalog, temperature_c)
        if np.max(np.abs(ionic - design.ionic)) < ACTIVITY_TOL_MOL_L:
            return m, x, t, rounds
        design.ionic = ionic
        design.data = _data_at(design, ionic, catalog, temperature_c)
    raise SolverError(f"the span's activity rounds did not settle within {MAX_ROUNDS} rounds")


def _prepare(spec: BufferSpec, grid: np.ndarray, catalog: Catalog, prices: PriceBook,
             max_systems: int) -> tuple[_Design, Any]:
    from selector.optimise import model_data

    allowed = admitted_over(admitted_each(spec, grid.tolist(), catalog, prices))
    base = model_data(dataclasses.replace(spec, ph=float(grid[0])), allowed, prices, catalog)
    lc0 = coefficients_at(base.reagent_ids, grid[:1], spec.temperature_c, np.array([FIRST_IONIC_MOL_L]), catalog)
    columns = system_columns(lc0)
    keep = [i for i, s in enumerate(columns) if s is not None]
    titrants = tuple(r for r in (allowed.acid_id, allowed.base_id) if r)
    buffer_ids = tuple(base.reagent_ids[i] for i in keep)
    lc = coefficients_at(buffer_ids, grid[:1], spec.temperature_c, np.array([FIRST_IONIC_MOL_L]), catalog)
    data = SpanData(ph=grid, charge=np.zeros(0), titrant_charge=np.zeros(0), water_charge=np.zeros(0),
                    capacity=np.zeros(0), water_capacity=np.zeros(0), system_of=tuple(system_columns(lc)),
                    n_systems=len(lc.system_ids), upper_mol_l=base.upper_mol_l[keep], cost_per_mol=base.cost_per_mol[keep],
                    floor=float(spec.capacity_mol_l_per_ph or 0.0), max_systems=max_systems)
    ionic = np.full(len(grid), FIRST_IONIC_MOL_L)
    design = _Design(buffer_ids, titrants, data.upper_mol_l, data.cost_per_mol, data, ionic)
    design.data = _data_at(design, ionic, catalog, spec.temperature_c)
    return design, lc.system_ids


def solve_span(spec: BufferSpec, ph_values: Sequence[float], prices: PriceBook | None = None,
               catalog: Catalog | None = None, max_systems: int = 3, linear: bool = False) -> SpanResult:
    """The cheapest mixture keeping β ≥ the spec's capacity at every pH of ``ph_values`` with one titrant.

    Parameters
    ----------
    spec : BufferSpec
        Capacity floor [mol/L per pH], temperature [°C], volume [L] of the mixture's recipe,
        reagent filters; its ``ph`` and ionic strength are ignored.
    ph_values : the grid pHs, increasing
    max_systems : at most this many systems in the mixture
    linear : also make the titration curve as straight as a cost within 10 % allows

    Raises
    ------
    InputError
        no capacity floor.
    InfeasibleSpecError
        no mixture keeps the floor over the range (in words).
    SolverError
        a grid pH missed after the exact correction, or β under the floor when verified.
    """
    started = time.perf_counter()
    refuse_metal_options(spec, "span")
    if spec.capacity_mol_l_per_ph is None:
        raise InputError("a span needs a capacity floor: give --capacity (mM per pH unit), e.g. 10")
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    grid = np.asarray(ph_values, dtype=float)
    design, system_ids = _prepare(spec, grid, catalog, prices, max_systems)
    m, x, t, rounds = _rounds(design, catalog, spec.temperature_c)
    if linear:
        cap = float(design.cost @ x) * (1.0 + LINEAR_COST_SLACK) + 1e-12
        m, x, t, more = _rounds(design, catalog, spec.temperature_c, cap, {"y": _values(m.y), "tau": _values(m.tau)})
        rounds += more
    return _finish(spec, design, system_ids, x, t, rounds, linear, catalog, prices, started)


def _finish(spec: BufferSpec, design: _Design, system_ids: Sequence[str], x: np.ndarray, t: np.ndarray,
            rounds: int, linear: bool, catalog: Catalog, prices: PriceBook, started: float) -> SpanResult:
    """Correct and verify every grid pH in one batch; the table, the recipe, the result."""
    grid = design.data.ph
    used = np.flatnonzero(t.sum(axis=0) > 0)
    a = int(used[0]) if used.size else len(design.titrant_ids) - 1
    titrant = design.titrant_ids[a]
    ids = design.buffer_ids + (titrant,)
    rows = np.hstack([np.tile(x, (len(grid), 1)), t[:, a:a + 1]])
    acid_is = titrant == design.titrant_ids[0] and len(design.titrant_ids) > 1
    columns = Titration(len(ids) - 1 if acid_is else None, None if acid_is else len(ids) - 1, None)
    rows, eq = correct_batch(ids, rows, grid, spec.temperature_c, catalog, columns)
    ph_error = np.abs(eq.ph - grid)
    if ph_error.max() > PH_TOL:
        worst = int(np.argmax(ph_error))
        raise SolverError(f"at pH {grid[worst]:g} the mixture verifies at pH {eq.ph[worst]:.4f} with "
                          f"{catalog.reagents[titrant].name} alone; no result reported")
    beta = eq.capacity_mol_l_per_ph
    floor = float(spec.capacity_mol_l_per_ph or 0.0)
    if beta.min() < floor * (1.0 - CAPACITY_TOL_RELATIVE):
        raise SolverError(f"the verified capacity {beta.min() * 1000:.3f} mM/pH falls under the floor "
                          f"{floor * 1000:g} mM/pH; no result reported")
    composition = composition_of(design.buffer_ids, x)
    mixture_ph = own_ph(composition, spec.temperature_c, catalog)
    recipe = bench_recipe(composition, dataclasses.replace(spec, ionic_strength_mol_l=None), mixture_ph,
                          Roles((), None), catalog, prices)
    table = tuple(SpanRow(float(p), float(rows[j, -1]), titrant_ml_per_l(float(rows[j, -1])), float(eq.ph[j]),
                          float(beta[j]), float(eq.ionic_strength_mol_l[j])) for j, p in enumerate(grid))
    systems = tuple(dict.fromkeys(catalog.reagents[r].system_id or "" for r in composition))
    return SpanResult(composition, titrant, table, floor, float(beta.min()), systems,
                      prices.cost(composition, 1.0, catalog), prices.currency, spec.temperature_c, linear, recipe,
                      mixture_ph, rounds, time.perf_counter() - started, float(ph_error.max()),
                      system_notes(systems, catalog))
