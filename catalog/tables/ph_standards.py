"""``ph_standards.csv``: pH standard buffers as molalities of reagents, with their values table."""

from __future__ import annotations

from collections.abc import Collection, Iterable

from catalog.records import PhStandard
from catalog.rows import Row
from catalog.tables.ph_standard_values import ValuesByStandard

TABLE = "ph_standards.csv"
COLUMNS = ("standard_id", "name", "components_mol_kg", "preparation", "note")


def ph_standards_from_rows(rows: Iterable[Row], reagent_ids: Collection[str],
                           values: ValuesByStandard) -> dict[str, PhStandard]:
    """pH standards by id, each with its values sorted by temperature."""
    standards: dict[str, PhStandard] = {}
    for row in rows:
        standard_id = row.text("standard_id", required=True)
        components = _components(row, reagent_ids)
        if standard_id and standard_id not in values:
            row.problem("standard_id", f"expected rows in ph_standard_values.csv for {standard_id!r}, got none")
        table = sorted(((t, ph) for t, ph, _ in values.get(standard_id, [])), key=lambda item: item[0])
        standards[standard_id] = PhStandard(
            standard_id, row.text("name", required=True), components, tuple(table),
            row.text("preparation"), row.text("note"))
    return standards


def _components(row: Row, reagent_ids: Collection[str]) -> tuple[tuple[str, float], ...]:
    """The ``reagent:molality;...`` cell as (reagent id, molality [mol/kg]) pairs."""
    components = []
    for part in row.listing("components_mol_kg"):
        reagent_id, _, molality = part.partition(":")
        reagent_id = reagent_id.strip()
        if reagent_id not in reagent_ids:
            row.problem("components_mol_kg", f"expected reagent ids of reagents.csv, got {reagent_id!r}")
            continue
        try:
            components.append((reagent_id, float(molality)))
        except ValueError:
            row.problem("components_mol_kg", f"expected reagent:molality, got {part!r}")
    return tuple(components)
