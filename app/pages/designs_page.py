"""Designs beyond one buffer: a pH series, a broad-range mixture, a plate from stocks.

Widgets and pictures only; every number comes from :mod:`selector.designs`.  The spec
panel gives the temperature, concentration or capacity, volume and reagent filters; each
tab adds its own ranges.
"""

import dataclasses

import pandas as pd
import streamlit as st

from app import charts, state
from app.tables import column_help, show_table
from app.words import in_app_words
from selector.designs.grids import conc_values, ionic_values, ph_values
from selector.designs.plate import solve_plate
from selector.designs.series import solve_series
from selector.designs.span import DEFAULT_STEP_PH, solve_span
from selector.units import parse_ionic_strength, parse_volume

st.title("pH series and plates")
catalog = state.catalog()


def show_notes(notes) -> None:
    for note in notes:
        st.info(in_app_words(note))


def system_names(system_ids) -> str:
    return ", ".join(catalog.systems[s].short_name for s in system_ids)


def names(composition: dict) -> str:
    return ", ".join(f"{catalog.reagents[r].name} {v * 1000:.4g} mM" for r, v in composition.items())


def show_series(result) -> None:
    st.success(f"{len(result.members)} members verified (largest pH error {result.max_ph_error:.1g}, I error "
               f"{result.max_ionic_error_relative * 100:.1g} %); systems: {system_names(result.systems)}")
    table = pd.DataFrame([{"target pH": m.target_ph, "verified pH": round(m.verified_ph, 4),
                           "I, mM": round(m.ionic_strength_mol_l * 1000, 2),
                           "β, mM per pH": round(m.capacity_mol_l_per_ph * 1000, 2),
                           "composition": names(m.composition_mol_l)} for m in result.members])
    st.dataframe(table, key="series_table", hide_index=True, width="stretch", column_config=column_help(table))
    st.vega_lite_chart(charts.lines_chart(table.to_dict("records"), "target pH", ["I, mM", "β, mM per pH"]),
                       width="stretch", key="series_chart")
    if result.plan is not None:
        st.subheader("Mixing plan from shared stocks (mL per member)")
        cols = [s.stock.name for s in result.plan.stocks]
        st.dataframe(pd.DataFrame(result.plan.volumes_ml, columns=cols, index=result.plan.member_ph),
                     key="series_plan")
    with st.expander("Bench steps of each member"):
        for m in result.members:
            st.markdown(f"**pH {m.target_ph:g}**\n\n" + "\n".join(f"{k}. {s}" for k, s in enumerate(m.recipe.steps, 1)))
    show_notes(result.notes)
    state.show_hazards(result.reagents)


def show_span(result) -> None:
    st.success(f"{names(result.composition_mol_l)}; adjust with {catalog.reagents[result.titrant].name} "
               f"(1 M); smallest β {result.min_capacity_mol_l_per_ph * 1000:.2f} mM/pH")
    table = pd.DataFrame([{"pH": r.ph, "titrant, mM": round(r.titrant_mol_l * 1000, 3),
                           "mL 1 M per L": round(r.titrant_ml_per_l, 3), "β, mM per pH": r.capacity_mol_l_per_ph * 1000,
                           "floor, mM per pH": result.capacity_floor_mol_l_per_ph * 1000} for r in result.table])
    st.vega_lite_chart(charts.lines_chart(table.to_dict("records"), "pH", ["β, mM per pH", "floor, mM per pH"]),
                       width="stretch", key="span_chart")
    st.dataframe(table, key="span_table", hide_index=True, width="stretch", column_config=column_help(table))
    st.markdown("\n".join(f"{k}. {s}" for k, s in enumerate(result.recipe.steps, 1)))
    show_notes(result.notes)
    state.show_hazards(result.composition_mol_l)


def show_plate(result) -> None:
    st.success(f"{len(result.wells)} wells, {result.transfers} transfers, {len(result.stocks)} stocks; "
               f"largest pH error {result.max_ph_error:.1g}; {result.layout}")
    wells = [{"row": w.well[0], "column": int(w.well[1:]), "well": w.well, "pH": w.verified_ph,
              "I, mM": w.verified_ionic_strength_mol_l * 1000} for w in result.wells]
    for value, key in (("pH", "plate_ph_map"), ("I, mM", "plate_i_map")):
        st.vega_lite_chart(charts.plate_chart(wells, value), width="stretch", key=key)
    show_table([{"stock": s.stock.name, "needed, mL": round(s.volume_ml, 4), "make, mL": s.make_ml}
                for s in result.stocks], key="plate_stocks")
    st.download_button("Download worklist (CSV)", result.worklist_csv(), "worklist.csv", "text/csv",
                       key="plate_worklist")
    show_notes(result.notes)
    state.show_hazards(r for s in result.stocks for r in s.stock.composition_mol_l)


