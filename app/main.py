"""The poise app's frame: navigation in sections and the spec panel, around the pages.

Run with ``poise app`` (or ``streamlit run app/main.py``; ``-- --demo`` starts on the
invented demo scenario).  The frame draws the spec panel on every page, so its values
live as long as the session; the pages hold their own widgets and pictures only.
"""

from __future__ import annotations

import sys
from pathlib import Path

import streamlit as st

from app import spec_panel, state

PAGES = Path(__file__).parent / "pages"

st.set_page_config(page_title="poise — buffer design", layout="wide")
state.init(demo="--demo" in sys.argv[1:])
page = st.navigation({
    "Design": [
        st.Page(str(PAGES / "rank_page.py"), title="Compare buffers", url_path="compare", default=True),
        st.Page(str(PAGES / "recipe_page.py"), title="Recipe", url_path="recipe"),
        st.Page(str(PAGES / "optimise_page.py"), title="Cheapest mix", url_path="cheapest-mix"),
        st.Page(str(PAGES / "designs_page.py"), title="pH series and plates", url_path="series-and-plates"),
        st.Page(str(PAGES / "metal_page.py"), title="Free metal", url_path="metal"),
    ],
    "Check a solution": [
        st.Page(str(PAGES / "ph_page.py"), title="pH of a mixture", url_path="mixture"),
        st.Page(str(PAGES / "standards_page.py"), title="pH standards", url_path="standards"),
    ],
    "Keep": [
        st.Page(str(PAGES / "book_page.py"), title="Recipe book", url_path="book"),
    ],
    "Reference": [
        st.Page(str(PAGES / "catalog_page.py"), title="Catalog", url_path="catalog"),
    ],
    "Purchasing": [
        st.Page(str(PAGES / "prices_page.py"), title="Prices", url_path="prices"),
        st.Page(str(PAGES / "purchasing_page.py"), title="Purchase plan", url_path="purchase-plan"),
    ],
})
spec_panel.draw()
page.run()
