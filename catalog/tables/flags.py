"""``flags.csv``: reactive groups and interferences of a buffer system, from a fixed vocabulary."""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import FLAG_VOCABULARY, Flag, Source
from catalog.rows import Row

TABLE = "flags.csv"
COLUMNS = ("system_id", "flag", "detail", "source", "source_kind")


def flags_from_rows(rows: Iterable[Row], system_ids: Collection[str], sources: Mapping[str, Source]) -> list[Flag]:
    """Every flag, in file order."""
    flags = []
    for row in rows:
        system_id = row.text("system_id", required=True)
        row.reference("system_id", system_id, system_ids, "a system of systems.csv")
        flag = row.choice("flag", FLAG_VOCABULARY)
        key, kind = row.provenance("source", "source_kind", sources, "the flag")
        flags.append(Flag(system_id, flag, row.text("detail"), key, kind))
    return flags
