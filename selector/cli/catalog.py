"""``poise catalog``: list the buffer systems, show one in full, search names, export.

::

    poise catalog                              # every system: pKa, useful pH, UV, flags
    poise catalog --temperature 37 --ionic-strength 0.15
    poise catalog tris                         # one system, every value with its source
    poise catalog --search phosphate           # systems and reagents by name or alias
    poise catalog --json | --csv               # the same, exported to stdout

The command parses, calls one function of :mod:`selector.catalog_view` and prints.
Errors are :class:`~selector.errors.InputError` and reach the user through
``selector.cli.user_errors`` as one line and exit code 2.
"""

from __future__ import annotations

import json

from catalog.records import short_system_name
from catalog.selection import POLICY_WORDS
from selector.catalog_view import (
    UNCERTAINTY_RULE_MEANING,
    ComplexConstantRow,
    MetalBindingRow,
    PublishedValueView,
    SearchHit,
    SelectedValue,
    StepDetail,
    SystemDetail,
    SystemTable,
    search_catalog,
    system_detail,
    system_table,
)
from selector.errors import InputError
from selector.safety import SAFETY_NOTICE
from selector.textsafe import write_csv
from selector.units import check_temperature, parse_ionic_strength

TABLE_CSV_COLUMNS = (
    "system_id", "name", "step", "acid_charge", "base_charge", "pka_25c", "pka_thermodynamic",
    "pka_apparent", "useful_ph_low", "useful_ph_high", "dpka_dt_per_k", "within_data_range",
    "hazardous", "uv_cutoff_nm", "flags", "temperature_c", "ionic_strength_mol_l", "activity_model",
)
DETAIL_CSV_COLUMNS = ("system_id", "section", "item", "field", "value", "unit", "source_key",
                      "source_kind", "citation", "note", "uncertainty", "uncertainty_rule", "used", "method",
                      "conditions", "why")
SEARCH_CSV_COLUMNS = ("kind", "id", "name", "system_id", "matched_name", "match")


def register(commands) -> None:
    """Add the ``catalog`` subcommand to the argparse sub-parsers object ``commands``."""
    parser = commands.add_parser(
        "catalog", help="list buffer systems, show one with its sources, search names",
        description="List the catalog's buffer systems with apparent pKa at a temperature and ionic "
                    "strength, show one system with the source of every value, or search names. "
                    "E.g. 'poise catalog', 'poise catalog tris', 'poise catalog --search phosphate'.")
    parser.add_argument("system", nargs="?", metavar="SYSTEM",
                        help="a system (or a reagent that carries it) to show in full")
    parser.add_argument("--search", metavar="TEXT",
                        help="find systems and reagents whose id, name, formula or alias matches TEXT")
    parser.add_argument("--temperature", default="25", help="°C, 0-95 (default 25)")
    parser.add_argument("--ionic-strength", default="0",
                        help="mol/L (e.g. 0.15) or with a unit (150mM); default 0")
    parser.add_argument("--activity", default="davies",
                        help="activity model: davies (default), bates-guggenheim, guntelberg")
    export = parser.add_mutually_exclusive_group()
    export.add_argument("--json", action="store_true", help="print one JSON object")
    export.add_argument("--csv", action="store_true", help="print CSV with a header row")
    parser.set_defaults(handler=command_catalog)


def command_catalog(args) -> int:
    from selector.catalog_view import SystemDetail, SystemTable

    if args.system is not None and args.search is not None:
        raise InputError("give a system name or --search TEXT, not both")
    if args.search is not None:
        hits = search_catalog(args.search)
        print(_render(hits, args, format_search, _search_csv, lambda h: [x.as_dict() for x in h],
                      text=args.search))
        return 0
    temperature_c = float(check_temperature(args.temperature))
    ionic_strength_mol_l = parse_ionic_strength(args.ionic_strength)
    if args.system is not None:
        detail = system_detail(args.system, temperature_c, ionic_strength_mol_l, activity=args.activity)
        print(_render(detail, args, format_system_detail, _detail_csv, SystemDetail.as_dict))
    else:
        table = system_table(temperature_c, ionic_strength_mol_l, activity=args.activity)
        print(_render(table, args, format_system_table, _table_csv, SystemTable.as_dict))
    return 0


