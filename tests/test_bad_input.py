"""The bad-input corpus: every case ends in one line on stderr and exit code 2, or in a
checked result; never a traceback, never a silent wrong answer.

The promise (README, "Exit codes"): 0 ok, 2 bad input or infeasible, anything else a bug.
Cases are grouped by door: spec files (TOML/JSON) through ``--spec``, the command-line
options of each command, price sheets (CSV/XLSX) from disk and as uploaded bytes, and the
CSV exports.  Hypothesis feeds arbitrary text to the parsers of units, specs and sheets.
No check value here is chemistry: the cases are malformed input and the expected outcome
is the refusal (or, for the exports, a cell a spreadsheet reads as text).
"""

from __future__ import annotations

import csv
import io
import json
import re
import socket
import subprocess
import sys
import time
from pathlib import Path

import pytest
from cli_helpers import run
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.errors import InputError
from selector.prices import PRICE_MAX, parse_price_bytes, parse_price_csv
from selector.spec import SpecError, make_spec, parse_spec_bytes, parse_spec_fields
from selector.textsafe import MESSAGE_MAX_CHARS, csv_cell, echo, one_line, write_csv
from selector.units import parse_amount, parse_ionic_strength, parse_mass, parse_volume

REPO = Path(__file__).resolve().parents[1]
ESC = "\x1b"
SHEET_HEADER = "reagent,pack_size,pack_price,currency,supplier\n"
PLAIN_NUMBER = re.compile(r"^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$")


def assert_one_line_refusal(code, out, err, *expected):
    """Exit code 2, one printable line on stderr naming the problem; no traceback."""
    assert code == 2, (code, out[-500:], err[-2000:])
    assert "Traceback" not in err and "Traceback" not in out
    lines = err.rstrip("\n").split("\n")
    assert len(lines) == 1 and lines[0].startswith("poise: error: "), err[:2000]
    assert ESC not in err and len(err) < MESSAGE_MAX_CHARS + 100
    for text in expected:
        assert text in err, err


# ---------------------------------------------------------------------------------------
# Spec files through --spec (and the same bytes as an upload)

SPEC_FILES = {
    "deep.json": ('{"ph": 7, "notes": ' + "[" * 100_000 + "]" * 100_000 + "}", "nested too deeply"),
    "deep.toml": ("ph = 7\nnotes = " + "[" * 100_000 + "]" * 100_000 + "\n", "nested too deeply"),
    "nested20.json": ('{"ph": 7, "loads": ' + "[" * 20 + "]" * 20 + "}", "nested deeper than"),
    "bigint.json": ('{"ph": 7, "plates": ' + "9" * 400 + "}", "numbers have at most 40"),
    "digits5000.json": ('{"ph": 7, "plates": ' + "9" * 5000 + "}", "numbers have at most 40"),
    "digits5000.toml": ("ph = 7\nplates = " + "9" * 5000 + "\n", "cannot read it as TOML"),
    "bigint39.toml": ("ph = 7\nplates = " + "9" * 39 + "\n", "plates: expected a whole number <= 1000000"),
    "huge_float.json": ('{"ph": 1e400}', "ph: expected a finite number"),
    "nan.json": ('{"ph": NaN}', "ph: expected a finite number"),
    "int_overflow_float.json": ('{"ph": 7, "volume_l": ' + "9" * 39 + "}", "volume_l: expected <= 10000"),
    "top_list.json": ("[1, 2]", "expected a table of spec fields"),
    "empty.toml": ("", "ph: required"),
    "escape_key.json": ('{"ph": 7, "bad\\u001b[31mkey\\nline": 1}', "unknown field"),
    "escape_value.json": ('{"ph": 7, "salt": "Na\\u001b[2JCl\\r\\n"}', "salt: expected one of"),
    "bidi_value.json": ('{"ph": 7, "counter_ion": "\\u202eaN"}', "counter_ion: expected one of"),
    "many_unknown.json": ("{" + ", ".join(f'"f{i}": 1' for i in range(20_000)) + ', "ph": 7}',
                          "and 19999 more unknown"),
    "loads_unknown.toml": ('ph = 7\nloads = [{kind = "acid", conc_mol_l = 0.01, bogus = 1}]\n',
                           "loads[0].bogus: unknown field"),
    "metals_unknown.toml": ('ph = 7\nmetals = [{metal = "Ca", max_bound_fraction = 0.1, colour = "x"}]\n',
                            "metals[0].colour: unknown field"),
    "loads_not_list.toml": ('ph = 7\nloads = "acid"\n', "loads: expected a list"),
    "metal_not_table.json": ('{"ph": 7, "metals": [5]}', "metals[0]: expected a table of fields"),
    "exclude_number.json": ('{"ph": 7, "exclude": [5]}', "exclude[0]: expected a name"),
    "notes_number.json": ('{"ph": 7, "notes": 5}', "notes: expected text"),
    "plates_true.json": ('{"ph": 7, "plates": true}', "plates: expected a whole number"),
    "ph_bool.json": ('{"ph": true}', "ph: expected a number"),
    "long_number_text.json": ('{"ph": "' + "7" * 5000 + '"}', "ph: expected a number"),
    "bad_syntax.toml": ("ph = = 7\n", "cannot read it as TOML"),
    "bad_syntax.json": ('{"ph": 7,}', "cannot read it as JSON"),
}


