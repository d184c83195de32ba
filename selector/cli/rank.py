"""``poise rank``: each admitted buffer system scored at the spec, ranked by a profile."""

from __future__ import annotations

import argparse
import json
from typing import TYPE_CHECKING, Any

from selector.cli.choices import PROFILE_NAMES, SORT_NAMES
from selector.cli.price_option import add_price_argument, plate_volume_into_args, price_book_from_args, spec_costs
from selector.cli.spec_options import add_ranking_arguments, add_spec_arguments, spec_from_args
from selector.errors import InfeasibleSpecError
from selector.textsafe import write_csv

if TYPE_CHECKING:
    from selector.rank import RankedSystem

RANK_COLUMNS = ("rank", "system", "feasible", "conc_mol_l", "pka_at_use", "distance_ph", "capacity_mol_l_per_ph",
                "dph_dt_per_k", "dilution_value_ph", "ionic_strength_mol_l", "cost_per_l", "cost_for_volume",
                "reason", "cost_per_plate", "price_origins")
#: Columns after the per-metal ones: the score, u(pH) and the remedy.
RANK_EXTRA_COLUMNS = ("score", "ph_uncertainty", "remedy_option", "remedy_value")
#: Names of the criteria (:data:`selector.profiles.CRITERIA`) for the CSV header, without importing the engine.
_CRITERIA = tuple(name for name in SORT_NAMES if name != "score")


def format_ranking_csv(rows: tuple[RankedSystem, ...], metals: list[str],
                       costs: list[dict[str, Any]] | None = None) -> str:
    """The CSV of ``poise rank --csv``: one line per system, a bound-fraction column per metal,
    then the score, u(pH), the remedy and each criterion's value and score; numbers to 6
    significant figures; ``costs`` (per row) give the plate cost and price origins."""
    from selector.prices import rounded

    def cell(value: Any) -> Any:
        return rounded(value) if isinstance(value, float) else value

    header = list(RANK_COLUMNS) + [f"bound_fraction_{m}" for m in metals] + list(RANK_EXTRA_COLUMNS)
    header += [f"{name}{part}" for name in _CRITERIA for part in ("", "_score")]
    extra = costs if costs is not None else [{} for _ in rows]
    lines = []
    for r, c in zip(rows, extra):
        data = {**r.as_json(), "cost_per_plate": c.get("cost_per_plate", r.cost_per_plate),
                "price_origins": "; ".join(f"{k}: {v}" for k, v in c.get("price_origins", {}).items())}
        line = [data[k] for k in RANK_COLUMNS] + [r.bound_fraction.get(m, "") for m in metals]
        line += [r.score, r.ph_uncertainty, r.remedy.option if r.remedy else "", r.remedy.value if r.remedy else ""]
        for name in _CRITERIA:
            criterion = r.criteria.get(name)
            line += ["" if criterion is None or criterion.value is None else criterion.value,
                     "" if criterion is None else criterion.score]
        lines.append(["" if v is None else cell(v) for v in line])
    return write_csv(header, lines)


def criteria_line(r: RankedSystem) -> str:
    """``|pH − pKa′| 0.0466 pH (1.00) · |dpH/dT| 0.0117 pH/K (0.71) · volatile (LC-MS) no (0.00) · …``:
    every criterion by its label, its value in words and its score."""
    from selector.criteria import RULES

    return " · ".join(f"{RULES[name].label} {c.words()} ({c.score:.2f})" for name, c in r.criteria.items())


def _feasible_lines(r: RankedSystem, ph: float, name: str) -> list[str]:
    """A ranked (feasible) system: its figures, its reason, its criteria, the metal it binds and,
    when the listed metals move it by a printed digit, the pH with them present."""
    figures = (r.rank, r.conc_mol_l, r.pka_at_use, r.capacity_mol_l_per_ph, r.dph_dt_per_k,
               r.ionic_strength_mol_l, r.cost_per_l)
    rank, conc, pka, beta, drift, ionic, cost = figures
    if rank is None or conc is None or pka is None or beta is None or drift is None or ionic is None \
            or cost is None:
        raise ValueError(f"ranked system {r.system_id} lacks a verified figure")
    score = "" if r.score is None else f"{r.score:.3f}"
    u = "" if r.ph_uncertainty is None else f"±{r.ph_uncertainty:.3f}"
    lines = [f"  {rank:>3}  {name:<18} {score:>6} {conc * 1000:8.4g} {pka:6.2f} {beta * 1000:8.2f} "
             f"{drift:+8.4f} {ionic * 1000:7.1f} {cost:9.4f} {u:>7}",
             f"       {r.reason}"]
    if r.criteria:
        lines.append(f"       {criteria_line(r)}")
    lines += [f"       binds {fraction * 100:.2f} % of {metal}" for metal, fraction in r.bound_fraction.items()]
    if r.ph_with_metals is not None and round(r.ph_with_metals, 3) != round(ph, 3):
        lines.append(f"       pH {r.ph_with_metals:.3f} with the listed metals at their concentrations")
    lines += [f"       warning: {note}" for note in r.precipitation]
    return lines


