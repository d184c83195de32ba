"""The recipe book (selector.book): round trips, versions, diff, verify, safety under use, bad files.

Check values here are the book's own contract (what was saved comes back unchanged) or the
engine's figures at save time; the one chemical expectation (a fixed acid/base ratio moves
its pH one for one with the pKa) is the Henderson-Hasselbalch relation pH = pKa +
log([A⁻]/[HA]) (textbook relation, common practice), checked to 0.01 pH because activity
coefficients and water move it slightly.
"""

from __future__ import annotations

import dataclasses
import html
import json
import os
import signal
import sqlite3
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector import book as B
from selector.recipe import make_recipes
from selector.safety import SAFETY_NOTICE
from selector.spec import make_spec

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def spec():
    return make_spec(ph=7.4, temperature_c=37.0, buffer_conc_mol_l=0.05)


@pytest.fixture(scope="module")
def recipes(spec):
    """The titrate and two-forms recipes of 50 mM tris, pH 7.4 at 37 °C, prepared at 25 °C."""
    made = {r.route: r.as_json() for r in make_recipes("tris", spec, routes=["titrate", "two-forms"])}
    return made


@pytest.fixture
def book(tmp_path):
    with B.open_book(tmp_path / "book.sqlite3") as opened:
        yield opened


# --------------------------------------------------------------------------- round trips and versions

def test_save_then_show_gives_back_the_whole_recipe_and_spec(book, recipes, spec):
    saved = dict(recipes["titrate"], key_added_later={"kept": [1, 2]})
    entry = B.save_recipe(book, "tris 7.4", saved, spec, note="first try")
    shown = B.show_recipe(book, "tris 7.4")
    assert (entry.version, shown.version) == (1, 1)
    assert shown.recipe == json.loads(json.dumps(saved))          # every key, new ones included
    assert shown.spec == json.loads(json.dumps(spec.as_dict()))
    assert shown.note == "first try"
    assert shown.catalog_fingerprint == B.catalog_fingerprint(__import__("catalog").load_catalog())
    assert shown.recipe_json()["target_ph"] == 7.4
    # the verified figures are the recipe's own, read when saved
    assert shown.figures["verified_ph_at_use"] == saved["verified_ph_at_use"]
    assert shown.figures["meter_ph_at_prep"] == saved["meter_ph_at_prep"]
    assert shown.figures["temperature_c"] == 37.0 and shown.figures["prep_temperature_c"] == 25.0
    assert shown.created_at.endswith("+00:00")                   # UTC, ISO 8601


def test_saving_an_existing_name_adds_a_version(book, recipes, spec):
    for route in ("titrate", "two-forms", "titrate"):
        B.save_recipe(book, "tris 7.4", recipes[route], spec)
    B.save_recipe(book, "other", recipes["titrate"], spec)
    summaries = {s.name: s for s in B.list_recipes(book)}
    assert summaries["tris 7.4"].versions == 3 and summaries["tris 7.4"].latest_version == 3
    assert summaries["other"].versions == 1
    assert B.show_recipe(book, "tris 7.4", 2).recipe["route"] == "two-forms"
    assert [e.version for e in B.versions_of(book, "tris 7.4")] == [1, 2, 3]


def test_unknown_name_and_version_are_named(book, recipes, spec):
    B.save_recipe(book, "tris 7.4", recipes["titrate"], spec)
    with pytest.raises(B.BookError, match="did you mean tris 7.4"):
        B.show_recipe(book, "tris 7.5")
    with pytest.raises(B.BookError, match="no version 4; it has versions 1"):
        B.show_recipe(book, "tris 7.4", 4)


def test_remove_takes_every_version(book, recipes, spec):
    for _ in range(2):
        B.save_recipe(book, "gone", recipes["titrate"], spec)
    B.verify_recipe(book, "gone")
    assert B.remove_recipe(book, "gone") == 2
    assert B.list_recipes(book) == []
    for table in ("recipes", "versions", "verifications"):     # nothing left behind
        assert book.connection.execute(f"SELECT COUNT(*) FROM {table}").fetchone()[0] == 0
    with pytest.raises(B.BookError, match="no recipe named"):
        B.remove_recipe(book, "gone")


