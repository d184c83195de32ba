"""Purchase plans: which packs to order from which supplier, at the least total cost.

Input: needs (grams of product per reagent: ``--need tris=2kg``, a plan file, or a
recipe's reagents × a volume through :func:`needs_from_reagents`), the offers of a
:class:`~selector.prices.PriceBook` and the suppliers' terms.  Output: a frozen
:class:`PurchasePlan`.  Data → :func:`build_purchase_model` (pure) → :func:`solve_purchase`
(strict status) → plan; Pyomo is imported inside the functions that need it.

The model (a MILP)
------------------
Offers o (supplier s(o), reagent r(o), pack mass g_o [g], pack price c_o); periods
p = 1..P_r of each reagent; suppliers s (flat shipping h_s, free-shipping threshold T_s,
minimum order m_s).

.. math::

    \\min \\sum_{o,p} c_o x_{op} + \\sum_s h_s (u_s - f_s) + \\lambda \\sum_s u_s

    \\sum_{o: r(o)=r} g_o x_{op} \\ge N_r / P_r \\quad \\forall r, p \\le P_r   \\quad\\text{(cover)}

    x_{op} \\le U_o u_{s(o)}   \\quad\\text{(link)}, \\qquad
    \\sum_{o \\in s, p} c_o x_{op} \\ge m_s u_s  \\quad\\text{(minimum order)}

    f_s \\le u_s, \\qquad \\sum_{o \\in s, p} c_o x_{op} \\ge T_s f_s  \\quad\\text{(free shipping)}

x integer ≥ 0 (packs), u, f binary (supplier used, free shipping reached); λ ≥ 0 is the
"prefer fewer suppliers" weight, a cost added in the choice only (never to the total).
U_o = ⌈N_r / (P_r g_o)⌉ + ⌈max(m_s, T_s) / c_o⌉ packs (enough to cover the need and to reach
the supplier's minimum or threshold with that pack alone).

Shelf life: with a horizon H and a shelf life L_r of opened packs of reagent r (one for all,
or one per reagent), the need is spread evenly over P_r = ⌈H / L_r⌉ periods and a pack
opened in one period serves only that period (an opened pack expires; unopened packs are
assumed to keep, common practice).  Without them P_r = 1.
"""

from __future__ import annotations

import math
import time
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Mapping, Sequence

from catalog import Catalog, load_catalog
from selector.errors import InfeasibleSpecError, InputError, SolverError
from selector.names import resolve_reagent
from selector.prices import (
    Offer,
    PriceBook,
    Supplier,
    grams_of_product,
    product_grams,
    rounded,
)
from selector.textsafe import echo

#: Largest plan file read [characters] (a bound of the tool).
PLAN_MAX_CHARS = 200_000
#: Most needs and offers a plan takes (a bound of the tool, far above a lab's quarter).
PLAN_MAX_NEEDS = 500
PLAN_MAX_OFFERS = 5_000
#: Most periods a shelf-life split makes (a bound of the tool: e.g. 10 years of monthly periods).
PERIODS_MAX = 120
#: Columns of an order list (CSV, XLSX, the app's table).
ORDER_COLUMNS = ("supplier", "reagent", "reagent_name", "pack_size", "pack_price", "count", "cost", "currency",
                 "grade", "catalog_number", "origin")
#: Keys of a plan file.
PLAN_KEYS = ("needs", "recipes", "offers", "suppliers", "rates", "exclude", "grades", "prefer_fewer_suppliers",
             "horizon_months", "shelf_life_months", "within_days", "shelf_lives")


@dataclass(frozen=True)
class Need:
    """Grams of product (as bought) a lab will use of one reagent, and where the need came from."""

    reagent_id: str
    grams: float
    origin: str


