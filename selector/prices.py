"""Reagent prices: the catalog's demo prices, supplier offers from price sheets, and costs.

Demo prices ship with the catalog (EUR per kg, invented, labelled ``demo``).  A price sheet
(CSV or XLSX) lists **offers**, one a row: ``supplier, reagent, pack_size, pack_price,
currency`` and optionally ``grade``, ``catalog_number``, ``lead_time_days`` (the older
sheet of ``reagent, pack_size, pack_price, currency, supplier`` is the same table).  Several
offers per reagent and several sheets are kept as alternatives; the cheapest per kg prices
the reagent for costing and every price names its origin (sheet and row, or demo).  Each bad
row is reported with its row number and the reason, and the rest is used.  A suppliers
sheet (``supplier, shipping`` and optional ``free_shipping_over``, ``min_order``) and an
exchange-rate sheet (``from_currency, to_currency, rate``) feed purchase plans
(:mod:`selector.purchase`).
"""

from __future__ import annotations

import csv
import io
import math
import re
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Mapping, Sequence

from catalog import Catalog, Reagent, load_catalog, normalize_name
from selector.errors import InputError
from selector.names import resolve_reagent
from selector.textsafe import echo, summarise
from selector.units import MASS_HELP, MASS_UNITS, VOLUME_HELP, VOLUME_UNITS, parse_volume, split_quantity

if TYPE_CHECKING:
    from selector.spec import BufferSpec

DEMO_CURRENCY = "EUR"
#: The origin every demo price names.
DEMO_ORIGIN = "demo price (catalog, invented)"
#: The label of the demo price book.
DEMO_LABEL = "demo prices (invented)"
#: Columns of an offer row; the first four are required (currency defaults to the sheet's).
SHEET_COLUMNS = ("reagent", "pack_size", "pack_price", "currency", "supplier")
OFFER_OPTIONAL_COLUMNS = ("grade", "catalog_number", "lead_time_days", "composition", "makes_volume")
SUPPLIER_COLUMNS = ("supplier", "shipping", "free_shipping_over", "min_order", "currency")
RATE_COLUMNS = ("from_currency", "to_currency", "rate")
#: Largest file the app uploads and a reader takes [MB] (a price sheet of 20 000 rows is ~1 MB).
UPLOAD_MAX_MB = 5
SHEET_MAX_BYTES = UPLOAD_MAX_MB * 1_000_000
#: Most rows a price sheet may have (a bound of the tool, far above a supplier's list).
SHEET_MAX_ROWS = 200_000
#: Columns of an XLSX sheet read (the offer columns and room for notes).
SHEET_MAX_COLUMNS = 50
#: Longest cell of a price sheet [characters] (a name, a size, a price, a supplier).
CELL_MAX_CHARS = 1000
#: Accepted pack sizes [g] and prices (a bound of the tool, common practice: from 1 mg to
#: 10 t, and up to 10^9 per pack or per kg in the sheet's currency, far beyond any buffer reagent).
PACK_MIN_G, PACK_MAX_G = 1e-3, 1e7
PRICE_MAX = 1e9
#: Longest lead time accepted [days] (a bound of the tool, common practice: two years).
LEAD_TIME_MAX_DAYS = 730
#: Rows with an unknown reagent reported one by one, with "did you mean" (the rest are counted).
UNKNOWN_SHOWN = 10
#: XLSX worksheets read before the first when no sheet is named (common practice names).
PREFERRED_WORKSHEETS = ("offers", "prices")
#: Delimiters a CSV sheet may use (the header line decides).
CSV_DELIMITERS = (",", ";", "\t")

def grams_of_product(reagent: Reagent, conc_mol_l: float, volume_l: float = 1.0) -> float:
    """Grams of the product as bought for ``conc_mol_l`` [mol/L] in ``volume_l`` [L].

    .. math:: m = c V M / w

    with M the molar mass [g/mol] and w the purity (mass fraction of the named substance).
    """
    return conc_mol_l * volume_l * reagent.molar_mass_g_mol / reagent.purity_fraction


def product_grams(text: str, reagent: Reagent, what: str = "pack size") -> float:
    """A quantity of a product (``500 g``, ``2.5 L``) in grams; volumes of a liquid through its
    catalog density (``Reagent.liquid_density_g_ml``, column ``density_g_ml`` of
    ``reagents.csv`` with its source); a volume of a solid, or of a liquid without a density, is
    an InputError saying so."""
    value, unit = split_quantity(text, what, f"{MASS_HELP}, {VOLUME_HELP}", "500g")
    if not unit:
        raise InputError(f"{what} {echo(text)} has no unit; add one of: {MASS_HELP}, or {VOLUME_HELP} for a liquid")
    if unit.lower() in MASS_UNITS:
        grams = value * MASS_UNITS[unit.lower()]
    elif unit.lower() in VOLUME_UNITS:
        grams = parse_volume(text, what) * 1000.0 * liquid_density_g_ml(reagent, what, text)
    else:
        raise InputError(f"unknown unit {echo(unit)} in {what} {echo(text)}; use one of: {MASS_HELP}, or "
                         f"{VOLUME_HELP} for a liquid")
    if grams == 0:
        raise InputError(f"{what} {echo(text)} is zero; give a positive amount")
    return grams


