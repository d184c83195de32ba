"""Metal binding: every log K with its conditions, one value chosen per complex, and the
correction to the conditions of use.

Check values and their sources:

- CuHPO₄ log K° 4.06 at I = 0, 25 °C (llnl.dat line 3072, LLNL thermo.com.V8.R6.230); the
  same constant quoted as 3.20 for I ≈ 0.1 mol/L (Sokołowska, Pawlas & Bal 2010, Table 1).
- Davies equation, log10 γ₁ = −A(√I/(1 + √I) − 0.3 I) (Davies 1962, p. 41), A(25 °C) =
  0.5108 from :func:`selector.chemistry.water.debye_huckel_a`.
- CuNH₃²⁺ log K 4.01, ΔrH −124 kJ/mol (minteq.v4.dat lines 3417/3473 and 3418/3474, the
  NIST SRD 46 entry); integrated van 't Hoff with constant ΔH (Goldberg et al. 2002, eq. 9
  with ΔCp = 0).
- MgPO₄⁻: 4.654 (minteq.v4.dat line 4409, entry tagged SCD3.02), 4.85 (sit.dat line 4738,
  ThermoChimie 12a), 6.589 (llnl.dat line 5483).
"""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest

import selector.chemistry.complexation
from catalog import CatalogError, read_catalog
from selector.admissible import admissible
from selector.chemistry.arrays import engine_tables
from selector.chemistry.complexation import binding_constants, log_k_at_conditions
from selector.chemistry.linear import is_linear_binding, linear_coefficients, metal_binding_terms
from selector.chemistry.speciation import speciate_at_ph
from selector.chemistry.water import GAS_CONSTANT_J_MOL_K, LN10
from selector.spec import make_spec
from tests.test_catalog_loader import edit

# ----------------------------------------------------------------------------- the shipped table


def test_every_numeric_log_k_states_its_ionic_strength_and_temperature(shipped_catalog):
    numeric = [m for m in shipped_catalog.metal_binding if m.log_k is not None]
    assert numeric
    assert all(m.ionic_strength_mol_l is not None and m.temperature_c is not None for m in numeric)


def test_one_value_in_force_per_complex(shipped_catalog):
    groups: dict[tuple, list] = {}
    for m in shipped_catalog.metal_binding:
        if m.log_k is not None:
            groups.setdefault(m.complex_key, []).append(m)
    for key, values in groups.items():
        assert sum(v.selected for v in values) == 1, key


def test_policy_prefers_the_critically_evaluated_value(shipped_catalog):
    # MgPO4-: ThermoChimie (measured-review) 4.85 beats the SC-Database entry of minteq.v4.dat
    # (handbook) 4.654 and llnl.dat 6.589 (handbook).
    (mg_po4,) = [c for c in binding_constants(shipped_catalog, "phosphate", "Mg")
                 if c.binding.ligand_species_charge == -3]
    assert (mg_po4.binding.source, mg_po4.binding.log_k.value) == ("thermochimie", 4.85)
    # The spread is the largest distance to another compilation: |6.589 - 4.85| = 1.739.
    assert mg_po4.spread_log_k == pytest.approx(1.739, abs=1e-9)


def test_override_and_rejection_are_kept_with_their_reason(shipped_catalog):
    cu_hpo4 = [m for m in shipped_catalog.metal_binding_of("phosphate") if m.metal == "Cu" and m.log_k]
    chosen = [m for m in cu_hpo4 if m.selected]
    assert [(m.source, m.log_k.value) for m in chosen] == [("llnl", 4.06)] and chosen[0].why
    (co_so4,) = [c for c in binding_constants(shipped_catalog, "sulfate", "Co")]
    rejected = [m for m in shipped_catalog.binding_values_of(co_so4.binding) if m.rejected]
    assert [m.log_k.value for m in rejected] == [0.0436] and rejected[0].why
    # The rejected llnl.dat outlier (0.0436) stays out of the spread: NIST46 and ThermoChimie both give 2.3.
    assert co_so4.spread_log_k == pytest.approx(0.0, abs=1e-12)


