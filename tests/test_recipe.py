"""Bench recipes: round trips, temperature, published tables, calibration standards.

Sources beside each check value:
- Tris meter reading: ΔH° of Tris 47.5 kJ/mol (Goldberg et al., J. Phys. Chem. Ref. Data 31
  (2002) 231; catalog steps.csv) gives dpKa/dT ≈ −0.028 K⁻¹, so a Tris buffer at pH 7.4 at
  37 °C reads ≈ 7.7 at 25 °C (computed from that ΔH°); tolerance 0.05.
- Gomori phosphate table (G. Gomori, Methods Enzymol. 1 (1955) 138, as reprinted in Dawson
  et al., Data for Biochemical Research; read in a repost of the table): x mL 0.2 M Na2HPO4 +
  y mL 0.2 M NaH2PO4 made up to 100 mL (0.1 M phosphate), 25 °C:
  pH 5.8: 4.0 + 46.0; 7.0: 30.5 + 19.5; 7.4: 40.5 + 9.5; 8.0: 47.35 + 2.65.
  Tolerance 0.05 pH (a Davies engine against a measured table; the table's own rounding and
  the activity model).
- Half-neutralisation: pH = pKa of acetic acid 4.756 (Harris, Quantitative Chemical Analysis,
  App. G) minus the activity shift at I = 0.05 (Davies: 0.084): 4.67; tolerance 0.02.
- pH standards: grams per kg water from the molalities of Buck et al., Pure Appl. Chem. 74
  (2002) 2169 and molar masses from IUPAC atomic weights (molmass): KHP 0.05 mol/kg →
  10.2111 g/kg at purity 1 (regression value; catalog purity then included).
"""

import json

import numpy as np
import pytest
from cli_helpers import run

from selector.admissible import admissible, counter_ion_conflict, titrant_ids
from selector.chemistry.equilibrium import solve_equilibrium
from selector.errors import InfeasibleSpecError, InputError, PhOutOfReachError
from selector.recipe import ROUTE_REGISTRY, ROUTES, VERIFY_TOLERANCE_PH, make_recipes, route_named, standard_recipe
from selector.recipe.routes import find_split
from selector.recipe.solve import AmountLine, find_amount
from selector.spec import make_spec


def spec(**fields):
    defaults = dict(ph=7.4, temperature_c=37.0, prep_temperature_c=25.0, volume_l=1.0, buffer_conc_mol_l=0.05)
    defaults.update(fields)
    return make_spec(**defaults)


@pytest.mark.parametrize("system, ph", [
    ("phosphate", 7.0), ("tris", 8.0), ("hepes", 7.5), ("mops", 7.2), ("acetate", 4.8), ("citrate", 5.0),
    ("mes", 6.1), ("borate", 9.2), ("carbonate", 10.0), ("glycine", 9.6), ("bicine", 8.3), ("caps", 10.4)])
def test_round_trip_every_route_lands_on_target(system, ph):
    for recipe in make_recipes(system, spec(ph=ph, temperature_c=30.0, ionic_strength_mol_l=0.15)):
        ids = list(recipe.composition_mol_l)
        again = solve_equilibrium(ids, [recipe.composition_mol_l[r] for r in ids], 30.0).ph[0]
        assert abs(again - ph) <= VERIFY_TOLERANCE_PH, f"{system} {recipe.route}: {again}"
        assert recipe.ionic_strength_mol_l == pytest.approx(0.15, abs=1e-4)


def test_tris_meter_reads_about_7_7_at_25c_for_7_4_at_37c():
    recipe = make_recipes("Tris", spec(), routes=["titrate"])[0]
    assert recipe.verified_ph_at_use == pytest.approx(7.4, abs=VERIFY_TOLERANCE_PH)
    assert recipe.meter_ph_at_prep == pytest.approx(7.7, abs=0.05)
    assert recipe.dph_dt_per_k == pytest.approx(-0.028, abs=0.005)


