"""``polymerisation.csv``: systems that form polymeric species above a total concentration."""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import Polymerisation, Source
from catalog.rows import Row

TABLE = "polymerisation.csv"
COLUMNS = ("system_id", "above_mol_l", "source", "source_kind", "species", "note")


def polymerisation_from_rows(rows: Iterable[Row], system_ids: Collection[str],
                             sources: Mapping[str, Source]) -> dict[str, Polymerisation]:
    """Polymerisation limits by system id: one per system, a positive total [mol/L], sourced."""
    limits: dict[str, Polymerisation] = {}
    for row in rows:
        system_id = row.text("system_id", required=True)
        row.reference("system_id", system_id, system_ids, "a system of systems.csv")
        if system_id and system_id in limits:
            row.problem("system_id", f"expected one polymerisation limit per system, got {system_id!r} twice")
        above = row.sourced("above_mol_l", "source", "source_kind", sources, minimum=0.0, maximum=20.0)
        species = row.text("species", required=True)
        if above is not None and system_id:
            limits[system_id] = Polymerisation(system_id, above, species, row.text("note"))
    return limits
