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

from catalog import Catalog, load_catalog
from selector.errors import InputError
from selector.names import resolve_reagent
from selector.units import parse_mass

DEMO_CURRENCY = "EUR"
SHEET_COLUMNS = ("reagent", "pack_size", "pack_price", "currency", "supplier")


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

    Row numbers in problems count the header as row 1.  The sheet's currency is the one
    most of its rows use; rows in another currency are reported and skipped.  Reagents the
    sheet does not price keep their base price only if the base is in the same currency.
    """
    catalog = catalog if catalog is not None else load_catalog()
    base = base if base is not None else demo_price_book(catalog)
    problems: list[str] = []
    currencies = Counter((row.get("currency") or "").strip().upper() for row in rows
                         if (row.get("currency") or "").strip())
    currency = currencies.most_common(1)[0][0] if currencies else base.currency
    sheet: dict[str, Price] = {}
    for number, row in enumerate(rows, start=2):
        where = f"{label} row {number}"
        name = (row.get("reagent") or "").strip()
        if not name:
            problems.append(f"{where}: no reagent named; row skipped")
            continue
        try:
            reagent_id = resolve_reagent(name, catalog)
        except InputError as error:
            problems.append(f"{where}: {error}; row skipped")
            continue
        try:
            grams = parse_mass(str(row.get("pack_size") or "").strip(), what="pack size")
        except InputError as error:
            problems.append(f"{where}: {error}; row skipped")
            continue
        raw_price = str(row.get("pack_price") or "").strip()
        try:
            pack_price = float(raw_price)
        except ValueError:
            problems.append(f"{where}: pack price {raw_price!r} is not a number; row skipped")
            continue
        if not math.isfinite(pack_price):
            problems.append(f"{where}: pack price {raw_price!r} is not a finite number; row skipped")
            continue
        if pack_price < 0:
            problems.append(f"{where}: pack price {raw_price!r} must be zero or more; row skipped")
            continue
        row_currency = (row.get("currency") or "").strip().upper() or currency
        if row_currency != currency:
            problems.append(f"{where}: currency {row_currency} differs from the sheet's {currency} "
                            "(mixed currencies); row skipped")
            continue
        per_kg = pack_price / grams * 1000.0
        previous = sheet.get(reagent_id)
        if previous is None or per_kg < previous.price_per_kg:   # the cheapest pack wins
            sheet[reagent_id] = Price(reagent_id, per_kg, currency, "sheet",
                                      (row.get("supplier") or "").strip())
    prices = dict(base.prices) if base.currency == currency else {}
    prices.update(sheet)
    report = PriceSheetReport(len(rows), len(rows) - len(problems), tuple(problems), currency)
    return PriceBook(currency, prices, label=f"{label} ({currency}) over {base.label}"
                     if base.currency == currency else f"{label} ({currency}) only"), report


def parse_price_csv(text: str, label: str = "price sheet", catalog: Catalog | None = None,
                    base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from CSV text."""
    reader = csv.DictReader(io.StringIO(text))
    header = [h.strip().lower() for h in (reader.fieldnames or [])]
    missing = [c for c in SHEET_COLUMNS[:3] if c not in header]
    if missing:
        raise InputError(f"{label}: missing column(s) {', '.join(missing)}; expected columns "
                         f"{', '.join(SHEET_COLUMNS)} (currency and supplier optional)")
    rows = [{(k or "").strip().lower(): (v or "") for k, v in row.items()} for row in reader]
    return parse_price_rows(rows, label, catalog, base)


def read_price_sheet(path: str | Path, catalog: Catalog | None = None,
                     base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from a .csv or .xlsx file."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"price sheet {str(path)!r} not found")
    if path.suffix.lower() == ".xlsx":
        return parse_price_xlsx(path.read_bytes(), path.name, catalog, base)
    if path.suffix.lower() != ".csv":
        raise InputError(f"price sheet {path.name!r}: expected a .csv or .xlsx file")
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(f"price sheet {path.name!r} is not UTF-8 text; save it as UTF-8 CSV or as XLSX") from None
    return parse_price_csv(text, path.name, catalog, base)


def parse_price_xlsx(data: bytes, label: str = "price sheet", catalog: Catalog | None = None,
                     base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from XLSX bytes (first worksheet, first row is the header)."""
    import openpyxl

    try:
        workbook = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as error:  # openpyxl raises several unrelated types for a bad file
        raise InputError(f"{label}: cannot read it as an XLSX workbook ({error})") from None
    sheet = workbook.worksheets[0]
    values = [["" if v is None else str(v) for v in row] for row in sheet.iter_rows(values_only=True)]
    if not values:
        raise InputError(f"{label}: the first worksheet is empty")
    buffer = io.StringIO()
    csv.writer(buffer).writerows(values)
    return parse_price_csv(buffer.getvalue(), label, catalog, base)
