"""The poise app: state a spec, rank buffer systems, make a recipe, optimise the cost.

Run with ``poise app`` (or ``streamlit run app/main.py``).  Pages hold widgets only.
"""

from __future__ import annotations

import sys
from pathlib import Path

import streamlit as st

from app import state

HERE = Path(__file__).parent

st.set_page_config(page_title="poise — buffer design", layout="wide")
state.init(demo="--demo" in sys.argv[1:])
pages = [
    st.Page(str(HERE / "pages" / "rank_page.py"), title="Ranked systems", default=True),
    st.Page(str(HERE / "pages" / "recipe_page.py"), title="Recipe"),
    st.Page(str(HERE / "pages" / "optimise_page.py"), title="Optimiser"),
    st.Page(str(HERE / "pages" / "catalog_page.py"), title="Catalog"),
    st.Page(str(HERE / "pages" / "prices_page.py"), title="Prices"),
]
st.navigation(pages).run()