def test_an_optimised_mix_is_saved_with_its_verified_figures(book, spec):
    # The JSON of `poise optimise --json` (reagents as id -> mol/L, figures under "verified").
    mix = {"status": "optimal", "reagents": {"h3po4": 0.0049, "triethanolamine": 0.0138},
           "verified": {"temperature_c": 37.0, "ph": 7.3999}, "cost_for_volume": 0.066, "currency": "EUR"}
    entry = B.save_recipe(book, "mix", mix, spec)
    assert entry.figures["verified_ph_at_use"] == 7.3999 and entry.figures["cost"] == 0.066
    assert B.composition_of(mix) == {"h3po4": 0.0049, "triethanolamine": 0.0138}


def test_a_mix_with_a_bench_recipe_inside_is_read_from_the_recipe(book, recipes, spec):
    # An optimised mix whose JSON carries its bench recipe under "recipe" (reagents as a list).
    inner = {k: recipes["titrate"][k] for k in ("steps", "reagents", "meter_ph_at_prep", "verified_ph_at_use",
                                                "cautions")}
    mix = {"status": "optimal", "reagents": dict(recipes["titrate"]["composition_mol_l"]),
           "verified": {"temperature_c": 37.0, "ph": 7.39}, "recipe": inner}
    entry = B.save_recipe(book, "mix", mix, spec)
    assert entry.figures["verified_ph_at_use"] == recipes["titrate"]["verified_ph_at_use"]   # the recipe's, not 7.39
    assert entry.figures["meter_ph_at_prep"] == recipes["titrate"]["meter_ph_at_prep"]
    assert B.composition_of(mix) == pytest.approx(recipes["titrate"]["composition_mol_l"])
    result = B.verify_recipe(book, "mix")
    assert abs(result.drift_ph_at_use) < 1e-9 and abs(result.drift_meter_ph) < 1e-9
    assert "7.9594 g" in B.export_recipe(book, "mix", "md")


def test_bad_names_notes_and_recipes_are_refused(book, recipes, spec):
    for name in ("", "   ", "a\nb", "x" * (B.NAME_MAX_CHARS + 1)):
        with pytest.raises(B.BookError, match="name"):
            B.save_recipe(book, name, recipes["titrate"], spec)
    with pytest.raises(B.BookError, match="composition"):
        B.save_recipe(book, "empty", {"steps": []}, spec)
    with pytest.raises(B.BookError, match="note"):
        B.save_recipe(book, "long note", recipes["titrate"], spec, note="n" * (B.NOTE_MAX_CHARS + 1))
    with pytest.raises(B.BookError, match="JSON"):
        B.save_recipe(book, "nan", dict(recipes["titrate"], oops=float("nan")), spec)
    assert B.list_recipes(book) == []


# --------------------------------------------------------------------------- diff

def test_diff_names_changed_reagents_amounts_and_figures(book, recipes, spec):
    B.save_recipe(book, "tris", recipes["titrate"], spec)
    B.save_recipe(book, "tris", recipes["two-forms"], spec, note="no titration")
    lines = B.diff_versions(book, "tris", 1, 2)
    text = "\n".join(lines)
    assert "reagent removed: naoh" in text and "reagent added: tris" in text
    assert any(line.startswith("reagent tris_hcl: 50 mM, 7.9594 g -> ") for line in lines)
    assert "ionic strength: 0.0500007 -> 0.0364628 mol/L" in text and 'note: "" -> "no titration"' in text
    assert "catalog" not in text                       # same catalog both times
    assert B.diff_versions(book, "tris", 1, 1) == []


# --------------------------------------------------------------------------- verify

def test_verify_with_the_same_catalog_finds_no_drift(book, recipes, spec):
    B.save_recipe(book, "tris", recipes["titrate"], spec)
    result = B.verify_recipe(book, "tris")
    assert not result.catalog_changed
    # the engine is deterministic: the saved figures come back to 1e-9 pH
    assert abs(result.drift_ph_at_use) < 1e-9 and abs(result.drift_meter_ph) < 1e-9
    assert result.within_tolerance and result.problem == ""
    log = B.verification_log(book, "tris")
    assert len(log) == 1 and log[0]["within_tolerance"] == 1


