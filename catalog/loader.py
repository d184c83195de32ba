"""Read, validate and index the catalog tables.

:func:`load_catalog` is the only door into the data.  It reads every CSV table (one
reader per table in :mod:`catalog.tables`), checks across tables, collects *all* problems
as ``file:line: column: expected ..., got ...`` and raises one :class:`CatalogError`
listing them, or returns a frozen :class:`~catalog.records.Catalog`.
"""

from __future__ import annotations

from functools import lru_cache
from importlib import resources
from importlib.resources.abc import Traversable
from pathlib import Path

from catalog.names import normalize_name, reagent_name_index, system_name_index
from catalog.problems import CatalogError, ProblemLog
from catalog.records import Catalog
from catalog.rows import Row, read_table
from catalog.tables import (
    complex_values,
    complexes,
    flags,
    gases,
    ion_size,
    ions,
    metal_binding,
    ph_standard_values,
    ph_standards,
    polymerisation,
    reagents,
    solids,
    sources,
    step_values,
    steps,
    systems,
    uv_cutoff,
)

#: Every table of the catalog and the columns it must have, in the order they are read.
TABLE_COLUMNS: dict[str, tuple[str, ...]] = {
    sources.TABLE: sources.COLUMNS,
    systems.TABLE: systems.COLUMNS,
    steps.TABLE: steps.COLUMNS,
    step_values.TABLE: step_values.COLUMNS,
    ions.TABLE: ions.COLUMNS,
    reagents.TABLE: reagents.COLUMNS,
    metal_binding.TABLE: metal_binding.COLUMNS,
    uv_cutoff.TABLE: uv_cutoff.COLUMNS,
    flags.TABLE: flags.COLUMNS,
    ph_standards.TABLE: ph_standards.COLUMNS,
    ph_standard_values.TABLE: ph_standard_values.COLUMNS,
    polymerisation.TABLE: polymerisation.COLUMNS,
    solids.TABLE: solids.COLUMNS,
    complexes.TABLE: complexes.COLUMNS,
    ion_size.TABLE: ion_size.COLUMNS,
    complex_values.TABLE: complex_values.COLUMNS,
    gases.TABLE: gases.COLUMNS,
}

#: Tables that must exist; the compatibility tables may be absent in a small catalog.
REQUIRED_TABLES = (sources.TABLE, systems.TABLE, steps.TABLE, step_values.TABLE, ions.TABLE, reagents.TABLE)

__all__ = ["TABLE_COLUMNS", "REQUIRED_TABLES", "CatalogError", "load_catalog", "normalize_name", "read_catalog"]


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


def _build(data_dir: Path | Traversable) -> Catalog:
    """Read every table, each against the tables it refers to; raise once if anything is wrong."""
    problems = ProblemLog()
    tables = {table: read_table(data_dir / table, columns, problems, required=table in REQUIRED_TABLES)
              for table, columns in TABLE_COLUMNS.items()}

    def rows(table: str) -> list[Row]:
        return tables[table] or []

    source_records = sources.sources_from_rows(rows(sources.TABLE))
    ion_records = ions.ions_from_rows(rows(ions.TABLE))
    values_by_step = step_values.step_values_from_rows(rows(step_values.TABLE), source_records)
    step_values.check_value_steps(values_by_step, steps.step_keys(rows(steps.TABLE)))
    steps_by_system = steps.steps_from_rows(rows(steps.TABLE), values_by_step)
    system_records, system_lines = systems.systems_from_rows(rows(systems.TABLE), steps_by_system)
    steps.check_step_systems(steps_by_system, system_records)
    reagent_records, reagent_lines = reagents.reagents_from_rows(
        rows(reagents.TABLE), system_records, ion_records, source_records)
    binding = metal_binding.metal_binding_from_rows(rows(metal_binding.TABLE), system_records, source_records)
    uv_cutoffs = uv_cutoff.uv_cutoffs_from_rows(rows(uv_cutoff.TABLE), system_records, source_records)
    flag_records = flags.flags_from_rows(rows(flags.TABLE), system_records, source_records)
    ph_values = ph_standard_values.ph_values_from_rows(rows(ph_standard_values.TABLE), source_records)
    standards = ph_standards.ph_standards_from_rows(rows(ph_standards.TABLE), reagent_records, ph_values)
    ph_standard_values.check_value_standards(ph_values, standards)
    polymers = polymerisation.polymerisation_from_rows(rows(polymerisation.TABLE), system_records, source_records)
    solid_records = solids.solids_from_rows(rows(solids.TABLE), ion_records, system_records, source_records)
    complex_records = complexes.complexes_from_rows(rows(complexes.TABLE), system_records, ion_records,
                                                    source_records)
    other_values = complex_values.complex_values_from_rows(rows(complex_values.TABLE), complex_records,
                                                           source_records)
    complex_records = complex_values.select_complex_values(complex_records, other_values)
    sizes = ion_size.ion_sizes_from_rows(rows(ion_size.TABLE), ion_records, system_records, complex_records,
                                         source_records)
    gas_records = gases.gases_from_rows(rows(gases.TABLE), system_records, source_records)
    reagent_names = reagent_name_index(reagent_records, reagent_lines, problems)
    system_names = system_name_index(system_records, system_lines, problems)

    problems.raise_if_any()
    return Catalog(
        sources=source_records, systems=system_records, ions=ion_records, reagents=reagent_records,
        metal_binding=tuple(binding), uv_cutoffs=uv_cutoffs, flags=tuple(flag_records),
        reagent_names=reagent_names, system_names=system_names, ph_standards=standards,
        polymerisation=polymers, solids=solid_records, complexes=tuple(complex_records),
        ion_sizes=sizes, complex_values=other_values,
        gases=gas_records,
    )
