"""The spec panel of the app's frame: a keyed widget for every field of the spec.

:func:`draw` shows the panel in the sidebar on every page (so no widget's value is lost
when the page changes) and leaves the validated spec, or its problems, in the session
(``spec``, ``spec_problems``).  :func:`widget_values` is the inverse of reading the panel:
a spec file loaded and saved again gives the same spec, every field kept.  Messages name
each field by its label, in the unit the panel shows.
"""

from __future__ import annotations

import json
from typing import Any, Callable

import streamlit as st

from app import state
from catalog import FLAG_VOCABULARY
from selector.errors import PoiseError
from selector.prices import UPLOAD_MAX_MB
from selector.spec import (
    COUNTER_IONS,
    EXCLUSION_FLAGS,
    LOAD_KINDS,
    METALS,
    SALTS,
    TRACE_METAL_CONC_MOL_L,
    WELLS_MAX,
    BufferSpec,
    SpecError,
    Written,
    make_spec,
    parse_spec_bytes,
    spec_to_json,
    spec_to_toml,
)
from selector.units import (
    TEMPERATURE_MAX_C,
    TEMPERATURE_MIN_C,
    parse_amount,
    parse_ionic_strength,
    parse_volume,
)

#: Labels of the widgets, which are also the names messages use.
LABELS = {
    "spec_ph": "target pH (at use temperature)",
    "spec_temperature": "use temperature, °C",
    "spec_prep_temperature": "preparation temperature (meter), °C",
    "spec_volume": "volume to make (e.g. 1L, 500mL)",
    "spec_conc": "total buffer concentration (e.g. 50mM; blank: none)",
    "spec_capacity": "minimum capacity β, mM per pH (0: none)",
    "spec_tolerance": "allowed pH excursion ±",
    "spec_ionic_strength": "ionic strength target, mol/L (blank: none)",
    "spec_ionic_min": "ionic strength at least, mol/L (blank: none)",
    "spec_ionic_max": "ionic strength at most, mol/L (blank: none)",
    "spec_salt": "salt for the ionic strength",
    "spec_counter_ion": "counter-ion",
    "spec_metals": "metals in the assay",
    "spec_uv": "UV detection wavelength, nm (0: none)",
    "spec_exclude": "exclude systems flagged",
    "spec_require": "admit only systems flagged (e.g. volatile_ms for LC-MS)",
    "spec_allow_hazardous": "allow hazardous systems (cyanide, fluoride, cacodylate …)",
    "spec_no_precipitate": "reject mixes supersaturated in a solid of a listed metal",
    "spec_in_stock": "reagents in stock (none chosen: any)",
    "spec_fixed": "reagents the mix must hold at a fixed amount",
    "spec_window": "hold the pH over a temperature window",
    "spec_t_min": "window from, °C",
    "spec_t_max": "window to, °C",
    "spec_osm_min": "osmolarity at least, mOsm/L (blank: none)",
    "spec_osm_max": "osmolarity at most, mOsm/L (blank: none)",
    "spec_plates": "plates or runs to quote the cost for (0: none)",
    "spec_wells": "wells per plate (0: none; with a volume per well the volume to make is computed)",
    "spec_well_volume": "buffer volume per well (e.g. 200uL; blank: none)",
    "spec_notes": "notes kept with the spec",
}

#: Widgets whose value is the field's value as it stands: widget key -> field.
PLAIN = {"spec_ph": "ph", "spec_temperature": "temperature_c", "spec_prep_temperature": "prep_temperature_c",
         "spec_tolerance": "tolerance_ph", "spec_salt": "salt", "spec_counter_ion": "counter_ion",
         "spec_allow_hazardous": "allow_hazardous", "spec_no_precipitate": "no_precipitate", "spec_notes": "notes"}
#: Text widgets with a unit, read by selector.units: widget key -> (field, parser, unit).
QUANTITIES: dict[str, tuple[str, Callable[..., float], str]] = {
    "spec_volume": ("volume_l", parse_volume, "L"),
    "spec_conc": ("buffer_conc_mol_l", parse_amount, "mol/L"),
    "spec_ionic_strength": ("ionic_strength_mol_l", parse_ionic_strength, "mol/L"),
    "spec_ionic_min": ("ionic_strength_min_mol_l", parse_ionic_strength, "mol/L"),
    "spec_ionic_max": ("ionic_strength_max_mol_l", parse_ionic_strength, "mol/L"),
}
CAPACITY = Written(LABELS["spec_capacity"], 1000.0, "mM per pH")
OSMOLARITY = {"spec_osm_min": ("osmolarity_min_osmol_l", Written(LABELS["spec_osm_min"], 1000.0, "mOsm/L")),
              "spec_osm_max": ("osmolarity_max_osmol_l", Written(LABELS["spec_osm_max"], 1000.0, "mOsm/L"))}