def _with_pka_shift(catalog, system_id: str, shift: float):
    """A copy of ``catalog`` with every pKa of one system moved by ``shift``."""
    system = catalog.systems[system_id]
    steps = tuple(dataclasses.replace(s, pka_25c=dataclasses.replace(s.pka_25c, value=s.pka_25c.value + shift))
                  for s in system.steps)
    systems = dict(catalog.systems, **{system_id: dataclasses.replace(system, steps=steps)})
    return dataclasses.replace(catalog, systems=systems)


def test_verify_after_a_catalog_change_reports_the_drift(book, recipes, spec, shipped_catalog):
    B.save_recipe(book, "tris", recipes["two-forms"], spec)
    changed = _with_pka_shift(shipped_catalog, "tris", 0.10)
    result = B.verify_recipe(book, "tris", catalog=changed)
    assert result.catalog_changed
    assert result.catalog_fingerprint == B.catalog_fingerprint(changed) != result.saved_catalog_fingerprint
    # Henderson-Hasselbalch: a fixed base/acid ratio follows the pKa one for one (0.01 pH)
    assert result.drift_ph_at_use == pytest.approx(0.10, abs=0.01)
    assert result.drift_meter_ph == pytest.approx(0.10, abs=0.01)
    assert not result.within_tolerance
    assert "OUTSIDE" in result.text() and "a changed catalog" in result.text()


def test_verify_names_a_reagent_the_catalog_lost(book, recipes, spec, shipped_catalog):
    B.save_recipe(book, "tris", recipes["titrate"], spec)
    reagents = {k: v for k, v in shipped_catalog.reagents.items() if k != "naoh"}
    result = B.verify_entry(B.show_recipe(book, "tris"), dataclasses.replace(shipped_catalog, reagents=reagents))
    assert result.problem == "reagent(s) no longer in the catalog: naoh" and not result.within_tolerance
    assert "cannot re-solve" in result.text()


def test_catalog_fingerprint_is_the_same_in_every_process(shipped_catalog):
    code = "from catalog import load_catalog; from selector.book import catalog_fingerprint as f; print(f(load_catalog()))"
    prints = {subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True,
                             env={**os.environ, "PYTHONHASHSEED": seed}).stdout.strip() for seed in ("1", "2")}
    assert prints == {B.catalog_fingerprint(shipped_catalog)}


# --------------------------------------------------------------------------- export and import

@pytest.mark.parametrize("fmt", ["md", "html", "csv"])
def test_exports_keep_the_figures_steps_and_cautions(book, recipes, spec, fmt):
    B.save_recipe(book, "tris", recipes["titrate"], spec)
    text = B.export_recipe(book, "tris", fmt)
    text = html.unescape(text) if fmt == "html" else text
    assert "7.9594 g" in text and "sodium hydroxide" in text     # the amounts as saved
    assert "meter pH at preparation" in text and "7.7177" in text
    assert "Causes severe skin burns" in text                     # the titrant's caution
    assert SAFETY_NOTICE in text


def test_a_mix_without_cautions_gets_its_reagents_cautions_and_the_notice(book, spec):
    B.save_recipe(book, "mix", {"reagents": {"h3po4": 0.005, "triethanolamine": 0.014}}, spec)
    text = B.export_recipe(book, "mix", "md")
    assert "phosphoric acid (corrosive)" in text and text.rstrip().endswith(SAFETY_NOTICE)


def test_json_export_imports_into_another_book(book, recipes, spec, tmp_path):
    B.save_recipe(book, "tris", recipes["titrate"], spec, note="lab A")
    exported = B.export_recipe(book, "tris", "json")
    assert json.loads(exported)["cautions"][-1] == SAFETY_NOTICE     # the JSON keeps the cautions too
    with B.open_book(tmp_path / "other.sqlite3") as other:
        entry = B.import_recipe(other, exported.encode())
        again = B.import_recipe(other, exported.encode())
        assert (entry.version, again.version) == (1, 2)
        shown = B.show_recipe(other, "tris")
        assert shown.recipe == B.show_recipe(book, "tris").recipe_json()
        assert shown.spec == B.show_recipe(book, "tris").spec
        assert shown.catalog_fingerprint == B.show_recipe(book, "tris").catalog_fingerprint
        assert shown.note.startswith("lab A (imported from version 1 saved ")


