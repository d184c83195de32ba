"""``poise recipe``: verified bench recipes for one system, and the pH standards."""

from __future__ import annotations

import json
import sys

from selector.cli.book import add_save_option, save_if_asked
from selector.cli.choices import ROUTE_NAMES
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
    parser.add_argument("--prices", metavar="FILE", help="price sheet (CSV or XLSX) over the demo prices")
    output = parser.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help="print JSON")
    output.add_argument("--markdown", action="store_true", help="print Markdown (the default; kept for scripts that ask for it)")
    add_spec_arguments(parser)
    add_save_option(parser)
    parser.set_defaults(handler=command_recipe)


def command_recipe(args) -> int:
    from selector.prices import read_price_sheet
    from selector.recipe import list_standards, make_recipes, recipe_markdown, standard_markdown, standard_recipe

    if args.standard:
        if args.save:
            raise InputError("--save keeps bench recipes of a buffer system; give a system instead of --standard")
        if args.standard == "list":
            for standard_id, name in list_standards():
                print(f"{standard_id:<18} {name}")
            return 0
        recipe = standard_recipe(args.standard, args.water_kg)
        print(json.dumps(recipe.as_json(), indent=2) if args.json else standard_markdown(recipe))
        return 0
    if not args.system:
        raise InputError("name a buffer system (e.g. 'poise recipe tris --ph 7.4 --conc 50mM') or give --standard NAME")
    spec = spec_from_args(args)
    prices = None
    if args.prices:
        prices, report = read_price_sheet(args.prices)
        for problem in report.problems:
            print(f"poise: price sheet: {problem}", file=sys.stderr)
    recipes = make_recipes(args.system, spec, routes=args.route, prices=prices)
    if args.json:
        payload = [r.as_json() for r in recipes]
        print(json.dumps(payload[0] if len(payload) == 1 else payload, indent=2))
    else:
        print("\n\n".join(recipe_markdown(r) for r in recipes))
    save_if_asked(args, [r.as_json() for r in recipes], spec)
    return 0
