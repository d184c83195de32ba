"""pH of a mixture: what ``poise ph`` computes, for reagents typed one per line."""

import pandas as pd
import streamlit as st

from app import state
from selector.report import plus_minus
from selector.units import TEMPERATURE_MAX_C, TEMPERATURE_MIN_C, UNIT_HELP, parse_assignments

EXAMPLE = "KH2PO4=25mM\nNa2HPO4=25mM"

st.title("pH of a mixture")
st.caption("Type the reagents you dissolve, one per line as NAME=AMOUNT (formula, common name or "
           f"abbreviation; units {UNIT_HELP}). The solution is solved exactly: activity, temperature "
           "and every acid–base step included.")
text = st.text_area("reagents, one per line", EXAMPLE, key="mix_reagents", height=140)
c1, c2 = st.columns(2)
temperature = c1.number_input("temperature, °C", TEMPERATURE_MIN_C, TEMPERATURE_MAX_C, 25.0, step=1.0,
                              key="mix_temperature")
model = c2.selectbox("activity model", ("davies", "bates-guggenheim", "guntelberg", "truesdell-jones"), key="mix_activity",
                     help="how activity coefficients are computed; Davies is the default of the command line too")

with state.user_errors():
    lines = [line.strip() for line in text.splitlines() if line.strip()]
    amounts = parse_assignments(lines)
    report = state.solution(tuple(amounts.items()), temperature, model)
    if report.status != "converged":
        st.error("; ".join(report.warnings) or f"no answer: {report.status}")
    else:
        m1, m2, m3 = st.columns(3)
        m1.metric("pH", f"{report.ph:.3f}{plus_minus(report.ph_uncertainty, '.3f')}")
        m2.metric("ionic strength, mM", f"{report.ionic_strength_mol_l * 1000:.1f}")
        m3.metric("buffer capacity β, mM per pH", f"{report.capacity_mol_l_per_ph * 1000:.2f}")
        st.markdown(f"dpH/dT **{report.dph_dt_per_k:+.4f}** pH per K · osmolarity "
                    f"**{report.osmolarity_osmol_l * 1000:.0f}** mOsm/L · activity model {report.activity_model}")
        st.dataframe(pd.DataFrame([{"species": name, "mM": conc * 1000 if conc is not None else float("nan"),
                                    "activity coefficient γ": report.species_gamma.get(name)}
                                   for name, conc in report.species_mol_l.items()]),
                     key="mix_species", hide_index=True, width="stretch",
                     column_config={"mM": st.column_config.NumberColumn(format="%.4g"),
                                    "activity coefficient γ": st.column_config.NumberColumn(format="%.4f")})
        for warning in report.warnings:
            st.warning(warning)
        state.show_hazards(report.reagents_mol_l)