@pytest.mark.parametrize("data, message", [
    (b"\xff\xfe", "not UTF-8 JSON"),
    (b"[1, 2]", "not a poise book entry"),
    (b'{"format": "poise-book-entry", "format_version": 9}', "entry format 9"),
    (b'{"format": "poise-book-entry", "format_version": 1, "name": "x", "recipe": {}, "spec": {}}',
     "no composition"),
    (b'{"format": "poise-book-entry", "format_version": 1, "name": 3, "recipe": {}, "spec": {}}', "'name'"),
])
def test_bad_import_files_are_refused(book, data, message):
    with pytest.raises(B.BookError, match=message):
        B.import_recipe(book, data)
    assert B.list_recipes(book) == []


@settings(max_examples=300, deadline=None)
@given(st.binary(max_size=200) | st.text(max_size=200).map(str.encode)
       | st.dictionaries(st.text(max_size=8), st.none() | st.integers() | st.text(max_size=8), max_size=6).map(
           lambda d: json.dumps({"format": "poise-book-entry", "format_version": 1, **d}).encode()))
def test_any_import_bytes_give_an_entry_or_a_book_error(data):
    try:
        B.parse_entry(data)
    except B.BookError as error:
        assert "\n" not in str(error)


JSON_VALUES = st.recursive(st.none() | st.booleans() | st.floats(allow_nan=False) | st.integers() | st.text(max_size=6),
                           lambda inner: st.lists(inner, max_size=3) | st.dictionaries(
                               st.sampled_from(["id", "conc_mol_l", "grams", "ml", "tris", "h3po4"]), inner, max_size=3),
                           max_leaves=12)
RECIPE_KEYS = ["composition_mol_l", "reagents", "recipe", "stock", "steps", "verified", "cautions", "target_ph"]


@settings(max_examples=200, deadline=None)
@given(st.dictionaries(st.sampled_from(RECIPE_KEYS), JSON_VALUES, max_size=5))
def test_any_recipe_json_is_saved_exported_and_verified_or_refused(tmp_path_factory, recipe):
    with B.open_book(tmp_path_factory.mktemp("any") / "book.sqlite3") as opened:
        try:
            B.save_recipe(opened, "any", recipe, {"ph": 7.0})
        except B.BookError:
            return
        entry = B.show_recipe(opened, "any")
        for fmt in B.EXPORT_FORMATS:
            assert B.SAFETY_NOTICE in html.unescape(B.export_entry(entry, fmt))
        B.diff_entries(entry, entry)
        B.verify_entry(entry)


def test_import_size_limit(book):
    with pytest.raises(B.BookError, match="at most"):
        B.import_recipe(book, b" " * (B.IMPORT_MAX_BYTES + 1))


# --------------------------------------------------------------------------- the file

def test_default_path_follows_the_environment(monkeypatch, tmp_path):
    monkeypatch.setenv(B.BOOK_ENV_VAR, str(tmp_path / "env.sqlite3"))
    assert B.default_book_path() == tmp_path / "env.sqlite3"
    monkeypatch.delenv(B.BOOK_ENV_VAR)
    assert B.default_book_path().name == B.BOOK_FILE_NAME
    assert "poise" in str(B.default_book_path().parent)
    assert B.book_path(tmp_path / "given") == tmp_path / "given"


def test_a_new_book_is_marked_and_at_the_current_schema(tmp_path):
    path = tmp_path / "new.sqlite3"
    B.open_book(path).close()
    con = sqlite3.connect(path)
    assert con.execute("PRAGMA application_id").fetchone()[0] == B.APPLICATION_ID
    assert [r[0] for r in con.execute("SELECT version FROM schema_version ORDER BY version")] == [1, 2]
    assert con.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    con.close()


