"""``ions.csv``: the strong ions (counter-ions, and H+/OH- of strong acids and bases)."""

from __future__ import annotations

from collections.abc import Iterable

from catalog.records import Ion
from catalog.rows import Row

TABLE = "ions.csv"
COLUMNS = ("ion_id", "name", "charge")


def ions_from_rows(rows: Iterable[Row]) -> dict[str, Ion]:
    """Ions by id; the charge is a non-zero whole number, an id appears once."""
    ions: dict[str, Ion] = {}
    for row in rows:
        ion_id = row.text("ion_id", required=True)
        charge = row.integer("charge")
        if charge == 0:
            row.problem("charge", "expected a non-zero charge, got 0")
        row.unique("ion_id", ion_id, ions)
        ions[ion_id] = Ion(ion_id, row.text("name", required=True), charge or 0)
    return ions
