"""Price sheet upload (CSV or XLSX) with its row-by-row report; demo prices otherwise."""

import streamlit as st

from app import state
from app.tables import show_table
from selector.prices import (
    OFFER_OPTIONAL_COLUMNS,
    SHEET_COLUMNS,
    UPLOAD_MAX_MB,
    demo_price_book,
    parse_price_bytes,
)

st.title("Prices")
catalog = state.catalog()


def use_sheet(upload) -> None:
    """Read an uploaded sheet into the price book in use and report its rows."""
    new_book, report = parse_price_bytes(upload.getvalue(), upload.name, catalog, demo_price_book(catalog))
    st.session_state["price_book"] = new_book
    st.success(f"{report.rows_used} of {report.rows_read} rows used ({report.currency}).")
    for problem in report.problems:
        st.warning(problem)


st.caption(f"A price sheet lists offers, one a row: {', '.join(SHEET_COLUMNS)} (optional "
           f"{', '.join(OFFER_OPTIONAL_COLUMNS)}); packs by mass (500 g, 1 kg) or, for liquids, by volume (2.5 L). "
           "Comma, semicolon or tab between cells; a decimal comma with semicolons or tabs.")
upload = st.file_uploader("price sheet (CSV or XLSX)", type=["csv", "xlsx"], key="price_upload",
                          help=f"A CSV (UTF-8) or XLSX file of up to {UPLOAD_MAX_MB} MB.")
if upload is not None:
    with state.user_errors():
        use_sheet(upload)
if st.button("Back to demo prices", key="price_reset"):
    st.session_state["price_book"] = demo_price_book(catalog)
book = st.session_state["price_book"]     # read after the upload: the book in use now
st.write(f"In use: {book.label}, {len(book.prices)} reagents priced, currency {book.currency}.")
show_table([{"reagent": catalog.reagents[p.reagent_id].name, f"price per kg, {p.currency}": round(p.price_per_kg, 2),
             "source": p.source, "supplier": p.supplier, "origin": p.origin}
            for p in book.prices.values()], key="price_table")
if book.offers:
    st.subheader("Every offer read (the cheapest per kg prices each reagent)")
    show_table([{"reagent": catalog.reagents[o.reagent_id].name, "supplier": o.supplier, "pack": o.pack_size,
                 "pack, g": round(o.pack_g, 3), "pack price": o.pack_price, "currency": o.currency,
                 "price per kg": round(o.price_per_kg, 2), "grade": o.grade, "catalog number": o.catalog_number,
                 "lead time, days": o.lead_time_days, "origin": o.origin}
                for o in sorted(book.offers, key=lambda o: (o.reagent_id, o.price_per_kg))], key="offer_table")
