"""``poise ph``: pH, ionic strength, capacity and species of a solution of catalog reagents."""

from __future__ import annotations

import argparse
import json

from selector.cli.choices import ACTIVITY_NAMES
from selector.errors import InputError
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
    add_open_air_arguments(parser, "also equilibrate the solution with air (CO2 at --pco2) and report the pH in an "
                           "open vessel, the drift from the closed pH and the carbonate taken up or lost")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    parser.set_defaults(handler=command_ph)


def add_open_air_arguments(parser, open_help: str) -> None:
    """The ``--open`` flag (its help says what it does in the command) and ``--pco2 AMOUNT``."""
    parser.add_argument("--open", action="store_true", help=open_help)
    parser.add_argument("--pco2", metavar="AMOUNT",
                        help="CO2 of the air: ppm of dry air (default 420ppm; the partial pressure is taken in "
                        "air saturated with water vapour at 1 atm, x (1 atm - p_H2O(T))), or a partial pressure "
                        "used as given (atm, uatm, Pa, kPa, bar, mbar)")


def pco2_from_args(args) -> tuple[float | None, float]:
    """``--pco2`` as (partial pressure [atm] given as such, else None; fraction of dry air, the default
    CO2 of air where no ppm is given): the ``pressure_atm`` and ``dry_air_fraction`` of the
    open-vessel solves; InputError for a bad amount."""
    from selector.chemistry.gas_exchange import (
        DEFAULT_CO2_DRY_AIR_FRACTION,
        check_dry_air_fraction,
        check_pressure_atm,
    )
    from selector.units import parse_gas_amount

    if args.pco2 is None:
        return None, DEFAULT_CO2_DRY_AIR_FRACTION
    amount = parse_gas_amount(args.pco2, "--pco2")
    if amount.is_dry_air_fraction:
        return None, float(check_dry_air_fraction(amount.value))
    return float(check_pressure_atm(amount.value)), DEFAULT_CO2_DRY_AIR_FRACTION


def temperature_c(text: str) -> float:
    """argparse type for a temperature in °C (the range is checked by the engine)."""
    try:
        return float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a temperature in °C (0-95), got {text!r}") from None


def open_vessel_lines(figures) -> list[str]:
    """The text lines of ``--open``: closed and open pH, the drift, the carbonate taken up or lost."""
    from selector.recipe.co2 import co2_level_words

    head = f"Open to air (CO2 {co2_level_words(figures.pressure_atm, figures.ppm_dry_air)}) at {figures.temperature_c:g} °C"
    if figures.ph_open is None or figures.ph_closed is None or figures.uptake_mol_l is None:
        return ["", head, f"  no open-vessel equilibrium reported (status: {figures.status.replace('_', ' ')})"]
    verb = "taken up" if figures.uptake_mol_l >= 0 else "lost"
    return ["", head,
            f"  pH closed {figures.ph_closed:.3f}, open {figures.ph_open:.3f} (drift {figures.ph_drift:+.3f})",
            f"  carbonate {verb}: {abs(figures.uptake_mol_l) * 1000:.4g} mM "
            f"(total {figures.total_closed_mol_l * 1000:.4g} -> {figures.total_open_mol_l * 1000:.4g} mM)"]


def command_ph(args) -> int:
    from selector.chemistry.properties import describe_solution
    from selector.report import format_solution_report

    if args.pco2 is not None and not args.open:
        raise InputError("--pco2 applies with --open; add --open to equilibrate the solution with that CO2 pressure")
    co2 = pco2_from_args(args) if args.open else None
    report = describe_solution(parse_assignments(args.reagents), args.temperature, activity=args.activity,
                               ion_pairs=args.ion_pairs)
    payload, text = report.as_json(), format_solution_report(report)
    if co2 is not None and report.status == "converged":
        from selector.chemistry.gas_exchange import open_vessel

        pressure_atm, dry_air_fraction = co2
        figures = open_vessel(report.reagents_mol_l, report.temperature_c, pressure_atm, activity=args.activity,
                              ion_pairs=args.ion_pairs, dry_air_fraction=dry_air_fraction)
        payload = {**payload, **figures.as_json()}
        text = "\n".join([text, *open_vessel_lines(figures)])
    print(json.dumps(payload, indent=2, allow_nan=False) if args.json else text)
    return 0 if report.status == "converged" else 2
