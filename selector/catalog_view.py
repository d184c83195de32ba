"""The catalog as a person reads it: the system table, one system in full, a name search.

Three pure functions over the loaded catalog, each returning frozen records of plain
values (no printing; :mod:`selector.cli.catalog` formats them):

- :func:`system_table`: every system with the apparent pKa of each step at a chosen
  temperature and ionic strength, its useful pH range, flags, hazard and UV cut-off;
- :func:`system_detail`: one system whole, every value with its source key, source kind
  and full citation, the reagents that carry it, metal binding, UV cut-off and flags;
- :func:`search_catalog`: systems and reagents whose id, name, formula or alias matches a
  text (case-insensitive; exact, substring, all-words and close matches).

Notes
-----
Species j of a system has lost j protons and has charge z_j = z0 − j.  The step j
(species j−1 → species j + H⁺) has the thermodynamic constant K_j(T) from pKa(25 °C),
ΔH° and ΔCp° by the integrated van 't Hoff equation ([GKL2002], eq. 9).  At ionic
strength I the conditional constant on the pH scale (pH = −log10 a(H⁺)) is
K'_j = K_j γ_{j−1}/γ_j (as in :mod:`selector.chemistry.speciation`), and with
log10 γ_z = z² log10 γ₁(I):

    pKa'_j = pKa_j(T) + (z_j² − z_{j−1}²) log10 γ₁ = pKa_j(T) − (2 z_j + 1) log10 γ₁

so that pH = pKa'_j + log10([species j]/[species j−1]) (computed by
:func:`selector.chemistry.thermo.apparent_pka`).  For acetic acid (z_1 = −1)
pKa' = pKa + log10 γ₁ falls with I; for TrisH⁺ (z_1 = 0) pKa' = pKa − log10 γ₁ rises.
The useful range of a step is pKa'_j ± 1
(:data:`selector.chemistry.thermo.USEFUL_RANGE_HALF_WIDTH_PH`, common practice).

References
----------
.. [GKL2002] R. N. Goldberg, N. Kishore, R. M. Lennen, J. Phys. Chem. Ref. Data 31
   (2002) 231-370, eq. (9).
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from typing import overload

import numpy as np

from catalog import Catalog, load_catalog, normalize_name
from catalog.records import UNKEYED_SOURCE_KINDS, Sourced
from selector.chemistry.activity import DAVIES_MAX_IONIC_STRENGTH_MOL_L, log_gamma_unit
from selector.chemistry.arrays import engine_tables
from selector.chemistry.thermo import USEFUL_RANGE_HALF_WIDTH_PH, apparent_pka, dpka_dt, pka_at_temperature
from selector.chemistry.water import debye_huckel_a
from selector.errors import InputError, UnknownNameError
from selector.names import resolve_reagent, resolve_system
from selector.units import check_temperature

#: Largest ionic strength the catalog view accepts [mol/L] (the spec's limit too).
MAX_IONIC_STRENGTH_MOL_L = 5.0

#: What an unkeyed source kind means, said in place of a citation.
UNKEYED_MEANING = {
    "from-memory": "from memory (recalled; not confirmed in a source read)",
    "common-practice": "common practice (rule of thumb; no published source)",
    "demo": "demo value (invented)",
}

#: Ratio of difflib.SequenceMatcher above which a name counts as a close match.
CLOSE_MATCH_RATIO = 0.75

MATCH_ORDER = ("exact", "substring", "words", "close")


# --------------------------------------------------------------------------- records


@dataclass(frozen=True)
class SourcedValue:
    """A catalog number with its unit and provenance (key, kind, full citation)."""

    value: float
    unit: str
    source_key: str
    source_kind: str
    citation: str

    @property
    def provenance(self) -> str:
        """``key (kind)``, or the meaning of an unkeyed kind."""
        if self.source_key:
            return f"{self.source_key} ({self.source_kind})"
        return UNKEYED_MEANING.get(self.source_kind, self.source_kind)

    def as_dict(self) -> dict:
        return {"value": self.value, "unit": self.unit, "source_key": self.source_key,
                "source_kind": self.source_kind, "citation": self.citation}


@dataclass(frozen=True)
class StepAtConditions:
    """One dissociation step at the chosen temperature and ionic strength.

    Attributes
    ----------
    step : j, 1..n
    acid_charge, base_charge : charges z_{j−1} and z_j of the pair
    pka_25c : thermodynamic pKa at 25 °C, I = 0
    pka_thermodynamic : pKa_j(T) at I = 0
    pka_apparent : pKa'_j at T and I (pH scale)
    useful_ph_low, useful_ph_high : pKa'_j ∓ 1
    dpka_dt_per_k : dpKa/dT at T [1/K]
    within_data_range : T inside the step's data range (t_min_c..t_max_c)
    """

    step: int
    acid_charge: int
    base_charge: int
    pka_25c: float
    pka_thermodynamic: float
    pka_apparent: float
    useful_ph_low: float
    useful_ph_high: float
    dpka_dt_per_k: float
    within_data_range: bool

    def as_dict(self) -> dict:
        """Plain values; derived figures rounded to 1e-6 pH (1e-8 per K), far below their uncertainty."""
        return {
            "step": self.step, "acid_charge": self.acid_charge, "base_charge": self.base_charge,
            "pka_25c": self.pka_25c, "pka_thermodynamic": round(self.pka_thermodynamic, 6),
            "pka_apparent": round(self.pka_apparent, 6), "useful_ph_low": round(self.useful_ph_low, 6),
            "useful_ph_high": round(self.useful_ph_high, 6), "dpka_dt_per_k": round(self.dpka_dt_per_k, 8),
            "within_data_range": self.within_data_range,
        }


@dataclass(frozen=True)
class SystemRow:
    """One line of the system table."""

    system_id: str
    name: str
    steps: tuple[StepAtConditions, ...]
    flags: tuple[str, ...]
    hazardous: bool
    uv_cutoff_nm: float | None

    @property
    def useful_ph_ranges(self) -> tuple[tuple[float, float], ...]:
        """The steps' useful ranges, overlapping ones merged, in increasing pH."""
        return merge_ranges((s.useful_ph_low, s.useful_ph_high) for s in self.steps)

    def as_dict(self) -> dict:
        return {
            "system_id": self.system_id, "name": self.name,
            "steps": [s.as_dict() for s in self.steps],
            "useful_ph_ranges": [[round(low, 6), round(high, 6)] for low, high in self.useful_ph_ranges],
            "flags": list(self.flags), "hazardous": self.hazardous,
            "uv_cutoff_nm": self.uv_cutoff_nm,
        }


