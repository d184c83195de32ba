"""``systems.csv``: one acid-base family per row, with its steps from ``steps.csv``."""

from __future__ import annotations

from collections.abc import Iterable

from catalog.records import Step, System
from catalog.rows import Row
from catalog.tables.steps import StepsBySystem

TABLE = "systems.csv"
COLUMNS = (
    "system_id", "name", "aliases", "charge_most_protonated", "hazardous", "hazard_note", "notes",
)


def systems_from_rows(rows: Iterable[Row], steps: StepsBySystem) -> tuple[dict[str, System], dict[str, int]]:
    """Systems by id, and the line of each in the file.

    A system has steps numbered 1..n in increasing pKa; a hazardous system carries a
    caution in ``hazard_note``.
    """
    systems: dict[str, System] = {}
    lines: dict[str, int] = {}
    for row in rows:
        system_id = row.slug("system_id")
        row.unique("system_id", system_id, systems)
        z0 = row.integer("charge_most_protonated")
        hazardous = row.boolean("hazardous")
        hazard_note = row.text("hazard_note")
        if hazardous and not hazard_note:
            row.problem("hazard_note", "expected a caution for a hazardous system, got an empty cell")
        entries = sorted(steps.get(system_id, []), key=lambda entry: entry[0].step)
        if system_id:
            _check_steps(row, system_id, entries)
        systems[system_id] = System(
            system_id=system_id,
            name=row.text("name", required=True),
            aliases=row.listing("aliases"),
            charge_most_protonated=z0 if z0 is not None else 0,
            hazardous=hazardous,
            hazard_note=hazard_note,
            notes=row.text("notes"),
            steps=tuple(step for step, _ in entries),
        )
        lines[system_id] = row.line
    return systems, lines


def _check_steps(row: Row, system_id: str, entries: list[tuple[Step, Row]]) -> None:
    """Steps numbered 1..n (reported on the system row) in increasing pKa (on the step row)."""
    numbers = [step.step for step, _ in entries]
    if not entries:
        row.problem("system_id", f"expected at least one row in steps.csv for {system_id!r}, got none")
    elif numbers != list(range(1, len(numbers) + 1)):
        row.problem("system_id", f"expected steps numbered 1..{len(numbers)} in steps.csv, got {numbers}")
    pkas = [step.pka_25c.value for step, _ in entries]
    for (_, step_row), previous, current in zip(entries[1:], pkas, pkas[1:]):
        if current <= previous:
            step_row.problem("pka_25c", f"expected pKa above the previous step's {previous:g}, got {current:g}")