MILLIMOLAR = 1000.0
MICROMOLAR = 1e6


def _load_way(i: int) -> tuple[Written, Written]:
    return Written(f"load {i + 1}"), Written(f"load {i + 1}, mM", MILLIMOLAR, "mM")


def _metal_way(metal: str) -> tuple[Written, Written]:
    return (Written(f"largest fraction of {metal} the buffer may bind"),
            Written(f"{metal} in the assay, µM", MICROMOLAR, "µM"))


def _fixed_way(reagent_id: str) -> Written:
    return Written(f"{state.catalog().reagents[reagent_id].name} at a fixed amount, mM", MILLIMOLAR, "mM")


def _number_text(number: float) -> str:
    """The shortest text that reads back as ``number`` ("50" rather than "50.0")."""
    text = repr(float(number))
    return text[:-2] if text.endswith(".0") else text


def _exact_text(value: float, units: tuple[tuple[str, float], ...], parse: Callable[[str], float]) -> str:
    """``value`` as text in the first unit of ``units`` (suffix, per unit) that reads back
    exactly with ``parse``; the last unit is the field's own."""
    for suffix, per_unit in units:
        text = _number_text(Written("", per_unit).to_user(value)) + suffix
        if parse(text) == value:
            break
    return text


def _quantity_text(key: str, value: float | None) -> str:
    if value is None:
        return ""
    if key == "spec_well_volume":   # µL as the user typed it (200uL reads back to the same float), else exact
        text = f"{value * 1e6:.12g}uL"
        return text if parse_volume(text) == value else _exact_text(value, (("uL", 1e6), ("L", 1.0)), parse_volume)
    if key == "spec_volume":   # mL below a litre, L from a litre up
        return _exact_text(value, (("mL", 1000.0), ("L", 1.0))[value >= 1.0:], parse_volume)
    if key == "spec_conc":
        return _exact_text(value, (("mM", 1000.0), ("M", 1.0))[value >= 1.0:], parse_amount)
    return _number_text(value)


def widget_values(spec: BufferSpec) -> dict[str, Any]:
    """Widget key -> value that shows ``spec`` in the panel (every field)."""
    values: dict[str, Any] = {key: getattr(spec, field) for key, field in PLAIN.items()}
    values.update({key: _quantity_text(key, getattr(spec, field)) for key, (field, _, _) in QUANTITIES.items()})
    values.update({key: "" if getattr(spec, field) is None else _number_text(way.to_user(getattr(spec, field)))
                   for key, (field, way) in OSMOLARITY.items()})
    values["spec_capacity"] = 0.0 if spec.capacity_mol_l_per_ph is None else CAPACITY.to_user(
        spec.capacity_mol_l_per_ph)
    values.update(spec_load_rows=max(1, len(spec.loads)), spec_load_kind_0="none", spec_load_mm_0=0.0)
    for i, load in enumerate(spec.loads):
        values[f"spec_load_kind_{i}"] = load.kind
        values[f"spec_load_mm_{i}"] = _load_way(i)[1].to_user(load.conc_mol_l)
    values["spec_metals"] = [m.metal for m in spec.metals]
    for m in spec.metals:
        values[f"spec_metal_fraction_{m.metal}"] = m.max_bound_fraction
        values[f"spec_metal_conc_{m.metal}"] = _metal_way(m.metal)[1].to_user(m.conc_mol_l)
    values["spec_fixed"] = [reagent_id for reagent_id, _ in spec.fixed_amounts]
    for reagent_id, conc in spec.fixed_amounts:
        values[f"spec_fixed_mm_{reagent_id}"] = Written("", MILLIMOLAR).to_user(conc)
    window = spec.temperature_min_c is not None and spec.temperature_max_c is not None
    values["spec_window"] = window
    if window:
        values.update(spec_t_min=spec.temperature_min_c, spec_t_max=spec.temperature_max_c)
    values.update(spec_wells=spec.wells or 0, spec_well_volume=_quantity_text("spec_well_volume", spec.well_volume_l))
    values.update(spec_uv=spec.uv_nm or 0.0, spec_plates=spec.plates or 0, spec_exclude=list(spec.exclude),
                  spec_require=list(spec.require),
                  spec_in_stock=list(spec.in_stock or ()))
    return values


