"""Session state of the poise app: the spec panel, the demo scenario and shared choices.

Widgets only: every number shown comes from :mod:`selector`.  Each widget has a key so
the app can be driven by tests (streamlit.testing AppTest and the browser test).
"""

from __future__ import annotations

import streamlit as st

from catalog import FLAG_VOCABULARY, load_catalog
from selector.errors import PoiseError
from selector.prices import demo_price_book
from selector.spec import (
    COUNTER_IONS,
    EXTRA_EXCLUSIONS,
    METALS,
    SALTS,
    SpecError,
    make_spec,
    parse_spec,
    spec_to_toml,
)
from selector.units import parse_amount, parse_ionic_strength, parse_volume

#: The built-in demo scenario (invented: no real lab or protocol): a luminescent enzyme
#: assay, "Glowworm-3", read at 37 °C in 96-well plates, that makes acid as it runs and
#: is sensitive to free calcium.
DEMO_SCENARIO = {
    "spec_ph": 7.4,
    "spec_temperature": 37.0,
    "spec_prep_temperature": 25.0,
    "spec_volume": "1L",
    "spec_mode": "capacity",
    "spec_conc": "50mM",
    "spec_capacity": 10.0,
    "spec_load_kind": "acid",
    "spec_load_mm": 2.0,
    "spec_tolerance": 0.1,
    "spec_ionic_strength": "0.15",
    "spec_salt": "NaCl",
    "spec_counter_ion": "any",
    "spec_metals": ["Ca"],
    "spec_metal_fraction_Ca": 0.05,
    "spec_uv": 0.0,
    "spec_exclude": [],
    "spec_allow_hazardous": False,
    "spec_plates": 40,
}
DEMO_TITLE = "Demo scenario (invented): the 'Glowworm-3' luminescence assay at 37 °C"

DEFAULTS = {**DEMO_SCENARIO, "spec_temperature": 25.0, "spec_mode": "concentration", "spec_load_kind": "none",
            "spec_load_mm": 0.0, "spec_tolerance": 0.05, "spec_ionic_strength": "", "spec_metals": [],
            "spec_plates": 0, "spec_ph": 7.4}


@st.cache_resource
def catalog():
    """The shipped catalog (loaded once per server)."""
    return load_catalog()


def init(demo: bool = False) -> None:
    """Defaults on the first run of a session; the demo scenario if ``demo``."""
    first = "spec_ph" not in st.session_state
    for key, value in DEFAULTS.items():
        st.session_state.setdefault(key, value)
        # Re-assigning keeps a widget's value while a page without that widget is shown
        # (Streamlit drops the state of widgets that are not drawn in a run).
        st.session_state[key] = st.session_state[key]
    for key in [k for k in st.session_state if str(k).startswith("spec_metal_fraction_") or k == "chosen_system"]:
        st.session_state[key] = st.session_state[key]
    if first and demo:
        load_demo()
    st.session_state.setdefault("price_book", demo_price_book(catalog()))
    st.session_state.setdefault("scenario", "")


def load_demo() -> None:
    """Callback of the demo button: set every spec widget to the demo scenario."""
    for key, value in DEMO_SCENARIO.items():
        st.session_state[key] = value
    st.session_state["scenario"] = DEMO_TITLE


def widgets_from_spec(spec) -> dict:
    """Widget values that show ``spec`` (the inverse of :func:`spec_fields`)."""
    values = {
        "spec_ph": spec.ph, "spec_temperature": spec.temperature_c, "spec_prep_temperature": spec.prep_temperature_c,
        "spec_volume": f"{spec.volume_l * 1000:g}mL", "spec_tolerance": spec.tolerance_ph, "spec_salt": spec.salt,
        "spec_counter_ion": spec.counter_ion, "spec_exclude": list(spec.exclude),
        "spec_allow_hazardous": spec.allow_hazardous, "spec_uv": spec.uv_nm or 0.0, "spec_plates": spec.plates or 0,
        "spec_ionic_strength": "" if spec.ionic_strength_mol_l is None else f"{spec.ionic_strength_mol_l:g}",
        "spec_metals": [m.metal for m in spec.metals],
        "spec_load_kind": spec.loads[0].kind if spec.loads else "none",
        "spec_load_mm": spec.loads[0].conc_mol_l * 1000 if spec.loads else 0.0,
    }
    if spec.buffer_conc_mol_l is not None:
        values.update(spec_mode="concentration", spec_conc=f"{spec.buffer_conc_mol_l * 1000:g}mM")
    elif spec.capacity_mol_l_per_ph is not None:
        values.update(spec_mode="capacity", spec_capacity=spec.capacity_mol_l_per_ph * 1000)
    for metal in spec.metals:
        values[f"spec_metal_fraction_{metal.metal}"] = metal.max_bound_fraction
    return values


def load_spec_file() -> None:
    """Callback of the spec upload: show the file's spec in the widgets, or its problem."""
    upload = st.session_state.get("spec_upload")
    st.session_state["spec_load_message"] = ""
    if upload is None:
        return
    fmt = "json" if upload.name.lower().endswith(".json") else "toml"
    try:
        spec = parse_spec(upload.getvalue().decode("utf-8-sig"), fmt)
    except (PoiseError, UnicodeDecodeError) as error:
        st.session_state["spec_load_message"] = f"{upload.name}: {error}"
        return
    for key, value in widgets_from_spec(spec).items():
        st.session_state[key] = value
    st.session_state["scenario"] = f"Spec loaded from {upload.name}"


