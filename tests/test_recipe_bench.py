"""Any verified composition to the bench: round trips from the printed amounts, the order of
addition, batches, stock lists, and the printable sheets.

Sources and tolerances beside each check:
- Round trip: the issue's acceptance figure, 0.005 pH at use and at preparation, is
  :data:`selector.recipe.VERIFY_TOLERANCE_PH`; the amounts are read back from the JSON the
  recipe prints (grams and mL to 6 significant digits) and re-solved with the exact engine.
- Molar masses and purities are the catalog's (reagents.csv; molar masses checked against
  IUPAC atomic weights by tests/test_catalog_data.py); liquid densities are the recipe
  module's table (from memory, said so beside each value).
- The salt-after-adjustment reading is checked against a direct solve of the solution as it
  stands at that moment (buffer forms and titrant in 800 mL + the titrant's volume per litre).
- Tris ΔH° 47.5 kJ/mol (Goldberg et al., J. Phys. Chem. Ref. Data 31 (2002) 231, catalog
  steps) makes the reading at 22 °C higher than the pH at 37 °C by about 0.028·15 = 0.4.
"""

import html
import json

import numpy as np
import pytest
from cli_helpers import run

from catalog import load_catalog
from selector.chemistry.equilibrium import solve_equilibrium
from selector.errors import InfeasibleSpecError, InputError
from selector.recipe import (
    VERIFY_TOLERANCE_PH,
    bench_recipe,
    bench_sheet_document,
    label_document,
    make_recipes,
    methods_sentence,
    mix_recipe,
    recipe_document,
    render_recipe,
    standard_recipe,
)
from selector.recipe.bench import MAX_BATCH_L
from selector.recipe.compose import DISSOLVE_FRACTION
from selector.recipe.document import FORMATS, render
from selector.safety import SAFETY_NOTICE
from selector.spec import make_spec

CATALOG = load_catalog()


def spec(**fields):
    defaults = dict(ph=7.4, temperature_c=37.0, prep_temperature_c=22.0, volume_l=1.0, buffer_conc_mol_l=0.05)
    defaults.update(fields)
    return make_spec(**defaults)


def composition_from_print(recipe) -> dict[str, float]:
    """The final composition [mol/L] rebuilt from the printed JSON amounts alone."""
    printed = json.loads(json.dumps(recipe.as_json()))
    batch_l = printed["batch_volume_l"]
    out: dict[str, float] = {}
    for line in printed["reagents"]:
        reagent = CATALOG.reagents[line["id"]]
        if "stock_mol_l" in line:
            mol = line["ml"] / 1000.0 * line["stock_mol_l"]
        elif "ml" in line:   # a liquid measured by volume
            mol = line["ml"] * reagent.liquid_density_g_ml * reagent.purity_fraction / reagent.molar_mass_g_mol
        else:
            mol = line["grams"] * reagent.purity_fraction / reagent.molar_mass_g_mol
        out[line["id"]] = out.get(line["id"], 0.0) + mol / batch_l
    return out


def round_trip_gaps(recipe) -> tuple[float, float]:
    """|ΔpH| at use and at preparation between the printed amounts re-solved and the recipe."""
    rebuilt = composition_from_print(recipe)
    ids = list(rebuilt)
    amounts = np.array([rebuilt[r] for r in ids])
    if recipe.route == "stock10x":   # the meter reads the 10× stock (no salt: that goes in the diluent)
        stock = {r: c * recipe.stock["factor"] for r, c in rebuilt.items() if r in recipe.stock["stock_composition_mol_l"]}
        prep = solve_equilibrium(list(stock), list(stock.values()), recipe.prep_temperature_c).ph[0]
    else:
        prep = solve_equilibrium(ids, amounts, recipe.prep_temperature_c).ph[0]
    use = solve_equilibrium(ids, amounts, recipe.temperature_c).ph[0]
    return abs(use - recipe.target_ph), abs(prep - recipe.meter_ph_at_prep)


