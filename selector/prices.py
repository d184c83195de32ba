"""Reagent prices: the catalog's demo prices, a user's price sheet, and costs of a mix.

Demo prices ship with the catalog (EUR per kg, invented, labelled ``demo``).  A price
sheet (CSV or XLSX with columns ``reagent, pack_size, pack_price, currency, supplier``)
overrides them; each bad row is reported with its row number and the rest is still used.
"""

from __future__ import annotations

import csv
import io
import math
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping

from catalog import Catalog, load_catalog, normalize_name
from selector.errors import InputError
from selector.names import resolve_reagent
from selector.textsafe import echo, summarise
from selector.units import parse_mass

DEMO_CURRENCY = "EUR"
SHEET_COLUMNS = ("reagent", "pack_size", "pack_price", "currency", "supplier")
#: Largest file the app uploads and a reader takes [MB] (a price sheet of 20 000 rows is ~1 MB).
UPLOAD_MAX_MB = 5
SHEET_MAX_BYTES = UPLOAD_MAX_MB * 1_000_000
#: Most rows a price sheet may have (a bound of the tool, far above a supplier's list).
SHEET_MAX_ROWS = 200_000
#: Columns of an XLSX sheet read (the five of :data:`SHEET_COLUMNS` and room for notes).
SHEET_MAX_COLUMNS = 50
#: Longest cell of a price sheet [characters] (a name, a size, a price, a supplier).
CELL_MAX_CHARS = 1000
#: Accepted pack sizes [g] and prices (a bound of the tool, common practice: from 1 mg to
#: 10 t, and up to 10^9 per pack or per kg in the sheet's currency, far beyond any buffer reagent).
PACK_MIN_G, PACK_MAX_G = 1e-3, 1e7
PRICE_MAX = 1e9
#: Rows with an unknown reagent reported one by one, with "did you mean" (the rest are counted).
UNKNOWN_SHOWN = 10


@dataclass(frozen=True)
class Price:
    """Price of one reagent: ``price_per_kg`` of the product as bought (purity included)."""

    reagent_id: str
    price_per_kg: float
    currency: str
    source: str          # "demo" or "sheet"
    supplier: str = ""


@dataclass(frozen=True)
class PriceBook:
    """Prices by reagent id, all in ``currency``."""

    currency: str
    prices: dict[str, Price] = field(default_factory=dict)
    label: str = "demo prices (invented)"

    def price_per_kg(self, reagent_id: str) -> float | None:
        price = self.prices.get(reagent_id)
        return price.price_per_kg if price else None

    def grams_of_product(self, reagent_id: str, conc_mol_l: float, volume_l: float = 1.0,
                         catalog: Catalog | None = None) -> float:
        """Grams of the product as bought for ``conc_mol_l`` in ``volume_l`` (purity included)."""
        catalog = catalog if catalog is not None else load_catalog()
        reagent = catalog.reagents[reagent_id]
        return conc_mol_l * volume_l * reagent.molar_mass_g_mol / reagent.purity_fraction

    def cost_breakdown(self, amounts_mol_l: Mapping[str, float], volume_l: float = 1.0,
                       catalog: Catalog | None = None) -> dict[str, float | None]:
        """Cost of each reagent of a mix for ``volume_l``; None where no price is known."""
        out: dict[str, float | None] = {}
        for reagent_id, conc in amounts_mol_l.items():
            price = self.price_per_kg(reagent_id)
            grams = self.grams_of_product(reagent_id, conc, volume_l, catalog)
            out[reagent_id] = None if price is None else price * grams / 1000.0
        return out

    def cost(self, amounts_mol_l: Mapping[str, float], volume_l: float = 1.0,
             catalog: Catalog | None = None) -> float | None:
        """Total cost of a mix for ``volume_l``; None if any used reagent has no price."""
        parts = self.cost_breakdown({r: c for r, c in amounts_mol_l.items() if c > 0}, volume_l, catalog)
        costs = [v for v in parts.values() if v is not None]
        if len(costs) < len(parts):
            return None
        return float(sum(costs))


def demo_price_book(catalog: Catalog | None = None) -> PriceBook:
    """The catalog's invented demo prices (EUR per kg)."""
    catalog = catalog if catalog is not None else load_catalog()
    prices = {r.reagent_id: Price(r.reagent_id, r.demo_price_per_kg.value, DEMO_CURRENCY, "demo")
              for r in catalog.reagents.values() if r.demo_price_per_kg is not None}
    return PriceBook(DEMO_CURRENCY, prices)


@dataclass(frozen=True)
class PriceSheetReport:
    """What happened to each row of a price sheet."""

    rows_read: int
    rows_used: int
    problems: tuple[str, ...]
    currency: str


