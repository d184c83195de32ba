"""``poise optimise``: a thin command over :func:`selector.optimise.solve_min_cost`.

The optimal mix is printed with its bench recipe (:func:`selector.recipe.bench_recipe`:
grams, millilitres, order of addition, meter reading at the preparation temperature);
``--json`` adds it as ``recipe``.  An infeasible spec ends like every other domain error, through
:func:`selector.cli.user_errors` (one message on stderr, exit code 2): the command words
the conflicts one per line and re-raises; with ``--json`` it first prints the infeasible
result as JSON on stdout.  :func:`register` also registers ``poise rank``
(:mod:`selector.cli.rank`).
"""

from __future__ import annotations

import argparse
import json
from typing import TYPE_CHECKING, Any

from selector.cli.book import add_save_option, save_if_asked
from selector.cli.choices import OBJECTIVE_NAMES
from selector.cli.price_option import add_price_argument, plate_volume_into_args, price_book_from_args, spec_costs
from selector.cli.recipe import add_stock_argument, stocks_from_args
from selector.cli.spec_options import add_spec_arguments, spec_from_args
from selector.errors import InfeasibleSpecError, PoiseError

if TYPE_CHECKING:
    from catalog import Catalog
    from selector.optimise import OptimisationResult
    from selector.prices import PriceBook
    from selector.recipe import Recipe
    from selector.spec import BufferSpec


def whole(text: str) -> int:
    """A whole number of at least 1 (argparse type of --max-systems and the designs' counts)."""
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected a whole number of at least 1, got {text!r}")
    return value


def infeasible_json(error: InfeasibleSpecError) -> dict[str, Any]:
    """The JSON of ``poise optimise --json`` for a spec no mix meets."""
    return {"status": "infeasible", "reagents": {}, "cost_per_l": None, "verified": None,
            "binding": [], "conflicts": error.conflicts}


def conflict_message(error: InfeasibleSpecError) -> str:
    """The error line of an infeasible spec, each conflicting constraint on a line of its own."""
    return "\n".join(["no mix meets the spec; conflicting constraints:"]
                     + [f"  - {conflict}" for conflict in error.conflicts or [str(error)]])


def format_result(result: OptimisationResult, catalog: Catalog | None = None,
                  cost_lines: list[str] | None = None) -> str:
    """The readable text of ``poise optimise`` (``cost_lines``: price origins and plates, after the cost)."""
    from catalog import load_catalog
    from selector.report import plus_minus
    from selector.safety import SAFETY_NOTICE, hazard_cautions

    catalog = catalog if catalog is not None else load_catalog()
    v = result.verified
    lines = [f"Optimal mix ({result.objective}; systems: {', '.join(result.systems) or 'none'})"]
    for reagent_id, conc in result.reagents_mol_l.items():
        cost = result.cost_breakdown_per_l.get(reagent_id, 0.0)
        lines.append(f"  {catalog.reagents[reagent_id].name:<42} {conc * 1000:10.4g} mM   "
                     f"{cost:8.4f} {result.currency}/L")
    lines += ["", "Verified (exact equilibrium):",
              f"  pH at {v.temperature_c:g} °C                {v.ph:8.3f}{plus_minus(v.ph_uncertainty, '.3f')}"]
    for t, ph in (v.ph_by_temperature.items() if len(v.ph_by_temperature) > 1 else ()):
        lines.append(f"  pH at {t:g} °C (grid)          {ph:8.3f}")
    for c in v.ph_under_loads:
        lines.append(f"  pH with {c.conc_mol_l * 1000:g} mM {c.kind} at {c.temperature_c:g} °C  {c.ph:8.3f}"
                     f"{'' if c.within_band else '  (outside the band)'}")
    lines += [f"  buffer capacity β            {v.capacity_mol_l_per_ph * 1000:8.2f} mM per pH unit",
              f"  ionic strength               {v.ionic_strength_mol_l * 1000:8.2f} mM",
              f"  osmolarity (ideal)           {v.osmolarity_osmol_l * 1000:8.1f} mOsm/L",
              f"  dpH/dT                       {v.dph_dt_per_k:+8.4f} per K"]
    for metal, fraction in v.bound_fraction.items():
        lines.append(f"  {metal} bound                     {fraction * 100:8.2f} %")
    lines += ["", f"Cost: {result.cost_per_l:.4f} {result.currency} per litre; "
                  f"{result.cost_for_volume:.4f} {result.currency} for {result.volume_l:g} L"
              + (f"; {result.cost_per_plate:.4f} {result.currency} per plate" if result.cost_per_plate else "")
              + f" (mostly {catalog.reagents[result.dominant_reagent].name})"]
    lines += cost_lines or []
    lines.append("Binding constraints: " + ("; ".join(result.binding) or "none"))
    if result.sensitivity:
        lines += ["Sensitivity:"] + [f"  - {s}" for s in result.sensitivity]
    for note in result.assumptions:
        lines.append(f"Assumed: {note}")
    if v.warnings:
        lines += ["Warnings:"] + [f"  - {w}" for w in v.warnings]
    cautions = hazard_cautions(result.reagents_mol_l, catalog)
    if cautions:
        lines += ["", "Cautions:"] + [f"  - {c}" for c in cautions] + [f"  {SAFETY_NOTICE}"]
    return "\n".join(lines)


