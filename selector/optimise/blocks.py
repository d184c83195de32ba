"""The constraint groups of the model, one ``add_*`` function each, and their typed rows.

Each ``add_*`` function declares its Pyomo components on the model.  The groups a spec
asks for (the target pH, loads and window, capacity, concentration, ionic strength,
osmolarity, metal limits, the per-reagent bounds) return :class:`Row` records; the
structural ones (parameters, amounts, system choice, reagent count) declare components
only.  A row records what the row is (:class:`RowKind` and an index), its sense and
right-hand side, the row in words, its elastic slack variables with their weight, the Pyomo
constraint whose dual the sensitivity report reads, and how to evaluate its left-hand side
from :class:`~selector.optimise.data.ModelData` at given amounts.  The binding, conflict and
sensitivity reports read these records only; nothing parses a constraint's name.

Every elastic slack is ≥ 0 and fixed at zero in the normal solve; the elastic re-solve frees
them and minimises Σ weight · slack.  A row's weight is 1 / max(|scale|, 10⁻³), scale being
its right-hand side, so the slacks are relative; the pH row's scale is 10⁻⁴ (the largest
weight, 10³), all metal rows share the tightest limit's weight, and a per-reagent bound
weighs 1 / U_r.
"""

from __future__ import annotations

import enum
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np
import pyomo.core as pyo
from pyomo.core.expr.numeric_expr import LinearExpression, MonomialTermExpression

from selector.admissible import ion_label
from selector.optimise.data import CONC_CAP_MOL_L, ELASTIC_CAP_MOL_L, ModelData

Sense = Literal["<=", ">=", "=="]
#: Smallest right-hand-side scale of an elastic weight (weight = 1 / max(|scale|, this)).
WEIGHT_FLOOR = 1e-3
#: Scale of the pH (charge-balance) row's slack: weighted heavily.
CHARGE_SCALE_MOL_L = 1e-4


class RowKind(enum.Enum):
    """The constraint groups that carry an elastic slack."""

    CHARGE = "charge_balance"
    ACID_HOLD = "acid_hold"
    BASE_HOLD = "base_hold"
    CAPACITY = "capacity"
    BUFFER_CONC = "buffer_conc"
    IONIC_TARGET = "ionic_target"
    IONIC_MIN = "ionic_min"
    IONIC_MAX = "ionic_max"
    OSM_MIN = "osm_min"
    OSM_MAX = "osm_max"
    METAL = "metal"
    UPPER = "upper"


@dataclass(frozen=True)
class DualNote:
    """How the sensitivity report words a row's dual d = ∂objective/∂rhs.

    The line reads ``"{subject}: {step} changes the cost by {d · scale}"``; it is written
    when |d · gate| > 10⁻⁹ (``gate`` is ``scale`` unless the step is not linear in the rhs).
    """

    subject: str
    step: str
    scale: float
    gate: float


@dataclass(frozen=True)
class Row:
    """One row of the model as the reports see it.

    Attributes
    ----------
    kind, index : the group and the row within it (grid position k, metal id, reagent id, or None)
    sense, bound : ``body sense bound``
    words : the row in words (binding constraints, "held back by")
    slacks : the row's elastic slack variables (Pyomo), fixed at 0 in the normal solve
    weight : weight of each slack in the elastic objective
    constraint : the Pyomo constraint (its dual for the sensitivity report)
    body : left-hand side of the row from the data at amounts x [mol/L]
    temperature_c : the grid temperature of a load or window row [°C]
    reagent_column : an upper-bound row's reagent (the row counts only while it is used)
    dual : how the sensitivity report words the dual, or None (no line)
    """

    kind: RowKind
    index: int | str | None
    sense: Sense
    bound: float
    words: str
    slacks: tuple[Any, ...]
    weight: float
    constraint: Any
    body: Callable[[ModelData, np.ndarray], float]
    temperature_c: float | None = None
    reagent_column: int | None = None
    dual: DualNote | None = None

    def applies_at(self, x: np.ndarray) -> bool:
        """Whether the row counts at amounts ``x`` (an upper bound only for a reagent in use)."""
        return self.reagent_column is None or bool(x[self.reagent_column] > 0)