def parse_price_rows(rows: list[dict], label: str = "price sheet",
                     catalog: Catalog | None = None, base: PriceBook | None = None
                     ) -> tuple[PriceBook, PriceSheetReport]:
    """Merge sheet rows (dicts with SHEET_COLUMNS) over ``base`` (default: demo prices).

    Row numbers in problems count the header as row 1.  Problems are summarised: the first
    few one by one, then a count (a supplier's list of 20 000 unknown products gives a dozen
    lines, and "did you mean" runs only for the unknown names shown).  The sheet's currency is the one
    most of its rows use; rows in another currency are reported and skipped.  Reagents the
    sheet does not price keep their base price only if the base is in the same currency.
    """
    catalog = catalog if catalog is not None else load_catalog()
    base = base if base is not None else demo_price_book(catalog)
    problems: list[str] = []
    unknown: list[tuple[int, str]] = []
    currencies = Counter((row.get("currency") or "").strip().upper() for row in rows
                         if (row.get("currency") or "").strip())
    currency = currencies.most_common(1)[0][0] if currencies else base.currency
    sheet: dict[str, Price] = {}
    for number, row in enumerate(rows, start=2):
        where = f"{label} row {number}"
        name = (row.get("reagent") or "").strip()
        reagent_id = catalog.reagent_names.get(normalize_name(name)) if name else None
        if reagent_id is None:
            if name:
                unknown.append((number, name))
            else:
                problems.append(f"{where}: no reagent named; row skipped")
            continue
        price = _row_price(row, where, reagent_id, currency, problems)
        if price is not None:
            previous = sheet.get(reagent_id)
            if previous is None or price.price_per_kg < previous.price_per_kg:   # the cheapest pack wins
                sheet[reagent_id] = price
    skipped = len(problems) + len(unknown)
    problems = summarise(problems) + _unknown_problems(unknown, label, catalog)
    prices = dict(base.prices) if base.currency == currency else {}
    prices.update(sheet)
    report = PriceSheetReport(len(rows), len(rows) - skipped, tuple(problems), currency)
    return PriceBook(currency, prices, label=f"{label} ({currency}) over {base.label}"
                     if base.currency == currency else f"{label} ({currency}) only"), report


def _unknown_problems(unknown: list[tuple[int, str]], label: str, catalog: Catalog) -> list[str]:
    """Rows naming reagents the catalog does not know: the first :data:`UNKNOWN_SHOWN` with
    "did you mean" suggestions, the rest summarised in one line."""
    out = []
    for number, name in unknown[:UNKNOWN_SHOWN]:
        try:
            resolve_reagent(name, catalog)
        except InputError as error:
            out.append(f"{label} row {number}: {error}; row skipped")
    rest = unknown[UNKNOWN_SHOWN:]
    if rest:
        out.append(f"{label}: {len(rest)} more rows name reagents not in the catalog (rows {rest[0][0]}-"
                   f"{rest[-1][0]}, e.g. {', '.join(echo(n) for _, n in rest[:3])}); rows skipped")
    return out


def _row_price(row: Mapping[str, str], where: str, reagent_id: str, currency: str,
               problems: list[str]) -> Price | None:
    """The price of one sheet row, or None with its problem added to ``problems``."""
    try:
        grams = parse_mass(str(row.get("pack_size") or "").strip(), what="pack size")
    except InputError as error:
        problems.append(f"{where}: {error}; row skipped")
        return None
    if not PACK_MIN_G <= grams <= PACK_MAX_G:
        problems.append(f"{where}: pack size {echo(row.get('pack_size'))} is outside {PACK_MIN_G * 1000:g} mg to "
                        f"{PACK_MAX_G / 1000:g} kg; row skipped")
        return None
    raw_price = str(row.get("pack_price") or "").strip()
    try:
        pack_price = float(raw_price) if len(raw_price) <= 40 else math.nan
    except ValueError:
        problems.append(f"{where}: pack price {echo(raw_price)} is not a number; row skipped")
        return None
    per_kg = pack_price / grams * 1000.0
    if not math.isfinite(pack_price):
        problem = "is not a finite number"
    elif pack_price < 0:
        problem = "must be zero or more"
    elif pack_price > PRICE_MAX or per_kg > PRICE_MAX:
        problem = f"is above {PRICE_MAX:g} per pack or per kg"
    else:
        problem = ""
    if problem:
        problems.append(f"{where}: pack price {echo(raw_price)} {problem}; row skipped")
        return None
    row_currency = (row.get("currency") or "").strip().upper() or currency
    if row_currency != currency:
        problems.append(f"{where}: currency {echo(row_currency)} differs from the sheet's {echo(currency)} "
                        "(mixed currencies); row skipped")
        return None
    return Price(reagent_id, per_kg, currency, "sheet", (row.get("supplier") or "").strip())