@dataclass(frozen=True)
class Conditions:
    """Temperature, ionic strength and activity model of a view, with its warnings."""

    temperature_c: float
    ionic_strength_mol_l: float
    activity_model: str
    log10_gamma_unit: float
    warnings: tuple[str, ...]

    def as_dict(self) -> dict:
        return {"temperature_c": self.temperature_c, "ionic_strength_mol_l": self.ionic_strength_mol_l,
                "activity_model": self.activity_model, "log10_gamma_unit": self.log10_gamma_unit,
                "warnings": list(self.warnings)}


@dataclass(frozen=True)
class SystemTable:
    """Every catalog system at one temperature and ionic strength."""

    conditions: Conditions
    rows: tuple[SystemRow, ...]

    def as_dict(self) -> dict:
        return {**self.conditions.as_dict(), "systems": [r.as_dict() for r in self.rows]}


@dataclass(frozen=True)
class StepDetail:
    """A step with every value's provenance, and its figures at the view's conditions."""

    step: int
    pka_25c: SourcedValue
    dh_kj_mol: SourcedValue
    dcp_j_k_mol: SourcedValue
    t_min_c: float
    t_max_c: float
    note: str
    at_conditions: StepAtConditions

    def as_dict(self) -> dict:
        return {"step": self.step, "pka_25c": self.pka_25c.as_dict(), "dh_kj_mol": self.dh_kj_mol.as_dict(),
                "dcp_j_k_mol": self.dcp_j_k_mol.as_dict(), "t_min_c": self.t_min_c, "t_max_c": self.t_max_c,
                "note": self.note, "at_conditions": self.at_conditions.as_dict()}


