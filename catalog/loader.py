"""Read, validate and index the catalog tables.

:func:`load_catalog` is the only door into the data.  It reads every CSV table, checks
every row against the rules of the format (see DEVELOPERS.md, "The catalog"), collects
*all* problems as ``file:line: column: expected ..., got ...`` and raises one
:class:`CatalogError` listing them, or returns a frozen :class:`~catalog.records.Catalog`.
"""

from __future__ import annotations

import csv
import io
import math
import re
from functools import lru_cache
from importlib import resources
from pathlib import Path

from catalog.records import (
    FLAG_VOCABULARY,
    HAZARD_FLAG_VOCABULARY,
    QUALITATIVE_BINDING,
    SOURCE_KINDS,
    UNKEYED_SOURCE_KINDS,
    Catalog,
    Flag,
    Ion,
    MetalBinding,
    PhStandard,
    Reagent,
    Source,
    Sourced,
    Step,
    System,
    UvCutoff,
)

TABLE_COLUMNS: dict[str, tuple[str, ...]] = {
    "sources.csv": ("source_key", "citation", "doi_or_isbn"),
    "systems.csv": (
        "system_id", "name", "aliases", "charge_most_protonated", "hazardous",
        "hazard_note", "notes",
    ),
    "steps.csv": (
        "system_id", "step", "pka_25c", "pka_source", "pka_source_kind", "dh_kj_mol",
        "dh_source", "dh_source_kind", "dcp_j_k_mol", "dcp_source", "dcp_source_kind",
        "t_min_c", "t_max_c", "note",
    ),
    "ions.csv": ("ion_id", "name", "charge"),
    "reagents.csv": (
        "reagent_id", "name", "formula", "aliases", "system_id", "system_units", "ions",
        "hydrate_water", "molar_mass_g_mol", "physical_form", "solubility_g_l_25c",
        "solubility_source", "solubility_source_kind", "purity_fraction",
        "purity_source_kind", "demo_price_per_kg", "price_source_kind", "hazard_flags",
        "cautions",
    ),
    "metal_binding.csv": (
        "system_id", "metal", "ligand_species_charge", "log_k", "ionic_strength_mol_l",
        "temperature_c", "qualitative", "source", "source_kind", "note",
    ),
    "uv_cutoff.csv": ("system_id", "uv_cutoff_nm", "conc_mol_l", "source", "source_kind", "note"),
    "flags.csv": ("system_id", "flag", "detail", "source", "source_kind"),
    "ph_standards.csv": ("standard_id", "name", "components_mol_kg", "preparation", "note"),
    "ph_standard_values.csv": ("standard_id", "temperature_c", "ph", "source", "source_kind"),
}

#: Tables that must exist; the compatibility tables may be absent in a small catalog.
REQUIRED_TABLES = ("sources.csv", "systems.csv", "steps.csv", "ions.csv", "reagents.csv")

PHYSICAL_FORMS = ("solid", "liquid")
ID_PATTERN = re.compile(r"^[a-z0-9][a-z0-9_]*$")


class CatalogError(ValueError):
    """The catalog tables break a rule; the message lists every problem found."""

    def __init__(self, problems: list[str]):
        self.problems = list(problems)
        head = f"the catalog has {len(problems)} problem(s):"
        super().__init__("\n  ".join([head, *problems]))


def normalize_name(name: str) -> str:
    """Fold a user-typed name for lookup: case, spaces, hyphens and hydrate dots.

    ``"Na2HPO4 · 7H2O"``, ``"na2hpo4.7h2o"`` and ``"NA2HPO4*7H2O"`` all fold to the
    same key; ``"Tris-HCl"`` and ``"tris hcl"`` too.
    """
    folded = name.casefold().strip()
    for dot in ("·", "•", "∙", "*"):
        folded = folded.replace(dot, ".")
    return re.sub(r"[\s\-_,]+", "", folded)


class _Problems:
    def __init__(self) -> None:
        self.items: list[str] = []

    def add(self, table: str, line: int | None, column: str, message: str) -> None:
        where = f"{table}:{line}" if line is not None else table
        self.items.append(f"{where}: {column}: {message}")


