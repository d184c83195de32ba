"""pH standards: the primary calibration buffers, their recipes by molality and their pH
across temperature, published beside poise's own value."""

import pandas as pd
import streamlit as st

from app import state
from app.tables import show_table
from selector.recipe.standards import WATER_KG_MAX, WATER_KG_MIN, list_standards
from selector.units import parse_mass

WATER_LABEL = "water (e.g. 1kg or 250g)"

st.title("pH standards")
st.caption("The buffers a pH meter is calibrated with, made by their published recipes: amounts are per "
           "kilogram of water (molality), as the standards are defined. The table gives the published pH "
           "at each temperature and the pH poise computes for the same solution, so you can see how "
           "closely poise's scale follows the meter's.")
names = dict(list_standards(state.catalog()))
c1, c2 = st.columns(2)
standard_id = c1.selectbox("standard", list(names), format_func=names.get, key="std_id")
water_text = c2.text_input(WATER_LABEL, "1kg", key="std_water",
                           help="mass of water the standard is made with (1 kg ≈ 1 L); "
                                f"{WATER_KG_MIN:g} to {WATER_KG_MAX:g} kg")

with state.user_errors():
    recipe = state.standard(standard_id, parse_mass(water_text, what=WATER_LABEL) / 1000.0)
    st.subheader(recipe.name)
    show_table([{"reagent": state.catalog().reagents[r].name, "grams": round(g, 4)} for r, g in recipe.grams.items()],
               key="std_grams")
    st.markdown(f"**Preparation.** {recipe.preparation}")
    if recipe.note:
        st.caption(recipe.note)
    computed = dict(recipe.engine_ph)
    st.dataframe(pd.DataFrame([{"temperature, °C": t, "published pH": p, "poise pH": round(computed[t], 4),
                                "poise − published": round(computed[t] - p, 4), "source": source}
                               for t, p, source in recipe.table]),
                 key="std_table", hide_index=True, width="stretch",
                 column_config={
                     "published pH": st.column_config.NumberColumn(format="%.3f"),
                     "poise pH": st.column_config.NumberColumn(
                         format="%.4f",
                         help="pH poise computes for this standard's composition with its default activity model"),
                     "poise − published": st.column_config.NumberColumn(
                         format="%+.4f", help="how far poise's value sits from the published one, in pH units"),
                     "source": st.column_config.TextColumn(
                         help="where the published value was read; 'from-memory' marks a value not yet read "
                              "in a source")})
    st.warning("\n\n".join(recipe.cautions))
