"""Recipe for the chosen system and route, or a mix of systems: steps, amounts, meter pH,
cautions, downloads (recipe, bench sheet, label, methods sentence), pictures."""

import streamlit as st

from app import charts, state
from app.book_save import save_form
from app.recipe_downloads import recipe_downloads
from catalog.records import short_system_name
from selector.prices import money_text, spec_cost_summary
from selector.recipe import ROUTES, STARTS, mix_recipe, recipe_markdown
from selector.recipe.co2 import co2_level_words
from selector.recipe.mix import parse_mix
from selector.recipe.routes import ROUTE_REGISTRY
from selector.report import plus_minus

st.title("Recipe")
catalog = state.catalog()


def recipe_titrant(recipe, options: tuple[str, ...]) -> int:
    """Index in ``options`` of the titrant the recipe adds (the first option if it adds none)."""
    used = [line.reagent_id for line in recipe.lines if line.role == "titrant"]
    return options.index(used[0]) if used and used[0] in options else 0


def pictures(recipe, spec) -> None:
    """Titration curve, β against pH, pH against temperature and the cost breakdown."""
    st.subheader("Pictures")
    options = state.titrants(spec.counter_ion)
    titrant_id = st.radio("titration curve with", options, index=recipe_titrant(recipe, options),
                          key="recipe_titrant", horizontal=True, format_func=lambda r: catalog.reagents[r].name,
                          help="the recipe's own titrant is chosen first")
    window = (spec.temperature_min_c, spec.temperature_max_c) if spec.temperature_min_c is not None \
        and spec.temperature_max_c is not None else None
    titration, beta, temperatures, ph = state.recipe_curves(
        tuple(recipe.composition_mol_l.items()), titrant_id, recipe.temperature_c, recipe.prep_temperature_c,
        recipe.target_ph, window)
    name = short_system_name(recipe.title or "this buffer")
    left, right = st.columns(2)
    left.caption(f"titration of the buffer forms with {catalog.reagents[titrant_id].name} at "
                 f"{recipe.temperature_c:g} °C (red: the target pH)")
    left.vega_lite_chart(charts.titration_chart(titration.added_volume_l * 1000.0, titration.ph,
                                             catalog.reagents[titrant_id].name, recipe.target_ph),
                      width="stretch", key="recipe_titration_chart")
    right.caption(f"buffer capacity β against pH at {recipe.temperature_c:g} °C (dotted: pKa′; red: the target)")
    right.vega_lite_chart(charts.capacity_chart([(name, beta.ph, beta.capacity_mol_l_per_ph)], beta.pka,
                                             recipe.target_ph, (beta.ph_low, beta.ph_high)),
                       width="stretch", key="recipe_beta_chart")
    left.caption("pH of this solution against temperature (band: target ± allowed pH excursion at use)")
    band = (spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph)
    left.vega_lite_chart(charts.temperature_chart([(name, temperatures, ph)], recipe.temperature_c,
                                               recipe.prep_temperature_c, band),
                      width="stretch", key="recipe_temperature_chart")
    book = st.session_state["price_book"]
    breakdown = book.cost_breakdown(recipe.composition_mol_l, spec.volume_l, catalog)
    title = f"cost, {book.currency} for {spec.volume_l:g} L"
    right.caption(f"cost breakdown ({book.currency} for {spec.volume_l:g} L)")
    right.vega_lite_chart(charts.cost_chart([(catalog.reagents[r].name, v or 0.0) for r, v in breakdown.items()],
                                         title), width="stretch", key="recipe_cost_chart")


def one_system(spec, book):
    """The recipe of the chosen system by the chosen route."""
    systems = list(catalog.systems)
    chosen = st.session_state.get("chosen_system", "phosphate")
    system_id = st.selectbox("buffer system", systems, index=systems.index(chosen) if chosen in systems else 0,
                             key="recipe_system", format_func=lambda s: catalog.systems[s].name)
    st.session_state["chosen_system"] = system_id
    route = st.radio("preparation route", ROUTES, key="recipe_route", horizontal=True,
                     captions=[ROUTE_REGISTRY[r].description for r in ROUTES])
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
        level = co2_level_words(drift["pco2_atm"], drift.get("co2_ppm_dry_air"))
        st.info(f"Open to air (CO2 {level}) at {drift['temperature_c']:g} °C: pH "
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