def test_missing_book_and_folder(tmp_path):
    with pytest.raises(B.BookError, match="no recipe book at"):
        B.open_book(tmp_path / "absent.sqlite3", create=False)
    with pytest.raises(B.BookError, match="folder"):
        B.open_book(tmp_path / "no" / "such" / "book.sqlite3")
    with pytest.raises(B.BookError, match="is a folder"):
        B.open_book(tmp_path)
    with pytest.raises(B.BookError, match="NUL"):
        B.open_book(str(tmp_path / "a\x00b"))


def test_a_file_that_is_not_sqlite_is_refused_and_left_alone(tmp_path):
    path = tmp_path / "notes.sqlite3"
    path.write_bytes(b"these are my notes, not a database" * 100)
    before = path.read_bytes()
    with pytest.raises(B.BookError, match="not a poise recipe book"):
        B.open_book(path)
    assert path.read_bytes() == before


def test_another_programs_sqlite_file_is_refused_and_left_alone(tmp_path):
    path = tmp_path / "other.db"
    con = sqlite3.connect(path)
    con.execute("CREATE TABLE samples (id INTEGER)")
    con.commit()
    con.close()
    before = path.read_bytes()
    with pytest.raises(B.BookError, match="an SQLite file but not a poise recipe book"):
        B.open_book(path)
    assert path.read_bytes() == before and not Path(str(path) + "-wal").exists()


def test_a_damaged_book_is_one_error(tmp_path, recipes, spec):
    path = tmp_path / "damaged.sqlite3"
    with B.open_book(path) as opened:
        for i in range(30):
            B.save_recipe(opened, f"r{i}", recipes["titrate"], spec)
    data = bytearray(path.read_bytes())
    data[4096:8192] = b"\x00garbage" * 512          # overwrite the second page
    path.write_bytes(bytes(data))
    with pytest.raises(B.BookError, match="damaged|cannot be used|not a poise"):
        with B.open_book(path) as opened:
            B.list_recipes(opened)
            [B.show_recipe(opened, f"r{i}") for i in range(30)]


def test_a_book_from_a_newer_poise_is_refused(tmp_path):
    path = tmp_path / "newer.sqlite3"
    B.open_book(path).close()
    con = sqlite3.connect(path)
    con.execute("INSERT INTO schema_version VALUES (99, '2030-01-01T00:00:00+00:00', 'future')")
    con.commit()
    con.close()
    with pytest.raises(B.BookError, match=r"newer poise \(book schema 99; this poise reads up to 2\)"):
        B.open_book(path)


def test_a_schema_1_book_is_migrated_and_keeps_its_recipes(tmp_path, recipes, spec):
    path = tmp_path / "old.sqlite3"
    con = sqlite3.connect(path, isolation_level=None)
    con.execute("BEGIN")
    B.migrate(con, 0, 1)
    con.execute("INSERT INTO recipes VALUES (1, 'old', '2026-01-01T00:00:00+00:00')")
    con.execute("INSERT INTO versions VALUES (1, 1, '2026-01-01T00:00:00+00:00', ?, ?, 'abc', '0.1.0', ?, 7.4, 7.4, '')",
                (json.dumps(recipes["titrate"]), json.dumps(spec.as_dict()), json.dumps({"target_ph": 7.4})))
    con.execute("COMMIT")
    con.close()
    with B.open_book(path) as opened:
        assert B.show_recipe(opened, "old").recipe == recipes["titrate"]
        assert B.verify_recipe(opened, "old").saved_catalog_fingerprint == "abc"   # table of schema 2 in use
    con = sqlite3.connect(path)
    assert [r[0] for r in con.execute("SELECT version FROM schema_version ORDER BY version")] == [1, 2]
    con.close()


# --------------------------------------------------------------------------- safe under use

def test_a_failing_write_leaves_no_half_recipe(book, recipes, spec):
    # The recipe row goes in first; the version row then fails (as a full disk would).
    book.connection.execute("CREATE TEMP TRIGGER fail BEFORE INSERT ON versions "
                            "BEGIN SELECT RAISE(ABORT, 'disk full'); END")
    with pytest.raises(B.BookError, match="disk full"):
        B.save_recipe(book, "half", recipes["titrate"], spec)
    book.connection.execute("DROP TRIGGER fail")
    assert book.connection.execute("SELECT COUNT(*) FROM recipes").fetchone()[0] == 0
    assert B.save_recipe(book, "half", recipes["titrate"], spec).version == 1


