"""Any verified composition to bench steps: the one way a composition reaches the bench.

:func:`bench_recipe` takes a composition (reagent id -> mol/L in the final solution) that
the exact engine verifies, the spec's temperatures of use and of preparation, its volume
and its stock list, and writes what a person does: grams of each solid as bought (hydrate
and purity included), millilitres of each liquid from its density, millilitres of a stock
solution of any strength, the order of addition (dissolve, adjust the pH with the titrant
to a meter reading, add the salt, make up), the meter reading at the preparation
temperature and the pH at use with their uncertainties, the cautions of every reagent and a
large volume split into batches.  A ranked system's titration, a ``--mix`` of several
systems and the optimiser's mix all come through here.

The order of addition matters to the meter: the titrant is added while the solution holds
only the buffer forms in about :data:`~selector.recipe.compose.DISSOLVE_FRACTION` of the
volume, so the reading to titrate to is the exact pH of *that* solution (buffer forms and
titrant in the dissolving water plus the titrant's own volume, no salt) at the preparation
temperature; adding the salt and making up then moves the reading to the final one.  Both
are solved with the engine, so the salt-after-adjustment effect is computed, not ignored.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Mapping

import numpy as np

from catalog import Catalog, load_catalog
from catalog.records import Reagent
from selector.admissible import ACID_TITRANT, BASE_TITRANT, SALT_REAGENT
from selector.chemistry.equilibrium import solve_equilibrium
from selector.errors import InputError
from selector.prices import PriceBook, demo_price_book
from selector.recipe.compose import (
    DISSOLVE_FRACTION,
    TITRANT_STOCK_MOL_L,
    Recipe,
    RecipeExtras,
    RecipeLine,
    check_hazard,
    is_chelating_agent,
    stock_volume_ml,
    summarise,
    volume_text,
    weigh_text,
)
from selector.report import plus_minus
from selector.spec import BufferSpec

#: Largest batch made in one vessel [L] (common practice: a 10 L carboy or flask is the
#: largest vessel most labs stir and make up in); larger volumes are split into equal batches.
MAX_BATCH_L = 10.0

#: Role of each reagent in the order of addition, in that order.
ROLE_ORDER = ("buffer form", "chelator", "titrant", "salt for ionic strength", "other")
#: The roles that go into the starting water before the titrant.
WEIGHED_FIRST = ("buffer form", "chelator", "other")
#: Charge of the chelator form that dissolves: the free acids of EDTA and EGTA barely dissolve
#: in water and go in as base turns them into the dianion H2L2−, the form of the disodium salt
#: (common practice); the base that takes the weighed form there goes in with the chelator.
DISSOLVING_CHELATOR_CHARGE = -2
#: The chelator's share of the base is "all of the titrant" when it leaves less than this
#: fraction of it for the pH adjustment (common practice: a few drops of the stock, not a step of its own).
SHARE_IS_ALL = 0.01
TITRANT_IDS = frozenset({ACID_TITRANT, *(b for b in BASE_TITRANT.values() if b is not None)})
SALT_IDS = frozenset(SALT_REAGENT.values())


def role_of(reagent: Reagent, catalog: Catalog) -> str:
    """``buffer form``, ``chelator`` (a form of a system flagged ``chelating_agent``), ``titrant``
    (strong acid or base), ``salt for ionic strength`` or ``other`` (metal salts …)."""
    if reagent.reagent_id in TITRANT_IDS:
        return "titrant"
    if reagent.reagent_id in SALT_IDS:
        return "salt for ionic strength"
    if reagent.system_id is None:
        return "other"
    return "chelator" if is_chelating_agent(reagent.system_id, catalog) else "buffer form"


def chelator_base_mol_l(lines: list[RecipeLine], catalog: Catalog) -> float:
    """Strong base [mol/L of the final solution] that takes the chelator lines' weighed forms to
    :data:`DISSOLVING_CHELATOR_CHARGE` (0 for a form already there, e.g. Na2H2EDTA), capped
    at the recipe's base titrant (0 when the titrant is an acid or there is none)."""
    base = sum(line.conc_mol_l for line in lines if line.role == "titrant" and line.reagent_id != ACID_TITRANT)
    need = 0.0
    for line in lines:
        if line.role != "chelator":
            continue
        reagent = catalog.reagents[line.reagent_id]
        system = catalog.systems[reagent.system_id or ""]
        protons_above = reagent.system_units * (system.charge_most_protonated - DISSOLVING_CHELATOR_CHARGE) \
            - reagent.protons_removed
        need += line.conc_mol_l * max(protons_above, 0)
    return min(need, base)