@dataclass(frozen=True)
class ReagentSummary:
    """A reagent that carries the system, as the catalog lists it.

    ``protons_removed`` counts protons taken from ``system_units`` units of the most
    protonated form; ``mean_species_charge`` is the system part's charge per unit.
    """

    reagent_id: str
    name: str
    formula: str
    aliases: tuple[str, ...]
    system_units: int
    protons_removed: int
    mean_species_charge: float
    ions: tuple[tuple[str, int], ...]
    hydrate_water: int
    molar_mass_g_mol: float
    physical_form: str
    solubility_g_l_25c: SourcedValue | None
    purity_fraction: float
    purity_source_kind: str
    demo_price_per_kg: SourcedValue | None
    hazard_flags: tuple[str, ...]
    cautions: str

    def as_dict(self) -> dict:
        return {
            "reagent_id": self.reagent_id, "name": self.name, "formula": self.formula,
            "aliases": list(self.aliases), "system_units": self.system_units,
            "protons_removed": self.protons_removed, "mean_species_charge": self.mean_species_charge,
            "ions": {ion: n for ion, n in self.ions}, "hydrate_water": self.hydrate_water,
            "molar_mass_g_mol": self.molar_mass_g_mol, "physical_form": self.physical_form,
            "solubility_g_l_25c": self.solubility_g_l_25c.as_dict() if self.solubility_g_l_25c else None,
            "purity_fraction": self.purity_fraction, "purity_source_kind": self.purity_source_kind,
            "demo_price_per_kg": self.demo_price_per_kg.as_dict() if self.demo_price_per_kg else None,
            "hazard_flags": list(self.hazard_flags), "cautions": self.cautions,
        }


@dataclass(frozen=True)
class MetalBindingRow:
    """A metal-binding statement: log K (sourced) or a qualitative word with its source."""

    metal: str
    ligand_species_charge: int
    log_k: SourcedValue | None
    ionic_strength_mol_l: float | None
    temperature_c: float | None
    qualitative: str
    source_key: str
    source_kind: str
    citation: str
    note: str

    def as_dict(self) -> dict:
        return {"metal": self.metal, "ligand_species_charge": self.ligand_species_charge,
                "log_k": self.log_k.as_dict() if self.log_k else None,
                "ionic_strength_mol_l": self.ionic_strength_mol_l, "temperature_c": self.temperature_c,
                "qualitative": self.qualitative, "source_key": self.source_key,
                "source_kind": self.source_kind, "citation": self.citation, "note": self.note}


@dataclass(frozen=True)
class FlagRow:
    flag: str
    detail: str
    source_key: str
    source_kind: str
    citation: str

    def as_dict(self) -> dict:
        return {"flag": self.flag, "detail": self.detail, "source_key": self.source_key,
                "source_kind": self.source_kind, "citation": self.citation}


@dataclass(frozen=True)
class UvRow:
    uv_cutoff_nm: SourcedValue
    conc_mol_l: float | None
    note: str

    def as_dict(self) -> dict:
        return {"uv_cutoff_nm": self.uv_cutoff_nm.as_dict(), "conc_mol_l": self.conc_mol_l, "note": self.note}


