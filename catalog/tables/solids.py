"""``solids.csv``: solubility products of the precipitates a buffer lab meets.

Each row is a dissolution reaction as its source writes it, in the ions poise knows: free
metal ions of ``ions.csv`` (``Ca``), the proton ``H`` (its activity is 10^-pH; a negative
count is a proton taken up, as for a hydroxide ``M(OH)2 + 2 H+ = M2+ + 2 H2O``) and the
species of a buffer system by its charge (``phosphate(-3)`` is PO4³⁻).  log K is at 25 °C
and I = 0; ΔH° (kJ/mol) is given where the source publishes one (an empty cell: the source
has none, and the value is used at 25 °C only with a warning).
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping

from catalog.records import Ion, Solid, Source, System
from catalog.rows import Row

TABLE = "solids.csv"
COLUMNS = ("solid_id", "name", "formula", "components", "log_k_25c", "dh_kj_mol", "source", "source_kind",
           "reference", "forms_slowly", "note")

_SPECIES = re.compile(r"^([a-z0-9_]+)\((-?\d+)\)$")


def _components(row: Row, ions: Mapping[str, Ion], systems: Mapping[str, System]) -> tuple[tuple[str, int], ...]:
    """``Ca:1;H:1;phosphate(-3):1`` as ((token, count), …), every token known to the catalog."""
    parts = []
    for item in row.text("components", required=True).split(";"):
        token, _, count_text = item.strip().partition(":")
        try:
            count = int(count_text)
        except ValueError:
            row.problem("components", f"expected TOKEN:COUNT with a whole count, got {item.strip()!r}")
            continue
        species = _SPECIES.match(token)
        if species:
            system = systems.get(species.group(1))
            charges = set() if system is None else {system.species_charge(j) for j in range(system.n_steps + 1)}
            if int(species.group(2)) not in charges:
                row.problem("components", f"expected a species of a system of systems.csv, got {token!r}")
        elif token != "H" and (token not in ions or ions[token].charge <= 0):
            row.problem("components", f"expected H, a cation of ions.csv or SYSTEM(CHARGE), got {token!r}")
        if count == 0:
            row.problem("components", f"expected a non-zero count, got {item.strip()!r}")
        parts.append((token, count))
    return tuple(parts)


def solids_from_rows(rows: Iterable[Row], ions: Mapping[str, Ion], systems: Mapping[str, System],
                     sources: Mapping[str, Source]) -> dict[str, Solid]:
    """Solids by id: a dissolution reaction in known ions, a sourced log K (and ΔH where published)."""
    solids: dict[str, Solid] = {}
    for row in rows:
        solid_id = row.slug("solid_id")
        row.unique("solid_id", solid_id, solids)
        components = _components(row, ions, systems)
        log_k = row.sourced("log_k_25c", "source", "source_kind", sources, minimum=-80.0, maximum=40.0)
        dh = row.number("dh_kj_mol", required=False, minimum=-500.0, maximum=500.0)
        if solid_id and log_k is not None:
            solids[solid_id] = Solid(solid_id, row.text("name", required=True), row.text("formula", required=True),
                                     components, log_k, dh, row.text("reference", required=True),
                                     row.boolean("forms_slowly"), row.text("note"))
    return solids
