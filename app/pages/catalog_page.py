"""Catalog browser: every system with its pKa at chosen conditions, and every value's source."""

import dataclasses

import pandas as pd
import streamlit as st

from app import state
from selector.catalog_view import search_catalog, system_detail, system_table
from selector.units import TEMPERATURE_MAX_C, TEMPERATURE_MIN_C, parse_ionic_strength

IONIC_LABEL = "ionic strength, mol/L (e.g. 0.15 or 150mM)"

st.title("Catalog")
catalog = state.catalog()


def systems_table(temperature_c: float, ionic_mol_l: float) -> None:
    table = system_table(temperature_c, ionic_mol_l, catalog=catalog)
    st.dataframe(pd.DataFrame([{
        "system": row.system_id, "name": row.name,
        "pKa'": ", ".join(f"{s.pka_apparent:.2f}" for s in row.steps),
        "useful range": ", ".join(f"{s.useful_ph_low:.1f}–{s.useful_ph_high:.1f}" for s in row.steps),
        "flags": ", ".join(row.flags), "hazardous": "yes" if row.hazardous else "",
        "UV cut-off nm": row.uv_cutoff_nm} for row in table.rows]),
        key="cat_table", hide_index=True, width="stretch")


def one_system(system_id: str, temperature_c: float, ionic_mol_l: float) -> None:
    detail = system_detail(system_id, temperature_c, ionic_mol_l, catalog=catalog)
    st.subheader(detail.name)
    if detail.hazardous:
        st.warning(detail.hazard_note)
    for step in detail.steps:
        st.markdown(f"**step {step.step}**")
        st.dataframe(pd.DataFrame([
            {"quantity": label, "value": value.value, "unit": value.unit,
             "source": value.source_key or value.source_kind, "citation": value.citation}
            for label, value in (("pKa (25 °C, I = 0)", step.pka_25c), ("ΔH°", step.dh_kj_mol),
                                 ("ΔCp°", step.dcp_j_k_mol))
            if value is not None]), key=f"cat_step_{step.step}", hide_index=True)
    st.json({"reagents": [dataclasses.asdict(r) for r in detail.reagents],
             "metal binding": [dataclasses.asdict(m) for m in detail.metal_binding],
             "flags": [dataclasses.asdict(f) for f in detail.flags]}, expanded=False)


c1, c2 = st.columns(2)
temperature = c1.number_input("temperature, °C", TEMPERATURE_MIN_C, TEMPERATURE_MAX_C, 25.0, step=1.0,
                              key="cat_temperature")
ionic_text = c2.text_input(IONIC_LABEL, "0", key="cat_ionic")
ionic = None
with state.user_errors():
    ionic = parse_ionic_strength(ionic_text, what=IONIC_LABEL)
    systems_table(temperature, ionic)

query = st.text_input("search names and aliases", key="cat_search")
if query:
    with state.user_errors():
        hits = search_catalog(query, catalog)
        st.dataframe(pd.DataFrame([dataclasses.asdict(h) for h in hits]), key="cat_hits", hide_index=True)

system_id = st.selectbox("show one system with every source", list(catalog.systems), key="cat_system")
if ionic is not None:
    with state.user_errors():
        one_system(system_id, temperature, ionic)
