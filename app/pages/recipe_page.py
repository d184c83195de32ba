"""Recipe for the chosen system and route, or a mix of systems: steps, amounts, meter pH,
cautions, downloads (recipe, bench sheet, label, methods sentence), pictures."""

import pandas as pd
import streamlit as st

from app import state
from app.book_save import save_form
from app.recipe_downloads import recipe_downloads
from selector.prices import money_text, spec_cost_summary
from selector.recipe import ROUTES, STARTS, mix_recipe, recipe_markdown
from selector.recipe.mix import parse_mix
from selector.report import plus_minus

st.title("Recipe")
catalog = state.catalog()


def pictures(recipe, spec) -> None:
    """Titration curve, β against pH, pH against temperature and the cost breakdown."""
    st.subheader("Pictures")
    ids = list(recipe.composition_mol_l)
    amounts = [recipe.composition_mol_l[r] for r in ids]
    titrant_id = st.radio("titrate with", state.titrants(spec.counter_ion), key="recipe_titrant", horizontal=True,
                          format_func=lambda r: catalog.reagents[r].name)
    volumes_l = tuple(v * recipe.buffer_conc_mol_l * 3 / 100 for v in range(0, 101))   # up to 3 equivalents of 1 M
    temperatures = list(range(0, 61, 5))
    curve, profile = state.recipe_curves(tuple(ids), tuple(amounts), titrant_id, volumes_l, spec.temperature_c,
                                         tuple(float(t) for t in temperatures))
    frame = pd.DataFrame({"mL of 1 M titrant per L": [v * 1000 for v in curve.added_volume_l],
                          "pH": curve.ph, "β mM/pH": curve.capacity_mol_l_per_ph * 1000})
    left, right = st.columns(2)
    left.caption("titration curve")
    left.line_chart(frame, x="mL of 1 M titrant per L", y="pH")
    right.caption("buffer capacity β against pH")
    right.line_chart(frame, x="pH", y="β mM/pH")
    left.caption("pH of this composition against temperature")
    left.line_chart(pd.DataFrame({"°C": temperatures, "pH": profile}), x="°C", y="pH")
    book = st.session_state["price_book"]
    breakdown = book.cost_breakdown(recipe.composition_mol_l, spec.volume_l, catalog)
    right.caption(f"cost breakdown ({book.currency} for {spec.volume_l:g} L)")
    right.bar_chart(pd.DataFrame({"reagent": list(breakdown), "cost": [v or 0.0 for v in breakdown.values()]}),
                    x="reagent", y="cost")


def one_system(spec, book):
    """The recipe of the chosen system by the chosen route."""
    systems = list(catalog.systems)
    chosen = st.session_state.get("chosen_system", "phosphate")
    system_id = st.selectbox("buffer system", systems, index=systems.index(chosen) if chosen in systems else 0,
                             key="recipe_system", format_func=lambda s: f"{s} — {catalog.systems[s].name}")
    st.session_state["chosen_system"] = system_id
    route = st.radio("preparation route", ROUTES, key="recipe_route", horizontal=True)
    with st.spinner("Solving and verifying the recipe…"):
        return state.recipe(system_id, spec, route, book, state.price_key(book))


def mix_of_systems(spec, book):
    """Several systems at their totals, titrated to the spec's pH (the spec's concentration is not used)."""
    text = st.text_input("systems and their concentrations", "tris=30mM hepes=20mM", key="recipe_mix",
                         help="each system as name=concentration, e.g. tris=30mM hepes=20mM")
    start = st.radio("titrate", STARTS, key="recipe_mix_start", horizontal=True,
                     format_func=lambda s: {"least-titrant": "whichever needs less titrant",
                                            "acid": "acid forms with strong base",
                                            "base": "base forms with strong acid"}[s])
    with st.spinner("Solving and verifying the recipe…"):
        return mix_recipe(parse_mix(text, "mix"), spec, catalog, book, start=start)


with state.user_errors():
    spec = state.require_spec()
    book = st.session_state["price_book"]
    make = st.radio("make", ("one buffer system", "a mix of systems"), key="recipe_make", horizontal=True)
    recipe = one_system(spec, book) if make == "one buffer system" else mix_of_systems(spec, book)
    st.metric(f"meter pH at {recipe.prep_temperature_c:g} °C",
              f"{recipe.meter_ph_at_prep:.2f}{plus_minus(recipe.meter_ph_uncertainty, '.2f')}",
              help=f"so that the pH is {recipe.target_ph:g}{plus_minus(recipe.verified_ph_uncertainty, '.2f')} "
                   f"at {recipe.temperature_c:g} °C; the ± comes from the constants and the activity model")
    if recipe.co2_drift:
        drift = recipe.co2_drift
        st.info(f"Open to air (CO2 {drift['pco2_atm'] * 1e6:.4g} ppm) at {drift['temperature_c']:g} °C: pH "
                f"{drift['ph_closed']:.2f} → {drift['ph_open']:.2f} ({drift['ph_drift']:+.2f}) at equilibrium; "
                f"{drift['precaution']}.")
    costs = spec_cost_summary(book, list(recipe.composition_mol_l),
                              None if recipe.cost is None else recipe.cost / recipe.volume_l, recipe.volume_l, spec)
    if costs["cost_per_plate"] is not None:
        st.caption(f"cost per plate ({costs['plate_volume_l'] * 1000:g} mL): "
                   f"{money_text(costs['cost_per_plate'], book.currency)}")
    state.show_hazards(recipe.composition_mol_l)
    st.markdown(recipe_markdown(recipe, catalog))
    recipe_downloads(recipe, catalog)
    with st.expander("Save to the recipe book"):
        save_form(recipe.as_json(), spec, key="recipe")
    pictures(recipe, spec)