def liquid_density_g_ml(reagent: Reagent, what: str, text: str) -> float:
    """The density [g/mL] of a liquid product, or an InputError naming why a volume cannot be used."""
    if reagent.physical_form != "liquid":
        raise InputError(f"{what} {echo(text)}: {reagent.name} is a {reagent.physical_form}; give it by mass "
                         f"({MASS_HELP}); volumes need a density and only liquids have one here")
    density = reagent.liquid_density_g_ml
    if density is None:
        raise InputError(f"{what} {echo(text)}: no density recorded for the liquid {reagent.name}; give it by "
                         f"mass ({MASS_HELP})")
    return density


def money_text(value: float | None, currency: str) -> str:
    """A sum of money for people: 2 decimals (4 for sums between 0 and 1), the currency after it.

    Examples
    --------
    >>> money_text(1234.5, "EUR"), money_text(0.0481, "EUR"), money_text(0, "EUR")
    ('1,234.50 EUR', '0.0481 EUR', '0.00 EUR')
    """
    if value is None:
        return f"n/a {currency}"
    return f"{value:.4f} {currency}" if 0 < abs(value) < 1 else f"{value:,.2f} {currency}"


def rounded(value: float | None, digits: int = 6) -> float | None:
    """A number for CSV and JSON: ``digits`` significant figures (0.049999999999998976 -> 0.05)."""
    if value is None or not math.isfinite(value) or value == 0:
        return value
    return float(f"{value:.{digits}g}")


@dataclass(frozen=True)
class Offer:
    """One pack a supplier sells: ``pack_g`` grams of product (as bought) for ``pack_price``.

    ``origin`` names the sheet and row it was read from; ``pack_size`` is the size as written.
    """

    supplier: str
    reagent_id: str
    pack_size: str
    pack_g: float
    pack_price: float
    currency: str
    origin: str
    grade: str = ""
    catalog_number: str = ""
    lead_time_days: float | None = None

    @property
    def price_per_kg(self) -> float:
        """Price per kg of product [currency/kg]."""
        return self.pack_price / self.pack_g * 1000.0

    def as_dict(self) -> dict[str, object]:
        """The offer as plain data (JSON-ready)."""
        return {"supplier": self.supplier, "reagent": self.reagent_id, "pack_size": self.pack_size,
                "pack_g": rounded(self.pack_g), "pack_price": self.pack_price, "currency": self.currency,
                "price_per_kg": rounded(self.price_per_kg), "grade": self.grade,
                "catalog_number": self.catalog_number, "lead_time_days": self.lead_time_days, "origin": self.origin}


@dataclass(frozen=True)
class PreparedOffer:
    """A ready-made buffer (a solution, or tablets) a supplier sells: ``volume_l`` [L] of buffer
    per pack for ``pack_price``; ``composition`` is (reagent id, mol/L) of the buffer it makes."""

    supplier: str
    name: str
    pack_size: str
    volume_l: float
    pack_price: float
    currency: str
    composition: tuple[tuple[str, float], ...]
    origin: str

    @property
    def price_per_l(self) -> float:
        """Price per litre of buffer [currency/L]."""
        return self.pack_price / self.volume_l


@dataclass(frozen=True)
class Price:
    """Price of one reagent: ``price_per_kg`` of the product as bought (purity included).

    ``source`` is ``"demo"`` or ``"sheet"``; ``origin`` says where exactly (sheet and row,
    pack and supplier, or the catalog's demo column).
    """

    reagent_id: str
    price_per_kg: float
    currency: str
    source: str          # "demo" or "sheet"
    supplier: str = ""
    origin: str = DEMO_ORIGIN


@dataclass(frozen=True)
class PriceBook:
    """Prices by reagent id, all in ``currency``, and every offer read (alternatives)."""

    currency: str
    prices: dict[str, Price] = field(default_factory=dict)
    label: str = DEMO_LABEL
    offers: tuple[Offer, ...] = ()
    prepared: tuple[PreparedOffer, ...] = ()

    def price_per_kg(self, reagent_id: str) -> float | None:
        price = self.prices.get(reagent_id)
        return price.price_per_kg if price else None

    def origin(self, reagent_id: str) -> str:
        """Where the price of ``reagent_id`` comes from ("no price" if none)."""
        price = self.prices.get(reagent_id)
        return price.origin if price else "no price"

    def offers_for(self, reagent_id: str) -> list[Offer]:
        """Offers of ``reagent_id``, cheapest per kg first."""
        return sorted((o for o in self.offers if o.reagent_id == reagent_id), key=lambda o: o.price_per_kg)

    def grams_of_product(self, reagent_id: str, conc_mol_l: float, volume_l: float = 1.0,
                         catalog: Catalog | None = None) -> float:
        """Grams of the product as bought for ``conc_mol_l`` in ``volume_l`` (purity included)."""
        catalog = catalog if catalog is not None else load_catalog()
        return grams_of_product(catalog.reagents[reagent_id], conc_mol_l, volume_l)

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

    def provenance(self, reagent_ids: Sequence[str]) -> dict[str, str]:
        """Reagent id -> where its price comes from, for the reagents of a mix."""
        return {r: self.origin(r) for r in reagent_ids}


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
    label: str = "price sheet"