class _Row:
    """One CSV row with typed getters that report problems instead of raising."""

    def __init__(self, table: str, line: int, values: dict[str, str], problems: _Problems):
        self.table, self.line, self.values, self.problems = table, line, values, problems

    def text(self, column: str, required: bool = False) -> str:
        value = (self.values.get(column) or "").strip()
        if required and not value:
            self.problem(column, "expected a value, got an empty cell")
        return value

    def problem(self, column: str, message: str) -> None:
        self.problems.add(self.table, self.line, column, message)

    def number(self, column: str, required: bool = True, minimum: float | None = None,
               maximum: float | None = None, positive: bool = False) -> float | None:
        raw = self.text(column)
        if not raw:
            if required:
                self.problem(column, "expected a number, got an empty cell")
            return None
        try:
            value = float(raw)
        except ValueError:
            self.problem(column, f"expected a number, got {raw!r}")
            return None
        if not math.isfinite(value):
            self.problem(column, f"expected a finite number, got {raw!r}")
            return None
        if positive and value <= 0:
            self.problem(column, f"expected a number > 0, got {raw!r}")
            return None
        if minimum is not None and value < minimum:
            self.problem(column, f"expected a number >= {minimum:g}, got {raw!r}")
            return None
        if maximum is not None and value > maximum:
            self.problem(column, f"expected a number <= {maximum:g}, got {raw!r}")
            return None
        return value

    def integer(self, column: str, required: bool = True, minimum: int | None = None) -> int | None:
        raw = self.text(column)
        if not raw:
            if required:
                self.problem(column, "expected a whole number, got an empty cell")
            return None
        try:
            value = int(raw.lstrip("+"))
        except ValueError:
            self.problem(column, f"expected a whole number, got {raw!r}")
            return None
        if minimum is not None and value < minimum:
            self.problem(column, f"expected a whole number >= {minimum}, got {raw!r}")
            return None
        return value

    def boolean(self, column: str) -> bool:
        raw = self.text(column).lower()
        if raw in ("true", "false"):
            return raw == "true"
        self.problem(column, f"expected true or false, got {raw!r}")
        return False

    def choice(self, column: str, allowed: tuple[str, ...], required: bool = True) -> str:
        raw = self.text(column)
        if not raw and not required:
            return ""
        if raw not in allowed:
            self.problem(column, f"expected one of {', '.join(allowed)}, got {raw!r}")
        return raw

    def listing(self, column: str) -> tuple[str, ...]:
        return tuple(part.strip() for part in self.text(column).split(";") if part.strip())

    def sourced(self, value_column: str, source_column: str, kind_column: str,
                sources: dict[str, Source], required: bool = True,
                **limits) -> Sourced | None:
        """A number with its source key and source kind, checked against the source table."""
        value = self.number(value_column, required=required, **limits)
        if value is None:
            return None
        return Sourced(value, *self.provenance(source_column, kind_column, sources, value_column))

    def provenance(self, source_column: str, kind_column: str, sources: dict[str, Source],
                   what: str) -> tuple[str, str]:
        key = self.text(source_column)
        kind = self.text(kind_column)
        if kind not in SOURCE_KINDS:
            self.problem(kind_column, f"expected a source kind for {what} "
                         f"({', '.join(SOURCE_KINDS)}), got {kind!r}")
        if key:
            if key not in sources:
                self.problem(source_column, f"expected a key of sources.csv for {what}, got {key!r}")
        elif kind and kind not in UNKEYED_SOURCE_KINDS:
            self.problem(source_column, f"expected a source key for {what} (only "
                         f"{', '.join(UNKEYED_SOURCE_KINDS)} may stand without one), got an empty cell")
        return key, kind


