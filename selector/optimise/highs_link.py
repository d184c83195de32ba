"""A Pyomo model held as a persistent HiGHS model, updated in place between solves.

Pyomo stays the modelling layer: :func:`selector.optimise.model.build_min_cost_model`
declares the variables, rows and objectives.  :class:`HighsLink` reads that model once
(columns in declaration order, active rows in declaration order, each row's linear terms
by :func:`linear_form` with the mutable Params kept symbolic, as
:func:`pyomo.repn.generate_standard_repn` gives them) and passes it to HiGHS.  Before each solve it writes into HiGHS only what changed since the
last one:

- a coefficient, row bound or cost that holds a mutable Param (the activity rounds write
  new values into the Params, :func:`selector.optimise.model.update_model`): every such
  entry is re-read from its Param and only the entries whose value moved are passed on;
- a column whose fixing or fixed value changed (a held system choice, the elastic
  slacks), or, for a column that was discrete when the model was handed over, whose
  domain changed: its bounds and integrality (the optimiser changes a domain only
  together with fixing or freeing the variable, :func:`selector.optimise.solve.hold_binary`);
- which objective is active (the cost objective or the elastic one).

After an optimal solve the primal values are written back into the Pyomo variables, so
the model reads as after any Pyomo solve.  The rows and the set of variables of a built
model never change (the optimiser only fixes, unfixes, changes domains and writes
Params), so nothing looks for new or removed components.
"""

from __future__ import annotations

import operator
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import highspy
import numpy as np
import pyomo.core as pyo
from pyomo.core.base.param import ParamData
from pyomo.core.expr.numeric_expr import (
    LinearExpression,
    MonomialTermExpression,
    NegationExpression,
    NPV_NegationExpression,
    NPV_SumExpression,
    SumExpression,
)
from pyomo.repn import generate_standard_repn

if TYPE_CHECKING:
    from selector.optimise.blocks import Written

INF = highspy.kHighsInf
#: Coefficient types that are plain numbers (no Param inside).
_PLAIN = (float, int)
_CONTINUOUS = highspy.HighsVarType.kContinuous
_INTEGER = highspy.HighsVarType.kInteger
_FIXED = operator.attrgetter("fixed")
#: An index no component entry has.
_UNKNOWN = object()


def _value(expr: Any) -> Any:
    """Value of a number, a Param, or a negation or sum of those, by the operations Pyomo's
    evaluation applies (−a; a₁ + a₂ + … left to right), without its expression walker;
    anything else through Pyomo."""
    kind = type(expr)
    if kind is ParamData:
        return expr.value
    if kind in _PLAIN:
        return expr
    if kind is NPV_NegationExpression:
        return -_value(expr.args[0])
    if kind is NPV_SumExpression:
        parts = iter(expr.args)
        total = _value(next(parts))
        for part in parts:
            total = total + _value(part)
        return total
    return pyo.value(expr)


def _number(expr: Any) -> float:
    """Value of a coefficient or bound (:func:`_value`) as a float."""
    return float(_value(expr))


def _collect(expr: Any, sign: float, terms: dict[int, list[Any]], constant: list[Any]) -> bool:
    """Add the terms of a sum of monomials to ``terms`` (id(var) → [coef, var]) and
    ``constant``; False for anything else (the caller then asks Pyomo's general reader)."""
    kind = type(expr)
    if kind is MonomialTermExpression:
        coef, var = expr.args
        coef = sign * coef if coef.__class__ in _PLAIN else (coef if sign > 0 else -coef)
    elif kind is SumExpression or kind is LinearExpression:
        for arg in expr.args:
            if sign > 0 and type(arg) is MonomialTermExpression:     # the common term, read in place
                coef, var = arg.args
                key = id(var)
                if key in terms:
                    terms[key][0] = terms[key][0] + coef
                else:
                    terms[key] = [coef, var]
            elif not _collect(arg, sign, terms, constant):
                return False
        return True
    elif kind is NegationExpression:
        return _collect(expr.args[0], -sign, terms, constant)
    elif expr.__class__ in _PLAIN or not expr.is_potentially_variable():
        constant.append(sign * expr if expr.__class__ in _PLAIN or sign > 0 else -expr)
        return True
    elif expr.is_variable_type():
        coef, var = sign, expr
    else:
        return False
    key = id(var)
    if key in terms:
        terms[key][0] = terms[key][0] + coef
    else:
        terms[key] = [coef, var]
    return True


