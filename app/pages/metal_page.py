"""Free metal: what ``poise metal`` designs — the metal and titrant to add for a requested free
Ca²⁺, Mg²⁺ … with a chelator — its sensitivity table and its bench recipe with downloads.
Widgets only: every number comes from selector.designs.free_metal."""

import pandas as pd
import streamlit as st

from app import state
from app.recipe_downloads import recipe_downloads
from selector.designs.free_metal import design_free_metal, free_metal_recipe, parse_free_metal_spec
from selector.recipe import render_recipe
from selector.units import TEMPERATURE_MAX_C, TEMPERATURE_MIN_C

st.title("Free metal")
st.caption("Ask for a free metal concentration (Ca²⁺, Mg²⁺ …) held by a chelator: poise solves the exact "
           "equilibrium for the metal to add and the titrant that holds the pH (chelation releases protons), "
           "re-solves the result, and shows how the free metal moves with pH, temperature and the chelator's "
           "purity. Pairs as NAME=AMOUNT, separated by spaces (units M, mM, uM, nM).")
c1, c2 = st.columns(2)
free_text = c1.text_input("free metal", "Ca=100nM Mg=1mM", key="metal_free")
chelator_text = c2.text_input("chelator", "EGTA=2mM", key="metal_chelator")
c3, c4, c5 = st.columns(3)
ph = c3.number_input("pH", 0.0, 14.0, 7.2, step=0.1, key="metal_ph")
temperature = c4.number_input("temperature, °C", TEMPERATURE_MIN_C, TEMPERATURE_MAX_C, 22.0, step=1.0,
                              key="metal_temperature")
ionic = c5.text_input("ionic strength (empty: no salt)", "0.1", key="metal_ionic_strength")
c6, c7, c8, c9 = st.columns(4)
buffer_text = c6.text_input("pH buffer", "hepes=20mM", key="metal_buffer")
purity_text = c7.text_input("chelator purity", "EGTA=100%", key="metal_purity")
counter_ion = c8.selectbox("titrant and salt cation", ("K", "Na"), key="metal_counter_ion")
volume = c9.text_input("volume", "1L", key="metal_volume")

with state.user_errors():
    spec = parse_free_metal_spec([free_text], [chelator_text], ph, temperature, ionic.strip() or None,
                                 [buffer_text] if buffer_text.strip() else [],
                                 [purity_text] if purity_text.strip() else [], counter_ion, volume,
                                 catalog=state.catalog())
    design = design_free_metal(spec, state.catalog())
    metals = list(spec.free_mol_l)
    st.subheader("Metal to add")
    st.dataframe(pd.DataFrame([{"metal": m, "free asked, µM": spec.free_mol_l[m] * 1e6,
                                "total to add, mM": design.total_metal_mol_l[m] * 1e3,
                                "free re-solved, µM": design.free_metal_mol_l[m] * 1e6,
                                "weighed as": state.catalog().reagents[design.metal_reagents[m]].name}
                               for m in metals]),
                 key="metal_result", hide_index=True, width="stretch",
                 column_config={c: st.column_config.NumberColumn(format="%.6g")
                                for c in ("free asked, µM", "total to add, mM", "free re-solved, µM")})
    m1, m2, m3 = st.columns(3)
    m1.metric("titrant, mM", f"{design.titrant_mol_l * 1e3:.3f}", help=design.titrant_id or "none")
    m2.metric("salt, mM", f"{design.salt_mol_l * 1e3:.2f}", help=design.salt_id or "none")
    m3.metric("ionic strength, mM", f"{design.ionic_strength_mol_l * 1e3:.1f}")
    st.subheader("Sensitivity")
    st.caption("Metal and chelator as weighed; pH and purity rows titrated to the meter, temperature rows used "
               "as made.")
    st.dataframe(pd.DataFrame([{"change": row.change, "pH": row.ph,
                                **{f"free {m}, µM": row.free_mol_l[m] * 1e6 for m in metals},
                                **{f"{m} vs asked": f"{row.free_mol_l[m] / spec.free_mol_l[m] - 1:+.1%}"
                                   for m in metals}}
                               for row in design.sensitivity]),
                 key="metal_sensitivity", hide_index=True, width="stretch")
    for note in design.notes:
        st.warning(note)
    recipe = free_metal_recipe(design, state.catalog())
    st.subheader("Recipe")
    st.markdown(render_recipe(recipe, "recipe", "markdown", state.catalog()))
    recipe_downloads(recipe, state.catalog(), key_prefix="metal_")
