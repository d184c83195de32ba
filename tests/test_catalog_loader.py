"""One test per loader rule, on a copy of the shipped tables with one thing broken.

Each test breaks one cell (or row, or column) of a copy of catalog/data (the
``catalog_copy`` fixture), reads it with ``catalog.read_catalog`` and expects a
``CatalogError`` whose message names the file, the line and the column:
``file:line: column: expected ..., got ...`` (DEVELOPERS.md, "The catalog").
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

import pytest

from catalog import CatalogError, read_catalog


def read_rows(path: Path) -> list[list[str]]:
    return list(csv.reader(io.StringIO(path.read_text(encoding="utf-8"))))


def write_rows(path: Path, rows: list[list[str]]) -> None:
    out = io.StringIO()
    csv.writer(out, lineterminator="\n").writerows(rows)
    path.write_text(out.getvalue(), encoding="utf-8")


def edit(data: Path, table: str, where: dict[str, str], changes: dict[str, str]) -> int:
    """Change cells of the first row matching ``where``; return its line number in the file."""
    path = data / table
    rows = read_rows(path)
    header = rows[0]
    for index, row in enumerate(rows[1:], start=1):
        if all(row[header.index(c)] == v for c, v in where.items()):
            for column, value in changes.items():
                row[header.index(column)] = value
            write_rows(path, rows)
            return index + 1  # line 1 is the header; no cell of the shipped tables spans lines
    raise AssertionError(f"no row of {table} matches {where}")


def line_of(data: Path, table: str, where: dict[str, str]) -> int:
    return edit(data, table, where, {})


def delete_rows(data: Path, table: str, where: dict[str, str]) -> None:
    path = data / table
    rows = read_rows(path)
    header = rows[0]
    write_rows(path, [rows[0]] + [r for r in rows[1:] if not all(r[header.index(c)] == v for c, v in where.items())])


def duplicate_row(data: Path, table: str, where: dict[str, str]) -> int:
    """Append a copy of the matching row; return the copy's line number."""
    path = data / table
    rows = read_rows(path)
    header = rows[0]
    row = next(r for r in rows[1:] if all(r[header.index(c)] == v for c, v in where.items()))
    rows.append(list(row))
    write_rows(path, rows)
    return len(rows)


def drop_column(data: Path, table: str, column: str) -> None:
    path = data / table
    rows = read_rows(path)
    k = rows[0].index(column)
    write_rows(path, [r[:k] + r[k + 1:] for r in rows])


def problems_of(data: Path) -> str:
    with pytest.raises(CatalogError) as caught:
        read_catalog(data)
    return str(caught.value)


def test_the_unbroken_copy_reads(catalog_copy):
    # Control: the helpers themselves do not break the tables.
    edit(catalog_copy, "systems.csv", {"system_id": "tris"}, {})
    assert len(read_catalog(catalog_copy).systems) >= 40


ACES_PKA = {"system_id": "aces", "step": "1", "quantity": "pka_25c"}


def test_measured_value_without_source_key(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"source": ""})
    assert f"step_values.csv:{line}: source: expected a source key for value" in problems_of(catalog_copy)


def test_unknown_source_key(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", {**ACES_PKA, "quantity": "dh_kj_mol"}, {"source": "nosuch1999"})
    assert (f"step_values.csv:{line}: source: expected a key of sources.csv for value, got 'nosuch1999'"
            in problems_of(catalog_copy))


def test_bad_source_kind(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"source_kind": "guesswork"})
    message = problems_of(catalog_copy)
    assert f"step_values.csv:{line}: source_kind: expected a source kind for value" in message
    assert "got 'guesswork'" in message


def test_demo_kind_is_not_a_step_value(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"source": "", "source_kind": "demo"})
    assert (f"step_values.csv:{line}: source_kind: expected one of measured-review, measured, handbook, "
            "computed, estimated, from-memory, common-practice for a step value, got 'demo'" in problems_of(catalog_copy))


def test_non_numeric_pka(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", {"system_id": "mops", "step": "1", "quantity": "pka_25c"},
                {"value": "seven"})
    assert f"step_values.csv:{line}: value: expected a number, got 'seven'" in problems_of(catalog_copy)


def test_unknown_quantity(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"quantity": "pkb"})
    assert (f"step_values.csv:{line}: quantity: expected one of pka_25c, dh_kj_mol, dcp_j_k_mol, got 'pkb'"
            in problems_of(catalog_copy))


def test_negative_uncertainty(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"uncertainty": "-0.01"})
    assert f"step_values.csv:{line}: uncertainty: expected a number > 0, got '-0.01'" in problems_of(catalog_copy)


