"""Session state of the poise app: defaults, the demo scenario, cached calls, and the few
helpers every page shares (the error funnel, the spec the frame built, hazard notes).

Widgets only: every number shown comes from :mod:`selector`.
"""

from __future__ import annotations

import importlib
import threading
from contextlib import contextmanager
from typing import Iterable, Iterator

import streamlit as st

from catalog import Catalog, load_catalog
from selector.admissible import titrant_ids
from selector.errors import PoiseError
from selector.prices import PriceBook, demo_price_book
from selector.safety import SAFETY_NOTICE, hazard_cautions
from selector.spec import BufferSpec, SpecError

#: The built-in demo scenario (invented: no real lab or protocol): a luminescent enzyme
#: assay, "Glowworm-3", read at 37 °C in 96-well plates, that makes acid as it runs and
#: is sensitive to free calcium.  Widget key -> value.
DEMO_SCENARIO = {
    "spec_ph": 7.4,
    "spec_temperature": 37.0,
    "spec_prep_temperature": 25.0,
    "spec_volume": "1L",
    "spec_conc": "",
    "spec_capacity": 10.0,
    "spec_load_rows": 1,
    "spec_load_kind_0": "acid",
    "spec_load_mm_0": 2.0,
    "spec_tolerance": 0.1,
    "spec_ionic_strength": "0.15",
    "spec_ionic_min": "",
    "spec_ionic_max": "",
    "spec_salt": "NaCl",
    "spec_counter_ion": "any",
    "spec_metals": ["Ca"],
    "spec_metal_fraction_Ca": 0.05,
    "spec_metal_conc_Ca": 1.0,
    "spec_uv": 0.0,
    "spec_exclude": [],
    "spec_require": [],
    "spec_allow_hazardous": False,
    "spec_no_precipitate": False,
    "spec_in_stock": [],
    "spec_fixed": [],
    "spec_window": False,
    "spec_t_min": 20.0,
    "spec_t_max": 37.0,
    "spec_osm_min": "",
    "spec_osm_max": "",
    "spec_plates": 40,
    "spec_wells": 0,
    "spec_well_volume": "",
    "spec_notes": "",
}
DEMO_TITLE = "Demo scenario (invented): the 'Glowworm-3' luminescence assay at 37 °C"

#: A plain first spec: pH 7.4 at 25 °C, 50 mM buffer, nothing else asked.
DEFAULTS = {**DEMO_SCENARIO, "spec_temperature": 25.0, "spec_conc": "50mM", "spec_capacity": 0.0,
            "spec_load_kind_0": "none", "spec_load_mm_0": 0.0, "spec_tolerance": 0.05, "spec_ionic_strength": "",
            "spec_metals": [], "spec_plates": 0}


@st.cache_resource
def catalog() -> Catalog:
    """The shipped catalog (loaded once per server)."""
    return load_catalog()


def init(demo: bool = False) -> None:
    """Defaults on the first run of a session; the demo scenario if ``demo``."""
    first = "spec_ph" not in st.session_state
    for key, value in DEFAULTS.items():
        st.session_state.setdefault(key, value)
    if first and demo:
        load_demo()
    st.session_state.setdefault("price_book", demo_price_book(catalog()))
    st.session_state.setdefault("scenario", "")


def load_demo() -> None:
    """Callback of the demo button: set every spec widget to the demo scenario."""
    st.session_state.update(DEMO_SCENARIO)
    st.session_state["scenario"] = DEMO_TITLE


@contextmanager
def user_errors() -> Iterator[None]:
    """Show a :class:`~selector.errors.PoiseError` raised inside as one message (st.error), in
    the app's words (:func:`app.words.in_app_words`: fields and pages, not command-line
    options), and go on with the page after the block; a spec error lists each bad field."""
    from app.words import in_app_words  # the panel's labels: imported when a page runs

    try:
        yield
    except SpecError as error:
        st.error("The spec needs a change:\n" + "\n".join(f"- {in_app_words(problem)}" for problem in error.problems))
    except PoiseError as error:
        st.error(in_app_words(str(error)))


def require_spec() -> BufferSpec:
    """The spec the frame built from the panel; SpecError (for :func:`user_errors`) if it has
    bad fields."""
    spec = st.session_state.get("spec")
    if spec is None:
        raise SpecError(st.session_state.get("spec_problems") or ["open the app through its main page"])
    return spec


