"""Ranked systems for the spec: feasible ones by cost with reasons, the rest with theirs."""

import altair as alt
import pandas as pd
import streamlit as st

from app import state
from selector.catalog_view import system_table
from selector.errors import PoiseError
from selector.rank import SORTS

st.title("Ranked buffer systems")
state.init()  # idempotent: the page also works when run on its own
state.spec_panel()
spec = state.current_spec()
if spec is not None:
    sort = st.selectbox("order", SORTS, key="rank_sort")
    try:
        with st.spinner("Ranking every system in the catalog (each one solved and verified)…"):
            book = st.session_state["price_book"]
            ranking = state.ranking(spec, book, state.price_key(book), sort)
    except PoiseError as error:
        st.error(str(error))
        ranking = ()
    feasible = [r for r in ranking if r.feasible]
    others = [r for r in ranking if not r.feasible]
    currency = st.session_state["price_book"].currency
    if feasible:
        top = feasible[0]
        if st.session_state.get("chosen_system") not in [r.system_id for r in feasible]:
            st.session_state["chosen_system"] = top.system_id
        st.markdown(f"Top-ranked system: **<span id='top-system'>{top.name}</span>** "
                    f"({top.system_id}) — {top.reason}", unsafe_allow_html=True)
        table = pd.DataFrame([{
            "rank": r.rank, "system": r.system_id, "name": r.name,
            "conc mM": None if r.conc_mol_l is None else round(r.conc_mol_l * 1000, 2),
            "pKa' at use": None if r.pka_at_use is None else round(r.pka_at_use, 3),
            "|pH − pKa'|": None if r.distance_ph is None else round(r.distance_ph, 3),
            "β mM/pH": None if r.capacity_mol_l_per_ph is None else round(r.capacity_mol_l_per_ph * 1000, 2),
            "dpH/dT /K": None if r.dph_dt_per_k is None else round(r.dph_dt_per_k, 4),
            "ΔpH½": None if r.dilution_value_ph is None else round(r.dilution_value_ph, 3),
            "I mol/L": None if r.ionic_strength_mol_l is None else round(r.ionic_strength_mol_l, 4),
            **{f"{m} bound %": round(100 * v, 2) for m, v in r.bound_fraction.items()},
            f"cost/L {currency}": None if r.cost_per_l is None else round(r.cost_per_l, 3),
            **({f"cost/plate {currency}": None if r.cost_per_plate is None else round(r.cost_per_plate, 4)}
               if spec.plates else {}),
            "why": r.reason,
        } for r in feasible])
        st.dataframe(table, key="rank_table", hide_index=True, width="stretch")
        choice = st.selectbox("system for the recipe", [r.system_id for r in feasible], key="chosen_system")
        st.caption(f"Open the Recipe page to make {choice}.")

        # Useful range (pKa' ± 1 at use temperature and ionic strength) against the target.
        catalog_rows = {row.system_id: row for row in system_table(spec.temperature_c, feasible[0].ionic_strength_mol_l or 0.0).rows}
        bars = []
        for r in feasible[:15]:
            for step in catalog_rows[r.system_id].steps:
                bars.append({"system": r.system_id, "low": step.useful_ph_low, "high": step.useful_ph_high,
                             "apparent_pka": round(step.pka_apparent, 3)})
        if bars:
            frame = pd.DataFrame(bars)
            chart = alt.Chart(frame).mark_bar(opacity=0.6).encode(
                x=alt.X("low:Q", title="pH", scale=alt.Scale(domain=[0, 14])), x2="high:Q",
                y=alt.Y("system:N", sort=[r.system_id for r in feasible[:15]]),
                tooltip=["system", alt.Tooltip("apparent_pka:Q", title="pKa' at use")])
            target = alt.Chart(pd.DataFrame({"pH": [spec.ph]})).mark_rule(color="red").encode(x="pH:Q")
            st.subheader("Useful range (pKa' ± 1) against the target")
            st.altair_chart(chart + target, width="stretch", key="range_chart")
    else:
        st.warning("No system in the catalog meets this spec; the reasons are below.")
    if others:
        st.subheader("Not feasible or excluded")
        st.dataframe(pd.DataFrame([{"system": r.system_id, "name": r.name,
                                    "excluded" if r.excluded else "infeasible": "yes", "reason": r.reason}
                                   for r in others]), key="rank_rejected", hide_index=True, width="stretch")