ROUTE_CASES = [
    ("tris", spec(ionic_strength_mol_l=0.15)),
    ("phosphate", spec(ph=7.0, temperature_c=25.0, prep_temperature_c=25.0, volume_l=0.25, buffer_conc_mol_l=0.1)),
    ("acetate", spec(ph=4.8, temperature_c=30.0, buffer_conc_mol_l=0.1, volume_l=0.5)),
    ("hepes", spec(ph=7.5, temperature_c=4.0, buffer_conc_mol_l=0.02, counter_ion="K", ionic_strength_mol_l=0.1)),
    ("mops", spec(ph=7.2, volume_l=20.0, buffer_conc_mol_l=0.02)),
    ("carbonate", spec(ph=10.0, temperature_c=25.0, prep_temperature_c=25.0, buffer_conc_mol_l=0.05)),
    ("mes", spec(ph=6.0, temperature_c=25.0, volume_l=0.001, buffer_conc_mol_l=0.01)),   # 1 mL: µL and mg
]


@pytest.mark.parametrize("system, case", ROUTE_CASES, ids=[c[0] for c in ROUTE_CASES])
def test_every_route_round_trips_from_its_printed_amounts(system, case):
    recipes = make_recipes(system, case)
    assert {r.route for r in recipes} >= {"titrate", "two-forms"}
    for recipe in recipes:
        at_use, at_prep = round_trip_gaps(recipe)
        assert at_use <= VERIFY_TOLERANCE_PH, f"{system} {recipe.route}: use {at_use:.4f}"
        assert at_prep <= VERIFY_TOLERANCE_PH, f"{system} {recipe.route}: prep {at_prep:.4f}"


MIX_CASES = [
    ({"tris": 0.03, "hepes": 0.02}, spec(ionic_strength_mol_l=0.15), "least-titrant"),
    ({"tris": 0.03, "hepes": 0.02}, spec(counter_ion="K"), "base"),
    ({"acetate": 0.05, "mes": 0.05}, spec(ph=5.5, temperature_c=25.0, prep_temperature_c=20.0), "acid"),
    ({"phosphate": 0.02, "triethanolamine": 0.06}, spec(volume_l=25.0), "least-titrant"),
    ({"citrate": 0.01, "phosphate": 0.02, "borate": 0.01}, spec(ph=6.5, temperature_c=25.0, allow_hazardous=True),
     "least-titrant"),
]


@pytest.mark.parametrize("systems, case, start", MIX_CASES, ids=["+".join(c[0]) + "-" + c[2] for c in MIX_CASES])
def test_every_mix_round_trips_from_its_printed_amounts(systems, case, start):
    recipe = mix_recipe(systems, case, CATALOG, start=start)
    assert set(recipe.systems) == set(systems)
    at_use, at_prep = round_trip_gaps(recipe)
    assert at_use <= VERIFY_TOLERANCE_PH and at_prep <= VERIFY_TOLERANCE_PH, (at_use, at_prep)
    # Each system's total is what was asked for (regression: the forms carry one system unit each).
    for system_id, conc in systems.items():
        total = sum(c * CATALOG.reagents[r].system_units for r, c in recipe.composition_mol_l.items()
                    if CATALOG.reagents[r].system_id == system_id)
        assert total == pytest.approx(conc, rel=1e-12)


def test_optimiser_mix_goes_to_the_bench_and_round_trips():
    from selector.optimise import solve_min_cost

    case = spec(capacity_mol_l_per_ph=0.01, buffer_conc_mol_l=None, loads=[{"kind": "acid", "conc_mol_l": 0.002}])
    result = solve_min_cost(case)
    recipe = bench_recipe(result.reagents_mol_l, case, CATALOG, route="optimised")
    at_use, at_prep = round_trip_gaps(recipe)
    assert at_use <= VERIFY_TOLERANCE_PH and at_prep <= VERIFY_TOLERANCE_PH
    assert recipe.verified_ph_at_use == pytest.approx(result.verified.ph, abs=1e-9)


