"""Infeasible specs explained: an elastic re-solve and the conflicting rows in words.

Every row has elastic slack variables, fixed at zero in the normal solve.  On
infeasibility the slacks are freed and their weighted sum (each relative to its
right-hand side) is minimised; the rows left violated by the nearest mix are the conflict,
reported in words with that mix's figures, and the rows that hold it back beside them.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from selector.admissible import ion_label
from selector.digits import apart, apart_g
from selector.errors import InfeasibleSpecError
from selector.optimise.blocks import RowKind
from selector.optimise.data import CONC_CAP_MOL_L, ModelData, ionic_strength_of
from selector.optimise.reports import RowValue, row_values
from selector.optimise.solve import ACTIVITY_TOL_MOL_L, MAX_ACTIVITY_ROUNDS, Problem
from selector.optimise.verify import exact_ph, with_load

#: A row is violated beyond 1e-7 + 1e-4·|bound| (looser than binding: the elastic optimum).
CONFLICT_ABS_TOL = 1e-7
CONFLICT_REL_TOL = 1e-4
#: The nearest mix misses the target pH when |R(p, T_use)| exceeds this [mol/L].
CHARGE_MISS_MOL_L = 1e-6
#: The message when no single row explains the conflict.
NO_SINGLE_GROUP = "the constraints cannot all hold together (no single group explains it)"
HOLD_KINDS = (RowKind.ACID_HOLD, RowKind.BASE_HOLD)
#: The spec field that sets each kind of row a nearest mix can report a reachable value of,
#: and which of several violated rows of the kind limits (min for a floor, max for a cap).
NEAREST_FIELDS = {RowKind.BUFFER_CONC: ("buffer_conc_mol_l", min), RowKind.CAPACITY: ("capacity_mol_l_per_ph", min),
                  RowKind.IONIC_MAX: ("ionic_strength_max_mol_l", max)}


def elastic_solve(problem: Problem) -> np.ndarray | None:
    """Free the slacks, minimise their weighted sum; amounts of the nearest mix [mol/L] (or None).

    The target pH (charge balance) is held exactly first; only if no mix reaches the pH
    at all is its slack freed too.  Activity rounds run on the elastic model as well, so
    the nearest mix's figures are those of its own ionic strength.
    """
    m, built = problem.model, problem.built
    charge = built.charge.slacks
    for row in built.rows:
        for v in row.slacks:
            v.unfix()
    m.objective.deactivate()
    m.elastic.activate()
    x = None
    try:
        for _ in range(MAX_ACTIVITY_ROUNDS):
            status = problem.solve()
            if status != "optimal" and charge[0].fixed:
                for v in charge:
                    v.unfix()
                status = problem.solve()
            if status != "optimal":
                return None
            x = problem.amounts()
            new_i = ionic_strength_of(problem.data, x)
            if problem.ideal or abs(new_i - problem.data.ionic_strength_mol_l) < ACTIVITY_TOL_MOL_L:
                break
            problem.recompute(max(new_i, 0.0))
    finally:
        for v in built.slacks:
            v.fix(0.0)
        m.elastic.deactivate()
        m.objective.activate()
    return x


def _violated(value: RowValue) -> bool:
    sense, body, bound = value.row.sense, value.body, value.row.bound
    tol = CONFLICT_ABS_TOL + CONFLICT_REL_TOL * abs(bound)
    return (sense == ">=" and body < bound - tol) or (sense == "<=" and body > bound + tol) or \
        (sense == "==" and abs(body - bound) > tol)


def _limits(value: RowValue) -> bool:
    """An inequality (not a load or window row) that holds with equality: it holds the mix back."""
    row = value.row
    tol = CONFLICT_ABS_TOL + CONFLICT_REL_TOL * abs(row.bound)
    return row.sense != "==" and abs(value.body - row.bound) <= tol and row.kind not in HOLD_KINDS


def _capacity_words(value: RowValue, data: ModelData) -> str:
    body, bound = apart_g(value.body * 1000, value.row.bound * 1000)
    return f"capacity: best reachable {body} mM/pH (needs {bound})"


def _conc_words(value: RowValue, data: ModelData) -> str:
    body, bound = apart_g(value.body * 1000, value.row.bound * 1000)
    return f"buffer concentration: nearest mix {body} mM (needs {bound})"


def _ionic_words(value: RowValue, data: ModelData) -> str:
    body, _ = apart_g(value.body * 1000, value.row.bound * 1000)    # a violated limit never reads as met
    return f"ionic strength: nearest mix {body} mM ({value.row.words})"


def _osm_words(value: RowValue, data: ModelData) -> str:
    body, _ = apart_g(value.body * 1000, value.row.bound * 1000, 4)
    return f"osmolarity: nearest mix {body} mOsm/L ({value.row.words})"


def _metal_words(value: RowValue, data: ModelData) -> str:
    body, bound = value.body, value.row.bound
    return (f"{ion_label(str(value.row.index))}: the mix binds {body / (1 + body) * 100:.3g} % "
            f"(limit {bound / (1 + bound) * 100:g} %)")


def _upper_words(value: RowValue, data: ModelData) -> str:
    i = data.reagent_ids.index(str(value.row.index))
    what = "its solubility" if data.upper_is_solubility[i] else f"the {CONC_CAP_MOL_L:g} M cap"
    return (f"{data.reagent_names[i]}: needs {value.body * 1000:.4g} mM, above {what} "
            f"(about {value.row.bound * 1000:.4g} mM)")


#: A violated row in words, by kind (the load and window rows are worded together).
VIOLATION_WORDS: dict[RowKind, Callable[[RowValue, ModelData], str]] = {
    RowKind.CAPACITY: _capacity_words, RowKind.BUFFER_CONC: _conc_words,
    RowKind.IONIC_TARGET: _ionic_words, RowKind.IONIC_MIN: _ionic_words, RowKind.IONIC_MAX: _ionic_words,
    RowKind.OSM_MIN: _osm_words, RowKind.OSM_MAX: _osm_words,
    RowKind.METAL: _metal_words, RowKind.UPPER: _upper_words,
}


def _charge_words(problem: Problem, x: np.ndarray) -> list[str]:
    """The target pH missed by the nearest mix: how much acid or base it lacks."""
    charge = problem.built.charge.body(problem.data, x)
    if abs(charge) <= CHARGE_MISS_MOL_L:
        return []
    side = "base" if charge > 0 else "acid"
    hint = " (counter-ion none admits no base titrant)" if side == "base" and problem.allowed.base_id is None \
        else ""
    return [f"pH {problem.spec.ph:g}: no admitted mix reaches it; the nearest lacks {abs(charge) * 1000:.3g} mM "
            f"of {side}{hint}"]


def _hold_words(problem: Problem, x: np.ndarray, holds: list[RowValue]) -> list[str]:
    """Violated load and window rows, one line per side, with the exact pH of the nearest mix."""
    spec, data = problem.spec, problem.data
    mix = {r: float(v) for r, v in zip(data.reagent_ids, x) if v > 0}
    out = []
    for kind in dict.fromkeys(v.row.kind for v in holds):   # the side violated first comes first
        side = "acid" if kind is RowKind.ACID_HOLD else "base"
        temps = [float(v.row.temperature_c or 0.0) for v in holds if v.row.kind is kind]
        load = data.acid_load_mol_l if side == "acid" else data.base_load_mol_l
        phs = [(exact_ph(problem, with_load(mix, side, load), t) if mix else float("nan"), t) for t in temps]
        if side == "acid":
            ph, t = min(phs)
            (shown, bound), sign, verb = apart(ph, spec.ph - spec.tolerance_ph), "≥", "falls to"
        else:
            ph, t = max(phs)
            (shown, bound), sign, verb = apart(ph, spec.ph + spec.tolerance_ph), "≤", "rises to"
        what = f"{side} load {load * 1000:g} mM" if load else "temperature window"
        listed = ", ".join(f"{t:g}" for t in temps)
        out.append(f"{what}: the nearest mix {verb} pH {shown} at {t:g} °C (needs pH {sign} {bound} at {listed} °C)")
    return out


def conflicts_at(problem: Problem, x: np.ndarray) -> list[str]:
    """The rows ``x`` [mol/L] violates, in words with the nearest mix's figures and what limits it."""
    values = row_values(problem.built.rows, problem.data, x)
    violated = [v for v in values if _violated(v)]
    limits = [v.row.words for v in values if not _violated(v) and _limits(v)]
    out = _charge_words(problem, x)
    out += [VIOLATION_WORDS[v.row.kind](v, problem.data) for v in violated if v.row.kind not in HOLD_KINDS]
    out += _hold_words(problem, x, [v for v in violated if v.row.kind in HOLD_KINDS])
    if out and limits:
        out.append("held back by: " + ", ".join(dict.fromkeys(limits)))
    if out and problem.allowed.not_in_stock:
        out.append("not in stock, so never added: " + ", ".join(problem.allowed.not_in_stock))
    return list(dict.fromkeys(out))


