"""Buffer systems at given totals brought to a pH with a strong titrant: one system or a mix.

The titration of one system (the ``titrate`` and ``titrate-base`` routes) and a ``--mix``
of several systems are the same problem: weigh one form of each system at its total
[mol/L] and add strong base (starting from the acid-side forms) or strong acid (starting
from the base-side forms) until the exact pH at the use temperature is the target, topping
the ionic strength up with the salt.  :func:`titrate_systems` solves it with the engine
(a 1-D root find on the titrant, :mod:`selector.recipe.solve`); :func:`mix_recipe` turns the
result into bench steps (:func:`selector.recipe.bench.bench_recipe`).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Mapping

import numpy as np

from catalog import Catalog, load_catalog
from catalog.records import Reagent
from selector.admissible import SALT_REAGENT, titrant_ids
from selector.chemistry.equilibrium import solve_equilibrium
from selector.errors import InfeasibleSpecError, InputError, PhOutOfReachError
from selector.names import resolve_system
from selector.prices import PriceBook, demo_price_book
from selector.recipe.bench import bench_recipe
from selector.recipe.compose import Recipe, reagent_forms
from selector.recipe.solve import AmountLine, solve_composition
from selector.spec import BufferSpec
from selector.units import parse_amount

#: Where a titration starts: the acid-side forms with strong base, the base-side forms with
#: strong acid (Tris base + HCl), or whichever needs less titrant.
STARTS = ("least-titrant", "acid", "base")


def parse_pairs(text: str, what: str) -> dict[str, str]:
    """``"tris=30mM hepes=20mM"`` (spaces, commas or semicolons between) -> {"tris": "30mM", "hepes": "20mM"}.

    ``what`` names the input in the error (``--mix`` on the command line).
    """
    pairs: dict[str, str] = {}
    for token in (t for t in re.split(r"[\s,;]+", text.strip()) if t):
        name, sep, amount = token.partition("=")
        if not sep or not name.strip() or not amount.strip():
            raise InputError(f"{what}: cannot read {token!r}; give NAME=CONC pairs, e.g. \"tris=30mM hepes=20mM\"")
        pairs[name.strip()] = amount.strip()
    if not pairs:
        raise InputError(f"{what}: give NAME=CONC pairs, e.g. \"tris=30mM hepes=20mM\"")
    return pairs


def parse_mix(text: str, what: str = "mix") -> dict[str, float]:
    """``"tris=30mM hepes=20mM"`` -> system name -> total concentration [mol/L] (molar units)."""
    return {name: parse_amount(amount, what=f"{what} {name}") for name, amount in parse_pairs(text, what).items()}


@dataclass(frozen=True)
class Titration:
    """A solved titration: the composition [mol/L], the side it started from and its titrant."""

    composition: dict[str, float]
    start: str
    titrant_id: str
    forms: tuple[Reagent, ...]


def _starting_forms(system_concs: Mapping[str, float], spec: BufferSpec, catalog: Catalog,
                    prices: PriceBook) -> dict[str, tuple[Reagent, ...]]:
    """{"acid": one form per system, "base": one form per system}.

    Acid side: each system's form next below the target (its own solution's pH at the use
    temperature, alone at the system's total), else its most acidic form; base side: the
    form next above, else its most basic form.
    """
    chosen: dict[str, list[Reagent]] = {"acid": [], "base": []}
    for system_id, conc in system_concs.items():
        forms = reagent_forms(system_id, spec, catalog, prices)
        if not forms:
            raise InputError(f"no reagent form of {catalog.systems[system_id].short_name} fits the spec (counter-ion {spec.counter_ion!r}"
                             f"{', in-stock list' if spec.in_stock is not None else ''})")
        own_ph = solve_equilibrium([f.reagent_id for f in forms], np.diag([conc / f.system_units for f in forms]),
                                   spec.temperature_c, catalog=catalog).ph
        below = [f for f, p in zip(forms, own_ph) if p < spec.ph]
        above = [f for f, p in zip(forms, own_ph) if p > spec.ph]
        chosen["acid"].append(below[-1] if below else forms[0])
        chosen["base"].append(above[0] if above else forms[-1])
    return {side: tuple(forms) for side, forms in chosen.items()}


def _titrant_for(side: str, spec: BufferSpec) -> str | None:
    acid_id, base_id = titrant_ids(spec.counter_ion)
    titrant = base_id if side == "acid" else acid_id
    if titrant is not None and spec.in_stock is not None and titrant not in spec.in_stock:
        return None
    return titrant


def titrate_systems(system_concs: Mapping[str, float], spec: BufferSpec, catalog: Catalog | None = None,
                    prices: PriceBook | None = None, start: str = "least-titrant") -> Titration:
    """The exact composition of buffer systems at their totals titrated to the spec's pH.

    Parameters
    ----------
    system_concs : mapping of str to float
        System id -> total concentration in the final solution [mol/L].
    spec : BufferSpec
        Target pH, use temperature [°C], ionic-strength target and salt, counter-ion, stock list.
    catalog, prices : optional
        The catalog and prices (prices choose the cheapest form of a protonation state).
    start : str
        One of :data:`STARTS`.

    Raises
    ------
    InputError
        for an unknown start, a system with no admitted form, or no titrant in stock.
    InfeasibleSpecError
        when no side reaches the target (with each side's reason).
    """
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    if start not in STARTS:
        raise InputError(f"unknown titration start {start!r}; starts: {', '.join(STARTS)}")
    sides = ("acid", "base") if start == "least-titrant" else (start,)
    forms = _starting_forms(system_concs, spec, catalog, prices)
    total = sum(system_concs.values())
    salt_id = SALT_REAGENT[spec.salt]
    what = " + ".join(system_concs)
    best: Titration | None = None
    reasons: list[str] = []
    for side in sides:
        titrant = _titrant_for(side, spec)
        if titrant is None:
            reasons.append(f"from the {side} forms: no strong {'base' if side == 'acid' else 'acid'} admitted "
                           f"(counter-ion {spec.counter_ion!r}) or in stock")
            continue
        ids = (*(f.reagent_id for f in forms[side]), titrant)
        base = np.array([*(system_concs[f.system_id or ""] / f.system_units for f in forms[side]), 0.0])
        line = AmountLine(ids, base, np.eye(len(ids))[-1])
        try:
            composition = solve_composition(line, spec, 0.0, 4.0 * total + 0.05, salt_id, catalog,
                                            f"{what} titrated with {titrant}")
        except PhOutOfReachError as error:
            reasons.append(f"from the {side} forms: {error}")
            continue
        if best is None or composition[titrant] < best.composition[best.titrant_id]:
            best = Titration(composition, side, titrant, forms[side])
    if best is None:
        raise InfeasibleSpecError(f"{what} cannot be titrated to pH {spec.ph:g}: " + "; ".join(reasons), reasons)
    return best


def mix_recipe(systems: Mapping[str, float], spec: BufferSpec, catalog: Catalog | None = None,
               prices: PriceBook | None = None, start: str = "least-titrant",
               stocks: Mapping[str, float] | None = None) -> Recipe:
    """Bench recipe of one or several buffer systems at given totals, titrated to the spec's pH.

    Parameters
    ----------
    systems : mapping of str to float
        System name (id, name or alias) -> total concentration in the final solution [mol/L].
    spec : BufferSpec
        Target pH, temperatures [°C], volume [L], ionic strength, counter-ion, stock list.
    start : str
        One of :data:`STARTS`.
    stocks : mapping of str to float, optional
        Reagent id -> stock concentration [mol/L] to draw it from.
    """
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    concs: dict[str, float] = {}
    for name, conc in systems.items():
        system_id = resolve_system(name, catalog)
        if not (np.isfinite(conc) and conc > 0):
            raise InputError(f"{name}: concentration {conc!r} mol/L; give a positive concentration such as 20mM")
        concs[system_id] = concs.get(system_id, 0.0) + float(conc)
    if not concs:
        raise InputError("give at least one buffer system and its concentration, e.g. --mix \"tris=30mM hepes=20mM\"")
    titration = titrate_systems(concs, spec, catalog, prices, start)
    route = "titrate" if len(concs) == 1 else "mix"
    return bench_recipe(titration.composition, spec, catalog, prices, route=route, stocks=stocks)