def test_salt_added_after_the_adjustment_moves_the_reading_as_a_direct_solve_says():
    # Phosphate at I = 0.3 mol/L: a lot of salt goes in after the titration.
    case = spec(ph=7.0, temperature_c=25.0, prep_temperature_c=25.0, buffer_conc_mol_l=0.05, ionic_strength_mol_l=0.3)
    recipe = make_recipes("phosphate", case, routes=["titrate"])[0]
    lines = {line.role: line for line in recipe.lines}
    titrant = lines["titrant"]
    # The solution being titrated: 1 L worth of buffer form and titrant in 800 mL + the titrant's volume.
    volume_l = DISSOLVE_FRACTION * 1.0 + titrant.millilitres / 1000.0
    ids = [line.reagent_id for line in recipe.lines if line.role != "salt for ionic strength"]
    direct = solve_equilibrium(ids, [recipe.composition_mol_l[r] / volume_l for r in ids], 25.0).ph[0]
    assert recipe.adjust_meter_ph == pytest.approx(direct, abs=1e-9)
    # The final solution, solved directly, is the check reading ...
    all_ids = list(recipe.composition_mol_l)
    final = solve_equilibrium(all_ids, [recipe.composition_mol_l[r] for r in all_ids], 25.0).ph[0]
    assert recipe.meter_ph_at_prep == pytest.approx(final, abs=1e-9)
    # ... and adding the salt and making up move it by far more than a meter resolves: computed,
    # not ignored (regression values: 7.0403 at the end of the titration, 7.0000 made up).
    assert recipe.meter_ph_at_prep - recipe.adjust_meter_ph == pytest.approx(-0.0403, abs=0.0005)
    # The salt's own part, in the titration volume: it lowers the pH, as the ionic strength lowers
    # phosphate's apparent pKa2 (the activity shift of HPO4 2-, test_recipe.py); regression -0.0452.
    with_salt = solve_equilibrium(all_ids, [recipe.composition_mol_l[r] / volume_l for r in all_ids], 25.0).ph[0]
    assert with_salt - recipe.adjust_meter_ph == pytest.approx(-0.0452, abs=0.0005)
    assert any(f"until the meter reads pH {recipe.adjust_meter_ph:.2f}" in s for s in recipe.steps)
    assert any("do not re-adjust" in s for s in recipe.steps)


def test_stock_solutions_of_any_strength_round_trip():
    # Tris base from a 1 M stock, HCl from a 6 M stock: fewer mL of each, the same solution.
    recipe = make_recipes("tris", spec(ionic_strength_mol_l=0.15), routes=["titrate-base"],
                          stocks={"tris": 1.0, "hcl": 6.0})[0]
    lines = {line.reagent_id: line for line in recipe.lines}
    assert lines["tris"].millilitres == pytest.approx(50.0, rel=1e-12)          # 0.05 M × 1 L / 1 M
    assert lines["hcl"].stock_mol_l == 6.0
    at_use, at_prep = round_trip_gaps(recipe)
    assert at_use <= VERIFY_TOLERANCE_PH and at_prep <= VERIFY_TOLERANCE_PH
    assert recipe.steps[0] == "Put about 750 mL of water in the vessel and stir."   # 800 mL less the 50 mL stock


def test_large_volume_is_split_into_batches():
    recipe = make_recipes("tris", spec(volume_l=20.0), routes=["titrate"])[0]
    single = make_recipes("tris", spec(volume_l=10.0), routes=["titrate"])[0]
    assert recipe.batches == 2 and recipe.batch_volume_l == pytest.approx(MAX_BATCH_L)
    assert recipe.steps[0].startswith("Make 20 L as 2 × 10 L batches")
    assert recipe.lines[0].grams == pytest.approx(single.lines[0].grams, rel=1e-12)
    assert recipe.cost == pytest.approx(2 * single.cost, rel=1e-9)