def test_the_two_cu_hpo4_values_agree_once_both_are_at_i_0(shipped_catalog):
    # 4.06 (I = 0) and 3.20 (I = 0.1) are the same constant: moved to I = 0 with Davies they
    # differ by 0.001 (hand check: 3.20 + 8 x 0.10740 = 4.059).
    (cu_hpo4,) = binding_constants(shipped_catalog, "phosphate", "Cu")
    assert cu_hpo4.spread_log_k == pytest.approx(0.001, abs=0.002)


def test_qualitative_rows_replaced_by_published_numbers(shipped_catalog):
    # (system, metal, ligand count) -> selected log K and its source, as read in the files.
    expected = {
        ("phosphate", "Mn"): (3.95, "thermochimie"),      # sit.dat 4821 (llnl.dat 5595: 3.58)
        ("phosphate", "Zn"): (3.26, "llnl"),              # llnl.dat 9567
        ("ammonia", "Mg"): (0.1, "thermochimie"),         # sit.dat 4680
        ("pyrophosphate", "Ca"): (7.5, "thermochimie"),   # sit.dat 2356 (llnl.dat 2194: 6.8)
        ("pyrophosphate", "Mg"): (7.2, "thermochimie"),   # sit.dat 4744 (llnl.dat 5475: 7.219)
        ("pyrophosphate", "Mn"): (6.0, "thermochimie"),   # sit.dat 4869
        ("succinate", "Ca"): (2.34, "thermochimie"),      # sit.dat 2382
        ("succinate", "Mg"): (2.27, "thermochimie"),      # sit.dat 4765
        ("oxalate", "Ca"): (3.19, "thermochimie"),        # sit.dat 2336
        ("oxalate", "Mg"): (3.56, "thermochimie"),        # sit.dat 4730
    }
    for (system_id, metal), (log_k, source) in expected.items():
        constants = binding_constants(shipped_catalog, system_id, metal)
        assert [(c.binding.log_k.value, c.binding.source) for c in constants] == [(log_k, source)], system_id
    # Cyanide: Ni(CN)4 2- log beta4 30.2 (minteq.v4.dat 4049, NIST46.4): not a 1:1 complex.
    (ni_cn,) = binding_constants(shipped_catalog, "cyanide", "Ni")
    assert (ni_cn.binding.ligand_count, ni_cn.binding.log_k.value) == (4, 30.2)
    assert not is_linear_binding(ni_cn.binding)


# ----------------------------------------------------------------------------- loader rules


@pytest.mark.parametrize("column", ["ionic_strength_mol_l", "temperature_c"])
def test_numeric_log_k_without_its_conditions_is_refused(catalog_copy, column):
    line = edit(catalog_copy, "metal_binding.csv", {"system_id": "sulfate", "metal": "Ca"}, {column: ""})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems == [f"metal_binding.csv:{line}: {column}: expected a number, got an empty cell"]


def test_override_without_a_reason_is_refused(catalog_copy):
    line = edit(catalog_copy, "metal_binding.csv", {"system_id": "sulfate", "metal": "Ca", "source": "llnl"},
                {"chosen": "yes"})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems == [f"metal_binding.csv:{line}: why: expected the reason for chosen = yes, "
                                     "got an empty cell"]


def test_two_overrides_of_one_complex_are_refused(catalog_copy):
    first = edit(catalog_copy, "metal_binding.csv", {"system_id": "sulfate", "metal": "Ca", "source": "llnl"},
                 {"chosen": "yes", "why": "test"})
    second = edit(catalog_copy, "metal_binding.csv", {"system_id": "sulfate", "metal": "Ca",
                                                       "source": "thermochimie"}, {"chosen": "yes", "why": "test"})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems == [f"metal_binding.csv:{max(first, second)}: chosen: expected at most one "
                                     f"chosen = yes per complex, got a second one (the first is on line "
                                     f"{min(first, second)})"]