def spec_fields() -> tuple[dict, list[str]]:
    """The spec fields from the widgets' values, and the problems met reading them."""
    s = st.session_state
    problems: list[str] = []
    fields = {"ph": s["spec_ph"], "temperature_c": s["spec_temperature"],
              "prep_temperature_c": s["spec_prep_temperature"], "salt": s["spec_salt"],
              "counter_ion": s["spec_counter_ion"], "tolerance_ph": s["spec_tolerance"],
              "allow_hazardous": s["spec_allow_hazardous"], "exclude": list(s["spec_exclude"])}
    try:
        fields["volume_l"] = parse_volume(s["spec_volume"], "volume")
    except PoiseError as error:
        problems.append(str(error))
    if s["spec_mode"] == "concentration":
        try:
            fields["buffer_conc_mol_l"] = parse_amount(s["spec_conc"], what="buffer concentration")
        except PoiseError as error:
            problems.append(str(error))
    else:
        fields["capacity_mol_l_per_ph"] = s["spec_capacity"] / 1000.0
    if s["spec_load_kind"] != "none" and s["spec_load_mm"] > 0:
        fields["loads"] = [{"kind": s["spec_load_kind"], "conc_mol_l": s["spec_load_mm"] / 1000.0}]
    text = str(s["spec_ionic_strength"]).strip()
    if text:
        try:
            fields["ionic_strength_mol_l"] = parse_ionic_strength(text)
        except PoiseError as error:
            problems.append(str(error))
    fields["metals"] = [{"metal": m, "max_bound_fraction": s.get(f"spec_metal_fraction_{m}", 0.05)}
                        for m in s["spec_metals"]]
    if s["spec_uv"]:
        fields["uv_nm"] = s["spec_uv"]
    if s["spec_plates"]:
        fields["plates"] = int(s["spec_plates"])
    return fields, problems


def current_spec():
    """The validated spec, or None after showing each problem with st.error."""
    fields, problems = spec_fields()
    if not problems:
        try:
            return make_spec(**fields)
        except SpecError as error:
            problems = error.problems
        except PoiseError as error:
            problems = [str(error)]
    for problem in problems:
        st.error(problem)
    return None


def spec_panel() -> None:
    """Every field of the spec, with units and defaults, in the sidebar."""
    sb = st.sidebar
    sb.header("Spec")
    sb.button("Load demo scenario", key="load_demo", on_click=load_demo)
    if st.session_state.get("scenario"):
        sb.caption(st.session_state["scenario"])
    sb.number_input("target pH (at use temperature)", 0.0, 14.0, step=0.05, key="spec_ph", format="%.2f")
    sb.number_input("use temperature, °C", 0.0, 95.0, step=1.0, key="spec_temperature")
    sb.number_input("preparation temperature (meter), °C", 0.0, 95.0, step=1.0, key="spec_prep_temperature")
    sb.text_input("volume to make (e.g. 1L, 500mL)", key="spec_volume")
    sb.radio("size the buffer by", ["concentration", "capacity"], key="spec_mode", horizontal=True)
    if st.session_state["spec_mode"] == "concentration":
        sb.text_input("total buffer concentration (e.g. 50mM)", key="spec_conc")
    else:
        sb.number_input("minimum capacity β, mM per pH", 0.1, 1000.0, step=1.0, key="spec_capacity")
    sb.selectbox("load the pH must hold under", ["none", "acid", "base"], key="spec_load_kind")
    sb.number_input("load, mM", 0.0, 500.0, step=0.5, key="spec_load_mm")
    sb.number_input("allowed pH excursion ±", 0.005, 2.0, step=0.01, key="spec_tolerance", format="%.3f")
    sb.text_input("ionic strength target, mol/L (blank: none)", key="spec_ionic_strength")
    sb.selectbox("salt for the ionic strength", list(SALTS), key="spec_salt")
    sb.selectbox("counter-ion", list(COUNTER_IONS), key="spec_counter_ion")
    sb.multiselect("metals in the assay", list(METALS), key="spec_metals")
    for metal in st.session_state["spec_metals"]:
        st.session_state.setdefault(f"spec_metal_fraction_{metal}", 0.05)
        sb.number_input(f"largest fraction of {metal} the buffer may bind", 0.001, 0.99, step=0.01,
                        key=f"spec_metal_fraction_{metal}")
    sb.number_input("UV detection wavelength, nm (0: none)", 0.0, 800.0, step=10.0, key="spec_uv")
    sb.multiselect("exclude systems that", list(FLAG_VOCABULARY) + list(EXTRA_EXCLUSIONS), key="spec_exclude")
    sb.checkbox("allow hazardous systems (cyanide, fluoride, cacodylate …)", key="spec_allow_hazardous")
    sb.number_input("plates or runs to quote the cost for (0: none)", 0, 100000, step=1, key="spec_plates")
    fields, problems = spec_fields()
    spec = None
    if not problems:
        try:
            spec = make_spec(**fields)
        except PoiseError:
            spec = None
    sb.download_button("Save spec (TOML)", spec_to_toml(spec) if spec else "", "poise_spec.toml",
                       "application/toml", key="spec_save", disabled=spec is None)
    sb.file_uploader("Load a spec (TOML or JSON)", type=["toml", "json"], key="spec_upload",
                     on_change=load_spec_file)
    if st.session_state.get("spec_load_message"):
        sb.error(st.session_state["spec_load_message"])


@st.cache_data(show_spinner=False, max_entries=64)
def ranking(spec, _price_book, price_label: str, sort: str):
    """rank_systems, cached per spec, price book and order (the book is keyed by its label
    and prices)."""
    from selector.rank import rank_systems

    return rank_systems(spec, _price_book, sort=sort)


def price_key(book) -> str:
    """A key that changes whenever the price book does."""
    return book.label + "|" + ",".join(f"{r}:{p.price_per_kg:.6g}" for r, p in sorted(book.prices.items()))