KILLED_WRITER = textwrap.dedent("""
    import json, sys, time
    from pathlib import Path
    from selector import book as B
    path, marker, recipe = sys.argv[1], Path(sys.argv[2]), json.loads(Path(sys.argv[3]).read_text())
    with B.open_book(path) as opened:
        def pause():
            marker.write_text("inside the transaction")
            time.sleep(60)
        opened.connection.create_function("pause", 0, pause)
        opened.connection.execute("CREATE TEMP TRIGGER hold AFTER INSERT ON versions BEGIN SELECT pause(); END")
        B.save_recipe(opened, "killed", recipe, {"ph": 7.4})
""")


def test_a_writer_killed_mid_save_leaves_the_book_as_it_was(tmp_path, recipes, spec):
    path, marker, recipe_file = tmp_path / "book.sqlite3", tmp_path / "inside", tmp_path / "recipe.json"
    recipe_file.write_text(json.dumps(recipes["titrate"]))
    with B.open_book(path) as opened:
        B.save_recipe(opened, "kept", recipes["titrate"], spec)
    child = subprocess.Popen([sys.executable, "-c", KILLED_WRITER, str(path), str(marker), str(recipe_file)],
                             cwd=ROOT)
    try:
        deadline = time.monotonic() + 60
        while not marker.exists() and child.poll() is None and time.monotonic() < deadline:
            time.sleep(0.05)
        assert marker.exists(), "the writer never reached its transaction"
        child.send_signal(signal.SIGKILL)
    finally:
        child.wait(timeout=30)
    with B.open_book(path) as opened:
        assert [s.name for s in B.list_recipes(opened)] == ["kept"]
        assert opened.connection.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        assert opened.connection.execute("SELECT COUNT(*) FROM recipes").fetchone()[0] == 1
        assert B.save_recipe(opened, "killed", recipes["titrate"], spec).version == 1


CONCURRENT_WRITER = textwrap.dedent("""
    import json, sys, time
    from pathlib import Path
    from selector import book as B
    path, count, recipe = sys.argv[1], int(sys.argv[2]), json.loads(Path(sys.argv[3]).read_text())
    Path(sys.argv[4]).touch()
    while not Path(sys.argv[5]).exists():
        time.sleep(0.005)
    for i in range(count):
        with B.open_book(path) as opened:
            B.save_recipe(opened, "shared", recipe, {"ph": 7.4}, note=sys.argv[6] + f"-{i}")
""")

WRITERS = 4
SAVES_EACH = 25


def test_concurrent_writers_never_lose_a_version(tmp_path, recipes):
    path, recipe_file, go = tmp_path / "book.sqlite3", tmp_path / "recipe.json", tmp_path / "go"
    recipe_file.write_text(json.dumps(recipes["titrate"]))
    B.open_book(path).close()
    children = []
    for k in range(WRITERS):
        ready = tmp_path / f"ready{k}"
        children.append((ready, subprocess.Popen(
            [sys.executable, "-c", CONCURRENT_WRITER, str(path), str(SAVES_EACH), str(recipe_file), str(ready),
             str(go), f"w{k}"], cwd=ROOT, stderr=subprocess.PIPE, text=True)))
    deadline = time.monotonic() + 120
    while not all(ready.exists() for ready, _ in children) and time.monotonic() < deadline:
        time.sleep(0.05)
    go.touch()                                  # every writer starts at once
    for _, child in children:
        _, err = child.communicate(timeout=300)
        assert child.returncode == 0, err
    with B.open_book(path) as opened:
        entries = B.versions_of(opened, "shared")
    assert [e.version for e in entries] == list(range(1, WRITERS * SAVES_EACH + 1))
    assert sorted(e.note for e in entries) == sorted(f"w{k}-{i}" for k in range(WRITERS) for i in range(SAVES_EACH))