def command_optimise(args: argparse.Namespace) -> int:
    from selector.optimise import solve_min_cost

    plate_volume_into_args(args)
    spec = spec_from_args(args)
    prices = price_book_from_args(args)
    try:
        result = solve_min_cost(spec, prices, max_systems=args.max_systems, max_reagents=args.max_reagents,
                                objective=args.objective)
    except InfeasibleSpecError as error:
        if args.json:
            print(json.dumps(infeasible_json(error), indent=2))
        raise InfeasibleSpecError(conflict_message(error), error.conflicts) from error
    from selector.report import format_cost_lines

    costs = spec_costs(prices, list(result.reagents_mol_l), result.cost_per_l, result.volume_l, spec)
    try:
        recipe = optimised_recipe(result, spec, prices, stocks_from_args(args.stock))
    except PoiseError as error:
        # The mix stands without its recipe: print it, then end on the recipe's error (exit code 2).
        print(json.dumps({**result.as_json(), "costs": costs, "recipe": None}, indent=2) if args.json
              else format_result(result, cost_lines=format_cost_lines(costs)))
        raise PoiseError(f"the mix has no bench recipe: {error}") from error
    if args.json:
        print(json.dumps({**result.as_json(), "costs": costs, "recipe": recipe.as_json()}, indent=2))
    else:
        from selector.recipe import recipe_text

        print(format_result(result, cost_lines=format_cost_lines(costs)) + "\n\n" + recipe_text(recipe))
    save_if_asked(args, {**result.as_json(), "recipe": recipe.as_json()}, spec)
    return 0


def optimised_recipe(result: OptimisationResult, spec: BufferSpec, prices: PriceBook | None,
                     stocks: dict[str, float] | None = None) -> Recipe:
    """The bench recipe of the optimiser's verified mix (:func:`selector.recipe.bench_recipe`)."""
    from selector.recipe import bench_recipe

    return bench_recipe(result.reagents_mol_l, spec, prices=prices, route="optimised", stocks=stocks)


def register(commands: Any) -> None:
    """Add ``optimise`` (and ``rank``, :func:`selector.cli.rank.register`) to the sub-command parser."""
    optimise = commands.add_parser(
        "optimise", aliases=["optimize"], help="cheapest mix of catalog reagents that meets a spec",
        description="Find the cheapest (or best by --objective) mix that meets the spec, "
                    "e.g. 'poise optimise --ph 7.4 --temperature 37 --capacity 20'.")
    add_spec_arguments(optimise)
    optimise.add_argument("--max-systems", type=whole, default=2, metavar="K",
                          help="at most K buffer systems in the mix (default 2)")
    optimise.add_argument("--max-reagents", type=whole, default=None, metavar="M",
                          help="at most M reagents, titrant and salt included")
    optimise.add_argument("--objective", choices=OBJECTIVE_NAMES, default="cost",
                          help="what to minimise (default cost)")
    add_price_argument(optimise)
    add_stock_argument(optimise)
    optimise.add_argument("--json", action="store_true", help="print one JSON object")
    add_save_option(optimise)
    optimise.set_defaults(handler=command_optimise)
