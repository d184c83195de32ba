"""``poise recipe``: verified bench recipes for one system or a mix, and the pH standards."""

from __future__ import annotations

import json

from selector.cli.book import add_save_option, save_if_asked
from selector.cli.choices import ROUTE_NAMES
from selector.cli.ph import add_open_air_arguments, pco2_from_args
from selector.cli.price_option import add_price_argument, plate_volume_into_args, price_book_from_args, spec_costs
from selector.cli.spec_options import add_spec_arguments, spec_from_args
from selector.errors import InputError

#: What ``--print`` renders, and the formats (the names of selector.recipe.OUTPUTS + methods
#: and of selector.recipe.document.FORMATS, kept here so that registering loads no engine).
DOCUMENTS = ("recipe", "sheet", "label", "methods")
FORMAT_NAMES = ("markdown", "text", "html", "csv")
#: Where a ``--mix`` titration starts (selector.recipe.mix.STARTS).
START_NAMES = ("least-titrant", "acid", "base")


def register(commands) -> None:
    """Add the ``recipe`` command to the CLI's subparsers."""
    parser = commands.add_parser(
        "recipe", help="bench recipe for one buffer system or a mix, or a pH standard",
        description="Verified bench recipes, e.g. 'poise recipe tris --ph 7.4 --temperature 37 --conc 50mM "
        "--volume 1L'; a mix of systems titrated to pH: 'poise recipe --mix \"tris=30mM hepes=20mM\" --ph 7.4'; "
        "or a pH calibration standard: 'poise recipe --standard borax'.")
    parser.add_argument("system", nargs="?", help="buffer system (name, abbreviation or alias)")
    parser.add_argument("--mix", metavar="SYSTEM=CONC ...",
                        help="buffer systems and their totals, e.g. \"tris=30mM hepes=20mM\", titrated to --ph")
    parser.add_argument("--composition", metavar="REAGENT=CONC ...",
                        help="a composition of catalog reagents, e.g. \"KH2PO4=25mM Na2HPO4=25mM\": its bench steps "
                             "at its own pH (or checked against --ph)")
    parser.add_argument("--start", choices=START_NAMES, default="least-titrant",
                        help="with --mix: titrate the acid-side forms with strong base, the base-side forms with "
                             "strong acid (Tris base + HCl), or whichever needs less titrant (default)")
    add_stock_argument(parser)
    parser.add_argument("--route", action="append", choices=ROUTE_NAMES,
                        help="preparation route (repeatable; default: every route that applies)")
    parser.add_argument("--standard", metavar="NAME",
                        help="make a pH standard by its published recipe ('list' lists them)")
    parser.add_argument("--water-kg", type=float, default=1.0, help="kg of water for a standard (default 1)")
    add_price_argument(parser)
    parser.add_argument("--print", dest="document", choices=DOCUMENTS, default="recipe",
                        help="what to print: the recipe (default), a bench sheet with blanks to fill in, a bottle "
                             "label, or a methods sentence")
    parser.add_argument("--format", choices=FORMAT_NAMES, default="markdown",
                        help="markdown (default), text, html (printable) or csv")
    output = parser.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help="print JSON")
    output.add_argument("--markdown", action="store_true", help="print Markdown (the default; kept for scripts that ask for it)")
    add_open_air_arguments(parser, "state the pH drift in open air at the use temperature for every recipe "
                           "(recipes above pH 8 and carbonate recipes always state it)")
    add_spec_arguments(parser)
    add_save_option(parser)
    parser.set_defaults(handler=command_recipe)


def add_stock_argument(parser) -> None:
    """The ``--stock REAGENT=CONC`` option (recipe and optimise)."""
    parser.add_argument("--stock", action="append", default=[], metavar="REAGENT=CONC",
                        help="draw this reagent from a stock solution of this strength, e.g. hepes_free_acid=1M "
                             "(repeatable; titrants default to 1 M)")


def stocks_from_args(items: list[str]) -> dict[str, float]:
    """``--stock`` values -> reagent id -> stock concentration [mol/L]."""
    from selector.names import resolve_reagent
    from selector.recipe.mix import parse_pairs
    from selector.units import parse_amount

    stocks = {}
    for item in items:
        for name, amount in parse_pairs(item, "--stock").items():
            conc = parse_amount(amount, what=f"--stock {name}")
            if not conc > 0:
                raise InputError(f"--stock {name}: the stock concentration must be above zero, e.g. {name}=1M")
            stocks[resolve_reagent(name)] = conc
    return stocks


def open_air_option(recipes: list, args) -> list:
    """``--open`` / ``--pco2``: the recipes with their open-air drift stated (every recipe with
    --open; with --pco2 alone those that state it anyway, at that pressure)."""
    if not (args.open or args.pco2 is not None):
        return recipes
    from selector.recipe.co2 import with_co2_drift

    pressure_atm, dry_air_fraction = pco2_from_args(args)
    return [with_co2_drift(r, pressure_atm=pressure_atm, always=args.open, dry_air_fraction=dry_air_fraction)
            for r in recipes]


