"""Preparation routes: a registry of route name -> the function that builds its recipe.

- ``titrate``   weigh one form and bring it to pH with strong base (or acid);
- ``two-forms`` weigh an acid form and its conjugate salt, no titration;
- ``stocks``    mix two equimolar stock solutions (with a table of volumes across pH);
- ``stock10x``  make a 10× stock at the pH that lands the 1× dilution on target.

Every route takes one :class:`RouteInputs` and returns its verified recipes (empty when
no pair of forms brackets the target).  :func:`make_recipes` resolves the system, sizes
the buffer and runs the chosen routes from :data:`ROUTE_REGISTRY`.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Callable, Mapping, Sequence

import numpy as np

from catalog import Catalog, load_catalog
from catalog.records import Reagent
from selector.admissible import SALT_REAGENT
from selector.chemistry.equilibrium import solve_equilibrium
from selector.errors import InfeasibleSpecError, InputError, PhOutOfReachError
from selector.names import resolve_system
from selector.prices import PriceBook, demo_price_book
from selector.recipe.bench import bench_recipe
from selector.recipe.compose import (
    Recipe,
    RecipeExtras,
    check_hazard,
    meter_sentence,
    reagent_forms,
    recipe_line,
    stock_volume_ml,
    stocked,
    summarise,
    textbook_gap,
    volume_text,
    weigh_text,
)
from selector.recipe.mix import titrate_systems
from selector.recipe.sizing import buffer_concentration
from selector.recipe.solve import AmountLine, solve_composition
from selector.spec import BufferSpec

#: Stock concentration factor of the ``stock10x`` route.
STOCK_FACTOR = 10.0
#: Concentration of the equimolar stocks of the ``stocks`` route, as a multiple of the final.
EQUIMOLAR_STOCK_FACTOR = 2.0
#: The ``stocks`` route's mixing table spans the target ± this [pH] ...
MIXING_TABLE_HALF_SPAN_PH = 1.0
#: ... in steps of this [pH].
MIXING_TABLE_STEP_PH = 0.2


@dataclass(frozen=True)
class Split:
    """Two adjacent forms that bracket the target and the exact composition between them [mol/L]."""

    acid: Reagent
    base: Reagent
    composition: dict[str, float]
    salt_id: str


def find_split(system_id: str, spec: BufferSpec, conc_mol_l: float, forms: Sequence[Reagent],
               catalog: Catalog) -> Split | None:
    """The first pair of adjacent forms whose mix reaches the target, or None.

    Raises
    ------
    InfeasibleSpecError
        for a failure other than an out-of-reach pH (e.g. the ionic strength).
    """
    salt_id = SALT_REAGENT[spec.salt]   # checked against the stock list only where used
    failures: list[InfeasibleSpecError] = []
    for acid, base in zip(forms, forms[1:]):
        line = AmountLine((acid.reagent_id, base.reagent_id), np.array([conc_mol_l / acid.system_units, 0.0]),
                          np.array([-conc_mol_l / acid.system_units, conc_mol_l / base.system_units]))
        try:
            composition = solve_composition(line, spec, 0.0, 1.0, salt_id, catalog,
                                            f"{catalog.systems[system_id].short_name} from {acid.name} and {base.name}")
        except InfeasibleSpecError as error:
            failures.append(error)
            continue
        return Split(acid, base, composition, salt_id)
    # Only a failure other than "out of reach" (e.g. the ionic strength) says more than None.
    for failure in failures:
        if not isinstance(failure, PhOutOfReachError):
            raise failure
    return None


class SplitOnce:
    """:func:`find_split` for the routes of one :func:`make_recipes` call, solved once and
    shared (two-forms, stocks and stock10x all start from the same split)."""

    def __init__(self, system_id: str, spec: BufferSpec, conc_mol_l: float, forms: Sequence[Reagent],
                 catalog: Catalog):
        self._arguments = (system_id, spec, conc_mol_l, forms, catalog)
        self._solved = False
        self._split: Split | None = None
        self._error: InfeasibleSpecError | None = None

    def __call__(self) -> Split | None:
        if not self._solved:
            self._solved = True
            try:
                self._split = find_split(*self._arguments)
            except InfeasibleSpecError as error:
                self._error = error
        if self._error is not None:
            raise self._error
        return self._split


@dataclass(frozen=True)
class RouteInputs:
    """What every route starts from: the system, the spec, the buffer concentration
    [mol/L], the admitted forms (in order of protons removed), the shared split and the
    stock solutions (reagent id -> mol/L) the bench routes draw from."""

    system_id: str
    spec: BufferSpec
    conc_mol_l: float
    forms: tuple[Reagent, ...]
    catalog: Catalog
    prices: PriceBook
    split: Callable[[], Split | None]
    stocks: Mapping[str, float] = dataclasses.field(default_factory=dict)


def _titrate_from(start: str, inputs: RouteInputs) -> list[Recipe]:
    """Weigh one form and titrate it to the target (:func:`selector.recipe.mix.titrate_systems`)."""
    titration = titrate_systems({inputs.system_id: inputs.conc_mol_l}, inputs.spec, inputs.catalog, inputs.prices,
                                start)
    route = "titrate" if start == "least-titrant" else "titrate-base"
    return [bench_recipe(titration.composition, inputs.spec, inputs.catalog, inputs.prices, route=route,
                         stocks=inputs.stocks)]


def titrate(inputs: RouteInputs) -> list[Recipe]:
    """Weigh one form and titrate: the form next below the target with strong base, or the
    form next above it with strong acid, whichever needs less titrant."""
    return _titrate_from("least-titrant", inputs)


def titrate_base(inputs: RouteInputs) -> list[Recipe]:
    """Weigh the form next above the target (Tris base, the usual practice) and bring it
    down with strong acid."""
    return _titrate_from("base", inputs)


def two_forms(inputs: RouteInputs) -> list[Recipe]:
    """Weigh the acid form and its conjugate base form in the exact ratio; no titration."""
    found = inputs.split()
    if found is None:
        return []
    gap = textbook_gap(inputs.system_id, inputs.spec, found.composition, found.acid.reagent_id,
                       found.base.reagent_id, inputs.catalog)
    return [bench_recipe(found.composition, inputs.spec, inputs.catalog, inputs.prices, route="two-forms",
                         stocks=inputs.stocks, extras=RecipeExtras(textbook=gap))]


def _mixing_table(inputs: RouteInputs, acid: Reagent, base: Reagent,
                  stock_mol_l: float) -> list[tuple[float, float, float]]:
    """(pH, mL stock A, mL stock B) across the target ± :data:`MIXING_TABLE_HALF_SPAN_PH`."""
    spec = inputs.spec
    table = []
    low = spec.ph - MIXING_TABLE_HALF_SPAN_PH
    high = spec.ph + MIXING_TABLE_HALF_SPAN_PH + 0.0001
    for ph in np.round(np.arange(low, high, MIXING_TABLE_STEP_PH), 2):
        try:
            shifted = find_split(inputs.system_id, dataclasses.replace(spec, ph=float(ph)), inputs.conc_mol_l,
                                 [acid, base], inputs.catalog)
        except InputError:
            shifted = None
        if shifted is None:
            continue
        c = shifted.composition
        scale = spec.volume_l * 1000.0 / stock_mol_l
        table.append((float(ph), c[acid.reagent_id] * scale, c[base.reagent_id] * scale))
    return table


def stocks(inputs: RouteInputs) -> list[Recipe]:
    """Mix two equimolar stocks of the acid and base forms, with a table of volumes across pH."""
    found = inputs.split()
    if found is None:
        return []
    spec, catalog, prices = inputs.spec, inputs.catalog, inputs.prices
    acid, base, composition, salt_id = found.acid, found.base, found.composition, found.salt_id
    stock_mol_l = EQUIMOLAR_STOCK_FACTOR * inputs.conc_mol_l
    lines = [recipe_line(acid.reagent_id, "acid-form stock", composition[acid.reagent_id], spec, catalog, prices,
                         as_stock=stock_mol_l),
             recipe_line(base.reagent_id, "base-form stock", composition[base.reagent_id], spec, catalog, prices,
                         as_stock=stock_mol_l)]
    if composition.get(salt_id):
        lines.append(recipe_line(stocked(salt_id, spec, catalog), "salt for ionic strength", composition[salt_id], spec, catalog, prices))
    grams_per_l = {r.reagent_id: stock_mol_l * r.molar_mass_g_mol / r.purity_fraction for r in (acid, base)}
    stock_warnings = [f"stock of {r.name}: {grams_per_l[r.reagent_id]:.4g} g/L is above its solubility of about "
                      f"{r.solubility_g_l_25c.value:g} g/L at 25 °C" for r in (acid, base)
                      if r.solubility_g_l_25c is not None and grams_per_l[r.reagent_id] > r.solubility_g_l_25c.value]
    ml_acid = stock_volume_ml(composition[acid.reagent_id], spec.volume_l, stock_mol_l)
    ml_base = stock_volume_ml(composition[base.reagent_id], spec.volume_l, stock_mol_l)
    steps = [f"Stock A: {grams_per_l[acid.reagent_id]:.4f} g of {acid.name} per litre ({stock_mol_l * 1000:g} mM).",
             f"Stock B: {grams_per_l[base.reagent_id]:.4f} g of {base.name} per litre ({stock_mol_l * 1000:g} mM).",
             f"Mix {volume_text(ml_acid)} of stock A with {volume_text(ml_base)} of stock B.",
             *(weigh_text(line, catalog) for line in lines[2:]),
             f"Make up to {volume_text(spec.volume_l * 1000)} with water. {meter_sentence(composition, spec, catalog)}"]
    table = _mixing_table(inputs, acid, base, stock_mol_l)
    gap = textbook_gap(inputs.system_id, spec, composition, acid.reagent_id, base.reagent_id, catalog)
    recipe = summarise(inputs.system_id, "stocks", spec, composition, lines, steps, catalog, prices,
                       inputs.conc_mol_l, RecipeExtras(textbook=gap, mixing_table=tuple(table)))
    return [dataclasses.replace(recipe, warnings=recipe.warnings + tuple(stock_warnings))]


def _check_stock_solubility(stock_mol_l: dict[str, float], catalog: Catalog) -> None:
    """InfeasibleSpecError when a form of the stock exceeds its catalog solubility at 25 °C.

    Grams of product per litre of stock against grams per litre of water (an approximation
    on the safe side for a dilute stock: the solute's own volume is ignored).
    """
    over = []
    for reagent_id, conc in stock_mol_l.items():
        reagent = catalog.reagents[reagent_id]
        grams_per_l = conc * reagent.molar_mass_g_mol / reagent.purity_fraction
        if reagent.solubility_g_l_25c is not None and grams_per_l > reagent.solubility_g_l_25c.value:
            over.append(f"{reagent.name} {grams_per_l:.4g} g/L against a solubility of about "
                        f"{reagent.solubility_g_l_25c.value:g} g/L at 25 °C")
    if over:
        raise InfeasibleSpecError(f"the {STOCK_FACTOR:g}× stock would not dissolve: {'; '.join(over)}; "
                                  "make a weaker stock or use another route", [f"stock solubility: {o}" for o in over])


def stock10x(inputs: RouteInputs) -> list[Recipe]:
    """A 10× stock of the two forms; the salt for the ionic strength goes in the diluent.

    The stock's pH is what the meter reads at preparation; the 1× dilution (1 volume of
    stock + 9 of diluent) is the verified composition.
    """
    found = inputs.split()
    if found is None:
        return []
    spec, catalog, prices = inputs.spec, inputs.catalog, inputs.prices
    acid, base, composition, salt_id = found.acid, found.base, found.composition, found.salt_id
    stock = {r: c * STOCK_FACTOR for r, c in composition.items() if r != salt_id}
    _check_stock_solubility(stock, catalog)
    stock_ids = list(stock)
    stock_eq = solve_equilibrium(stock_ids, [stock[r] for r in stock_ids], spec.prep_temperature_c, catalog=catalog)
    stock_ph_prep = float(stock_eq.ph[0])
    stock_warnings = [f"10× stock: {w}" for w in stock_eq.warnings_for(0, catalog)]
    lines = [recipe_line(acid.reagent_id, "acid form (10× stock)", composition[acid.reagent_id], spec, catalog,
                         prices),
             recipe_line(base.reagent_id, "base form (10× stock)", composition[base.reagent_id], spec, catalog,
                         prices)]
    stock_ml = spec.volume_l * 1000.0 / STOCK_FACTOR
    diluent_volume_l = spec.volume_l * (1.0 - 1.0 / STOCK_FACTOR)
    diluent, diluent_salt_g_l = "", 0.0
    if composition.get(salt_id):
        salt = recipe_line(stocked(salt_id, spec, catalog), "salt for ionic strength (in the diluent)", composition[salt_id], spec, catalog,
                           prices)
        lines.append(salt)
        salt_grams = salt.grams if salt.grams is not None else 0.0
        diluent_salt_g_l = salt_grams / diluent_volume_l
        diluent = (f" containing {diluent_salt_g_l:.4f} g/L of {salt.name} "
                   f"({salt_grams:.4f} g in {diluent_volume_l * 1000:g} mL)")
    high_ionic = bool(stock_eq.ionic_strength_high[0])
    steps = [f"10× stock ({stock_ml:g} mL): {lines[0].grams:.4f} g of {acid.name} and {lines[1].grams:.4f} g "
             f"of {base.name}, dissolved and made up to {stock_ml:g} mL.",
             (f"The stock should read about pH {stock_ph_prep:.2f} at {spec.prep_temperature_c:g} °C. Do not "
              f"adjust it to {spec.ph:.2f}: dilution shifts the pH."
              if not high_ionic else
              f"Do not adjust the stock's pH: its ionic strength ({float(stock_eq.ionic_strength_mol_l[0]):.2f} mol/L) "
              "is beyond the activity model, so poise cannot say what a meter reads in it (the figure below is "
              "the model's, not a target)."),
             f"For use, mix 1 volume of stock with 9 volumes of water{diluent}: the 1× buffer is pH "
             f"{spec.ph:.2f} at {spec.temperature_c:g} °C."]
    stock_info = {"factor": STOCK_FACTOR, "stock_ph_at_prep": stock_ph_prep,
                  "stock_ionic_strength_mol_l": float(stock_eq.ionic_strength_mol_l[0]),
                  "stock_composition_mol_l": stock, "stock_volume_ml": stock_ml,
                  "diluent_volume_ml": diluent_volume_l * 1000.0,
                  "diluent_salt_g_l": diluent_salt_g_l}
    if stock_warnings:
        steps.append("Check the pH of the 1× dilution with the meter: that is the solution poise verifies.")
    recipe = summarise(inputs.system_id, "stock10x", spec, composition, lines, steps, catalog, prices,
                       inputs.conc_mol_l, RecipeExtras(stock=stock_info))
    reads = ("the 10× stock" if not high_ionic
             else "the 10× stock (model value, beyond the activity model's range)")
    return [dataclasses.replace(recipe, warnings=recipe.warnings + tuple(stock_warnings),
                                meter_ph_at_prep=stock_ph_prep, meter_reads=reads)]


@dataclass(frozen=True)
class Route:
    """A preparation route: its name, what it does in words, and the function that builds it."""

    name: str
    description: str
    build: Callable[[RouteInputs], list[Recipe]]


#: Every preparation route by name, in the order recipes are shown.
ROUTE_REGISTRY: dict[str, Route] = {route.name: route for route in (
    Route("titrate", "weigh one form and bring it to pH with strong base (or acid)", titrate),
    Route("titrate-base", "weigh the base form (e.g. Tris base) and bring it down with strong acid", titrate_base),
    Route("two-forms", "weigh an acid form and its conjugate salt, no titration", two_forms),
    Route("stocks", "mix two equimolar stock solutions (with a table of volumes across pH)", stocks),
    Route("stock10x", "make a 10× stock at the pH that lands the 1× dilution on target", stock10x),
)}
#: The route names.
ROUTES = tuple(ROUTE_REGISTRY)


def route_named(name: str) -> Route:
    """The :class:`Route` called ``name``; InputError listing the valid names otherwise."""
    try:
        return ROUTE_REGISTRY[name]
    except KeyError:
        raise InputError(f"unknown route {name!r}; routes: {', '.join(ROUTES)}") from None


def _same_bench_work(recipe: Recipe, other: Recipe) -> bool:
    """Two routes that ask for the same things at the bench (``titrate`` already starting
    from the base form, as ``titrate-base`` does): the second is not shown again."""
    def work(r: Recipe) -> list[tuple]:
        return [(line.reagent_id, line.role, line.grams, line.millilitres, line.stock_mol_l) for line in r.lines]
    return work(recipe) == work(other)


def make_recipes(system: str, spec: BufferSpec, routes: Sequence[str] | None = None,
                 prices: PriceBook | None = None, catalog: Catalog | None = None,
                 stocks: Mapping[str, float] | None = None) -> list[Recipe]:
    """Verified recipes for ``system`` (a name or alias) meeting ``spec``, one per route.

    Parameters
    ----------
    system : str
        A buffer system's id, name or alias.
    spec : BufferSpec
        Target pH, temperatures [°C], volume [L], concentration [mol/L] or capacity, ionic
        strength [mol/L], counter-ion and stock list.
    routes : sequence of str, optional
        Route names (:data:`ROUTES`); default every route.
    prices : PriceBook, optional
        Prices (default the invented demo prices).
    catalog : Catalog, optional
        The catalog (default the shipped one).

    A route that asks for the same bench work as an earlier one is left out.  Every composition
    is found with the exact engine (1-D root finds on the amounts) and re-solved before it
    is returned: the verified pH at the use temperature must be within
    :data:`selector.recipe.compose.VERIFY_TOLERANCE_PH` of target or no recipe is returned.
    The pH the meter must read is the same composition solved at the preparation temperature.

    Raises
    ------
    InputError for an unknown system or route; InfeasibleSpecError when no route reaches
    the target (with the reason of each route).
    """
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    system_id = resolve_system(system, catalog)
    chosen = [route_named(name) for name in (routes or ROUTES)]
    check_hazard((system_id,), spec, catalog)
    forms = tuple(reagent_forms(system_id, spec, catalog, prices))
    if not forms:
        raise InputError(f"no reagent form of {catalog.systems[system_id].short_name} fits the spec (counter-ion {spec.counter_ion!r}"
                         f"{', in-stock list' if spec.in_stock is not None else ''})")
    conc = buffer_concentration(system_id, spec, catalog, prices)
    inputs = RouteInputs(system_id, spec, conc, forms, catalog, prices,
                         SplitOnce(system_id, spec, conc, forms, catalog), dict(stocks or {}))
    recipes: list[Recipe] = []
    reasons: list[str] = []
    for route in chosen:
        try:
            built = route.build(inputs)
        except InfeasibleSpecError as error:
            reasons.append(f"{route.name}: {error}")
            continue
        if built:
            recipes.extend(r for r in built if not any(_same_bench_work(r, seen) for seen in recipes))
        else:
            reasons.append(f"{route.name}: no pair of forms of {catalog.systems[system_id].short_name} brackets pH {spec.ph:g}")
    if not recipes:
        raise InfeasibleSpecError(f"no recipe for {catalog.systems[system_id].short_name} at pH {spec.ph:g} and {spec.temperature_c:g} °C: "
                                  + "; ".join(reasons), reasons)
    return recipes