def _read_lists(s, fields: dict[str, Any], written: dict[str, Written]) -> None:
    """Loads, metals and fixed amounts from their rows of widgets."""
    loads: list[dict[str, Any]] = []
    for i in range(s["spec_load_rows"]):
        if s.get(f"spec_load_kind_{i}", "none") != "none":
            kind_way, conc_way = _load_way(i)
            written[f"loads[{len(loads)}].kind"], written[f"loads[{len(loads)}].conc_mol_l"] = kind_way, conc_way
            loads.append({"kind": s[f"spec_load_kind_{i}"], "conc_mol_l": s[f"spec_load_mm_{i}"]})
    fields["loads"] = loads
    metals = []
    for i, metal in enumerate(s["spec_metals"]):
        fraction_way, conc_way = _metal_way(metal)
        written[f"metals[{i}].max_bound_fraction"], written[f"metals[{i}].conc_mol_l"] = fraction_way, conc_way
        metals.append({"metal": metal, "max_bound_fraction": s[f"spec_metal_fraction_{metal}"],
                       "conc_mol_l": s[f"spec_metal_conc_{metal}"]})
    fields["metals"] = metals
    fixed = {}
    for reagent_id in s["spec_fixed"]:
        written[f"fixed_amounts.{reagent_id}"] = _fixed_way(reagent_id)
        fixed[reagent_id] = s[f"spec_fixed_mm_{reagent_id}"]
    fields["fixed_amounts"] = fixed


def _read_plate(s, fields: dict[str, Any], written: dict[str, Written], problems: list[str]) -> None:
    """Wells per plate and volume per well; with both the volume to make is computed by the
    spec (plates × wells × volume per well), so the volume widget is left out."""
    wells, text = int(s.get("spec_wells") or 0), str(s.get("spec_well_volume") or "").strip()
    written["wells"] = Written(LABELS["spec_wells"])
    written["well_volume_l"] = Written(LABELS["spec_well_volume"], unit="L")
    if wells:
        fields["wells"] = wells
    if text:
        try:
            fields["well_volume_l"] = parse_volume(text, what=LABELS["spec_well_volume"])
        except PoiseError as error:
            problems.append(str(error))
            fields.pop("wells", None)   # one message: the volume's, not also "give both"
            return
    if wells and text:
        fields.pop("volume_l", None)


def read_panel() -> tuple[dict[str, Any], dict[str, Written], list[str]]:
    """The spec fields the panel holds, how each was written, and the problems met reading
    the texts with units."""
    s = st.session_state
    fields: dict[str, Any] = {field: s[key] for key, field in PLAIN.items()}
    written = {field: Written(LABELS[key]) for key, field in PLAIN.items()}
    problems: list[str] = []
    for key, (field, parse, unit) in QUANTITIES.items():
        text = str(s[key]).strip()
        written[field] = Written(LABELS[key], unit=unit)
        if text:
            try:
                fields[field] = parse(text, what=LABELS[key])
            except PoiseError as error:
                problems.append(str(error))
    for key, (field, way) in OSMOLARITY.items():
        if str(s[key]).strip():
            fields[field], written[field] = str(s[key]).strip(), way
    if s["spec_capacity"]:
        fields["capacity_mol_l_per_ph"], written["capacity_mol_l_per_ph"] = s["spec_capacity"], CAPACITY
    _read_lists(s, fields, written)
    if s["spec_window"]:
        fields["temperature_min_c"], fields["temperature_max_c"] = s["spec_t_min"], s["spec_t_max"]
        written["temperature_min_c"] = Written(LABELS["spec_t_min"], unit="°C")
        written["temperature_max_c"] = Written(LABELS["spec_t_max"], unit="°C")
    fields["exclude"], written["exclude"] = list(s["spec_exclude"]), Written(LABELS["spec_exclude"])
    fields["require"], written["require"] = list(s.get("spec_require", [])), Written(LABELS["spec_require"])
    if s["spec_uv"]:
        fields["uv_nm"], written["uv_nm"] = s["spec_uv"], Written(LABELS["spec_uv"], unit="nm")
    if s["spec_plates"]:
        fields["plates"] = int(s["spec_plates"])
    _read_plate(s, fields, written, problems)
    if s["spec_in_stock"]:
        fields["in_stock"], written["in_stock"] = list(s["spec_in_stock"]), Written(LABELS["spec_in_stock"])
    return fields, written, problems