def test_liquids_are_measured_in_ml_from_their_density():
    recipe = mix_recipe({"acetate": 0.1}, spec(ph=4.8, temperature_c=25.0), CATALOG, start="acid")
    acid = next(line for line in recipe.lines if line.reagent_id == "acetic_acid")
    # 0.1 mol of CH3COOH (60.0521 g/mol, purity 0.998) = 6.0172 g; at 1.0471 g/mL (20 °C, Perry's
    # Chemical Engineers' Handbook 8th ed., Table 2-32, DIPPR eq. 105: the catalog's value) 5.7466 mL.
    assert acid.grams == pytest.approx(0.1 * 60.0521 / 0.998, rel=1e-12)
    assert acid.millilitres == pytest.approx(acid.grams / 1.0471, rel=1e-12)
    assert any(s.startswith("Measure 5.747 mL of acetic acid glacial") for s in recipe.steps)


def test_stock_list_applies_to_titrants_and_salts():
    # Tris base and HCl on the shelf, no NaOH: the titration starts from the base form.
    recipe = make_recipes("tris", spec(in_stock=("Tris base", "HCl")), routes=["titrate"])[0]
    assert {line.reagent_id for line in recipe.lines} == {"tris", "hcl"}
    # An ionic-strength target needs NaCl: not on the shelf, said so.
    with pytest.raises(InputError, match="sodium chloride is needed but not in stock"):
        make_recipes("tris", spec(in_stock=("Tris base", "HCl"), ionic_strength_mol_l=0.15), routes=["titrate"])
    with pytest.raises(InputError, match="sodium hydroxide is needed but not in stock"):
        bench_recipe({"tris_hcl": 0.04, "naoh": 0.01}, spec(in_stock=("Tris HCl",)), CATALOG)


def test_titrate_base_starts_from_tris_base_with_hcl():
    recipes = make_recipes("tris", spec(), routes=["titrate", "titrate-base"])
    base = next(r for r in recipes if r.route == "titrate-base")
    assert [line.reagent_id for line in base.lines] == ["tris", "hcl"]
    # Tris ΔH° 47.5 kJ/mol (Goldberg 2002): read at 22 °C about 0.4 above the pH at 37 °C.
    assert base.meter_ph_at_prep - base.target_ph == pytest.approx(0.4, abs=0.05)


def test_ten_fold_stock_above_solubility_is_not_offered():
    # 0.2 M phosphate at pH 7.4: the 10× stock would need about 2.3 M Na2HPO4 (over 300 g/L) against
    # a catalog solubility of 118 g/L (CRC Handbook, reagents.csv).
    case = spec(ph=7.4, temperature_c=25.0, prep_temperature_c=25.0, buffer_conc_mol_l=0.2, counter_ion="Na")
    with pytest.raises(InfeasibleSpecError, match="would not dissolve: disodium hydrogen phosphate"):
        make_recipes("phosphate", case, routes=["stock10x"])
    assert "stock10x" not in {r.route for r in make_recipes("phosphate", case)}


def test_assumed_enthalpy_warns_away_from_25c_and_carbonate_warns_about_co2():
    # ADA step 1 (pKa 1.59, Goldberg 2002): no published ΔH° in the catalog (0 assumed, common practice).
    warm = make_recipes("ada", spec(ph=2.0, temperature_c=37.0), routes=["titrate"])[0]
    assert any("no published ΔH° for step 1 of ADA" in w for w in warm.warnings)
    at_25 = make_recipes("ada", spec(ph=2.0, temperature_c=25.0, prep_temperature_c=25.0), routes=["titrate"])[0]
    assert not any("no published ΔH°" in w for w in at_25.warnings)
    carbonate = make_recipes("carbonate", spec(ph=10.0, temperature_c=25.0), routes=["two-forms"])[0]
    # One CO2 statement: the computed open-air drift replaces the co2_uptake flag's wording.
    co2 = [w for w in carbonate.warnings if "CO2" in w]
    assert len(co2) == 1 and co2[0].startswith("open to air (CO2 420 ppm of dry air")


