"""``ph_standard_values.csv``: pH(PS) of each pH standard across temperature, sourced."""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import Source, Sourced
from catalog.rows import Row

TABLE = "ph_standard_values.csv"
COLUMNS = ("standard_id", "temperature_c", "ph", "source", "source_kind")

#: (temperature [°C], pH) pairs of each standard id in file order, each with its row.
ValuesByStandard = dict[str, list[tuple[float, Sourced, Row]]]


def ph_values_from_rows(rows: Iterable[Row], sources: Mapping[str, Source]) -> ValuesByStandard:
    """Every complete value row, grouped by standard id; temperature 0-95 °C, pH 0-14."""
    values: ValuesByStandard = {}
    for row in rows:
        standard_id = row.text("standard_id", required=True)
        temperature_c = row.number("temperature_c", minimum=0.0, maximum=95.0)
        ph = row.sourced("ph", "source", "source_kind", sources, minimum=0.0, maximum=14.0)
        if temperature_c is not None and ph is not None:
            values.setdefault(standard_id, []).append((temperature_c, ph, row))
    return values


def check_value_standards(values: ValuesByStandard, standard_ids: Collection[str]) -> None:
    """Every value belongs to a standard of ph_standards.csv (reported on each value row)."""
    for standard_id, entries in values.items():
        for _, _, row in entries:
            row.reference("standard_id", standard_id, standard_ids, "a standard of ph_standards.csv")