def test_value_without_method(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"method": ""})
    assert f"step_values.csv:{line}: method: expected a value, got an empty cell" in problems_of(catalog_copy)


def test_chosen_must_be_true_rejected_or_empty(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"chosen": "yes", "why": "x"})
    assert f"step_values.csv:{line}: chosen: expected one of true, rejected, got 'yes'" in problems_of(catalog_copy)


def test_a_constant_needs_a_value_not_rejected(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"chosen": "rejected", "why": "judged wrong"})
    assert (f"step_values.csv:{line}: chosen: expected a value not marked rejected for aces step 1 pka_25c, "
            "got only rejected ones") in problems_of(catalog_copy)


def test_chosen_value_must_say_why(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"chosen": "true"})
    assert (f"step_values.csv:{line}: why: expected the reason a value marked chosen is chosen against the "
            "policy, got an empty cell" in problems_of(catalog_copy))


def test_two_values_marked_chosen(catalog_copy):
    # TAPSO ΔH°: the emf-derived value is marked chosen; marking the calorimetric one too is an error.
    marked = line_of(catalog_copy, "step_values.csv", {"system_id": "tapso", "quantity": "dh_kj_mol", "chosen": "true"})
    other = edit(catalog_copy, "step_values.csv", {"system_id": "tapso", "quantity": "dh_kj_mol",
                                                    "source": "tca2008_taps_tapso"}, {"chosen": "true", "why": "x"})
    first, second = sorted((marked, other))  # reported on the later row, naming the earlier
    assert (f"step_values.csv:{second}: chosen: expected at most one value marked chosen for tapso step 1 "
            f"dh_kj_mol, got another (line {first})" in problems_of(catalog_copy))


def test_one_value_per_source(catalog_copy):
    first = line_of(catalog_copy, "step_values.csv", {**ACES_PKA, "source": "roy1997_aces_ches"})
    line = duplicate_row(catalog_copy, "step_values.csv", {**ACES_PKA, "source": "roy1997_aces_ches"})
    assert (f"step_values.csv:{line}: source: expected one value per source for aces step 1 pka_25c, got "
            f"'roy1997_aces_ches' again (line {first})" in problems_of(catalog_copy))


def test_value_of_a_step_that_does_not_exist(catalog_copy):
    line = edit(catalog_copy, "step_values.csv", ACES_PKA, {"step": "2"})
    message = problems_of(catalog_copy)
    assert f"step_values.csv:{line}: step: expected a step of steps.csv, got 'aces' step 2" in message
    step_line = line_of(catalog_copy, "steps.csv", {"system_id": "aces", "step": "1"})
    assert (f"steps.csv:{step_line}: step: expected at least one pka_25c value in step_values.csv for aces step 1, "
            "got none" in message)


def test_pka_not_increasing(catalog_copy):
    # Phosphate step 2 set below step 1 (2.148): every value of step 2, so the chosen one too.
    rows = read_rows(catalog_copy / "step_values.csv")
    header = rows[0]
    for row in rows[1:]:
        if row[:3] == ["phosphate", "2", "pka_25c"]:
            row[header.index("value")] = "2.0"
    write_rows(catalog_copy / "step_values.csv", rows)
    line = line_of(catalog_copy, "steps.csv", {"system_id": "phosphate", "step": "2"})
    assert (f"steps.csv:{line}: pka_25c: expected pKa above the previous step's 2.148, got 2"
            in problems_of(catalog_copy))


def test_policy_prefers_a_compilation_and_a_marked_value_overrides_it(catalog_copy):
    # Phosphate pKa1: NIST46 (minteq4, measured-review, listed first) is used; the recalled row is not.
    step = read_catalog(catalog_copy).systems["phosphate"].steps[0]
    assert (step.pka_25c.value, step.pka_25c.source) == (2.148, "minteq4")
    assert step.pka_25c.uncertainty_rule == "spread"
    edit(catalog_copy, "step_values.csv", {"system_id": "phosphate", "step": "1", "quantity": "pka_25c",
                                            "source": "llnl"}, {"chosen": "true", "why": "test"})
    step = read_catalog(catalog_copy).systems["phosphate"].steps[0]
    assert (step.pka_25c.value, step.pka_25c.source) == (2.1697, "llnl")
    assert step.pka_25c.reason == "chosen against the policy: test"