@pytest.mark.parametrize("ph, ml_dibasic, ml_monobasic", [
    (5.8, 4.0, 46.0), (7.0, 30.5, 19.5), (7.4, 40.5, 9.5), (8.0, 47.35, 2.65)])
def test_gomori_phosphate_table(ph, ml_dibasic, ml_monobasic):
    # The published volumes, mixed and made up to 100 mL, solved exactly at 25 °C.
    amounts = [0.2 * ml_dibasic / 100.0, 0.2 * ml_monobasic / 100.0]
    assert solve_equilibrium(["na2hpo4", "nah2po4"], amounts, 25.0).ph[0] == pytest.approx(ph, abs=0.05)


def test_stocks_route_reproduces_gomori_volume_at_7_4():
    recipe = make_recipes("phosphate", spec(ph=7.4, temperature_c=25.0, volume_l=0.1, buffer_conc_mol_l=0.1,
                                            counter_ion="Na"), routes=["stocks"])[0]
    volumes = {line.reagent_id: line.millilitres for line in recipe.lines}
    # Gomori: 40.5 mL 0.2 M Na2HPO4 at pH 7.4 (0.05 pH ≈ 2.5 mL at this slope).
    assert volumes["na2hpo4"] == pytest.approx(40.5, abs=3.0)
    assert sum(v for v in volumes.values() if v) == pytest.approx(50.0, abs=1e-6)
    assert len(recipe.mixing_table) >= 5


def test_half_neutralised_acetic_acid():
    recipe = make_recipes("acetate", spec(ph=4.67, temperature_c=25.0, buffer_conc_mol_l=0.1),
                          routes=["titrate"])[0]
    base = [line for line in recipe.lines if line.role == "titrant"][0]
    # The textbook route: half the acid neutralised gives pH ≈ pKa' (4.67 at I ≈ 0.05).
    assert base.conc_mol_l == pytest.approx(0.05, rel=0.05)


def test_henderson_hasselbalch_gap_is_reported_and_adds_up():
    recipe = make_recipes("phosphate", spec(ph=7.2, temperature_c=37.0, ionic_strength_mol_l=0.15),
                          routes=["two-forms"])[0]
    gap = recipe.textbook
    assert gap is not None and gap.activity_shift_ph < 0  # HPO4 2- is lowered by activity
    # HH with the exact ratio + the named shifts + overlap = the target pH.
    total = gap.pka_25c + np.log10(gap.exact_ratio) + gap.temperature_shift_ph + gap.activity_shift_ph + gap.overlap_shift_ph
    assert total == pytest.approx(7.2, abs=1e-9)


def test_stock10x_states_the_stock_ph_and_lands_on_target_after_dilution():
    # 10 mM phosphate: the 10× stock (I ≈ 0.25 mol/L) is within the Davies range.
    recipe = make_recipes("phosphate", spec(ph=7.0, temperature_c=25.0, buffer_conc_mol_l=0.01),
                          routes=["stock10x"])[0]
    stock = recipe.stock
    assert stock["factor"] == 10
    # A 10× phosphate stock reads lower than its 1× dilution (activity of HPO4 2-): the
    # dilution shift, about +0.2 pH per tenfold dilution at these strengths (regression 6.799).
    assert stock["stock_ph_at_prep"] < 7.0 - 0.1
    assert not any("10× stock" in w for w in recipe.warnings)
    ids = list(stock["stock_composition_mol_l"])
    diluted = solve_equilibrium(ids, [stock["stock_composition_mol_l"][r] / 10 for r in ids], 25.0).ph[0]
    assert diluted == pytest.approx(7.0, abs=VERIFY_TOLERANCE_PH)