def elastic_weight(scale: float) -> float:
    """Weight of a slack whose row has right-hand-side scale ``scale``."""
    return 1.0 / max(abs(scale), WEIGHT_FLOOR)


def _slack(m: pyo.ConcreteModel, name: str, index: Any = None) -> Any:
    """A slack variable ≥ 0 named ``name`` on ``m``, fixed at zero."""
    var = pyo.Var(index, bounds=(0.0, None), initialize=0.0) if index is not None else \
        pyo.Var(bounds=(0.0, None), initialize=0.0)
    setattr(m, name, var)
    var.fix(0.0)
    return var


def _point_value(label: str) -> Callable[[ModelData, np.ndarray], float]:
    """R(p, T) of the point ``label``: Σ_r q_r x_r + w."""
    def body(data: ModelData, x: np.ndarray) -> float:
        i = data.point(label)
        return float(data.charge[i] @ x + data.water_charge[i])
    return body


def capacity_of(data: ModelData, x: np.ndarray) -> float:
    """β(p, T_use) = Σ_r b_r x_r + ln10([H⁺] + [OH⁻]) [mol/L per pH] of the linear model."""
    return float(data.capacity @ x + data.water_capacity)


def ionic_of(data: ModelData, x: np.ndarray) -> float:
    """I = Σ_r i_r x_r + ½([H⁺] + [OH⁻]) [mol/L] of the linear model."""
    return float(data.ionic @ x + data.water_ionic)


def osmolarity_of(data: ModelData, x: np.ndarray) -> float:
    """Σ_r n_r x_r + [H⁺] + [OH⁻] [osmol/L] (ideal)."""
    return float(data.particles @ x + data.water_particles)


def buffer_conc_of(data: ModelData, x: np.ndarray) -> float:
    """Σ_s C_s = Σ_r,s u_rs x_r [mol/L]."""
    return float(data.units.sum(axis=1) @ x)


def system_of_reagents(data: ModelData) -> dict[str, str | None]:
    """The system of each reagent (None for titrants and salts)."""
    out: dict[str, str | None] = {}
    for i, r in enumerate(data.reagent_ids):
        s = np.flatnonzero(data.units[i])
        out[r] = data.system_ids[int(s[0])] if s.size else None
    return out


def add_parameters(m: pyo.ConcreteModel, data: ModelData) -> None:
    """Sets R, S, G, M and the mutable coefficient Params q, qw, b, bw, ci, ciw, rho.

    The Params are declared empty and written whole by :func:`write_parameters` (Pyomo
    checks each index of a Param built from a rule against its sets, the slow part of a
    build).
    """
    m.R = pyo.Set(initialize=list(data.reagent_ids), ordered=True)
    m.S = pyo.Set(initialize=list(data.system_ids), ordered=True)
    m.G = pyo.Set(initialize=list(data.point_labels), ordered=True)
    m.M = pyo.Set(initialize=list(data.metal_ids), ordered=True)
    m.q = pyo.Param(m.G, m.R, mutable=True, default=0.0)
    m.qw = pyo.Param(m.G, mutable=True, default=0.0)
    m.b = pyo.Param(m.R, mutable=True, default=0.0)
    m.bw = pyo.Param(mutable=True, default=0.0)
    m.ci = pyo.Param(m.R, mutable=True, default=0.0)
    m.ciw = pyo.Param(mutable=True, default=0.0)
    m.rho = pyo.Param(m.M, m.R, mutable=True, default=0.0)
    write_parameters(m, data)


#: What :func:`write_parameters` wrote: (id of the Param component, {index: value}) in the
#: order written; a scalar Param's index is None.  :meth:`selector.optimise.highs_link.HighsLink.sync`
#: reads the values from it instead of every Param of the model.
Written = list[tuple[int, dict[Any, float]]]