def test_override_moves_the_value_in_force(catalog_copy):
    edit(catalog_copy, "metal_binding.csv", {"system_id": "sulfate", "metal": "Ca", "source": "llnl"},
         {"chosen": "yes", "why": "test"})
    catalog = read_catalog(catalog_copy)
    (ca_so4,) = binding_constants(catalog, "sulfate", "Ca")
    assert (ca_so4.binding.source, ca_so4.binding.log_k.value) == ("llnl", 2.1111)


def test_chosen_on_a_qualitative_row_is_refused(catalog_copy):
    line = edit(catalog_copy, "metal_binding.csv", {"system_id": "sulfate", "qualitative": "precipitates"},
                {"chosen": "no", "why": "test"})
    with pytest.raises(CatalogError) as caught:
        read_catalog(catalog_copy)
    assert caught.value.problems == [f"metal_binding.csv:{line}: chosen: expected an empty cell on a "
                                     "qualitative row (nothing to choose), got 'no'"]


# ----------------------------------------------------------------------------- the correction


def test_cu_hpo4_from_i_0_to_i_0_1_with_davies():
    # Hand check: g = -0.51081 (0.31623/1.31623 - 0.03) = -0.10740; dz2 = 4 + 4 - 0 = 8;
    # 4.06 - 8 x 0.10740 = 3.2008.  Published: 3.20 at I ~ 0.1 (bal2010), tolerance 0.01.
    value = float(log_k_at_conditions(4.06, 0.0, 25.0, np.nan, 2, -2, 1, 0.1, 25.0))
    assert value == pytest.approx(3.20, abs=0.01)
    assert value == pytest.approx(3.2008095787, abs=1e-8)  # regression, full precision


def test_correction_round_trips_and_leaves_neutral_ligands_alone():
    there = log_k_at_conditions(3.20, 0.1, 25.0, np.nan, 2, -2, 1, 0.0, 25.0)
    back = log_k_at_conditions(there, 0.0, 25.0, np.nan, 2, -2, 1, 0.1, 25.0)
    assert float(back) == pytest.approx(3.20, abs=1e-12)
    # Tris (neutral) with Cu2+: dz2 = 4 + 0 - 4 = 0, no activity correction at any I.
    assert float(log_k_at_conditions(4.05, 0.1, 25.0, np.nan, 2, 0, 1, 0.5, 25.0)) == pytest.approx(4.05, abs=1e-12)


def test_van_t_hoff_with_the_published_enthalpy():
    # CuNH3 2+: log K 4.01, dH -124 kJ/mol (NIST46 via minteq.v4.dat).  At 37 C, I = 0:
    # 4.01 + 124000/(R ln10) (1/310.15 - 1/298.15) = 4.01 - 0.8405 = 3.1695 (by hand).
    expected = 4.01 + 124000.0 / (GAS_CONSTANT_J_MOL_K * LN10) * (1 / 310.15 - 1 / 298.15)
    assert expected == pytest.approx(3.1695, abs=5e-4)
    assert float(log_k_at_conditions(4.01, 0.0, 25.0, -124.0, 2, 0, 1, 0.0, 37.0)) == pytest.approx(expected, abs=1e-12)
    # No published dH: no temperature correction.
    assert float(log_k_at_conditions(4.01, 0.0, 25.0, np.nan, 2, 0, 1, 0.0, 37.0)) == pytest.approx(4.01, abs=1e-12)


def test_correction_is_vectorised():
    ionic = np.array([0.0, 0.1, 0.2])
    out = log_k_at_conditions(4.06, 0.0, 25.0, np.nan, 2, -2, 1, ionic, np.array([25.0, 25.0, 37.0]))
    assert out.shape == (3,)
    assert out[0] == pytest.approx(4.06) and out[2] < out[1] < out[0]
    bad = log_k_at_conditions(4.06, 0.0, 25.0, np.nan, 2, -2, 1, np.array([0.1, np.nan]), 25.0)
    assert math.isfinite(bad[0]) and math.isnan(bad[1])


def test_docstring_example_runs():
    result = doctest.testmod(selector.chemistry.complexation)
    assert result.attempted > 0 and result.failed == 0


