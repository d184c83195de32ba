"""Every page reads as a lab reads: no empty cell spelled None or nan, names rather than ids,
the catalog's records as tables, and no command-line advice in the app's messages
(AppTest).  No published check values: the cases are about what is shown, not numbers.
"""

import math
import re
from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

from app.words import in_app_words  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")
TIMEOUT_S = 240

#: Command-line advice: an option (--exclude) or a command ('poise catalog …').
CLI_WORDS = re.compile(r"(?<![\w-])--[a-z]|['`]poise |\bpoise (?:ph|rank|recipe|optimise|catalog|book|buy|series|"
                       r"span|plate|compare) ")


@pytest.fixture(scope="module")
def app():
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def unreadable_cells(at) -> list[str]:
    """Cells of every table on the page that are empty and shown as None or nan."""
    bad = []
    for table in at.dataframe:
        frame = table.value
        for column in frame.columns:
            for value in frame[column]:
                if value is None or (isinstance(value, float) and math.isnan(value)) \
                        or (isinstance(value, str) and value.strip().lower() in ("none", "nan")):
                    bad.append(f"{column}: {value!r}")
    return bad


def messages(at) -> list[str]:
    """Every message a person reads on the page (errors, warnings, notes, captions, text)."""
    return [e.value for kind in (at.error, at.warning, at.info, at.success, at.caption, at.markdown) for e in kind]


def cli_advice(at) -> list[str]:
    return [m for m in messages(at) if CLI_WORDS.search(m)]


@pytest.mark.parametrize("page", ["rank_page", "recipe_page", "catalog_page", "prices_page", "ph_page",
                                  "standards_page", "book_page"])
def test_no_table_shows_none_and_no_message_gives_command_line_advice(app, page):
    app.switch_page(f"pages/{page}.py").run()
    assert not app.exception, [e.message for e in app.exception]
    assert unreadable_cells(app) == []
    assert cli_advice(app) == []


def test_the_optimiser_mix_reads_in_names_and_one_unit(app):
    app.switch_page("pages/optimise_page.py").run()
    app.button(key="opt_run").click().run()
    assert not app.exception
    assert unreadable_cells(app) == [] and cli_advice(app) == []
    mix = next(d.value for d in app.dataframe if "reagent" in d.value.columns)
    assert "conc, mM" in mix.columns
    assert not any("_" in name for name in mix["reagent"])            # names, not ids
    assert any(" mM · osmolarity" in m for m in messages(app))           # I in mM, as the tables


def test_catalog_shows_reagents_binding_uv_and_flags_as_tables(app):
    app.switch_page("pages/catalog_page.py").run()
    app.selectbox(key="cat_system").set_value("hepes").run()
    assert not app.exception and not app.json                           # no raw JSON widget
    heads = [set(d.value.columns) for d in app.dataframe]
    assert any({"reagent", "formula", "molar mass, g/mol"} <= h for h in heads)
    assert any({"metal", "log K"} <= h for h in heads)
    assert any({"UV cut-off, nm", "source"} <= h for h in heads)
    systems = next(d.value for d in app.dataframe if "useful range" in d.value.columns)
    assert "HEPES" in set(systems["system"]) and "hepes" not in set(systems["system"])
    assert not any("_" in flags for flags in systems["flags"])           # flags in words
    assert unreadable_cells(app) == []


def test_an_unknown_name_points_to_the_catalog_page_not_the_command_line(app):
    app.switch_page("pages/ph_page.py").run()
    app.text_area(key="mix_reagents").set_value("unobtainium=5mM").run()
    assert not app.exception
    text = "\n".join(e.value for e in app.error)
    assert "the Catalog page's search lists names" in text and not CLI_WORDS.search(text)
    app.text_area(key="mix_reagents").set_value("KH2PO4=25mM\nNa2HPO4=25mM").run()


def test_the_ranking_names_systems_and_explains_its_columns(app):
    app.switch_page("pages/rank_page.py").run()
    table = next(d.value for d in app.dataframe if "score" in d.value.columns)
    assert {"|pH − pKa′|", "β, mM per pH", "ΔpH½", "I, mM", "u(pH) ±"} <= set(table.columns)
    assert not any(name.islower() for name in table["system"])           # names (HEPES), not ids (hepes)


@pytest.mark.parametrize("text, expected", [
    ("unknown reagent 'x' ('poise catalog --search TEXT' lists names)", "(the Catalog page's search lists names)"),
    ("hazardous (admit with allow_hazardous / --allow-hazardous)", "in the spec panel"),
    ("raise --tolerance from 0.1 to 0.16: then pipes meets the spec", "raise the allowed pH excursion from 0.1"),
    ("no single change of --capacity, --metal Ca makes it feasible", "the largest fraction of Ca the buffer may bind"),
    ("no recipe book at x; save a recipe with --save NAME first", "from the Recipe or Cheapest mix page"),
    ("give --unheard-of", "give 'unheard of'"),
    ("(flag photo_peroxide; leave it out with --exclude photo_peroxide)",
     "leave it out with 'photo peroxide' under 'exclude systems flagged' in the spec panel"),
])
def test_command_line_words_become_the_apps_words(text, expected):
    words = in_app_words(text)
    assert expected in words and not CLI_WORDS.search(words)
