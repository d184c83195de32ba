"""``poise recipe``: verified bench recipes for one system, and the pH standards."""

from __future__ import annotations

import json

from selector.cli.choices import ROUTE_NAMES
from selector.cli.price_option import add_price_argument, costs_from_args, plate_volume_into_args, price_book_from_args
from selector.cli.spec_options import add_spec_arguments, spec_from_args
from selector.errors import InputError


def register(commands) -> None:
    """Add the ``recipe`` command to the CLI's subparsers."""
    parser = commands.add_parser(
        "recipe", help="bench recipe for one buffer system, or a pH standard",
        description="Verified bench recipes, e.g. 'poise recipe tris --ph 7.4 --temperature 37 --conc 50mM "
        "--volume 1L'; or a pH calibration standard: 'poise recipe --standard borax'.")
    parser.add_argument("system", nargs="?", help="buffer system (name, abbreviation or alias)")
    parser.add_argument("--route", action="append", choices=ROUTE_NAMES,
                        help="preparation route (repeatable; default: every route that applies)")
    parser.add_argument("--standard", metavar="NAME",
                        help="make a pH standard by its published recipe ('list' lists them)")
    parser.add_argument("--water-kg", type=float, default=1.0, help="kg of water for a standard (default 1)")
    add_price_argument(parser)
    output = parser.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help="print JSON")
    output.add_argument("--markdown", action="store_true", help="print Markdown (the default; kept for scripts that ask for it)")
    add_spec_arguments(parser)
    parser.set_defaults(handler=command_recipe)


def command_recipe(args) -> int:
    from selector.recipe import list_standards, make_recipes, recipe_markdown, standard_markdown, standard_recipe

    if args.standard:
        if args.standard == "list":
            for standard_id, name in list_standards():
                print(f"{standard_id:<18} {name}")
            return 0
        recipe = standard_recipe(args.standard, args.water_kg)
        print(json.dumps(recipe.as_json(), indent=2) if args.json else standard_markdown(recipe))
        return 0
    if not args.system:
        raise InputError("name a buffer system (e.g. 'poise recipe tris --ph 7.4 --conc 50mM') or give --standard NAME")
    plate_volume_into_args(args)
    spec = spec_from_args(args)
    prices = price_book_from_args(args)
    recipes = make_recipes(args.system, spec, routes=args.route, prices=prices)
    costs = [costs_from_args(args, prices, [line.reagent_id for line in r.lines],
                             None if r.cost is None else r.cost / r.volume_l, r.volume_l, spec.plates)
             for r in recipes]
    if args.json:
        payload = [{**r.as_json(), "costs": c} for r, c in zip(recipes, costs)]
        print(json.dumps(payload[0] if len(payload) == 1 else payload, indent=2))
    else:
        from selector.report import format_cost_lines

        print("\n\n".join(recipe_markdown(r, cost_lines=format_cost_lines(c)) for r, c in zip(recipes, costs)))
    return 0