@dataclass(frozen=True)
class ExchangeRates:
    """Rates into one currency: ``rates[c]`` = (units of ``target`` per unit of c, origin)."""

    target: str
    rates: dict[str, tuple[float, str]] = field(default_factory=dict)

    def factor(self, currency: str) -> tuple[float, str] | None:
        """(rate, origin) turning ``currency`` into :attr:`target`; None if no rate is known."""
        if currency == self.target:
            return 1.0, ""
        return self.rates.get(currency)


@dataclass(frozen=True)
class Supplier:
    """A supplier's terms: a flat ``shipping`` charge per order, waived when the goods of the
    order reach ``free_shipping_over``; an order must reach ``min_order`` (all in ``currency``)."""

    name: str
    shipping: float
    currency: str
    origin: str
    free_shipping_over: float | None = None
    min_order: float = 0.0

    def as_dict(self) -> dict[str, object]:
        return {"supplier": self.name, "shipping": self.shipping, "free_shipping_over": self.free_shipping_over,
                "min_order": self.min_order, "currency": self.currency, "origin": self.origin}


# --- reading tables: CSV (delimiter sniffed, decimal comma) or XLSX (worksheet named or first) ----

#: Columns read as numbers: with a ``;`` or tab delimiter a decimal comma is accepted there.
NUMBER_COLUMNS = ("pack_size", "pack_price", "lead_time_days", "shipping", "free_shipping_over", "min_order",
                  "rate")
_EUROPEAN_THOUSANDS = re.compile(r"^\s*[-+]?\d{1,3}(\.\d{3})+,\d*")


def decimal_point(text: str) -> str:
    """A number written with a decimal comma (``12,50``, ``1.250,00``, ``2,5 kg``) with a point.

    Examples
    --------
    >>> decimal_point("12,50"), decimal_point("1.250,5 g"), decimal_point("500 g")
    ('12.50', '1250.5 g', '500 g')
    """
    if "," not in text:
        return text
    if _EUROPEAN_THOUSANDS.match(text):
        text = text.replace(".", "")
    return text.replace(",", ".", 1)


def split_sheet_name(path: str) -> tuple[str, str | None]:
    """``book.xlsx:Offers`` -> (``book.xlsx``, ``Offers``); any other path -> (path, None)."""
    head, sep, tail = path.rpartition(":")
    if sep and head.lower().endswith(".xlsx") and tail:
        return head, tail
    return path, None


def _header(names: Sequence[str]) -> list[str]:
    return [(n or "").strip().lower().replace(" ", "_") for n in names]


def table_rows(data: bytes, label: str, required: Sequence[str], what: str = "price sheet",
               worksheet: str | None = None) -> list[tuple[int, dict[str, str]]]:
    """(row number, cells by column) of a CSV or XLSX table; the header is row 1.

    CSV: UTF-8, the delimiter (comma, semicolon or tab) is the one the header line uses most;
    with a semicolon or tab, number columns (:data:`NUMBER_COLUMNS`) may use a decimal comma.
    XLSX when ``label`` ends in .xlsx: ``worksheet`` if given, else one named in
    :data:`PREFERRED_WORKSHEETS`, else the first.  InputError for a table that cannot be
    read, a missing required column, more than :data:`SHEET_MAX_ROWS` rows or a cell longer
    than :data:`CELL_MAX_CHARS`.
    """
    if len(data) > SHEET_MAX_BYTES:
        raise InputError(f"{what} {echo(label)} is {len(data)} bytes; a {what} has at most {UPLOAD_MAX_MB} MB")
    name = echo(label)[1:-1]
    if label.lower().endswith(".xlsx"):
        text, delimiter = _xlsx_as_csv(data, name, worksheet), ","
    else:
        try:
            text = data.decode("utf-8-sig")
        except UnicodeDecodeError:
            raise InputError(f"{what} {echo(label)} is not UTF-8 text; save it as UTF-8 CSV or as XLSX") from None
        first = text.split("\n", 1)[0]
        delimiter = max(CSV_DELIMITERS, key=first.count)
    return _csv_rows(text, name, required, what, delimiter)