def _print_recipes(recipes, args, costs: list[dict] | None = None) -> None:
    """Print the recipes as asked; ``costs`` (one per recipe, :func:`spec_costs`) join the
    JSON as ``costs`` and follow a printed recipe as its price lines."""
    from selector.recipe import render_recipe
    from selector.report import format_cost_lines

    per_recipe: list[dict | None] = list(costs) if costs is not None else [None] * len(recipes)
    if args.json:
        payload = [{**r.as_json(), **({"costs": c} if c is not None else {})} for r, c in zip(recipes, per_recipe)]
        print(json.dumps(payload[0] if len(payload) == 1 else payload, indent=2))
        return
    fmt = "markdown" if args.markdown else args.format
    with_prices = args.document == "recipe" and fmt in ("markdown", "text")
    print("\n\n".join(render_recipe(r, args.document, fmt)
                       + ("\n" + "\n".join(format_cost_lines(c)) if with_prices and c is not None else "")
                       for r, c in zip(recipes, per_recipe)))


def _standard(args) -> int:
    from selector.recipe import list_standards, standard_markdown, standard_recipe

    if args.standard == "list":
        for standard_id, name in list_standards():
            print(f"{standard_id:<18} {name}")
        return 0
    recipe = standard_recipe(args.standard, args.water_kg)
    print(json.dumps(recipe.as_json(), indent=2) if args.json else standard_markdown(recipe))
    return 0


def _composition(args) -> int:
    """``--composition``: the bench steps of a composition, at its own pH unless --ph is given."""
    from catalog import load_catalog
    from selector.names import resolve_reagent
    from selector.recipe import composition_recipe
    from selector.recipe.mix import parse_pairs
    from selector.units import parse_amount

    ph_from_composition = args.ph is None
    if ph_from_composition:
        args.ph = "7"   # a placeholder for the spec's check; the composition's own pH replaces it
    spec = spec_from_args(args)
    if spec.buffer_conc_mol_l is not None or spec.capacity_mol_l_per_ph is not None or spec.loads:
        raise InputError("--composition gives every amount: drop --conc, --capacity and --load")
    catalog = load_catalog()
    amounts = {name: parse_amount(amount, catalog.reagents[resolve_reagent(name, catalog)].molar_mass_g_mol,
                                  what=f"--composition {name}")
               for name, amount in parse_pairs(args.composition, "--composition").items()}
    recipe = composition_recipe(amounts, spec, catalog, ph_from_composition=ph_from_composition,
                                stocks=stocks_from_args(args.stock))
    recipe = open_air_option([recipe], args)[0]
    _print_recipes([recipe], args)
    save_if_asked(args, [recipe.as_json()], spec)
    return 0


def command_recipe(args) -> int:
    from selector.recipe import make_recipes, mix_recipe
    from selector.recipe.mix import parse_mix

    if args.standard:
        if args.save:
            raise InputError("--save keeps bench recipes of a buffer system; give a system instead of --standard")
        return _standard(args)
    if sum(bool(x) for x in (args.system, args.mix, args.composition)) > 1:
        raise InputError("give one of a buffer system, --mix or --composition")
    if not (args.system or args.mix or args.composition):
        raise InputError("name a buffer system (e.g. 'poise recipe tris --ph 7.4 --conc 50mM'), a mix "
                         "(--mix \"tris=30mM hepes=20mM\"), a composition (--composition \"KH2PO4=25mM "
                         "Na2HPO4=25mM\") or give --standard NAME")
    if args.composition:
        return _composition(args)
    if not args.mix and args.start != "least-titrant":
        raise InputError("--start applies to --mix; for one system choose a --route (titrate-base starts from the "
                         "base form)")
    plate_volume_into_args(args)
    spec = spec_from_args(args)
    prices = price_book_from_args(args)
    if args.mix and (spec.buffer_conc_mol_l is not None or spec.capacity_mol_l_per_ph is not None or spec.loads):
        raise InputError("--mix gives each system's concentration: drop --conc, --capacity and --load "
                         "(or use 'poise optimise' to size a mix by capacity)")
    if args.mix:
        systems = parse_mix(args.mix, "--mix")
        recipes = [mix_recipe(systems, spec, prices=prices, start=args.start, stocks=stocks_from_args(args.stock))]
    else:
        recipes = make_recipes(args.system, spec, routes=args.route, prices=prices,
                               stocks=stocks_from_args(args.stock))
    recipes = open_air_option(recipes, args)
    costs = [spec_costs(prices, [line.reagent_id for line in r.lines],
                        None if r.cost is None else r.cost / r.volume_l, r.volume_l, spec)
             for r in recipes]
    _print_recipes(recipes, args, costs)
    save_if_asked(args, [{**r.as_json(), "costs": c} for r, c in zip(recipes, costs)], spec)
    return 0
