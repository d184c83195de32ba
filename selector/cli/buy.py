"""``poise buy``: which packs to order from which supplier to cover a lab's needs at the least cost.

A thin command over :func:`selector.purchase.solve_purchase`: needs from ``--need`` and/or a
plan file, offers from ``--prices`` sheets, terms from ``--suppliers``; prints the order list
per supplier (text), the plan as JSON, or the order list as CSV / an XLSX file.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import TYPE_CHECKING, Any

from selector.cli.price_option import add_price_argument, price_book_from_args, rates_from_args
from selector.errors import InputError
from selector.purchase import ORDER_COLUMNS
from selector.textsafe import csv_cell, write_csv

if TYPE_CHECKING:
    from catalog import Catalog
    from selector.purchase import PurchasePlan

def format_plan(plan: PurchasePlan, catalog: Catalog) -> str:
    """The readable text of ``poise buy``: the order list per supplier, shipping, total, leftovers."""
    from selector.prices import money_text
    from selector.safety import SAFETY_NOTICE, hazard_cautions

    cur = plan.currency
    lines = [f"Purchase plan: {len(plan.orders)} order lines from {len(plan.shipping)} supplier(s), "
             f"total {money_text(plan.total, cur)}"]
    for supplier, shipping in plan.shipping.items():
        own = [o for o in plan.orders if o.supplier == supplier]
        goods = sum(o.cost for o in own)
        lines += ["", f"{supplier}  (goods {money_text(goods, cur)}, shipping {money_text(shipping, cur)})"]
        for o in own:
            lines.append(f"  {o.count:>4} × {o.pack_size:<9} {o.reagent_name:<34} at {money_text(o.pack_price, cur):>14}"
                         f"  = {money_text(o.cost, cur):>14}   [{o.origin}"
                         + (f"; {o.catalog_number}" if o.catalog_number else "") + (f"; {o.grade}" if o.grade else "")
                         + "]")
    lines += ["", f"Goods {money_text(plan.goods, cur)} + shipping {money_text(sum(plan.shipping.values()), cur)}"
                  f" = total {money_text(plan.total, cur)}",
              "Needed and left over (g of product as bought):"]
    for reagent_id, grams in plan.needs_g.items():
        density = catalog.reagents[reagent_id].liquid_density_g_ml
        volume = f"   (liquid: need {grams / density:.6g} mL, left over {plan.leftover_g[reagent_id] / density:.6g} mL)" \
            if density else ""
        lines.append(f"  {catalog.reagents[reagent_id].name:<34} need {grams:12.6g} g   left over "
                     f"{plan.leftover_g[reagent_id]:12.6g} g{volume}")
    lines += [f"Note: {note}" for note in plan.notes]
    cautions = hazard_cautions(plan.needs_g, catalog)
    if cautions:
        lines += ["", "Cautions:"] + [f"  - {c}" for c in cautions] + [f"  {SAFETY_NOTICE}"]
    return "\n".join(lines)


def format_buy_or_make(rows: list, currency: str) -> str:
    """The text of ``poise buy --compare-prepared``: bought against made, per litre."""
    from selector.purchase import MAKE_NOTE

    lines = [f"Prepared buffers: bought against made, {currency} per litre"]
    for r in rows:
        made = "n/a" if r.made_per_l is None else f"{r.made_per_l:.4g}"
        lines.append(f"  {r.product:<32} {r.supplier:<24} bought {r.bought_per_l:10.4g}   made {made:>10}   "
                     f"-> {r.verdict}   [{r.origin}]")
    lines.append(f"Note: {MAKE_NOTE}.")
    return "\n".join(lines)


def write_order_xlsx(plan: PurchasePlan, path: str) -> None:
    """The order list as an XLSX workbook (worksheet ``orders``); text cells never read as formulas."""
    import openpyxl

    target = Path(path)
    if target.suffix.lower() != ".xlsx":
        raise InputError(f"--xlsx {path!r}: give a file name ending in .xlsx")
    if not target.parent.is_dir():
        raise InputError(f"--xlsx {path!r}: the folder {str(target.parent)!r} does not exist")
    workbook = openpyxl.Workbook()
    sheet = workbook.active
    sheet.title = "orders"
    sheet.append(list(ORDER_COLUMNS))
    for row in plan.order_rows():
        sheet.append([csv_cell(row[c]) for c in ORDER_COLUMNS])
    try:
        workbook.save(target)
    except OSError as error:
        raise InputError(f"--xlsx {path!r}: cannot write it ({error.strerror})") from None


def needs_from_book(items: list[str], book_file: str | None, catalog: Catalog) -> list:
    """``--make "NAME=VOLUME"``: the reagents of the recipe book's latest version of NAME, each
    for VOLUME of buffer (:func:`selector.purchase.needs_from_saved_recipes`)."""
    from selector.purchase import needs_from_saved_recipes

    made = []
    for text in items:
        name, sep, volume_text = text.rpartition("=")
        if not sep or not name.strip():
            raise InputError(f"--make {text!r}: expected NAME=VOLUME, e.g. \"hepes assay=20L\" (a recipe saved "
                             f"with --save NAME)")
        made.append((name, volume_text))
    return needs_from_saved_recipes(made, book_file, catalog)


def _plan_inputs(args: argparse.Namespace, catalog: Catalog) -> tuple[list, list[str], str | None, str | None, Any]:
    """Needs, sheet paths, suppliers path, rates path and options from the plan file and options."""
    from selector.names import resolve_reagent
    from selector.purchase import PlanOptions, parse_need, read_plan

    needs, sheets, suppliers, rates, options = [], [], None, None, PlanOptions()
    if args.plan:
        plan_file = read_plan(args.plan, catalog, args.book)
        needs, sheets = list(plan_file.needs), list(plan_file.offers)
        suppliers, rates, options = plan_file.suppliers, plan_file.rates, plan_file.options
    needs += [parse_need(text, catalog) for text in args.need]
    needs += needs_from_book(args.make, args.book, catalog)
    grades = dict(options.grades)
    for text in args.grade:
        name, sep, grade = text.partition("=")
        if not sep or not grade.strip():
            raise InputError(f"--grade {text!r}: expected REAGENT=GRADE, e.g. tris=molecular biology")
        grades[resolve_reagent(name.strip(), catalog)] = grade.strip()
    lives = dict(options.shelf_lives)
    for text in args.shelf_life:
        name, sep, months_text = text.partition("=")
        try:
            months_value = float(months_text) if sep else -1.0
        except ValueError:
            months_value = -1.0
        if not 0 < months_value <= 120:
            raise InputError(f"--shelf-life {text!r}: expected REAGENT=MONTHS with months above 0 and at most 120")
        lives[resolve_reagent(name.strip(), catalog)] = months_value
    months = (args.horizon_months, args.shelf_life_months)
    options = PlanOptions(tuple(dict.fromkeys([*options.exclude, *args.exclude])), tuple(grades.items()),
                          args.fewer_suppliers if args.fewer_suppliers is not None else options.supplier_weight,
                          months[0] if months[0] is not None else options.horizon_months,
                          months[1] if months[1] is not None else options.shelf_life_months,
                          args.within_days if args.within_days is not None else options.within_days,
                          tuple(lives.items()))
    return (needs, sheets + list(args.prices or []), args.suppliers or suppliers, args.rates or rates, options)


def command_buy(args: argparse.Namespace) -> int:
    from catalog import load_catalog
    from selector.prices import read_suppliers
    from selector.purchase import solve_purchase

    catalog = load_catalog()
    needs, sheets, suppliers_path, rates_path, options = _plan_inputs(args, catalog)
    if not needs and not args.compare_prepared:
        raise InputError("nothing to buy: give --need REAGENT=AMOUNT (repeatable), --make \"NAME=VOLUME\" (a saved "
                         "recipe) or --plan FILE with needs")
    if not sheets:
        raise InputError("poise buy orders from supplier offers: give --prices FILE (supplier, reagent, pack_size, "
                         "pack_price, currency) or offers in the plan file")
    args.prices, args.rates = sheets, rates_path
    book = price_book_from_args(args)
    assert book is not None
    if args.compare_prepared:
        return _compare_prepared(args, book, catalog)
    suppliers: dict = {}
    if suppliers_path:
        suppliers, problems = read_suppliers(suppliers_path, book.currency, rates_from_args(args))
        for problem in problems:
            print(f"poise: suppliers sheet: {problem}", file=sys.stderr)
    plan = solve_purchase(needs, book, suppliers, options, catalog)
    if args.xlsx:
        write_order_xlsx(plan, args.xlsx)
    if args.json:
        print(json.dumps(plan.as_dict(), indent=2))
    elif args.csv:
        print(write_csv(ORDER_COLUMNS, plan.order_rows()), end="")
    elif not args.xlsx:
        print(format_plan(plan, catalog))
    else:
        print(f"order list written to {args.xlsx}: {len(plan.orders)} lines, total {plan.total:.2f} {plan.currency}")
    return 0


def _compare_prepared(args: argparse.Namespace, book: Any, catalog: Catalog) -> int:
    """``--compare-prepared``: every prepared-buffer offer against making it."""
    from selector.purchase import MAKE_NOTE, buy_or_make

    if not book.prepared:
        raise InputError("--compare-prepared: the sheets hold no prepared buffer (a row with a composition, e.g. "
                         "'tris=25mM; tris hydrochloride=25mM', and the volume it makes as pack_size)")
    rows = buy_or_make(book, catalog)
    if args.json:
        print(json.dumps({"prepared": [r.as_dict() for r in rows], "currency": book.currency, "note": MAKE_NOTE},
                         indent=2))
    elif args.csv:
        print(write_csv(("product", "supplier", "bought_per_l", "made_per_l", "verdict", "currency", "origin"),
                        [r.as_dict() for r in rows]), end="")
    else:
        print(format_buy_or_make(rows, book.currency))
    return 0


def _weight(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = -1.0
    if not 0 <= value <= 1e9:
        raise argparse.ArgumentTypeError(f"expected a cost per supplier from 0 to 1e9, got {text!r}")
    return value


def _days(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = -1.0
    if not 0 <= value <= 730:
        raise argparse.ArgumentTypeError(f"expected days from 0 to 730, got {text!r}")
    return value


def _months(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = -1.0
    if not 0 < value <= 120:
        raise argparse.ArgumentTypeError(f"expected months above 0 and at most 120, got {text!r}")
    return value


def register(commands: Any) -> None:
    """Add ``buy`` to the ``poise`` sub-command parser."""
    buy = commands.add_parser(
        "buy", help="least-cost purchase plan: which packs to order from which supplier",
        description="Cover the needs (e.g. --need tris=2kg --need HCl=1L) from the offers of price sheets at the "
                    "least total cost, shipping included: an order list per supplier.")
    buy.add_argument("--need", action="append", default=[], metavar="REAGENT=AMOUNT",
                     help="grams or litres of product to cover, e.g. tris=2.5kg or HCl=1L (repeatable)")
    buy.add_argument("--make", action="append", default=[], metavar="NAME=VOLUME",
                     help="a recipe saved in the recipe book and the volume to make, e.g. \"hepes assay=20L\" "
                          "(repeatable; the latest version)")
    buy.add_argument("--book", metavar="PATH", help="the recipe book for --make and a plan's saved recipes (default: POISE_BOOK or your "
                          "data folder)")
    buy.add_argument("--plan", metavar="FILE", help="plan file (.toml): needs, recipes × volumes, sheets, options")
    add_price_argument(buy, plates=False)
    buy.add_argument("--suppliers", metavar="FILE",
                     help="suppliers' terms (supplier, shipping, free_shipping_over, min_order)")
    buy.add_argument("--exclude", action="append", default=[], metavar="SUPPLIER",
                     help="never order from this supplier (repeatable)")
    buy.add_argument("--grade", action="append", default=[], metavar="REAGENT=GRADE",
                     help="only offers of this grade for the reagent (repeatable)")
    buy.add_argument("--fewer-suppliers", type=_weight, metavar="COST",
                     help="prefer fewer suppliers: weigh each supplier used as this much extra cost (not charged)")
    buy.add_argument("--horizon-months", type=_months, metavar="MONTHS",
                     help="the needs are used evenly over this many months (with --shelf-life-months)")
    buy.add_argument("--shelf-life-months", type=_months, metavar="MONTHS",
                     help="an opened pack expires after this many months")
    buy.add_argument("--shelf-life", action="append", default=[], metavar="REAGENT=MONTHS",
                     help="an opened pack of this reagent expires after MONTHS (repeatable; over --shelf-life-months)")
    buy.add_argument("--within-days", type=_days, metavar="DAYS",
                     help="only offers whose stated lead time is at most DAYS (offers without one are kept)")
    buy.add_argument("--compare-prepared", action="store_true",
                     help="compare each prepared buffer offered (a row with a composition) with making it")
    output = buy.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help="print the plan as JSON")
    output.add_argument("--csv", action="store_true", help="print the order list as CSV")
    buy.add_argument("--xlsx", metavar="FILE", help="write the order list to an XLSX file")
    buy.set_defaults(handler=command_buy)