with state.user_errors():
    spec = state.require_spec()
    if spec.metals or spec.no_precipitate:
        st.caption("These designs do not check metals: the panel's metal limits and 'no precipitate' are "
                   "left out here (the Compare buffers, Recipe and Cheapest mix pages check them).")
        spec = dataclasses.replace(spec, metals=(), no_precipitate=False)
    series_tab, span_tab, plate_tab = st.tabs(["pH series at one ionic strength", "One buffer over a pH range", "Plate from stocks"])
    with series_tab:
        c1, c2, c3 = st.columns(3)
        series_ph = c1.text_input("pH FROM:TO:STEP", "6.5:7.5:0.5", key="series_ph")
        series_i = c2.text_input("ionic strength, mol/L (or 150mM)", "0.15", key="series_ionic")
        series_k = c3.number_input("at most this many systems", 1, 4, 2, key="series_max_systems")
        if st.button("Design the series", key="series_run"):
            st.session_state["series_result"] = None
            member_spec = dataclasses.replace(spec, ionic_strength_mol_l=parse_ionic_strength(series_i),
                                              ionic_strength_min_mol_l=None, ionic_strength_max_mol_l=None)
            with st.spinner("One model over all members, then each verified exactly…"):
                st.session_state["series_result"] = solve_series(
                    member_spec, ph_values(series_ph, option="pH"), st.session_state["price_book"], catalog,
                    max_systems=int(series_k))
        if st.session_state.get("series_result") is not None:
            show_series(st.session_state["series_result"])
    with span_tab:
        c1, c2, c3 = st.columns(3)
        span_ph = c1.text_input(f"pH FROM:TO (step {DEFAULT_STEP_PH:g}) or FROM:TO:STEP", "5.0:8.0:0.25",
                                key="span_ph")
        span_floor = c2.number_input("capacity floor, mM per pH", 0.1, 500.0, 10.0, key="span_floor")
        span_k = c3.number_input("at most this many systems", 1, 4, 3, key="span_max_systems")
        span_linear = st.checkbox("straighten the titration curve (cost within 10 %)", key="span_linear")
        if st.button("Design the mixture", key="span_run"):
            st.session_state["span_result"] = None
            mixture_spec = dataclasses.replace(spec, capacity_mol_l_per_ph=span_floor / 1000.0)
            with st.spinner("β at every grid pH, one titrant…"):
                st.session_state["span_result"] = solve_span(
                    mixture_spec, ph_values(span_ph, "optional", DEFAULT_STEP_PH, option="pH"),
                    st.session_state["price_book"], catalog, max_systems=int(span_k), linear=span_linear)
        if st.session_state.get("span_result") is not None:
            show_span(st.session_state["span_result"])
    with plate_tab:
        c1, c2, c3 = st.columns(3)
        plate_ph = c1.text_input("pH FROM:TO:STEP", "6.5:7.5:0.5", key="plate_ph")
        plate_i = c2.text_input("ionic strength FROM:TO:STEP (or one value), mol/L", "0.05:0.15:0.1",
                                key="plate_ionic")
        plate_c = c3.text_input("buffer concentration FROM:TO:STEP (empty: the panel's)", "", key="plate_conc")
        plate_size = st.selectbox("plate", (96, 384), key="plate_size")
        c4, c5, c6 = st.columns(3)
        plate_well = c4.text_input("well volume", "200uL", key="plate_well")
        plate_min = c5.number_input("minimum pipette, µL", 0.0, 100.0, 1.0, key="plate_min")
        plate_dead = c6.number_input("dead volume per stock, µL", 0.0, 10000.0, 20.0, key="plate_dead")
        if st.button("Design the plate", key="plate_run"):
            st.session_state["plate_result"] = None
            with st.spinner("Stocks from a series, then one MILP over every well…"):
                st.session_state["plate_result"] = solve_plate(
                    spec, ph_values(plate_ph, "optional", option="pH"), ionic_values(plate_i, "ionic strength"),
                    parse_volume(plate_well, what="well volume") * 1e6, int(plate_size), float(plate_min),
                    float(plate_dead), st.session_state["price_book"], catalog,
                    conc_values_mol_l=conc_values(plate_c, "buffer concentration") if plate_c.strip() else None)
        if st.session_state.get("plate_result") is not None:
            show_plate(st.session_state["plate_result"])