@dataclass(frozen=True)
class SystemDetail:
    """One system whole; ``sources`` maps every source key used here to its citation."""

    system_id: str
    name: str
    aliases: tuple[str, ...]
    charge_most_protonated: int
    hazardous: bool
    hazard_note: str
    notes: str
    conditions: Conditions
    steps: tuple[StepDetail, ...]
    reagents: tuple[ReagentSummary, ...]
    metal_binding: tuple[MetalBindingRow, ...]
    uv_cutoff: UvRow | None
    flags: tuple[FlagRow, ...]
    sources: dict[str, str]

    @property
    def has_cautions(self) -> bool:
        """True when the system or any of its reagents carries a hazard statement."""
        return self.hazardous or any(r.hazard_flags for r in self.reagents)

    def as_dict(self) -> dict:
        return {
            "system_id": self.system_id, "name": self.name, "aliases": list(self.aliases),
            "charge_most_protonated": self.charge_most_protonated, "hazardous": self.hazardous,
            "hazard_note": self.hazard_note, "notes": self.notes, **self.conditions.as_dict(),
            "steps": [s.as_dict() for s in self.steps], "reagents": [r.as_dict() for r in self.reagents],
            "metal_binding": [m.as_dict() for m in self.metal_binding],
            "uv_cutoff": self.uv_cutoff.as_dict() if self.uv_cutoff else None,
            "flags": [f.as_dict() for f in self.flags], "sources": dict(self.sources),
        }

    def value_rows(self) -> list[dict]:
        """Every number of the system as one flat row with its provenance (for CSV export).

        Columns: system_id, section, item, field, value, unit, source_key, source_kind,
        citation, note.
        """
        rows = []

        def add(section, item, field, value: SourcedValue | None, note=""):
            if value is not None:
                rows.append({"system_id": self.system_id, "section": section, "item": item, "field": field,
                             "value": value.value, "unit": value.unit, "source_key": value.source_key,
                             "source_kind": value.source_kind, "citation": value.citation, "note": note})

        for s in self.steps:
            item = f"step {s.step}"
            add("step", item, "pka_25c", s.pka_25c, s.note)
            add("step", item, "dh_kj_mol", s.dh_kj_mol)
            add("step", item, "dcp_j_k_mol", s.dcp_j_k_mol)
        for r in self.reagents:
            add("reagent", r.reagent_id, "molar_mass_g_mol",
                SourcedValue(r.molar_mass_g_mol, "g/mol", "", "computed", "computed from the formula "
                             f"{r.formula} with IUPAC standard atomic weights"))
            add("reagent", r.reagent_id, "solubility_g_l_25c", r.solubility_g_l_25c)
            add("reagent", r.reagent_id, "purity_fraction",
                SourcedValue(r.purity_fraction, "1", "", r.purity_source_kind,
                             UNKEYED_MEANING.get(r.purity_source_kind, "")))
            add("reagent", r.reagent_id, "demo_price_per_kg", r.demo_price_per_kg)
        for m in self.metal_binding:
            add("metal_binding", f"{m.metal} with species charge {m.ligand_species_charge:+d}", "log_k",
                m.log_k, m.note)
        if self.uv_cutoff is not None:
            add("uv_cutoff", self.system_id, "uv_cutoff_nm", self.uv_cutoff.uv_cutoff_nm, self.uv_cutoff.note)
        return rows


@dataclass(frozen=True)
class SearchHit:
    """A system or reagent whose name matched; ``match`` is one of :data:`MATCH_ORDER`."""

    kind: str
    record_id: str
    name: str
    system_id: str | None
    matched_name: str
    match: str

    def as_dict(self) -> dict:
        return {"kind": self.kind, "id": self.record_id, "name": self.name, "system_id": self.system_id,
                "matched_name": self.matched_name, "match": self.match}


# --------------------------------------------------------------------------- functions


def merge_ranges(ranges) -> tuple[tuple[float, float], ...]:
    """Union of closed intervals as sorted, non-overlapping (low, high) pairs."""
    merged: list[list[float]] = []
    for low, high in sorted(ranges):
        if merged and low <= merged[-1][1]:
            merged[-1][1] = max(merged[-1][1], high)
        else:
            merged.append([low, high])
    return tuple((low, high) for low, high in merged)


def check_ionic_strength(ionic_strength_mol_l) -> float:
    """The ionic strength as a float, or InputError if it is not a finite number ≥ 0."""
    try:
        value = float(ionic_strength_mol_l)
    except (TypeError, ValueError):
        raise InputError(f"ionic strength {ionic_strength_mol_l!r} is not a number; give mol/L "
                         "of zero or more, e.g. 0.15 or 150mM") from None
    if not np.isfinite(value):
        raise InputError(f"ionic strength {value:g} is not a finite number; give mol/L of zero or more, "
                         "e.g. 0.15 or 150mM")
    if value < 0:
        raise InputError(f"ionic strength {value:g} mol/L is negative; give zero or more, e.g. 0.15 or 150mM")
    if value > MAX_IONIC_STRENGTH_MOL_L:
        raise InputError(f"ionic strength {value:g} mol/L is beyond what the activity models can describe; "
                         f"give at most {MAX_IONIC_STRENGTH_MOL_L:g} mol/L")
    return value


