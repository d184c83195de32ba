"""`poise ph --open` and the recipes' open-air drift: keys, agreement with the engine, bad input.

The numbers are checked against PHREEQC in tests/test_gas_exchange.py; here the commands:
their keys, that the closed figures do not move with --open, one-line errors with exit code 2.
"""

from __future__ import annotations

import json

import pytest
from cli_helpers import run

from selector.chemistry.gas_exchange import solve_open_equilibrium


def test_ph_open_json_keys_and_figures(capsys):
    code, out, err = run(capsys, "ph", "NaHCO3=10mM", "--open", "--json")
    assert code == 0 and not err
    data = json.loads(out)
    engine = solve_open_equilibrium(["nahco3"], [0.01], 25.0)
    # 420 ppm of dry air in air saturated with water vapour at 25 °C: 4.2e-4 x (1 - 0.0314) atm.
    assert data["co2_ppm_dry_air"] == pytest.approx(420.0)
    assert data["pco2_atm"] == pytest.approx(float(engine.pressure_atm[0]), rel=1e-12)
    assert data["pco2_atm"] == pytest.approx(4.2e-4 * (1 - 0.0314), rel=1e-3)
    assert data["ph_open"] == pytest.approx(float(engine.ph_open[0]), abs=1e-9)
    assert data["ph_drift_open"] == pytest.approx(data["ph_open"] - data["pH"], abs=1e-9)
    assert data["carbonate_total_open_mol_l"] == pytest.approx(float(engine.total_open_mol_l[0]), rel=1e-9)
    # 10 mM NaHCO₃ loses CO₂ to air and rises (PHREEQC/phreeqc.dat: pH 9.08 at equilibrium).
    assert data["carbonate_uptake_mol_l"] < 0 and 9.0 < data["ph_open"] < 9.2


def test_closed_figures_do_not_move_with_open(capsys):
    _, closed, _ = run(capsys, "ph", "tris=20mM", "HCl=5mM", "--temperature", "37", "--json")
    _, opened, _ = run(capsys, "ph", "tris=20mM", "HCl=5mM", "--temperature", "37", "--json", "--open",
                       "--pco2", "1000ppm")
    closed_data, open_data = json.loads(closed), json.loads(opened)
    assert {k: open_data[k] for k in closed_data} == closed_data
    # 1000 ppm of dry air at 37 °C, where water vapour is 0.0620 atm (phreeqc.dat H2O(g)).
    assert open_data["co2_ppm_dry_air"] == pytest.approx(1000.0)
    assert open_data["pco2_atm"] == pytest.approx(1e-3 * (1 - 0.0620), rel=1e-3)
    assert open_data["ph_drift_open"] < 0          # Tris takes up CO₂


@pytest.mark.parametrize("pressure, atm", [("0.00042atm", 4.2e-4), ("42Pa", 42 / 101325), ("420uatm", 4.2e-4)])
def test_pressure_units(capsys, pressure, atm):
    # A pressure is the partial pressure itself: no water-vapour correction.
    code, out, _ = run(capsys, "ph", "NaOH=1mM", "--open", "--pco2", pressure, "--json")
    data = json.loads(out)
    assert code == 0 and data["pco2_atm"] == pytest.approx(atm, rel=1e-12) and data["co2_ppm_dry_air"] is None


def test_ppm_is_a_fraction_of_dry_air(capsys):
    # 420 ppm of dry air is less than 4.2e-4 atm in moist air, so 1 mM NaOH ends a little more
    # alkaline than at 0.00042atm (+0.014 pH at 25 °C, measured in tests/test_gas_exchange.py).
    _, ppm, _ = run(capsys, "ph", "NaOH=1mM", "--open", "--pco2", "420ppm", "--json")
    _, atm, _ = run(capsys, "ph", "NaOH=1mM", "--open", "--pco2", "0.00042atm", "--json")
    assert json.loads(ppm)["pco2_atm"] < json.loads(atm)["pco2_atm"]
    assert json.loads(ppm)["ph_open"] - json.loads(atm)["ph_open"] == pytest.approx(0.014, abs=0.002)


def test_ph_open_text_lines(capsys):
    code, out, _ = run(capsys, "ph", "NaOH=1mM", "--open")
    assert code == 0
    assert "Open to air (CO2 420 ppm of dry air, 0.000407 atm) at 25 °C" in out
    assert "carbonate taken up: 1.004 mM" in out        # 1 mM NaOH becomes ~1 mM bicarbonate


