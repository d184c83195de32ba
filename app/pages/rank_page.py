"""Ranked systems for the spec: scored by a profile, each with its criteria; the infeasible
ones with a remedy to apply; 2-4 systems side by side with pictures."""

from dataclasses import replace

import altair as alt
import pandas as pd
import streamlit as st

from app import state
from selector.catalog_view import system_table
from selector.profiles import CRITERIA, DEFAULT_PROFILE, PROFILES
from selector.rank import SORTS

st.title("Ranked buffer systems")

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


def ranking_table(feasible, currency: str, plates: bool) -> pd.DataFrame:
    """The feasible rows as a table (numbers rounded for reading, units in the headers)."""
    def mm(value):
        return None if value is None else round(value * 1000, 2)

    return pd.DataFrame([{
        "rank": r.rank, "system": r.system_id, "name": r.name,
        "score": None if r.score is None else round(r.score, 3), "conc mM": mm(r.conc_mol_l),
        "pKa' at use": None if r.pka_at_use is None else round(r.pka_at_use, 3),
        "|pH − pKa'|": None if r.distance_ph is None else round(r.distance_ph, 3),
        "β mM/pH": mm(r.capacity_mol_l_per_ph),
        "dpH/dT /K": None if r.dph_dt_per_k is None else round(r.dph_dt_per_k, 4),
        "u(pH) ±": None if r.ph_uncertainty is None else round(r.ph_uncertainty, 3),
        "ΔpH½": None if r.dilution_value_ph is None else round(r.dilution_value_ph, 3),
        "I mol/L": None if r.ionic_strength_mol_l is None else round(r.ionic_strength_mol_l, 4),
        **{f"{m} bound %": round(100 * v, 2) for m, v in r.bound_fraction.items()},
        **({"largest SI": max(r.saturation_indices.values())} if r.saturation_indices else {}),
        f"cost/L {currency}": None if r.cost_per_l is None else round(r.cost_per_l, 3),
        **({f"cost/plate {currency}": None if r.cost_per_plate is None else round(r.cost_per_plate, 4)}
           if plates else {}),
        "why": r.reason,
    } for r in feasible])


def criteria_table(rows) -> pd.DataFrame:
    """Each criterion's value and score (0-1) per system, criteria as rows."""
    table = []
    for name in CRITERIA:
        line = {"criterion": name, "unit": next((r.criteria[name].unit for r in rows if name in r.criteria), "")}
        for r in rows:
            c = r.criteria.get(name)
            line[r.system_id] = "—" if c is None else \
                f"{'no data' if c.value is None else f'{c.value:.4g}'} ({c.score:.2f})"
        table.append(line)
    return pd.DataFrame(table)


def range_chart(spec, system_ids: list[str]) -> None:
    """Useful range (pKa' ± 1 at the spec's temperature and ionic strength) against the target."""
    ionic = spec.ionic_strength_mol_l or 0.0
    rows = {row.system_id: row for row in system_table(spec.temperature_c, ionic, catalog=state.catalog()).rows}
    bars = [{"system": s, "low": step.useful_ph_low, "high": step.useful_ph_high,
             "apparent_pka": round(step.pka_apparent, 3)} for s in system_ids for step in rows[s].steps]
    if not bars:
        return
    chart = alt.Chart(pd.DataFrame(bars)).mark_bar(opacity=0.6).encode(
        x=alt.X("low:Q", title="pH", scale=alt.Scale(domain=[0, 14])), x2="high:Q",
        y=alt.Y("system:N", sort=system_ids), tooltip=["system", alt.Tooltip("apparent_pka:Q", title="pKa' at use")])
    target = alt.Chart(pd.DataFrame({"pH": [spec.ph]})).mark_rule(color="red").encode(x="pH:Q")
    st.subheader("Useful range (pKa' ± 1) against the target")
    st.caption(f"pKa' at {spec.temperature_c:g} °C and I = {ionic:g} mol/L (the spec's ionic strength)")
    st.altair_chart(chart + target, width="stretch", key="range_chart")


