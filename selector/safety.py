"""Safety text shared by every output that names hazardous reagents or systems."""

from __future__ import annotations

from typing import Iterable

from catalog import Catalog, load_catalog

#: Closing line of every output that lists cautions.
SAFETY_NOTICE = ("Local regulations and your institution's safety rules take precedence over "
                 "these notes; read the supplier's safety data sheet before use.")


def hazard_cautions(reagent_ids: Iterable[str], catalog: Catalog | None = None) -> list[str]:
    """The caution sentences of the hazardous reagents among ``reagent_ids`` (flags named)."""
    catalog = catalog if catalog is not None else load_catalog()
    out = []
    for reagent_id in reagent_ids:
        reagent = catalog.reagents[reagent_id]
        if reagent.hazard_flags:
            out.append(f"{reagent.name} ({', '.join(reagent.hazard_flags)}): {reagent.cautions}")
    return out