def test_bench_sheet_has_every_blank_in_every_format():
    recipe = make_recipes("tris", spec(ionic_strength_mol_l=0.15), routes=["titrate"])[0]
    document = bench_sheet_document(recipe)
    page = render(document, "html")
    for blank in ("lot number", "balance reading", "measured pH", "measured °C", "volume made", "operator",
                  "date", "signature", "checked by"):
        assert blank in page
        for fmt in FORMATS:
            assert blank in render(document, fmt), (blank, fmt)
    assert page.count('class="blank"') >= 3 * len(recipe.lines) + 5
    assert "@media print" in page and 'class="checks"' in page
    assert "[ ]" in render(document, "markdown")
    assert html.escape(SAFETY_NOTICE) in page and SAFETY_NOTICE in render(document, "text")


def test_one_template_per_output_so_formats_cannot_drift():
    # Stocks of a dilute buffer: µL volumes and the mixing table.
    recipe = make_recipes("phosphate", spec(ph=7.0, temperature_c=25.0, volume_l=0.001, buffer_conc_mol_l=0.1),
                          routes=["stocks"])[0]
    document = recipe_document(recipe)
    outputs = {fmt: render(document, fmt) for fmt in FORMATS}
    for step in recipe.steps:
        for fmt, text in outputs.items():
            assert (html.escape(step) if fmt == "html" else step) in text, (fmt, step)
    assert all("µL" in text for text in outputs.values())
    assert all("Mixing volumes across pH" in text for text in outputs.values())
    assert render_recipe(recipe, "recipe", "html") == outputs["html"]


def test_label_and_methods_sentence():
    recipe = make_recipes("tris", spec(ionic_strength_mol_l=0.15), routes=["titrate"])[0]
    label = render(label_document(recipe, CATALOG), "text")
    assert "pH 7.40 at 37 °C" in label and "I = 150 mM" in label
    assert "made on" in label and "use by" in label and "corrosive" in label and SAFETY_NOTICE in label
    sentence = methods_sentence(recipe, CATALOG)
    assert sentence.startswith("The buffer was 50 mM Tris")
    for part in ("titrated with sodium hydroxide", "counter-ions chloride, sodium", "sodium chloride",
                 "pH 7.40 at 37 °C", "set at 22 °C", "ionic strength 0.150 M"):
        assert part in sentence, part


def test_standards_have_readable_ids(capsys):
    recipe = standard_recipe("phosphate 1:3.5")
    assert recipe.standard_id == "phosphate_1_3_5" and recipe.label == "phosphate 1:3.5"
    _, out, _ = run(capsys, "recipe", "--standard", "list")
    assert "phosphate 1:3.5" in out and "phosphate_1_3_5" not in out
    assert "computed by poise" in run(capsys, "recipe", "--standard", "borax")[1]


def test_cli_mix_and_optimise_print_their_recipe(capsys):
    _, out, _ = run(capsys, "recipe", "--mix", "tris=30mM hepes=20mM", "--ph", "7.4", "--temperature", "37", "--json")
    payload = json.loads(out)
    assert payload["route"] == "mix" and payload["systems"] == ["tris", "hepes"]
    assert abs(payload["verified_ph_at_use"] - 7.4) <= VERIFY_TOLERANCE_PH
    _, out, _ = run(capsys, "optimise", "--ph", "7.4", "--temperature", "37", "--prep-temperature", "22",
                    "--capacity", "10", "--load", "acid:2", "--json")
    recipe = json.loads(out)["recipe"]
    assert isinstance(recipe["steps"], list) and recipe["steps"]
    for line in recipe["reagents"]:
        assert {"id", "name", "conc_mol_l"} <= set(line) and ("grams" in line or "ml" in line)
    assert abs(recipe["verified_ph_at_use"] - 7.4) <= VERIFY_TOLERANCE_PH and recipe["meter_ph_at_prep"] > 7.4
    text = run(capsys, "optimise", "--ph", "7.4", "--temperature", "37", "--prep-temperature", "22", "--capacity", "10")[1]
    assert "Check at 22 °C: the meter reads pH" in text


