"""``complexes.csv``: complexes of metal ions with the catalog's systems (and hydroxo
complexes) as species of the equilibrium, at 25 °C and I = 0.

One row is one complex: ``metal_count`` M + ``ligand_count`` L + ``protons`` H⁺ ⇌ complex,
M an ion of ``ions.csv``, L the fully deprotonated form of ``system_id`` (empty for a
hydroxo complex, whose ``protons`` are negative), log β at 25 °C and I = 0 with its source,
the formation enthalpy where the source gives one (an empty cell: none published), the
uncertainty of log β (the source's stated one; for a row read in minteq.v4.dat, the largest
difference from the same complex in sit.dat or llnl.dat where that exceeds 0.1 — common
practice, recomputed from the files by tests/test_catalog_nist46.py; empty: the 0.1 default of
:data:`catalog.selection.DEFAULT_LOG_BETA_UNCERTAINTY`), and the source's conditions in words.  ``kind`` is
``complex`` (always a species of the equilibrium) or ``ion_pair`` (a weak pair of Na⁺/K⁺ with
an inorganic or carboxylate anion, a species only when ion pairs are asked for); the
complexes of Na⁺/K⁺ with the chelators EDTA and NTA are ``complex``: without them an EDTA
solution's pH is 0.1-0.16 off (tests/test_complex_equilibrium.py).
"""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import Complex, Ion, Source
from catalog.rows import Row

TABLE = "complexes.csv"
#: Values of the ``kind`` column.
COMPLEX_KINDS = ("complex", "ion_pair")
COLUMNS = (
    "complex_id", "metal", "metal_count", "system_id", "ligand_count", "protons", "log_beta", "dh_kj_mol",
    "uncertainty", "kind", "source", "source_kind", "conditions", "note",
)


def complexes_from_rows(rows: Iterable[Row], system_ids: Collection[str], ions: Mapping[str, Ion],
                        sources: Mapping[str, Source]) -> list[Complex]:
    """Every complex in file order; ids unique, metals cations of ions.csv, systems known."""
    seen: dict[str, Complex] = {}
    for row in rows:
        complex_id = row.text("complex_id", required=True)
        row.unique("complex_id", complex_id, seen)
        metal = row.text("metal", required=True)
        cations = [i for i, ion in ions.items() if ion.charge > 0 and i != "H"]
        row.reference("metal", metal, cations, "a cation of ions.csv")
        system_id = row.text("system_id")
        row.reference("system_id", system_id, system_ids, "a system of systems.csv (or empty: a hydroxo complex)")
        metal_count = row.integer("metal_count", minimum=1) or 1
        ligand_count = row.integer("ligand_count", minimum=0)
        protons = row.integer("protons") or 0
        if system_id and not ligand_count:
            row.problem("ligand_count", f"expected a whole number >= 1 for a complex of {system_id}, got "
                        f"{row.text('ligand_count')!r}")
        if not system_id and ligand_count:
            row.problem("ligand_count", f"expected 0 without a system (a hydroxo complex), got {ligand_count}")
        if not system_id and protons >= 0:
            row.problem("protons", f"expected a negative number (hydroxide bound) without a system, got {protons}")
        log_beta = row.sourced("log_beta", "source", "source_kind", sources, minimum=-80.0, maximum=60.0)
        dh = row.number("dh_kj_mol", required=False, minimum=-500.0, maximum=500.0)
        if dh == 0:
            row.problem("dh_kj_mol", "expected a published enthalpy or an empty cell (a 0 in a database is no "
                        "value), got 0")
        uncertainty = row.number("uncertainty", required=False, minimum=0.0, maximum=5.0)
        conditions = row.text("conditions", required=True)
        kind = row.choice("kind", COMPLEX_KINDS)
        if log_beta is None or (metal not in ions):
            continue
        seen[complex_id] = Complex(
            complex_id=complex_id, metal=metal, metal_count=metal_count, system_id=system_id,
            ligand_count=ligand_count or 0, protons=protons, log_beta=log_beta, dh_kj_mol=dh,
            uncertainty=uncertainty, conditions=conditions, note=row.text("note"),
            ion_pair=kind == "ion_pair")
    return list(seen.values())
