"""pH standards made by their published recipes (molalities: grams per kg of water)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from catalog import Catalog, load_catalog
from catalog.records import PhStandard
from selector.chemistry.equilibrium import molal_to_molar, solve_equilibrium
from selector.errors import InputError
from selector.safety import SAFETY_NOTICE
from selector.textsafe import echo

#: Water masses a standard is made for [kg] (a bound of the tool, common practice: from
#: 1 g of water for a micro-scale standard to a 1000 L batch).
WATER_KG_MIN, WATER_KG_MAX = 0.001, 1000.0


@dataclass(frozen=True)
class StandardRecipe:
    """A pH standard made by its published recipe (molalities: grams per kg of water).

    ``label`` is the readable id (``phosphate 1:3.5``); ``grams`` of each product as bought per ``water_kg`` [kg] of water; ``table`` the
    published (°C, pH(PS), source); ``engine_ph`` poise's own (°C, pH).
    """

    standard_id: str
    label: str
    name: str
    water_kg: float
    grams: dict[str, float]
    table: tuple[tuple[float, float, str], ...]
    engine_ph: tuple[tuple[float, float], ...]
    preparation: str
    note: str
    cautions: tuple[str, ...]

    def as_json(self) -> dict:
        return {"standard": self.standard_id, "label": self.label, "name": self.name, "water_kg": self.water_kg,
                "grams": self.grams, "preparation": self.preparation, "note": self.note,
                "ph_table": [{"temperature_c": t, "ph": p, "source": s} for t, p, s in self.table],
                "engine_ph": [{"temperature_c": t, "ph": p} for t, p in self.engine_ph],
                "cautions": list(self.cautions)}


def standard_label(standard: PhStandard) -> str:
    """A readable id: ``phosphate 1:3.5`` for a two-salt standard (the ratio of its molalities),
    the catalog id otherwise (``borax``)."""
    if "_" not in standard.standard_id or len(standard.components_mol_kg) != 2:
        return standard.standard_id
    (_, first), (_, second) = standard.components_mol_kg
    return f"{standard.standard_id.split('_')[0]} 1:{second / first:.2g}"


def _standard_key(text: str) -> str:
    return "".join(text.lower().split()).replace("_", "")


def find_standard(name: str, catalog: Catalog) -> PhStandard:
    """The standard whose id or readable label (:func:`standard_label`) is ``name`` (case,
    spaces and underscores ignored); InputError listing the labels otherwise."""
    wanted = _standard_key(name)
    for standard in catalog.ph_standards.values():
        if wanted in (_standard_key(standard.standard_id), _standard_key(standard_label(standard))):
            return standard
    labels = ", ".join(repr(standard_label(s)) for s in catalog.ph_standards.values())
    raise InputError(f"unknown pH standard {echo(name)}; standards: {labels}")


def list_standards(catalog: Catalog | None = None) -> tuple[tuple[str, str], ...]:
    """(readable id, name) of every pH standard in the catalog, in catalog order."""
    catalog = catalog if catalog is not None else load_catalog()
    return tuple((standard_label(standard), standard.name) for standard in catalog.ph_standards.values())


def standard_recipe(standard_id: str, water_kg: float = 1.0, catalog: Catalog | None = None) -> StandardRecipe:
    """The recipe of a pH standard buffer and its pH table across temperature, from the catalog.

    Grams are of the product as bought (purity included) per ``water_kg`` of water, because
    the standards are defined by molality.  ``engine_ph`` is poise's own value beside the
    published one (Davies activity; see tests/test_ph_standards.py for the agreement).

    Raises
    ------
    InputError
        for an unknown standard or a water mass outside :data:`WATER_KG_MIN` to
        :data:`WATER_KG_MAX`.
    """
    catalog = catalog if catalog is not None else load_catalog()
    standard = find_standard(standard_id, catalog)
    if not (np.isfinite(water_kg) and WATER_KG_MIN <= water_kg <= WATER_KG_MAX):
        raise InputError(f"water mass {water_kg!r} kg is outside {WATER_KG_MIN:g} to {WATER_KG_MAX:g} kg")
    grams = {}
    for reagent_id, molality in standard.components_mol_kg:
        reagent = catalog.reagents[reagent_id]
        grams[reagent_id] = molality * water_kg * reagent.molar_mass_g_mol / reagent.purity_fraction
    ids = [r for r, _ in standard.components_mol_kg]
    molal = np.array([m for _, m in standard.components_mol_kg])
    temperatures = np.array([t for t, _ in standard.values])
    amounts = molal[None, :] * np.asarray(molal_to_molar(1.0, temperatures))[:, None]
    engine = solve_equilibrium(ids, amounts, temperatures, catalog=catalog).ph
    cautions = tuple(f"{catalog.reagents[r].name}: {catalog.reagents[r].cautions}" for r in ids
                     if catalog.reagents[r].cautions) + (SAFETY_NOTICE,)
    table = tuple((t, v.value, v.source or v.source_kind) for t, v in standard.values)
    return StandardRecipe(standard.standard_id, standard_label(standard), standard.name, water_kg, grams, table,
                          tuple((float(t), float(p)) for t, p in zip(temperatures, engine)),
                          standard.preparation, standard.note, cautions)
