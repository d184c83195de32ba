"""``poise compare`` and the ranking's command-line options: JSON keys, CSV, profiles,
weights, concentration ranges, remedies in the text, and bad input (one line, exit 2)."""

from __future__ import annotations

import csv
import io
import json

import pytest

from tests.cli_helpers import run

EXAMPLE = ["--ph", "7.4", "--temperature", "37", "--prep-temperature", "22", "--conc", "50mM", "--metal", "Ca:0.05"]


@pytest.fixture(scope="module")
def example_json():
    from selector.cli import main

    out = io.StringIO()
    import contextlib
    with contextlib.redirect_stdout(out):
        assert main(["rank", *EXAMPLE, "--json"]) == 0
    return json.loads(out.getvalue())


def test_rank_json_rows_carry_score_criteria_reason_and_todays_fields(example_json):
    feasible = [row for row in example_json if row["feasible"]]
    for key in ("system", "feasible", "rank", "score", "criteria", "reason", "pka_at_use", "dph_dt_per_k",
                "bound_fraction", "cost_per_l", "ph_uncertainty", "remedy"):
        assert key in feasible[0]
    assert feasible[0]["criteria"]["drift"]["unit"] == "pH/K"
    popso = next(row for row in example_json if row["system"] == "popso")
    # POPSO free acid dissolves to about 5.5 mM (catalog solubility): the remedy lowers --conc
    assert not popso["feasible"] and popso["remedy"]["option"] == "--conc"
    assert popso["remedy"]["value"].endswith("mM") and "verified" in popso["remedy"]["text"]


def test_rank_remedy_value_typed_back_makes_the_system_feasible(capsys, example_json):
    # The remedy is what the user types: the same command with --conc set to it lists popso as feasible.
    popso = next(row for row in example_json if row["system"] == "popso")
    argv = [*EXAMPLE[:-4], "--conc", popso["remedy"]["value"], "--metal", "Ca:0.05", "--json"]
    code, out, _ = run(capsys, "rank", *argv)
    assert code == 0
    assert next(row for row in json.loads(out) if row["system"] == "popso")["feasible"]


def test_rank_text_prints_criteria_and_the_remedy_under_the_reason(capsys):
    code, out, _ = run(capsys, "rank", *EXAMPLE)
    assert code == 0
    assert "(assay profile)" in out and "|dpH/dT| 0.0" in out
    lines = out.splitlines()
    at = next(i for i, line in enumerate(lines) if line.strip().startswith("POPSO"))
    assert "remedy: lower --conc from 50mM to" in lines[at + 1]


def test_profile_purchasing_and_sort_cost_give_the_cheapest_first(capsys):
    tops = []
    for extra in (["--profile", "purchasing"], ["--sort", "cost"]):
        code, out, _ = run(capsys, "rank", *EXAMPLE, *extra, "--json")
        assert code == 0
        rows = [row for row in json.loads(out) if row["feasible"]]
        assert [row["cost_per_l"] for row in rows] == sorted(row["cost_per_l"] for row in rows)
        tops.append(rows[0]["system"])
    assert tops[0] == tops[1]


def test_weight_option_and_spec_file_weights_agree(capsys, tmp_path):
    spec = tmp_path / "spec.toml"
    spec.write_text('ph = 7.4\ntemperature_c = 37.0\nbuffer_conc_mol_l = 0.05\nweights = { cost = 20 }\n',
                    encoding="utf-8")
    code, from_file, _ = run(capsys, "rank", "--spec", str(spec), "--json")
    assert code == 0
    code, from_option, _ = run(capsys, "rank", "--ph", "7.4", "--temperature", "37", "--conc", "50mM",
                               "--weight", "cost=20", "--json")
    assert code == 0
    assert [r["system"] for r in json.loads(from_file)] == [r["system"] for r in json.loads(from_option)]


