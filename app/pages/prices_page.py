"""Price sheet upload (CSV or XLSX) with its row-by-row report; demo prices otherwise."""

import pandas as pd
import streamlit as st

from app import state
from selector.errors import PoiseError
from selector.prices import (
    SHEET_COLUMNS,
    demo_price_book,
    parse_price_csv,
    parse_price_xlsx,
)

st.title("Prices")
state.init()  # idempotent: the page also works when run on its own
catalog = state.catalog()
book = st.session_state["price_book"]
st.write(f"In use: {book.label}, {len(book.prices)} reagents priced, currency {book.currency}.")
st.caption(f"A price sheet has the columns {', '.join(SHEET_COLUMNS)}; pack sizes by mass (e.g. 500 g, 1 kg).")
upload = st.file_uploader("price sheet (CSV or XLSX)", type=["csv", "xlsx"], key="price_upload")
if upload is not None:
    try:
        data = upload.getvalue()
        if upload.name.lower().endswith(".xlsx"):
            new_book, report = parse_price_xlsx(data, upload.name, catalog, demo_price_book(catalog))
        else:
            new_book, report = parse_price_csv(data.decode("utf-8-sig"), upload.name, catalog, demo_price_book(catalog))
        st.session_state["price_book"] = new_book
        st.success(f"{report.rows_used} of {report.rows_read} rows used ({report.currency}).")
        for problem in report.problems:
            st.warning(problem)
    except PoiseError as error:
        st.error(str(error))
if st.button("Back to demo prices", key="price_reset"):
    st.session_state["price_book"] = demo_price_book(catalog)
book = st.session_state["price_book"]
st.dataframe(pd.DataFrame([{"reagent": catalog.reagents[p.reagent_id].name, "per kg": round(p.price_per_kg, 2),
                            "currency": p.currency, "source": p.source, "supplier": p.supplier}
                           for p in book.prices.values()]), key="price_table", hide_index=True)
