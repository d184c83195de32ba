"""poise's public API: choose and design laboratory buffer solutions.

Scripts, notebooks, benchmarks and tests use these names; everything else is internal.
Each name is imported from its module on first use, so ``import selector`` stays cheap
(the optimiser's Pyomo, for one, loads only when :func:`solve_min_cost` is used).

Data
    :func:`load_catalog` — the sourced catalog (the only door into the data).
Chemistry
    :func:`solve_equilibrium` — exact speciation of a batch of solutions [mol/L, °C];
    :func:`describe_solution` — the full report of one solution (``poise ph``).
Design
    :class:`BufferSpec`, :func:`make_spec`, :func:`read_spec` — what the user needs;
    :func:`rank_systems` — buffer systems for a spec; :func:`solve_min_cost` — the
    minimum-cost mix; :func:`make_recipes` — verified bench recipes;
    :func:`read_price_sheet` — a price sheet over the demo prices;
    :func:`read_price_sheets`, :func:`parse_price_bytes` — supplier offers from one or more
    sheets (:class:`PriceBook`, :class:`Offer`, :class:`Supplier`).
Purchasing
    :func:`solve_purchase` — the least-cost purchase plan for :class:`Need` s under
    :class:`PlanOptions`.
Errors
    :class:`PoiseError` and its subclasses :class:`InputError`,
    :class:`InfeasibleSpecError`, :class:`SolverError`, :class:`CatalogError`.

Examples
--------
The IUPAC 1:1 phosphate standard, 0.025 mol/kg KH2PO4 + 0.025 mol/kg Na2HPO4, has pH(PS)
6.865 at 25 °C (Buck et al., Pure Appl. Chem. 74 (2002) 2169, Table 3); taken as mol/L with
the Davies model poise gives 6.876 (the gap is discussed in tests/test_ph_standards.py):

>>> import selector
>>> eq = selector.solve_equilibrium(["kh2po4", "na2hpo4"], [[0.025, 0.025]], 25.0)
>>> round(float(eq.ph[0]), 3)
6.876
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

#: public name -> module that defines it
_EXPORTS = {
    "load_catalog": "catalog",
    "solve_equilibrium": "selector.chemistry.equilibrium",
    "describe_solution": "selector.chemistry.properties",
    "BufferSpec": "selector.spec",
    "make_spec": "selector.spec",
    "read_spec": "selector.spec",
    "rank_systems": "selector.rank",
    "solve_min_cost": "selector.optimise",
    "make_recipes": "selector.recipe",
    "read_price_sheet": "selector.prices",
    "read_price_sheets": "selector.prices",
    "parse_price_bytes": "selector.prices",
    "PriceBook": "selector.prices",
    "Offer": "selector.prices",
    "Supplier": "selector.prices",
    "solve_purchase": "selector.purchase",
    "Need": "selector.purchase",
    "PlanOptions": "selector.purchase",
    "PoiseError": "selector.errors",
    "InputError": "selector.errors",
    "InfeasibleSpecError": "selector.errors",
    "SolverError": "selector.errors",
    "CatalogError": "selector.errors",
}

__all__ = [
    "BufferSpec", "CatalogError", "InfeasibleSpecError", "InputError", "Need", "Offer", "PlanOptions", "PoiseError",
    "PriceBook", "SolverError", "Supplier",
    "describe_solution", "load_catalog", "make_recipes", "make_spec", "parse_price_bytes", "rank_systems",
    "read_price_sheet", "read_price_sheets", "read_spec", "solve_equilibrium", "solve_min_cost", "solve_purchase",
]

if TYPE_CHECKING:
    from catalog import load_catalog
    from selector.chemistry.equilibrium import solve_equilibrium
    from selector.chemistry.properties import describe_solution
    from selector.errors import CatalogError, InfeasibleSpecError, InputError, PoiseError, SolverError
    from selector.optimise import solve_min_cost
    from selector.prices import Offer, PriceBook, Supplier, parse_price_bytes, read_price_sheet, read_price_sheets
    from selector.purchase import Need, PlanOptions, solve_purchase
    from selector.rank import rank_systems
    from selector.recipe import make_recipes
    from selector.spec import BufferSpec, make_spec, read_spec


def __getattr__(name: str) -> Any:
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'selector' has no attribute {name!r}")
    return getattr(importlib.import_module(module), name)


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