def linear_form(body: Any) -> tuple[list[Any], list[Any], Any]:
    """(coefficients, variables, constant) of a linear Pyomo expression, Params kept symbolic.

    The rows of :func:`selector.optimise.model.build_min_cost_model` are sums of
    ``coef · var`` terms, variables, their negations and constants: those are read
    directly; any other expression goes through :func:`pyomo.repn.generate_standard_repn`.

    Raises
    ------
    ValueError
        the expression is not linear.
    """
    terms: dict[int, list[Any]] = {}
    constant: list[Any] = []
    if _collect(body, 1.0, terms, constant):
        return ([c for c, _ in terms.values()], [v for _, v in terms.values()],
                sum(constant[1:], constant[0]) if constant else 0)
    repn = generate_standard_repn(body, quadratic=False, compute_values=False)
    if repn.nonlinear_expr is not None:
        raise ValueError(f"{body} is not linear")
    return list(repn.linear_coefs), list(repn.linear_vars), repn.constant


def _shifted(bound: Any, infinite: float, constant: Any) -> Any:
    """A row bound less the body's constant: None where the row has no such bound (None or
    ``infinite``, as Pyomo's ``has_lb``/``has_ub`` read it); plain numbers stay plain."""
    if bound is None or (bound.__class__ in _PLAIN and bound == infinite):
        return None
    if constant.__class__ in _PLAIN and constant == 0:
        return bound
    return bound - constant


@dataclass
class _Mutable:
    """Entries whose value is a Pyomo expression of mutable Params, with the value last passed on.

    Most entries are a Param itself (read as ``.value``, or taken from what was written,
    :meth:`changed`); the others go through Pyomo.
    """

    exprs: list[Any] = field(default_factory=list)
    last: np.ndarray = field(default_factory=lambda: np.zeros(0))
    params: list[Any] = field(default_factory=list)
    param_at: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=int))
    others: list[Any] = field(default_factory=list)
    other_at: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=int))
    #: positions of each Param entry: id of its component -> index -> positions
    slots: dict[int, dict[Any, list[int]]] = field(default_factory=dict)
    #: (position, expression) of the entries that are neither a Param nor a plain number
    moving: list[tuple[int, Any]] = field(default_factory=list)

    def add(self, expr: Any) -> None:
        self.exprs.append(expr)

    def freeze(self) -> None:
        kinds = [type(e) is ParamData for e in self.exprs]
        self.params = [e for e, k in zip(self.exprs, kinds) if k]
        self.others = [e for e, k in zip(self.exprs, kinds) if not k]
        self.param_at = np.flatnonzero(kinds)
        self.other_at = np.flatnonzero(np.logical_not(kinds))
        index_of: dict[int, dict[int, Any]] = {}     # component -> id(entry) -> its index
        for k, p in zip(self.param_at.tolist(), self.params):
            component = p.parent_component()
            if id(component) not in index_of:
                index_of[id(component)] = {id(d): i for i, d in component.items()}
            index = index_of[id(component)].get(id(p), _UNKNOWN)
            if index is _UNKNOWN:       # not an entry of its component: read each time
                self.moving.append((k, p))
            else:
                self.slots.setdefault(id(component), {}).setdefault(index, []).append(k)
        self.moving += [(k, e) for k, e in zip(self.other_at.tolist(), self.others) if e.__class__ not in _PLAIN]
        self.last = self.values()

    def values(self) -> np.ndarray:
        now = np.empty(len(self.exprs))
        now[self.param_at] = [p.value for p in self.params]
        if self.others:
            now[self.other_at] = [_number(e) for e in self.others]
        return now

    def written_values(self, written: Written) -> np.ndarray:
        """The values now, the Params' taken from ``written`` (every Param write since the
        last call), the other expressions re-read."""
        latest: dict[int, float] = {}       # position -> the last value written there
        for component, values in written:
            slots = self.slots.get(component)
            if slots is None:
                continue
            for index, value in values.items():
                for k in slots.get(index, ()):
                    latest[k] = value
        for k, expr in self.moving:
            latest[k] = _number(expr)
        now = self.last.copy()
        if latest:
            now[list(latest)] = list(latest.values())
        return now

    def changed(self, written: Written | None = None) -> tuple[np.ndarray, np.ndarray]:
        """(positions, new values) of the entries whose value moved since the last call
        (``written``: every Param write since then, else every entry is read)."""
        if not self.exprs:
            return np.zeros(0, dtype=int), np.zeros(0)
        now = self.values() if written is None else self.written_values(written)
        moved = np.flatnonzero(now != self.last)
        self.last = now
        return moved, now[moved]


