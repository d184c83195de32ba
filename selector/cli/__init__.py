"""The ``poise`` command line: thin commands over selector's public functions.

Each command parses its arguments, calls one selector function and prints.  Every
domain error goes through :func:`user_errors`: one line on stderr and exit code 2
(``--debug`` shows the traceback).
"""

from __future__ import annotations

import argparse
import contextlib
import json
import os
import sys
import traceback
from typing import Sequence

from catalog import CatalogError, load_catalog
from selector.chemistry.properties import SolutionReport, describe_solution
from selector.cli import app as cli_app
from selector.cli import catalog as cli_catalog
from selector.cli import optimise as cli_optimise
from selector.cli import recipe as cli_recipe
from selector.errors import InputError, PoiseError
from selector.safety import SAFETY_NOTICE, hazard_cautions

EXIT_USER_ERROR = 2



class UsageError(InputError):
    """A command-line argument that cannot be used."""


class _Parser(argparse.ArgumentParser):
    """argparse that raises instead of printing usage and exiting, so errors are one line."""

    def error(self, message):
        raise UsageError(f"{message} (see 'poise {self.prog.split()[-1]} --help')"
                         if " " in self.prog else f"{message} (see 'poise --help')")


@contextlib.contextmanager
def user_errors(debug: bool):
    """Turn domain errors into one line on stderr and exit code 2."""
    try:
        yield
    except (PoiseError, CatalogError) as error:
        if debug:
            traceback.print_exc()
        message = str(error) if not isinstance(error, CatalogError) else str(error)
        print(f"poise: error: {message}", file=sys.stderr)
        raise SystemExit(EXIT_USER_ERROR) from None


def parse_assignments(tokens: Sequence[str]) -> dict[str, str]:
    """``["KH2PO4=25mM", "NaCl=0.1M"]`` -> {"KH2PO4": "25mM", "NaCl": "0.1M"} (order kept)."""
    amounts: dict[str, str] = {}
    for token in tokens:
        name, sep, amount = token.partition("=")
        name, amount = name.strip(), amount.strip()
        if not sep or not name:
            raise UsageError(f"cannot read {token!r}: give each reagent as NAME=AMOUNT, e.g. KH2PO4=25mM")
        if not amount:
            raise UsageError(f"{name!r} has no amount: give it as {name}=AMOUNT, e.g. {name}=25mM")
        if name in amounts:
            raise UsageError(f"{name!r} is given twice; give each reagent once")
        amounts[name] = amount
    return amounts


def format_solution_report(report: SolutionReport, catalog=None) -> str:
    """The readable text of ``poise ph``."""
    catalog = catalog if catalog is not None else load_catalog()
    lines = [f"Solution at {report.temperature_c:g} °C (activity model: {report.activity_model})"]
    for reagent_id, conc in report.reagents_mol_l.items():
        reagent = catalog.reagents[reagent_id]
        lines.append(f"  {reagent.name:<42} {conc * 1000:10.4g} mM")
    lines += [
        "",
        f"  pH                          {report.ph:8.3f}",
        f"  ionic strength              {report.ionic_strength_mol_l:8.4f} mol/L",
        f"  buffer capacity β           {report.capacity_mol_l_per_ph * 1000:8.2f} mM per pH unit",
        f"  osmolarity (ideal)          {report.osmolarity_osmol_l * 1000:8.1f} mOsm/L",
        f"  dpH/dT                      {report.dph_dt_per_k:+8.4f} per K",
        f"  dilution value ΔpH½ (1:1)   {report.dilution_value_ph:+8.3f}",
        "",
        "  species                     mol/L        activity coeff.",
    ]
    for species_id, conc in report.species_mol_l.items():
        lines.append(f"  {species_id:<26} {conc:11.4e}   {report.species_gamma[species_id]:6.3f}")
    lines.append("")
    if report.warnings:
        lines.append("Warnings:")
        lines += [f"  - {w}" for w in report.warnings]
    else:
        lines.append("Warnings: none")
    cautions = hazard_cautions(report.reagents_mol_l, catalog)
    if cautions:
        lines += ["", "Cautions:"] + [f"  - {c}" for c in cautions] + [f"  {SAFETY_NOTICE}"]
    return "\n".join(lines)


def command_ph(args) -> int:
    report = describe_solution(parse_assignments(args.reagents), args.temperature, activity=args.activity)
    if args.json:
        print(json.dumps(report.as_json(), indent=2))
    else:
        print(format_solution_report(report))
    return 0


#: The built-in demo: invented example solutions (demo data, not anyone's protocol).
DEMO_SOLUTIONS = (
    ("Demo 1 — assay buffer at use temperature: 50 mM Tris (9 mM base + 41 mM Tris-HCl) with 100 mM NaCl, 37 °C",
     {"Tris": "9mM", "Tris-HCl": "41mM", "NaCl": "100mM"}, 37.0),
    ("Demo 2 — pH standard: 0.025 M KH2PO4 + 0.025 M Na2HPO4 at 25 °C",
     {"KH2PO4": "25mM", "Na2HPO4": "25mM"}, 25.0),
    ("Demo 3 — half-neutralised acetic acid: 0.1 M acetic acid + 0.05 M NaOH at 25 °C",
     {"acetic acid": "100mM", "NaOH": "50mM"}, 25.0),
)


def command_demo(args) -> int:
    print("poise demo: three invented example solutions, each solved exactly "
          "(temperature, activity, polyprotic speciation).\n")
    for title, amounts, temperature in DEMO_SOLUTIONS:
        print(title)
        print("=" * len(title))
        print(format_solution_report(describe_solution(amounts, temperature)))
        print()
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="poise", description="Choose and design laboratory buffer solutions.")
    parser.add_argument("--debug", action="store_true", help="show tracebacks of errors")
    commands = parser.add_subparsers(dest="command", parser_class=_Parser)

    ph = commands.add_parser("ph", help="pH, ionic strength, capacity and species of a solution",
                             description="Solve the equilibrium of a solution of catalog reagents, "
                             "e.g. 'poise ph KH2PO4=25mM Na2HPO4=25mM --temperature 25'.")
    ph.add_argument("reagents", nargs="*", metavar="NAME=AMOUNT",
                    help="reagent and amount, units M, mM, uM, nM, g/L, mg/mL")
    ph.add_argument("--temperature", type=_temperature, default=25.0, help="°C, 0-95 (default 25)")
    ph.add_argument("--activity", default="davies",
                    help="activity model: davies (default), bates-guggenheim, guntelberg")
    ph.add_argument("--json", action="store_true", help="print one JSON object")
    ph.set_defaults(handler=command_ph)

    cli_recipe.register(commands)
    cli_app.register(commands)

    demo = commands.add_parser("demo", help="run the built-in demo")
    demo.set_defaults(handler=command_demo)
    cli_catalog.register(commands)
    cli_optimise.register(commands)
    return parser


def _temperature(text: str) -> float:
    try:
        return float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a temperature in °C (0-95), got {text!r}") from None


def main(argv: Sequence[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in argv
    try:
        with user_errors(debug):
            parser = build_parser()
            args = parser.parse_args(argv)
            if not getattr(args, "handler", None):
                parser.print_help()
                return 0
            return args.handler(args)
    except BrokenPipeError:
        # The reader of our output went away (e.g. `poise demo | head`): stop quietly.
        sys.stderr = open(os.devnull, "w")
        return 0


if __name__ == "__main__":
    raise SystemExit(main())