def test_system_without_steps(catalog_copy):
    delete_rows(catalog_copy, "steps.csv", {"system_id": "acetate"})
    line = line_of(catalog_copy, "systems.csv", {"system_id": "acetate"})
    assert (f"systems.csv:{line}: system_id: expected at least one row in steps.csv for 'acetate'"
            in problems_of(catalog_copy))


def test_steps_not_numbered_from_one(catalog_copy):
    line = line_of(catalog_copy, "systems.csv", {"system_id": "citrate"})
    edit(catalog_copy, "steps.csv", {"system_id": "citrate", "step": "3"}, {"step": "4"})
    rows = read_rows(catalog_copy / "step_values.csv")
    write_rows(catalog_copy / "step_values.csv", [r[:1] + ["4"] + r[2:] if r[:2] == ["citrate", "3"] else r for r in rows])
    assert (f"systems.csv:{line}: system_id: expected steps numbered 1..3 in steps.csv, got [1, 2, 4]"
            in problems_of(catalog_copy))


def test_duplicate_id(catalog_copy):
    line = duplicate_row(catalog_copy, "reagents.csv", {"reagent_id": "nacl"})
    assert f"reagents.csv:{line}: reagent_id: expected a unique id, got 'nacl' twice" in problems_of(catalog_copy)


def test_alias_colliding_across_records(catalog_copy):
    # HEPES comes before MES in systems.csv, so the collision is reported on MES's line.
    rows = read_rows(catalog_copy / "systems.csv")
    aliases = next(r for r in rows if r[0] == "mes")[rows[0].index("aliases")]
    line = edit(catalog_copy, "systems.csv", {"system_id": "mes"}, {"aliases": aliases + ";HEPES"})
    assert (f"systems.csv:{line}: aliases: expected names unique across the table, got 'HEPES' "
            "which also names 'hepes'" in problems_of(catalog_copy))


def test_strong_reagent_ions_not_charge_neutral(catalog_copy):
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "nacl"}, {"ions": "Na:2;Cl:1"})
    assert f"reagents.csv:{line}: ions: expected ions that sum to charge 0, got +1" in problems_of(catalog_copy)


def test_protonation_state_out_of_range(catalog_copy):
    # Two Na+ on one acetate would need two protons removed; acetate has one step.
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "naoac"}, {"ions": "Na:2"})
    assert (f"reagents.csv:{line}: ions: expected ions that leave acetate in a listed protonation state "
            "(0..1 protons removed), got 2" in problems_of(catalog_copy))


def test_hydroxide_beside_a_system(catalog_copy):
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "naoac"}, {"ions": "Na:2;OH:1"})
    assert (f"reagents.csv:{line}: ions: expected no OH among the ions of a reagent that carries a system"
            in problems_of(catalog_copy))


def test_unknown_ion(catalog_copy):
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "kcl"}, {"ions": "Xx:1;Cl:1"})
    message = problems_of(catalog_copy)
    assert f"reagents.csv:{line}: ions: expected ion ids from ions.csv" in message
    assert "got 'Xx'" in message


def test_unknown_system_in_reagents(catalog_copy):
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "kh2po4"}, {"system_id": "unobtainium"})
    assert (f"reagents.csv:{line}: system_id: expected a system of systems.csv or an empty cell, "
            "got 'unobtainium'" in problems_of(catalog_copy))


def test_missing_column(catalog_copy):
    drop_column(catalog_copy, "uv_cutoff.csv", "source_kind")
    message = problems_of(catalog_copy)
    assert "uv_cutoff.csv:1: source_kind: expected columns system_id, uv_cutoff_nm" in message


def test_missing_required_table(catalog_copy):
    (catalog_copy / "ions.csv").unlink()
    assert "ions.csv: -: expected this table in the catalog, it is missing" in problems_of(catalog_copy)


def test_hazardous_system_without_note(catalog_copy):
    line = edit(catalog_copy, "systems.csv", {"system_id": "cyanide"}, {"hazard_note": ""})
    assert (f"systems.csv:{line}: hazard_note: expected a caution for a hazardous system, got an empty cell"
            in problems_of(catalog_copy))


def test_hazard_flag_not_in_vocabulary(catalog_copy):
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "nacn"}, {"hazard_flags": "acutely_toxic;deadly"})
    message = problems_of(catalog_copy)
    assert f"reagents.csv:{line}: hazard_flags: expected flags from corrosive" in message
    assert "got 'deadly'" in message


def test_hazard_flags_without_cautions(catalog_copy):
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "naoh"}, {"cautions": ""})
    assert (f"reagents.csv:{line}: cautions: expected cautions for a reagent with hazard flags"
            in problems_of(catalog_copy))