def batches_for(volume_l: float) -> int:
    """How many equal batches of at most :data:`MAX_BATCH_L` make ``volume_l`` [L]."""
    return max(1, math.ceil(volume_l / MAX_BATCH_L - 1e-9))


def bench_line(reagent_id: str, role: str, conc_mol_l: float, batch_l: float, catalog: Catalog, prices: PriceBook,
               stock_mol_l: float | None = None) -> RecipeLine:
    """One reagent for one batch of ``batch_l`` litres: mL of a stock, mL of a liquid, or grams.

    A stock line is ``conc·V/stock`` millilitres; a liquid as bought is its grams of
    product (purity included) over its catalog density (``Reagent.liquid_density_g_ml``); a solid is
    grams of product, ``c·V·M/purity`` (M of the hydrate as catalogued).
    """
    reagent = catalog.reagents[reagent_id]
    cost = prices.cost({reagent_id: conc_mol_l}, batch_l, catalog)
    if stock_mol_l is not None:
        return RecipeLine(reagent_id, reagent.name, role, conc_mol_l,
                          millilitres=stock_volume_ml(conc_mol_l, batch_l, stock_mol_l), stock_mol_l=stock_mol_l,
                          cost=cost)
    grams = prices.grams_of_product(reagent_id, conc_mol_l, batch_l, catalog)
    density = reagent.liquid_density_g_ml
    return RecipeLine(reagent_id, reagent.name, role, conc_mol_l, grams=grams,
                      millilitres=None if density is None else grams / density, cost=cost)


def measure_text(line: RecipeLine, catalog: Catalog) -> str:
    """The sentence that measures one line: a stock by volume, a liquid by volume (or mass), a solid by mass."""
    if line.stock_mol_l is not None and line.millilitres is not None:
        return f"Measure {volume_text(line.millilitres)} of the {line.stock_mol_l:g} M stock of {line.name}."
    if line.millilitres is not None:
        reagent = catalog.reagents[line.reagent_id]
        return (f"Measure {volume_text(line.millilitres)} of {line.name} as bought ({line.grams:.4f} g at "
                f"{reagent.liquid_density_g_ml:g} g/mL; weigh it if your balance is handier"
                f"{'' if reagent.purity_fraction >= 1 else f', purity {reagent.purity_fraction:.3g} included'}).")
    return weigh_text(line, catalog)


def _check_stock_list(composition: Mapping[str, float], spec: BufferSpec, catalog: Catalog) -> None:
    unknown = [r for r in composition if r not in catalog.reagents]
    if unknown:
        raise InputError(f"unknown reagent id(s) {', '.join(unknown)}; give catalog reagent ids")
    if spec.in_stock is not None:
        missing = [catalog.reagents[r].name for r in composition if r not in spec.in_stock]
        if missing:
            raise InputError(f"{', '.join(missing)} {'is' if len(missing) == 1 else 'are'} needed but not in stock; "
                             "add to the stock list or choose other forms")


def starting_water_l(lines: list[RecipeLine], batch_l: float) -> float:
    """Water to start a batch with [L]: :data:`DISSOLVE_FRACTION` of the batch less what the
    buffer forms bring as volumes (stocks, liquids), never below zero.

    Raises
    ------
    InputError
        if those volumes and the titrant's add up to more than the batch.
    """
    added_l = sum(line.millilitres or 0.0 for line in lines if line.role in WEIGHED_FIRST) / 1000.0
    titrant_l = sum(line.millilitres or 0.0 for line in lines if line.role == "titrant") / 1000.0
    if added_l + titrant_l > batch_l:
        raise InputError(f"the stocks, liquids and titrant add up to {(added_l + titrant_l) * 1000:.4g} mL, more than "
                         f"the {batch_l * 1000:.4g} mL to make: use stronger stocks")
    return max(DISSOLVE_FRACTION * batch_l - added_l, 0.0)