def build_spec() -> BufferSpec | None:
    """The spec from the panel, kept in the session with its problems; None if it has any."""
    fields, written, problems = read_panel()
    spec = None
    try:
        spec = make_spec(fields, written=written, catalog=state.catalog())
    except SpecError as error:
        problems += error.problems
    st.session_state["spec"] = None if problems else spec
    st.session_state["spec_problems"] = problems
    return st.session_state["spec"]


def load_spec_file() -> None:
    """Callback of the spec upload: show the file's spec in the widgets, or its problem."""
    upload = st.session_state.get("spec_upload")
    st.session_state["spec_load_message"] = ""
    if upload is None:
        return
    fmt = "json" if upload.name.lower().endswith(".json") else "toml"
    try:
        spec = make_spec(parse_spec_bytes(upload.getvalue(), upload.name, fmt), catalog=state.catalog())
    except PoiseError as error:
        st.session_state["spec_load_message"] = f"{upload.name}: {error}"
        return
    st.session_state.update(widget_values(spec))
    st.session_state["scenario"] = f"Spec loaded from {upload.name}"


#: The query parameter that carries the spec in the page's address (a reload or a shared link
#: restores it).
URL_KEY = "spec"


def restore_from_link() -> None:
    """On a session's first run, show the spec of the link (``?spec={…}``, the spec's JSON) in
    the widgets; a bad one is reported in the panel and the defaults kept."""
    if st.session_state.get("link_checked"):
        return
    st.session_state["link_checked"] = True
    text = st.query_params.get(URL_KEY)
    if not text:
        return
    try:
        spec = make_spec(parse_spec_bytes(text.encode("utf-8"), "the link's spec", "json"), catalog=state.catalog())
    except PoiseError as error:
        st.session_state["spec_load_message"] = f"The spec in the link could not be used: {error}"
        return
    st.session_state.update(widget_values(spec))
    st.session_state["scenario"] = "Spec restored from the page's link"


def keep_in_link(spec: BufferSpec | None) -> None:
    """Write the panel's spec into the page's address, so a reload or a copied link keeps it."""
    if spec is None:
        return
    text = json.dumps(json.loads(spec_to_json(spec)), separators=(",", ":"), ensure_ascii=False)
    if st.query_params.get(URL_KEY) != text:
        st.query_params[URL_KEY] = text


def add_load_row() -> None:
    """Callback of "add a load": one more row of load widgets."""
    row = st.session_state["spec_load_rows"]
    st.session_state.update({"spec_load_rows": row + 1, f"spec_load_kind_{row}": "acid", f"spec_load_mm_{row}": 1.0})


def _draw_rows(sb) -> None:
    """The rows of widgets of loads, metals and fixed amounts."""
    for i in range(st.session_state["spec_load_rows"]):
        st.session_state.setdefault(f"spec_load_kind_{i}", "none")
        st.session_state.setdefault(f"spec_load_mm_{i}", 0.0)
        left, right = sb.columns(2)
        kind_way, conc_way = _load_way(i)
        left.selectbox(kind_way.name, ["none", *LOAD_KINDS], key=f"spec_load_kind_{i}")
        right.number_input(conc_way.name, 0.0, 2000.0, step=0.5, key=f"spec_load_mm_{i}")
    sb.button("add a load", key="spec_add_load", on_click=add_load_row)
    sb.multiselect(LABELS["spec_metals"], list(METALS), key="spec_metals")
    for metal in st.session_state["spec_metals"]:
        fraction_way, conc_way = _metal_way(metal)
        st.session_state.setdefault(f"spec_metal_fraction_{metal}", 0.05)
        st.session_state.setdefault(f"spec_metal_conc_{metal}", conc_way.to_user(TRACE_METAL_CONC_MOL_L))
        sb.number_input(fraction_way.name, 0.0, 1.0, step=0.01, key=f"spec_metal_fraction_{metal}")
        sb.number_input(conc_way.name, 0.0, 1e6, step=1.0, key=f"spec_metal_conc_{metal}")


