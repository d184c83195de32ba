"""pH of a mixture: what ``poise ph`` computes, for reagents typed one per line."""

import streamlit as st

from app import state
from app.tables import show_table
from app.words import in_app_words
from selector.chemistry.gas_exchange import DEFAULT_CO2_DRY_AIR_FRACTION, open_vessel
from selector.report import plus_minus
from selector.units import PPM, TEMPERATURE_MAX_C, TEMPERATURE_MIN_C, UNIT_HELP, parse_assignments

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
o1, o2 = st.columns(2)
open_to_air = o1.checkbox("open to air", key="mix_open",
                          help="also equilibrate the solution with CO2 from the air: the pH in an open vessel, the "
                               "drift from the closed pH and the carbonate taken up or lost")
pco2_ppm = o2.number_input("CO2 in the air, ppm of dry air", 1.0, 1e6, DEFAULT_CO2_DRY_AIR_FRACTION / PPM,
                           step=10.0, key="mix_pco2_ppm", disabled=not open_to_air,
                           help="the partial pressure is taken in air saturated with water vapour at 1 atm")

with state.user_errors():
    lines = [line.strip() for line in text.splitlines() if line.strip()]
    amounts = parse_assignments(lines)
    report = state.solution(tuple(amounts.items()), temperature, model)
    if report.status != "converged":
        st.error(in_app_words("; ".join(report.warnings)) or f"no answer: {report.status}")
    else:
        m1, m2, m3 = st.columns(3)
        m1.metric("pH", f"{report.ph:.3f}{plus_minus(report.ph_uncertainty, '.3f')}")
        m2.metric("ionic strength, mM", f"{report.ionic_strength_mol_l * 1000:.1f}")
        m3.metric("buffer capacity β, mM per pH", f"{report.capacity_mol_l_per_ph * 1000:.2f}")
        st.markdown(f"dpH/dT **{report.dph_dt_per_k:+.4f}** pH per K · osmolarity "
                    f"**{report.osmolarity_osmol_l * 1000:.0f}** mOsm/L · activity model {report.activity_model}")
        show_table([{"species": name, "conc, mM": None if conc is None else float(f"{conc * 1000:.4g}"),
                     "γ": None if report.species_gamma.get(name) is None else round(report.species_gamma[name], 4)}
                    for name, conc in report.species_mol_l.items()], key="mix_species", width="stretch")
        if open_to_air:
            figures = open_vessel(report.reagents_mol_l, temperature, activity=model,
                                  dry_air_fraction=pco2_ppm * PPM)
            if figures.ph_open is None or figures.uptake_mol_l is None:
                st.error(f"no open-vessel equilibrium found (status: {figures.status})")
            else:
                a1, a2, a3 = st.columns(3)
                a1.metric("pH open to air", f"{figures.ph_open:.3f}", f"{figures.ph_drift:+.3f}",
                          delta_color="off")
                a2.metric("carbonate taken up (−: lost), mM", f"{figures.uptake_mol_l * 1000:+.3g}")
                a3.metric("carbonate in the open vessel, mM", f"{figures.total_open_mol_l * 1000:.3g}")
        for warning in report.warnings:
            st.warning(in_app_words(warning))
        state.show_hazards(report.reagents_mol_l)