def _csv_rows(text: str, name: str, required: Sequence[str], what: str,
              delimiter: str) -> list[tuple[int, dict[str, str]]]:
    """Rows of CSV text (see :func:`table_rows`)."""
    if len(text) > SHEET_MAX_BYTES:
        raise InputError(f"{name}: {len(text)} characters; a {what} has at most {SHEET_MAX_BYTES}")
    reader = csv.reader(io.StringIO(text), delimiter=delimiter)
    comma = delimiter != ","
    rows: list[tuple[int, dict[str, str]]] = []
    try:
        header = _header(next(reader, []))
        missing = [c for c in required if c not in header]
        if missing:
            raise InputError(f"{name}: missing column(s) {', '.join(missing)}; a {what} has the columns "
                             f"{', '.join(required)} (header row first; comma, semicolon or tab between cells)")
        numbers = [i for i, h in enumerate(header) if h in NUMBER_COLUMNS]
        for cells in reader:
            if any(len(c) > CELL_MAX_CHARS for c in cells):
                raise InputError(f"{name} row {reader.line_num}: a cell longer than {CELL_MAX_CHARS} characters; "
                                 "cells hold a name, a pack size, a price, a currency or a supplier")
            if not any(c.strip() for c in cells):
                continue
            if comma:
                cells = [decimal_point(c) if i in numbers else c for i, c in enumerate(cells)]
            rows.append((reader.line_num, dict(zip(header, cells))))
            if len(rows) > SHEET_MAX_ROWS:
                raise InputError(f"{name}: more than {SHEET_MAX_ROWS} rows; split the sheet")
    except csv.Error as error:
        raise InputError(f"{name} after line {reader.line_num}: cannot read it as CSV ({error}); check quotes and "
                         f"keep cells under {CELL_MAX_CHARS} characters") from None
    return rows


def _xlsx_as_csv(data: bytes, name: str, worksheet: str | None) -> str:
    """The chosen worksheet of XLSX bytes as CSV text."""
    import openpyxl

    try:
        workbook = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
        titles = {s.title.strip().lower(): s for s in workbook.worksheets}
        if worksheet is not None and worksheet.strip().lower() not in titles:
            raise InputError(f"{name}: no worksheet named {echo(worksheet)}; the workbook has "
                             f"{', '.join(echo(s.title) for s in workbook.worksheets)}")
        chosen = worksheet.strip().lower() if worksheet else next((t for t in PREFERRED_WORKSHEETS if t in titles), None)
        sheet = titles[chosen] if chosen else workbook.worksheets[0]
        values = []
        for row in sheet.iter_rows(values_only=True):
            values.append(["" if v is None else str(v) for v in row[:SHEET_MAX_COLUMNS]])
            if len(values) > SHEET_MAX_ROWS + 1:
                raise InputError(f"{name}: more than {SHEET_MAX_ROWS} rows; split the sheet")
    except InputError:
        raise
    except Exception as error:  # openpyxl and zipfile raise several unrelated types for a bad file
        raise InputError(f"{name}: cannot read it as an XLSX workbook ({echo(str(error))[1:-1]})") from None
    if not values:
        raise InputError(f"{name}: the worksheet is empty")
    buffer = io.StringIO()
    csv.writer(buffer).writerows(values)
    return buffer.getvalue()


def _positive_number(text: str, what: str, maximum: float = PRICE_MAX, zero: bool = False) -> float:
    """A number in (0, maximum] (or [0, maximum] with ``zero``); InputError naming ``what`` otherwise."""
    text = (text or "").strip()
    try:
        value = float(text) if len(text) <= 40 else math.nan
    except ValueError:
        raise InputError(f"{what} {echo(text)} is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{what} {echo(text)} is not a finite number")
    if value < 0 or (value == 0 and not zero):
        raise InputError(f"{what} {echo(text)} must be {'zero or more' if zero else 'more than zero'}")
    if value > maximum:
        raise InputError(f"{what} {echo(text)} is above {maximum:g}")
    return value


# --- offers ---------------------------------------------------------------------------------------

@dataclass
class _Reading:
    """State shared by the sheets of one price book: currency, rates, offers seen."""

    catalog: Catalog
    currency: str
    rates: ExchangeRates | None
    seen: dict[tuple[str, str, float, str], str] = field(default_factory=dict)


def _row_offer(row: Mapping[str, str], where: str, reagent: Reagent, reading: _Reading) -> Offer:
    """The offer of one sheet row (InputError with the reason otherwise)."""
    if (row.get("makes_volume") or "").strip():
        raise InputError(f"makes_volume {echo(row['makes_volume'].strip())} is for prepared buffers (a row with a "
                         "composition); a reagent's pack is its mass or, for a liquid, its volume")
    size = (row.get("pack_size") or "").strip()
    grams = product_grams(size, reagent)
    if not PACK_MIN_G <= grams <= PACK_MAX_G:
        raise InputError(f"pack size {echo(size)} is outside {PACK_MIN_G * 1000:g} mg to {PACK_MAX_G / 1000:g} kg")
    raw_price = (row.get("pack_price") or "").strip()
    try:
        price = _positive_number(raw_price, "pack price", math.inf)
    except InputError as error:
        raise InputError(str(error).replace(" is above inf", "")) from None
    if price > PRICE_MAX or price / grams * 1000.0 > PRICE_MAX:
        raise InputError(f"pack price {echo(raw_price)} is above {PRICE_MAX:g} per pack or per kg")
    currency = (row.get("currency") or "").strip().upper() or reading.currency
    note = ""
    if currency != reading.currency:
        factor = reading.rates.factor(currency) if reading.rates else None
        if factor is None:
            raise InputError(f"currency {echo(currency)} differs from the sheet's {echo(reading.currency)} (mixed "
                             + ("currencies; the rates sheet has no rate for it)" if reading.rates else
                                "currencies; give --rates FILE to convert)"))
        price, note = price * factor[0], f", converted from {currency} at {factor[0]:g} ({factor[1]})"
    lead = (row.get("lead_time_days") or "").strip()
    supplier = (row.get("supplier") or "").strip()
    grade = (row.get("grade") or "").strip()
    key = (supplier.casefold(), reagent.reagent_id, float(f"{grams:.9g}"), grade.casefold())
    if key in reading.seen:
        raise InputError(f"duplicate offer: same supplier, reagent, pack size and grade as {reading.seen[key]}")
    reading.seen[key] = where
    return Offer(supplier, reagent.reagent_id, size, grams, price, reading.currency, where + note, grade,
                 (row.get("catalog_number") or "").strip(),
                 _positive_number(lead, "lead time [days]", LEAD_TIME_MAX_DAYS, zero=True) if lead else None)