def _check_stocks(stocks: Mapping[str, float], catalog: Catalog) -> None:
    """InputError for a stock of a solid that would not dissolve (grams of product per litre of
    stock above the catalog's solubility at 25 °C, grams per litre of water: approximate)."""
    for reagent_id, stock_mol_l in stocks.items():
        reagent = catalog.reagents[reagent_id]
        grams_per_l = stock_mol_l * reagent.molar_mass_g_mol / reagent.purity_fraction
        if reagent.physical_form == "solid" and reagent.solubility_g_l_25c is not None \
                and grams_per_l > reagent.solubility_g_l_25c.value:
            raise InputError(f"a {stock_mol_l:g} M stock of {reagent.name} needs {grams_per_l:.4g} g/L, above its "
                             f"solubility of about {reagent.solubility_g_l_25c.value:g} g/L at 25 °C: use a weaker stock")


def adjustment_ph(composition: Mapping[str, float], lines: list[RecipeLine], batch_l: float,
                  temperature_c: float, catalog: Catalog) -> float:
    """pH the meter reads at the end of the titrant addition, before the salt [pH].

    At that moment a batch of ``batch_l`` litres holds the buffer forms and the titrant
    (no salt) in the starting water (:func:`starting_water_l`) plus the volumes of the
    stocks, liquids and titrant added, so every amount is scaled by V / (that volume) and
    the solution solved at ``temperature_c`` [°C] with the engine.
    """
    volume_l = starting_water_l(lines, batch_l) + sum(line.millilitres or 0.0 for line in lines
                                                      if line.role != "salt for ionic strength") / 1000.0
    scale = batch_l / volume_l
    ids = [line.reagent_id for line in lines if line.role != "salt for ionic strength"]
    amounts = np.array([composition[r] * scale for r in ids])
    return float(solve_equilibrium(ids, amounts, temperature_c, catalog=catalog).ph[0])


def _chelator_steps(lines: list[RecipeLine], titrants: list[RecipeLine], batch_l: float, into: str,
                    catalog: Catalog) -> tuple[list[str], float]:
    """The chelator's steps and the millilitres of base titrant they use [mL of the stock].

    A chelator weighed as the free acid goes in with the base that takes it to
    :data:`DISSOLVING_CHELATOR_CHARGE` (:func:`chelator_base_mol_l`), before any metal salt,
    so that it dissolves and the metal meets the chelator, not a suspension (common practice).
    """
    chelators = [line for line in lines if line.role == "chelator"]
    base = [line for line in titrants if line.reagent_id != ACID_TITRANT and line.stock_mol_l]
    pre_mol_l = chelator_base_mol_l(lines, catalog) if base else 0.0
    if pre_mol_l <= 0:
        return [f"{measure_text(line, catalog)[:-1]}; add it{into} and let it dissolve"
                f"{' before any metal salt goes in' if any(x.role == 'other' for x in lines) else ''}." for line in chelators], 0.0
    pre_ml = stock_volume_ml(pre_mol_l, batch_l, base[0].stock_mol_l or 1.0)
    named = " and ".join(line.name for line in chelators)
    steps = [f"{measure_text(line, catalog)[:-1]}; add it{into}." for line in chelators]
    share = "all of the titrant" if pre_ml >= (base[0].millilitres or 0.0) * (1 - SHARE_IS_ALL) else "part of the titrant"
    metals = "; the metal salts go in after it" if any(line.role == "other" for line in lines) else ""
    steps.append(f"Add about {volume_text(pre_ml)} of the {base[0].stock_mol_l:g} M {base[0].name} ({share}) and stir "
                 f"until the {named} has dissolved: the free acid dissolves only once base is in (common practice)"
                 f"{metals}.")
    return steps, pre_ml


def _titrant_step(line: RecipeLine, pre_ml: float, prep_temperature_c: float, adjust_ph: float | None) -> str:
    """Bring the meter to the adjustment reading with the titrant (its rest after the chelator's share)."""
    total_ml = line.millilitres or 0.0
    if pre_ml <= 0:
        return (f"At {prep_temperature_c:g} °C, add {line.stock_mol_l:g} M {line.name} (about "
                f"{volume_text(total_ml)}) until the meter reads pH {adjust_ph:.2f}.")
    rest = max(total_ml - pre_ml, 0.0)
    if rest <= total_ml * SHARE_IS_ALL:
        return (f"At {prep_temperature_c:g} °C, the meter should read about pH {adjust_ph:.2f} (the chelator step "
                f"added all the {line.name}); if it reads lower, add {line.stock_mol_l:g} M {line.name} dropwise "
                f"until it reads pH {adjust_ph:.2f}.")
    return (f"At {prep_temperature_c:g} °C, add the rest of the {line.stock_mol_l:g} M {line.name} (about "
            f"{volume_text(rest)} more, {volume_text(total_ml)} in all) until the meter reads pH {adjust_ph:.2f}.")