@dataclass(frozen=True)
class PlanOptions:
    """Choices of a purchase plan.

    Attributes
    ----------
    exclude : supplier names never ordered from (any case)
    grades : (reagent id, grade) pairs: only offers of that grade serve the reagent
    supplier_weight : "prefer fewer suppliers": a cost per supplier used added to the
        choice only, in the price book's currency (0: plain least cost)
    horizon_months, shelf_life_months : the need is spread over the horizon and opened
        packs expire after the shelf life [months]; both or neither
    within_days : only offers whose stated lead time is at most this many days (offers
        without a lead time are kept, and the plan says so) [days]
    shelf_lives : (reagent id, months) pairs overriding ``shelf_life_months`` per reagent
    """

    exclude: tuple[str, ...] = ()
    grades: tuple[tuple[str, str], ...] = ()
    supplier_weight: float = 0.0
    horizon_months: float | None = None
    shelf_life_months: float | None = None
    within_days: float | None = None
    shelf_lives: tuple[tuple[str, float], ...] = ()

    def shelf_life_of(self, reagent_id: str) -> float | None:
        """The shelf life of an opened pack of ``reagent_id`` [months], None if none is given."""
        return dict(self.shelf_lives).get(reagent_id, self.shelf_life_months)

    def periods_of(self, reagent_id: str) -> int:
        """P_r = ⌈horizon / shelf life of r⌉ (1 without a horizon or a shelf life)."""
        life = self.shelf_life_of(reagent_id)
        if self.horizon_months is None or life is None or life <= 0:
            return 1
        return max(1, math.ceil(self.horizon_months / life - 1e-9))


@dataclass(frozen=True)
class OrderLine:
    """Packs of one offer in the plan."""

    supplier: str
    reagent_id: str
    reagent_name: str
    pack_size: str
    pack_g: float
    pack_price: float
    count: int
    grade: str
    catalog_number: str
    origin: str

    @property
    def cost(self) -> float:
        return self.count * self.pack_price

    def as_dict(self) -> dict[str, Any]:
        return {"supplier": self.supplier, "reagent": self.reagent_id, "reagent_name": self.reagent_name,
                "pack_size": self.pack_size, "pack_g": rounded(self.pack_g), "pack_price": self.pack_price,
                "count": self.count, "cost": rounded(self.cost), "grade": self.grade,
                "catalog_number": self.catalog_number, "origin": self.origin}


@dataclass(frozen=True)
class PurchasePlan:
    """The least-cost order: lines, goods, shipping per supplier, total; leftover per reagent [g]."""

    orders: tuple[OrderLine, ...]
    goods: float
    shipping: dict[str, float]
    total: float
    currency: str
    needs_g: dict[str, float]
    leftover_g: dict[str, float]
    periods: dict[str, int]
    notes: tuple[str, ...] = ()
    solve_s: float = field(default=0.0, compare=False)

    def order_rows(self) -> list[dict[str, Any]]:
        """The order list: one row per offer ordered (columns :data:`ORDER_COLUMNS`)."""
        return [{**line.as_dict(), "currency": self.currency} for line in self.orders]

    def as_dict(self) -> dict[str, Any]:
        """The plan as plain data: the ``--json`` of ``poise buy`` (amounts in grams)."""
        return {"orders": [o.as_dict() for o in self.orders], "goods": rounded(self.goods),
                "shipping": rounded(sum(self.shipping.values())),
                "shipping_by_supplier": {s: rounded(v) for s, v in self.shipping.items()},
                "total": rounded(self.total), "currency": self.currency,
                "needs_g": {r: rounded(g) for r, g in self.needs_g.items()},
                "leftover": {r: rounded(g) for r, g in self.leftover_g.items()}, "leftover_unit": "g",
                "periods": dict(self.periods), "notes": list(self.notes)}


# --- needs ----------------------------------------------------------------------------------------

def parse_need(text: str, catalog: Catalog | None = None, origin: str = "--need") -> Need:
    """``REAGENT=AMOUNT`` (``tris=2.5kg``, ``HCl=1.5 L``) -> a :class:`Need` of grams of product;
    a volume only for a liquid with a recorded density."""
    from selector.units import parse_assignments

    catalog = catalog if catalog is not None else load_catalog()
    ((name, amount),) = parse_assignments([text or ""]).items()
    reagent = catalog.reagents[resolve_reagent(name, catalog)]
    return Need(reagent.reagent_id, product_grams(amount, reagent, f"need of {reagent.name}"),
                f"{origin} {echo(text)[1:-1]}")


