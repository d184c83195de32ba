"""``metal_binding.csv``: log K of metal-buffer complexes (several published values each, one
selected), or a qualitative statement where only that exists.

One row is one published value.  A numeric row states the complex (metal and its charge,
ligand species charge, ligands per metal), the log K, the ionic strength [mol/L] and the
temperature [°C] it refers to (both required), and the reaction enthalpy [kJ/mol] where the
same source gives one.  Rows of the same complex are alternatives; the selection policy
(:data:`catalog.records.SOURCE_KIND_PREFERENCE`: best source kind, then the first row
listed) picks the one in force, unless a row says ``chosen = yes`` (an override, with its
``why``).  ``chosen = no`` keeps a value on record but out of the choice (with its ``why``).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Collection, Iterable, Mapping

from catalog.records import (
    CHOSEN_OVERRIDES,
    QUALITATIVE_BINDING,
    SOURCE_KIND_PREFERENCE,
    MetalBinding,
    Source,
    Sourced,
)
from catalog.rows import Row

TABLE = "metal_binding.csv"
COLUMNS = (
    "system_id", "metal", "metal_charge", "ligand_species_charge", "ligand_count", "log_k",
    "ionic_strength_mol_l", "temperature_c", "dh_kj_mol", "qualitative", "source", "source_kind",
    "chosen", "why", "note",
)


def metal_binding_from_rows(rows: Iterable[Row], system_ids: Collection[str],
                            sources: Mapping[str, Source]) -> list[MetalBinding]:
    """Every binding statement, in file order, with the value in force of each complex selected.

    A row gives a log K (with the charge of the ligand species it binds, its ionic strength
    and temperature) or a qualitative word; its one source and source kind serve both, so a
    bad source is reported once, for ``log_k`` where the row has one.
    """
    return _select([(row, *_binding(row, system_ids, sources)) for row in rows])


def _binding(row: Row, system_ids: Collection[str], sources: Mapping[str, Source]) -> tuple[MetalBinding, str]:
    system_id = row.text("system_id", required=True)
    row.reference("system_id", system_id, system_ids, "a system of systems.csv")
    log_k_value = row.number("log_k", required=False, minimum=-5.0, maximum=40.0)
    numeric = log_k_value is not None
    what = "log_k" if numeric else "the binding statement"
    key, kind = row.provenance("source", "source_kind", sources, what)
    log_k = Sourced(log_k_value, key, kind) if log_k_value is not None else None
    qualitative = row.choice("qualitative", QUALITATIVE_BINDING, required=not numeric)
    charge = row.integer("ligand_species_charge", required=numeric)
    metal_charge = row.integer("metal_charge", required=False, minimum=1)
    ligand_count = row.integer("ligand_count", required=False, minimum=1)
    # A log K means nothing without the medium it was measured in: both are required.
    ionic_strength = row.number("ionic_strength_mol_l", required=numeric, minimum=0.0, maximum=10.0)
    temperature = row.number("temperature_c", required=numeric, minimum=0.0, maximum=100.0)
    dh = row.number("dh_kj_mol", required=False, minimum=-500.0, maximum=500.0)
    chosen = row.choice("chosen", CHOSEN_OVERRIDES, required=False)
    why = row.text("why")
    if chosen and not numeric:
        row.problem("chosen", f"expected an empty cell on a qualitative row (nothing to choose), got {chosen!r}")
    if chosen and not why:
        row.problem("why", f"expected the reason for chosen = {chosen}, got an empty cell")
    if not numeric and dh is not None:
        row.problem("dh_kj_mol", "expected an empty cell on a row without log_k, got a number")
    binding = MetalBinding(
        system_id=system_id, metal=row.text("metal", required=True),
        ligand_species_charge=charge if charge is not None else 0, log_k=log_k,
        ionic_strength_mol_l=ionic_strength, temperature_c=temperature,
        qualitative=qualitative, source=key, source_kind=kind, note=row.text("note"),
        metal_charge=metal_charge if metal_charge is not None else 2,
        ligand_count=ligand_count if ligand_count is not None else 1,
        dh_kj_mol=dh, selected=not numeric, rejected=chosen == "no", why=why,
    )
    return binding, chosen


def _select(read: list[tuple[Row, MetalBinding, str]]) -> list[MetalBinding]:
    """Mark the value in force of every complex: the override, else the policy's pick."""
    groups: dict[tuple, list[int]] = {}
    for index, (_, binding, _) in enumerate(read):
        if binding.log_k is not None:
            groups.setdefault(binding.complex_key, []).append(index)
    selected: set[int] = set()
    for members in groups.values():
        overrides = [i for i in members if read[i][2] == "yes"]
        for i in overrides[1:]:
            read[i][0].problem("chosen", "expected at most one chosen = yes per complex, got a second one "
                               f"(the first is on line {read[overrides[0]][0].line})")
        candidates = [i for i in members if read[i][2] != "no"]
        if overrides:
            selected.add(overrides[0])
        elif candidates:
            selected.add(min(candidates, key=lambda i: (SOURCE_KIND_PREFERENCE.get(read[i][1].source_kind, 9), i)))
        else:
            read[members[0]][0].problem("chosen", "expected at least one value of the complex not marked chosen = no, "
                                        "got none")
    return [dataclasses.replace(binding, selected=True) if i in selected else binding
            for i, (_, binding, _) in enumerate(read)]