def _render(record, args, as_text, as_csv, as_dict, **extra) -> str:
    if args.json:
        return json.dumps(as_dict(record), indent=2, ensure_ascii=False)
    if args.csv:
        return as_csv(record).rstrip("\n")
    return as_text(record, **extra)


def _table_csv(table: SystemTable) -> str:
    c = table.conditions
    rows = []
    for row in table.rows:
        for step in row.steps:
            rows.append({
                "system_id": row.system_id, "name": row.name, **step.as_dict(),
                "within_data_range": str(step.within_data_range).lower(),
                "hazardous": str(row.hazardous).lower(),
                "uv_cutoff_nm": "" if row.uv_cutoff_nm is None else row.uv_cutoff_nm,
                "flags": ";".join(row.flags), "temperature_c": c.temperature_c,
                "ionic_strength_mol_l": c.ionic_strength_mol_l, "activity_model": c.activity_model,
            })
    return write_csv(TABLE_CSV_COLUMNS, rows)


def _detail_csv(detail: SystemDetail) -> str:
    return write_csv(DETAIL_CSV_COLUMNS, detail.value_rows())


def _search_csv(hits: tuple[SearchHit, ...]) -> str:
    return write_csv(SEARCH_CSV_COLUMNS, [h.as_dict() for h in hits])


def _charge(z) -> str:
    return f"{z:+g}" if z else "0"


def _conditions_line(conditions) -> str:
    return (f"{conditions.temperature_c:g} °C, I = {conditions.ionic_strength_mol_l:g} mol/L "
            f"(activity model: {conditions.activity_model})")


def format_system_table(table: SystemTable) -> str:
    """The readable system table of ``poise catalog``."""
    lines = [f"Buffer systems at {_conditions_line(table.conditions)}",
             "pKa: apparent values on the pH scale; useful pH: pKa ± 1, overlapping ranges merged."]
    lines += [f"Warning: {w}" for w in table.conditions.warnings]
    lines.append("")
    header = f"{'id':<17} {'name':<19} {'pKa':<24} {'useful pH':<30} {'UV nm':>5}  flags"
    lines += [header, "-" * len(header)]
    extrapolated = False
    for row in table.rows:
        pkas = []
        for step in row.steps:
            mark = "" if step.within_data_range else "*"
            extrapolated |= not step.within_data_range
            pkas.append(f"{step.pka_apparent:.2f}{mark}")
        ranges = ", ".join(f"{low:.1f}–{high:.1f}" for low, high in row.useful_ph_ranges)
        uv = f"{row.uv_cutoff_nm:g}" if row.uv_cutoff_nm is not None else "-"
        flags = ", ".join((("HAZARDOUS",) if row.hazardous else ()) + row.flags) or "-"
        lines.append(f"{row.system_id:<17} {short_system_name(row.name)[:19]:<19} {' '.join(pkas):<24} "
                     f"{ranges:<30} {uv:>5}  {flags}")
    lines.append("")
    if extrapolated:
        lines.append("* temperature outside the data range of that step: the pKa is extrapolated.")
    lines.append(f"{len(table.rows)} systems. 'poise catalog NAME' shows one system with every published value, "
                 "the one used and why, and the cautions of hazardous ones.")
    lines.append(f"{table.constants_read} of the {table.constants_used} pKa and ΔH° values used are read in a "
                 "named source; the others are recalled (from memory) or common practice.")
    return "\n".join(lines)


def _value(value, fmt: str = "g") -> str:
    number = format(value.value, fmt)
    return f"{number} {value.unit}".strip() + f"   [{value.provenance}]"


def _header_lines(detail: SystemDetail) -> list[str]:
    lines = [f"{detail.name}   [{detail.system_id}]"]
    if detail.aliases:
        lines.append(f"Also called: {'; '.join(detail.aliases)}")
    lines.append(f"Charge of the most protonated form: {_charge(detail.charge_most_protonated)}; "
                 f"{len(detail.steps)} dissociation step(s)")
    if detail.hazardous:
        lines.append(f"HAZARDOUS: {detail.hazard_note}")
    if detail.notes:
        lines.append(f"Notes: {detail.notes}")
    return lines