def test_conc_range_option(capsys):
    # β ≥ 10 mM/pH with 20-100 mM: every feasible system at 20 mM or above, none above 100 mM.
    code, out, _ = run(capsys, "rank", "--ph", "7.4", "--temperature", "37", "--capacity", "10", "--conc",
                       "20mM:100mM", "--json")
    assert code == 0
    concs = [row["conc_mol_l"] for row in json.loads(out) if row["feasible"]]
    assert concs and all(0.02 * (1 - 1e-6) <= c <= 0.1 * (1 + 1e-6) for c in concs)


def test_compare_text_json_and_csv(capsys):
    code, out, _ = run(capsys, "compare", "hepes", "mops", "tris", *EXAMPLE)
    assert code == 0
    header = out.splitlines()[1].split()
    assert header == ["hepes", "mops", "tris"]
    assert "drift [pH/K]" in out
    code, out, _ = run(capsys, "compare", "hepes", "mops", "tris", *EXAMPLE, "--json")
    rows = json.loads(out)
    assert [r["system"] for r in rows] == ["hepes", "mops", "tris"]
    assert sorted(r["rank"] for r in rows) == [1, 2, 3]
    code, out, _ = run(capsys, "compare", "hepes", "tris", *EXAMPLE, "--csv")
    table = list(csv.reader(io.StringIO(out)))
    assert table[0] == ["criterion", "unit", "hepes", "hepes_score", "tris", "tris_score"]
    drift = next(line for line in table if line[0] == "drift")
    # Tris drifts about twice as much as HEPES (|dpH/dT| about 0.028 and 0.014 pH/K, from memory)
    assert float(drift[4]) > 1.5 * float(drift[2])


@pytest.mark.parametrize("argv, words", [
    (["compare", "hepes", "--ph", "7.4"], "compare takes 2 to 8 systems"),
    (["compare", "hepes", "hepes", "--ph", "7.4"], "named twice"),
    (["compare", "hepes", "nosuchbuffer", "--ph", "7.4"], "unknown buffer system"),
    (["rank", "--ph", "7.4", "--weight", "drift"], "--weight: expected CRITERION=WEIGHT"),
    (["rank", "--ph", "7.4", "--weight", "speed=2"], "unknown criterion"),
    (["rank", "--ph", "7.4", "--weight", "drift=-1"], "expected >= 0"),
    (["rank", "--ph", "7.4", "--profile", "fastest"], "invalid choice"),
    (["rank", "--ph", "7.4", "--conc", "100mM:20mM"], "write the lower end first"),
    (["rank", "--ph", "7.4", "--conc", "20mM:x"], "--conc"),
    (["optimise", "--ph", "7.4", "--conc", "20mM:100mM"], "accepted by poise rank and poise compare"),
    (["recipe", "hepes", "--ph", "7.4", "--conc", "20mM:100mM"], "accepted by poise rank and poise compare"),
])
def test_bad_ranking_input_is_one_line_and_exit_2(capsys, argv, words):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert words in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1


def test_nothing_feasible_exits_2_and_still_lists_remedies(capsys):
    # 400 mM/pH from MES or MOPS alone cannot be reached (solubility, 1 M cap; test_rank.py):
    # the ranking says so, lists each system's remedy, and exits 2 as optimise does.
    code, out, err = run(capsys, "rank", "--ph", "6.1", "--capacity", "400", "--in-stock", "mes", "--in-stock",
                         "mops", "--in-stock", "hcl", "--in-stock", "naoh", "--in-stock", "nacl")
    assert code == 2
    assert "(no system meets the spec)" in out and "remedy: lower --capacity" in out
    assert "no buffer system meets the spec" in err


def test_a_yes_or_no_criterion_reads_as_words_in_the_reason(capsys):
    # Case (no published value; wording): acetate at pH 4.8 under the chromatography profile wins on
    # volatility (catalog flag); the reason said "1 1 = volatile against 0 1 = volatile".
    code, out, _ = run(capsys, "rank", "--ph", "4.8", "--conc", "20mM", "--profile", "chromatography", "--json")
    assert code == 0
    reasons = [row["reason"] for row in json.loads(out) if row["feasible"]]
    assert any("volatile (LC-MS): yes against no" in r for r in reasons), reasons[:3]
    assert not any("1 = volatile" in r for r in reasons)