def _read_table(data_dir: Path | resources.abc.Traversable, table: str,
                problems: _Problems) -> list[_Row] | None:
    path = data_dir / table
    if not path.is_file():
        if table in REQUIRED_TABLES:
            problems.add(table, None, "-", "expected this table in the catalog, it is missing")
        return None
    text = path.read_text(encoding="utf-8")
    reader = csv.DictReader(io.StringIO(text))
    header = tuple(reader.fieldnames or ())
    missing = [c for c in TABLE_COLUMNS[table] if c not in header]
    if missing:
        problems.add(table, 1, ",".join(missing),
                     f"expected columns {', '.join(TABLE_COLUMNS[table])}, got {', '.join(header)}")
        return None
    rows = []
    for index, values in enumerate(reader):
        line = reader.line_num
        if None in values:
            problems.add(table, line, "-", f"expected {len(header)} cells, got more")
        rows.append(_Row(table, line, values, problems))
        del index
    return rows


def _parse_ions(row: _Row, ions: dict[str, Ion]) -> tuple[tuple[str, int], ...]:
    parsed = []
    for part in row.listing("ions"):
        ion_id, _, count = part.partition(":")
        ion_id = ion_id.strip()
        if ion_id not in ions:
            row.problem("ions", f"expected ion ids from ions.csv ({', '.join(ions)}), got {ion_id!r}")
            continue
        try:
            n = int(count)
        except ValueError:
            row.problem("ions", f"expected ion:count with a whole count, got {part!r}")
            continue
        if n <= 0:
            row.problem("ions", f"expected a count >= 1, got {part!r}")
            continue
        parsed.append((ion_id, n))
    return tuple(parsed)


def _index_names(entries: list[tuple[str, str, tuple[str, ...], int, str]],
                 problems: _Problems) -> dict[str, str]:
    """Name index: folded name -> id, for ids, names and aliases; collisions are problems."""
    index: dict[str, str] = {}
    for record_id, table, names, line, column in entries:
        for name in names:
            key = normalize_name(name)
            if not key:
                continue
            other = index.get(key)
            if other is not None and other != record_id:
                problems.add(table, line, column,
                             f"expected names unique across the table, got {name!r} which also names {other!r}")
            else:
                index[key] = record_id
    return index


def read_catalog(data_dir: Path | str) -> Catalog:
    """Read and validate the catalog tables in ``data_dir`` (a folder of CSV files).

    Raises
    ------
    CatalogError
        listing every problem found, as ``file:line: column: expected ..., got ...``.
    """
    return _build(Path(data_dir))


@lru_cache(maxsize=1)
def _load_shipped() -> Catalog:
    return _build(resources.files("catalog") / "data")


def load_catalog(data_dir: Path | str | None = None) -> Catalog:
    """The catalog: the shipped one (cached) or the one in ``data_dir``."""
    if data_dir is None:
        return _load_shipped()
    return read_catalog(data_dir)


