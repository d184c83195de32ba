"""``poise ph``: pH, ionic strength, capacity and species of a solution of catalog reagents."""

from __future__ import annotations

import argparse
import json

from selector.cli.choices import ACTIVITY_NAMES
from selector.units import UNIT_HELP, parse_assignments


def register(commands) -> None:
    """Add the ``ph`` command to the CLI's subparsers."""
    parser = commands.add_parser("ph", help="pH, ionic strength, capacity and species of a solution",
                                 description="Solve the equilibrium of a solution of catalog reagents, "
                                 "e.g. 'poise ph KH2PO4=25mM Na2HPO4=25mM --temperature 25'.")
    parser.add_argument("reagents", nargs="*", metavar="NAME=AMOUNT",
                        help=f"reagent and amount, units {UNIT_HELP}")
    parser.add_argument("--temperature", type=temperature_c, default=25.0, help="°C, 0-95 (default 25)")
    parser.add_argument("--activity", default="davies",
                        help=f"activity model: {', '.join(ACTIVITY_NAMES)} (default davies; truesdell-jones: "
                        "each ion's size, with --ion-pairs the pairs of its database, for I 0.1-0.5 mol/L)")
    parser.add_argument("--ion-pairs", action="store_true",
                        help="also take the Na+/K+ ion pairs with phosphate, carbonate, sulfate and citrate as species "
                        "(NIST SRD 46); off by default, as the pH scale of the standards already absorbs them")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    parser.set_defaults(handler=command_ph)


def temperature_c(text: str) -> float:
    """argparse type for a temperature in °C (the range is checked by the engine)."""
    try:
        return float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a temperature in °C (0-95), got {text!r}") from None


def command_ph(args) -> int:
    from selector.chemistry.properties import describe_solution
    from selector.report import format_solution_report

    report = describe_solution(parse_assignments(args.reagents), args.temperature, activity=args.activity,
                               ion_pairs=args.ion_pairs)
    print(json.dumps(report.as_json(), indent=2, allow_nan=False) if args.json else format_solution_report(report))
    return 0 if report.status == "converged" else 2