@pytest.mark.parametrize("name", sorted(SPEC_FILES))
def test_spec_file_is_refused_in_one_line(name, tmp_path, capsys):
    text, expected = SPEC_FILES[name]
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    assert_one_line_refusal(*run(capsys, "rank", "--spec", str(path)), expected)


@pytest.mark.parametrize("name", sorted(SPEC_FILES))
def test_spec_upload_is_refused_with_the_same_message(name):
    """The app's upload path reads bytes through the same reader as ``--spec``."""
    text, expected = SPEC_FILES[name]
    with pytest.raises(SpecError) as caught:
        make_spec(parse_spec_bytes(text.encode("utf-8"), name, "json" if name.endswith(".json") else "toml"))
    assert expected in str(caught.value) and ESC not in one_line(str(caught.value))


def test_spec_file_that_is_not_utf8_is_refused(tmp_path, capsys):
    path = tmp_path / "latin1.toml"
    path.write_bytes('ph = 7\nnotes = "café"\n'.encode("latin-1"))
    assert_one_line_refusal(*run(capsys, "rank", "--spec", str(path)), "not UTF-8 text")


def test_spec_file_too_large_is_refused(tmp_path, capsys):
    path = tmp_path / "big.toml"
    path.write_text('ph = 7\nnotes = "' + "x" * 1_100_000 + '"\n', encoding="utf-8")
    assert_one_line_refusal(*run(capsys, "rank", "--spec", str(path)), "at most 1000000")


def test_twenty_thousand_unknown_fields_make_a_short_message():
    """Case: 20 000 unknown keys.  Before: one 8 MB message; now one problem naming the first."""
    with pytest.raises(SpecError) as caught:
        make_spec({f"f{i}": 1 for i in range(20_000)} | {"ph": 7})
    assert len(str(caught.value)) < 1000 and len(caught.value.problems) == 1


def test_twenty_thousand_bad_values_are_summarised():
    with pytest.raises(SpecError) as caught:
        make_spec(ph=7, exclude=[f"flag{i}" for i in range(20_000)])
    assert len(caught.value.problems) == 21 and "and 19980 more problems" in caught.value.problems[-1]


def test_spec_file_without_ph_is_completed_by_the_option(tmp_path, capsys):
    """The help says options override the file: a file without ``ph`` plus ``--ph`` works."""
    path = tmp_path / "noph.toml"
    path.write_text("temperature_c = 25\nbuffer_conc_mol_l = 0.05\n", encoding="utf-8")
    code, out, err = run(capsys, "recipe", "tris", "--spec", str(path), "--ph", "7.4", "--route", "two-forms")
    assert code == 0 and "pH 7.4" in out, err