def needs_from_reagents(reagents: Iterable[tuple[str, float]], volume_l: float, label: str,
                        catalog: Catalog | None = None) -> list[Need]:
    """The needs of making ``volume_l`` [L] of a recipe whose ``reagents`` are (reagent id,
    conc_mol_l) pairs: grams of product m = c V M / w (:func:`selector.prices.grams_of_product`)."""
    catalog = catalog if catalog is not None else load_catalog()
    needs = []
    for reagent_id, conc_mol_l in reagents:
        if reagent_id not in catalog.reagents:
            raise InputError(f"{label}: unknown reagent id {echo(reagent_id)}")
        if not (math.isfinite(conc_mol_l) and conc_mol_l >= 0):
            raise InputError(f"{label}: concentration of {reagent_id} must be a number >= 0 mol/L")
        if conc_mol_l > 0:
            needs.append(Need(reagent_id, grams_of_product(catalog.reagents[reagent_id], conc_mol_l, volume_l),
                              f"{label} × {volume_l:g} L"))
    return needs


def needs_from_saved_recipes(made: Sequence[tuple[str, str]], book_path: str | Path | None,
                             catalog: Catalog | None = None, origin: str = "--make") -> list[Need]:
    """The needs of making saved recipes: each (name, volume text) pair is the recipe book's
    latest version of that name (:func:`selector.book.show_recipe`) for that volume, through
    :func:`needs_from_reagents` (the recipe's mol/L × the volume).  ``poise buy --make`` and
    the app's Purchasing page both come here; ``origin`` names the input in messages
    (``--make hepes assay '2 furlongs'``).  Opens the book at ``book_path`` (None: the default
    book) without creating it; an unknown name or a bad volume is an InputError (BookError)."""
    if not made:
        return []
    from selector.book import composition_of, open_book, show_recipe
    from selector.units import parse_volume

    catalog = catalog if catalog is not None else load_catalog()
    volumes_l = [parse_volume(volume_text.strip(), what=f"{origin} {name.strip()}") for name, volume_text in made]
    needs: list[Need] = []
    with open_book(book_path, create=False) as book:
        for (name, _), volume_l in zip(made, volumes_l):
            entry = show_recipe(book, name.strip())
            needs += needs_from_reagents(composition_of(entry.recipe_json()).items(), volume_l,
                                         f"{origin} {name.strip()} (version {entry.version})", catalog)
    return needs


def total_needs(needs: Sequence[Need]) -> dict[str, float]:
    """Grams per reagent id, needs of the same reagent added."""
    out: dict[str, float] = {}
    for need in needs:
        out[need.reagent_id] = out.get(need.reagent_id, 0.0) + need.grams
    return out


# --- the problem data -----------------------------------------------------------------------------

@dataclass(frozen=True)
class PurchaseData:
    """Everything the model reads: offers usable, suppliers in use order, needs, bounds."""

    offers: tuple[Offer, ...]
    suppliers: tuple[Supplier, ...]
    needs_g: dict[str, float]
    periods: dict[str, int]         # P_r per reagent
    upper: tuple[int, ...]          # U_o, packs per offer per period
    supplier_of: tuple[int, ...]    # index into suppliers per offer
    supplier_weight: float
    currency: str
    notes: tuple[str, ...] = ()


def _usable(offer: Offer, excluded: set[str], grades: Mapping[str, str], within_days: float | None) -> bool:
    grade = grades.get(offer.reagent_id)
    late = within_days is not None and offer.lead_time_days is not None and offer.lead_time_days > within_days
    return offer.supplier.casefold() not in excluded and (grade is None or offer.grade.casefold() == grade) \
        and not late


