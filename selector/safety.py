"""Safety text shared by every output that names hazardous reagents or systems."""

from __future__ import annotations

from typing import Iterable

from catalog import Catalog

#: Closing line of every output that lists cautions.
SAFETY_NOTICE = ("Local regulations and your institution's safety rules take precedence over "
                 "these notes; read the supplier's safety data sheet before use.")


def hazard_cautions(reagent_ids: Iterable[str], catalog: Catalog) -> list[str]:
    """The caution sentences of the hazardous reagents among ``reagent_ids`` (flags named).

    Parameters
    ----------
    reagent_ids : iterable of str
        Catalog ids of the reagents in a solution, recipe or mix.
    catalog : Catalog
        The catalog the ids belong to.

    Returns
    -------
    list of str
        One sentence per reagent with hazard flags, ``"name (flags): cautions"``; empty when
        none is hazardous.  An output that shows any of them closes with :data:`SAFETY_NOTICE`.
    """
    out = []
    for reagent_id in reagent_ids:
        reagent = catalog.reagents[reagent_id]
        if reagent.hazard_flags:
            out.append(f"{reagent.name} ({', '.join(reagent.hazard_flags)}): {reagent.cautions}")
    return out