def test_a_poise_ph_composition_goes_to_the_bench(capsys):
    # 25 mM KH2PO4 + 25 mM Na2HPO4 at 25 °C: the engine's pH 6.876 ± 0.029 (regression value,
    # also in the README); the 1:1 phosphate standard (0.025 mol/kg each) is pH(PS) 6.865 at
    # 25 °C (catalog ph_standard_values.csv, there marked from memory), tolerance 0.02.
    code, out, _ = run(capsys, "recipe", "--composition", "KH2PO4=25mM Na2HPO4=25mM", "--json")
    payload = json.loads(out)
    assert code == 0 and payload["route"] == "composition"
    assert payload["verified_ph_at_use"] == pytest.approx(6.876, abs=0.001)
    assert payload["verified_ph_at_use"] == pytest.approx(6.865, abs=0.02)
    code, _, err = run(capsys, "recipe", "--composition", "KH2PO4=25mM Na2HPO4=25mM", "--ph", "7.4")
    assert code == 2 and "verifies at pH 6.8758, not 7.4" in err


def test_optimiser_result_is_printed_even_when_its_recipe_cannot_be_made(capsys):
    # A stock the lab cannot make (5 M Tris base, above its solubility of about 550 g/L, HSDB
    # via the catalog): the mix is still printed, then the one-line error and exit code 2.
    code, out, err = run(capsys, "optimise", "--ph", "7.4", "--capacity", "10", "--in-stock", "tris",
                         "--in-stock", "tris_hcl", "--stock", "tris=5M", "--json")
    assert code == 2 and json.loads(out)["recipe"] is None and json.loads(out)["systems"] == ["tris"]
    assert "the mix has no bench recipe" in err and err.count("\n") == 1


@pytest.mark.parametrize("argv, message", [
    (("recipe", "--mix", "tris 30mM", "--ph", "7.4"), "give NAME=CONC pairs"),
    (("recipe", "--mix", "tris=30", "--ph", "7.4"), "has no unit"),
    (("recipe", "--mix", "nosuch=30mM", "--ph", "7.4"), "nosuch"),
    (("recipe", "--mix", "tris=0mM", "--ph", "7.4"), "positive concentration"),
    (("recipe", "tris", "--mix", "tris=30mM", "--ph", "7.4"), "give one of"),
    (("recipe", "--composition", "KH2PO4=25", "--ph", "7.4"), "has no unit"),
    (("recipe", "--composition", "unobtainium=25mM"), "unobtainium"),
    (("recipe", "--composition", "KH2PO4=0mM"), "above zero"),
    (("recipe", "--composition", "KH2PO4=25mM", "--conc", "25mM"), "drop --conc"),
    (("recipe", "tris", "--start", "base", "--ph", "7.4", "--conc", "50mM"), "applies to --mix"),
    (("recipe", "tris", "--stock", "tris=0.1M", "--ph", "7.4", "--conc", "500mM", "--route", "titrate-base"),
     "stronger stocks"),
    # Tris base: about 550 g/L at 25 °C (HSDB, catalog reagents.csv); 5 M is 607 g/L.
    (("recipe", "tris", "--stock", "tris=5M", "--ph", "7.4", "--conc", "50mM"), "use a weaker stock"),
    (("recipe", "--mix", "tris=30mM", "--stock", "hcl=-1M", "--ph", "7.4"), "hcl"),
    (("recipe", "--standard", "phosphate 9:9"), "phosphate 1:3.5"),
    (("recipe", "--mix", "tris=30mM", "--ph", "7.4", "--conc", "50mM"), "drop --conc"),
])
def test_bad_mix_input_is_one_line_and_exit_code_2(capsys, argv, message):
    code, _, err = run(capsys, *argv)
    assert code == 2 and message in err and err.count("\n") == 1, err