def _why_uncovered(reagent_id: str, offers: Sequence[Offer], excluded: set[str], grades: Mapping[str, str],
                   catalog: Catalog, within_days: float | None) -> str:
    """Words for a need no usable offer covers."""
    name = catalog.reagents[reagent_id].name
    own = [o for o in offers if o.reagent_id == reagent_id]
    if not own:
        return f"no offer for {name}: add one to a price sheet"
    kept = [o for o in own if o.supplier.casefold() not in excluded]
    if not kept:
        return f"every offer for {name} comes from an excluded supplier ({', '.join(sorted({o.supplier for o in own}))})"
    if reagent_id in grades and not any(o.grade.casefold() == grades[reagent_id] for o in kept):
        offered = sorted({o.grade or "no grade" for o in kept})
        return f"no offer for {name} of grade {echo(grades[reagent_id])} (offered: {', '.join(offered)})"
    fastest = min(o.lead_time_days for o in kept if o.lead_time_days is not None)
    return f"no offer for {name} arrives within {within_days:g} days (the fastest takes {fastest:g})"


def purchase_data(needs: Sequence[Need], book: PriceBook, suppliers: Mapping[str, Supplier] | None = None,
                  options: PlanOptions | None = None, catalog: Catalog | None = None) -> PurchaseData:
    """The problem data of a plan; InfeasibleSpecError listing, in words, every need no offer
    can cover; InputError for options naming unknown suppliers or reagents not needed."""
    catalog = catalog if catalog is not None else load_catalog()
    options = options if options is not None else PlanOptions()
    suppliers = suppliers or {}
    needs_g = total_needs(needs)
    if not needs_g:
        raise InputError("nothing to buy: give at least one need (--need REAGENT=AMOUNT, or needs in a plan file)")
    if len(needs_g) > PLAN_MAX_NEEDS:
        raise InputError(f"{len(needs_g)} reagents needed; a plan takes at most {PLAN_MAX_NEEDS}")
    _check_options(options, book, needs_g)
    excluded = {s.casefold() for s in options.exclude}
    grades = {r: g.casefold() for r, g in options.grades}
    offers = tuple(o for o in book.offers if o.reagent_id in needs_g
                   and _usable(o, excluded, grades, options.within_days))
    uncovered = [_why_uncovered(r, book.offers, excluded, grades, catalog, options.within_days)
                 for r in needs_g if not any(o.reagent_id == r for o in offers)]
    if uncovered:
        raise InfeasibleSpecError("no purchase plan covers every need: " + "; ".join(uncovered), uncovered)
    if len(offers) > PLAN_MAX_OFFERS:
        raise InputError(f"{len(offers)} offers for the needs; a plan takes at most {PLAN_MAX_OFFERS}")
    spelled = {o.supplier.casefold(): o.supplier for o in reversed(offers)}    # a name in any case: one supplier
    names = sorted(spelled, key=lambda n: (n, spelled[n]))
    missing = [spelled[n] for n in names if n not in suppliers]
    terms = tuple(suppliers.get(n, Supplier(spelled[n], 0.0, book.currency, "no terms given")) for n in names)
    index = {n: i for i, n in enumerate(names)}
    periods = {r: options.periods_of(r) for r in needs_g}
    upper = tuple(math.ceil(needs_g[o.reagent_id] / periods[o.reagent_id] / o.pack_g - 1e-9)
                  + math.ceil(max(terms[index[o.supplier.casefold()]].min_order,
                                  terms[index[o.supplier.casefold()]].free_shipping_over or 0.0) / o.pack_price - 1e-9)
                  for o in offers)
    notes = [f"no shipping terms for {', '.join(missing)}: shipping taken as 0"] if missing else []
    if options.within_days is not None and any(o.lead_time_days is None for o in offers):
        notes.append(f"offers without a stated lead time were kept beside those within {options.within_days:g} days")
    spread = {r: p for r, p in periods.items() if p > 1}
    if spread:
        notes.append("needs spread over periods of the shelf life of an opened pack ("
                     + ", ".join(f"{r}: {p} × {options.shelf_life_of(r):g} month(s)" for r, p in spread.items())
                     + "); leftover includes what expires in opened packs")
    return PurchaseData(offers, terms, needs_g, periods, upper, tuple(index[o.supplier.casefold()] for o in offers),
                        options.supplier_weight, book.currency, tuple(notes))