def comparison(spec, rows, currency: str) -> None:
    """The chosen systems side by side: criteria, pH against temperature, β against pH, cost."""
    from selector.comparison import comparison_curves

    st.dataframe(criteria_table(rows), key="compare_table", hide_index=True, width="stretch")
    curves = comparison_curves(rows, spec, state.catalog())
    if not curves:
        return
    by_t = pd.DataFrame([{"system": c.system_id, "temperature °C": t, "pH": p}
                         for c in curves for t, p in zip(c.temperatures_c, c.ph_at_temperature)])
    beta = pd.DataFrame([{"system": c.system_id, "pH": p, "β mM/pH": b * 1000}
                         for c in curves for p, b in zip(c.ph, c.capacity_mol_l_per_ph)])
    cost = pd.DataFrame([{"system": c.system_id, f"cost/L {currency}": c.cost_per_l} for c in curves])
    left, middle, right = st.columns(3)
    band = alt.Chart(pd.DataFrame({"low": [spec.ph - spec.tolerance_ph], "high": [spec.ph + spec.tolerance_ph]}))
    left.caption("pH against temperature (the mix as made; band: target ± tolerance)")
    left.altair_chart(band.mark_rect(opacity=0.15).encode(y="low:Q", y2="high:Q")
                      + alt.Chart(by_t).mark_line().encode(x="temperature °C:Q", y=alt.Y("pH:Q", scale=alt.Scale(
                          zero=False)), color="system:N"), width="stretch", key="compare_ph_t")
    target = alt.Chart(pd.DataFrame({"pH": [spec.ph]})).mark_rule(color="red").encode(x="pH:Q")
    middle.caption(f"β against pH at {spec.temperature_c:g} °C (red: the target)")
    middle.altair_chart(alt.Chart(beta).mark_line().encode(x=alt.X("pH:Q", scale=alt.Scale(zero=False)),
                                                           y="β mM/pH:Q", color="system:N") + target,
                        width="stretch", key="compare_beta")
    right.caption("cost per litre")
    right.altair_chart(alt.Chart(cost).mark_bar().encode(x="system:N", y=f"cost/L {currency}:Q", color="system:N"),
                       width="stretch", key="compare_cost")


def infeasible_rows(others) -> None:
    """Each system that cannot meet the spec with its reason, and its remedy with an apply button."""
    st.subheader("Not feasible or excluded")
    for r in [r for r in others if not r.excluded]:
        text, button = st.columns([5, 1])
        text.markdown(f"**{r.system_id}** — {r.reason}")
        if r.remedy is not None:
            text.caption(f"Remedy: {r.remedy.text}")
            button.button("apply", key=f"remedy_{r.system_id}", on_click=apply_remedy,
                          args=(r.remedy.field, r.remedy.field_value),
                          help=f"set {r.remedy.option} to {r.remedy.value} in the spec")
        elif r.remedy_reason:
            text.caption(f"No single change found: {r.remedy_reason}")
    excluded = [r for r in others if r.excluded]
    if excluded:
        st.dataframe(pd.DataFrame([{"system": r.system_id, "name": r.name, "excluded": "yes", "reason": r.reason}
                                   for r in excluded]), key="rank_rejected", hide_index=True, width="stretch")


with state.user_errors():
    spec = state.require_spec()
    choose_profile, choose_sort = st.columns(2)
    profiles = list(PROFILES)
    profile = choose_profile.selectbox("profile", profiles, index=profiles.index(spec.profile or DEFAULT_PROFILE),
                                       key="rank_profile")
    sort = choose_sort.selectbox("order", SORTS, key="rank_sort")
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
        st.markdown(f"Top-ranked system: **<span id='top-system'>{top.name}</span>** "
                    f"({top.system_id}) — {top.reason}", unsafe_allow_html=True)
        st.dataframe(ranking_table(feasible, book.currency, bool(spec.plates)), key="rank_table", hide_index=True,
                     width="stretch")
        for r in feasible:    # SI > 0 with the listed metals at their concentrations
            for note in r.precipitation:
                st.warning(f"{r.system_id}: {note}")
        choice = st.selectbox("system for the recipe", ids, index=ids.index(st.session_state["chosen_system"]),
                              key="rank_choice")
        st.session_state["chosen_system"] = choice
        st.caption(f"Open the Recipe page to make {choice}.")
        st.subheader("Compare side by side")
        picked = st.multiselect(f"tick 2 to {COMPARE_MAX} systems", ids, default=ids[:min(3, len(ids))],
                                max_selections=COMPARE_MAX, key="rank_compare")
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
