"""``poise span``: a broad-range mixture over :func:`selector.designs.span.solve_span`."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING, Any

from selector.cli.price_option import price_book_from_args
from selector.cli.series import add_design_arguments, cautions_lines, ph_grid, print_design, range_spec

if TYPE_CHECKING:
    from catalog import Catalog
    from selector.designs.span import SpanResult


def format_span(result: SpanResult, catalog: Catalog) -> str:
    """The readable text of ``poise span``."""
    titrant = catalog.reagents[result.titrant].name
    cost = f"{result.cost_per_l:.4f} {result.currency} per litre" if result.cost_per_l is not None else "no price"
    lines = [f"Broad-range mixture at {result.temperature_c:g} °C (systems: {', '.join(result.systems)}; {cost})"]
    lines += [f"  {catalog.reagents[r].name:<42} {v * 1000:10.4g} mM" for r, v in result.composition_mol_l.items()]
    lines += [f"Its own pH: {result.own_ph:.2f}; adjust with {titrant} (1 M stock) to each pH:",
              f"  {'pH':>5}  {titrant + ' mM':>14}  {'mL 1 M per L':>12}  {'β mM/pH':>8}  {'verified pH':>11}"]
    for row in result.table:
        lines.append(f"  {row.ph:5.2f}  {row.titrant_mol_l * 1000:14.3f}  {row.titrant_ml_per_l:12.3f}  "
                     f"{row.capacity_mol_l_per_ph * 1000:8.2f}  {row.verified_ph:11.4f}")
    lines.append(f"Smallest β over the range: {result.min_capacity_mol_l_per_ph * 1000:.3f} mM/pH "
                 f"(floor {result.capacity_floor_mol_l_per_ph * 1000:g}); verified by the exact engine, largest pH "
                 f"error {result.max_ph_error:.2g}" + ("; titration curve straightened (cost within 10 %)"
                                                      if result.linear else ""))
    lines += ["", f"Recipe of the mixture ({result.recipe.volume_l * 1000:g} mL):"]
    lines += [f"  {k}. {step}" for k, step in enumerate(result.recipe.steps, 1)]
    lines += ["", "Notes on the systems:"] + [f"  - {n}" for n in result.notes] if result.notes else []
    lines += cautions_lines([result.recipe])
    return "\n".join(lines)


def command_span(args: argparse.Namespace) -> int:
    from catalog import load_catalog
    from selector.designs.span import DEFAULT_STEP_PH, solve_span

    grid = ph_grid(args.ph, step="optional", default_step=DEFAULT_STEP_PH)
    spec = range_spec(args, grid[0])
    prices = price_book_from_args(args)
    return print_design(args, lambda: solve_span(spec, grid, prices, max_systems=args.max_systems,
                                                 linear=args.linear),
                        {"composition_mol_l": {}, "table": []}, lambda result: format_span(result, load_catalog()))


def _span_options(span: argparse.ArgumentParser) -> None:
    span.add_argument("--linear", action="store_true",
                      help="also make the titration curve as straight as a cost within 10 %% allows")


def register(commands: Any) -> None:
    """Add ``span`` to the sub-command parser."""
    span = commands.add_parser(
        "span", help="one mixture whose capacity stays above a floor over a pH interval",
        description="Find the cheapest mixture whose buffer capacity stays at least --capacity at every pH of "
                    "--ph FROM:TO[:STEP] (default step 0.1) when adjusted with one titrant, e.g. "
                    "'poise span --ph 4.0:9.0 --capacity 10'.  --ph takes the range.")
    add_design_arguments(span, 3, "at most K buffer systems in the mixture", _span_options)
    span.set_defaults(handler=command_span)