def format_ranking(rows: tuple[RankedSystem, ...], ph: float, temperature_c: float, sort: str,
                   currency: str, profile: str = "assay") -> str:
    """The readable text of ``poise rank``: systems by their short names."""
    from catalog.records import short_system_name

    order = f"{profile} profile" if sort == "score" else f"sorted by {sort}"
    lines = [f"Buffer systems for pH {ph:g} at {temperature_c:g} °C ({order})",
             f"  {'#':>3}  {'system':<18} {'score':>6} {'mM':>8} {'pKa′':>6} {'β mM/pH':>8} {'dpH/dT':>8} "
             f"{'I mM':>7} {currency + '/L':>9} {'u(pH)':>7}"]
    for r in rows:
        if r.feasible:
            lines += _feasible_lines(r, ph, short_system_name(r.name))
    others = [r for r in rows if not r.feasible]
    if not any(r.feasible for r in rows):
        lines.append("  (no system meets the spec)")
    if others:
        lines.append("\nCannot meet the spec or excluded:")
        for r in others:
            lines.append(f"  {short_system_name(r.name):<18} {r.reason}")
            if r.remedy is not None:
                lines.append(f"  {'':<18} remedy: {r.remedy.text}")
            elif not r.excluded and r.remedy_reason:
                lines.append(f"  {'':<18} no remedy: {r.remedy_reason}")
    return "\n".join(lines)


def command_rank(args: argparse.Namespace) -> int:
    from selector.rank import rank_systems

    plate_volume_into_args(args)
    spec = spec_from_args(args, ranking=True)
    prices = price_book_from_args(args)
    rows = rank_systems(spec, prices, sort=args.sort)
    costs = [spec_costs(prices, list(r.reagents_mol_l), r.cost_per_l, spec.volume_l, spec)
             for r in rows]
    if args.json:
        print(json.dumps([{**r.as_json(), "costs": c} for r, c in zip(rows, costs)], indent=2))
    elif args.csv:
        print(format_ranking_csv(rows, [m.metal for m in spec.metals], costs), end="")
    else:
        from selector.report import format_cost_lines

        currency = prices.currency if prices else "EUR"
        print(format_ranking(rows, spec.ph, spec.temperature_c, args.sort, currency, spec.profile or "assay"))
        used = [c for r, c in zip(rows, costs) if r.feasible]
        if used:
            origins = {k: v for c in used for k, v in c["price_origins"].items()}   # type: ignore[attr-defined]
            print("\n".join(format_cost_lines({**used[0], "price_origins": origins, "plate_volume_l": None})))
    if not any(r.feasible for r in rows):   # exit code 2, as `poise optimise` for an infeasible spec
        raise InfeasibleSpecError("no buffer system meets the spec; the reason and remedy of each is listed")
    return 0


def register(commands: Any) -> None:
    """Add ``rank`` to the ``poise`` sub-command parser."""
    rank = commands.add_parser(
        "rank", help="rank buffer systems for a spec by suitability",
        description="Each admitted buffer system's cheapest mix for the spec, with its criteria scored and "
                    "ranked by a profile (" + ", ".join(PROFILE_NAMES) + "); the others with the constraint "
                    "they cannot meet and the one change that would make them work.")
    add_spec_arguments(rank)
    add_ranking_arguments(rank)
    rank.add_argument("--sort", choices=SORT_NAMES, default="score",
                      help="order: score (the profile's, default) or one criterion, best first")
    add_price_argument(rank)
    output = rank.add_mutually_exclusive_group()
    output.add_argument("--csv", action="store_true", help="print CSV")
    output.add_argument("--json", action="store_true", help="print a JSON list")
    rank.set_defaults(handler=command_rank)