# ----------------------------------------------------------------------------- the linear model


def test_binding_term_uses_the_constant_at_the_conditions_of_use(shipped_catalog):
    # Cu with disodium hydrogen phosphate at pH 7.4, I = 0.1, 25 C: the bound/free ratio per
    # mol/L is K'(I) alpha(HPO4 2-) with K' = 10^3.2008 (the selected 4.06 moved to I = 0.1).
    reagent = next(r.reagent_id for r in shipped_catalog.reagents.values()
                   if r.system_id == "phosphate" and r.protons_removed == 2 and r.system_units == 1)
    lc = linear_coefficients([reagent], 7.4, 25.0, 0.1, shipped_catalog)
    terms = metal_binding_terms("Cu", lc, shipped_catalog)
    systems = shipped_catalog.systems
    tables = engine_tables(shipped_catalog)
    index = tables.systems.system_ids.index("phosphate")
    alpha = speciate_at_ph(tables.systems.subset(np.array([index])), 7.4, 25.0, 0.1).fractions[0, 0, 2]
    assert systems["phosphate"].charge_most_protonated - (-2) == 2
    assert terms.ratio[0, 0] == pytest.approx(10 ** 3.2008095787 * alpha, rel=1e-8)
    assert "phosphate" not in terms.unquantified


def test_not_one_to_one_complexes_leave_the_system_unquantified(shipped_catalog):
    reagent = next(r.reagent_id for r in shipped_catalog.reagents.values() if r.system_id == "cyanide")
    lc = linear_coefficients([reagent], 10.0, 25.0, 0.1, shipped_catalog)
    terms = metal_binding_terms("Ni", lc, shipped_catalog)
    assert terms.unquantified == ("cyanide",) and terms.ratio[0, 0] == 0.0
    assert "log β4 30.2" in terms.statements["cyanide"]


def test_admissibility_follows_the_linear_model(shipped_catalog):
    spec = make_spec(ph=9.2, metals=[{"metal": "Ni", "max_bound_fraction": 0.05}], allow_hazardous=True)
    result = admissible(spec, shipped_catalog)
    assert "binds Ni²⁺ (constants of complexes that are not 1:1" in result.reason("cyanide")
    # A system with a selected 1:1 constant stays in (ammonia, NiNH3 2+ log K 2.73, NIST46).
    assert result.reason("ammonia") is None


@pytest.mark.parametrize("system_id, metal, ligand_charge, selected, spread", [
    ("phosphate", "Mg", -3, 4.85, 1.739),   # sit.dat 4738 4.85; llnl.dat 5483 6.589; minteq.v4.dat 4409 4.654
    ("carbonate", "Zn", -2, 4.76, 0.86),    # minteq.v4.dat 4641 4.76 (NIST46.4); llnl.dat 9503 3.9
    ("fluoride", "Mg", -1, 2.05, 0.6976),   # minteq.v4.dat 1775 2.05 (NIST46.3); llnl.dat 5447 1.3524; sit.dat 1.8
    ("fluoride", "Ca", -1, 1.038, 0.3563),  # minteq.v4.dat 1783 1.038; llnl.dat 2154 0.6817; sit.dat 0.94
    ("fluoride", "Mn", -1, 1.6, 0.75),      # minteq.v4.dat 1591 1.6; sit.dat 4919 0.85; llnl.dat 1.43
    ("fluoride", "Cu", -1, 1.8, 0.6),       # minteq.v4.dat 1535 1.8; llnl.dat 3060 1.2
])
def test_compilations_that_differ_by_more_than_0_3_keep_the_spread(shipped_catalog, system_id, metal, ligand_charge,
                                                                   selected, spread):
    (constant,) = [c for c in binding_constants(shipped_catalog, system_id, metal)
                   if c.binding.ligand_species_charge == ligand_charge]
    assert constant.binding.log_k.value == selected
    # All values are I = 0, 25 C, so the spread is the plain largest difference (exact to 1e-9).
    assert constant.spread_log_k == pytest.approx(spread, abs=1e-9)