def _conditions(temperature_c, ionic_strength_mol_l, activity) -> Conditions:
    temperature = float(check_temperature(temperature_c))
    ionic = check_ionic_strength(ionic_strength_mol_l)
    log_gamma = float(log_gamma_unit(ionic, debye_huckel_a(temperature), activity)) + 0.0  # no -0.0
    warnings = []
    if ionic > DAVIES_MAX_IONIC_STRENGTH_MOL_L:
        warnings.append(f"ionic strength {ionic:g} mol/L is above {DAVIES_MAX_IONIC_STRENGTH_MOL_L:g} mol/L, "
                        "the range of the activity model; the apparent pKa are less certain")
    return Conditions(temperature, ionic, activity, log_gamma, tuple(warnings))


def _steps_at(catalog: Catalog, conditions: Conditions) -> dict[str, tuple[StepAtConditions, ...]]:
    """Every system's steps at the conditions, computed on the padded arrays at once."""
    arrays = engine_tables(catalog).systems
    t = conditions.temperature_c
    pka_t = pka_at_temperature(arrays.pka_25c, arrays.dh_kj_mol, arrays.dcp_j_k_mol, t)
    j = np.arange(1, arrays.max_steps + 1)[None, :]
    base_charge = arrays.charge_most_protonated[:, None] - j
    pka_apparent = apparent_pka(arrays.pka_25c, arrays.dh_kj_mol, arrays.dcp_j_k_mol, t,
                                conditions.ionic_strength_mol_l, base_charge + 1, conditions.activity_model)
    slope = dpka_dt(arrays.dh_kj_mol, arrays.dcp_j_k_mol, t)
    inside = (arrays.t_min_c <= t) & (t <= arrays.t_max_c)
    out = {}
    for s, system_id in enumerate(arrays.system_ids):
        out[system_id] = tuple(
            StepAtConditions(
                step=k + 1,
                acid_charge=int(base_charge[s, k] + 1),
                base_charge=int(base_charge[s, k]),
                pka_25c=float(arrays.pka_25c[s, k]),
                pka_thermodynamic=float(pka_t[s, k]),
                pka_apparent=float(pka_apparent[s, k]),
                useful_ph_low=float(pka_apparent[s, k] - USEFUL_RANGE_HALF_WIDTH_PH),
                useful_ph_high=float(pka_apparent[s, k] + USEFUL_RANGE_HALF_WIDTH_PH),
                dpka_dt_per_k=float(slope[s, k]),
                within_data_range=bool(inside[s, k]),
            )
            for k in range(int(arrays.n_steps[s])))
    return out


def system_table(temperature_c=25.0, ionic_strength_mol_l=0.0, activity: str = "davies",
                 catalog: Catalog | None = None) -> SystemTable:
    """Every system with its steps' apparent pKa at ``temperature_c`` and ``ionic_strength_mol_l``.

    Parameters
    ----------
    temperature_c : float
        Temperature [°C], 0-95.
    ionic_strength_mol_l : float
        Ionic strength [mol/L], ≥ 0.
    activity : str
        Activity model (a name of :data:`selector.chemistry.activity.ACTIVITY_MODELS`).

    Raises
    ------
    InputError for a temperature, ionic strength or activity model that cannot be used.

    Notes
    -----
    pKa'_j = pKa_j(T) − (2 z_j + 1) log10 γ₁(I); see the module notes.
    """
    catalog = catalog if catalog is not None else load_catalog()
    conditions = _conditions(temperature_c, ionic_strength_mol_l, activity)
    steps = _steps_at(catalog, conditions)
    rows = tuple(
        SystemRow(
            system_id=system.system_id,
            name=system.name,
            steps=steps[system.system_id],
            flags=tuple(dict.fromkeys(f.flag for f in catalog.flags_of(system.system_id))),
            hazardous=system.hazardous,
            uv_cutoff_nm=(catalog.uv_cutoffs[system.system_id].uv_cutoff_nm.value
                          if system.system_id in catalog.uv_cutoffs else None),
        )
        for system in catalog.systems.values())
    return SystemTable(conditions, rows)


