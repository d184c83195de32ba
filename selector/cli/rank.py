"""``poise rank``: each admitted buffer system's cheapest verified mix for a spec, ranked."""

from __future__ import annotations

import argparse
import json
from typing import TYPE_CHECKING, Any

from selector.cli.choices import SORT_NAMES
from selector.cli.price_option import add_price_argument, costs_from_args, plate_volume_into_args, price_book_from_args
from selector.cli.spec_options import add_spec_arguments, spec_from_args
from selector.errors import InfeasibleSpecError
from selector.textsafe import write_csv

if TYPE_CHECKING:
    from selector.rank import RankedSystem

RANK_COLUMNS = ("rank", "system", "feasible", "conc_mol_l", "pka_at_use", "distance_ph", "capacity_mol_l_per_ph",
                "dph_dt_per_k", "dilution_value_ph", "ionic_strength_mol_l", "cost_per_l", "cost_for_volume",
                "reason", "cost_per_plate", "price_origins")


def format_ranking_csv(rows: tuple[RankedSystem, ...], metals: list[str],
                       costs: list[dict[str, Any]] | None = None) -> str:
    """The CSV of ``poise rank --csv``: one line per system, a bound-fraction column per metal;
    numbers to 6 significant figures; ``costs`` (per row) give the plate cost and price origins."""
    from selector.prices import rounded

    def cell(value: Any) -> Any:
        return rounded(value) if isinstance(value, float) else value

    extra = costs if costs is not None else [{} for _ in rows]
    return write_csv(list(RANK_COLUMNS) + [f"bound_fraction_{m}" for m in metals],
                     [[cell({**r.as_json(), "cost_per_plate": c.get("cost_per_plate", r.cost_per_plate),
                             "price_origins": "; ".join(f"{k}: {v}" for k, v in c.get("price_origins", {}).items())}[k])
                       for k in RANK_COLUMNS] + [cell(r.bound_fraction.get(m, "")) for m in metals]
                      for r, c in zip(rows, extra)])


def _feasible_lines(r: RankedSystem) -> list[str]:
    """A ranked (feasible) system: its figures, its reason and the metal it binds."""
    figures = (r.rank, r.conc_mol_l, r.pka_at_use, r.capacity_mol_l_per_ph, r.dph_dt_per_k,
               r.ionic_strength_mol_l, r.cost_per_l)
    rank, conc, pka, beta, drift, ionic, cost = figures
    if rank is None or conc is None or pka is None or beta is None or drift is None or ionic is None \
            or cost is None:
        raise ValueError(f"ranked system {r.system_id} lacks a verified figure")
    lines = [f"  {rank:>3}  {r.system_id:<18} {conc * 1000:8.3g} {pka:6.2f} {beta * 1000:8.2f} {drift:+8.4f} "
             f"{ionic * 1000:7.1f} {cost:9.4f}",
             f"       {r.reason}"]
    lines += [f"       binds {fraction * 100:.2f} % of {metal}" for metal, fraction in r.bound_fraction.items()]
    return lines


def format_ranking(rows: tuple[RankedSystem, ...], ph: float, temperature_c: float, sort: str,
                   currency: str) -> str:
    """The readable text of ``poise rank``."""
    lines = [f"Buffer systems for pH {ph:g} at {temperature_c:g} °C (sorted by {sort})",
             f"  {'#':>3}  {'system':<18} {'mM':>8} {'pKa':>6} {'β mM/pH':>8} {'dpH/dT':>8} {'I mM':>7} "
             f"{currency + '/L':>9}"]
    for r in rows:
        if r.feasible:
            lines += _feasible_lines(r)
    others = [r for r in rows if not r.feasible]
    if others:
        lines.append("\nCannot meet the spec or excluded:")
        lines += [f"  {r.system_id:<18} {r.reason}" for r in others]
    return "\n".join(lines)


def command_rank(args: argparse.Namespace) -> int:
    from selector.rank import rank_systems

    plate_volume_into_args(args)
    spec = spec_from_args(args)
    prices = price_book_from_args(args)
    rows = rank_systems(spec, prices, sort=args.sort)
    costs = [costs_from_args(args, prices, list(r.reagents_mol_l), r.cost_per_l, spec.volume_l, spec.plates)
             for r in rows]
    if args.json:
        print(json.dumps([{**r.as_json(), "costs": c} for r, c in zip(rows, costs)], indent=2))
    elif args.csv:
        print(format_ranking_csv(rows, [m.metal for m in spec.metals], costs), end="")
    else:
        from selector.report import format_cost_lines

        currency = prices.currency if prices else "EUR"
        print(format_ranking(rows, spec.ph, spec.temperature_c, args.sort, currency))
        used = [c for r, c in zip(rows, costs) if r.feasible]
        if used:
            origins = {k: v for c in used for k, v in c["price_origins"].items()}   # type: ignore[attr-defined]
            print("\n".join(format_cost_lines({**used[0], "price_origins": origins, "plate_volume_l": None})))
    if not any(r.feasible for r in rows):   # exit code 2, as `poise optimise` for an infeasible spec
        raise InfeasibleSpecError("no buffer system meets the spec; the reason for each is listed")
    return 0


def register(commands: Any) -> None:
    """Add ``rank`` to the ``poise`` sub-command parser."""
    rank = commands.add_parser(
        "rank", help="rank buffer systems for a spec, each with its cheapest mix",
        description="Each admitted buffer system's cheapest mix for the spec, ranked; "
                    "the others with the constraint they cannot meet.")
    add_spec_arguments(rank)
    rank.add_argument("--sort", choices=SORT_NAMES, default="cost", help="order of the ranking (default cost)")
    add_price_argument(rank)
    output = rank.add_mutually_exclusive_group()
    output.add_argument("--csv", action="store_true", help="print CSV")
    output.add_argument("--json", action="store_true", help="print a JSON list")
    rank.set_defaults(handler=command_rank)