def nearest_values(problem: Problem, x: np.ndarray) -> dict[str, float]:
    """The nearest mix's value of each violated row a spec field sets ({field: value}, the
    field's unit): the buffer concentration it reaches [mol/L], its best capacity [mol/L per
    pH], its ionic strength above the cap [mol/L] (the most limiting of several rows)."""
    reached: dict[str, list[float]] = {}
    for value in row_values(problem.built.rows, problem.data, x):
        if value.row.kind in NEAREST_FIELDS and _violated(value):
            reached.setdefault(NEAREST_FIELDS[value.row.kind][0], []).append(float(value.body))
    pick = {name: limit for name, limit in NEAREST_FIELDS.values()}
    return {name: pick[name](values) for name, values in reached.items()}


def infeasible_error(problem: Problem, what: str = "no mix meets the spec") -> InfeasibleSpecError | None:
    """After an elastic solve at a self-consistent I: the error, or None if no row is violated.

    None means the nearest mix meets every row: the spec may be feasible after all (the
    first solve ran at a guessed ionic strength) and is worth solving again.
    """
    x = elastic_solve(problem)
    if x is None:
        return conflict_error(what, [])
    conflicts = conflicts_at(problem, x)
    return conflict_error(what, conflicts, nearest_values(problem, x)) if conflicts else None


def conflict_error(what: str, conflicts: list[str], nearest: dict[str, float] | None = None) -> InfeasibleSpecError:
    """The error of an infeasible spec: ``what``, then the conflicts (or that no single group
    explains it); ``nearest`` as :func:`nearest_values`."""
    conflicts = conflicts or [NO_SINGLE_GROUP]
    return InfeasibleSpecError(f"{what}: " + "; ".join(conflicts), conflicts, nearest)
