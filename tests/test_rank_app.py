"""The app's ranking page: profile and order, the criteria, a remedy applied with its button,
and 2-4 systems compared with pictures (AppTest).  The only numbers compared are the
spec's inputs and the ranking's own outputs read back, which need no source."""

from pathlib import Path

import pytest

pytest.importorskip("streamlit")
from streamlit.testing.v1 import AppTest  # noqa: E402

MAIN = str(Path(__file__).resolve().parent.parent / "app" / "main.py")
TIMEOUT_S = 240


def table_with(at, column: str):
    """The first dataframe on the page that has ``column`` (AppTest does not expose their keys)."""
    return next(d.value for d in at.dataframe if column in d.value.columns)


@pytest.fixture(scope="module")
def app():
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    at.number_input(key="spec_temperature").set_value(37.0).run()
    at.text_input(key="spec_conc").set_value("50mM").run()
    assert not at.exception, [e.message for e in at.exception]
    return at


def test_ranking_page_shows_score_and_the_comparison_pictures(app):
    table = table_with(app, "score")
    assert "score" in table.columns and "u(pH) ±" in table.columns
    assert list(table["score"]) == sorted(table["score"], reverse=True)
    compare = table_with(app, "criterion")
    assert "|dpH/dT|" in list(compare["criterion"])             # the criteria in words, not their keys
    assert len(app.multiselect(key="rank_compare").value) == 3


def test_purchasing_profile_orders_by_cost(app):
    app.selectbox(key="rank_profile").set_value("purchasing").run()
    assert not app.exception
    costs = [c for c in table_with(app, "score").filter(like="cost per L").iloc[:, 0]]
    assert costs == sorted(costs)
    app.selectbox(key="rank_profile").set_value("assay").run()


def test_a_remedy_applied_with_its_button_makes_the_system_feasible(app):
    # POPSO free acid dissolves to about 5.5 mM (catalog solubility): at 50 mM it is
    # infeasible; its remedy lowers the concentration, and applying it ranks POPSO.
    assert not any(n.startswith("POPSO") for n in table_with(app, "score")["system"])
    app.button(key="remedy_popso").click().run()
    assert not app.exception, [e.message for e in app.exception]
    assert app.session_state["spec_conc"].endswith("mM") and app.session_state["spec_conc"] != "50mM"
    assert any(n.startswith("POPSO") for n in table_with(app, "score")["system"])


def test_the_comparison_survives_curves_without_a_point(monkeypatch):
    # A β curve keeps only converged points inside its pH axis; were none left for any system,
    # the page took min() of nothing (a traceback).  Now the β picture is left out and the others stay.
    import dataclasses

    import selector.comparison as comparison

    real = comparison.comparison_curves

    def without_points(*args, **kwargs):
        return [dataclasses.replace(c, ph=(), capacity_mol_l_per_ph=()) for c in real(*args, **kwargs)]

    monkeypatch.setattr(comparison, "comparison_curves", without_points)
    at = AppTest.from_file(MAIN, default_timeout=TIMEOUT_S)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert not any("β against pH" in c.value for c in at.caption)
    assert any("cost per litre" in c.value for c in at.caption)
