"""The recipe book in the app: which file, and a "save to the book" form other pages can place.

The book file is the one ``poise`` uses (``POISE_BOOK``, else the user's data folder)
unless the Book page's path field names another; it is kept in ``st.session_state``.
"""

from __future__ import annotations

from typing import Any, Mapping

import streamlit as st

from selector.book import default_book_path, open_book, save_recipe

#: Session key of the book file path chosen on the Book page (kept across pages).
BOOK_PATH_KEY = "book_path"


def current_book_path() -> str:
    """The book file the app uses now."""
    return st.session_state.get(BOOK_PATH_KEY) or str(default_book_path())


def save_form(recipe_json: Mapping[str, Any], spec: Any, key: str) -> None:
    """A name field and a save button; saving adds a version when the name exists.

    Errors reach the caller's :func:`app.state.user_errors` block as one message.
    """
    name = st.text_input("save in the recipe book as", key=f"{key}_save_name",
                         placeholder="a name, e.g. assay buffer")
    note = st.text_input("note for this version", key=f"{key}_save_note")
    if st.button("Save to the book", key=f"{key}_save", disabled=not name.strip()):
        with open_book(current_book_path()) as book:
            entry = save_recipe(book, name, recipe_json, spec, note=note)
        st.success(f"saved {entry.name!r} as version {entry.version} in {book.path}")
