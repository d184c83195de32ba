"""Ranked systems for the spec: feasible ones by the chosen order with reasons, the rest with theirs."""

import altair as alt
import pandas as pd
import streamlit as st

from app import state
from selector.catalog_view import system_table
from selector.rank import SORTS

st.title("Ranked buffer systems")


def ranking_table(feasible, currency: str, plates: bool) -> pd.DataFrame:
    """The feasible rows as a table (numbers rounded for reading, units in the headers)."""
    def mm(value):
        return None if value is None else round(value * 1000, 2)

    return pd.DataFrame([{
        "rank": r.rank, "system": r.system_id, "name": r.name, "conc mM": mm(r.conc_mol_l),
        "pKa' at use": None if r.pka_at_use is None else round(r.pka_at_use, 3),
        "|pH − pKa'|": None if r.distance_ph is None else round(r.distance_ph, 3),
        "β mM/pH": mm(r.capacity_mol_l_per_ph),
        "dpH/dT /K": None if r.dph_dt_per_k is None else round(r.dph_dt_per_k, 4),
        "ΔpH½": None if r.dilution_value_ph is None else round(r.dilution_value_ph, 3),
        "I mol/L": None if r.ionic_strength_mol_l is None else round(r.ionic_strength_mol_l, 4),
        **{f"{m} bound %": round(100 * v, 2) for m, v in r.bound_fraction.items()},
        f"cost/L {currency}": None if r.cost_per_l is None else round(r.cost_per_l, 3),
        **({f"cost/plate {currency}": None if r.cost_per_plate is None else round(r.cost_per_plate, 4)}
           if plates else {}),
        "why": r.reason,
    } for r in feasible])


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


with state.user_errors():
    spec = state.require_spec()
    sort = st.selectbox("order", SORTS, key="rank_sort")
    book = st.session_state["price_book"]
    with st.spinner("Ranking every system in the catalog (each one solved and verified)…"):
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
        choice = st.selectbox("system for the recipe", ids, index=ids.index(st.session_state["chosen_system"]),
                              key="rank_choice")
        st.session_state["chosen_system"] = choice
        st.caption(f"Open the Recipe page to make {choice}.")
        range_chart(spec, ids[:15])
    else:
        st.warning("No system in the catalog meets this spec; the reasons are below.")
    state.warm_up()    # the first table is drawn: load what the other pages need meanwhile
    if others:
        st.subheader("Not feasible or excluded")
        st.dataframe(pd.DataFrame([{"system": r.system_id, "name": r.name,
                                    "excluded" if r.excluded else "infeasible": "yes", "reason": r.reason}
                                   for r in others]), key="rank_rejected", hide_index=True, width="stretch")