def test_a_chelator_salt_dissolves_before_the_metal_without_a_share_of_base():
    # Case: 20 mM Tris base, 2 mM Na2H2EDTA·2H2O, 1 mM CaCl2 (the solution's own pH).  EDTA is flagged
    # chelating_agent: the title, the buffer concentration and the label name Tris alone; the
    # disodium salt is already H2EDTA2− (the form that dissolves, common practice), so no base goes
    # in with it; it still dissolves before the calcium salt goes in.
    from selector.recipe import composition_recipe
    from selector.recipe.bench import chelator_base_mol_l

    recipe = composition_recipe({"Tris base": 0.02, "Na2H2EDTA": 0.002, "CaCl2": 0.001},
                                spec(temperature_c=25.0, prep_temperature_c=25.0), CATALOG)
    assert recipe.title.startswith("Tris (") and recipe.buffer_conc_mol_l == pytest.approx(0.02, rel=1e-12)
    assert {line.reagent_id: line.role for line in recipe.lines}["na2h2edta_2h2o"] == "chelator"
    assert chelator_base_mol_l(list(recipe.lines), CATALOG) == 0.0
    edta = next(k for k, s in enumerate(recipe.steps) if "disodium EDTA" in s)
    calcium = next(k for k, s in enumerate(recipe.steps) if "calcium chloride" in s)
    assert edta < calcium and "before any metal salt" in recipe.steps[edta]
    assert not any("nearest pKa of" in w for w in recipe.warnings)
    assert "20 mM Tris" in render(label_document(recipe, CATALOG), "text")


def test_a_chelator_alone_says_there_is_no_ph_buffer():
    # Case: 2 mM EGTA free acid brought to pH 7.2 with KOH and nothing else: no pKa-distance
    # warning (EGTA is there for the metal), but the recipe says no pH buffer holds the pH.
    recipe = mix_recipe({"egta": 0.002}, spec(ph=7.2, temperature_c=25.0, prep_temperature_c=25.0), CATALOG)
    assert not any("nearest pKa of" in w for w in recipe.warnings)
    assert any(w.startswith("no pH buffer in this recipe") for w in recipe.warnings)
    # 2 mM H4EGTA to H2EGTA2−: 2 equivalents, 4 mM of base, 4 mL of 1 M KOH per litre (exact arithmetic).
    assert any("Add about 4 mL of the 1 M" in s for s in recipe.steps)
    # The label and the methods sentence name the chelator as what the solution is made of
    # (they printed "egta ( titrated with …)" when only buffer forms counted).
    assert "2 mM EGTA (EGTA free acid titrated with" in render(label_document(recipe, CATALOG), "text")
    assert "2 mM EGTA (EGTA free acid titrated with" in methods_sentence(recipe, CATALOG)


def test_a_chelator_that_takes_all_the_base_leaves_a_dropwise_check():
    # Case: 2 mM EGTA free acid alone at pH 5.0, 25 °C: the titrant (about 4 mM NaOH) is less than
    # the 2 equivalents (4 mM) that take H4EGTA to H2EGTA2−, so all of it goes in with the chelator
    # and the pH step is a check, not a second addition; no metal salt, so none is mentioned.
    recipe = mix_recipe({"egta": 0.002}, spec(ph=5.0, temperature_c=25.0, prep_temperature_c=25.0), CATALOG)
    base_step = next(s for s in recipe.steps if s.startswith("Add about"))
    assert "(all of the titrant)" in base_step and "metal salts" not in base_step
    assert any("the meter should read about pH" in s and "dropwise" in s for s in recipe.steps)
    assert not any("the rest of the" in s for s in recipe.steps)
