"""One system in full: every value with its source key, kind and citation; every published value of each constant."""

from __future__ import annotations

from typing import overload

from catalog import Catalog, load_catalog
from catalog.records import UNKEYED_SOURCE_KINDS, Selected, Sourced
from catalog.selection import log_beta_uncertainty
from selector.catalog_view.records import (
    UNKEYED_MEANING,
    ComplexConstantRow,
    FlagRow,
    MetalBindingRow,
    PublishedValueView,
    ReagentSummary,
    SelectedValue,
    SourcedValue,
    StepDetail,
    SystemDetail,
    UvRow,
)
from selector.catalog_view.table import steps_at_conditions, view_conditions
from selector.errors import InputError, UnknownNameError
from selector.names import resolve_reagent, resolve_system


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


def _selected(value: Selected, unit: str, catalog: Catalog) -> SelectedValue:
    """A step constant: the value used with its uncertainty and reason, and every published value."""
    values = tuple(
        PublishedValueView(v.value, v.uncertainty, v.source, v.source_kind,
                           _citation(v.source, v.source_kind, catalog), v.method, v.conditions,
                           k == value.chosen_index, v.why, v.note, v.rejected)
        for k, v in enumerate(value.values))
    return SelectedValue(value.value, unit, value.source, value.source_kind,
                         _citation(value.source, value.source_kind, catalog),
                         value.uncertainty, value.uncertainty_rule, value.reason, values)


def _complex_constants(system_id: str, catalog: Catalog) -> tuple[ComplexConstantRow, ...]:
    """The system's complexes that have other published log β values (``complex_values.csv``),
    each with every value: the ``complexes.csv`` row first (unless another value replaced it),
    then the others in table order."""
    rows = []
    for c in catalog.complexes:
        others = [v for v in catalog.complex_values if v.complex_id == c.complex_id]
        if c.system_id != system_id or not others:
            continue
        replaced = any(not v.rejected and v.log_beta == c.log_beta and v.dh_kj_mol == c.dh_kj_mol for v in others)
        values = [] if replaced else [_complex_value(c.log_beta, c.note, c.conditions, True, "", False, catalog)]
        values += [_complex_value(v.log_beta, v.reference + (f"; {v.note}" if v.note else ""), c.conditions,
                                  replaced and not v.rejected and v.log_beta == c.log_beta, v.why, v.rejected,
                                  catalog) for v in others]
        uncertainty, rule = log_beta_uncertainty(c.uncertainty)
        rows.append(ComplexConstantRow(c.complex_id, c.metal, _sourced(c.log_beta, "", catalog), uncertainty, rule,
                                       tuple(values)))
    return tuple(rows)


def _complex_value(log_beta: Sourced, reference: str, conditions: str, used: bool, why: str, rejected: bool,
                   catalog: Catalog) -> PublishedValueView:
    return PublishedValueView(log_beta.value, None, log_beta.source, log_beta.source_kind,
                              _citation(log_beta.source, log_beta.source_kind, catalog), reference, conditions,
                              used, why, "", rejected)


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
    conditions = view_conditions(temperature_c, ionic_strength_mol_l, activity)
    system = catalog.systems[find_system(name, catalog)]
    at_conditions = steps_at_conditions(catalog, conditions)[system.system_id]
    steps = tuple(
        StepDetail(
            step=step.step,
            pka_25c=_selected(step.pka_25c, "", catalog),
            dh_kj_mol=_selected(step.dh_kj_mol, "kJ/mol", catalog),
            dcp_j_k_mol=_selected(step.dcp_j_k_mol, "J/(K mol)", catalog),
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
    constants = [q for s in steps for q in (s.pka_25c, s.dh_kj_mol, s.dcp_j_k_mol)]
    keys = [q.source_key for q in constants] + [v.source_key for q in constants for v in q.values]
    keys += [r.solubility_g_l_25c.source_key for r in reagents if r.solubility_g_l_25c]
    complex_constants = _complex_constants(system.system_id, catalog)
    keys += [m.source_key for m in metal_binding] + [f.source_key for f in flags]
    keys += [v.source_key for c in complex_constants for v in c.values]
    keys += [uv_row.uv_cutoff_nm.source_key] if uv_row else []
    sources = {key: catalog.sources[key].citation for key in dict.fromkeys(keys) if key}
    return SystemDetail(
        system_id=system.system_id, name=system.name, aliases=system.aliases,
        charge_most_protonated=system.charge_most_protonated, hazardous=system.hazardous,
        hazard_note=system.hazard_note, notes=system.notes, conditions=conditions, steps=steps,
        reagents=reagents, metal_binding=metal_binding, uv_cutoff=uv_row, flags=flags, sources=sources,
        complex_values=complex_constants,
    )
