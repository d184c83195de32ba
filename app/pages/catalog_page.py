"""Catalog browser: every system with its pKa at chosen conditions, and every value's source."""

import streamlit as st

from app import state
from app.tables import show_table
from app.words import flag_words
from selector.catalog_view import search_catalog, system_detail, system_table
from selector.units import TEMPERATURE_MAX_C, TEMPERATURE_MIN_C, parse_ionic_strength

IONIC_LABEL = "ionic strength, mol/L (e.g. 0.15 or 150mM)"

st.title("Catalog")
catalog = state.catalog()


def systems_table(temperature_c: float, ionic_mol_l: float) -> None:
    table = system_table(temperature_c, ionic_mol_l, catalog=catalog)
    show_table([{
        "system": row.name,
        "pKa′": ", ".join(f"{s.pka_apparent:.2f}" for s in row.steps),
        "useful range": ", ".join(f"{s.useful_ph_low:.1f}–{s.useful_ph_high:.1f}" for s in row.steps),
        "flags": ", ".join(flag_words(f) for f in row.flags), "hazardous": "yes" if row.hazardous else "no",
        "UV cut-off, nm": row.uv_cutoff_nm} for row in table.rows], key="cat_table", width="stretch")


def sourced(value) -> tuple[float | None, str]:
    """(number, provenance) of a sourced catalog value, or (None, "") without one."""
    return (None, "") if value is None else (value.value, value.provenance)


def reagents_table(detail) -> None:
    rows = []
    for r in detail.reagents:
        solubility, solubility_source = sourced(r.solubility_g_l_25c)
        rows.append({"reagent": r.name, "formula": r.formula, "molar mass, g/mol": round(r.molar_mass_g_mol, 3),
                     "form": r.physical_form, "water of hydration": r.hydrate_water or None,
                     "purity, %": round(r.purity_fraction * 100, 2),
                     "solubility at 25 °C, g/L": solubility, "solubility source": solubility_source,
                     "hazards": ", ".join(flag_words(f) for f in r.hazard_flags) or None,
                     "also called": ", ".join(r.aliases) or None, "cautions": r.cautions or None})
    st.markdown("**Reagents**")
    show_table(rows, key="cat_reagents", width="stretch")


def binding_table(detail) -> None:
    if not detail.metal_binding:
        st.caption("No metal binding on record for this system.")
        return
    rows = []
    for m in detail.metal_binding:
        log_k, _ = sourced(m.log_k)
        rows.append({"metal": m.metal, "ligand charge": m.ligand_species_charge, "log K": log_k,
                     "I, mM": None if m.ionic_strength_mol_l is None else round(m.ionic_strength_mol_l * 1000, 3),
                     "temperature, °C": m.temperature_c, "statement": m.qualitative or None,
                     "source": m.source_key or m.source_kind, "citation": m.citation or None, "note": m.note or None})
    st.markdown("**Metal binding**")
    show_table(rows, key="cat_binding", width="stretch")


def published_rows(values) -> list[dict]:
    """Every published value of one constant: the one used, the alternatives, any rejected one with why."""
    return [{"use": "used" if v.used else "rejected" if v.rejected else "alternative", "value": v.value,
             "±": v.uncertainty, "source": v.provenance, "method": v.method or None,
             "conditions": v.conditions or None, "why": v.why or None} for v in values]


def step_values(step) -> None:
    """The chosen pKa, ΔH° and ΔCp° of a step with their spread, and every published value behind each."""
    chosen = [(label, value) for label, value in (("pKa (25 °C, I = 0)", step.pka_25c), ("ΔH°", step.dh_kj_mol),
                                                  ("ΔCp°", step.dcp_j_k_mol)) if value is not None]
    show_table([{"quantity": label, "value": value.value, "±": value.uncertainty, "unit": value.unit,
                 "source": value.source_key or value.source_kind, "citation": value.citation or None}
                for label, value in chosen], key=f"cat_step_{step.step}")
    for label, value in chosen:
        if len(value.values) > 1:
            with st.expander(f"{label}: {len(value.values)} published values"):
                show_table(published_rows(value.values), key=f"cat_step_{step.step}_{label}", width="stretch")


def complex_values(detail) -> None:
    """The system's complexes with several published log β values (25 °C, I = 0)."""
    if not detail.complex_values:
        return
    st.markdown("**Complexes with several published values** (log β at 25 °C, I = 0)")
    show_table([{"complex": c.complex_id, "metal": c.metal, "log β used": c.log_beta.value, "±": c.uncertainty,
                 "values": len(c.values), "source": c.log_beta.provenance} for c in detail.complex_values],
               key="cat_complexes", width="stretch")
    for c in detail.complex_values:
        with st.expander(f"{c.complex_id}: every published value"):
            show_table(published_rows(c.values), key=f"cat_complex_{c.complex_id}", width="stretch")


def uv_and_flags(detail) -> None:
    if detail.uv_cutoff is not None:
        uv = detail.uv_cutoff
        st.markdown("**UV cut-off**")
        show_table([{"UV cut-off, nm": uv.uv_cutoff_nm.value, "at, mM": None if uv.conc_mol_l is None else
                     round(uv.conc_mol_l * 1000, 3), "source": uv.uv_cutoff_nm.provenance,
                     "citation": uv.uv_cutoff_nm.citation or None, "note": uv.note or None}], key="cat_uv")
    if detail.flags:
        st.markdown("**Flags**")
        show_table([{"flag": flag_words(f.flag), "detail": f.detail or None, "source": f.source_key or f.source_kind,
                     "citation": f.citation or None} for f in detail.flags], key="cat_flags", width="stretch")


def one_system(system_id: str, temperature_c: float, ionic_mol_l: float) -> None:
    detail = system_detail(system_id, temperature_c, ionic_mol_l, catalog=catalog)
    st.subheader(detail.name)
    if detail.hazardous:
        st.warning(detail.hazard_note)
    for step in detail.steps:
        st.markdown(f"**step {step.step}**")
        step_values(step)
    reagents_table(detail)
    binding_table(detail)
    complex_values(detail)
    uv_and_flags(detail)


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
        show_table([{"found": h.name, "kind": h.kind, "system": catalog.systems[h.system_id].name
                     if h.system_id in catalog.systems else None, "matched name": h.matched_name, "match": h.match}
                    for h in hits], key="cat_hits")

system_id = st.selectbox("show one system with every source", list(catalog.systems), key="cat_system",
                         format_func=lambda s: catalog.systems[s].name)
if ionic is not None:
    with state.user_errors():
        one_system(system_id, temperature, ionic)