def test_recipes_name_recalled_constants_and_volatile_acid_fraction():
    # Imidazole's pKa is from memory in the catalog (u = 0.05, the common-practice default) and
    # moves the pH by 0.05 > 0.005: the recipe names it.  Phosphate's one recalled constant
    # (ΔCp° of step 2) moves nothing at 25 °C, the pKa's own temperature: no such warning.
    recipe = make_recipes("imidazole", spec(ph=7.0, temperature_c=25.0), routes=["titrate"])[0]
    assert any("from memory" in w and "pKa of step 1 of Imidazole" in w for w in recipe.warnings)
    recipe = make_recipes("phosphate", spec(ph=7.0, temperature_c=25.0), routes=["two-forms"])[0]
    assert not any("from memory" in w for w in recipe.warnings)
    # Cyanide at pH 9.2 (pKa about 9.2, CRC Handbook via the catalog): about half is HCN.
    cyanide = make_recipes("cyanide", spec(ph=9.2, temperature_c=25.0, buffer_conc_mol_l=0.01, allow_hazardous=True),
                           routes=["titrate"])[0]
    assert any("neutral acid" in w and "toxic gas" in w for w in cyanide.warnings)
    assert cyanide.steps[0].startswith("Before you start:")


def test_stock10x_warns_when_the_stock_is_beyond_the_activity_model():
    recipe = make_recipes("phosphate", spec(ph=7.0, temperature_c=25.0, buffer_conc_mol_l=0.05),
                          routes=["stock10x"])[0]
    assert any("10× stock" in w and "ionic strength" in w for w in recipe.warnings)


def test_grams_include_hydrate_and_purity(shipped_catalog):
    # Borax decahydrate Na2B4O7·10H2O 381.37 g/mol, anhydrous 201.22 g/mol and boric acid
    # 61.83 g/mol (IUPAC atomic weights, computed here with molmass independently of the
    # catalog's stored masses); grams = mol/L × M / purity for 1 L.
    molmass = pytest.importorskip("molmass")
    recipe = make_recipes("borate", spec(ph=9.0, temperature_c=25.0), routes=["two-forms"])[0]
    for line in recipe.lines:
        reagent = shipped_catalog.reagents[line.reagent_id]
        by_hand = line.conc_mol_l * molmass.Formula(reagent.formula).mass / reagent.purity_fraction
        assert line.grams == pytest.approx(by_hand, rel=1e-6), reagent.reagent_id
    hydrate = shipped_catalog.reagents["borax"]
    assert molmass.Formula(hydrate.formula).mass == pytest.approx(381.37, abs=0.01)


def test_stock10x_written_steps_rebuild_the_verified_solution():
    # Rebuild the 1× buffer from what the card says: stock/10 plus 9 volumes of diluent
    # with the stated salt concentration; it must verify like the recipe (pH, I).
    recipe = make_recipes("hepes", spec(ph=7.4, temperature_c=25.0, buffer_conc_mol_l=0.02,
                                        ionic_strength_mol_l=0.15), routes=["stock10x"])[0]
    stock = recipe.stock
    rebuilt = {r: c / stock["factor"] for r, c in stock["stock_composition_mol_l"].items()}
    salt_mol_l = stock["diluent_salt_g_l"] * 0.9 / (58.44 / 0.995)  # NaCl 58.44 g/mol (IUPAC), purity 0.995
    rebuilt["nacl"] = salt_mol_l
    ids = list(rebuilt)
    eq = solve_equilibrium(ids, [rebuilt[r] for r in ids], 25.0)
    assert eq.ph[0] == pytest.approx(7.4, abs=VERIFY_TOLERANCE_PH)
    assert eq.ionic_strength_mol_l[0] == pytest.approx(0.15, abs=5e-4)
    assert recipe.meter_reads == "the 10× stock"
    assert recipe.meter_ph_at_prep == pytest.approx(stock["stock_ph_at_prep"])