def _check_options(options: PlanOptions, book: PriceBook, needs_g: Mapping[str, float]) -> None:
    """InputError for an option that names nothing in the plan."""
    known = {o.supplier.casefold() for o in book.offers}
    unknown = [s for s in options.exclude if s.casefold() not in known]
    if unknown:
        raise InputError(f"exclude: no offer comes from {', '.join(echo(s) for s in unknown)}; suppliers offering: "
                         f"{', '.join(sorted({o.supplier for o in book.offers})) or 'none'}")
    stray = [r for r, _ in options.grades if r not in needs_g]
    if stray:
        raise InputError(f"grade given for {', '.join(stray)}, which no need asks for")
    if not (math.isfinite(options.supplier_weight) and options.supplier_weight >= 0):
        raise InputError("prefer fewer suppliers: the weight per supplier must be a number >= 0")
    if options.within_days is not None and not (math.isfinite(options.within_days) and options.within_days >= 0):
        raise InputError("within days: the longest lead time must be a number of days >= 0")
    lives = [life for life in (options.shelf_life_months, *dict(options.shelf_lives).values()) if life is not None]
    if (options.horizon_months is None) != (not lives):
        raise InputError("shelf life: give both the horizon and the shelf life in months, or neither")
    stray = [r for r, _ in options.shelf_lives if r not in needs_g]
    if stray:
        raise InputError(f"shelf life given for {', '.join(stray)}, which no need asks for")
    if options.horizon_months is not None:
        if not (options.horizon_months > 0 and all(life > 0 for life in lives)) \
                or any(options.periods_of(r) > PERIODS_MAX for r in needs_g):
            raise InputError(f"shelf life: horizon and shelf life must be > 0 months and make at most {PERIODS_MAX} "
                             "periods")


# --- model, solve, plan ---------------------------------------------------------------------------

def build_purchase_model(data: PurchaseData) -> Any:
    """The Pyomo MILP of ``data`` (see the module notes); pure, nothing solved."""
    import pyomo.core as pyo

    m = pyo.ConcreteModel(name="purchase_plan")
    m.O = pyo.RangeSet(0, len(data.offers) - 1)
    m.S = pyo.RangeSet(0, len(data.suppliers) - 1)
    m.R = pyo.Set(initialize=sorted(data.needs_g), ordered=True)
    m.OP = pyo.Set(dimen=2, ordered=True, initialize=[(o, p) for o, offer in enumerate(data.offers)
                                                      for p in range(data.periods[offer.reagent_id])])
    m.RP = pyo.Set(dimen=2, ordered=True, initialize=[(r, p) for r in sorted(data.needs_g)
                                                      for p in range(data.periods[r])])
    m.x = pyo.Var(m.OP, domain=pyo.NonNegativeIntegers, bounds=lambda _, o, p: (0, data.upper[o]))
    m.use = pyo.Var(m.S, domain=pyo.Binary)
    m.free = pyo.Var(m.S, domain=pyo.Binary)
    offers_of = {r: [o for o, offer in enumerate(data.offers) if offer.reagent_id == r] for r in data.needs_g}
    sold_by = {s: [o for o in m.O if data.supplier_of[o] == s] for s in m.S}

    def spend(model: Any, s: int) -> Any:
        return sum(data.offers[o].pack_price * model.x[o, p] for o in sold_by[s]
                   for p in range(data.periods[data.offers[o].reagent_id]))

    m.cover = pyo.Constraint(m.RP, rule=lambda model, r, p: sum(
        data.offers[o].pack_g * model.x[o, p] for o in offers_of[r]) >= data.needs_g[r] / data.periods[r])
    m.link = pyo.Constraint(m.OP, rule=lambda model, o, p: model.x[o, p]
                            <= data.upper[o] * model.use[data.supplier_of[o]])
    m.min_order = pyo.Constraint(m.S, rule=lambda model, s: spend(model, s) >= data.suppliers[s].min_order
                                 * model.use[s] if data.suppliers[s].min_order > 0 else pyo.Constraint.Skip)
    m.free_if_used = pyo.Constraint(m.S, rule=lambda model, s: model.free[s] <= model.use[s])
    m.free_threshold = pyo.Constraint(m.S, rule=lambda model, s: spend(model, s) >= (
        data.suppliers[s].free_shipping_over or 0.0) * model.free[s] if data.suppliers[s].free_shipping_over
        is not None else pyo.Constraint.Skip)
    for s in m.S:
        if data.suppliers[s].free_shipping_over is None or data.suppliers[s].shipping == 0:
            m.free[s].fix(0)
    m.objective = pyo.Objective(sense=pyo.minimize, expr=sum(
        data.offers[o].pack_price * m.x[o, p] for o, p in m.OP)
        + sum(data.suppliers[s].shipping * (m.use[s] - m.free[s]) for s in m.S)
        + data.supplier_weight * sum(m.use[s] for s in m.S))
    return m


