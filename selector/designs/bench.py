"""Bench steps of any composition a design makes: the one place designs call the recipe package.

A series member, a span mixture or a stock is a composition [mol/L] of several reagents,
perhaps of two or three systems.  :func:`bench_recipe` turns it into recipe lines (grams of
each solid, mL of the 1 M titrant stock), the steps in words and a verified
:class:`selector.recipe.Recipe` through the recipe package's public pieces
(:func:`selector.recipe.compose.recipe_line`, :func:`~selector.recipe.compose.summarise`).
A composition without a buffer system (the salt stock) gets its lines and steps only
(:func:`salt_stock_steps`).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from catalog import Catalog
from selector.designs.common import main_system
from selector.errors import InputError
from selector.prices import PriceBook
from selector.recipe import TITRANT_STOCK_MOL_L, Recipe, RecipeLine
from selector.recipe.compose import (
    DISSOLVE_FRACTION,
    recipe_line,
    stock_volume_ml,
    summarise,
    volume_text,
    weigh_text,
)
from selector.safety import SAFETY_NOTICE, hazard_cautions
from selector.spec import BufferSpec

#: The route name a design's recipe carries.
DESIGN_ROUTE = "design"


@dataclass(frozen=True)
class Roles:
    """Which reagents of a design are titrants (drawn from a 1 M stock) and which the salt."""

    titrants: tuple[str, ...]
    salt: str | None


def _lines(composition: dict[str, float], spec: BufferSpec, roles: Roles, catalog: Catalog,
           prices: PriceBook) -> list[RecipeLine]:
    lines = []
    for r, conc in composition.items():
        if r in roles.titrants:
            lines.append(recipe_line(r, "titrant", conc, spec, catalog, prices, as_stock=TITRANT_STOCK_MOL_L))
        elif r == roles.salt:
            lines.append(recipe_line(r, "salt for ionic strength", conc, spec, catalog, prices))
        else:
            lines.append(recipe_line(r, "buffer form", conc, spec, catalog, prices))
    return lines


def bench_recipe(composition: dict[str, float], spec: BufferSpec, target_ph: float, roles: Roles,
                 catalog: Catalog, prices: PriceBook) -> Recipe:
    """The verified bench recipe of ``composition`` [mol/L] for ``spec.volume_l`` at ``target_ph``.

    ``target_ph`` is the exact pH of the composition at the use temperature (a member's
    target, or a stock's own pH); the meter reading at the preparation temperature comes
    from the exact engine (:func:`selector.recipe.compose.summarise`), which also re-solves
    the composition and refuses it beyond 0.005 pH of ``target_ph``.

    Raises
    ------
    InfeasibleSpecError
        the recipe does not verify (:func:`selector.recipe.compose.summarise`).
    """
    at = dataclasses.replace(spec, ph=round(float(target_ph), 6))
    lines = _lines(composition, at, roles, catalog, prices)
    system_id = main_system(composition, catalog)
    if system_id is None:
        raise InputError("a bench recipe of a design needs a buffer system in the composition")
    solids = [line for line in lines if line.grams is not None]
    steps = [weigh_text(line, catalog) for line in solids]
    steps.append(f"Dissolve in about {volume_text(DISSOLVE_FRACTION * at.volume_l * 1000)} of water.")
    from selector.chemistry.equilibrium import composition_ph

    meter = composition_ph(composition, at.prep_temperature_c, catalog)
    for line in lines:
        if line.millilitres is not None:
            steps.append(f"Add {line.stock_mol_l:g} M {line.name}, {volume_text(line.millilitres)}; at "
                         f"{at.prep_temperature_c:g} °C the meter should then read pH {meter:.2f} "
                         "(add the last part dropwise to that reading).")
    if not any(line.millilitres is not None for line in lines):
        steps.append(f"At {at.prep_temperature_c:g} °C the meter should read pH {meter:.2f}; "
                     "if it does not, check the weighings rather than titrating.")
    steps += [f"Make up to {volume_text(at.volume_l * 1000)} with water and mix.",
              f"At the use temperature, {at.temperature_c:g} °C, the pH is {target_ph:.2f}."]
    buffer_conc = sum(v * catalog.reagents[r].system_units for r, v in composition.items()
                      if catalog.reagents[r].system_id)
    return summarise(system_id, DESIGN_ROUTE, at, composition, lines, steps, catalog, prices, buffer_conc)


@dataclass(frozen=True)
class SaltSteps:
    """The bench steps of a salt stock (no buffer system, no pH to verify)."""

    lines: tuple[RecipeLine, ...]
    steps: tuple[str, ...]
    cautions: tuple[str, ...]

    def as_json(self) -> dict:
        return {"steps": list(self.steps),
                "reagents": [{"id": line.reagent_id, "name": line.name, "role": line.role,
                              "conc_mol_l": line.conc_mol_l, "grams": round(line.grams or 0.0, 4)}
                             for line in self.lines],
                "cautions": list(self.cautions)}


def salt_stock_steps(salt_id: str, conc_mol_l: float, volume_l: float, spec: BufferSpec, catalog: Catalog,
                     prices: PriceBook) -> SaltSteps:
    """Weigh, dissolve, make up: ``conc_mol_l`` of the salt in ``volume_l`` litres."""
    at = dataclasses.replace(spec, volume_l=volume_l)
    line = recipe_line(salt_id, "salt stock", conc_mol_l, at, catalog, prices)
    steps = (weigh_text(line, catalog),
             f"Dissolve in about {volume_text(DISSOLVE_FRACTION * volume_l * 1000)} of water.",
             f"Make up to {volume_text(volume_l * 1000)} with water and mix.")
    cautions = tuple(hazard_cautions([salt_id], catalog)) + (SAFETY_NOTICE,)
    return SaltSteps((line,), steps, cautions)


def titrant_ml_per_l(conc_mol_l: float) -> float:
    """mL of the 1 M titrant stock per litre of final solution for ``conc_mol_l`` [mol/L]."""
    return stock_volume_ml(conc_mol_l, 1.0, TITRANT_STOCK_MOL_L)