def write_parameters(m: pyo.ConcreteModel, data: ModelData, previous: ModelData | None = None) -> Written:
    """Write the ionic-strength-dependent coefficients of ``data`` into the model's Params.

    Every Param is written with ``store_values(..., check=False)``: the indexes are the
    model's own (``data`` has the reagents, points and metals the model was built from)
    and the values plain floats, so Pyomo's per-item validation is skipped.  With
    ``previous`` (the data the Params hold now) only the reagents whose coefficients
    differ are written.  Returns what was written (:data:`Written`).
    """
    reagents = list(data.reagent_ids)
    columns: list[int] = list(range(len(reagents)))
    if previous is not None:
        differ = ((data.charge != previous.charge).any(axis=0) | (data.capacity != previous.capacity)
                  | (data.ionic != previous.ionic) | (data.metal_ratio != previous.metal_ratio).any(axis=0))
        columns = np.flatnonzero(differ).tolist()
    points = list(m.G)
    rows = [data.point(g) for g in points]
    charge = data.charge[rows].tolist()
    capacity, ionic = data.capacity.tolist(), data.ionic.tolist()
    written: Written = [
        (id(m.q), {(g, reagents[i]): charge[a][i] for a, g in enumerate(points) for i in columns}),
        (id(m.qw), dict(zip(points, data.water_charge[rows].tolist()))),
        (id(m.b), {reagents[i]: capacity[i] for i in columns}),
        (id(m.ci), {reagents[i]: ionic[i] for i in columns}),
        (id(m.bw), {None: float(data.water_capacity)}),
        (id(m.ciw), {None: float(data.water_ionic)}),
    ]
    if len(m.M):
        ratio = data.metal_ratio[[data.metal_ids.index(k) for k in m.M]].tolist()
        written.append((id(m.rho), {(k, reagents[i]): ratio[a][i] for a, k in enumerate(m.M) for i in columns}))
    params = {id(m.q): m.q, id(m.qw): m.qw, id(m.b): m.b, id(m.ci): m.ci, id(m.rho): m.rho}
    for key, values in written:
        if key in params:
            params[key].store_values(values, check=False)
    m.bw.set_value(float(data.water_capacity))
    m.ciw.set_value(float(data.water_ionic))
    return written


def add_amounts(m: pyo.ConcreteModel) -> None:
    """x_r ∈ [0, 5 mol/L] (the elastic cap) and y_s ∈ {0, 1}."""
    m.x = pyo.Var(m.R, bounds=(0.0, ELASTIC_CAP_MOL_L), initialize=0.0)
    m.y = pyo.Var(m.S, within=pyo.Binary, initialize=0)


def add_reagent_bounds(m: pyo.ConcreteModel, data: ModelData) -> tuple[Row, ...]:
    """x_r ≤ U_r y_s(r) (x_r ≤ U_r for titrants and salts); the slack only with its system."""
    system_of = system_of_reagents(data)
    s_upper = _slack(m, "s_upper", m.R)
    upper = {r: float(data.upper_mol_l[i]) for i, r in enumerate(data.reagent_ids)}

    def upper_rule(_: Any, r: str) -> Any:
        s = system_of[r]
        if s is None:
            return m.x[r] <= upper[r] + s_upper[r]
        return m.x[r] <= upper[r] * m.y[s] + s_upper[r]
    m.upper = pyo.Constraint(m.R, rule=upper_rule)
    linked = [r for r in data.reagent_ids if system_of[r] is not None]
    m.upper_slack_link = pyo.Constraint(linked, rule=lambda _, r: s_upper[r] <= ELASTIC_CAP_MOL_L * m.y[system_of[r]])
    rows = []
    for i, r in enumerate(data.reagent_ids):
        kind = "solubility" if data.upper_is_solubility[i] else f"{CONC_CAP_MOL_L:g} M cap"
        rows.append(Row(
            RowKind.UPPER, r, "<=", upper[r],
            f"{data.reagent_names[i]} at its {kind} ({data.upper_mol_l[i] * 1000:.4g} mM)",
            (s_upper[r],), 1.0 / upper[r], m.upper[r], _amount_of(i), reagent_column=i))
    return tuple(rows)


def _amount_of(column: int) -> Callable[[ModelData, np.ndarray], float]:
    def body(_: ModelData, x: np.ndarray) -> float:
        return float(x[column])
    return body


