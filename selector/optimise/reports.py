"""Binding constraints and sensitivity in words, read from the model's typed rows."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pyomo.core as pyo

from selector.optimise.blocks import Row, RowKind
from selector.optimise.data import ModelData
from selector.optimise.objectives import objective_named
from selector.optimise.solve import Problem, hold_binary, release_binary

#: Tightness of a binding row: |body − bound| ≤ 1e-7 + 1e-5·|bound|.
BINDING_ABS_TOL = 1e-7
BINDING_REL_TOL = 1e-5
#: Duals (scaled) at or below this are not reported.
DUAL_ZERO = 1e-9
#: Order of the sensitivity lines: the spec's scalar rows, then loads, then metal limits.
SENSITIVITY_SECTION = {
    RowKind.CAPACITY: 0, RowKind.BUFFER_CONC: 0, RowKind.IONIC_TARGET: 0, RowKind.IONIC_MIN: 0,
    RowKind.IONIC_MAX: 0, RowKind.OSM_MIN: 0, RowKind.OSM_MAX: 0,
    RowKind.ACID_HOLD: 1, RowKind.BASE_HOLD: 1, RowKind.METAL: 2,
}


@dataclass(frozen=True)
class RowValue:
    """A row evaluated at amounts x: its left-hand side ``body`` beside the row."""

    row: Row
    body: float


def row_values(rows: tuple[Row, ...], data: ModelData, x: np.ndarray) -> list[RowValue]:
    """Each row that applies at amounts ``x`` [mol/L], with its left-hand side there."""
    return [RowValue(row, row.body(data, x)) for row in rows if row.applies_at(x)]


def _is_tight(value: RowValue) -> bool:
    if value.row.sense == "==":
        return True
    return abs(value.body - value.row.bound) <= BINDING_ABS_TOL + BINDING_REL_TOL * abs(value.row.bound)


def binding_constraints(problem: Problem, x: np.ndarray) -> tuple[str, ...]:
    """Words for the rows that hold with equality at ``x`` [mol/L] (equality rows always do)."""
    data = problem.data
    out = [v.row.words for v in row_values(problem.built.rows, data, x) if _is_tight(v)]
    used = int(np.sum(data.units.T @ x > 0)) if data.units.size else 0
    if data.max_systems < len(data.system_ids) and used >= data.max_systems:
        out.append(f"at most {data.max_systems} system(s)")
    return tuple(out)


def sensitivity(problem: Problem) -> tuple[str, ...]:
    """What relaxing the binding rows would change, from the LP duals with binaries fixed.

    The binaries are fixed at the optimum and relaxed to [0, 1] (an LP), HiGHS's row
    duals d = ∂objective/∂rhs are read, then the model is restored.  Only objectives whose
    unit a reader can act on (the cost: currency per litre) get sensitivity lines.
    """
    objective = problem.data.objective
    if not objective_named(objective).has_sensitivity:
        return ()
    binaries = [v for v in problem.built.binaries if not v.fixed]
    for v in binaries:
        hold_binary(v, round(pyo.value(v)))
    try:
        if problem.solve() != "optimal":
            return ()
        duals = problem.solver.duals()
    finally:
        for v in binaries:
            release_binary(v)
    unit = f"{problem.prices.currency}/L"
    noted = sorted(((row, row.dual) for row in problem.built.rows if row.dual is not None),
                   key=lambda pair: SENSITIVITY_SECTION[pair[0].kind])
    out = []
    for row, note in noted:
        d = duals.get(row.constraint, 0.0)
        if abs(d * note.gate) > DUAL_ZERO:
            out.append(f"{note.subject}: {note.step} changes the {objective} by {d * note.scale:+.3g} {unit}")
    return tuple(out)
