"""Ranked systems for the spec: scored by a profile, each with its criteria; the infeasible
ones with a remedy to apply; 2-4 systems side by side with pictures."""

from dataclasses import replace

import streamlit as st

from app import charts, state
from app.tables import show_table
from app.words import in_app_words
from catalog.records import short_system_name
from selector.catalog_view import system_table
from selector.criteria import RULES
from selector.profiles import CRITERIA, DEFAULT_PROFILE, PROFILES
from selector.rank import SORTS

st.title("Compare buffers")
st.caption("Every buffer system in the catalog, each solved for the spec in the panel, verified and scored "
           "for suitability; the ones that cannot meet it are listed below with the one change that would help.")

#: Remedy field -> the spec panel's widget key and how the field value is shown there.
REMEDY_WIDGETS = {
    "buffer_conc_mol_l": ("spec_conc", lambda v: f"{v * 1000:g}mM"),
    "capacity_mol_l_per_ph": ("spec_capacity", lambda v: float(v) * 1000.0),
    "tolerance_ph": ("spec_tolerance", float),
    "ionic_strength_max_mol_l": ("spec_ionic_max", lambda v: f"{v:g}"),
    "temperature_min_c": ("spec_t_min", float),
    "temperature_max_c": ("spec_t_max", float),
}
#: Most systems the comparison shows.
COMPARE_MAX = 4


def apply_remedy(field: str, value) -> None:
    """Callback of a remedy's button: set the spec panel's widget to the remedy's value."""
    if field == "metals":
        for limit in value:
            st.session_state[f"spec_metal_fraction_{limit.metal}"] = float(limit.max_bound_fraction)
        return
    key, shown = REMEDY_WIDGETS[field]
    st.session_state[key] = shown(value)


def ranking_rows(feasible, currency: str, plates: bool) -> list[dict]:
    """The feasible rows for a table (numbers rounded for reading, one unit per quantity in the heads)."""
    def rounded(value, digits: int, scale: float = 1.0):
        return None if value is None else round(value * scale, digits)

    return [{
        "rank": r.rank, "system": r.name, "score": rounded(r.score, 3), "conc, mM": rounded(r.conc_mol_l, 2, 1000),
        "pKa′ at use": rounded(r.pka_at_use, 3), "|pH − pKa′|": rounded(r.distance_ph, 3),
        "β, mM per pH": rounded(r.capacity_mol_l_per_ph, 2, 1000), "dpH/dT, pH per K": rounded(r.dph_dt_per_k, 4),
        "u(pH) ±": rounded(r.ph_uncertainty, 3), "ΔpH½": rounded(r.dilution_value_ph, 3),
        "I, mM": rounded(r.ionic_strength_mol_l, 2, 1000),
        **{f"{m} bound, %": round(100 * v, 2) for m, v in r.bound_fraction.items()},
        **({"largest SI": round(max(r.saturation_indices.values()), 2)} if r.saturation_indices else {}),
        f"cost per L, {currency}": rounded(r.cost_per_l, 3),
        **({f"cost per plate, {currency}": rounded(r.cost_per_plate, 4)} if plates else {}),
        "why": in_app_words(r.reason),
    } for r in feasible]


def criteria_rows(rows) -> list[dict]:
    """Each criterion's value and score (0-1) per system, criteria as rows, in words."""
    table = []
    for name in CRITERIA:
        line = {"criterion": RULES[name].label, "better": RULES[name].better,
                "unit": next((r.criteria[name].unit for r in rows if name in r.criteria), "")}
        for r in rows:
            c = r.criteria.get(name)
            line[short_system_name(r.name)] = "—" if c is None else f"{c.words(with_unit=False)} ({c.score:.2f})"
        table.append(line)
    return table


def range_chart(spec, system_ids: list[str]) -> None:
    """Useful range (pKa' ± 1 at the spec's temperature and ionic strength) against the target."""
    ionic = spec.ionic_strength_mol_l or 0.0
    catalog = state.catalog()
    rows = {row.system_id: row for row in system_table(spec.temperature_c, ionic, catalog=catalog).rows}
    names = [short_system_name(catalog.systems[s].name) for s in system_ids]
    bars = [{"system": short_system_name(rows[s].name), "low": step.useful_ph_low, "high": step.useful_ph_high,
             "pKa′": round(step.pka_apparent, 2)} for s in system_ids for step in rows[s].steps]
    if not bars:
        return
    st.subheader("Useful range (pKa′ ± 1) against the target")
    st.caption(f"pKa′ at {spec.temperature_c:g} °C and I = {ionic:g} mol/L (the spec's ionic strength); "
               "red: the target pH")
    st.vega_lite_chart(charts.range_chart(bars, names, spec.ph), width="stretch", key="range_chart")