def _number(value: float, unit: str) -> str:
    return f"{value:g} {unit}".strip()


def _published_lines(value: SelectedValue) -> list[str]:
    """Uncertainty, the reason of the choice, and every published value (* the one used)."""
    lines = [f"      ± {_number(value.uncertainty, value.unit)} ({UNCERTAINTY_RULE_MEANING[value.uncertainty_rule]}); "
             f"{value.reason}"]
    if len(value.values) > 1:
        lines += [_published_value_line(v) for v in value.values]
    return lines


def _published_value_line(v: PublishedValueView) -> str:
    """One published value: * the one used, x one rejected as wrong (with why), blank an alternative."""
    stated = f" ± {v.uncertainty:g}" if v.uncertainty is not None else ""
    mark = "*" if v.used else "x" if v.rejected else " "
    return (f"      {mark} {v.value:<10g}{stated:<8} {v.provenance}: {v.method}"
            + (f"; {v.conditions}" if v.conditions else "")
            + (f"; rejected (not used, not in the spread): {v.why}" if v.rejected else ""))


def _constant_lines(step: StepDetail) -> list[str]:
    lines = []
    for label, value in (("pKa at 25 °C, I = 0", step.pka_25c), ("ΔH°", step.dh_kj_mol), ("ΔCp°", step.dcp_j_k_mol)):
        lines.append(f"    {label:<27}{_value(value)}")
        lines += _published_lines(value)
    return lines


def _step_lines(detail: SystemDetail) -> list[str]:
    lines = ["", f"Steps; apparent pKa at {_conditions_line(detail.conditions)}",
             f"  Each constant lists every published value; * marks the one used, chosen by the policy "
             f"({POLICY_WORDS}) unless a reason is given; x marks a value rejected as wrong (with why)."]
    lines += [f"  Warning: {w}" for w in detail.conditions.warnings]
    for step in detail.steps:
        at = step.at_conditions
        lines += [f"  step {step.step}: charge {_charge(at.acid_charge)} -> {_charge(at.base_charge)}",
                  *_constant_lines(step),
                  f"    data range                 {step.t_min_c:g}-{step.t_max_c:g} °C"
                  + ("" if at.within_data_range else "   (this temperature is outside it: extrapolated)"),
                  f"    apparent pKa               {at.pka_apparent:.3f}   useful pH {at.useful_ph_low:.2f}-"
                  f"{at.useful_ph_high:.2f}   dpKa/dT {at.dpka_dt_per_k:+.4f} per K"]
        if step.note:
            lines.append(f"    note: {step.note}")
    return lines


def _reagent_lines(detail: SystemDetail) -> list[str]:
    lines = ["", "Reagents"]
    for r in detail.reagents:
        solubility = _value(r.solubility_g_l_25c) if r.solubility_g_l_25c else "not listed"
        price = f"{r.demo_price_per_kg.value:g} EUR/kg (invented demo price)" if r.demo_price_per_kg else "none"
        ions = ", ".join(f"{n} {ion}" for ion, n in r.ions) or "none"
        lines += [
            f"  {r.reagent_id}: {r.name}, {r.formula}, {r.molar_mass_g_mol:.4f} g/mol, {r.physical_form}",
            f"    {r.system_units} unit(s) of the system, {r.protons_removed} proton(s) removed "
            f"(charge per unit {_charge(r.mean_species_charge)}); counter-ions: {ions}",
            f"    solubility at 25 °C: {solubility}",
            f"    purity {r.purity_fraction:g} [{r.purity_source_kind}]; price {price}",
        ]
        if r.hazard_flags:
            lines.append(f"    CAUTION ({', '.join(r.hazard_flags)}): {r.cautions}")
        elif r.cautions:
            lines.append(f"    handling: {r.cautions}")
    return lines


