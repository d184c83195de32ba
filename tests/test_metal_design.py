"""Design for a free metal concentration (``selector.designs.free_metal``), like a lab notebook.

* Forward re-solve: the composition the design returns, solved again by the engine on its
  own, gives each requested free metal within 1e-6 relative and the pH within 1e-6 (the
  design's promise; the engine is the reference).
* Two metals at once (Ca²⁺ and Mg²⁺ with EGTA): both at once, the ionic strength on target.
* Against PHREEQC with minteq.v4.dat (NIST SRD 46, which carries EDTA but not EGTA): the
  designed Ca–EDTA composition, handed to PHREEQC, gives the requested free Ca within 0.1
  in log and the pH within 0.05 — the tolerances of ``tests/test_complex_equilibrium.py``
  for the same database, for the same reasons (limiting-law activity of EDTA⁴⁻ in the
  file, chloride complexes the catalog does not carry).
* Direction checks read in Harrison & Bers, Biochim. Biophys. Acta 925 (1987) 133 (abstract):
  EGTA's apparent Ca affinity rises from 1 to 36 °C and falls from I = 0.104 to 0.304 mol/L;
  so at a fixed free Ca and pH a design holds more total Ca when warmer and less at high I.
  No published free-Ca table for EGTA could be read, so no number of one is checked; the
  EGTA constants themselves are recalled (from memory) and say so.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from selector.chemistry.equilibrium import molal_to_molar, solve_equilibrium
from selector.designs.free_metal import (
    FREE_TOLERANCE_RELATIVE,
    FreeMetalSpec,
    design_free_metal,
    free_metal_recipe,
    parse_free_metal_spec,
)
from selector.errors import InfeasibleSpecError, InputError

DATABASES = Path(__import__("phreeqc").__file__).parent / "databases"


def resolved_free(design):
    """The design's composition solved on its own: free metal [mol/L] per metal, pH, I."""
    ids = list(design.composition)
    eq = solve_equilibrium(ids, [design.composition[r] for r in ids], design.spec.temperature_c)
    metals = eq.speciation.metals
    free = {m: float(metals.free_mol_l[0, metals.metal_ids.index(m)]) for m in design.spec.free_mol_l}
    return free, float(eq.ph[0]), float(eq.ionic_strength_mol_l[0])


@pytest.fixture(scope="module")
def calcium_magnesium():
    # Invented demo case: 100 nM free Ca and 1 mM free Mg with 2 mM EGTA, 20 mM HEPES, pH 7.2,
    # 22 °C, I = 0.1 mol/L (KCl).
    return design_free_metal(FreeMetalSpec(free_mol_l={"Ca": 100e-9, "Mg": 1e-3}, chelators={"EGTA": 2e-3},
                                           ph=7.2, temperature_c=22.0, ionic_strength_mol_l=0.1,
                                           buffers={"hepes": 0.02}))


def test_forward_resolve_gives_the_requested_free_calcium():
    design = design_free_metal(FreeMetalSpec(free_mol_l={"Ca": 250e-9}, chelators={"egta": 1e-3}, ph=7.0,
                                             temperature_c=25.0))
    free, ph, _ = resolved_free(design)
    assert free["Ca"] == pytest.approx(250e-9, rel=FREE_TOLERANCE_RELATIVE)
    assert ph == pytest.approx(7.0, abs=1e-6)
    assert design.free_metal_mol_l["Ca"] == pytest.approx(free["Ca"], rel=1e-9)
    # Chelation releases protons: holding pH 7 takes strong base.
    assert design.titrant_id == "koh" and design.titrant_mol_l > 0


def test_two_metals_at_once_and_the_ionic_strength(calcium_magnesium):
    free, ph, ionic = resolved_free(calcium_magnesium)
    assert free["Ca"] == pytest.approx(100e-9, rel=FREE_TOLERANCE_RELATIVE)
    assert free["Mg"] == pytest.approx(1e-3, rel=FREE_TOLERANCE_RELATIVE)
    assert ph == pytest.approx(7.2, abs=1e-6)
    assert ionic == pytest.approx(0.1, abs=1e-7)
    assert calcium_magnesium.salt_id == "kcl" and calcium_magnesium.salt_mol_l > 0
    # Mg is mostly free at this pH (EGTA binds it about five orders of magnitude more weakly
    # than Ca, from memory): its total exceeds its free value by less than 10 %, while the
    # Ca total is thousands of times its free value.
    assert 1.0 < calcium_magnesium.total_metal_mol_l["Mg"] / 1e-3 < 1.1
    assert calcium_magnesium.total_metal_mol_l["Ca"] / 100e-9 > 1000
    # Regression (full precision, this catalog): 1.025335921 mM Ca, 1.068770505 mM Mg.
    assert calcium_magnesium.total_metal_mol_l["Ca"] == pytest.approx(1.025335921286e-3, rel=1e-6)
    assert calcium_magnesium.total_metal_mol_l["Mg"] == pytest.approx(1.068770505253e-3, rel=1e-6)