def comparison(spec, rows, currency: str) -> None:
    """The chosen systems side by side: criteria, pH against temperature, β against pH, cost."""
    from selector.comparison import comparison_curves

    show_table(criteria_rows(rows), key="compare_table", width="stretch")
    curves = comparison_curves(rows, spec, state.catalog())
    if not curves:
        return
    left, middle, right = st.columns(3)
    band = (spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph)
    left.caption("pH against temperature, each mix as made (band: target ± allowed pH excursion)")
    left.vega_lite_chart(charts.temperature_chart([(short_system_name(c.system_name), c.temperatures_c, c.ph_at_temperature)
                                                for c in curves], spec.temperature_c, spec.prep_temperature_c, band),
                      width="stretch", key="compare_ph_t")
    drawn = [c for c in curves if c.ph]     # a curve with no converged point inside its axis draws nothing
    if drawn:
        axis = (min(c.ph[0] for c in drawn), max(c.ph[-1] for c in drawn))
        middle.caption(f"β against pH at {spec.temperature_c:g} °C, each at its concentration (dotted: pKa′; "
                       "red: the target)")
        middle.vega_lite_chart(charts.capacity_chart([(short_system_name(c.system_name), c.ph,
                                                       c.capacity_mol_l_per_ph) for c in drawn],
                                                     [m for c in drawn for m in c.pka], spec.ph, axis),
                               width="stretch", key="compare_beta")
    right.caption("cost per litre")
    right.vega_lite_chart(charts.cost_chart([(short_system_name(c.system_name), c.cost_per_l) for c in curves],
                                         f"cost per L, {currency}"), width="stretch", key="compare_cost")


def infeasible_rows(others) -> None:
    """Each system that cannot meet the spec with its reason, and its remedy with an apply button."""
    st.subheader("Not feasible or excluded")
    for r in [r for r in others if not r.excluded]:
        text, button = st.columns([5, 1])
        text.markdown(f"**{r.name}** — {in_app_words(r.reason)}")
        if r.remedy is not None:
            text.caption(f"Remedy: {in_app_words(r.remedy.text)}")
            button.button("apply", key=f"remedy_{r.system_id}", on_click=apply_remedy,
                          args=(r.remedy.field, r.remedy.field_value),
                          help=f"set {in_app_words(r.remedy.option)} to {r.remedy.value} in the spec panel")
        elif r.remedy_reason:
            text.caption(f"No single change found: {in_app_words(r.remedy_reason)}")
    excluded = [r for r in others if r.excluded]
    if excluded:
        show_table([{"system": r.name, "left out because": in_app_words(r.reason)} for r in excluded],
                   key="rank_rejected", width="stretch")


with state.user_errors():
    spec = state.require_spec()
    choose_profile, choose_sort = st.columns(2)
    profiles = list(PROFILES)
    profile = choose_profile.selectbox("what matters most (profile)", profiles, index=profiles.index(spec.profile or DEFAULT_PROFILE),
                                       key="rank_profile")
    sort = choose_sort.selectbox("order by", SORTS, key="rank_sort",
                                 help="score: the profile's weighted suitability; any other: that one criterion")
    spec = replace(spec, profile=profile)
    book = st.session_state["price_book"]
    with st.spinner("Ranking every system in the catalog (each one solved, verified and scored)…"):
        ranking = state.ranking(spec, book, state.price_key(book), sort)
    feasible = [r for r in ranking if r.feasible]
    others = [r for r in ranking if not r.feasible]
    if feasible:
        ids = [r.system_id for r in feasible]
        if st.session_state.get("chosen_system") not in ids:
            st.session_state["chosen_system"] = ids[0]
        top = feasible[0]
        names = {r.system_id: r.name for r in ranking}
        st.markdown(f"Top-ranked system: **<span id='top-system'>{top.name}</span>** "
                    f"— {in_app_words(top.reason)}", unsafe_allow_html=True)
        per_plate = any(r.cost_per_plate is not None for r in feasible)    # plates, or wells and their volume
        show_table(ranking_rows(feasible, book.currency, per_plate), key="rank_table", width="stretch")
        for r in feasible:    # SI > 0 with the listed metals at their concentrations
            for note in r.precipitation:
                st.warning(f"{short_system_name(r.name)}: {in_app_words(note)}")
        choice = st.selectbox("system for the recipe", ids, index=ids.index(st.session_state["chosen_system"]),
                              key="rank_choice", format_func=names.get)
        st.session_state["chosen_system"] = choice
        st.caption(f"Open the Recipe page to make {short_system_name(names[choice])}, or Cheapest mix to let two systems share "
                   "the work.")
        st.subheader("Compare side by side")
        picked = st.multiselect(f"tick 2 to {COMPARE_MAX} systems", ids, default=ids[:min(3, len(ids))],
                                max_selections=COMPARE_MAX, key="rank_compare", format_func=names.get)
        if len(picked) >= 2:
            comparison(spec, [next(r for r in feasible if r.system_id == s) for s in picked], book.currency)
        else:
            st.caption("Tick at least two systems to compare them.")
        range_chart(spec, ids[:15])
    else:
        st.warning("No system in the catalog meets this spec; the reasons and remedies are below.")
    state.warm_up()    # the first table is drawn: load what the other pages need meanwhile
    if others:
        infeasible_rows(others)