def composition_of(text: str, catalog: Catalog) -> tuple[tuple[str, float], ...]:
    """``tris=25mM; tris hydrochloride=25mM`` -> ((reagent id, mol/L), ...): what one litre of a
    prepared buffer holds; amounts as :func:`selector.units.parse_amount` reads them."""
    from selector.units import parse_amount, parse_assignments

    parts = [p for p in text.split(";") if p.strip()]
    if not parts:
        raise InputError("composition is empty; give e.g. tris=25mM; tris hydrochloride=25mM")
    out = []
    for name, amount in parse_assignments(parts).items():
        reagent = catalog.reagents[resolve_reagent(name, catalog)]
        out.append((reagent.reagent_id, parse_amount(amount, reagent.molar_mass_g_mol, f"amount of {reagent.name}")))
    return tuple(out)


def _prepared_offer(row: Mapping[str, str], where: str, reading: _Reading) -> PreparedOffer:
    """A prepared buffer's offer: the ``reagent`` cell names the product, ``composition`` what a
    litre of the buffer holds, and the volume of buffer a pack makes is ``makes_volume`` (tablets,
    powder premixes, concentrates: ``pack_size`` then says what the pack is, e.g. ``100 tablets``)
    or else ``pack_size`` itself (a ready-to-use solution)."""
    name = (row.get("reagent") or "").strip()
    size = (row.get("pack_size") or "").strip()
    makes = (row.get("makes_volume") or "").strip()
    if not name:
        raise InputError("no product named")
    if makes:
        if not size:
            raise InputError("no pack size; say what a pack is, e.g. 100 tablets or 500 mL of concentrate")
        volume_l = parse_volume(makes, "makes_volume (the volume of buffer a pack makes)")
    else:
        volume_l = parse_volume(size, "pack size of a prepared buffer (the volume of buffer it makes; for tablets, "
                                "premixes or concentrates give it as makes_volume)")
    raw_price = (row.get("pack_price") or "").strip()
    price = _positive_number(raw_price, "pack price")
    currency = (row.get("currency") or "").strip().upper() or reading.currency
    factor = (1.0, "") if currency == reading.currency else (reading.rates.factor(currency) if reading.rates else None)
    if factor is None:
        raise InputError(f"currency {echo(currency)} differs from the sheet's {echo(reading.currency)} (mixed "
                         "currencies; give --rates FILE to convert)")
    supplier = (row.get("supplier") or "").strip()
    key = (supplier.casefold(), "prepared:" + name.casefold(), float(f"{volume_l:.9g}"), "")
    if key in reading.seen:
        raise InputError(f"duplicate offer: same supplier, product and pack size as {reading.seen[key]}")
    reading.seen[key] = where
    return PreparedOffer(supplier, name, size, volume_l, price * factor[0], reading.currency,
                         composition_of(row.get("composition") or "", reading.catalog), where)


def _offers_of(rows: Sequence[tuple[int, Mapping[str, str]]], label: str,
               reading: _Reading) -> tuple[list[Offer | PreparedOffer], PriceSheetReport]:
    """The offers of one sheet's rows and the report of the rows not used."""
    problems: list[str] = []
    unknown: list[tuple[int, str]] = []
    offers: list[Offer | PreparedOffer] = []
    names = reading.catalog.reagent_names
    for number, row in rows:
        where = f"{label} row {number}"
        if (row.get("composition") or "").strip():
            try:
                offers.append(_prepared_offer(row, where, reading))
            except InputError as error:
                problems.append(f"{where}: {error}; row skipped")
            continue
        name = (row.get("reagent") or "").strip()
        reagent_id = names.get(normalize_name(name)) if name else None
        if reagent_id is None:
            if name:
                unknown.append((number, name))
            else:
                problems.append(f"{where}: no reagent named; row skipped")
            continue
        try:
            offers.append(_row_offer(row, where, reading.catalog.reagents[reagent_id], reading))
        except InputError as error:
            problems.append(f"{where}: {error}; row skipped")
    shown = summarise(problems) + _unknown_problems(unknown, label, reading.catalog)
    return offers, PriceSheetReport(len(rows), len(offers), tuple(shown), reading.currency, label)


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


