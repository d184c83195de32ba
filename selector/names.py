"""Reagent and system names as people write them -> catalog ids, with "did you mean".

Names resolve case-insensitively through ids, names, formulas and aliases with spaces,
hyphens and hydrate dots folded (:func:`catalog.normalize_name`).
"""

from __future__ import annotations

import difflib
from typing import Mapping

from catalog import Catalog, load_catalog, normalize_name
from selector.errors import UnknownNameError


def resolve_reagent(name: str, catalog: Catalog | None = None) -> str:
    """The reagent id that ``name`` (id, name, formula or alias, any case) stands for."""
    catalog = catalog if catalog is not None else load_catalog()
    reagent_id = catalog.reagent_names.get(normalize_name(name))
    if reagent_id is None:
        raise UnknownNameError("reagent", name, close_names(name, catalog.reagent_names, catalog_names(catalog)))
    return reagent_id


def resolve_system(name: str, catalog: Catalog | None = None) -> str:
    """The system id that ``name`` (id, name or alias, any case) stands for."""
    catalog = catalog if catalog is not None else load_catalog()
    system_id = catalog.system_names.get(normalize_name(name))
    if system_id is None:
        display = {normalize_name(n): n for s in catalog.systems.values() for n in (s.system_id, s.name, *s.aliases)}
        raise UnknownNameError("buffer system", name, close_names(name, catalog.system_names, display))
    return system_id


def catalog_names(catalog: Catalog) -> dict[str, str]:
    """Folded name -> a display form, for suggestions."""
    return {normalize_name(n): n for r in catalog.reagents.values() for n in (r.reagent_id, r.name, *r.aliases)}


def close_names(name: str, index: Mapping[str, str], display: Mapping[str, str], limit: int = 4) -> list[str]:
    """Up to ``limit`` display names close to ``name`` (difflib ratio on folded names)."""
    folded = normalize_name(name)
    matches = difflib.get_close_matches(folded, list(index), n=limit * 3, cutoff=0.6)
    matches += [key for key in index if folded and folded in key and key not in matches]
    seen, out = set(), []
    for key in matches:
        label = display.get(key, key)
        if index[key] not in seen:
            seen.add(index[key])
            out.append(label)
        if len(out) == limit:
            break
    return out