@overload
def _sourced(value: Sourced, unit: str, catalog: Catalog) -> SourcedValue: ...


@overload
def _sourced(value: Sourced | None, unit: str, catalog: Catalog) -> SourcedValue | None: ...


def _sourced(value: Sourced | None, unit: str, catalog: Catalog) -> SourcedValue | None:
    """A catalog value with its unit and full provenance (None stays None)."""
    if value is None:
        return None
    return SourcedValue(value.value, unit, value.source, value.source_kind,
                        _citation(value.source, value.source_kind, catalog))


def _citation(key: str, kind: str, catalog: Catalog) -> str:
    if key:
        return catalog.sources[key].citation
    return UNKEYED_MEANING.get(kind, "") if kind in UNKEYED_SOURCE_KINDS else ""


def find_system(name: str, catalog: Catalog | None = None) -> str:
    """The system id that ``name`` stands for: a system's name or alias, or a reagent carrying it.

    Raises
    ------
    UnknownNameError (closest system names) if neither a system nor a reagent has the name;
    InputError if the name is a strong reagent that carries no system (NaCl, HCl ...).
    """
    catalog = catalog if catalog is not None else load_catalog()
    try:
        return resolve_system(name, catalog)
    except UnknownNameError as unknown:
        try:
            reagent_id = resolve_reagent(name, catalog)
        except UnknownNameError:
            raise unknown from None
    reagent = catalog.reagents[reagent_id]
    if reagent.system_id is None:
        raise InputError(f"{name!r} is {reagent.name}, a strong electrolyte with no buffer system; "
                         "name a buffer system, or look it up with 'poise catalog --search'")
    return reagent.system_id


def system_detail(name: str, temperature_c=25.0, ionic_strength_mol_l=0.0, activity: str = "davies",
                  catalog: Catalog | None = None) -> SystemDetail:
    """One system in full, named by id, name, alias or one of its reagents.

    Every number comes with its source key, source kind and the full citation from the
    source table; the steps also carry their apparent pKa at the given conditions.
    """
    catalog = catalog if catalog is not None else load_catalog()
    conditions = _conditions(temperature_c, ionic_strength_mol_l, activity)
    system = catalog.systems[find_system(name, catalog)]
    at_conditions = _steps_at(catalog, conditions)[system.system_id]
    steps = tuple(
        StepDetail(
            step=step.step,
            pka_25c=_sourced(step.pka_25c, "", catalog),
            dh_kj_mol=_sourced(step.dh_kj_mol, "kJ/mol", catalog),
            dcp_j_k_mol=_sourced(step.dcp_j_k_mol, "J/(K mol)", catalog),
            t_min_c=step.t_min_c, t_max_c=step.t_max_c, note=step.note,
            at_conditions=figures,
        )
        for step, figures in zip(system.steps, at_conditions))
    reagents = tuple(
        ReagentSummary(
            reagent_id=r.reagent_id, name=r.name, formula=r.formula, aliases=r.aliases,
            system_units=r.system_units, protons_removed=r.protons_removed,
            mean_species_charge=system.charge_most_protonated - r.protons_removed / r.system_units,
            ions=r.ions, hydrate_water=r.hydrate_water, molar_mass_g_mol=r.molar_mass_g_mol,
            physical_form=r.physical_form,
            solubility_g_l_25c=_sourced(r.solubility_g_l_25c, "g/L", catalog),
            purity_fraction=r.purity_fraction, purity_source_kind=r.purity_source_kind,
            demo_price_per_kg=_sourced(r.demo_price_per_kg, "EUR/kg", catalog),
            hazard_flags=r.hazard_flags, cautions=r.cautions,
        )
        for r in catalog.reagents.values() if r.system_id == system.system_id)
    metal_binding = tuple(
        MetalBindingRow(
            metal=m.metal, ligand_species_charge=m.ligand_species_charge,
            log_k=_sourced(m.log_k, "", catalog), ionic_strength_mol_l=m.ionic_strength_mol_l,
            temperature_c=m.temperature_c, qualitative=m.qualitative, source_key=m.source,
            source_kind=m.source_kind, citation=_citation(m.source, m.source_kind, catalog), note=m.note,
        )
        for m in catalog.metal_binding_of(system.system_id))
    uv = catalog.uv_cutoffs.get(system.system_id)
    uv_row = UvRow(_sourced(uv.uv_cutoff_nm, "nm", catalog), uv.conc_mol_l, uv.note) if uv else None
    flags = tuple(FlagRow(f.flag, f.detail, f.source, f.source_kind, _citation(f.source, f.source_kind, catalog))
                  for f in catalog.flags_of(system.system_id))
    keys = [v.source_key for s in steps for v in (s.pka_25c, s.dh_kj_mol, s.dcp_j_k_mol)]
    keys += [r.solubility_g_l_25c.source_key for r in reagents if r.solubility_g_l_25c]
    keys += [m.source_key for m in metal_binding] + [f.source_key for f in flags]
    keys += [uv_row.uv_cutoff_nm.source_key] if uv_row else []
    sources = {key: catalog.sources[key].citation for key in dict.fromkeys(keys) if key}
    return SystemDetail(
        system_id=system.system_id, name=system.name, aliases=system.aliases,
        charge_most_protonated=system.charge_most_protonated, hazardous=system.hazardous,
        hazard_note=system.hazard_note, notes=system.notes, conditions=conditions, steps=steps,
        reagents=reagents, metal_binding=metal_binding, uv_cutoff=uv_row, flags=flags, sources=sources,
    )