def book_from_offers(all_offers: Sequence[Offer | PreparedOffer], currency: str, label: str,
                     base: PriceBook) -> PriceBook:
    """A price book: the cheapest offer per kg of each reagent over ``base`` (kept only where
    it is in the same currency); every offer kept as an alternative, prepared buffers apart."""
    offers = [o for o in all_offers if isinstance(o, Offer)]
    sheet: dict[str, Price] = {}
    for offer in sorted(offers, key=lambda o: o.price_per_kg, reverse=True):   # the cheapest comes last, and wins
        sheet[offer.reagent_id] = Price(offer.reagent_id, offer.price_per_kg, currency, "sheet", offer.supplier,
                                        f"{offer.origin} ({offer.pack_size}"
                                        + (f" from {offer.supplier})" if offer.supplier else ")"))
    same = base.currency == currency
    prices = dict(base.prices) if same else {}
    prices.update(sheet)
    return PriceBook(currency, prices, label=f"{label} ({currency}) over {base.label}" if same
                     else f"{label} ({currency}) only", offers=tuple(offers),
                     prepared=tuple(o for o in all_offers if isinstance(o, PreparedOffer)))


def parse_price_tables(tables: Sequence[tuple[bytes, str]], catalog: Catalog | None = None,
                       base: PriceBook | None = None, rates: ExchangeRates | None = None
                       ) -> tuple[PriceBook, list[PriceSheetReport]]:
    """A price book from one or more sheets, each (bytes, name) read or uploaded.

    The book's currency is the rates' target when ``rates`` are given, else the one most
    rows of all the sheets use; a row in another currency is converted with ``rates`` or
    reported and skipped.  An offer repeated (same supplier, reagent, pack size and grade,
    in any of the sheets) is reported and skipped.  ``base`` (default: demo prices) prices
    the reagents no sheet offers, if it is in the same currency.  A name ``book.xlsx:Sheet``
    reads that worksheet.
    """
    catalog = catalog if catalog is not None else load_catalog()
    base = base if base is not None else demo_price_book(catalog)
    read = []
    for data, name in tables:
        file_name, worksheet = split_sheet_name(name)
        read.append((echo(name)[1:-1], table_rows(data, file_name, SHEET_COLUMNS[:3], "price sheet", worksheet)))
    if rates is not None:
        currency = rates.target
    else:
        counts = Counter(c for _, rows in read for _, row in rows if (c := (row.get("currency") or "").strip().upper()))
        currency = counts.most_common(1)[0][0] if counts else base.currency
    reading = _Reading(catalog, currency, rates)
    offers: list[Offer | PreparedOffer] = []
    reports = []
    for label, rows in read:
        sheet_offers, report = _offers_of(rows, label, reading)
        offers += sheet_offers
        reports.append(report)
    return book_from_offers(offers, currency, " + ".join(label for label, _ in read), base), reports


def parse_price_rows(rows: list[dict], label: str = "price sheet",
                     catalog: Catalog | None = None, base: PriceBook | None = None
                     ) -> tuple[PriceBook, PriceSheetReport]:
    """Merge sheet rows (dicts with SHEET_COLUMNS; row numbers count the header as row 1)
    over ``base`` (default: demo prices); see :func:`parse_price_tables`."""
    catalog = catalog if catalog is not None else load_catalog()
    base = base if base is not None else demo_price_book(catalog)
    counts = Counter(c for row in rows if (c := (row.get("currency") or "").strip().upper()))
    reading = _Reading(catalog, counts.most_common(1)[0][0] if counts else base.currency, None)
    offers, report = _offers_of(list(enumerate(rows, start=2)), label, reading)
    return book_from_offers(offers, reading.currency, label, base), report


