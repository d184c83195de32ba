"""``metal_binding.csv``: log K of a metal-buffer species, or a qualitative statement where only that exists."""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import QUALITATIVE_BINDING, MetalBinding, Source, Sourced
from catalog.rows import Row

TABLE = "metal_binding.csv"
COLUMNS = (
    "system_id", "metal", "ligand_species_charge", "log_k", "ionic_strength_mol_l",
    "temperature_c", "qualitative", "source", "source_kind", "note",
)


def metal_binding_from_rows(rows: Iterable[Row], system_ids: Collection[str],
                            sources: Mapping[str, Source]) -> list[MetalBinding]:
    """Every binding statement, in file order.

    A row gives a log K (with the charge of the ligand species it binds) or a
    qualitative word; its one source and source kind serve both, so a bad source is
    reported once, for ``log_k`` where the row has one.
    """
    return [_binding(row, system_ids, sources) for row in rows]


def _binding(row: Row, system_ids: Collection[str], sources: Mapping[str, Source]) -> MetalBinding:
    system_id = row.text("system_id", required=True)
    row.reference("system_id", system_id, system_ids, "a system of systems.csv")
    log_k_value = row.number("log_k", required=False, minimum=-5.0, maximum=40.0)
    what = "log_k" if log_k_value is not None else "the binding statement"
    key, kind = row.provenance("source", "source_kind", sources, what)
    log_k = Sourced(log_k_value, key, kind) if log_k_value is not None else None
    qualitative = row.choice("qualitative", QUALITATIVE_BINDING, required=log_k is None)
    charge = row.integer("ligand_species_charge", required=log_k is not None)
    return MetalBinding(
        system_id=system_id, metal=row.text("metal", required=True),
        ligand_species_charge=charge if charge is not None else 0, log_k=log_k,
        ionic_strength_mol_l=row.number("ionic_strength_mol_l", required=False, minimum=0.0),
        temperature_c=row.number("temperature_c", required=False),
        qualitative=qualitative, source=key, source_kind=kind, note=row.text("note"),
    )