@pytest.mark.parametrize("argv, words", [
    (("--open", "--pco2", "abc"), "cannot read --pco2"),
    (("--open", "--pco2", "420"), "has no unit"),
    (("--open", "--pco2", "2atm"), "give 1e-09 to 1 atm"),
    (("--open", "--pco2", "0ppm"), "0.001 to 1e+06 ppm"),
    (("--open", "--pco2", "2000000ppm"), "0.001 to 1e+06 ppm"),
    (("--open", "--pco2", "5mmHg"), "unknown unit"),
    (("--pco2", "420ppm"), "--pco2 applies with --open"),
])
def test_bad_pco2_is_one_line_and_exit_2(capsys, argv, words):
    code, out, err = run(capsys, "ph", "NaOH=1mM", *argv)
    assert code == 2 and not out
    assert words in err and len(err.strip().splitlines()) == 1 and "Traceback" not in err


# --------------------------------------------------------------------------- recipes

def test_alkaline_recipe_states_its_drift(capsys):
    code, out, _ = run(capsys, "recipe", "tris", "--ph", "8.6", "--conc", "50mM", "--route", "titrate", "--json")
    assert code == 0
    drift = json.loads(out)["co2_drift"]
    assert drift["co2_ppm_dry_air"] == pytest.approx(420.0) and drift["temperature_c"] == 25.0
    assert drift["pco2_atm"] == pytest.approx(4.2e-4 * (1 - 0.0314), rel=1e-3)
    assert drift["ph_closed"] == pytest.approx(8.6, abs=0.01) and drift["ph_drift"] < -0.05
    assert "common practice" in drift["precaution"] and "degassed" in drift["precaution"]
    assert any(w.startswith("open to air (CO2 420 ppm of dry air, 0.000407 atm) at 25 °C")
               for w in json.loads(out)["warnings"])


def test_neutral_recipe_states_it_only_when_asked(capsys):
    argv = ("recipe", "hepes", "--ph", "7.4", "--conc", "20mM", "--route", "titrate", "--json")
    _, plain, _ = run(capsys, *argv)
    assert "co2_drift" not in json.loads(plain)
    code, asked, _ = run(capsys, *argv, "--open", "--pco2", "1000ppm", "--temperature", "37")
    drift = json.loads(asked)["co2_drift"]
    assert code == 0 and drift["co2_ppm_dry_air"] == pytest.approx(1000.0) and drift["temperature_c"] == 37.0
    assert -0.1 < drift["ph_drift"] < 0


def test_carbonate_recipe_states_it_in_text(capsys):
    code, out, _ = run(capsys, "recipe", "--composition", "NaHCO3=25mM Na2CO3=25mM", "--format", "text")
    assert code == 0
    assert "open to air (CO2 420 ppm of dry air, 0.000407 atm) at 25 °C this solution drifts from pH 10.00 to 9.69" in out
    assert "keep it closed" in out


def test_recipe_bad_pco2(capsys):
    code, out, err = run(capsys, "recipe", "tris", "--ph", "8.6", "--conc", "50mM", "--open", "--pco2", "-5ppm")
    assert code == 2 and not out and len(err.strip().splitlines()) == 1


def _co2_sentences(warnings):
    return [w for w in warnings if "CO2" in w]


def test_a_flagged_alkaline_recipe_states_co2_once_with_the_computed_drift(capsys):
    # Borate is flagged co2_uptake (flags.csv); at pH 9.2 the drift is computed: one CO2 sentence.
    code, out, _ = run(capsys, "recipe", "borate", "--ph", "9.2", "--conc", "50mM", "--route", "titrate", "--json")
    assert code == 0
    sentences = _co2_sentences(json.loads(out)["warnings"])
    assert len(sentences) == 1 and sentences[0].startswith("open to air (CO2 420 ppm of dry air")


def test_a_flagged_recipe_without_a_computed_drift_keeps_the_flag_wording(capsys):
    # Ammonia (flagged) at pH 7.9: no drift is due (not above pH 8, no carbonate): the flag's
    # wording is the one CO2 sentence; asked with --open, the computed drift replaces it.
    argv = ("recipe", "ammonia", "--ph", "7.9", "--conc", "50mM", "--route", "titrate", "--json")
    code, out, _ = run(capsys, *argv)
    sentences = _co2_sentences(json.loads(out)["warnings"])
    assert code == 0 and "co2_drift" not in json.loads(out)
    assert len(sentences) == 1 and sentences[0].startswith("Ammonia / ammonium: absorbs CO2")
    code, out, _ = run(capsys, *argv, "--open")
    sentences = _co2_sentences(json.loads(out)["warnings"])
    assert code == 0 and len(sentences) == 1 and sentences[0].startswith("open to air (CO2 420 ppm of dry air")


@pytest.mark.parametrize(("value", "example"), [("nanppm", "e.g. 420ppm"), ("xyz", "e.g. 420ppm")])
def test_a_bad_pco2_message_gives_a_pressure_example(capsys, value, example):
    code, out, err = run(capsys, "ph", "NaOH=1mM", "--open", "--pco2", value)
    assert code == 2 and example in err and "25mM" not in err
