"""``uv_cutoff.csv``: the wavelength below which a buffer absorbs too much, at a stated concentration."""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import Source, UvCutoff
from catalog.rows import Row

TABLE = "uv_cutoff.csv"
COLUMNS = ("system_id", "uv_cutoff_nm", "conc_mol_l", "source", "source_kind", "note")


def uv_cutoffs_from_rows(rows: Iterable[Row], system_ids: Collection[str],
                         sources: Mapping[str, Source]) -> dict[str, UvCutoff]:
    """UV cut-offs by system id: one per system, 150-500 nm, sourced."""
    cutoffs: dict[str, UvCutoff] = {}
    for row in rows:
        system_id = row.text("system_id", required=True)
        row.reference("system_id", system_id, system_ids, "a system of systems.csv")
        if system_id and system_id in cutoffs:
            row.problem("system_id", f"expected one UV cut-off per system, got {system_id!r} twice")
        cutoff_nm = row.sourced("uv_cutoff_nm", "source", "source_kind", sources, minimum=150.0, maximum=500.0)
        if cutoff_nm is not None:
            cutoffs[system_id] = UvCutoff(system_id, cutoff_nm,
                                          row.number("conc_mol_l", required=False, positive=True),
                                          row.text("note"))
    return cutoffs
