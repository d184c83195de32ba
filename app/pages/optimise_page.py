"""The minimum-cost mix for the spec: verified figures, binding constraints, conflicts, and
its bench recipe with the recipe page's downloads."""

import streamlit as st

from app import charts, state
from app.book_save import save_form
from app.recipe_downloads import recipe_downloads
from app.tables import show_table
from app.words import in_app_words
from selector.optimise import OBJECTIVES, solve_min_cost
from selector.recipe import bench_recipe, recipe_markdown

st.title("Cheapest mix")
st.caption("The least costly mix of one or more buffer systems, salt and titrant that meets the spec in the "
           "panel: chosen by a mixed-integer model, then every figure checked by the exact equilibrium engine.")
catalog = state.catalog()


def show_result(result) -> None:
    per_plate = f", {result.cost_per_plate:.4f} per plate or run" if result.cost_per_plate else ""
    st.success(f"{result.status}: {result.cost_per_l:.3f} {result.currency} per litre "
               f"({result.cost_for_volume:.2f} for {result.volume_l:g} L{per_plate}); "
               f"dominant cost: {catalog.reagents[result.dominant_reagent].name}")
    show_table([{"reagent": catalog.reagents[r].name, "conc, mM": round(c * 1000, 4),
                 f"cost per L, {result.currency}": round(result.cost_breakdown_per_l.get(r, 0.0), 4)}
                for r, c in result.reagents_mol_l.items()], key="opt_mix", width="stretch")
    v = result.verified
    st.markdown(
        f"Verified (exact engine): pH {v.ph:.4f}"
        f"{'' if v.ph_uncertainty is None else f' ± {v.ph_uncertainty:.3f}'} at {v.temperature_c:g} °C · β {v.capacity_mol_l_per_ph * 1000:.2f} "
        f"mM per pH · I {v.ionic_strength_mol_l * 1000:.1f} mM · osmolarity {v.osmolarity_osmol_l * 1000:.1f} mOsm/L · "
        f"dpH/dT {v.dph_dt_per_k:+.4f} pH per K")
    for check in v.ph_under_loads:
        st.write(f"- {check.kind} challenge of {check.conc_mol_l * 1000:g} mM at {check.temperature_c:g} °C: "
                 f"pH {check.ph:.3f}" + ("" if check.within_band else " (beyond the allowed pH excursion)"))
    if len(v.ph_by_temperature) > 1:
        st.caption("verified pH across the temperature window (band: target ± allowed pH excursion)")
        spec = st.session_state["opt_spec"]
        st.vega_lite_chart(charts.temperature_chart(
            [("the cheapest mix", list(v.ph_by_temperature), list(v.ph_by_temperature.values()))],
            spec.temperature_c, spec.prep_temperature_c, (spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph)),
            width="stretch", key="opt_temperature_chart")
    for metal, fraction in v.bound_fraction.items():
        st.write(f"{metal} bound: {fraction * 100:.2f} %")
    for title, lines in (("Binding constraints", result.binding), ("Sensitivity", result.sensitivity)):
        if lines:
            st.subheader(title)
            for line in lines:
                st.write(f"- {in_app_words(line)}")
    for warning in v.warnings:
        st.warning(in_app_words(warning))
    state.show_hazards(result.reagents_mol_l)


with state.user_errors():
    spec = state.require_spec()
    c1, c2, c3 = st.columns(3)
    max_systems = c1.number_input("at most this many buffer systems", 1, 4, 2, key="opt_max_systems")
    max_reagents = c2.number_input("at most this many reagents (0: no limit)", 0, 12, 0, key="opt_max_reagents")
    objective = c3.selectbox("objective", OBJECTIVES, key="opt_objective")
    if st.button("Find the cheapest mix", key="opt_run"):
        st.session_state["opt_result"], st.session_state["opt_spec"] = None, spec
        st.session_state["opt_recipe"] = None
        with st.spinner("Building and solving the model, then verifying the mix exactly…"):
            st.session_state["opt_result"] = solve_min_cost(
                spec, st.session_state["price_book"], catalog, max_systems=int(max_systems),
                max_reagents=int(max_reagents) or None, objective=objective)
        with st.spinner("Writing the bench recipe…"):
            st.session_state["opt_recipe"] = bench_recipe(st.session_state["opt_result"].reagents_mol_l, spec, catalog,
                                                          st.session_state["price_book"], route="optimised")
    result = st.session_state.get("opt_result")
    if result is not None:
        if st.session_state.get("opt_spec") != spec:
            st.info("The spec has changed since this result: press \"Find the cheapest mix\" to solve the new one.")
        show_result(result)
        recipe = st.session_state.get("opt_recipe")
        if recipe is not None:
            st.subheader("Bench recipe")
            st.markdown(recipe_markdown(recipe, catalog))
            recipe_downloads(recipe, catalog, key_prefix="opt_")
            with st.expander("Save to the recipe book"):
                save_form({**result.as_json(), "recipe": recipe.as_json()}, st.session_state["opt_spec"], key="opt")
