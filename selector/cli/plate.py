"""``poise plate``: a plate of pH × ionic strength wells over :func:`selector.designs.plate.solve_plate`."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING, Any

from selector.cli.optimise import whole
from selector.cli.price_option import add_price_argument, price_book_from_args
from selector.cli.series import cautions_lines, ph_grid, print_design, range_spec
from selector.cli.spec_options import add_spec_arguments
from selector.errors import InputError

if TYPE_CHECKING:
    from catalog import Catalog
    from selector.designs.plate import PlateResult

#: Plate sizes ``--plate`` offers (:data:`selector.designs.plate.PLATE_FORMATS`; a test checks them).
PLATE_SIZES = (96, 384)


def ionic_grid(text: str | None) -> list[float]:
    """The ionic strengths [mol/L] of ``--ionic-strength`` (:func:`selector.designs.grids.ionic_values`)."""
    from selector.designs.grids import ionic_values

    return ionic_values(text)


def _volume(text: str, option: str, zero_ok: bool = False) -> float:
    """A volume option in µL (``zero_ok``: a zero volume, e.g. ``0uL``, is allowed)."""
    from selector.units import VOLUME_HELP, parse_volume, split_quantity

    if zero_ok and split_quantity(text, option, VOLUME_HELP, "500mL")[0] == 0:
        return 0.0
    return parse_volume(text, what=option) * 1e6


def plate_map(result: PlateResult) -> list[str]:
    """The plate as text: one line per row, each well ``pH/I mM`` (or ``pH/c mM``)."""
    by_conc = result.layout.endswith("buffer concentration")
    rows: dict[str, list[str]] = {}
    for w in result.wells:
        second = w.target_conc_mol_l if by_conc else w.target_ionic_strength_mol_l
        rows.setdefault(w.well[0], []).append(f"{w.target_ph:5.2f}/{second * 1000:<4.3g}")
    width = max(len(v) for v in rows.values())
    head = "    " + " ".join(f"{c + 1:^10}" for c in range(width))
    what = "buffer mM" if by_conc else "I mM"
    return [f"Plate map ({result.layout}; each well pH/{what}):", head] + [
        f"  {r} " + " ".join(f"{cell:^10}" for cell in cells) for r, cells in rows.items()]


def format_plate(result: PlateResult, catalog: Catalog, worklist: str | None) -> str:
    """The readable text of ``poise plate``."""
    lines = plate_map(result)
    lines += ["", f"Stocks (volume to make includes {result.dead_volume_ul:g} µL dead volume each; systems: "
                  f"{', '.join(result.systems)}):"]
    for s in result.stocks:
        lines.append(f"  {s.stock.name}: {s.volume_ml:.4g} mL needed; make {s.make_ml:.4g} mL")
        if s.recipe is not None:
            lines += [f"    {k}. {step}" for k, step in enumerate(s.recipe.steps, 1)]
    lines += ["", f"{len(result.wells)} wells of {result.well_volume_ul:g} µL, {result.transfers} transfers, every "
                  f"volume zero or at least {result.min_pipette_ul:g} µL; verified by the exact engine: largest pH "
                  f"error {result.max_ph_error:.2g}, largest I error {result.max_ionic_error_relative * 100:.2g} %"]
    if worklist:
        lines.append(f"Worklist written to {worklist}")
    else:
        lines += ["", "Worklist:", result.worklist_csv().rstrip("\n")]
    lines += ["", "Notes on the systems:"] + [f"  - {n}" for n in result.notes] if result.notes else []
    lines += cautions_lines([s.recipe for s in result.stocks])
    return "\n".join(lines)


def _write(path: str, text: str) -> None:
    try:
        with open(path, "w", encoding="utf-8", newline="") as out:
            out.write(text)
    except OSError as error:
        raise InputError(f"cannot write the worklist to {path}: {error.strerror or error}") from None


def command_plate(args: argparse.Namespace) -> int:
    from catalog import load_catalog
    from selector.designs.grids import conc_values
    from selector.designs.plate import solve_plate

    grid = ph_grid(args.ph, step="optional")
    ionic = ionic_grid(args.ionic_strength)
    args.ionic_strength = None
    concs = None
    if args.conc is not None and ":" in args.conc:
        concs = conc_values(args.conc)
        args.conc = None
    well = _volume(args.well_volume, "--well-volume")
    minimum = _volume(args.min_pipette, "--min-pipette", zero_ok=True)
    dead = _volume(args.dead_volume, "--dead-volume", zero_ok=True)
    spec = range_spec(args, grid[0])
    prices = price_book_from_args(args)

    def solve() -> PlateResult:
        result = solve_plate(spec, grid, ionic, well, args.plate, minimum, dead, prices,
                             max_systems=args.max_systems, conc_values_mol_l=concs)
        if args.worklist:
            _write(args.worklist, result.worklist_csv())
        return result
    return print_design(args, solve, {"stocks": [], "wells": []},
                        lambda result: format_plate(result, load_catalog(), args.worklist))


def register(commands: Any) -> None:
    """Add ``plate`` to the sub-command parser."""
    plate = commands.add_parser(
        "plate", help="a plate of pH x ionic strength wells pipetted from a few stocks",
        description="Lay out every pH of --ph FROM:TO:STEP with every ionic strength of --ionic-strength "
                    "FROM:TO:STEP (or every buffer concentration of --conc FROM:TO:STEP) on a plate, design a few "
                    "stocks and the volume of each in every well, e.g. "
                    "'poise plate --ph 6.0:8.0:0.5 --ionic-strength 0.05:0.25:0.1 --conc 50mM "
                    "--well-volume 200uL'.  --ph, --ionic-strength and --conc take ranges.")
    add_spec_arguments(plate)
    plate.add_argument("--well-volume", default="200uL", help="volume of each well (default 200uL)")
    plate.add_argument("--plate", type=int, choices=PLATE_SIZES, default=96, help="wells per plate (default 96)")
    plate.add_argument("--min-pipette", default="1uL",
                       help="smallest volume pipetted; every volume is zero or at least this (default 1uL)")
    plate.add_argument("--dead-volume", default="20uL", help="volume left in each stock's reservoir (default 20uL)")
    plate.add_argument("--max-systems", type=whole, default=2, metavar="K",
                       help="at most K buffer systems (default 2)")
    plate.add_argument("--worklist", metavar="FILE", help="write the worklist CSV (source, destination well, volume_ul)")
    add_price_argument(plate, plates=False)   # the plate has its own --well-volume and --plate
    plate.add_argument("--json", action="store_true", help="print one JSON object")
    plate.set_defaults(handler=command_plate)