def _best_match(query: str, words: tuple[str, ...], names) -> tuple[int, str] | None:
    """(rank in MATCH_ORDER, the name) of the best-matching name, or None."""
    best = None
    for name in names:
        key = normalize_name(name)
        if not key:
            continue
        ratio = difflib.SequenceMatcher(None, query, key).ratio()
        if key == query:
            rank = 0
        elif query in key:
            rank = 1
        elif len(words) > 1 and all(w in name.casefold() for w in words):
            rank = 2
        elif ratio >= CLOSE_MATCH_RATIO:
            rank = 3
        else:
            continue
        # Among names of equal rank the most similar wins; on a tie, the one written
        # differently from its folded form (HEPES before hepes) reads better.
        score = (rank, -ratio, name == key)
        if best is None or score < best[0]:
            best = (score, name)
    return None if best is None else (best[0][0], best[1])


def search_catalog(text: str, catalog: Catalog | None = None) -> tuple[SearchHit, ...]:
    """Systems and reagents whose id, name, formula or an alias matches ``text``.

    Matching folds case, spaces, hyphens and hydrate dots (:func:`catalog.normalize_name`).
    A record matches *exactly*, as a *substring*, by containing all the *words* of the text,
    or *closely* (difflib ratio ≥ 0.75); hits come in that order, systems before reagents.

    Raises
    ------
    InputError for an empty text.
    """
    catalog = catalog if catalog is not None else load_catalog()
    query = normalize_name(text or "")
    if not query:
        raise InputError("nothing to search for; give some text, e.g. --search phosphate")
    words = tuple((text or "").casefold().split())
    hits = []
    for system in catalog.systems.values():
        best = _best_match(query, words, (system.system_id, system.name, *system.aliases))
        if best is not None:
            hits.append((best[0], 0, SearchHit("system", system.system_id, system.name, system.system_id,
                                               best[1], MATCH_ORDER[best[0]])))
    for reagent in catalog.reagents.values():
        best = _best_match(query, words, (reagent.reagent_id, reagent.name, reagent.formula, *reagent.aliases))
        if best is not None:
            hits.append((best[0], 1, SearchHit("reagent", reagent.reagent_id, reagent.name, reagent.system_id,
                                               best[1], MATCH_ORDER[best[0]])))
    hits.sort(key=lambda item: (item[0], item[1], item[2].record_id))
    return tuple(hit for _, _, hit in hits)