def plan_cost(data: PurchaseData, counts: Sequence[int]) -> tuple[float, dict[str, float]]:
    """Goods and shipping per supplier of ordering ``counts`` packs of each offer (all
    periods together): shipping is charged by a supplier ordered from unless its goods reach
    its free-shipping threshold.  Raises InputError if a minimum order is not reached."""
    goods = [0.0] * len(data.suppliers)
    for o, count in enumerate(counts):
        goods[data.supplier_of[o]] += count * data.offers[o].pack_price
    shipping = {}
    for s, supplier in enumerate(data.suppliers):
        if goods[s] > 0:
            if goods[s] < supplier.min_order - 1e-9:
                raise InputError(f"the order from {supplier.name} is below its minimum order")
            free = supplier.free_shipping_over is not None and goods[s] >= supplier.free_shipping_over - 1e-9
            shipping[supplier.name] = 0.0 if free else supplier.shipping
    return sum(goods), shipping


def solve_purchase(needs: Sequence[Need], book: PriceBook, suppliers: Mapping[str, Supplier] | None = None,
                   options: PlanOptions | None = None, catalog: Catalog | None = None) -> PurchasePlan:
    """The least-cost purchase plan covering ``needs`` from ``book``'s offers (see the module notes).

    Raises InfeasibleSpecError (in words: which need no offer covers), InputError for bad
    options, SolverError if HiGHS does not prove optimality.
    """
    import pyomo.core as pyo

    from selector.optimise.solve import Solver

    catalog = catalog if catalog is not None else load_catalog()
    data = purchase_data(needs, book, suppliers, options, catalog)
    model = build_purchase_model(data)
    start = time.perf_counter()
    if Solver().solve(model) != "optimal":
        raise SolverError("the purchase model has no solution although every need has an offer (please report)")
    solve_s = time.perf_counter() - start
    counts = [0] * len(data.offers)
    for o, p in model.OP:
        counts[o] += round(pyo.value(model.x[o, p]))
    goods, shipping = plan_cost(data, counts)
    lines = tuple(OrderLine(data.suppliers[s].name, offer.reagent_id, catalog.reagents[offer.reagent_id].name,
                            offer.pack_size, offer.pack_g, offer.pack_price, count, offer.grade,
                            offer.catalog_number, offer.origin)
                  for offer, count, s in zip(data.offers, counts, data.supplier_of) if count > 0)
    bought = {r: sum(line.count * line.pack_g for line in lines if line.reagent_id == r) for r in data.needs_g}
    return PurchasePlan(tuple(sorted(lines, key=lambda line: (line.supplier.casefold(), line.reagent_name))),
                        goods, shipping, goods + sum(shipping.values()), data.currency, dict(data.needs_g),
                        {r: _leftover_g(bought[r], data.needs_g[r]) for r in data.needs_g}, data.periods, data.notes, solve_s)


def _leftover_g(bought_g: float, need_g: float) -> float:
    """What is left of a reagent after the need [g]; a difference within floating-point noise of
    the need (packs exactly covering it, e.g. 3 × 1 L for 3 L) is 0, never −4.5e-13."""
    left = bought_g - need_g
    return 0.0 if abs(left) <= 1e-9 * max(need_g, 1.0) else left


# --- buy or make ---------------------------------------------------------------------------------