def show_hazards(reagent_ids: Iterable[str]) -> None:
    """The cautions of the hazardous reagents among ``reagent_ids``, with the safety notice,
    whenever there is any."""
    cautions = hazard_cautions(reagent_ids, catalog())
    if cautions:
        st.warning("\n\n".join([*cautions, SAFETY_NOTICE]))


def titrants(counter_ion: str) -> tuple[str, ...]:
    """The strong acid and (unless the counter-ion is "none") base titrant for ``counter_ion``."""
    acid_id, base_id = titrant_ids(counter_ion)
    return (acid_id,) if base_id is None else (acid_id, base_id)


@st.cache_data(show_spinner=False, max_entries=64)
def ranking(spec: BufferSpec, _price_book: PriceBook, price_label: str, sort: str):
    """rank_systems, cached per spec, price book and order (the book is keyed by its label
    and prices)."""
    from selector.rank import rank_systems

    return rank_systems(spec, _price_book, catalog(), sort=sort)


def price_key(book: PriceBook) -> str:
    """A key that changes whenever the price book does."""
    return book.label + "|" + ",".join(f"{r}:{p.price_per_kg:.6g}" for r, p in sorted(book.prices.items()))


@st.cache_data(show_spinner=False, max_entries=64)
def recipe(system_id: str, spec: BufferSpec, route: str, _price_book: PriceBook, price_label: str):
    """make_recipes for one route, cached per system, spec, route and price book (keyed by
    its label and prices): a page switch or a widget that changes nothing of these shows
    the recipe without solving it again."""
    from selector.recipe import make_recipes

    return make_recipes(system_id, spec, routes=[route], prices=_price_book, catalog=catalog())[0]


@st.cache_data(show_spinner=False, max_entries=64)
def recipe_curves(composition: tuple[tuple[str, float], ...], titrant_id: str, temperature_c: float,
                  prep_temperature_c: float, target_ph: float, window_c: tuple[float, float] | None):
    """The recipe page's pictures, cached per composition (reagent id, mol/L) and conditions:
    the buffer forms titrated with 1 M ``titrant_id``, β against pH with the pKa′ marks, and
    the temperatures and pH of the composition across them (:mod:`selector.curves`)."""
    from selector.chemistry.properties import temperature_profile
    from selector.curves import buffer_titration, capacity_curve, temperature_axis_c

    mix = dict(composition)
    titration = buffer_titration(mix, titrant_id, temperature_c, catalog())
    beta = capacity_curve(mix, temperature_c, catalog(), target_ph=target_ph)
    temperatures = temperature_axis_c(temperature_c, prep_temperature_c, window_c)
    ph = temperature_profile(list(mix), list(mix.values()), temperatures, catalog=catalog(), strict=False)
    return titration, beta, temperatures, ph


@st.cache_data(show_spinner=False, max_entries=64)
def solution(amounts: tuple[tuple[str, str], ...], temperature_c: float, activity: str):
    """describe_solution (the figures of ``poise ph``) for (reagent name, amount text) pairs,
    cached per composition, temperature and activity model."""
    from selector.chemistry.properties import describe_solution

    return describe_solution(dict(amounts), temperature_c, activity=activity)


@st.cache_data(show_spinner=False, max_entries=16)
def standard(standard_id: str, water_kg: float):
    """standard_recipe: a pH standard's grams per water mass and its pH table, cached."""
    from selector.recipe.standards import standard_recipe

    return standard_recipe(standard_id, water_kg, catalog())


#: Modules the other pages need, imported in the background once the first page is drawn
#: (the recipe routes load SciPy's root finder, the optimiser Pyomo: about a second each).
WARM_MODULES = ("selector.rank", "selector.optimise", "selector.recipe", "scipy.optimize",
                "selector.chemistry.properties", "selector.catalog_view")


@st.cache_resource
def warm_up() -> threading.Thread:
    """Start (once per server) a daemon thread that imports :data:`WARM_MODULES`, so the
    first visit to another page does not wait for them."""
    def load() -> None:
        for name in WARM_MODULES:
            importlib.import_module(name)

    thread = threading.Thread(target=load, name="poise-warm-up", daemon=True)
    thread.start()
    return thread
