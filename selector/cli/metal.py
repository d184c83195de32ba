"""``poise metal``: the metal, titrant and salt that give a requested free metal concentration
with a chelator (EGTA, EDTA …) at a pH, temperature and ionic strength, and its bench recipe."""

from __future__ import annotations

import json

from selector.cli.ph import temperature_c


def register(commands) -> None:
    """Add the ``metal`` command to the CLI's subparsers."""
    parser = commands.add_parser(
        "metal", help="metal and titrant to add for a free metal concentration (Ca, Mg …) with a chelator",
        description="Design for a free metal concentration, e.g. 'poise metal --free Ca=100nM --free Mg=1mM "
                    "--chelator EGTA=2mM --ph 7.2 --temperature 22 --ionic-strength 0.1 --buffer hepes=20mM': the "
                    "total metal to add and the titrant that holds the pH, verified by a forward solve, how the "
                    "free metal moves with pH, temperature and the chelator's purity, and a bench recipe.")
    parser.add_argument("--free", action="append", default=[], required=True, metavar="METAL=CONC",
                        help="requested free metal, e.g. Ca=100nM (repeatable; units M, mM, uM, nM)")
    parser.add_argument("--chelator", action="append", default=[], required=True, metavar="NAME=CONC",
                        help="chelator and its concentration, e.g. EGTA=2mM (repeatable)")
    parser.add_argument("--ph", type=float, required=True, help="target pH at the temperature of use")
    parser.add_argument("--temperature", type=temperature_c, default=25.0, help="°C, 0-95 (default 25)")
    parser.add_argument("--ionic-strength", metavar="I",
                        help="ionic strength to reach with KCl (NaCl with --counter-ion Na): 0.1 or 100mM "
                             "(default: no salt added)")
    parser.add_argument("--buffer", action="append", default=[], metavar="SYSTEM=CONC",
                        help="pH buffer and its total, e.g. hepes=20mM (repeatable)")
    parser.add_argument("--purity", action="append", default=[], metavar="NAME=PERCENT",
                        help="purity of a chelator as weighed, e.g. EGTA=98%% (default 100%%)")
    parser.add_argument("--counter-ion", choices=("K", "Na"), default="K",
                        help="cation of the titrant and salt: K (KOH, KCl; default) or Na (NaOH, NaCl)")
    parser.add_argument("--volume", default="1L", help="volume to make (default 1L)")
    output = parser.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help="print one JSON object (design and recipe)")
    output.add_argument("--csv", action="store_true", help="print the recipe as CSV")
    parser.set_defaults(handler=command_metal)


def command_metal(args) -> int:
    from selector.designs.free_metal import design_free_metal, design_text, free_metal_recipe, parse_free_metal_spec
    from selector.recipe.render import recipe_csv, recipe_text

    spec = parse_free_metal_spec(args.free, args.chelator, args.ph, args.temperature, args.ionic_strength,
                                 args.buffer, args.purity, args.counter_ion, args.volume)
    design = design_free_metal(spec)
    recipe = free_metal_recipe(design)
    if args.json:
        print(json.dumps({**design.as_json(), "recipe": recipe.as_json()}, indent=2, allow_nan=False))
    elif args.csv:
        print(recipe_csv(recipe), end="")
    else:
        print(design_text(design))
        print()
        print(recipe_text(recipe))
    return 0
