"""``sources.csv``: one publication per row; every sourced number keys into it."""

from __future__ import annotations

from collections.abc import Iterable

from catalog.records import Source
from catalog.rows import Row

TABLE = "sources.csv"
COLUMNS = ("source_key", "citation", "doi_or_isbn")


def sources_from_rows(rows: Iterable[Row]) -> dict[str, Source]:
    """Sources by key; a key and a citation are required, a key appears once."""
    sources: dict[str, Source] = {}
    for row in rows:
        key = row.text("source_key", required=True)
        citation = row.text("citation", required=True)
        row.unique("source_key", key, sources, "key")
        sources[key] = Source(key, citation, row.text("doi_or_isbn"))
    return sources