def parse_price_csv(text: str, label: str = "price sheet", catalog: Catalog | None = None,
                    base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from CSV text: at most :data:`SHEET_MAX_ROWS` rows of cells of at most
    :data:`CELL_MAX_CHARS` characters (InputError naming the row otherwise)."""
    label = echo(label)[1:-1]
    if len(text) > SHEET_MAX_BYTES:
        raise InputError(f"{label}: {len(text)} characters; a price sheet has at most {SHEET_MAX_BYTES}")
    reader = csv.DictReader(io.StringIO(text))
    try:
        fieldnames = reader.fieldnames or []
        header = [h.strip().lower() for h in fieldnames]
        missing = [c for c in SHEET_COLUMNS[:3] if c not in header]
        if missing:
            raise InputError(f"{label}: missing column(s) {', '.join(missing)}; expected columns "
                             f"{', '.join(SHEET_COLUMNS)} (currency and supplier optional)")
        rows = []
        for row in reader:
            cells = {(k or "").strip().lower(): (v if isinstance(v, str) else "") for k, v in row.items()}
            if any(len(v) > CELL_MAX_CHARS for v in cells.values()):
                raise InputError(f"{label} row {reader.line_num}: a cell longer than {CELL_MAX_CHARS} characters; "
                                 "cells hold a name, a pack size, a price, a currency or a supplier")
            rows.append(cells)
            if len(rows) > SHEET_MAX_ROWS:
                raise InputError(f"{label}: more than {SHEET_MAX_ROWS} rows; split the sheet")
    except csv.Error as error:
        raise InputError(f"{label} after line {reader.line_num}: cannot read it as CSV ({error}); check quotes and "
                         f"keep cells under {CELL_MAX_CHARS} characters") from None
    return parse_price_rows(rows, label, catalog, base)


def parse_price_bytes(data: bytes, label: str, catalog: Catalog | None = None,
                      base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from the bytes of a file (read from disk or uploaded): XLSX when
    ``label`` ends in .xlsx, UTF-8 CSV otherwise; at most :data:`SHEET_MAX_BYTES`."""
    if len(data) > SHEET_MAX_BYTES:
        raise InputError(f"price sheet {echo(label)} is {len(data)} bytes; a price sheet has at most "
                         f"{UPLOAD_MAX_MB} MB")
    if label.lower().endswith(".xlsx"):
        return parse_price_xlsx(data, label, catalog, base)
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(f"price sheet {echo(label)} is not UTF-8 text; save it as UTF-8 CSV or as XLSX") from None
    return parse_price_csv(text, label, catalog, base)


def read_price_sheet(path: str | Path, catalog: Catalog | None = None,
                     base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from a .csv or .xlsx file (see :func:`parse_price_bytes`)."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"price sheet {echo(str(path))} not found")
    if path.suffix.lower() not in (".csv", ".xlsx"):
        raise InputError(f"price sheet {echo(path.name)}: expected a .csv or .xlsx file")
    if path.stat().st_size > SHEET_MAX_BYTES:
        raise InputError(f"price sheet {echo(path.name)} is {path.stat().st_size} bytes; a price sheet has at "
                         f"most {UPLOAD_MAX_MB} MB")
    return parse_price_bytes(path.read_bytes(), path.name, catalog, base)


def parse_price_xlsx(data: bytes, label: str = "price sheet", catalog: Catalog | None = None,
                     base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from XLSX bytes (first worksheet, first row is the header)."""
    import openpyxl

    label = echo(label)[1:-1]
    try:
        workbook = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
        sheet = workbook.worksheets[0]
        values = []
        for row in sheet.iter_rows(values_only=True):
            values.append(["" if v is None else str(v) for v in row[:SHEET_MAX_COLUMNS]])
            if len(values) > SHEET_MAX_ROWS + 1:
                raise InputError(f"{label}: more than {SHEET_MAX_ROWS} rows; split the sheet")
    except InputError:
        raise
    except Exception as error:  # openpyxl and zipfile raise several unrelated types for a bad file
        raise InputError(f"{label}: cannot read it as an XLSX workbook ({echo(str(error))[1:-1]})") from None
    if not values:
        raise InputError(f"{label}: the first worksheet is empty")
    buffer = io.StringIO()
    csv.writer(buffer).writerows(values)
    return parse_price_csv(buffer.getvalue(), label, catalog, base)
