"""`poise book` and `--save NAME` from the command line: the flows a lab uses and every refusal (exit 2, one line)."""

from __future__ import annotations

import json
import sqlite3

import pytest
from cli_helpers import run

from selector.book import EXPORT_FORMATS
from selector.cli.choices import BOOK_EXPORT_FORMATS
from selector.safety import SAFETY_NOTICE

RECIPE = ["recipe", "tris", "--ph", "7.4", "--temperature", "37", "--conc", "50mM", "--route", "titrate"]


@pytest.fixture
def book_file(tmp_path, monkeypatch):
    """An empty book named by POISE_BOOK (as a lab would set it once)."""
    path = tmp_path / "book.sqlite3"
    monkeypatch.setenv("POISE_BOOK", str(path))
    return path


def one_line_error(code, out, err, fragment):
    assert code == 2, (out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("poise: error:") and "Traceback" not in err, err
    assert fragment in lines[0], lines[0]


def test_export_format_names_match_the_book(capsys):
    assert BOOK_EXPORT_FORMATS == EXPORT_FORMATS


def test_recipe_save_show_list_diff(book_file, capsys):
    code, out, err = run(capsys, *RECIPE, "--json", "--save", "tris 7.4")
    assert code == 0 and "saved 'tris 7.4' version 1" in err
    printed = json.loads(out)                                    # --json output unchanged by --save
    code, _, err = run(capsys, *RECIPE[:-4], "--conc", "40mM", "--route", "titrate", "--save", "tris 7.4",
                       "--save-note", "less tris")
    assert code == 0 and "version 2" in err

    code, out, _ = run(capsys, "book", "show", "tris 7.4", "--version", "1", "--json")
    assert code == 0 and json.loads(out) == printed              # the recipe's JSON, target_ph included
    assert json.loads(out)["target_ph"] == 7.4

    code, out, _ = run(capsys, "book", "list", "--json")
    (summary,) = json.loads(out)
    assert summary["name"] == "tris 7.4" and summary["versions"] == 2 and summary["note"] == "less tris"
    code, out, _ = run(capsys, "book", "list")
    assert "tris 7.4" in out and "less tris" in out

    code, out, _ = run(capsys, "book", "diff", "tris 7.4", "1", "2")
    assert code == 0
    assert "reagent tris_hcl: 50 mM, 7.9594 g -> 40 mM, 6.3675 g" in out
    assert "spec buffer_conc_mol_l: 0.05 -> 0.04" in out

    code, out, _ = run(capsys, "book", "show", "tris 7.4")
    assert code == 0 and "6.3675 g" in out and "versions: 1, 2" in out and SAFETY_NOTICE in out


def test_several_routes_save_the_first_and_say_so(book_file, capsys):
    code, _, err = run(capsys, "recipe", "tris", "--ph", "7.4", "--conc", "50mM", "--save", "any route")
    assert code == 0 and "the first of" in err and "choose one with --route" in err


def test_optimise_save_and_verify(book_file, capsys):
    code, out, err = run(capsys, "optimise", "--ph", "7.4", "--temperature", "37", "--capacity", "10",
                         "--save", "mix", "--json")
    assert code == 0 and "saved 'mix' version 1" in err
    optimised = json.loads(out)
    code, out, _ = run(capsys, "book", "verify", "mix", "--json")
    assert code == 0
    result = json.loads(out)
    # re-solved with the same catalog: the optimiser's verified pH comes back (1e-9 pH)
    assert result["verified_ph_at_use"] == pytest.approx(optimised["verified"]["ph"], abs=1e-9)
    assert result["within_tolerance"] and not result["catalog_changed"]
    code, out, _ = run(capsys, "book", "verify", "mix")
    assert "within ± 0.005 pH" in out
    code, out, _ = run(capsys, "book", "show", "mix")
    assert "verified 2 times; last " in out and "within tolerance" in out


@pytest.mark.parametrize("fmt", ["md", "html", "csv", "json"])
def test_export_to_stdout_and_to_a_new_file(book_file, tmp_path, capsys, fmt):
    run(capsys, *RECIPE, "--save", "tris")
    code, out, _ = run(capsys, "book", "export", "tris", "--format", fmt)
    assert code == 0 and "7.9594" in out
    target = tmp_path / f"tris.{fmt}"
    code, _, err = run(capsys, "book", "export", "tris", "--format", fmt, "--output", str(target))
    assert code == 0 and target.read_bytes().decode("utf-8") == out
    one_line_error(*run(capsys, "book", "export", "tris", "--format", fmt, "--output", str(target)),
                   "exists; give --output a new file name")
    assert target.read_bytes().decode("utf-8") == out              # nothing overwritten


def test_import_round_trip_and_remove(book_file, tmp_path, capsys):
    run(capsys, *RECIPE, "--save", "tris")
    exported = tmp_path / "tris.json"
    run(capsys, "book", "export", "tris", "--format", "json", "--output", str(exported))
    code, out, _ = run(capsys, "book", "import", str(exported), "--name", "tris copy", "--book",
                       str(tmp_path / "second.sqlite3"))
    assert code == 0 and "imported 'tris copy' as version 1" in out
    code, out, _ = run(capsys, "book", "remove", "tris")
    assert code == 0 and "removed 'tris' (1 version)" in out
    code, out, _ = run(capsys, "book", "list")
    assert "no recipes saved" in out


def test_an_empty_book_lists_nothing_without_creating_a_file(book_file, capsys):
    code, out, _ = run(capsys, "book", "list", "--json")
    assert code == 0 and json.loads(out) == [] and not book_file.exists()


@pytest.mark.parametrize("argv, fragment", [
    (["book", "show", "nothing"], "no recipe book at"),
    (["book", "verify", "nothing"], "no recipe book at"),
    (["book", "export", "x", "--format", "pdf"], "invalid choice: 'pdf'"),
    (["book", "show", "x", "--version", "0"], "expected a version number of at least 1"),
    (["book", "diff", "x", "1", "two"], "expected a version number"),
    (["book", "import", "/no/such/file.json"], "cannot read /no/such/file.json"),
    (["recipe", "--standard", "borax", "--save", "std"], "--save keeps bench recipes"),
    (["recipe", "tris", "--ph", "7.4", "--save", "  "], "expected a recipe name"),
    (["book", "list", "--book", "b" * 5000], "cannot be opened: File name too long"),
    (["book", "show", "x", "--book", "/no/such/folder/book.sqlite3"], "no recipe book at"),
])
def test_bad_input_is_one_line_exit_2(book_file, capsys, argv, fragment):
    one_line_error(*run(capsys, *argv), fragment)


def test_unknown_names_and_versions(book_file, capsys):
    run(capsys, *RECIPE, "--save", "tris 7.4")
    one_line_error(*run(capsys, "book", "show", "tris 7.5"), "did you mean tris 7.4")
    one_line_error(*run(capsys, "book", "diff", "tris 7.4", "1", "3"), "has no version 3")
    one_line_error(*run(capsys, "book", "remove", "tris"), "no recipe named 'tris'")


def test_files_that_are_not_books(tmp_path, capsys):
    garbage = tmp_path / "garbage.sqlite3"
    garbage.write_bytes(b"\x00\x01 not a database " * 200)
    one_line_error(*run(capsys, "book", "list", "--book", str(garbage)), "not a poise recipe book")
    one_line_error(*run(capsys, *RECIPE, "--save", "x", "--book", str(garbage)), "not a poise recipe book")
    newer = tmp_path / "newer.sqlite3"
    run(capsys, *RECIPE, "--save", "x", "--book", str(newer))
    con = sqlite3.connect(newer)
    con.execute("INSERT INTO schema_version VALUES (7, '2031-01-01T00:00:00+00:00', 'future')")
    con.commit()
    con.close()
    one_line_error(*run(capsys, "book", "list", "--book", str(newer)), "written by a newer poise")
    bad_import = tmp_path / "bad.json"
    bad_import.write_text('{"name": "x"}', encoding="utf-8")
    one_line_error(*run(capsys, "book", "import", str(bad_import), "--book", str(tmp_path / "b.sqlite3")),
                   "not a poise book entry")