def _build(data_dir) -> Catalog:
    problems = _Problems()
    tables = {name: _read_table(data_dir, name, problems) for name in TABLE_COLUMNS}

    sources: dict[str, Source] = {}
    for row in tables["sources.csv"] or []:
        key = row.text("source_key", required=True)
        citation = row.text("citation", required=True)
        if key in sources:
            row.problem("source_key", f"expected a unique key, got {key!r} twice")
        sources[key] = Source(key, citation, row.text("doi_or_isbn"))

    ions: dict[str, Ion] = {}
    for row in tables["ions.csv"] or []:
        ion_id = row.text("ion_id", required=True)
        charge = row.integer("charge")
        if charge == 0:
            row.problem("charge", "expected a non-zero charge, got 0")
        if ion_id in ions:
            row.problem("ion_id", f"expected a unique id, got {ion_id!r} twice")
        ions[ion_id] = Ion(ion_id, row.text("name", required=True), charge or 0)

    steps_by_system: dict[str, list[tuple[int, Step, _Row]]] = {}
    for row in tables["steps.csv"] or []:
        system_id = row.text("system_id", required=True)
        step_no = row.integer("step", minimum=1)
        pka = row.sourced("pka_25c", "pka_source", "pka_source_kind", sources,
                          minimum=-3.0, maximum=17.0)
        dh = row.sourced("dh_kj_mol", "dh_source", "dh_source_kind", sources,
                         minimum=-200.0, maximum=200.0)
        dcp = row.sourced("dcp_j_k_mol", "dcp_source", "dcp_source_kind", sources,
                          minimum=-2000.0, maximum=2000.0)
        t_min = row.number("t_min_c", minimum=-10.0, maximum=150.0)
        t_max = row.number("t_max_c", minimum=-10.0, maximum=150.0)
        if t_min is not None and t_max is not None and t_min >= t_max:
            row.problem("t_max_c", f"expected t_max_c > t_min_c ({t_min:g}), got {t_max:g}")
        if None in (step_no, pka, dh, dcp, t_min, t_max):
            continue
        step = Step(system_id, step_no, pka, dh, dcp, t_min, t_max, row.text("note"))
        steps_by_system.setdefault(system_id, []).append((step_no, step, row))

    systems: dict[str, System] = {}
    system_rows: dict[str, _Row] = {}
    for row in tables["systems.csv"] or []:
        system_id = row.text("system_id", required=True)
        if system_id and not ID_PATTERN.match(system_id):
            row.problem("system_id", f"expected a lowercase slug (a-z, 0-9, _), got {system_id!r}")
        if system_id in systems:
            row.problem("system_id", f"expected a unique id, got {system_id!r} twice")
        z0 = row.integer("charge_most_protonated")
        hazardous = row.boolean("hazardous")
        hazard_note = row.text("hazard_note")
        if hazardous and not hazard_note:
            row.problem("hazard_note", "expected a caution for a hazardous system, got an empty cell")
        entries = sorted(steps_by_system.get(system_id, []), key=lambda item: item[0])
        numbers = [n for n, _, _ in entries]
        if not entries:
            row.problem("system_id", f"expected at least one row in steps.csv for {system_id!r}, got none")
        elif numbers != list(range(1, len(numbers) + 1)):
            row.problem("system_id", f"expected steps numbered 1..{len(numbers)} in steps.csv, got {numbers}")
        pkas = [s.pka_25c.value for _, s, _ in entries]
        for (_, _, step_row), previous, current in zip(entries[1:], pkas, pkas[1:]):
            if current <= previous:
                step_row.problem("pka_25c", f"expected pKa above the previous step's {previous:g}, got {current:g}")
        systems[system_id] = System(
            system_id=system_id,
            name=row.text("name", required=True),
            aliases=row.listing("aliases"),
            charge_most_protonated=z0 if z0 is not None else 0,
            hazardous=hazardous,
            hazard_note=hazard_note,
            notes=row.text("notes"),
            steps=tuple(s for _, s, _ in entries),
        )
        system_rows[system_id] = row
    for system_id, entries in steps_by_system.items():
        if system_id not in systems:
            for _, _, row in entries:
                row.problem("system_id", f"expected a system of systems.csv, got {system_id!r}")

    reagents: dict[str, Reagent] = {}
    reagent_rows: dict[str, _Row] = {}
    for row in tables["reagents.csv"] or []:
        reagent_id = row.text("reagent_id", required=True)
        if reagent_id and not ID_PATTERN.match(reagent_id):
            row.problem("reagent_id", f"expected a lowercase slug (a-z, 0-9, _), got {reagent_id!r}")
        if reagent_id in reagents:
            row.problem("reagent_id", f"expected a unique id, got {reagent_id!r} twice")
        system_id = row.text("system_id") or None
        units = 0
        if system_id is not None:
            if system_id not in systems:
                row.problem("system_id", f"expected a system of systems.csv or an empty cell, got {system_id!r}")
            units = row.integer("system_units", minimum=1) or 0
        elif row.text("system_units") not in ("", "0"):
            row.problem("system_units", "expected an empty cell for a reagent with no system, "
                        f"got {row.text('system_units')!r}")
        reagent_ions = _parse_ions(row, ions)
        ion_charge = sum(ions[i].charge * n for i, n in reagent_ions)
        protons_removed = 0
        if system_id is None:
            if not reagent_ions:
                row.problem("ions", "expected ions for a reagent with no system, got none")
            elif ion_charge != 0:
                row.problem("ions", f"expected ions that sum to charge 0, got {ion_charge:+d}")
        else:
            # H may stand beside a system for a proton more acidic than any listed step
            # (PIPES free acid, H2L: its first step, pK below 3, is taken as strong).
            if any(i == "OH" for i, _ in reagent_ions):
                row.problem("ions", "expected no OH among the ions of a reagent that carries a system")
            system = systems.get(system_id)
            if system is not None and units:
                system_part_charge = -ion_charge
                protons_removed = units * system.charge_most_protonated - system_part_charge
                if not 0 <= protons_removed <= units * system.n_steps:
                    row.problem("ions", f"expected ions that leave {system_id} in a listed protonation "
                                f"state (0..{units * system.n_steps} protons removed), got {protons_removed}")
        hydrate = row.integer("hydrate_water", required=False, minimum=0)
        molar_mass = row.number("molar_mass_g_mol", positive=True)
        physical_form = row.choice("physical_form", PHYSICAL_FORMS)
        solubility = row.sourced("solubility_g_l_25c", "solubility_source", "solubility_source_kind",
                                 sources, required=False, positive=True)
        purity = row.number("purity_fraction", minimum=0.1, maximum=1.0)
        purity_kind = row.choice("purity_source_kind", SOURCE_KINDS)
        price_value = row.number("demo_price_per_kg", required=False, minimum=0.0)
        price = None
        if price_value is not None:
            price_kind = row.choice("price_source_kind", SOURCE_KINDS)
            price = Sourced(price_value, "", price_kind)
        hazard_flags = row.listing("hazard_flags")
        for flag in hazard_flags:
            if flag not in HAZARD_FLAG_VOCABULARY:
                row.problem("hazard_flags", f"expected flags from {', '.join(HAZARD_FLAG_VOCABULARY)}, got {flag!r}")
        cautions = row.text("cautions")
        if hazard_flags and not cautions:
            row.problem("cautions", "expected cautions for a reagent with hazard flags, got an empty cell")
        reagents[reagent_id] = Reagent(
            reagent_id=reagent_id,
            name=row.text("name", required=True),
            formula=row.text("formula", required=True),
            aliases=row.listing("aliases"),
            system_id=system_id,
            system_units=units,
            ions=reagent_ions,
            hydrate_water=hydrate or 0,
            molar_mass_g_mol=molar_mass or 0.0,
            physical_form=physical_form,
            solubility_g_l_25c=solubility,
            purity_fraction=purity or 1.0,
            purity_source_kind=purity_kind,
            demo_price_per_kg=price,
            hazard_flags=hazard_flags,
            cautions=cautions,
            protons_removed=protons_removed,
        )
        reagent_rows[reagent_id] = row

    metal_binding: list[MetalBinding] = []
    for row in tables["metal_binding.csv"] or []:
        system_id = row.text("system_id", required=True)
        if system_id not in systems:
            row.problem("system_id", f"expected a system of systems.csv, got {system_id!r}")
        log_k = row.sourced("log_k", "source", "source_kind", sources, required=False,
                            minimum=-5.0, maximum=40.0)
        qualitative = row.choice("qualitative", QUALITATIVE_BINDING, required=log_k is None)
        key, kind = row.provenance("source", "source_kind", sources, "the binding statement")
        charge = row.integer("ligand_species_charge", required=log_k is not None)
        metal_binding.append(MetalBinding(
            system_id=system_id, metal=row.text("metal", required=True),
            ligand_species_charge=charge if charge is not None else 0, log_k=log_k,
            ionic_strength_mol_l=row.number("ionic_strength_mol_l", required=False, minimum=0.0),
            temperature_c=row.number("temperature_c", required=False),
            qualitative=qualitative, source=key, source_kind=kind, note=row.text("note"),
        ))

    uv_cutoffs: dict[str, UvCutoff] = {}
    for row in tables["uv_cutoff.csv"] or []:
        system_id = row.text("system_id", required=True)
        if system_id not in systems:
            row.problem("system_id", f"expected a system of systems.csv, got {system_id!r}")
        if system_id in uv_cutoffs:
            row.problem("system_id", f"expected one UV cut-off per system, got {system_id!r} twice")
        cutoff = row.sourced("uv_cutoff_nm", "source", "source_kind", sources, minimum=150.0, maximum=500.0)
        if cutoff is not None:
            uv_cutoffs[system_id] = UvCutoff(system_id, cutoff,
                                             row.number("conc_mol_l", required=False, positive=True),
                                             row.text("note"))

    flags: list[Flag] = []
    for row in tables["flags.csv"] or []:
        system_id = row.text("system_id", required=True)
        if system_id not in systems:
            row.problem("system_id", f"expected a system of systems.csv, got {system_id!r}")
        flag = row.choice("flag", FLAG_VOCABULARY)
        key, kind = row.provenance("source", "source_kind", sources, "the flag")
        flags.append(Flag(system_id, flag, row.text("detail"), key, kind))

    standard_values: dict[str, list[tuple[float, Sourced]]] = {}
    for row in tables["ph_standard_values.csv"] or []:
        standard_id = row.text("standard_id", required=True)
        temperature = row.number("temperature_c", minimum=0.0, maximum=95.0)
        value = row.sourced("ph", "source", "source_kind", sources, minimum=0.0, maximum=14.0)
        if temperature is not None and value is not None:
            standard_values.setdefault(standard_id, []).append((temperature, value))
    ph_standards: dict[str, PhStandard] = {}
    for row in tables["ph_standards.csv"] or []:
        standard_id = row.text("standard_id", required=True)
        components = []
        for part in row.listing("components_mol_kg"):
            reagent_id, _, molality = part.partition(":")
            reagent_id = reagent_id.strip()
            if reagent_id not in reagents:
                row.problem("components_mol_kg", f"expected reagent ids of reagents.csv, got {reagent_id!r}")
                continue
            try:
                components.append((reagent_id, float(molality)))
            except ValueError:
                row.problem("components_mol_kg", f"expected reagent:molality, got {part!r}")
        if standard_id not in standard_values:
            row.problem("standard_id", f"expected rows in ph_standard_values.csv for {standard_id!r}, got none")
        ph_standards[standard_id] = PhStandard(
            standard_id, row.text("name", required=True), tuple(components),
            tuple(sorted(standard_values.get(standard_id, []), key=lambda item: item[0])),
            row.text("preparation"), row.text("note"))
    for standard_id in standard_values:
        if standard_id not in ph_standards:
            problems.add("ph_standard_values.csv", None, "standard_id",
                         f"expected a standard of ph_standards.csv, got {standard_id!r}")

    reagent_names = _index_names(
        [(r.reagent_id, "reagents.csv", (r.reagent_id, r.name, *r.aliases),
          reagent_rows[r.reagent_id].line, "aliases") for r in reagents.values()], problems)
    # A formula names its reagent too, unless two reagents share it (isomers such as
    # TAPS and DIPSO, C7H17NO6S) or it is already somebody's name.
    formula_keys: dict[str, list[str]] = {}
    for r in reagents.values():
        formula_keys.setdefault(normalize_name(r.formula), []).append(r.reagent_id)
    for key, owners in formula_keys.items():
        if len(owners) == 1 and key not in reagent_names:
            reagent_names[key] = owners[0]
    system_names = _index_names(
        [(s.system_id, "systems.csv", (s.system_id, s.name, *s.aliases),
          system_rows[s.system_id].line, "aliases") for s in systems.values()], problems)

    if problems.items:
        raise CatalogError(problems.items)
    return Catalog(
        sources=sources, systems=systems, ions=ions, reagents=reagents,
        metal_binding=tuple(metal_binding), uv_cutoffs=uv_cutoffs, flags=tuple(flags),
        reagent_names=reagent_names, system_names=system_names, ph_standards=ph_standards,
    )