def _batch_steps(lines: list[RecipeLine], recipe: Recipe, adjust_ph: float | None, batch_l: float,
                 catalog: Catalog) -> list[str]:
    """The steps of one batch, in the order of addition."""
    spec_prep, spec_use = recipe.prep_temperature_c, recipe.temperature_c
    titrants = [line for line in lines if line.role == "titrant"]
    salts = [line for line in lines if line.role == "salt for ionic strength"]
    water_l = starting_water_l(lines, batch_l)
    steps = [f"Put about {volume_text(water_l * 1000)} of water in the vessel and stir."] if water_l > 0 else []
    into = " to the water" if water_l > 0 else ""
    chelator_steps, pre_ml = _chelator_steps(lines, titrants, batch_l, into, catalog)
    after = " (after the chelator has dissolved)" if chelator_steps else ""
    steps += [f"{measure_text(line, catalog)[:-1]}; add it{into}"
              f"{' and let it dissolve' if line.millilitres is None else ''}." for line in lines
              if line.role == "buffer form"]
    steps += chelator_steps
    steps += [f"{measure_text(line, catalog)[:-1]}; add it{into}{after}"
              f"{' and let it dissolve' if line.millilitres is None else ''}." for line in lines if line.role == "other"]
    for line in titrants:
        steps.append(_titrant_step(line, pre_ml if line.reagent_id != ACID_TITRANT else 0.0, spec_prep, adjust_ph))
    for line in salts:
        steps.append(f"{measure_text(line, catalog)[:-1]} and dissolve it in the solution"
                     f"{' (after the pH adjustment)' if titrants else ''}.")
    steps.append(f"Make up to {volume_text(batch_l * 1000)} with water and mix.")
    final = (f"Check at {spec_prep:g} °C: the meter reads pH {recipe.meter_ph_at_prep:.2f}"
             f"{plus_minus(recipe.meter_ph_uncertainty, '.2f')}")
    if adjust_ph is not None and abs(adjust_ph - recipe.meter_ph_at_prep) >= 0.005:
        final += (f" ({'adding the salt and ' if salts else ''}making up moves it by "
                  f"{recipe.meter_ph_at_prep - adjust_ph:+.2f} from the adjustment reading: do not re-adjust)")
    steps.append(final + ".")
    steps.append(f"At the use temperature, {spec_use:g} °C, the pH is {recipe.verified_ph_at_use:.2f}"
                 f"{plus_minus(recipe.verified_ph_uncertainty, '.2f')}.")
    return steps


