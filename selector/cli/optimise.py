"""``poise optimise`` and ``poise rank``: thin commands over the optimiser and the ranking.

Infeasible specs end with exit code 2 and one line per conflict on stderr (no traceback);
every other domain error goes through :func:`selector.cli.user_errors`.
"""

from __future__ import annotations

import csv
import io
import json
import sys

from catalog import load_catalog
from selector.cli.spec_options import add_spec_arguments, spec_from_args
from selector.errors import InfeasibleSpecError
from selector.optimise import OBJECTIVES, OptimisationResult, solve_min_cost
from selector.prices import read_price_sheet
from selector.rank import SORTS, rank_systems

EXIT_INFEASIBLE = 2


def _whole(text: str) -> int:
    import argparse

    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected a whole number of at least 1, got {text!r}")
    return value


def _prices(args):
    if not args.prices:
        return None
    book, report = read_price_sheet(args.prices)
    for problem in report.problems:
        print(f"poise: price sheet: {problem}", file=sys.stderr)
    return book


def _infeasible(error: InfeasibleSpecError, as_json: bool) -> int:
    if as_json:
        print(json.dumps({"status": "infeasible", "reagents": {}, "cost_per_l": None, "verified": None,
                          "binding": [], "conflicts": error.conflicts}, indent=2))
    print("poise: error: no mix meets the spec; conflicting constraints:", file=sys.stderr)
    for conflict in error.conflicts or [str(error)]:
        print(f"  - {conflict}", file=sys.stderr)
    return EXIT_INFEASIBLE


def format_result(result: OptimisationResult, catalog=None) -> str:
    """The readable text of ``poise optimise``."""
    from selector.safety import SAFETY_NOTICE, hazard_cautions

    catalog = catalog if catalog is not None else load_catalog()
    v = result.verified
    lines = [f"Optimal mix ({result.objective}; systems: {', '.join(result.systems) or 'none'})"]
    for reagent_id, conc in result.reagents_mol_l.items():
        cost = result.cost_breakdown_per_l.get(reagent_id, 0.0)
        lines.append(f"  {catalog.reagents[reagent_id].name:<42} {conc * 1000:10.4g} mM   "
                     f"{cost:8.4f} {result.currency}/L")
    lines += ["", "Verified (exact equilibrium):",
              f"  pH at {v.temperature_c:g} °C                {v.ph:8.3f}"]
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


def command_optimise(args) -> int:
    spec = spec_from_args(args)
    prices = _prices(args)
    try:
        result = solve_min_cost(spec, prices, max_systems=args.max_systems, max_reagents=args.max_reagents,
                                objective=args.objective)
    except InfeasibleSpecError as error:
        return _infeasible(error, args.json)
    if args.json:
        print(json.dumps(result.as_json(), indent=2))
    else:
        print(format_result(result))
    return 0


RANK_COLUMNS = ("rank", "system", "feasible", "conc_mol_l", "pka_at_use", "distance_ph", "capacity_mol_l_per_ph",
                "dph_dt_per_k", "dilution_value_ph", "ionic_strength_mol_l", "cost_per_l", "cost_for_volume",
                "reason")


def command_rank(args) -> int:
    spec = spec_from_args(args)
    prices = _prices(args)
    rows = rank_systems(spec, prices, sort=args.sort)
    if args.json:
        print(json.dumps([r.as_json() for r in rows], indent=2))
        return 0
    if args.csv:
        buffer = io.StringIO()
        writer = csv.writer(buffer, lineterminator="\n")
        metals = [m.metal for m in spec.metals]
        writer.writerow(list(RANK_COLUMNS) + [f"bound_fraction_{m}" for m in metals])
        for r in rows:
            data = r.as_json()
            writer.writerow(["" if data[c] is None else data[c] for c in RANK_COLUMNS]
                            + [r.bound_fraction.get(m, "") for m in metals])
        print(buffer.getvalue(), end="")
        return 0
    currency = (prices.currency if prices else "EUR")
    print(f"Buffer systems for pH {spec.ph:g} at {spec.temperature_c:g} °C (sorted by {args.sort})")
    print(f"  {'#':>3}  {'system':<18} {'mM':>8} {'pKa':>6} {'β mM/pH':>8} {'dpH/dT':>8} {'I mM':>7} "
          f"{currency + '/L':>9}")
    for r in rows:
        if not r.feasible:
            continue
        print(f"  {r.rank:>3}  {r.system_id:<18} {r.conc_mol_l * 1000:8.3g} {r.pka_at_use:6.2f} "
              f"{r.capacity_mol_l_per_ph * 1000:8.2f} {r.dph_dt_per_k:+8.4f} {r.ionic_strength_mol_l * 1000:7.1f} "
              f"{r.cost_per_l:9.4f}")
        print(f"       {r.reason}")
        for metal, fraction in r.bound_fraction.items():
            print(f"       binds {fraction * 100:.2f} % of {metal}")
    others = [r for r in rows if not r.feasible]
    if others:
        print("\nCannot meet the spec or excluded:")
        for r in others:
            print(f"  {r.system_id:<18} {r.reason}")
    return 0


def register(commands) -> None:
    """Add ``optimise`` and ``rank`` to the ``poise`` sub-command parser."""
    optimise = commands.add_parser(
        "optimise", help="cheapest mix of catalog reagents that meets a spec",
        description="Find the cheapest (or best by --objective) mix that meets the spec, "
                    "e.g. 'poise optimise --ph 7.4 --temperature 37 --capacity 20'.")
    add_spec_arguments(optimise)
    optimise.add_argument("--max-systems", type=_whole, default=2, metavar="K",
                          help="at most K buffer systems in the mix (default 2)")
    optimise.add_argument("--max-reagents", type=_whole, default=None, metavar="M",
                          help="at most M reagents, titrant and salt included")
    optimise.add_argument("--objective", choices=OBJECTIVES, default="cost", help="what to minimise (default cost)")
    optimise.add_argument("--prices", metavar="FILE", help="price sheet (.csv or .xlsx) over the demo prices")
    optimise.add_argument("--json", action="store_true", help="print one JSON object")
    optimise.set_defaults(handler=command_optimise)

    rank = commands.add_parser(
        "rank", help="rank buffer systems for a spec, each with its cheapest mix",
        description="Each admitted buffer system's cheapest mix for the spec, ranked; "
                    "the others with the constraint they cannot meet.")
    add_spec_arguments(rank)
    rank.add_argument("--sort", choices=SORTS, default="cost", help="order of the ranking (default cost)")
    rank.add_argument("--prices", metavar="FILE", help="price sheet (.csv or .xlsx) over the demo prices")
    output = rank.add_mutually_exclusive_group()
    output.add_argument("--csv", action="store_true", help="print CSV")
    output.add_argument("--json", action="store_true", help="print a JSON list")
    rank.set_defaults(handler=command_rank)