def _metal_line(m: MetalBindingRow) -> str:
    if m.log_k is not None:
        conditions = ", ".join(
            part for part in (
                f"I = {m.ionic_strength_mol_l:g} mol/L" if m.ionic_strength_mol_l is not None else "",
                f"{m.temperature_c:g} °C" if m.temperature_c is not None else "") if part)
        what = f"log K {m.log_k.value:g}" + (f" ({conditions})" if conditions else "")
        provenance = m.log_k.provenance
    else:
        what = m.qualitative
        provenance = f"{m.source_key} ({m.source_kind})" if m.source_key else m.citation
    return f"  {m.metal} with the species of charge {_charge(m.ligand_species_charge)}: {what}   [{provenance}]"


def _metal_lines(detail: SystemDetail) -> list[str]:
    lines = ["", "Metal binding"]
    if not detail.metal_binding:
        lines.append("  none listed")
    for m in detail.metal_binding:
        lines.append(_metal_line(m))
        if m.note:
            lines.append(f"    {m.note}")
    return lines


#: What a complex's log β uncertainty rests on (complexes.csv's ``uncertainty`` column, or none).
COMPLEX_UNCERTAINTY_MEANING = {
    "stated": "complexes.csv: the source's, or the spread of the compilations",
    "default": "common-practice default",
}


def _complex_line(c: ComplexConstantRow) -> list[str]:
    return [f"  {c.complex_id} ({c.metal}): log β {c.log_beta.value:g} ± {c.uncertainty:g} "
            f"({COMPLEX_UNCERTAINTY_MEANING[c.uncertainty_rule]})   [{c.log_beta.provenance}]",
            *(_published_value_line(v) for v in c.values)]


def _complex_lines(detail: SystemDetail) -> list[str]:
    if not detail.complex_values:
        return []
    lines = ["", "Complexes with several published values (log β at 25 °C, I = 0; * the one used, "
                 "x rejected as wrong, with why)"]
    for c in detail.complex_values:
        lines += _complex_line(c)
    return lines


def _uv_and_flag_lines(detail: SystemDetail) -> list[str]:
    lines = ["", "UV cut-off"]
    if detail.uv_cutoff is None:
        lines.append("  not listed")
    else:
        uv = detail.uv_cutoff
        conc = f" at {uv.conc_mol_l:g} mol/L" if uv.conc_mol_l is not None else ""
        lines.append(f"  {_value(uv.uv_cutoff_nm)}{conc}")
        if uv.note:
            lines.append(f"    {uv.note}")
    lines += ["", "Flags"]
    if not detail.flags:
        lines.append("  none listed")
    for f in detail.flags:
        provenance = f"{f.source_key} ({f.source_kind})" if f.source_key else f.citation
        lines.append(f"  {f.flag}: {f.detail}   [{provenance}]")
    return lines


def _source_lines(detail: SystemDetail) -> list[str]:
    lines = ["", "Sources"]
    if not detail.sources:
        lines.append("  no published source: every value here is from memory, common practice or demo")
    lines += [f"  {key}: {citation}" for key, citation in detail.sources.items()]
    if detail.has_cautions:
        lines += ["", SAFETY_NOTICE]
    return lines


def format_system_detail(detail: SystemDetail) -> str:
    """The readable page of ``poise catalog SYSTEM``: header, steps, reagents, metals, UV, flags, sources."""
    sections = (_header_lines, _step_lines, _reagent_lines, _metal_lines, _complex_lines, _uv_and_flag_lines,
                _source_lines)
    return "\n".join(line for section in sections for line in section(detail))


def format_search(hits: tuple[SearchHit, ...], text: str) -> str:
    """The readable hit list of ``poise catalog --search``."""
    if not hits:
        return (f"No system or reagent matches {text!r}. 'poise catalog' lists every system.")
    lines = [f"{len(hits)} match(es) for {text!r}", ""]
    header = f"{'kind':<8} {'id':<22} {'name':<44} {'system':<17} matched"
    lines += [header, "-" * len(header)]
    for hit in hits:
        lines.append(f"{hit.kind:<8} {hit.record_id:<22} {hit.name[:44]:<44} {hit.system_id or '-':<17} "
                     f"{hit.matched_name} ({hit.match})")
    return "\n".join(lines)
