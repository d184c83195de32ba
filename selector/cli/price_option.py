"""The ``--prices FILE`` option shared by ``poise optimise`` and ``poise rank``."""

from __future__ import annotations

import argparse
import sys

from selector.prices import PriceBook, read_price_sheet


def add_price_argument(parser: argparse.ArgumentParser) -> None:
    """Add ``--prices FILE`` (a price sheet over the demo prices) to ``parser``."""
    parser.add_argument("--prices", metavar="FILE", help="price sheet (.csv or .xlsx) over the demo prices")


def price_book_from_args(args: argparse.Namespace) -> PriceBook | None:
    """The price book of ``--prices`` (its row problems printed to stderr), or None for the demo prices."""
    if not args.prices:
        return None
    book, report = read_price_sheet(args.prices)
    for problem in report.problems:
        print(f"poise: price sheet: {problem}", file=sys.stderr)
    return book
