"""The Book page under streamlit.testing's AppTest: saved recipes, versions, diff, verify, exports, bad file.

No published check values: the numbers compared are the saved recipe's own (written by
the test through selector.book), which need no source.
"""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

from selector import book as B  # noqa: E402
from selector.recipe import make_recipes  # noqa: E402
from selector.safety import SAFETY_NOTICE  # noqa: E402
from selector.spec import make_spec  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")
TIMEOUT_S = 180


@pytest.fixture(scope="module")
def saved_book(tmp_path_factory):
    """A book with two versions of 'assay buffer' (titrate, then two forms; invented name)."""
    path = tmp_path_factory.mktemp("book") / "book.sqlite3"
    spec = make_spec(ph=7.4, temperature_c=37.0, buffer_conc_mol_l=0.05)
    recipes = {r.route: r for r in make_recipes("tris", spec, routes=["titrate", "two-forms"])}
    with B.open_book(path) as book:
        B.save_recipe(book, "assay buffer", recipes["titrate"].as_json(), spec)
        B.save_recipe(book, "assay buffer", recipes["two-forms"].as_json(), spec, note="no titration")
    return path


def book_page(monkeypatch, path) -> AppTest:
    monkeypatch.setenv("POISE_BOOK", str(path))
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    at.switch_page("pages/book_page.py").run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def text_of(at) -> str:
    return "\n".join(m.value for m in at.markdown)


def test_book_page_shows_versions_diff_and_verifies(monkeypatch, saved_book):
    at = book_page(monkeypatch, saved_book)
    assert at.text_input(key="book_path_field").value == str(saved_book)
    assert at.selectbox(key="book_recipe").value == "assay buffer"
    assert list(at.selectbox(key="book_version").options) == ["2", "1"]
    assert "1.6432 g" in text_of(at) and SAFETY_NOTICE in text_of(at)     # version 2, two forms
    at.selectbox(key="book_version").set_value(1).run()
    assert "7.9594 g" in text_of(at)                                    # version 1, titrated
    assert "reagent added: tris" in text_of(at)                         # diff 1 -> 2
    at.button(key="book_verify").click().run()
    assert not at.exception
    assert at.success and "within ± 0.005 pH" in at.success[0].value
    for kind in ("text_input", "selectbox", "button", "download_button"):
        assert all(widget.key for widget in at.get(kind)), kind
    assert sorted(b.key for b in at.get("download_button") if b.key.startswith("book_download_")) == [
        "book_download_csv", "book_download_html", "book_download_json", "book_download_md"]


def test_book_page_empty_and_bad_file(monkeypatch, tmp_path, saved_book):
    at = book_page(monkeypatch, tmp_path / "none.sqlite3")
    assert at.info and "No recipes saved" in at.info[0].value
    at.file_uploader(key="book_import").set_value(("bad.json", b'{"name": "x"}', "application/json")).run()
    at.button(key="book_import_run").click().run()
    assert not at.exception and "not a poise book entry" in at.error[0].value
    with B.open_book(saved_book) as book:
        exported = B.export_recipe(book, "assay buffer", "json").encode()
    at.file_uploader(key="book_import").set_value(("entry.json", exported, "application/json")).run()
    at.button(key="book_import_run").click().run()
    assert not at.exception and "imported 'assay buffer' as version 1" in at.success[0].value
    at.run()
    assert at.selectbox(key="book_recipe").value == "assay buffer"
    at = book_page(monkeypatch, tmp_path / "none.sqlite3")
    garbage = tmp_path / "garbage.sqlite3"
    garbage.write_bytes(b"not a database at all " * 100)
    at.text_input(key="book_path_field").set_value(str(garbage)).run()
    assert not at.exception
    assert len(at.error) == 1 and "not a poise recipe book" in at.error[0].value


def save_form_script():
    """A page that places the book's save form under a recipe (as the recipe and optimiser pages can)."""
    import json
    import os

    import streamlit as st

    from app import state
    from app.book_save import save_form

    st.session_state["book_path"] = os.environ["POISE_BOOK"]
    with open(os.environ["SAVE_FORM_RECIPE"], encoding="utf-8") as handle:
        recipe = json.load(handle)
    with state.user_errors():
        save_form(recipe, {"ph": 7.4}, key="test")


def test_save_form_adds_versions(monkeypatch, tmp_path, saved_book):
    with B.open_book(saved_book) as book:
        recipe = B.show_recipe(book, "assay buffer", 1).recipe
    recipe_file = tmp_path / "recipe.json"
    recipe_file.write_text(__import__("json").dumps(recipe), encoding="utf-8")
    monkeypatch.setenv("POISE_BOOK", str(tmp_path / "form.sqlite3"))
    monkeypatch.setenv("SAVE_FORM_RECIPE", str(recipe_file))
    at = AppTest.from_function(save_form_script, default_timeout=TIMEOUT_S)
    at.run()
    assert at.button(key="test_save").disabled                       # no name yet
    at.text_input(key="test_save_name").set_value("bench copy").run()
    at.button(key="test_save").click().run()
    at.button(key="test_save").click().run()
    assert not at.exception and not at.error
    assert "version 2" in at.success[0].value
    with B.open_book(tmp_path / "form.sqlite3") as book:
        assert [e.version for e in B.versions_of(book, "bench copy")] == [1, 2]
        assert B.show_recipe(book, "bench copy").recipe == recipe
