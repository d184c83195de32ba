"""``poise metal``: the design on the command line, its JSON keys (an interface), CSV and text,
and bad input as one line with exit code 2."""

from __future__ import annotations

import json

import pytest

from tests.cli_helpers import run

BASE = ["metal", "--free", "Ca=100nM", "--chelator", "EGTA=2mM", "--ph", "7.2", "--temperature", "22"]


def test_json_keys_and_the_forward_resolve(capsys):
    code, out, err = run(capsys, *BASE, "--free", "Mg=1mM", "--ionic-strength", "100mM", "--buffer", "hepes=20mM",
                         "--purity", "EGTA=98%", "--json")
    assert code == 0, err
    data = json.loads(out)
    for key in ("total_metal_mol_l", "free_metal_mol_l", "requested_free_mol_l", "titrant", "sensitivity", "recipe"):
        assert key in data
    assert data["requested_free_mol_l"] == pytest.approx({"Ca": 1e-07, "Mg": 0.001}, rel=1e-12)
    for metal, asked in data["requested_free_mol_l"].items():
        assert data["free_metal_mol_l"][metal] == pytest.approx(asked, rel=1e-6)
    assert data["titrant"]["reagent_id"] == "koh"
    assert data["ionic_strength_mol_l"] == pytest.approx(0.1, abs=1e-7)
    assert data["chelator_purity"] == {"egta": 0.98}
    assert {row["change"] for row in data["sensitivity"]} >= {"pH -0.1", "pH +0.1", "-5 °C", "+5 °C"}
    assert any(line["id"] == "cacl2_2h2o" for line in data["recipe"]["reagents"])


def test_text_shows_the_design_the_sensitivity_and_the_recipe(capsys):
    code, out, err = run(capsys, *BASE)
    assert code == 0, err
    assert "total to add" in out and "Sensitivity" in out and "recalled" in out
    assert "Local regulations" in out   # the recipe's closing safety statement


def test_csv_is_the_recipe(capsys):
    code, out, err = run(capsys, *BASE, "--csv")
    assert code == 0, err
    assert "calcium chloride dihydrate" in out and "," in out.splitlines()[0]


@pytest.mark.parametrize("argv, words", [
    (["--free", "Ca=-5nM"], "negative"),
    (["--free", "Ca=100"], "no unit"),
    (["--free", "Ca=5M"], "activity model covers"),
    (["--free", "Qq=1nM"], "not a metal ion"),
    (["--free", "Cu=1nM"], "no constant for Cu"),
    (["--chelator", "tris=2mM"], "no constant for Ca"),
    (["--chelator", "nosuchthing=2mM"], "unknown"),
    (["--purity", "EGTA=150%"], "at most 100"),
    (["--ionic-strength", "1mM"], "ask for at least"),
    (["--ionic-strength", "2M"], "at most 0.5"),
    (["--volume", "0L"], "zero"),
])
def test_bad_input_is_one_line_and_exit_2(capsys, argv, words):
    args = list(BASE)
    for option, value in zip(argv[::2], argv[1::2]):
        if option in args:
            args[args.index(option) + 1] = value
        else:
            args += [option, value]
    code, out, err = run(capsys, *args)
    assert code == 2
    assert out == ""
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    assert words in err.lower() or words in err


def test_the_free_metal_and_the_chelator_are_required(capsys):
    code, _, err = run(capsys, "metal", "--ph", "7.2")
    assert code == 2 and len(err.strip().splitlines()) == 1


def test_the_chelator_is_an_additive_not_the_buffer_and_goes_in_with_base_before_the_metal(capsys):
    # Case: free Ca 100 nM with 2 mM EGTA in 20 mM HEPES at pH 7.2, 22 °C.  EGTA is flagged
    # chelating_agent: the recipe is a HEPES recipe with EGTA as an additive, and no pKa-distance
    # warning is said of EGTA.  EGTA free acid (H4EGTA) dissolves as base turns it into H2EGTA2−
    # (common practice): 2 equivalents, 2 × 2 mM = 4 mM = 4 mL of the 1 M KOH per litre (exact
    # arithmetic), before the calcium salt; the rest of the KOH brings the pH.
    code, out, err = run(capsys, *BASE, "--buffer", "hepes=20mM")
    assert code == 0, err
    assert "HEPES: pH 7.2 at 22 °C" in out and "EGTA + HEPES" not in out
    assert "20 mM buffer; 2 mM EGTA free acid as chelator" in out
    assert "nearest pKa of" not in out
    steps = [line for line in out.splitlines() if line.split(".")[0].isdigit()]
    at = {key: next(k for k, s in enumerate(steps) if key in s)
          for key in ("of EGTA free acid", "Add about 4 mL of the 1 M potassium hydroxide (part of the titrant)",
                      "of calcium chloride", "add the rest of the 1 M potassium hydroxide")}
    order = list(at.values())
    assert order == sorted(order), steps
    assert "(common practice)" in steps[at["Add about 4 mL of the 1 M potassium hydroxide (part of the titrant)"]]


def test_the_json_recipe_names_the_chelator_role(capsys):
    code, out, err = run(capsys, *BASE, "--buffer", "hepes=20mM", "--json")
    assert code == 0, err
    recipe = json.loads(out)["recipe"]
    roles = {line["id"]: line["role"] for line in recipe["reagents"]}
    assert roles["egta"] == "chelator" and roles["hepes"] == "buffer form"
    assert recipe["title"] == "HEPES" and set(recipe["systems"]) == {"hepes", "egta"}
