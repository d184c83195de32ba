"""Price options shared by ``poise optimise``, ``poise rank`` and ``poise buy``.

``--prices FILE`` (repeatable: several sheets of offers are alternatives), ``--rates FILE``
(exchange rates for sheets in several currencies), and the plate options ``--wells`` and
``--well-volume`` from which the volume of a plate, and so the cost per plate, is computed.
"""

from __future__ import annotations

import argparse
import sys
from typing import Sequence

from selector.errors import InputError
from selector.prices import ExchangeRates, PriceBook, read_price_sheets, read_rates
from selector.spec import WELLS_MAX, BufferSpec, plates_volume_l
from selector.textsafe import echo
from selector.units import parse_volume


def add_price_argument(parser: argparse.ArgumentParser, plates: bool = True) -> None:
    """Add ``--prices FILE`` (repeatable), ``--rates FILE`` and, with ``plates``, ``--wells N``
    and ``--well-volume VOLUME`` to ``parser``."""
    parser.add_argument("--prices", metavar="FILE", action="append",
                        help="price sheet of offers (.csv or .xlsx, book.xlsx:WORKSHEET for a named worksheet) "
                             "over the demo prices; repeatable")
    parser.add_argument("--rates", metavar="FILE",
                        help="exchange rates (from_currency, to_currency, rate) for sheets in several currencies")
    if plates:
        # dests of their own: ``poise plate`` has a --well-volume of its own meaning
        parser.add_argument("--wells", dest="plate_wells",
                            help="wells per plate, e.g. 96 (with --well-volume: cost per plate)")
        parser.add_argument("--well-volume", dest="plate_well_volume", help="buffer volume per well, e.g. 200uL")


def rates_from_args(args: argparse.Namespace) -> ExchangeRates | None:
    """The rates of ``--rates`` (bad rows printed to stderr), or None."""
    if not getattr(args, "rates", None):
        return None
    rates, problems = read_rates(args.rates)
    for problem in problems:
        print(f"poise: rates sheet: {problem}", file=sys.stderr)
    return rates


def price_book_from_args(args: argparse.Namespace) -> PriceBook | None:
    """The price book of ``--prices`` (row problems printed to stderr), or None for the demo prices."""
    paths = args.prices if isinstance(args.prices, list) else [args.prices] if args.prices else []
    if not paths:
        if getattr(args, "rates", None):
            raise InputError("--rates converts the currencies of price sheets; give --prices FILE too")
        return None
    book, reports = read_price_sheets(paths, rates=rates_from_args(args))
    for report in reports:
        for problem in report.problems:
            print(f"poise: price sheet: {problem}", file=sys.stderr)
    return book


def plate_from_args(args: argparse.Namespace) -> tuple[int | None, float | None]:
    """(wells per plate, volume per well [L]) of ``--wells`` and ``--well-volume``; both or neither."""
    wells_text, volume_text = getattr(args, "plate_wells", None), getattr(args, "plate_well_volume", None)
    if wells_text is None and volume_text is None:
        return None, None
    if wells_text is None or volume_text is None:
        raise InputError("--wells and --well-volume go together (e.g. --wells 96 --well-volume 200uL)")
    try:
        wells = int(wells_text.strip())
    except ValueError:
        wells = 0
    if not 1 <= wells <= WELLS_MAX:
        raise InputError(f"--wells: expected a whole number from 1 to {WELLS_MAX}, got {echo(wells_text)}")
    return wells, parse_volume(volume_text, "--well-volume")


def spec_costs(book: PriceBook | None, reagent_ids: Sequence[str], cost_per_l: float | None,
                    volume_l: float, spec: BufferSpec) -> dict[str, object]:
    """The cost summary of a mix (:func:`selector.prices.cost_summary`) under the spec's plate
    fields (``plates``, ``wells``, ``well_volume_l``: the options or the spec file's keys)."""
    from selector.prices import demo_price_book, spec_cost_summary

    return spec_cost_summary(book if book is not None else demo_price_book(), reagent_ids, cost_per_l, volume_l,
                             spec)


def plate_volume_into_args(args: argparse.Namespace) -> None:
    """With ``--wells`` and ``--well-volume``, the volume to make is computed: plates (``--plates``,
    default 1) × wells × volume per well, written into ``args.volume``; InputError if ``--volume``
    is given too."""
    wells, well_volume_l = plate_from_args(args)
    if wells is None or well_volume_l is None:
        return
    if getattr(args, "volume", None) is not None:
        raise InputError("give --volume or --wells with --well-volume (the volume is then computed), not both")
    plates_text = str(getattr(args, "plates", None) or "1").strip()
    plates = int(plates_text) if plates_text.isdigit() else 1   # a bad --plates is reported by the spec
    args.volume = f"{plates_volume_l({'plates': plates, 'wells': wells, 'well_volume_l': well_volume_l})!r}L"