@dataclass
class _Objective:
    """One objective as a cost vector: fixed part, mutable entries, offset."""

    component: Any
    costs: np.ndarray
    columns: list[int]
    terms: _Mutable
    offset: Any


class HighsLink:
    """A Pyomo model (linear, minimised) as a persistent :class:`highspy.Highs` model.

    Parameters
    ----------
    model : pyomo ConcreteModel
        Linear rows and objectives; minimise only; at most one objective active at a time.
    highs : highspy.Highs
        An empty HiGHS instance with its options set (output off).
    """

    def __init__(self, model: Any, highs: Any) -> None:
        self.model = model
        self.highs = highs
        self.variables = list(model.component_data_objects(pyo.Var, descend_into=True))
        self.column = {id(v): j for j, v in enumerate(self.variables)}
        self.constraints = list(model.component_data_objects(pyo.Constraint, active=True, descend_into=True))
        self.row = {c: i for i, c in enumerate(self.constraints)}
        self._discrete: list[int] = []
        self._state: tuple[list[bool], list[Any], list[int]] = ([], [], [])
        self._add_columns()
        self._coef_rows: list[int] = []
        self._coef_cols: list[int] = []
        self._coefs = _Mutable()
        self._bound_rows: list[int] = []
        self._bounds = _Mutable()       # lower, upper of each row with a mutable bound, interleaved
        # a fixed variable is a column with equal bounds, not a constant: the rows are read
        # with every variable free (the elastic slacks are fixed now and freed later)
        fixed = [(v, v.value) for v in self.variables if v.fixed]
        for v, _ in fixed:
            v.unfix()
        try:
            self._add_rows()
            self.objectives = [self._objective(o)
                               for o in model.component_data_objects(pyo.Objective, descend_into=True)]
        finally:
            for v, value in fixed:
                v.fix(value)
        self._active: _Objective | None = None
        self.solution: Any = None

    # -- building ---------------------------------------------------------------------
    def _column_state(self) -> tuple[list[bool], list[Any], list[int]]:
        """Per column: fixed, the fixed value (else None); the domains of the discrete columns."""
        fixed = list(map(_FIXED, self.variables))
        values = [v.value if f else None for v, f in zip(self.variables, fixed)]
        return fixed, values, [id(self.variables[j].domain) for j in self._discrete]

    def _bounds_of(self, v: Any) -> tuple[float, float, Any]:
        lb, ub, step = v.domain.get_interval()
        kind = _INTEGER if step == 1 else _CONTINUOUS
        if v.fixed:
            return float(v.value), float(v.value), kind
        low, high = v.bounds
        return (-INF if low is None else float(low)), (INF if high is None else float(high)), kind

    def _add_columns(self) -> None:
        n = len(self.variables)
        lows, highs, kinds = np.zeros(n), np.zeros(n), []
        for j, v in enumerate(self.variables):
            lows[j], highs[j], kind = self._bounds_of(v)
            kinds.append(kind)
        self._discrete = [j for j, kind in enumerate(kinds) if kind == _INTEGER]
        self._state = self._column_state()
        self.highs.addVars(n, lows, highs)
        self.highs.changeColsIntegrality(n, np.arange(n), np.array(kinds))

    def _add_rows(self) -> None:
        lows: list[float] = []
        highs: list[float] = []
        starts: list[int] = []
        columns: list[int] = []
        values: list[float] = []
        for i, con in enumerate(self.constraints):
            lower, body, upper = con.to_bounded_expression()     # one standardisation per row
            linear_coefs, linear_vars, constant = linear_form(body)
            starts.append(len(values))
            for coef, v in zip(linear_coefs, linear_vars):
                j = self.column[id(v)]
                if coef.__class__ in _PLAIN:
                    columns.append(j)
                    values.append(float(coef))
                    continue
                value = _number(coef)
                if type(coef) is ParamData or not pyo.is_constant(coef):
                    self._coef_rows.append(i)
                    self._coef_cols.append(j)
                    self._coefs.add(coef)
                    if value == 0:
                        continue
                columns.append(j)
                values.append(value)
            low = _shifted(lower, -INF, constant)
            high = _shifted(upper, INF, constant)
            if not (pyo.is_constant(low) and pyo.is_constant(high)):
                self._bound_rows.append(i)
                self._bounds.add(-INF if low is None else low)
                self._bounds.add(INF if high is None else high)
            lows.append(-INF if low is None else _number(low))
            highs.append(INF if high is None else _number(high))
        self._coefs.freeze()
        self._bounds.freeze()
        self.highs.addRows(len(lows), np.array(lows), np.array(highs), len(values), np.array(starts, dtype=np.int32),
                           np.array(columns, dtype=np.int32), np.array(values))

    def _objective(self, component: Any) -> _Objective:
        if component.sense != pyo.minimize:
            raise ValueError(f"objective {component.name} is not minimised")
        repn = generate_standard_repn(component.expr, quadratic=False, compute_values=False)
        if repn.nonlinear_expr is not None:
            raise ValueError(f"objective {component.name} is not linear")
        costs, columns, terms = np.zeros(len(self.variables)), [], _Mutable()
        for coef, v in zip(repn.linear_coefs, repn.linear_vars):
            j = self.column[id(v)]
            if pyo.is_constant(coef):
                costs[j] += float(pyo.value(coef))
            else:
                columns.append(j)
                terms.add(coef)
        terms.freeze()
        return _Objective(component, costs, columns, terms, repn.constant)

    # -- updating ---------------------------------------------------------------------
    def _sync_columns(self) -> None:
        state = self._column_state()
        if state == self._state:
            return
        (fixed, values, domains), (was_fixed, was_values, was_domains) = state, self._state
        changed = {j for j in range(len(fixed)) if fixed[j] != was_fixed[j] or values[j] != was_values[j]}
        changed.update(self._discrete[k] for k in range(len(domains)) if domains[k] != was_domains[k])
        self._state = state
        if not changed:
            return
        columns = sorted(changed)
        bounds = [self._bounds_of(self.variables[j]) for j in columns]
        index = np.array(columns, dtype=np.int32)
        self.highs.changeColsBounds(len(columns), index, np.array([b[0] for b in bounds]),
                                    np.array([b[1] for b in bounds]))
        self.highs.changeColsIntegrality(len(columns), index, np.array([b[2] for b in bounds]))

    def _sync_params(self, written: Written | None) -> None:
        moved, values = self._coefs.changed(written)
        for k, value in zip(moved.tolist(), values.tolist()):
            self.highs.changeCoeff(self._coef_rows[k], self._coef_cols[k], value)
        moved, _ = self._bounds.changed(written)
        for i in sorted({int(k) // 2 for k in moved}):
            self.highs.changeRowBounds(self._bound_rows[i], self._bounds.last[2 * i], self._bounds.last[2 * i + 1])

    def _sync_objective(self, written: Written | None) -> None:
        active = [o for o in self.objectives if o.component.active]
        if len(active) != 1:
            raise ValueError(f"{len(active)} objectives are active; exactly one must be")
        objective = active[0]
        # every objective's entries follow the writes (an inactive one may be activated later)
        moved = {id(o): o.terms.changed(written)[0] for o in self.objectives}
        if objective is self._active and not len(moved[id(objective)]):
            return
        costs = objective.costs.copy()
        np.add.at(costs, objective.columns, objective.terms.last)
        n = len(costs)
        self.highs.changeColsCost(n, np.arange(n, dtype=np.int32), costs)
        self.highs.changeObjectiveOffset(_number(objective.offset))
        self._active = objective

    def sync(self, written: Written | None = None) -> None:
        """Pass on to HiGHS whatever changed in the Pyomo model since the last solve.

        ``written`` lists every write into the model's Params since the last sync
        (:data:`selector.optimise.blocks.Written`, in the order written): the Params' new
        values are taken from it, not read back one by one.  None: every Param is read.
        """
        self._sync_columns()
        self._sync_params(written)
        self._sync_objective(written)

    # -- solving ----------------------------------------------------------------------
    def set_start(self) -> None:
        """Hand HiGHS the variables' current values as a starting (MIP) solution."""
        start = highspy.HighsSolution()
        start.col_value = np.array([0.0 if v.value is None else float(v.value) for v in self.variables])
        start.value_valid = True
        start.dual_valid = False
        self.highs.setSolution(start)

    def load_solution(self) -> None:
        """Write the last solve's primal values into the Pyomo variables that are not fixed."""
        self.solution = self.highs.getSolution()
        for v, x in zip(self.variables, self.solution.col_value):
            if v.value != x and not v.fixed:    # most values do not move between solves
                v.set_value(x, skip_validation=True)

    def duals(self) -> dict[Any, float]:
        """Row duals of the last solve: Pyomo constraint → ∂objective/∂rhs."""
        values = self.solution.row_dual
        return {con: float(values[i]) for con, i in self.row.items()}