def test_several_problems_reported_at_once(catalog_copy):
    first = edit(catalog_copy, "systems.csv", {"system_id": "azide"}, {"hazard_note": ""})
    second = edit(catalog_copy, "reagents.csv", {"reagent_id": "kcl"}, {"ions": "K:1;Cl:2"})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert len(caught.value.problems) == 2
    message = str(caught.value)
    assert message.startswith("the catalog has 2 problem(s):")
    assert f"systems.csv:{first}: hazard_note" in message
    assert f"reagents.csv:{second}: ions: expected ions that sum to charge 0, got -1" in message


def test_metal_binding_source_reported_once(catalog_copy):
    # The source of a log K row is the source of its binding statement: one cell, one problem.
    line = edit(catalog_copy, "metal_binding.csv", {"system_id": "phosphate", "metal": "Ca"},
                {"source": "nosuch1999"})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems == [
        f"metal_binding.csv:{line}: source: expected a key of sources.csv for log_k, got 'nosuch1999'"]


@pytest.mark.parametrize("table", ["flags.csv", "uv_cutoff.csv", "metal_binding.csv"])
def test_empty_system_id_reported_once(catalog_copy, table):
    # An empty cell is one problem, not also an unknown system.
    line = edit(catalog_copy, table, {"system_id": "phosphate"}, {"system_id": ""})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems == [f"{table}:{line}: system_id: expected a value, got an empty cell"]


def test_empty_ph_standard_id_reported_once(catalog_copy):
    values_line = edit(catalog_copy, "ph_standard_values.csv", {"standard_id": "phthalate"}, {"standard_id": ""})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems == [
        f"ph_standard_values.csv:{values_line}: standard_id: expected a value, got an empty cell"]
    # The standard's own row: its empty id is one problem (its values, now orphans, are others).
    line = edit(catalog_copy, "ph_standards.csv", {"standard_id": "phthalate"}, {"standard_id": ""})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert [p for p in caught.value.problems if p.startswith("ph_standards.csv")] == [
        f"ph_standards.csv:{line}: standard_id: expected a value, got an empty cell"]


def test_ph_value_of_unknown_standard_names_its_line(catalog_copy):
    line = edit(catalog_copy, "ph_standard_values.csv", {"standard_id": "phthalate"}, {"standard_id": "nosuch"})
    assert (f"ph_standard_values.csv:{line}: standard_id: expected a standard of ph_standards.csv, got 'nosuch'"
            in problems_of(catalog_copy))


def test_byte_that_is_not_utf8(catalog_copy):
    # A Latin-1 e-acute (0xe9) written into a note: one problem naming the file and line.
    line = line_of(catalog_copy, "systems.csv", {"system_id": "tris"})
    path = catalog_copy / "systems.csv"
    lines = path.read_bytes().split(b"\n")
    lines[line - 1] = lines[line - 1].replace(b"tris,", b"tris,caf\xe9 ", 1)
    path.write_bytes(b"\n".join(lines))
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems == [f"systems.csv:{line}: -: expected UTF-8 text, got the byte 0xe9 at byte 9 "
                                     "of the line"]


def test_cell_longer_than_the_csv_limit(catalog_copy):
    # 200 000 characters in one note (the CSV reader's limit is 131 072): a CatalogError naming the
    # line; the row is not read, so its system is also missing where other tables name it.
    rows = read_rows(catalog_copy / "systems.csv")
    line = next(index for index, row in enumerate(rows, start=1) if row[0] == "tris")
    rows[line - 1][rows[0].index("notes")] = "x" * 200_000
    write_rows(catalog_copy / "systems.csv", rows)
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems[0] == (
        f"systems.csv:{line}: -: expected a CSV row with cells of at most 131072 characters, "
        "got a row the CSV reader refuses (field larger than field limit (131072))")
    assert not [p for p in caught.value.problems if p.startswith("systems.csv") and p != caught.value.problems[0]]


def test_catalog_error_is_a_poise_error_and_a_value_error(catalog_copy):
    from selector.errors import PoiseError

    (catalog_copy / "ions.csv").unlink()
    with pytest.raises(PoiseError):
        read_catalog(catalog_copy)
    with pytest.raises(ValueError):
        read_catalog(catalog_copy)