def test_hazardous_system_needs_opt_in_and_shows_cautions():
    with pytest.raises(InputError, match="allow-hazardous"):
        make_recipes("cacodylate", spec(ph=6.5, temperature_c=25.0))
    recipe = make_recipes("cacodylate", spec(ph=6.5, temperature_c=25.0, allow_hazardous=True))[0]
    text = " ".join(recipe.cautions)
    assert "arsenic" in text.lower() and "safety rules take precedence" in text


def test_out_of_reach_and_ionic_strength_conflicts():
    with pytest.raises(InfeasibleSpecError, match="ionic strength"):
        make_recipes("citrate", spec(ph=6.0, temperature_c=25.0, ionic_strength_mol_l=0.05, buffer_conc_mol_l=0.1))


def test_concentration_from_capacity():
    recipe = make_recipes("hepes", spec(ph=7.5, temperature_c=25.0, buffer_conc_mol_l=None,
                                        capacity_mol_l_per_ph=0.02), routes=["two-forms"])[0]
    assert recipe.capacity_mol_l_per_ph == pytest.approx(0.02, rel=0.05)


def test_standard_recipe_phthalate(shipped_catalog):
    recipe = standard_recipe("phthalate")
    purity = shipped_catalog.reagents["khp"].purity_fraction
    assert recipe.grams["khp"] == pytest.approx(10.2111 / purity, rel=1e-4)
    table = dict((t, p) for t, p, _ in recipe.table)
    assert table[25.0] == pytest.approx(4.005)  # Hamer et al. 1946 (read)
    assert "safety rules take precedence" in recipe.cautions[-1]


# ---------------------------------------------------------------------------------------
# One rule each: routes, counter-ion, titrants (no chemistry values: the checks are the
# rules as the admissibility module states them).


def test_every_route_name_has_a_registered_builder_and_unknown_names_are_listed():
    assert ROUTES == ("titrate", "titrate-base", "two-forms", "stocks", "stock10x")
    assert all(ROUTE_REGISTRY[name].name == name for name in ROUTES)
    with pytest.raises(InputError, match="unknown route 'boil'; routes: titrate, titrate-base, two-forms, stocks, stock10x"):
        route_named("boil")
    with pytest.raises(InputError, match="unknown route"):
        make_recipes("tris", spec(), routes=["boil"])


@pytest.mark.parametrize("counter_ion, acid, base", [
    ("Na", "hcl", "naoh"), ("any", "hcl", "naoh"), ("K", "hcl", "koh"), ("none", "hcl", None)])
def test_titrant_ids_follow_the_counter_ion(counter_ion, acid, base):
    assert titrant_ids(counter_ion) == (acid, base)
    assert admissible(spec(counter_ion=counter_ion)).acid_id == acid
    assert admissible(spec(counter_ion=counter_ion)).base_id == base


@pytest.mark.parametrize("reagent_id, counter_ion, reason", [
    ("tris", "none", None), ("tris_hcl", "none", None), ("tris_hcl", "Na", None),
    ("na2hpo4", "none", "is a salt (counter-ion none)"), ("na2hpo4", "K", "contains Na⁺ (counter-ion K)"),
    ("k2hpo4", "Na", "contains K⁺ (counter-ion Na)"), ("k2hpo4", "any", None), ("na2hpo4", "Na", None)])
def test_one_counter_ion_rule(shipped_catalog, reagent_id, counter_ion, reason):
    assert counter_ion_conflict(shipped_catalog.reagents[reagent_id], counter_ion, shipped_catalog) == reason


@pytest.mark.parametrize("system, counter_ion, ph", [("phosphate", "Na", 7.2), ("phosphate", "K", 7.2),
                                                     ("tris", "none", 8.0)])
def test_recipes_use_only_reagents_admissibility_admits(system, counter_ion, ph):
    admitted = set(admissible(spec(ph=ph, counter_ion=counter_ion)).reagents)
    for recipe in make_recipes(system, spec(ph=ph, counter_ion=counter_ion)):
        assert set(recipe.composition_mol_l) <= admitted, recipe.route