def _draw_more(sb) -> None:
    """The requirements fewer specs have, in an expander (drawn on every run all the same)."""
    reagents = state.catalog().reagents
    with sb.expander("More requirements"):
        st.text_input(LABELS["spec_ionic_min"], key="spec_ionic_min")
        st.text_input(LABELS["spec_ionic_max"], key="spec_ionic_max")
        st.checkbox(LABELS["spec_window"], key="spec_window")
        st.number_input(LABELS["spec_t_min"], TEMPERATURE_MIN_C, TEMPERATURE_MAX_C, step=1.0, key="spec_t_min")
        st.number_input(LABELS["spec_t_max"], TEMPERATURE_MIN_C, TEMPERATURE_MAX_C, step=1.0, key="spec_t_max")
        st.text_input(LABELS["spec_osm_min"], key="spec_osm_min")
        st.text_input(LABELS["spec_osm_max"], key="spec_osm_max")
        st.multiselect(LABELS["spec_in_stock"], list(reagents), key="spec_in_stock",
                       format_func=lambda r: reagents[r].name)
        st.multiselect(LABELS["spec_fixed"], list(reagents), key="spec_fixed", format_func=lambda r: reagents[r].name)
        for reagent_id in st.session_state["spec_fixed"]:
            st.session_state.setdefault(f"spec_fixed_mm_{reagent_id}", 10.0)
            st.number_input(_fixed_way(reagent_id).name, 0.0, 5000.0, step=1.0, key=f"spec_fixed_mm_{reagent_id}")
        st.text_area(LABELS["spec_notes"], key="spec_notes")


def draw() -> None:
    """The panel in the sidebar, then the spec it holds (see :func:`build_spec`)."""
    restore_from_link()
    sb = st.sidebar
    sb.header("Spec")
    sb.button("Load demo scenario", key="load_demo", on_click=state.load_demo)
    if st.session_state.get("scenario"):
        sb.caption(st.session_state["scenario"])
    sb.number_input(LABELS["spec_ph"], 0.0, 14.0, step=0.05, key="spec_ph", format="%.2f")
    sb.number_input(LABELS["spec_temperature"], TEMPERATURE_MIN_C, TEMPERATURE_MAX_C, step=1.0, key="spec_temperature")
    sb.number_input(LABELS["spec_prep_temperature"], TEMPERATURE_MIN_C, TEMPERATURE_MAX_C, step=1.0,
                    key="spec_prep_temperature")
    sb.text_input(LABELS["spec_volume"], key="spec_volume")
    sb.text_input(LABELS["spec_conc"], key="spec_conc")
    sb.number_input(LABELS["spec_capacity"], 0.0, 5000.0, step=1.0, key="spec_capacity")
    sb.number_input(LABELS["spec_tolerance"], 0.0, 2.0, step=0.01, key="spec_tolerance", format="%.3f")
    _draw_rows(sb)
    sb.text_input(LABELS["spec_ionic_strength"], key="spec_ionic_strength")
    sb.selectbox(LABELS["spec_salt"], list(SALTS), key="spec_salt")
    sb.selectbox(LABELS["spec_counter_ion"], list(COUNTER_IONS), key="spec_counter_ion")
    sb.number_input(LABELS["spec_uv"], 0.0, 800.0, step=10.0, key="spec_uv")
    sb.multiselect(LABELS["spec_exclude"], list(EXCLUSION_FLAGS), key="spec_exclude",
                   format_func=lambda flag: flag.replace("_", " "))
    sb.multiselect(LABELS["spec_require"], list(FLAG_VOCABULARY), key="spec_require",
                   format_func=lambda flag: flag.replace("_", " "))
    sb.checkbox(LABELS["spec_allow_hazardous"], key="spec_allow_hazardous")
    sb.checkbox(LABELS["spec_no_precipitate"], key="spec_no_precipitate",
                help="with a metal's concentration given: a solid with SI > 0 rejects the mix "
                     "(hydroxyapatite, slow forming, warns only)")
    sb.number_input(LABELS["spec_plates"], 0, None, step=1, key="spec_plates")
    st.session_state.setdefault("spec_wells", 0)
    st.session_state.setdefault("spec_well_volume", "")
    left, right = sb.columns(2)
    left.number_input(LABELS["spec_wells"], 0, WELLS_MAX, step=1, key="spec_wells")
    right.text_input(LABELS["spec_well_volume"], key="spec_well_volume")
    _draw_more(sb)
    spec = build_spec()
    if spec is not None and spec.wells:
        right.caption(f"volume to make: {spec.plates} × {spec.wells} wells = {spec.volume_l * 1000:g} mL "
                      "(the volume field is not used)")
    keep_in_link(spec)
    sb.download_button("Save spec (TOML)", spec_to_toml(spec) if spec else "", "poise_spec.toml",
                       "application/toml", key="spec_save", disabled=spec is None)
    sb.file_uploader("Load a spec (TOML or JSON)", type=["toml", "json"], key="spec_upload",
                     on_change=load_spec_file, help=f"A spec file of up to {UPLOAD_MAX_MB} MB, UTF-8 text.")
    if st.session_state.get("spec_load_message"):
        sb.error(st.session_state["spec_load_message"])