def test_sensitivity_points_the_way_the_chemistry_does(calcium_magnesium):
    rows = {row.change: row for row in calcium_magnesium.sensitivity}
    assert set(rows) == {"pH -0.1", "pH +0.1", "-5 °C", "+5 °C", "egta purity 98 %"}
    # A higher pH frees EGTA's amines for Ca: less free Ca; a lower pH more.
    assert rows["pH +0.1"].free_mol_l["Ca"] < 100e-9 < rows["pH -0.1"].free_mol_l["Ca"]
    assert rows["pH +0.1"].ph == pytest.approx(7.3, abs=1e-6)
    # Less chelator than stated (98 % instead of 100 %) leaves more Ca free, roughly by the
    # ratio of free chelator: +2 % of 2 mM on about 0.9 mM free EGTA, about +4 %.
    assert 1.02 < rows["egta purity 98 %"].free_mol_l["Ca"] / 100e-9 < 1.07


def test_warmer_holds_more_calcium_and_higher_ionic_strength_less():
    # Harrison & Bers 1987 (abstract): K'Ca of EGTA rises with temperature (1-36 °C) and falls
    # with ionic strength (0.104-0.304 mol/L).  At fixed free Ca and pH, more bound = more total.
    def total(temperature_c, ionic):
        return design_free_metal(FreeMetalSpec(free_mol_l={"Ca": 100e-9}, chelators={"egta": 2e-3}, ph=7.2,
                                               temperature_c=temperature_c, ionic_strength_mol_l=ionic)
                                 ).total_metal_mol_l["Ca"]

    assert total(36.0, 0.104) > total(1.0, 0.104)
    assert total(22.0, 0.304) < total(22.0, 0.104)


@pytest.mark.parametrize("ph, free_mol_l, temperature_c", [(7.5, 1e-6, 25.0), (7.0, 1e-7, 25.0),
                                                           (8.0, 1e-8, 37.0), (6.5, 1e-5, 10.0)])
def test_edta_design_agrees_with_phreeqc_minteq(ph, free_mol_l, temperature_c):
    # Measured: |ΔpH| at most 0.030, |Δ log free Ca| at most 0.059 over these four designs.
    phreeqpython = pytest.importorskip("phreeqpython")
    design = design_free_metal(FreeMetalSpec(free_mol_l={"Ca": free_mol_l}, chelators={"Na2H2EDTA": 2e-3}, ph=ph,
                                             temperature_c=temperature_c, counter_ion="Na"))
    per_kg = 1.0 / float(molal_to_molar(1.0, temperature_c))
    c = {r: v * per_kg * 1e3 for r, v in design.composition.items()}   # mmol/kg water
    calcium = c["cacl2_2h2o"]
    totals = {"Ca": calcium, "Cl": 2 * calcium + c.get("hcl", 0.0), "Na": 2 * c["na2h2edta_2h2o"] + c.get("naoh", 0.0),
              "Edta": c["na2h2edta_2h2o"]}
    minteq = phreeqpython.PhreeqPython(database="minteq.v4.dat", database_directory=DATABASES)
    solution = minteq.add_solution({"units": "mmol/kgw", "temp": temperature_c, **totals, "pH": "7 charge"})
    theirs_free_mol_l = solution.species_molalities["Ca+2"] / per_kg
    assert solution.pH == pytest.approx(ph, abs=0.05)
    assert np.log10(theirs_free_mol_l) == pytest.approx(np.log10(free_mol_l), abs=0.1)


def test_recipe_weighs_the_chelator_at_its_stated_purity(calcium_magnesium):
    recipe = free_metal_recipe(calcium_magnesium)
    line = next(r for r in recipe.lines if r.reagent_id == "egta")
    # 2 mM × 1 L × 380.3484 g/mol (C14H24N2O10, molmass) at the default 100 % purity.
    assert line.grams == pytest.approx(2e-3 * 380.3484, rel=1e-9)
    ninety_eight = design_free_metal(FreeMetalSpec(free_mol_l={"Ca": 100e-9}, chelators={"egta": 2e-3}, ph=7.2,
                                                   purity={"egta": 0.98}))
    line98 = next(r for r in free_metal_recipe(ninety_eight).lines if r.reagent_id == "egta")
    assert line98.grams == pytest.approx(2e-3 * 380.3484 / 0.98, rel=1e-9)
    assert any("Local regulations" in c for c in recipe.cautions) or "Local regulations" in str(recipe.as_json())


@pytest.mark.parametrize("kwargs, message", [
    ({"free": ["Ca=0nM"]}, "above zero"),
    ({"free": ["Xy=1nM"]}, "not a metal ion"),
    ({"free": ["Na=1nM"]}, "not a metal ion"),
    ({"free": ["Zn=1nM"]}, "no constant for Zn"),
    ({"chelators": ["tris=2mM"]}, "no constant for Ca"),
    ({"purity": ["EGTA=0%"]}, "above 0"),
    ({"purity": ["hepes=98%"]}, "not one of the chelators"),
])
def test_bad_requests_say_what_is_wrong(kwargs, message):
    args = {"free": ["Ca=100nM"], "chelators": ["EGTA=2mM"], "ph": 7.2, **kwargs}
    with pytest.raises(InputError, match=message):
        design_free_metal(parse_free_metal_spec(**args))


def test_an_ionic_strength_below_what_the_mix_gives_is_infeasible():
    with pytest.raises(InfeasibleSpecError, match="ask for at least"):
        design_free_metal(FreeMetalSpec(free_mol_l={"Ca": 100e-9}, chelators={"egta": 2e-3}, ph=7.2,
                                        ionic_strength_mol_l=0.001))