def add_system_choice(m: pyo.ConcreteModel, data: ModelData) -> None:
    """Σ_s y_s ≤ k, and Σ_r u_rs x_r ≤ 1 M · y_s (two forms of one acid share the cap)."""
    system_of = system_of_reagents(data)
    reagents, systems = list(data.reagent_ids), list(data.system_ids)
    units = data.units.tolist()     # [R][S] plain floats, read once
    carried = {s: [(units[i][k], r) for i, r in enumerate(reagents) if units[i][k] > 0] for k, s in enumerate(systems)}
    m.max_systems = pyo.Constraint(expr=pyo.quicksum(m.y[s] for s in systems) <= data.max_systems)
    m.system_cap = pyo.Constraint(
        m.S, rule=lambda _, s: pyo.quicksum(u * m.x[r] for u, r in carried[s])
        <= CONC_CAP_MOL_L * m.y[s] + pyo.quicksum(m.s_upper[r] for r in reagents if system_of[r] == s))


def add_reagent_count(m: pyo.ConcreteModel, data: ModelData, limit: int | None) -> tuple[Any, ...]:
    """z_r ∈ {0, 1}, x_r ≤ U_r z_r, and Σ_r z_r ≤ m when a limit is given; returns the z."""
    m.z = pyo.Var(m.R, within=pyo.Binary, initialize=0)
    upper = {r: float(data.upper_mol_l[i]) for i, r in enumerate(data.reagent_ids)}
    m.reagent_on = pyo.Constraint(m.R, rule=lambda _, r: m.x[r] <= upper[r] * m.z[r] + m.s_upper[r])
    if limit is not None:
        m.max_reagents = pyo.Constraint(expr=pyo.quicksum(m.z[r] for r in data.reagent_ids) <= limit)
    return tuple(m.z.values())


def param_sum(pairs: Iterable[tuple[Any, Any]]) -> Any:
    """Σ p·v over (mutable Param entry, Var entry) pairs, as one Pyomo linear expression.

    The expression ``pyo.quicksum(p * v for p, v in pairs)`` builds (one monomial per pair,
    in order), made directly without operator dispatch per term: a mutable Param times a Var
    is always kept as a monomial, never folded to a number.
    """
    return LinearExpression([MonomialTermExpression(pair) for pair in pairs])


def charge_at(m: pyo.ConcreteModel, label: str) -> Any:
    """R(p, T) = Σ_r q_r x_r + w at the point ``label`` (a Pyomo expression)."""
    q, x = m.q, m.x
    return param_sum((q[label, r], x[r]) for r in m.R) + m.qw[label]


def add_charge_balance(m: pyo.ConcreteModel) -> Row:
    """R(p, T_use) = 0: the target pH at the use temperature."""
    s_pos, s_neg = _slack(m, "s_charge_pos"), _slack(m, "s_charge_neg")
    m.charge_balance = pyo.Constraint(expr=charge_at(m, "use") + s_pos - s_neg == 0.0)
    return Row(RowKind.CHARGE, None, "==", 0.0, "the target pH", (s_pos, s_neg),
               elastic_weight(CHARGE_SCALE_MOL_L), m.charge_balance, _point_value("use"))