# ---------------------------------------------------------------------------------------
# Command-line options of every command

CLI_CASES = [
    (("app", "--port", "70000"), "from 1 to 65535"),
    (("app", "--port=-5"), "from 1 to 65535"),
    (("app", "--port", "0"), "from 1 to 65535"),
    (("app", "--port", "8e3"), "from 1 to 65535"),
    (("app", "--port", "9" * 5000), "from 1 to 65535"),
    (("recipe", "--standard", "phosphate_1_1", "--water-kg", "1e308"), "is outside 0.001 to 1000 kg"),
    (("recipe", "--standard", "phosphate_1_1", "--water-kg", "0"), "is outside 0.001 to 1000 kg"),
    (("recipe", "--standard", "phosphate_1_1", "--water-kg", "nan"), "is outside 0.001 to 1000 kg"),
    (("recipe", "--standard", "phosphate_1_1", "--water-kg", "-1"), "is outside 0.001 to 1000 kg"),
    (("recipe", "--standard", "no\x1b[31mne"), "unknown pH standard"),
    (("ph", "Tris=5\u039cM"), "Greek capital letter Mu"),
    (("ph", "Tris=5\u039cmol/L"), "Greek capital letter Mu"),
    (("recipe", "tris", "--ph", "7.4", "--conc", "50mM", "--volume", "5\u039cL"), "Greek capital letter Mu"),
    (("recipe", "tris", "--ph", "7.4", "--conc", "1e400M"), "is not a finite number"),
    (("recipe", "tris", "--ph", "7.4", "--conc", "9" * 5000 + "mM"), "is not a finite number"),
    (("recipe", "tris", "--ph", "7\n8"), "--ph: expected a number"),
    (("recipe", "tris", "--ph", "7", "--plates", "9" * 30), "--plates: expected a whole number <= 1000000"),
    (("recipe", "tris", "--ph", "7", "--plates", "9" * 5000), "--plates: expected a whole number >= 1"),
    (("rank", "--ph", "7", "--salt", "Na\x1b[2JCl"), "--salt: expected one of"),
    (("rank", "--ph", "7", "--in-stock", "x" * 100_000), "unknown reagent"),
    (("rank", "--ph", "7", "--in-stock", "tris\x1b[31m"), "unknown reagent"),
    (("rank", "--ph", "7", "--ionic-strength", "5\u039cM"), "Greek capital letter Mu"),
    (("optimise", "--ph", "7", "--exclude", "\x1b]0;title\x07"), "unknown flag"),
    (("optimise", "--ph", "7", "--metal", "Fe:0.1"), "expected one of"),
    (("catalog", "--temperature", "1e400"), "temperature"),
    (("buy", "--need", "tris=1\u039cL"), "Greek capital letter Mu"),
    (("buy", "--need", "x" * 100_000 + "=1kg"), "unknown reagent"),
    (("buy", "--need", "tris\x1b[31m=1kg"), "unknown reagent"),
    (("buy", "--need", "tris=1e400kg"), "is not a finite number"),
    (("buy", "--need", "tris=1kg", "--prices", "no\x1b[31m.csv"), "not found"),
    (("optimise", "--ph", "7", "--wells", "9" * 5000, "--well-volume", "1uL"), "--wells: expected a whole number"),
    (("optimise", "--ph", "7", "--wells", "96", "--well-volume", "1e400uL"), "is not a finite number"),
    (("ph", "NaOH=1mM", "--open", "--pco2", "2000000ppm"), "0.001 to 1e+06 ppm"),
    (("ph", "NaOH=1mM", "--open", "--pco2", "0.0001ppm"), "0.001 to 1e+06 ppm"),
    (("ph", "NaHCO3=1mM", "--open", "--pco2", "5e-324atm"), "give 1e-09 to 1 atm"),
    (("ph", "NaOH=1mM", "--open", "--pco2", "1e400ppm"), "is not a finite number"),
    (("recipe", "tris", "--ph", "8.6", "--conc", "50mM", "--open", "--pco2", "nanppm"), "e.g. 420ppm"),
]