#: What the "make" side of a buy-or-make comparison counts, said with every comparison.
MAKE_NOTE = ("made = the listed composition from the price book's reagents at their cheapest price per kg; "
             "labour, water and any titrant the composition does not list are excluded")


@dataclass(frozen=True)
class BuyOrMake:
    """A prepared buffer's price per litre against making the same litre from its reagents."""

    product: str
    supplier: str
    origin: str
    bought_per_l: float
    made_per_l: float | None
    made_origins: dict[str, str]
    currency: str

    @property
    def verdict(self) -> str:
        """"buy", "make", or "cannot cost" (a reagent of the composition has no price)."""
        if self.made_per_l is None:
            return "cannot cost"
        return "buy" if self.bought_per_l < self.made_per_l else "make"

    def as_dict(self) -> dict[str, Any]:
        return {"product": self.product, "supplier": self.supplier, "origin": self.origin,
                "bought_per_l": rounded(self.bought_per_l), "made_per_l": rounded(self.made_per_l),
                "verdict": self.verdict, "made_price_origins": self.made_origins, "currency": self.currency}


def buy_or_make(book: PriceBook, catalog: Catalog | None = None) -> list[BuyOrMake]:
    """Each prepared-buffer offer of ``book`` against making its composition (see :data:`MAKE_NOTE`):
    made per litre = Σ c_i M_i / w_i × price per kg_i / 1000 (:meth:`PriceBook.cost`)."""
    catalog = catalog if catalog is not None else load_catalog()
    out = []
    for offer in book.prepared:
        composition = dict(offer.composition)
        out.append(BuyOrMake(offer.name, offer.supplier, offer.origin, offer.price_per_l,
                             book.cost(composition, 1.0, catalog), book.provenance(list(composition)),
                             book.currency))
    return out


# --- plan files -----------------------------------------------------------------------------------

@dataclass(frozen=True)
class PlanFile:
    """What a plan file asks for: needs, sheets (paths resolved next to the file), options."""

    needs: tuple[Need, ...]
    offers: tuple[str, ...]
    suppliers: str | None
    rates: str | None
    options: PlanOptions


def parse_plan(text: str, label: str, base_dir: Path | None = None, catalog: Catalog | None = None,
               book_path: str | Path | None = None) -> PlanFile:
    """A plan file (TOML)::

        offers = ["offers.csv"]            # price sheets, paths relative to the plan file
        suppliers = "suppliers.csv"        # optional; rates = "rates.csv" optional
        exclude = ["Some Supplier"]        # optional
        prefer_fewer_suppliers = 10.0      # optional weight per supplier used
        horizon_months = 3                 # optional, with shelf_life_months
        shelf_life_months = 1
        within_days = 10                   # optional: longest lead time accepted
        [shelf_lives]                      # optional, months per reagent (over shelf_life_months)
        hepes = 2
        [needs]
        tris = "2 kg"
        HCl = "1 L"
        [grades]
        tris = "molecular biology"
        [[recipes]]                        # a recipe's reagents [mol/L] × a volume
        name = "assay buffer"
        volume = "20 L"
        reagents = { hepes = 0.025, nacl = 0.15 }
        [[recipes]]                        # or a recipe saved in the recipe book (its latest
        saved = "tris assay"               # version, as poise buy --make) × a volume
        volume = "5 L"

    ``book_path`` is the recipe book of ``saved`` recipes (None: the default book).
    """
    catalog = catalog if catalog is not None else load_catalog()
    if len(text) > PLAN_MAX_CHARS:
        raise InputError(f"plan {echo(label)}: {len(text)} characters; a plan file has at most {PLAN_MAX_CHARS}")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        raise InputError(f"plan {echo(label)}: not a TOML file ({error})") from None
    stray = sorted(set(data) - set(PLAN_KEYS))
    if stray:
        raise InputError(f"plan {echo(label)}: unknown key(s) {', '.join(echo(k) for k in stray)}; keys: "
                         f"{', '.join(PLAN_KEYS)}")
    where = echo(label)[1:-1]
    needs = [parse_need(f"{name}={_text(amount, f'{where}: needs.{name}')}", catalog, f"{where}: needs")
             for name, amount in _table(data.get("needs", {}), f"{where}: needs").items()]
    for i, recipe in enumerate(_list(data.get("recipes", []), f"{where}: recipes")):
        needs += _recipe_needs(recipe, f"{where}: recipes[{i + 1}]", catalog, book_path)
    grades = tuple((resolve_reagent(name, catalog), _text(grade, f"{where}: grades.{name}"))
                   for name, grade in _table(data.get("grades", {}), f"{where}: grades").items())
    options = PlanOptions(tuple(_text(s, f"{where}: exclude") for s in _list(data.get("exclude", []),
                                                                            f"{where}: exclude")),
                          grades, _number(data.get("prefer_fewer_suppliers", 0.0), f"{where}: prefer_fewer_suppliers"),
                          _optional_number(data.get("horizon_months"), f"{where}: horizon_months"),
                          _optional_number(data.get("shelf_life_months"), f"{where}: shelf_life_months"),
                          _optional_number(data.get("within_days"), f"{where}: within_days"),
                          tuple((resolve_reagent(name, catalog), _number(months, f"{where}: shelf_lives.{name}"))
                                for name, months in _table(data.get("shelf_lives", {}),
                                                           f"{where}: shelf_lives").items()))
    base = base_dir if base_dir is not None else Path(".")
    offers = tuple(str(base / _text(p, f"{where}: offers")) for p in _list(data.get("offers", []), f"{where}: offers"))
    return PlanFile(tuple(needs), offers,
                    str(base / _text(data["suppliers"], f"{where}: suppliers")) if "suppliers" in data else None,
                    str(base / _text(data["rates"], f"{where}: rates")) if "rates" in data else None, options)