def add_load_holds(m: pyo.ConcreteModel, data: ModelData) -> tuple[Row, ...]:
    """R(p − δ, T_k) ≥ L_acid and R(p + δ, T_k) ≤ −L_base at every grid temperature T_k."""
    if not data.hold_rows:
        return ()
    m.K = pyo.Set(initialize=list(range(len(data.grid_temperatures_c))), ordered=True)
    s_acid, s_base = _slack(m, "s_acid", m.K), _slack(m, "s_base", m.K)
    acid, base = data.acid_load_mol_l, data.base_load_mol_l
    m.acid_hold = pyo.Constraint(m.K, rule=lambda _, k: charge_at(m, f"lo{k}") + s_acid[k] >= acid)
    m.base_hold = pyo.Constraint(m.K, rule=lambda _, k: charge_at(m, f"hi{k}") - s_base[k] <= -base)
    acid_weight, base_weight = elastic_weight(max(acid, WEIGHT_FLOOR)), elastic_weight(max(base, WEIGHT_FLOOR))
    rows = []
    for k, t in enumerate(data.grid_temperatures_c):
        what = "acid load" if acid else "temperature window"
        rows.append(Row(RowKind.ACID_HOLD, k, ">=", acid,
                        f"{what} at {t:g} °C (pH ≥ {data.point_ph[data.point(f'lo{k}')]:.3f})",
                        (s_acid[k],), acid_weight, m.acid_hold[k], _point_value(f"lo{k}"), temperature_c=t,
                        dual=DualNote(f"acid load at {t:g} °C", "1 mM more load", 1e-3, 1e-3)))
        what = "base load" if base else "temperature window"
        rows.append(Row(RowKind.BASE_HOLD, k, "<=", -base,
                        f"{what} at {t:g} °C (pH ≤ {data.point_ph[data.point(f'hi{k}')]:.3f})",
                        (s_base[k],), base_weight, m.base_hold[k], _point_value(f"hi{k}"), temperature_c=t,
                        dual=DualNote(f"base load at {t:g} °C", "1 mM more load", -1e-3, -1e-3)))
    return tuple(rows)


def beta_expression(m: pyo.ConcreteModel) -> Any:
    """β(p, T_use) of the model (Pyomo expression)."""
    return param_sum((m.b[r], m.x[r]) for r in m.R) + m.bw


def ionic_expression(m: pyo.ConcreteModel) -> Any:
    """I of the model (Pyomo expression)."""
    return param_sum((m.ci[r], m.x[r]) for r in m.R) + m.ciw


def add_capacity(m: pyo.ConcreteModel, data: ModelData) -> tuple[Row, ...]:
    """β(p, T_use) ≥ β_min."""
    if data.capacity_min is None:
        return ()
    s = _slack(m, "s_capacity")
    m.capacity = pyo.Constraint(expr=beta_expression(m) + s >= data.capacity_min)
    return (Row(RowKind.CAPACITY, None, ">=", data.capacity_min,
                f"capacity β ≥ {data.capacity_min * 1000:g} mM/pH", (s,), elastic_weight(data.capacity_min),
                m.capacity, capacity_of, dual=_dual("capacity", "1 mM/pH more capacity")),)


def _dual(subject: str, step: str) -> DualNote:
    """A sensitivity line per 1 m-unit (mM, mM/pH, mOsm/L) of right-hand side."""
    return DualNote(subject, step, 1e-3, 1e-3)


def add_buffer_conc(m: pyo.ConcreteModel, data: ModelData) -> tuple[Row, ...]:
    """Σ_s C_s = c."""
    if data.buffer_conc_mol_l is None:
        return ()
    conc = data.buffer_conc_mol_l
    r_index = {r: i for i, r in enumerate(data.reagent_ids)}
    total = pyo.quicksum(float(data.units[r_index[r]].sum()) * m.x[r] for r in data.reagent_ids if data.units[r_index[r]].any())
    sp, sn = _slack(m, "s_conc_pos"), _slack(m, "s_conc_neg")
    m.buffer_conc = pyo.Constraint(expr=total + sp - sn == conc)
    return (Row(RowKind.BUFFER_CONC, None, "==", conc, f"buffer concentration = {conc * 1000:g} mM", (sp, sn),
                elastic_weight(conc), m.buffer_conc, buffer_conc_of,
                dual=_dual("buffer concentration", "1 mM more buffer")),)


