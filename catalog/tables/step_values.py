"""``step_values.csv``: one published value of a step's pKa, ΔH° or ΔCp° per row.

A step (``steps.csv``) has at least one value of each quantity; the selection policy
(:mod:`catalog.selection`) chooses the one the engine uses.  A row names its source key
and kind, the method and conditions of the value, an optional stated uncertainty, and may
be marked ``chosen`` (with the reason in ``why``) to choose it against the policy, or
``rejected`` (with the reason in ``why``): a value judged wrong stays listed but is never
used nor counted in the spread of the others.
"""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import STEP_QUANTITIES, PublishedValue, Source
from catalog.rows import Row
from catalog.selection import STEP_VALUE_KINDS

TABLE = "step_values.csv"
COLUMNS = (
    "system_id", "step", "quantity", "value", "uncertainty", "source", "source_kind", "method",
    "conditions", "chosen", "why", "note",
)

#: Plausible range of each quantity: pKa, ΔH° [kJ/mol], ΔCp° [J/(K mol)].
LIMITS = {"pka_25c": (-3.0, 17.0), "dh_kj_mol": (-200.0, 200.0), "dcp_j_k_mol": (-2000.0, 2000.0)}

#: Published values of each (system id, step) by quantity, in file order, each with its row.
ValuesByStep = dict[tuple[str, int], dict[str, list[tuple[PublishedValue, Row]]]]


def step_values_from_rows(rows: Iterable[Row], sources: Mapping[str, Source]) -> ValuesByStep:
    """Every complete value row, grouped by step and quantity; each cell checked, each problem reported."""
    values: ValuesByStep = {}
    for row in rows:
        entry = _value(row, sources)
        if entry is None:
            continue
        key, quantity, value = entry
        group = values.setdefault(key, {}).setdefault(quantity, [])
        _check_against_group(row, key, quantity, value, group)
        group.append((value, row))
    for key, by_quantity in values.items():
        for quantity, group in by_quantity.items():
            if all(value.rejected for value, _ in group):
                group[-1][1].problem("chosen", f"expected a value not marked rejected for {key[0]} step {key[1]} "
                                     f"{quantity}, got only rejected ones")
    return values


def _value(row: Row, sources: Mapping[str, Source]) -> tuple[tuple[str, int], str, PublishedValue] | None:
    system_id = row.text("system_id", required=True)
    step = row.integer("step", minimum=1)
    quantity = row.choice("quantity", STEP_QUANTITIES)
    low, high = LIMITS.get(quantity, (None, None))
    value = row.number("value", minimum=low, maximum=high)
    uncertainty = row.number("uncertainty", required=False, positive=True)
    source, kind = row.provenance("source", "source_kind", sources, "value")
    if kind and kind not in STEP_VALUE_KINDS:
        row.problem("source_kind", f"expected one of {', '.join(STEP_VALUE_KINDS)} for a step value, got {kind!r}")
    method = row.text("method", required=True)
    mark = row.choice("chosen", ("true", "rejected"), required=False)
    chosen, rejected = mark == "true", mark == "rejected"
    why = row.text("why")
    if chosen and not why:
        row.problem("why", "expected the reason a value marked chosen is chosen against the policy, got an empty cell")
    if rejected and not why:
        row.problem("why", "expected the reason a value marked rejected is judged wrong, got an empty cell")
    if not system_id or step is None or quantity not in STEP_QUANTITIES or value is None:
        return None
    return ((system_id, step), quantity,
            PublishedValue(value, uncertainty, source, kind, method, row.text("conditions"), chosen, why,
                           row.text("note"), rejected))


def _check_against_group(row: Row, key: tuple[str, int], quantity: str, value: PublishedValue,
                         group: list[tuple[PublishedValue, Row]]) -> None:
    """One value per source key, and at most one marked chosen, per step and quantity."""
    where = f"{key[0]} step {key[1]} {quantity}"
    for earlier, earlier_row in group:
        if value.source and earlier.source == value.source:
            row.problem("source", f"expected one value per source for {where}, got {value.source!r} again "
                        f"(line {earlier_row.line})")
        if value.chosen and earlier.chosen:
            row.problem("chosen", f"expected at most one value marked chosen for {where}, got another "
                        f"(line {earlier_row.line})")


def check_value_steps(values: ValuesByStep, step_keys: Collection[tuple[str, int]]) -> None:
    """Every value belongs to a step of steps.csv (reported on each value row)."""
    for key, quantities in values.items():
        if key in step_keys:
            continue
        for entries in quantities.values():
            for _, row in entries:
                row.problem("step", f"expected a step of steps.csv, got {key[0]!r} step {key[1]}")
