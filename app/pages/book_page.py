"""The recipe book: saved recipes and their versions, what changed, re-verification, exports."""

import streamlit as st

from app import state
from app.book_save import BOOK_PATH_KEY, current_book_path
from app.tables import show_table
from selector.book import (
    book_exists,
    composition_of,
    diff_versions,
    export_entry,
    import_recipe,
    list_recipes,
    open_book,
    show_recipe,
    verify_recipe,
    versions_of,
)

st.title("Recipe book")

EXPORTS = (("md", "Markdown", "text/markdown"), ("html", "printable page (HTML)", "text/html"),
           ("csv", "CSV", "text/csv"), ("json", "JSON (for import)", "application/json"))


def overview(book) -> list[str]:
    summaries = list_recipes(book)
    if summaries:
        show_table([{"name": s.name, "versions": s.versions, "saved (UTC)": s.latest_created_at,
                     "target pH": s.target_ph, "verified pH at use": s.verified_ph_at_use,
                     "note": s.note or None} for s in summaries], key="book_table")
    return [s.name for s in summaries]


def one_recipe(book, name: str) -> None:
    versions = [e.version for e in versions_of(book, name)]
    version = st.selectbox("version", versions[::-1], key="book_version")
    entry = show_recipe(book, name, version)
    state.show_hazards([r for r in composition_of(entry.recipe) if r in state.catalog().reagents])
    st.markdown(export_entry(entry, "md", state.catalog()))
    columns = st.columns(len(EXPORTS))
    for column, (fmt, label, mime) in zip(columns, EXPORTS):
        column.download_button(f"Download {label}", export_entry(entry, fmt, state.catalog()),
                               f"{name.replace(' ', '_')}_v{version}.{fmt}", mime, key=f"book_download_{fmt}")
    st.subheader("What changed")
    left, right = st.columns(2)
    a = left.selectbox("from version", versions, key="book_diff_a")
    b = right.selectbox("to version", versions, index=len(versions) - 1, key="book_diff_b")
    lines = diff_versions(book, name, a, b)
    st.markdown("\n".join(f"- {line}" for line in lines) if lines else "no differences")
    st.subheader("Verify with today's catalog")
    if st.button("Re-solve this version", key="book_verify"):
        result = verify_recipe(book, name, version, catalog=state.catalog())
        show = st.success if result.within_tolerance else st.warning
        show(result.text())


def import_upload(path: str) -> None:
    upload = st.file_uploader("import a recipe exported as JSON", type=["json"], key="book_import")
    if upload is not None and st.button("Import", key="book_import_run"):
        with open_book(path) as book:
            entry = import_recipe(book, upload.getvalue())
        st.success(f"imported {entry.name!r} as version {entry.version}")


with state.user_errors():
    path = st.text_input("book file", value=current_book_path(), key="book_path_field",
                         help="the recipe book's file (the command line uses the same file unless told otherwise)")
    st.session_state[BOOK_PATH_KEY] = path
    if not book_exists(path):
        st.info("No recipes saved in this book yet: save one with \"Save to the recipe book\" on the Recipe "
                "or Cheapest mix page.")
    else:
        with open_book(path, create=False) as book:
            names = overview(book)
            if names:
                one_recipe(book, st.selectbox("recipe", names, key="book_recipe"))
            else:
                st.info("This book has no recipes.")
with state.user_errors():
    import_upload(st.session_state[BOOK_PATH_KEY])
