"""``poise compare``: named buffer systems side by side at a spec, every criterion with its score."""

from __future__ import annotations

import argparse
import json
from typing import TYPE_CHECKING, Any

from selector.cli.choices import PROFILE_NAMES, SORT_NAMES
from selector.cli.price_option import add_price_argument, price_book_from_args
from selector.cli.spec_options import add_ranking_arguments, add_spec_arguments, spec_from_args
from selector.textsafe import write_csv

if TYPE_CHECKING:
    from selector.rank import RankedSystem

#: The criteria in the order shown (:data:`selector.profiles.CRITERIA`).
_CRITERIA = tuple(name for name in SORT_NAMES if name != "score")
#: Width of one system's column [characters].
COLUMN = 22


def _cell(r: RankedSystem, name: str) -> str:
    c = r.criteria.get(name)
    if c is None:
        return "—"
    value = "no data" if c.value is None else f"{c.value:.4g}"
    return f"{value} ({c.score:.2f})"


def _unit(rows: tuple[RankedSystem, ...], name: str) -> str:
    return next((r.criteria[name].unit for r in rows if name in r.criteria), "")


def _figure(value: float | None, scale: float = 1.0, form: str = ".4g") -> str:
    return "—" if value is None else format(value * scale, form)


def format_comparison(rows: tuple[RankedSystem, ...], ph: float, temperature_c: float, profile: str,
                      currency: str) -> str:
    """The readable text of ``poise compare``: one column per system, one line per figure."""
    def line(label: str, cells: list[str]) -> str:
        return (f"  {label:<30}" + "".join(f"{c:<{COLUMN}}" for c in cells)).rstrip()

    lines = [f"Side by side for pH {ph:g} at {temperature_c:g} °C ({profile} profile; score 0-1 in brackets)",
             line("", [r.system_id for r in rows]),
             line("meets the spec", ["yes" if r.feasible else ("excluded" if r.excluded else "no") for r in rows]),
             line("place among these", ["—" if r.rank is None else str(r.rank) for r in rows]),
             line("score", ["—" if r.score is None else f"{r.score:.3f}" for r in rows]),
             line("buffer conc [mM]", [_figure(r.conc_mol_l, 1000) for r in rows]),
             line("pKa′ at use", [_figure(r.pka_at_use, form=".3f") for r in rows]),
             line("β [mM/pH]", [_figure(r.capacity_mol_l_per_ph, 1000) for r in rows]),
             line("dpH/dT [pH/K]", [_figure(r.dph_dt_per_k, form="+.4f") for r in rows]),
             line("u(pH) [pH]", [_figure(r.ph_uncertainty, form=".3f") for r in rows])]
    lines += [line(f"{name} [{_unit(rows, name)}]", [_cell(r, name) for r in rows]) for name in _CRITERIA
              if any(name in r.criteria for r in rows)]
    lines.append("")
    for r in rows:
        lines.append(f"  {r.system_id}: {r.reason}")
        if r.remedy is not None:
            lines.append(f"  {'':<{len(r.system_id)}}  remedy: {r.remedy.text}")
    lines.append(f"  (costs in {currency}/L)")
    return "\n".join(lines)


def format_comparison_csv(rows: tuple[RankedSystem, ...]) -> str:
    """One line per criterion: its unit, then each system's value and score."""
    header = ["criterion", "unit"] + [f"{r.system_id}{part}" for r in rows for part in ("", "_score")]
    lines: list[list[Any]] = [["score", ""] + [v for r in rows for v in ("" if r.score is None else r.score, "")]]
    for name in _CRITERIA:
        cells: list[Any] = [name, _unit(rows, name)]
        for r in rows:
            c = r.criteria.get(name)
            cells += ["" if c is None or c.value is None else c.value, "" if c is None else c.score]
        lines.append(cells)
    return write_csv(header, lines)


def command_compare(args: argparse.Namespace) -> int:
    from selector.rank import compare_systems

    spec = spec_from_args(args, ranking=True)
    prices = price_book_from_args(args)
    rows = compare_systems(args.systems, spec, prices)
    if args.json:
        print(json.dumps([r.as_json() for r in rows], indent=2))
    elif args.csv:
        print(format_comparison_csv(rows), end="")
    else:
        currency = prices.currency if prices else "EUR"
        print(format_comparison(rows, spec.ph, spec.temperature_c, spec.profile or "assay", currency))
    return 0


def register(commands: Any) -> None:
    """Add ``compare`` to the ``poise`` sub-command parser."""
    compare = commands.add_parser(
        "compare", help="named buffer systems side by side at a spec",
        description="Two to eight buffer systems side by side: each one's cheapest mix for the spec, every "
                    "criterion with its value and score, the score under a profile (" + ", ".join(PROFILE_NAMES)
                    + ") and, where a system cannot meet the spec, the one change that would make it work.")
    compare.add_argument("systems", nargs="+", metavar="SYSTEM", help="buffer systems by name, e.g. hepes mops tris")
    add_spec_arguments(compare)
    add_ranking_arguments(compare)
    add_price_argument(compare)
    output = compare.add_mutually_exclusive_group()
    output.add_argument("--csv", action="store_true", help="print CSV")
    output.add_argument("--json", action="store_true", help="print a JSON list")
    compare.set_defaults(handler=command_compare)