def parse_price_csv(text: str, label: str = "price sheet", catalog: Catalog | None = None,
                    base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from CSV text (delimiter sniffed; see :func:`table_rows`)."""
    book, reports = parse_price_tables([(text.encode("utf-8", "surrogatepass"), label)], catalog, base)
    return book, reports[0]


def parse_price_bytes(data: bytes, label: str, catalog: Catalog | None = None,
                      base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from the bytes of a file (read from disk or uploaded): XLSX when
    ``label`` ends in .xlsx (or .xlsx:WORKSHEET), UTF-8 CSV otherwise; at most :data:`SHEET_MAX_BYTES`."""
    book, reports = parse_price_tables([(data, label)], catalog, base)
    return book, reports[0]


def parse_price_xlsx(data: bytes, label: str = "price sheet.xlsx", catalog: Catalog | None = None,
                     base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from XLSX bytes (a worksheet named offers or prices, else the first)."""
    name = label if split_sheet_name(label)[0].lower().endswith(".xlsx") else label + ".xlsx"
    return parse_price_bytes(data, name, catalog, base)


def file_bytes(path: str | Path, what: str, suffixes: Sequence[str] = (".csv", ".xlsx")) -> tuple[bytes, str]:
    """(bytes, name) of a sheet on disk (``book.xlsx:Sheet`` names a worksheet); InputError if
    missing, of another type or larger than :data:`SHEET_MAX_BYTES`."""
    file_name, worksheet = split_sheet_name(str(path))
    real = Path(file_name)
    if not real.is_file():
        raise InputError(f"{what} {echo(str(path))} not found")
    if real.suffix.lower() not in suffixes:
        raise InputError(f"{what} {echo(real.name)}: expected a {' or '.join(suffixes)} file")
    if real.stat().st_size > SHEET_MAX_BYTES:
        raise InputError(f"{what} {echo(real.name)} is {real.stat().st_size} bytes; a {what} has at "
                         f"most {UPLOAD_MAX_MB} MB")
    return real.read_bytes(), real.name + (f":{worksheet}" if worksheet else "")


def read_price_sheet(path: str | Path, catalog: Catalog | None = None,
                     base: PriceBook | None = None) -> tuple[PriceBook, PriceSheetReport]:
    """A price sheet from a .csv or .xlsx file (see :func:`parse_price_tables`)."""
    return parse_price_bytes(*file_bytes(path, "price sheet"), catalog, base)


def read_price_sheets(paths: Sequence[str | Path], catalog: Catalog | None = None, base: PriceBook | None = None,
                      rates: ExchangeRates | None = None) -> tuple[PriceBook, list[PriceSheetReport]]:
    """A price book from several .csv or .xlsx files (see :func:`parse_price_tables`)."""
    return parse_price_tables([file_bytes(p, "price sheet") for p in paths], catalog, base, rates)


# --- suppliers and exchange rates -----------------------------------------------------------------

def parse_rate_bytes(data: bytes, label: str) -> tuple[ExchangeRates, list[str]]:
    """Exchange rates from a sheet of ``from_currency, to_currency, rate`` (1 from = rate to).

    Every row converts into one currency (InputError otherwise); a bad row is reported and skipped.
    """
    rows = table_rows(data, label, RATE_COLUMNS, "rates sheet")
    targets = Counter(row.get("to_currency", "").strip().upper() for _, row in rows) - Counter({"": len(rows)})
    if len(targets) != 1:
        raise InputError(f"rates sheet {echo(label)}: every row must convert into one currency (to_currency); "
                         f"found {', '.join(sorted(targets)) or 'none'}")
    target = next(iter(targets))
    rates: dict[str, tuple[float, str]] = {}
    problems = []
    for number, row in rows:
        where = f"{echo(label)[1:-1]} row {number}"
        source = row.get("from_currency", "").strip().upper()
        try:
            if not source or row.get("to_currency", "").strip().upper() != target:
                raise InputError(f"expected a from_currency and to_currency {target}")
            if source in rates:
                raise InputError(f"a second rate for {echo(source)}")
            rates[source] = (_positive_number(row.get("rate", ""), "rate", 1e9), where)
        except InputError as error:
            problems.append(f"{where}: {error}; row skipped")
    return ExchangeRates(target, rates), problems


def read_rates(path: str | Path) -> tuple[ExchangeRates, list[str]]:
    """Exchange rates from a .csv or .xlsx file (see :func:`parse_rate_bytes`)."""
    return parse_rate_bytes(*file_bytes(path, "rates sheet"))


def parse_supplier_bytes(data: bytes, label: str, currency: str,
                         rates: ExchangeRates | None = None) -> tuple[dict[str, Supplier], list[str]]:
    """Suppliers' terms from a sheet of ``supplier, shipping`` (flat charge per order) and
    optional ``free_shipping_over``, ``min_order``, ``currency`` (default ``currency``).

    Keys are supplier names folded to lower case.  A bad row is reported and skipped; a
    supplier named twice keeps its first row.
    """
    suppliers: dict[str, Supplier] = {}
    problems = []
    for number, row in table_rows(data, label, SUPPLIER_COLUMNS[:2], "suppliers sheet"):
        where = f"{echo(label)[1:-1]} row {number}"
        try:
            supplier = _supplier_row(row, where, currency, rates)
            if supplier.name.casefold() in suppliers:
                raise InputError(f"supplier {echo(supplier.name)} already given in "
                                 f"{suppliers[supplier.name.casefold()].origin}")
            suppliers[supplier.name.casefold()] = supplier
        except InputError as error:
            problems.append(f"{where}: {error}; row skipped")
    return suppliers, problems


def _supplier_row(row: Mapping[str, str], where: str, currency: str, rates: ExchangeRates | None) -> Supplier:
    name = (row.get("supplier") or "").strip()
    if not name:
        raise InputError("no supplier named")
    row_currency = (row.get("currency") or "").strip().upper() or currency
    factor = (1.0, "") if row_currency == currency else (rates.factor(row_currency) if rates else None)
    if factor is None:
        raise InputError(f"currency {echo(row_currency)} differs from the price book's {echo(currency)}; give "
                         "--rates FILE to convert")
    shipping = _positive_number(row.get("shipping", ""), "shipping", zero=True) * factor[0]
    free = (row.get("free_shipping_over") or "").strip()
    minimum = (row.get("min_order") or "").strip()
    return Supplier(name, shipping, currency, where,
                    _positive_number(free, "free_shipping_over", zero=True) * factor[0] if free else None,
                    _positive_number(minimum, "min_order", zero=True) * factor[0] if minimum else 0.0)


def read_suppliers(path: str | Path, currency: str,
                   rates: ExchangeRates | None = None) -> tuple[dict[str, Supplier], list[str]]:
    """Suppliers' terms from a .csv or .xlsx file (see :func:`parse_supplier_bytes`)."""
    return parse_supplier_bytes(*file_bytes(path, "suppliers sheet"), currency, rates)


# --- costs per litre, batch and plate -------------------------------------------------------------

def plate_volume_l(wells: int, well_volume_l: float) -> float:
    """Volume of buffer one plate takes [L]: wells × volume per well (no dead volume)."""
    return wells * well_volume_l


def volume_per_plate_l(volume_l: float, plates: int | None = None, wells: int | None = None,
                       well_volume_l: float | None = None) -> float | None:
    """Volume of buffer one plate (or run) accounts for [L], None when there is no plate.

    Parameters
    ----------
    volume_l : float
        The batch made [L].
    plates : int or None
        Plates or runs the batch is quoted for.
    wells, well_volume_l : int or None, float or None
        Wells per plate and buffer per well [L].

    Returns
    -------
    float or None
        With ``wells`` and ``well_volume_l`` the plate's own volume (:func:`plate_volume_l`),
        whatever ``plates``; else with ``plates`` the batch shared over them, ``volume_l / plates``;
        else None.
    """
    if wells and well_volume_l:
        return plate_volume_l(wells, well_volume_l)
    if plates:
        return volume_l / plates
    return None


def cost_per_plate(cost_per_l: float, volume_l: float, plates: int | None = None, wells: int | None = None,
                   well_volume_l: float | None = None) -> float | None:
    """Cost of the buffer one plate (or run) takes [currency], unrounded; None without a plate.

    The one formula the optimiser, the ranking and the cost summaries use: ``cost_per_l`` [currency/L]
    times :func:`volume_per_plate_l` [L].

    Examples
    --------
    >>> cost_per_plate(2.5, 1.0, plates=4)
    0.625
    >>> round(cost_per_plate(2.5, 0.0576, plates=3, wells=96, well_volume_l=200e-6), 12)
    0.048
    """
    plate_l = volume_per_plate_l(volume_l, plates, wells, well_volume_l)
    return None if plate_l is None else cost_per_l * plate_l


def cost_figures(cost_per_l: float | None, volume_l: float, plates: int | None = None,
                 wells: int | None = None, well_volume_l: float | None = None) -> dict[str, float | None]:
    """Cost per litre, per batch of ``volume_l`` [L] and per plate, rounded for output.

    Per plate (:func:`cost_per_plate`): with ``wells`` and ``well_volume_l`` the plate's own volume
    (:func:`plate_volume_l`), and with ``plates`` too the volume and cost of that many plates;
    with ``plates`` alone the batch shared over that many plates; else None.
    """
    figures: dict[str, float | None] = {"cost_per_l": None, "cost_per_batch": None, "cost_per_plate": None,
                                        "plate_volume_l": None, "plates_volume_l": None, "cost_for_plates": None}
    if cost_per_l is None:
        return figures
    figures.update(cost_per_l=rounded(cost_per_l), cost_per_batch=rounded(cost_per_l * volume_l))
    plate_l = volume_per_plate_l(volume_l, plates, wells, well_volume_l)
    if plate_l is None:
        return figures
    if wells and well_volume_l and plates:
        figures.update(plates_volume_l=rounded(plate_l * plates), cost_for_plates=rounded(cost_per_l * plate_l
                                                                                           * plates))
    figures.update(cost_per_plate=rounded(cost_per_plate(cost_per_l, volume_l, plates, wells, well_volume_l)),
                   plate_volume_l=rounded(plate_l))
    return figures


def spec_cost_summary(book: PriceBook, reagent_ids: Sequence[str], cost_per_l: float | None, volume_l: float,
                      spec: BufferSpec) -> dict[str, object]:
    """:func:`cost_summary` under the spec's plate fields (``plates``, ``wells``,
    ``well_volume_l``): what the CLI prints and the app shows as the cost per plate."""
    return cost_summary(book, reagent_ids, cost_per_l, volume_l, spec.plates, spec.wells, spec.well_volume_l)


def cost_summary(book: PriceBook, reagent_ids: Sequence[str], cost_per_l: float | None, volume_l: float,
                 plates: int | None = None, wells: int | None = None,
                 well_volume_l: float | None = None) -> dict[str, object]:
    """The costs of a mix (:func:`cost_figures`) with the currency, the price book in use and
    where the price of each of ``reagent_ids`` comes from (JSON-ready)."""
    return {**cost_figures(cost_per_l, volume_l, plates, wells, well_volume_l), "currency": book.currency,
            "price_book": book.label, "price_origins": book.provenance(reagent_ids)}