def bench_recipe(composition: Mapping[str, float], spec: BufferSpec, catalog: Catalog | None = None,
                 prices: PriceBook | None = None, *, route: str = "composition",
                 stocks: Mapping[str, float] | None = None, extras: RecipeExtras = RecipeExtras()) -> Recipe:
    """Bench steps for any verified composition, one or several buffer systems.

    Parameters
    ----------
    composition : mapping of str to float
        Reagent id -> concentration in the final solution [mol/L] (buffer forms, titrant,
        salt); zero amounts are left out.
    spec : BufferSpec
        Target pH, temperature of use and of preparation [°C], volume [L] and stock list
        (``in_stock`` applies to every reagent, titrants and salts included).
    catalog : Catalog, optional
        The catalog (default the shipped one).
    prices : PriceBook, optional
        Prices (default the invented demo prices).
    route : str
        The route's name in the recipe.
    stocks : mapping of str to float, optional
        Reagent id -> concentration [mol/L] of a stock solution the lab draws it from
        (titrants default to :data:`~selector.recipe.compose.TITRANT_STOCK_MOL_L`).
    extras : RecipeExtras
        What a route adds (the Henderson-Hasselbalch comparison …).

    Returns
    -------
    Recipe
        Verified at the use and preparation temperatures (within
        :data:`~selector.recipe.compose.VERIFY_TOLERANCE_PH` of target); amounts are for
        one batch of ``volume_l / batches`` litres (:data:`MAX_BATCH_L`).

    Raises
    ------
    InputError
        for an unknown reagent, one not in stock, or a hazardous system without opt-in.
    InfeasibleSpecError
        when the composition does not verify at the target pH.
    """
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    composition = {r: float(c) for r, c in composition.items() if c > 0}
    _check_stock_list(composition, spec, catalog)
    systems = tuple(dict.fromkeys(s for s in (catalog.reagents[r].system_id for r in composition) if s is not None))
    check_hazard(systems, spec, catalog)
    stocks = dict(stocks or {})
    _check_stocks(stocks, catalog)
    batches = batches_for(spec.volume_l)
    batch_l = spec.volume_l / batches
    ordered = sorted(composition, key=lambda r: ROLE_ORDER.index(role_of(catalog.reagents[r], catalog)))
    lines = []
    for r in ordered:
        role = role_of(catalog.reagents[r], catalog)
        stock = stocks.get(r, TITRANT_STOCK_MOL_L if role == "titrant" else None)
        lines.append(bench_line(r, role, composition[r], batch_l, catalog, prices, stock))
    buffer_conc = sum(line.conc_mol_l * catalog.reagents[line.reagent_id].system_units for line in lines
                      if line.role == "buffer form")
    recipe = summarise("+".join(systems) or "water", route, spec, composition, lines, [], catalog, prices,
                       buffer_conc, extras)
    has_titrant = any(line.role == "titrant" for line in lines)
    adjust = adjustment_ph(composition, lines, batch_l, spec.prep_temperature_c, catalog) if has_titrant else None
    steps = _batch_steps(lines, recipe, adjust, batch_l, catalog)
    if batches > 1:
        steps = [f"Make {volume_text(spec.volume_l * 1000)} as {batches} × {volume_text(batch_l * 1000)} batches; "
                 "every amount below is for one batch.", *steps,
                 f"Repeat for each of the {batches} batches, then combine them and mix."]
    titrant_u = recipe.titrant_ml_uncertainty   # summarise sizes it for the whole volume
    return dataclasses.replace(recipe, steps=recipe.steps + tuple(steps), batches=batches, adjust_meter_ph=adjust,
                               titrant_ml_uncertainty=None if titrant_u is None else titrant_u / batches)


def composition_recipe(amounts: Mapping[str, float], spec: BufferSpec, catalog: Catalog | None = None,
                       prices: PriceBook | None = None, *, ph_from_composition: bool = True,
                       stocks: Mapping[str, float] | None = None) -> Recipe:
    """Bench steps for a composition given by reagent names (what ``poise ph`` solves).

    Parameters
    ----------
    amounts : mapping of str to float
        Reagent name (id, name, formula or alias) -> concentration in the final solution [mol/L].
    spec : BufferSpec
        Temperatures [°C], volume [L], stock list; its pH is the target when
        ``ph_from_composition`` is False.
    ph_from_composition : bool
        True: the target is the composition's own exact pH at the use temperature (the
        recipe then says what the meter reads at preparation); False: the composition must
        verify at the spec's pH.
    stocks : mapping of str to float, optional
        Reagent id -> stock concentration [mol/L].
    """
    from selector.chemistry.equilibrium import composition_ph
    from selector.names import resolve_reagent

    catalog = catalog if catalog is not None else load_catalog()
    composition: dict[str, float] = {}
    for name, conc in amounts.items():
        reagent_id = resolve_reagent(name, catalog)
        if not (np.isfinite(conc) and conc >= 0):
            raise InputError(f"{name}: concentration {conc!r} mol/L; give a concentration of zero or more, e.g. 25mM")
        composition[reagent_id] = composition.get(reagent_id, 0.0) + float(conc)
    if not any(c > 0 for c in composition.values()):
        raise InputError("give at least one reagent with a concentration above zero, e.g. KH2PO4=25mM")
    if ph_from_composition:
        spec = dataclasses.replace(spec, ph=composition_ph(composition, spec.temperature_c, catalog))
    return bench_recipe(composition, spec, catalog, prices, route="composition", stocks=stocks)
