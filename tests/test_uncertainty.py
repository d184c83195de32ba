"""Uncertainty of pH and buffer capacity propagated from the catalog's constants.

Source of the method: JCGM 100:2008, Evaluation of measurement data — Guide to the expression of
uncertainty in measurement (GUM), first-order propagation for uncorrelated inputs (section numbers
from memory).  The check values are derived by hand from that rule, as each case says.

Lab notebook:

- Case 1, hand check: an equimolar monoprotic buffer (MOPS acid + MOPS sodium salt, 25 mM
  each, 25 °C).  The composition fixes the ratio [A⁻]/[HA] ≈ 1 through the charge balance
  ([Na⁺] = [A⁻] + [OH⁻] − [H⁺], and [H⁺], [OH⁻] ~ 1e-7 M are negligible beside 25 mM), so
  pH = pKa′ + log10([A⁻]/[HA]) moves one for one with the pKa: ∂pH/∂pKa = 1 and the
  constants' part of u(pH) equals u(pKa) (GUM, JCGM 100:2008 §5.1.2 eq. (10) with one
  input, sensitivity coefficient 1).  At 25 °C, the pKa's own temperature, ΔH° and ΔCp°
  move nothing.  Tolerance 1e-4 pH (the neglected [H⁺], [OH⁻] terms are ~1e-5 relative).
- Case 2: the combination is in quadrature: u² = Σ (c_i u_i)² + (activity-model term)²,
  checked on the budget of a polyprotic buffer (phosphate) at 37 °C, to 1e-12.
- Case 3: a batch of N compositions gives [N] uncertainties equal to those of each solved
  alone (1e-9 pH), from one perturbed batch.
- Case 4: reports (``poise ph --json``, ``poise recipe --json``) carry the new keys and
  no NaN; a solution beyond the model has null uncertainties.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from cli_helpers import run

from catalog import load_catalog
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.properties import describe_solution
from selector.chemistry.uncertainty import combine_in_quadrature, propagate_uncertainty
from selector.names import resolve_reagent


def _ids(*names):
    catalog = load_catalog()
    return [resolve_reagent(name, catalog) for name in names]


def test_monoprotic_buffer_at_its_pka_has_the_pka_uncertainty():
    catalog = load_catalog()
    ids = _ids("MOPS", "MOPS sodium salt")
    eq = solve_equilibrium(ids, [0.025, 0.025], 25.0, catalog=catalog)
    u = propagate_uncertainty(eq, catalog)
    u_pka = catalog.systems["mops"].steps[0].pka_25c.uncertainty
    assert u.ph_from_constants[0] == pytest.approx(u_pka, abs=1e-4)
    # ΔH° and ΔCp° move nothing at 25 °C; the pKa's shift is +u (pH rises with pKa).
    for effect in u.effects:
        if effect.quantity in ("dh_kj_mol", "dcp_j_k_mol"):
            assert abs(effect.ph_shift[0]) < 1e-9, effect.label
    pka_effect = next(e for e in u.effects if e.quantity == "pka_25c")
    assert pka_effect.ph_shift[0] == pytest.approx(u_pka, abs=1e-4)


def test_contributions_combine_in_quadrature():
    # GUM §5.1.2 eq. (10): 0.03 and 0.04 combine to 0.05 (a 3-4-5 triangle, exact).
    assert float(combine_in_quadrature([0.03, 0.04])) == pytest.approx(0.05, abs=1e-15)
    catalog = load_catalog()
    eq = solve_equilibrium(_ids("KH2PO4", "Na2HPO4"), [0.025, 0.025], 37.0, catalog=catalog)
    u = propagate_uncertainty(eq, catalog)
    parts = np.array([e.ph_shift[0] for e in u.effects])
    assert u.ph_from_constants[0] == pytest.approx(np.sqrt(np.sum(parts**2)), rel=1e-12)
    assert u.ph[0] == pytest.approx(np.hypot(u.ph_from_constants[0], u.ph_from_activity_model[0]), rel=1e-12)
    # Away from 25 °C the temperature terms of phosphate step 2 contribute (ΔH°, ΔCp°).
    moving = {e.quantity for e in u.effects if e.step == 2 and abs(e.ph_shift[0]) > 1e-4}
    assert moving == {"pka_25c", "dh_kj_mol", "dcp_j_k_mol"}


def test_batch_gives_one_uncertainty_per_solution_equal_to_each_alone():
    catalog = load_catalog()
    ids = _ids("Tris", "Tris hydrochloride")
    amounts = np.array([[0.01, 0.04], [0.025, 0.025], [0.04, 0.01]])
    temperatures = np.array([4.0, 25.0, 37.0])
    batch = propagate_uncertainty(solve_equilibrium(ids, amounts, temperatures, catalog=catalog), catalog)
    assert batch.ph.shape == (3,) and batch.capacity_mol_l_per_ph.shape == (3,)
    assert all(e.ph_shift.shape == (3,) for e in batch.effects)
    for k in range(3):
        alone = propagate_uncertainty(solve_equilibrium(ids, amounts[k], temperatures[k], catalog=catalog), catalog)
        assert alone.ph[0] == pytest.approx(batch.ph[k], abs=1e-9)


def test_activity_model_term_is_the_difference_between_two_models():
    catalog = load_catalog()
    ids = _ids("KH2PO4", "Na2HPO4")
    davies = solve_equilibrium(ids, [0.025, 0.025], 25.0, catalog=catalog)
    bates = solve_equilibrium(ids, [0.025, 0.025], 25.0, catalog=catalog, activity="bates-guggenheim")
    u = propagate_uncertainty(davies, catalog, "davies")
    assert u.alternative_model == "bates-guggenheim"
    assert u.ph_from_activity_model[0] == pytest.approx(abs(davies.ph[0] - bates.ph[0]), abs=1e-9)


def test_ph_json_carries_uncertainties_without_nan(capsys):
    code, out, err = run(capsys, "ph", "KH2PO4=25mM", "Na2HPO4=25mM", "--json")
    assert code == 0 and not err
    data = json.loads(out, parse_constant=lambda c: pytest.fail(f"{c} in JSON"))
    assert 0.0 < data["ph_uncertainty"] < 0.1
    assert data["capacity_uncertainty_mol_l_per_ph"] >= 0.0
    assert data["uncertainty_budget"]["largest_constants"][0]["constant"] == "pKa of step 2 of Phosphate"


def test_ph_text_shows_plus_minus(capsys):
    code, out, _ = run(capsys, "ph", "KH2PO4=25mM", "Na2HPO4=25mM")
    ph_line = next(line for line in out.splitlines() if line.strip().startswith("pH "))
    assert ph_line.split()[2] == "±" and 0.0 < float(ph_line.split()[3]) < 0.1


def test_solution_beyond_the_model_has_no_uncertainty():
    # 16.5 mol/L HCl: ionic strength far above the model's ceiling (beyond_model).
    report = describe_solution({"HCl": 16.5}, 0.0)
    assert report.status == "beyond_model"
    assert report.ph_uncertainty is None and report.capacity_uncertainty_mol_l_per_ph is None
    json.dumps(report.as_json(), allow_nan=False)


def test_recipe_json_carries_meter_and_verified_uncertainty(capsys):
    code, out, err = run(capsys, "recipe", "imidazole", "--ph", "7.0", "--temperature", "37", "--prep-temperature",
                         "20", "--conc", "50mM", "--volume", "1L", "--route", "titrate", "--json")
    assert code == 0, err
    data = json.loads(out, parse_constant=lambda c: pytest.fail(f"{c} in JSON"))
    recipe = data[0] if isinstance(data, list) else data
    # Imidazole's pKa is recalled (u = 0.05 pH, common-practice default): both pH figures carry about that.
    assert recipe["meter_ph_uncertainty"] == pytest.approx(0.05, abs=0.01)
    assert recipe["verified_ph_uncertainty"] == pytest.approx(0.05, abs=0.01)
    assert any("pKa of step 1 of Imidazole" in w and "0.050" in w for w in recipe["warnings"])
    # Titrant: to first order β·u(pH) mol/L of 1 M HCl more or less, i.e. β·u(pH)·V/1 M.
    expected_ml = recipe["capacity_mol_l_per_ph"] * recipe["verified_ph_uncertainty"] * recipe["volume_l"] * 1000.0
    assert recipe["titrant_ml_uncertainty"] == pytest.approx(expected_ml, rel=1e-12)