@pytest.mark.parametrize("argv, expected", CLI_CASES, ids=[" ".join(a)[:40] for a, _ in CLI_CASES])
def test_bad_option_is_refused_in_one_line(argv, expected, capsys):
    assert_one_line_refusal(*run(capsys, *argv), expected)


def test_rank_with_nothing_feasible_exits_2_like_optimise(capsys):
    """Tris base alone (no titrant in stock) cannot be brought to pH 7: no system is feasible."""
    code, out, err = run(capsys, "rank", "--ph", "7", "--conc", "50mM", "--in-stock", "tris")
    assert_one_line_refusal(code, "", err, "no buffer system meets the spec")
    assert "Cannot meet the spec" in out   # the reasons are still printed


def test_optimise_honours_in_stock_for_titrants_and_salt(capsys):
    """With an in-stock list, HCl, NaOH and NaCl are not added unless listed; the message says so."""
    code, out, err = run(capsys, "optimise", "--ph", "7.4", "--conc", "50mM", "--in-stock", "tris")
    assert_one_line_refusal(code, out, err, "not in stock, so never added: hcl, naoh, nacl")
    code, out, err = run(capsys, "optimise", "--ph", "7.4", "--conc", "50mM", "--in-stock", "tris",
                         "--in-stock", "hcl", "--json")
    assert code == 0, err
    assert set(json.loads(out)["reagents"]) <= {"tris", "hcl"}


def test_recipe_does_not_refuse_for_a_salt_it_does_not_use(capsys):
    """No ionic-strength target: the salt is never weighed, so it need not be in stock."""
    code, out, err = run(capsys, "recipe", "tris", "--ph", "7.4", "--conc", "50mM", "--route", "two-forms",
                         "--in-stock", "tris", "--in-stock", "tris hydrochloride")
    assert code == 0 and "sodium chloride" not in out.lower(), err
    code, out, err = run(capsys, "recipe", "tris", "--ph", "7.4", "--conc", "50mM", "--route", "two-forms",
                         "--ionic-strength", "0.15", "--in-stock", "tris", "--in-stock", "tris hydrochloride")
    assert_one_line_refusal(code, out, err, "sodium chloride is needed but not in stock")


def test_concentrated_tris_recipe_warns_it_will_not_dissolve(capsys):
    """4 M Tris near pH 9.9 is mostly Tris base: 476.7 g (measured output), 596 g/L in the
    800 mL of the dissolving step, above the catalog's solubility of Tris base (550 g/L at
    25 °C, source hsdb-tris in catalog/data/reagents.csv); at the final litre (477 g/L) it
    is below, so only the dissolving step can warn."""
    code, out, err = run(capsys, "recipe", "tris", "--ph", "9.9", "--conc", "4M", "--route", "two-forms")
    assert code == 0, err
    assert "Tris base: 476.7 g in about 800 mL of water is 595.8 g/L, above its solubility of about 550 g/L" \
        in out, out


# ---------------------------------------------------------------------------------------
# Price sheets: from disk through --prices, and as uploaded bytes

SHEETS = {
    "bigcell.csv": ((SHEET_HEADER + "x" * 200_000 + ",1 g,1\n").encode(), "cannot read it as CSV"),
    "longcell.csv": ((SHEET_HEADER + "x" * 5000 + ",1 g,1\n").encode(), "a cell longer than 1000"),
    "latin1.csv": ((SHEET_HEADER + "caf\xe9,1 g,1\n").encode("latin-1"), "not UTF-8 text"),
    "nocolumns.csv": (b"name,price\nTris,1\n", "missing column(s)"),
    "garbage.xlsx": (b"PK\x03\x04 not a workbook", "cannot read it as an XLSX workbook"),
    "toolarge.csv": ((SHEET_HEADER + "Tris,1 kg,80\n" * 400_000).encode(), "at most 5 MB"),
    "escape\x1b[31m.csv": ((SHEET_HEADER + "x" * 5000 + ",1 g,1\n").encode(), "a cell longer than 1000"),
}


