"""Records of the catalog view: plain, frozen values with ``as_dict`` for JSON (no computing, no printing).

Built by :mod:`selector.catalog_view.table`, :mod:`~selector.catalog_view.detail` and
:mod:`~selector.catalog_view.search`; formatted by :mod:`selector.cli.catalog` and the app.
"""

from __future__ import annotations

from dataclasses import dataclass

#: What an unkeyed source kind means, said in place of a citation.
UNKEYED_MEANING = {
    "from-memory": "from memory (recalled; not confirmed in a source read)",
    "common-practice": "common practice (rule of thumb; no published source)",
    "demo": "demo value (invented)",
}

#: Ways a name can match in a search, best first.
MATCH_ORDER = ("exact", "substring", "words", "close")

#: What each uncertainty rule of :mod:`catalog.selection` means.
UNCERTAINTY_RULE_MEANING = {
    "stated": "stated by the source",
    "spread": "largest difference from another read value",
    "default": "common-practice default (no stated uncertainty, no other read value)",
}



def provenance_text(source_key: str, source_kind: str) -> str:
    """``key (kind)`` for a keyed source, or the meaning of an unkeyed kind (from memory, …)."""
    if source_key:
        return f"{source_key} ({source_kind})"
    return UNKEYED_MEANING.get(source_kind, source_kind)


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
        return provenance_text(self.source_key, self.source_kind)

    def as_dict(self) -> dict:
        return {"value": self.value, "unit": self.unit, "source_key": self.source_key,
                "source_kind": self.source_kind, "citation": self.citation}


@dataclass(frozen=True)
class PublishedValueView:
    """One published value of a step constant, with its provenance; ``used`` marks the one the catalog uses."""

    value: float
    uncertainty: float | None
    source_key: str
    source_kind: str
    citation: str
    method: str
    conditions: str
    used: bool
    why: str
    note: str
    rejected: bool = False

    @property
    def provenance(self) -> str:
        """``key (kind)``, or the meaning of an unkeyed kind."""
        return provenance_text(self.source_key, self.source_kind)

    def as_dict(self) -> dict:
        return {"value": self.value, "uncertainty": self.uncertainty, "source_key": self.source_key,
                "source_kind": self.source_kind, "citation": self.citation, "method": self.method,
                "conditions": self.conditions, "used": self.used, "rejected": self.rejected, "why": self.why,
                "note": self.note}


@dataclass(frozen=True)
class SelectedValue(SourcedValue):
    """A step constant: the value used (a :class:`SourcedValue`) with its uncertainty, why it was
    chosen, and every published value (``values``, the used one marked)."""

    uncertainty: float
    uncertainty_rule: str
    reason: str
    values: tuple[PublishedValueView, ...]

    def as_dict(self) -> dict:
        return {**super().as_dict(), "uncertainty": self.uncertainty, "uncertainty_rule": self.uncertainty_rule,
                "reason": self.reason, "values": [v.as_dict() for v in self.values]}


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
    constants_read: int = 0
    constants_used: int = 0

    def as_dict(self) -> dict:
        return {**self.conditions.as_dict(), "systems": [r.as_dict() for r in self.rows],
                "pka_dh_read_in_a_source": self.constants_read, "pka_dh_used": self.constants_used}


@dataclass(frozen=True)
class StepDetail:
    """A step with every value's provenance, and its figures at the view's conditions."""

    step: int
    pka_25c: SelectedValue
    dh_kj_mol: SelectedValue
    dcp_j_k_mol: SelectedValue
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
class ComplexConstantRow:
    """A complex of the system with several published log β values (``complexes.csv`` and
    ``complex_values.csv``): the value used, its uncertainty, and every value (the used one marked
    ``used``, one judged wrong ``rejected`` with why).  ``log_beta`` is at 25 °C and I = 0 on the
    fully deprotonated ligand; a method field holds the database file and lines."""

    complex_id: str
    metal: str
    log_beta: SourcedValue
    uncertainty: float
    uncertainty_rule: str
    values: tuple[PublishedValueView, ...]

    def as_dict(self) -> dict:
        return {"complex_id": self.complex_id, "metal": self.metal, "log_beta": self.log_beta.as_dict(),
                "uncertainty": self.uncertainty, "uncertainty_rule": self.uncertainty_rule,
                "values": [v.as_dict() for v in self.values]}


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
    complex_values: tuple[ComplexConstantRow, ...] = ()

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
            "complex_values": [c.as_dict() for c in self.complex_values],
            "uv_cutoff": self.uv_cutoff.as_dict() if self.uv_cutoff else None,
            "flags": [f.as_dict() for f in self.flags], "sources": dict(self.sources),
        }

    def value_rows(self) -> list[dict]:
        """Every number of the system as one flat row with its provenance (for CSV export).

        Columns: system_id, section, item, field, value, unit, source_key, source_kind,
        citation, note, and for step constants uncertainty, uncertainty_rule, used, method,
        conditions, why.  Section ``step`` holds the value used of each constant (with its
        uncertainty and the reason in ``why``); section ``published_value`` every published
        value of it, the one used marked ``used`` = true; section ``complex_value`` every
        published log β of a complex that has several, marked the same way.
        """
        rows = []

        def add(section, item, field, value: SourcedValue | None, note="", **extra):
            if value is not None:
                rows.append({"system_id": self.system_id, "section": section, "item": item, "field": field,
                             "value": value.value, "unit": value.unit, "source_key": value.source_key,
                             "source_kind": value.source_kind, "citation": value.citation, "note": note,
                             **extra})

        for s in self.steps:
            item = f"step {s.step}"
            for field, value, note in (("pka_25c", s.pka_25c, s.note), ("dh_kj_mol", s.dh_kj_mol, ""),
                                       ("dcp_j_k_mol", s.dcp_j_k_mol, "")):
                add("step", item, field, value, note, uncertainty=value.uncertainty,
                    uncertainty_rule=value.uncertainty_rule, used="true", why=value.reason)
        for s in self.steps:
            for field, value in (("pka_25c", s.pka_25c), ("dh_kj_mol", s.dh_kj_mol), ("dcp_j_k_mol", s.dcp_j_k_mol)):
                for v in value.values:
                    add("published_value", f"step {s.step}", field,
                        SourcedValue(v.value, value.unit, v.source_key, v.source_kind, v.citation), v.note,
                        uncertainty="" if v.uncertainty is None else v.uncertainty, uncertainty_rule="",
                        used=str(v.used).lower(), method=v.method, conditions=v.conditions,
                        why=f"rejected: {v.why}" if v.rejected else v.why)
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
        for c in self.complex_values:
            for v in c.values:
                add("complex_value", c.complex_id, "log_beta",
                    SourcedValue(v.value, "", v.source_key, v.source_kind, v.citation), v.note,
                    uncertainty=c.uncertainty if v.used else "", uncertainty_rule=c.uncertainty_rule if v.used else "",
                    used=str(v.used).lower(), method=v.method, conditions=v.conditions,
                    why=f"rejected: {v.why}" if v.rejected else v.why)
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


def merge_ranges(ranges) -> tuple[tuple[float, float], ...]:
    """Union of closed intervals as sorted, non-overlapping (low, high) pairs."""
    merged: list[list[float]] = []
    for low, high in sorted(ranges):
        if merged and low <= merged[-1][1]:
            merged[-1][1] = max(merged[-1][1], high)
        else:
            merged.append([low, high])
    return tuple((low, high) for low, high in merged)
