"""What a stored recipe JSON says: its composition, its verified figures, and the catalog's fingerprint.

A book stores the JSON it is given whole (``Recipe.as_json()`` of a bench recipe, or the
JSON of an optimised mix, whose bench recipe may sit under ``recipe``); these readers find
the composition and the figures in any of those shapes and never raise for an odd one.
"""

from __future__ import annotations

import hashlib
import math
from typing import Any, Mapping

from catalog import Catalog

#: The figures read from a recipe's JSON (:func:`figures_of`), in the order shown.
FIGURE_KEYS = ("target_ph", "temperature_c", "prep_temperature_c", "verified_ph_at_use", "meter_ph_at_prep",
               "ionic_strength_mol_l", "capacity_mol_l_per_ph", "osmolarity_osmol_l", "volume_l", "cost")

#: The figures that are pH values (shown to 4 decimals).
PH_KEYS = ("target_ph", "verified_ph_at_use", "meter_ph_at_prep")

#: How each figure is named for a person, with its unit.
FIGURE_LABELS = {"target_ph": ("target pH", ""), "temperature_c": ("use temperature", " °C"),
                 "prep_temperature_c": ("preparation temperature", " °C"),
                 "verified_ph_at_use": ("verified pH at use", ""), "meter_ph_at_prep": ("meter pH at preparation", ""),
                 "ionic_strength_mol_l": ("ionic strength", " mol/L"),
                 "capacity_mol_l_per_ph": ("buffer capacity β", " mol/L per pH"),
                 "osmolarity_osmol_l": ("osmolarity (ideal)", " Osm/L"), "volume_l": ("volume", " L"),
                 "cost": ("reagent cost (demo or sheet prices)", "")}


#: The fingerprints computed in this process, by catalog identity (the records are frozen).
_FINGERPRINTS: dict[int, tuple[Catalog, str]] = {}


def catalog_fingerprint(catalog: Catalog) -> str:
    """A short hash of every record of ``catalog`` (16 hex digits of SHA-256).

    Two catalogs with the same rows and numbers give the same fingerprint, whatever the
    process; any edited number, added or removed row changes it.  The records are frozen
    dataclasses in file order, so their ``repr`` is a canonical text of the catalog.  Computed
    once per catalog object (about 35 ms for the shipped one).
    """
    cached = _FINGERPRINTS.get(id(catalog))
    if cached is not None and cached[0] is catalog:
        return cached[1]
    text = repr((catalog.sources, catalog.systems, catalog.ions, catalog.reagents, catalog.metal_binding,
                 catalog.uv_cutoffs, catalog.flags, catalog.ph_standards, catalog.polymerisation))
    fingerprint = hashlib.sha256(text.encode("utf-8")).hexdigest()[:16]
    if len(_FINGERPRINTS) >= 8:
        _FINGERPRINTS.clear()
    _FINGERPRINTS[id(catalog)] = (catalog, fingerprint)
    return fingerprint


def recipe_part(recipe_json: Mapping[str, Any]) -> Mapping[str, Any]:
    """The bench recipe inside a JSON: its ``recipe`` object when it has one (an optimised mix), else itself."""
    inner = recipe_json.get("recipe")
    return inner if isinstance(inner, Mapping) else recipe_json


def finite_number(value: Any) -> float | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        return None
    return float(value)


def composition_of(recipe_json: Mapping[str, Any]) -> dict[str, float]:
    """Reagent id -> amount in the final solution [mol/L] of a stored recipe.

    Read from ``composition_mol_l``, else from ``reagents`` as a list of objects with
    ``id`` and ``conc_mol_l`` (a bench recipe) or as an object id -> mol/L (an optimised mix);
    the ``recipe`` object inside the JSON first when there is one.
    """
    for part in (recipe_part(recipe_json), recipe_json):
        given = part.get("composition_mol_l")
        if isinstance(given, Mapping):
            return {str(k): float(v) for k, v in given.items() if finite_number(v) is not None}
        reagents = part.get("reagents")
        if isinstance(reagents, Mapping):
            return {str(k): float(v) for k, v in reagents.items() if finite_number(v) is not None}
        if isinstance(reagents, list):
            return {str(r["id"]): float(r["conc_mol_l"]) for r in reagents
                    if isinstance(r, Mapping) and "id" in r and finite_number(r.get("conc_mol_l")) is not None}
    return {}


def figures_of(recipe_json: Mapping[str, Any], spec: Mapping[str, Any]) -> dict[str, float]:
    """The verified figures of a recipe JSON, :data:`FIGURE_KEYS` that it has (numbers only).

    A key is looked up in the recipe (its ``recipe`` object first), then in its ``verified``
    object (an optimised mix: ``ph`` is the verified pH at use), then in the spec
    (``target_ph`` is the spec's ``ph``; temperatures and volume).
    """
    part = recipe_part(recipe_json)
    given = recipe_json.get("verified")
    verified: Mapping[str, Any] = given if isinstance(given, Mapping) else {}
    from_spec = {"target_ph": spec.get("ph"), "temperature_c": spec.get("temperature_c"),
                 "prep_temperature_c": spec.get("prep_temperature_c"), "volume_l": spec.get("volume_l")}
    out: dict[str, float] = {}
    for key in FIGURE_KEYS:
        candidates = (part.get(key), recipe_json.get(key), verified.get(key),
                      verified.get("ph") if key == "verified_ph_at_use" else None,
                      recipe_json.get("cost_for_volume") if key == "cost" else None, from_spec.get(key))
        for value in candidates:
            number = finite_number(value)
            if number is not None:
                out[key] = number
                break
    return out


def steps_of(recipe_json: Mapping[str, Any]) -> list[str]:
    steps = recipe_part(recipe_json).get("steps")
    return [str(s) for s in steps] if isinstance(steps, list) else []


def figure_text(value: Any) -> str:
    number = finite_number(value)
    return "none" if number is None else f"{number:.6g}"


def meter_composition(recipe_json: Mapping[str, Any], composition: dict[str, float]) -> dict[str, float]:
    """What the meter reads at preparation: the stock when the recipe says so (``stock.stock_composition_mol_l``)."""
    stock = recipe_part(recipe_json).get("stock")
    given = stock.get("stock_composition_mol_l") if isinstance(stock, Mapping) else None
    if isinstance(given, Mapping) and given:
        return {str(k): float(v) for k, v in given.items() if finite_number(v) is not None}
    return composition