@pytest.mark.parametrize("name", sorted(SHEETS))
def test_bad_price_sheet_is_refused_in_one_line(name, tmp_path, capsys):
    data, expected = SHEETS[name]
    path = tmp_path / name
    path.write_bytes(data)
    assert_one_line_refusal(*run(capsys, "optimise", "--ph", "7.4", "--prices", str(path)), expected)


@pytest.mark.parametrize("name", sorted(SHEETS))
def test_bad_price_upload_is_refused(name):
    data, expected = SHEETS[name]
    with pytest.raises(InputError) as caught:
        parse_price_bytes(data, name)
    assert expected in str(caught.value)


@pytest.mark.parametrize("row, message", [
    ("Tris,1 mg,1e308,EUR,A", "is above 1e+09 per pack or per kg"),
    ("Tris,1 kg,1e10,EUR,A", "is above 1e+09 per pack or per kg"),
    ("Tris,1e308 kg,5,EUR,A", "is outside 1 mg to 10000 kg"),
    ("Tris,0.0001 g,5,EUR,A", "is outside 1 mg to 10000 kg"),
    ("Tris,1 kg," + "9" * 400 + ",EUR,A", "is not a finite number"),
    ("Tris\x1b[31m,1 kg,5,EUR,A", "unknown reagent"),
])
def test_price_out_of_range_is_refused_at_reading_naming_sheet_and_row(row, message):
    """Case: a price of 1e308 per mg.  Before: accepted, then the ranking stopped with a
    solver message naming neither sheet nor row; now the row is skipped with its number."""
    book, report = parse_price_csv(SHEET_HEADER + "NaCl,1 kg,5,EUR,A\n" + row + "\n", label="lab.csv")
    assert any(message in p and p.startswith("lab.csv row 3") for p in report.problems), report.problems
    assert all(ESC not in p for p in report.problems)
    assert all(p.price_per_kg <= PRICE_MAX for p in book.prices.values())


def test_twenty_thousand_unknown_products_are_summarised_quickly():
    """Case: a supplier's list of 20 000 products the catalog does not know.  Before: 55-97 s
    (one "did you mean" search per row) and 20 000 problem lines; now a dozen lines in
    seconds (measured 1.1-1.6 s on the development machine; bound 30 s for a loaded one)."""
    rows = "".join(f"unlisted product {i},500 g,12.5,EUR,Invented Supply\n" for i in range(20_000))
    start = time.perf_counter()
    book, report = parse_price_csv(SHEET_HEADER + rows, label="supplier.csv")
    assert time.perf_counter() - start < 30
    assert report.rows_read == 20_000 and report.rows_used == 0
    assert len(report.problems) == 11 and "19990 more rows name reagents not in the catalog" in report.problems[-1]


# ---------------------------------------------------------------------------------------
# CSV exports: one writer, formula cells neutralised

def test_csv_writer_neutralises_formula_cells():
    text = write_csv(["name", "value"], [["=HYPERLINK(\"x\")", -0.5], ["+1", "-0.25"], ["+1+2", "-2-3"],
                                         ["@SUM(A1)", "-x"],
                                         ["\tlead", "\rcr"], ["plain", "1e-3"]])
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[1:] == [["'=HYPERLINK(\"x\")", "-0.5"], ["+1", "-0.25"], ["'+1+2", "'-2-3"], ["'@SUM(A1)", "'-x"],
                        ["'\tlead", "'\rcr"], ["plain", "1e-3"]]