def add_ionic_strength(m: pyo.ConcreteModel, data: ModelData, ionic: Any) -> tuple[Row, ...]:
    """I = I*, or I_lo ≤ I ≤ I_hi."""
    rows = []
    if data.ionic_target is not None:
        target = data.ionic_target
        sp, sn = _slack(m, "s_ionic_pos"), _slack(m, "s_ionic_neg")
        m.ionic_target = pyo.Constraint(expr=ionic + sp - sn == target)
        rows.append(Row(RowKind.IONIC_TARGET, None, "==", target, f"ionic strength = {target * 1000:g} mM",
                        (sp, sn), elastic_weight(target), m.ionic_target, ionic_of,
                        dual=_dual("ionic strength", "1 mM more ionic strength")))
    if data.ionic_min is not None:
        low = data.ionic_min
        s = _slack(m, "s_ionic_min")
        m.ionic_min = pyo.Constraint(expr=ionic + s >= low)
        rows.append(Row(RowKind.IONIC_MIN, None, ">=", low, f"ionic strength ≥ {low * 1000:g} mM", (s,),
                        elastic_weight(low), m.ionic_min, ionic_of,
                        dual=_dual("ionic-strength floor", "raising the floor by 1 mM")))
    if data.ionic_max is not None:
        high = data.ionic_max
        s = _slack(m, "s_ionic_max")
        m.ionic_max = pyo.Constraint(expr=ionic - s <= high)
        rows.append(Row(RowKind.IONIC_MAX, None, "<=", high, f"the {high * 1000:g} mM ionic-strength cap", (s,),
                        elastic_weight(high), m.ionic_max, ionic_of,
                        dual=_dual("ionic-strength cap", "raising the cap by 1 mM")))
    return tuple(rows)


def add_osmolarity(m: pyo.ConcreteModel, data: ModelData) -> tuple[Row, ...]:
    """osm_lo ≤ Σ_r n_r x_r + [H⁺] + [OH⁻] ≤ osm_hi."""
    osm = pyo.quicksum(float(data.particles[i]) * m.x[r] for i, r in enumerate(data.reagent_ids)) + data.water_particles
    rows = []
    if data.osm_min is not None:
        low = data.osm_min
        s = _slack(m, "s_osm_min")
        m.osm_min = pyo.Constraint(expr=osm + s >= low)
        rows.append(Row(RowKind.OSM_MIN, None, ">=", low, f"osmolarity ≥ {low * 1000:g} mOsm/L", (s,),
                        elastic_weight(low), m.osm_min, osmolarity_of,
                        dual=_dual("osmolarity floor", "raising the floor by 1 mOsm/L")))
    if data.osm_max is not None:
        high = data.osm_max
        s = _slack(m, "s_osm_max")
        m.osm_max = pyo.Constraint(expr=osm - s <= high)
        rows.append(Row(RowKind.OSM_MAX, None, "<=", high, f"osmolarity ≤ {high * 1000:g} mOsm/L", (s,),
                        elastic_weight(high), m.osm_max, osmolarity_of,
                        dual=_dual("osmolarity cap", "raising the cap by 1 mOsm/L")))
    return tuple(rows)


def add_metal_limits(m: pyo.ConcreteModel, data: ModelData) -> tuple[Row, ...]:
    """Σ_r ρ_Mr x_r ≤ f_M / (1 − f_M): at most f_M of trace metal M bound.

    All metal slacks share one weight, from the tightest limit.
    """
    if not data.metal_ids:
        return ()
    s_metal = _slack(m, "s_metal", m.M)
    limit = {k: float(v) for k, v in zip(data.metal_ids, data.metal_limit_ratio)}
    m.metal = pyo.Constraint(m.M, rule=lambda _, k: param_sum((m.rho[k, r], m.x[r]) for r in m.R) - s_metal[k]
                          <= limit[k])
    weight = elastic_weight(float(np.min(data.metal_limit_ratio)))
    rows = []
    for k, metal in enumerate(data.metal_ids):
        f = data.metal_limit_ratio[k] / (1 + data.metal_limit_ratio[k])
        df = 0.01 / (1 - f) ** 2    # d(f/(1−f))/df · 1 %
        rows.append(Row(RowKind.METAL, metal, "<=", limit[metal], f"at most {f * 100:g} % of {ion_label(metal)} bound",
                        (s_metal[metal],), weight, m.metal[metal], _metal_bound(k),
                        dual=DualNote(f"{ion_label(metal)} limit", "allowing 1 % more bound", float(df), 1.0)))
    return tuple(rows)


def _metal_bound(k: int) -> Callable[[ModelData, np.ndarray], float]:
    def body(data: ModelData, x: np.ndarray) -> float:
        return float(data.metal_ratio[k] @ x)
    return body
