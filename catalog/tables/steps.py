"""``steps.csv``: one dissociation step per row (its data range and note); its values come from ``step_values.csv``."""

from __future__ import annotations

from collections.abc import Collection, Iterable

from catalog.records import STEP_QUANTITIES, Selected, Step
from catalog.rows import Row
from catalog.selection import select
from catalog.tables.step_values import ValuesByStep

TABLE = "steps.csv"
COLUMNS = ("system_id", "step", "t_min_c", "t_max_c", "note")

#: Steps of each system id, in file order, each with the row it came from.
StepsBySystem = dict[str, list[tuple[Step, Row]]]


def steps_from_rows(rows: Iterable[Row], values: ValuesByStep) -> StepsBySystem:
    """Every complete step row, grouped by system id (numbering is checked with the system).

    Each quantity of a step is the value the selection policy chooses among the step's
    rows of ``step_values.csv`` (:func:`catalog.selection.select`).
    """
    steps: StepsBySystem = {}
    for row in rows:
        step = _step(row, values)
        if step is not None:
            steps.setdefault(step.system_id, []).append((step, row))
    return steps


def step_keys(rows: Iterable[Row]) -> set[tuple[str, int]]:
    """(system id, step) of every row that names both (the steps values may refer to)."""
    keys = set()
    for row in rows:
        raw = row.text("step").lstrip("+")
        if raw.isdigit():
            keys.add((row.text("system_id"), int(raw)))
    return keys


def _step(row: Row, values: ValuesByStep) -> Step | None:
    system_id = row.text("system_id", required=True)
    number = row.integer("step", minimum=1)
    t_min = row.number("t_min_c", minimum=-10.0, maximum=150.0)
    t_max = row.number("t_max_c", minimum=-10.0, maximum=150.0)
    if t_min is not None and t_max is not None and t_min >= t_max:
        row.problem("t_max_c", f"expected t_max_c > t_min_c ({t_min:g}), got {t_max:g}")
    if not system_id or number is None:
        return None
    published = values.get((system_id, number), {})
    chosen: dict[str, Selected] = {}
    for quantity in STEP_QUANTITIES:
        entries = published.get(quantity)
        if not entries:
            row.problem("step", f"expected at least one {quantity} value in step_values.csv for "
                        f"{system_id} step {number}, got none")
            continue
        chosen[quantity] = select(quantity, [value for value, _ in entries])
    if t_min is None or t_max is None or len(chosen) != len(STEP_QUANTITIES):
        return None
    return Step(system_id, number, chosen["pka_25c"], chosen["dh_kj_mol"], chosen["dcp_j_k_mol"],
                t_min, t_max, row.text("note"))


def check_step_systems(steps: StepsBySystem, system_ids: Collection[str]) -> None:
    """Every step belongs to a system of systems.csv (reported on each step row)."""
    for system_id, entries in steps.items():
        for _, row in entries:
            row.reference("system_id", system_id, system_ids, "a system of systems.csv")