@settings(max_examples=300, deadline=None)
@given(st.text(max_size=30))
def test_no_exported_text_cell_reads_as_a_formula(text):
    rows = list(csv.reader(io.StringIO(write_csv(["c"], [[text]]), newline="")))
    cell = rows[1][0] if len(rows) > 1 and rows[1] else ""
    if cell.startswith(("=", "+", "-", "@", "\t", "\r")):
        assert PLAIN_NUMBER.match(text), (text, cell)


@pytest.mark.parametrize("argv", [("catalog", "--csv"), ("catalog", "--search", "phosphate", "--csv")])
def test_catalog_csv_exports_go_through_the_writer(argv, capsys):
    code, out, err = run(capsys, *argv)
    assert code == 0, err
    for row in csv.reader(io.StringIO(out)):
        for cell in row:
            assert csv_cell(cell) == cell, cell


# ---------------------------------------------------------------------------------------
# Parsers under arbitrary text (hypothesis): a value or InputError, nothing else

@settings(max_examples=400, deadline=None)
@given(st.text(max_size=40))
def test_unit_parsers_return_a_finite_value_or_refuse(text):
    for parse in (parse_amount, parse_ionic_strength, parse_volume, parse_mass):
        try:
            value = parse(text)
        except InputError as error:
            assert ESC not in one_line(str(error)) and "\n" not in one_line(str(error))
            continue
        assert value >= 0 and value == value and value != float("inf")


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=200), st.sampled_from(["toml", "json"]))
def test_spec_reader_returns_fields_or_refuses(text, fmt):
    try:
        fields = parse_spec_fields(text, fmt)
    except SpecError:
        return
    try:
        make_spec(fields)
    except SpecError as error:
        assert len(str(error)) < 30_000


JSON_VALUES = st.recursive(st.none() | st.booleans() | st.integers() | st.floats() | st.text(max_size=10),
                           lambda inner: st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=8), inner,
                                                                                       max_size=3), max_leaves=10)


@settings(max_examples=200, deadline=None)
@given(st.dictionaries(st.sampled_from(["ph", "loads", "metals", "plates", "exclude", "in_stock", "salt",
                                        "fixed_amounts", "notes", "volume_l", "unknown"]), JSON_VALUES))
def test_make_spec_accepts_or_refuses_any_field_values(fields):
    try:
        make_spec(fields)
    except SpecError as error:
        assert error.problems


@settings(max_examples=150, deadline=None)
@given(st.text(max_size=300))
def test_price_reader_accepts_or_refuses_any_text(text):
    try:
        parse_price_bytes((SHEET_HEADER + text).encode("utf-8", "surrogatepass"), "sheet.csv")
    except InputError:
        pass


def test_echo_shows_control_characters_and_shortens():
    assert echo("a\x1b[31mb\nc") == "'a\\x1b[31mb\\nc'"
    assert len(echo("x" * 100_000)) < 100


# ---------------------------------------------------------------------------------------
# The server

def _free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


def _listening(port: int) -> bool:
    with socket.socket() as probe:
        probe.settimeout(0.5)
        return probe.connect_ex(("127.0.0.1", port)) == 0


def test_app_stops_its_streamlit_child_on_sigterm():
    """``poise app`` on a free loopback port, SIGTERM to the parent: the port is released."""
    port = _free_port()
    parent = subprocess.Popen([sys.executable, "-c", "from selector.cli import main; raise SystemExit(main())",
                               "app", "--port", str(port)], cwd=REPO, stdout=subprocess.DEVNULL,
                              stderr=subprocess.DEVNULL)
    try:
        deadline = time.monotonic() + 90
        while not _listening(port) and time.monotonic() < deadline and parent.poll() is None:
            time.sleep(0.5)
        assert _listening(port), "the app did not start within 90 s"
        parent.terminate()
        assert parent.wait(30) == 0
        deadline = time.monotonic() + 20
        while _listening(port) and time.monotonic() < deadline:
            time.sleep(0.5)
        assert not _listening(port), "the Streamlit child still holds the port"
    finally:
        if parent.poll() is None:
            parent.kill()
            parent.wait()
