"""``poise series``: a pH series at one ionic strength, over :func:`selector.designs.series.solve_series`.

Also the pieces ``poise span`` and ``poise plate`` share: the pH range of ``--ph``
(:func:`ph_grid`), the spec of the range's first pH (:func:`range_spec`), the cautions
block (:func:`cautions_lines`), the printing of a design (:func:`print_design`) and the
options of a design command (:func:`add_design_arguments`).
"""

from __future__ import annotations

import argparse
import json
from typing import TYPE_CHECKING, Any, Callable, Iterable

from selector.cli.optimise import infeasible_json, whole
from selector.cli.price_option import add_price_argument, price_book_from_args
from selector.cli.spec_options import add_spec_arguments, spec_from_args
from selector.errors import InfeasibleSpecError

if TYPE_CHECKING:
    from catalog import Catalog
    from selector.designs.series import SeriesResult
    from selector.spec import BufferSpec

def ph_grid(text: str | None, step: str = "required", default_step: float | None = None) -> list[float]:
    """The pHs of ``--ph FROM:TO[:STEP]`` (:func:`selector.designs.grids.ph_values`)."""
    from selector.designs.grids import ph_values

    return ph_values(text, step, default_step)


def range_spec(args: argparse.Namespace, first_ph: float) -> BufferSpec:
    """The spec of the options with ``--ph`` read as the range's first pH (the designs set each pH)."""
    args.ph = repr(first_ph)
    return spec_from_args(args)


def cautions_lines(recipes: Iterable[Any]) -> list[str]:
    """Every caution of the recipes once, the safety notice last (it closes every recipe's list)."""
    from selector.safety import SAFETY_NOTICE

    seen = dict.fromkeys(c for recipe in recipes if recipe is not None for c in recipe.cautions
                         if c != SAFETY_NOTICE)
    return ["", "Cautions:"] + [f"  - {c}" for c in seen] + [f"  {SAFETY_NOTICE}"]


def _mm(composition: dict[str, float], catalog: Catalog) -> str:
    return ", ".join(f"{catalog.reagents[r].name} {v * 1000:.4g} mM" for r, v in composition.items())


def format_series(result: SeriesResult, catalog: Catalog) -> str:
    """The readable text of ``poise series``."""
    what = (f"{result.buffer_conc_mol_l * 1000:g} mM buffer" if result.buffer_conc_mol_l is not None
            else f"β ≥ {(result.capacity_mol_l_per_ph or 0) * 1000:g} mM/pH")
    lines = [f"pH series at {result.temperature_c:g} °C, I = {result.ionic_strength_mol_l * 1000:g} mM, {what} "
             f"(systems: {', '.join(result.systems)}; reagents shared: "
             f"{', '.join(catalog.reagents[r].name for r in result.reagents)})",
             f"  {'target pH':>9}  {'verified':>8}  {'I mM':>7}  {'β mM/pH':>8}  {result.currency + '/L':>8}  composition"]
    for m in result.members:
        cost = f"{m.cost_per_l:8.4f}" if m.cost_per_l is not None else f"{'-':>8}"
        lines.append(f"  {m.target_ph:9.2f}  {m.verified_ph:8.4f}  {m.ionic_strength_mol_l * 1000:7.2f}  "
                     f"{m.capacity_mol_l_per_ph * 1000:8.2f}  {cost}  {_mm(m.composition_mol_l, catalog)}")
    lines.append(f"Verified by the exact engine: largest pH error {result.max_ph_error:.2g}, largest I error "
                 f"{result.max_ionic_error_relative * 100:.2g} %.")
    for m in result.members:
        lines += ["", f"Member pH {m.target_ph:g} ({m.recipe.volume_l * 1000:g} mL):"]
        lines += [f"  {k}. {step}" for k, step in enumerate(m.recipe.steps, 1)]
    if result.plan is not None:
        lines += ["", *plan_lines(result.plan)]
    lines += ["", "Notes on the systems:"] + [f"  - {n}" for n in result.notes] if result.notes else []
    recipes = [m.recipe for m in result.members]
    if result.plan is not None:
        recipes += [s.recipe for s in result.plan.stocks]
    lines += cautions_lines(recipes)
    return "\n".join(lines)


def plan_lines(plan: Any) -> list[str]:
    """The mixing plan: each stock with its steps, then mL of each stock per member."""
    names = [s.stock.name for s in plan.stocks]
    lines = ["Mixing plan from shared stocks:"]
    for s in plan.stocks:
        if s.recipe is None:
            continue
        lines.append(f"  {s.stock.name}: {s.volume_ml:.4g} mL needed; make {s.make_ml:.4g} mL")
        lines += [f"    {k}. {step}" for k, step in enumerate(s.recipe.steps, 1)]
    lines.append("  mL per member: " + " | ".join(names))
    for p, row in zip(plan.member_ph, plan.volumes_ml):
        lines.append(f"  pH {p:<6g} " + " | ".join(f"{v:.2f}" for v in row))
    return lines


def command_series(args: argparse.Namespace) -> int:
    from catalog import load_catalog
    from selector.designs.series import solve_series

    grid = ph_grid(args.ph)
    spec = range_spec(args, grid[0])
    prices = price_book_from_args(args)
    return print_design(args, lambda: solve_series(spec, grid, prices, max_systems=args.max_systems,
                                                   per_member=args.per_member, plan=not args.no_plan),
                        {"members": []}, lambda result: format_series(result, load_catalog()))


def print_design(args: argparse.Namespace, solve: Callable[[], Any], empty: dict[str, Any],
                 text: Callable[[Any], str]) -> int:
    """Run a design and print it (JSON with ``--json``, else ``text``); an infeasible design
    prints its JSON (``empty`` keys beside the conflicts) with ``--json`` and ends through
    the error funnel."""
    try:
        result = solve()
    except InfeasibleSpecError as error:
        if args.json:
            print(json.dumps(infeasible_json(error) | empty, indent=2))
        raise
    print(json.dumps(result.as_json(), indent=2) if args.json else text(result))
    return 0


def add_design_arguments(parser: argparse.ArgumentParser, max_systems: int, systems_help: str,
                         own: Callable[[argparse.ArgumentParser], None]) -> None:
    """The options of a design command, in the order ``--help`` lists them: the spec's, then
    ``--max-systems K`` (default ``max_systems``, help ``systems_help``), the command's
    ``own`` options, ``--prices`` and ``--json``."""
    add_spec_arguments(parser)
    parser.add_argument("--max-systems", type=whole, default=max_systems, metavar="K",
                        help=f"{systems_help} (default {max_systems})")
    own(parser)
    add_price_argument(parser, plates=False)
    parser.add_argument("--json", action="store_true", help="print one JSON object")


def _series_options(series: argparse.ArgumentParser) -> None:
    series.add_argument("--per-member", action="store_true",
                        help="let each member choose its own systems and reagents")
    series.add_argument("--no-plan", action="store_true", help="leave out the mixing plan from shared stocks")


def register(commands: Any) -> None:
    """Add ``series`` to the sub-command parser."""
    series = commands.add_parser(
        "series", help="a pH series at one ionic strength and buffer concentration",
        description="Design one buffer per pH of --ph FROM:TO:STEP at the same ionic strength and buffer "
                    "concentration (or capacity), from one shared set of reagents, e.g. "
                    "'poise series --ph 6.0:8.0:0.5 --conc 50mM --ionic-strength 0.15'.  --ph takes the range.")
    add_design_arguments(series, 2, "at most K buffer systems for the whole series", _series_options)
    series.set_defaults(handler=command_series)