# One broken cell per rule that the tests above leave out; ``{line}`` is the edited row's line.
CELL_RULES = [
    ("ions.csv", {"ion_id": "Na"}, {"charge": "0"}, "charge: expected a non-zero charge, got 0"),
    ("steps.csv", {"system_id": "phosphate", "step": "1"}, {"t_max_c": "0"},
     "t_max_c: expected t_max_c > t_min_c (0), got 0"),
    ("step_values.csv", {"system_id": "phosphate", "step": "1"}, {"value": "inf"},
     "value: expected a finite number, got 'inf'"),
    ("step_values.csv", {"system_id": "phosphate", "step": "1", "quantity": "dh_kj_mol"}, {"value": "250"},
     "value: expected a number <= 200, got '250'"),
    ("systems.csv", {"system_id": "tris"}, {"system_id": "Tris"},
     "system_id: expected a lowercase slug (a-z, 0-9, _), got 'Tris'"),
    ("systems.csv", {"system_id": "tris"}, {"hazardous": "maybe"}, "hazardous: expected true or false, got 'maybe'"),
    ("reagents.csv", {"reagent_id": "nacl"}, {"physical_form": "gas"},
     "physical_form: expected one of solid, liquid, got 'gas'"),
    ("reagents.csv", {"reagent_id": "nacl"}, {"purity_fraction": "1.5"},
     "purity_fraction: expected a number <= 1, got '1.5'"),
    ("reagents.csv", {"reagent_id": "nacl"}, {"molar_mass_g_mol": "-1"},
     "molar_mass_g_mol: expected a number > 0, got '-1'"),
    ("reagents.csv", {"reagent_id": "nacl"}, {"system_units": "1"},
     "system_units: expected an empty cell for a reagent with no system, got '1'"),
    ("reagents.csv", {"reagent_id": "kcl"}, {"ions": "K:0;Cl:1"}, "ions: expected a count >= 1, got 'K:0'"),
    ("ph_standards.csv", {"standard_id": "phthalate"}, {"components_mol_kg": "nosuch:0.05"},
     "components_mol_kg: expected reagent ids of reagents.csv, got 'nosuch'"),
    ("metal_binding.csv", {"system_id": "phosphate", "metal": "Ca"}, {"log_k": "", "qualitative": ""},
     "qualitative: expected one of none, negligible, weak, moderate, strong, precipitates, got ''"),
    ("flags.csv", {"system_id": "tris"}, {"flag": "sticky"}, "flag: expected one of primary_amine"),
]


@pytest.mark.parametrize(("table", "where", "changes", "expected"), CELL_RULES,
                         ids=[f"{t}:{next(iter(c))}" for t, _, c, _ in CELL_RULES])
def test_cell_rule(catalog_copy, table, where, changes, expected):
    line = edit(catalog_copy, table, where, changes)
    assert f"{table}:{line}: {expected}" in problems_of(catalog_copy)


def test_duplicate_source_key(catalog_copy):
    line = duplicate_row(catalog_copy, "sources.csv", {"source_key": "crc_inorg"})
    assert (f"sources.csv:{line}: source_key: expected a unique key, got 'crc_inorg' twice"
            in problems_of(catalog_copy))


def test_second_uv_cutoff_of_a_system(catalog_copy):
    line = duplicate_row(catalog_copy, "uv_cutoff.csv", {"system_id": "phosphate"})
    assert (f"uv_cutoff.csv:{line}: system_id: expected one UV cut-off per system, got 'phosphate' twice"
            in problems_of(catalog_copy))


def test_ph_standard_without_values(catalog_copy):
    delete_rows(catalog_copy, "ph_standard_values.csv", {"standard_id": "phthalate"})
    line = line_of(catalog_copy, "ph_standards.csv", {"standard_id": "phthalate"})
    assert (f"ph_standards.csv:{line}: standard_id: expected rows in ph_standard_values.csv for 'phthalate', "
            "got none" in problems_of(catalog_copy))


def test_row_with_more_cells_than_the_header(catalog_copy):
    rows = read_rows(catalog_copy / "ions.csv")
    rows[1].append("extra")
    write_rows(catalog_copy / "ions.csv", rows)
    assert "ions.csv:2: -: expected 3 cells, got more" in problems_of(catalog_copy)


def test_second_polymerisation_limit_of_a_system(catalog_copy):
    line = duplicate_row(catalog_copy, "polymerisation.csv", {"system_id": "borate"})
    assert (f"polymerisation.csv:{line}: system_id: expected one polymerisation limit per system, got 'borate' twice"
            in problems_of(catalog_copy))


def test_polymerisation_limit_must_be_a_positive_sourced_number(catalog_copy):
    line = edit(catalog_copy, "polymerisation.csv", {"system_id": "borate"}, {"above_mol_l": "-1"})
    assert f"polymerisation.csv:{line}: above_mol_l: expected" in problems_of(catalog_copy)
