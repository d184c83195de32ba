"""The downloads of a bench recipe, shared by the recipe and optimiser pages: the recipe
(Markdown, CSV, printable HTML), the bench sheet and the bottle label (printable HTML), and
the methods sentence.  Every text comes from selector.recipe; nothing is computed here."""

from __future__ import annotations

import streamlit as st

from selector.recipe import methods_sentence, render_recipe


def recipe_downloads(recipe, catalog, key_prefix: str = "") -> None:
    """Download buttons for ``recipe`` (widget keys ``{key_prefix}download_*``) and its methods sentence."""
    base = "_".join(recipe.systems) or recipe.system_id
    files = (("Download Markdown", "recipe", "markdown", "recipe.md", "text/markdown", "md"),
             ("Download CSV", "recipe", "csv", "recipe.csv", "text/csv", "csv"),
             ("Download printable card (HTML)", "recipe", "html", "recipe.html", "text/html", "html"),
             ("Download bench sheet (HTML)", "sheet", "html", "bench_sheet.html", "text/html", "sheet"),
             ("Download bottle label (HTML)", "label", "html", "label.html", "text/html", "label"))
    for column, (label, output, fmt, suffix, mime, key) in zip(st.columns(len(files)), files):
        column.download_button(label, render_recipe(recipe, output, fmt, catalog), f"{base}_{suffix}", mime,
                               key=f"{key_prefix}download_{key}")
    st.caption("Methods sentence")
    st.code(methods_sentence(recipe, catalog), language=None, wrap_lines=True)