def _recipe_needs(recipe: Any, where: str, catalog: Catalog, book_path: str | Path | None = None) -> list[Need]:
    from selector.units import parse_volume

    table = _table(recipe, where)
    if "saved" in table:
        if "reagents" in table:
            raise InputError(f"{where}: give reagents or saved (the name of a recipe in the book), not both")
        return needs_from_saved_recipes([(_text(table["saved"], f"{where}.saved"),
                                          _text(table.get("volume", ""), f"{where}.volume"))],
                                        book_path, catalog, origin=f"{where}: saved")
    volume_l = parse_volume(_text(table.get("volume", ""), f"{where}.volume"), f"{where}.volume")
    reagents = [(resolve_reagent(name, catalog), _number(conc, f"{where}.reagents.{name}"))
                for name, conc in _table(table.get("reagents", {}), f"{where}.reagents").items()]
    label = _text(table.get("name", where), f"{where}.name")
    return needs_from_reagents(reagents, volume_l, f"recipe {label}", catalog)


def read_plan(path: str | Path, catalog: Catalog | None = None, book_path: str | Path | None = None) -> PlanFile:
    """A plan file from disk (see :func:`parse_plan`); sheet paths are taken relative to it."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"plan file {echo(str(path))} not found")
    if path.stat().st_size > PLAN_MAX_CHARS * 4:
        raise InputError(f"plan file {echo(path.name)} is too large; a plan file has at most {PLAN_MAX_CHARS} characters")
    try:
        text = path.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(f"plan file {echo(path.name)} is not UTF-8 text") from None
    return parse_plan(text, path.name, path.parent, catalog, book_path)


def _table(value: Any, where: str) -> dict[str, Any]:
    if not isinstance(value, dict):
        raise InputError(f"{where}: expected a table (name = value lines), got {echo(value)}")
    return value


def _list(value: Any, where: str) -> list[Any]:
    if isinstance(value, str):
        return [value]
    if not isinstance(value, list):
        raise InputError(f"{where}: expected a list, got {echo(value)}")
    return value


def _text(value: Any, where: str) -> str:
    if not isinstance(value, str):
        raise InputError(f"{where}: expected text in quotes, got {echo(value)}")
    return value


def _number(value: Any, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{where}: expected a number, got {echo(value)}")
    return float(value)


def _optional_number(value: Any, where: str) -> float | None:
    return None if value is None else _number(value, where)