def test_a_target_out_of_reach_is_told_by_its_type(shipped_catalog):
    # Acetic acid with sodium acetate at 50 mM cannot reach pH 9 (pKa 4.756, Harris App. G).
    forms = [shipped_catalog.reagents[r] for r in ("acetic_acid", "naoac")]
    at_nine = spec(ph=9.0, temperature_c=25.0)
    assert find_split("acetate", at_nine, 0.05, forms, shipped_catalog) is None
    line = AmountLine(("acetic_acid", "naoac"), np.array([0.05, 0.0]), np.array([-0.05, 0.05]))
    with pytest.raises(PhOutOfReachError, match="out of reach"):
        find_amount(line, 9.0, 25.0, 0.0, 1.0, shipped_catalog, "acetate")


def test_cli_recipe_json_keys(capsys):
    code, out, err = run(capsys, "recipe", "tris", "--ph", "7.4", "--temperature", "37", "--conc", "50mM",
                         "--volume", "1L", "--route", "titrate", "--json")
    assert code == 0, err
    data = json.loads(out)
    for key in ("system", "route", "steps", "reagents", "meter_ph_at_prep", "verified_ph_at_use",
                "ionic_strength_mol_l", "cost", "cautions"):
        assert key in data
    assert data["verified_ph_at_use"] == pytest.approx(7.4, abs=VERIFY_TOLERANCE_PH)


def test_cli_recipe_all_routes_text(capsys):
    code, out, _ = run(capsys, "recipe", "phosphate", "--ph", "7.2", "--conc", "0.1M", "--volume", "500mL")
    assert code == 0
    # At 7.2 the least-titrant titration already starts from Na2HPO4 (the base form), so
    # titrate-base would repeat it and is left out; asked for alone, it is there.
    for route in ROUTES:
        assert (f"route {route}" in out) == (route != "titrate-base"), route
    code, out, _ = run(capsys, "recipe", "phosphate", "--ph", "7.2", "--conc", "0.1M", "--route", "titrate-base")
    assert code == 0 and "route titrate-base" in out


@pytest.mark.parametrize("argv, message", [
    (["recipe", "tris", "--conc", "50mM"], "--ph: required"),
    (["recipe", "nonsense", "--ph", "7"], "unknown buffer system"),
    (["recipe", "tris", "--ph", "7.4", "--conc=-5mM"], "negative"),
    (["recipe", "tris", "--ph", "7.4", "--conc", "50mM", "--volume", "3 cups"], "unknown unit 'cups'"),
    (["recipe", "tris", "--ph", "7.4"], "give a buffer concentration"),
    (["recipe", "--standard", "lemonade"], "unknown pH standard"),
    (["recipe"], "name a buffer system"),
])
def test_cli_recipe_bad_input(capsys, argv, message):
    code, out, err = run(capsys, *argv)
    assert code == 2 and message in err and "Traceback" not in err


def test_polymerisation_warning_comes_from_the_catalog_table():
    # Borate above the polyborate limit of catalog/data/polymerisation.csv (0.025 mol/L, from memory)
    # carries the warning; at 10 mM it does not.
    spec_high = make_spec(ph=9.2, buffer_conc_mol_l=0.05)
    spec_low = make_spec(ph=9.2, buffer_conc_mol_l=0.01)
    high = make_recipes("borate", spec_high, routes=["titrate"])[0]
    low = make_recipes("borate", spec_low, routes=["titrate"])[0]
    assert any("polyborates" in w and "from memory" in w for w in high.warnings)
    assert not any("polyborates" in w for w in low.warnings)


def test_json_and_markdown_are_exclusive(capsys):
    # --markdown is the default text; asking for both JSON and Markdown is a usage error (exit 2).
    code, out, err = run(capsys, "recipe", "tris", "--ph", "7.4", "--conc", "50mM", "--json", "--markdown")
    assert code == 2 and "not allowed with argument" in err
