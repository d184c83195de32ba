"""``steps.csv``: one dissociation step per row, pKa (25 °C, I = 0), ΔH° and ΔCp°, each sourced."""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import Source, Step
from catalog.rows import Row

TABLE = "steps.csv"
COLUMNS = (
    "system_id", "step", "pka_25c", "pka_source", "pka_source_kind", "dh_kj_mol",
    "dh_source", "dh_source_kind", "dcp_j_k_mol", "dcp_source", "dcp_source_kind",
    "t_min_c", "t_max_c", "note",
)

#: Steps of each system id, in file order, each with the row it came from.
StepsBySystem = dict[str, list[tuple[Step, Row]]]


def steps_from_rows(rows: Iterable[Row], sources: Mapping[str, Source]) -> StepsBySystem:
    """Every complete step row, grouped by system id (numbering is checked with the system)."""
    steps: StepsBySystem = {}
    for row in rows:
        step = _step(row, sources)
        if step is not None:
            steps.setdefault(step.system_id, []).append((step, row))
    return steps


def _step(row: Row, sources: Mapping[str, Source]) -> Step | None:
    system_id = row.text("system_id", required=True)
    number = row.integer("step", minimum=1)
    pka = row.sourced("pka_25c", "pka_source", "pka_source_kind", sources, minimum=-3.0, maximum=17.0)
    dh = row.sourced("dh_kj_mol", "dh_source", "dh_source_kind", sources, minimum=-200.0, maximum=200.0)
    dcp = row.sourced("dcp_j_k_mol", "dcp_source", "dcp_source_kind", sources, minimum=-2000.0, maximum=2000.0)
    t_min = row.number("t_min_c", minimum=-10.0, maximum=150.0)
    t_max = row.number("t_max_c", minimum=-10.0, maximum=150.0)
    if t_min is not None and t_max is not None and t_min >= t_max:
        row.problem("t_max_c", f"expected t_max_c > t_min_c ({t_min:g}), got {t_max:g}")
    if number is None or pka is None or dh is None or dcp is None or t_min is None or t_max is None:
        return None
    return Step(system_id, number, pka, dh, dcp, t_min, t_max, row.text("note"))


def check_step_systems(steps: StepsBySystem, system_ids: Collection[str]) -> None:
    """Every step belongs to a system of systems.csv (reported on each step row)."""
    for system_id, entries in steps.items():
        for _, row in entries:
            row.reference("system_id", system_id, system_ids, "a system of systems.csv")
