"""The ion product of water and the complexes' log β in the propagated uncertainty.

Lab notebook:

- Case 1, Kw: u(pKw) = 0.01 at 0.1 MPa, 0-100 °C — Marshall & Franck, J. Phys. Chem. Ref.
  Data 10 (1981) 295, abstract: the equation describes "within ± 0.01 units of log Kw" the
  measurements at saturated vapour pressure up to 200 °C.  Its pH effect enters by the
  sensitivity coefficient ln10 [OH⁻]/β (the charge balance differentiated at fixed γ).  Check:
  the same shift obtained by re-solving with log Kw moved by ± 0.01 (central difference),
  on an alkaline buffer where [OH⁻] matters (CAPS, 10 + 40 mM, pH ≈ 11) and on a neutral one
  where it does not.  Tolerance 2 % of the shift (the coefficient holds γ and I fixed).
- Case 2, complexes: each complex with a ligand moved by ± its log β uncertainty on its own
  copy inside one block-diagonal batch gives the same pH and pCa shifts as re-solving the
  solution alone with that complex's log β moved (1e-9).  Ca²⁺ 2 mM with citrate 20 mM at pH
  about 6, 25 °C.  A log β's uncertainty is the one complexes.csv carries (the spread against
  sit.dat / llnl.dat where above 0.1, see tests/test_catalog_nist46.py), else 0.1 (common
  practice, catalog/selection.py).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

import selector.chemistry.speciation as speciation_module
from catalog import load_catalog
from catalog.selection import DEFAULT_LOG_BETA_UNCERTAINTY
from selector.chemistry.complex_equilibrium import solve_same_components
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.uncertainty import propagate_uncertainty
from selector.chemistry.water import PKW_UNCERTAINTY, log10_kw
from selector.names import resolve_reagent


def _ids(*names):
    catalog = load_catalog()
    return [resolve_reagent(name, catalog) for name in names]


def _strong(eq):
    charge = np.asarray(eq.strong_ion_charge, dtype=float)
    return eq.strong_ion_mol_l @ charge, 0.5 * eq.strong_ion_mol_l @ charge**2


@pytest.mark.parametrize("names, amounts", [(("CAPS free acid", "CAPS sodium salt"), [0.010, 0.040]),
                                            (("MOPS", "MOPS sodium salt"), [0.025, 0.025])])
def test_kw_shift_matches_a_resolve_with_kw_moved(monkeypatch, names, amounts):
    catalog = load_catalog()
    ids = _ids(*names)
    eq = solve_equilibrium(ids, amounts, 25.0, catalog=catalog)
    effect = next(e for e in propagate_uncertainty(eq, catalog).effects if e.quantity == "pkw")
    assert effect.uncertainty == PKW_UNCERTAINTY == 0.01
    moved = []
    for sign in (1.0, -1.0):
        # pKw + u is log Kw − u
        monkeypatch.setattr(speciation_module, "log10_kw", lambda t, s=sign: log10_kw(t) - s * PKW_UNCERTAINTY)
        # the engine keeps K(T), ln Kw and A per temperature: start each re-solve with none kept
        monkeypatch.setattr(speciation_module, "_TEMPERATURE_TERMS", {})
        moved.append(solve_equilibrium(ids, amounts, 25.0, catalog=catalog).ph[0])
    expected = 0.5 * (moved[0] - moved[1])
    assert effect.ph_shift[0] == pytest.approx(expected, rel=0.02, abs=1e-9)
    if names[0].startswith("CAPS"):
        assert effect.ph_shift[0] > 1e-4          # it matters at pH 11


def test_complex_log_beta_shifts_match_a_resolve_alone():
    catalog = load_catalog()
    ids = _ids("trisodium citrate dihydrate", "sodium dihydrogen citrate", "calcium chloride dihydrate")
    eq = solve_equilibrium(ids, [0.016, 0.004, 0.002], 25.0, catalog=catalog)
    sp = eq.speciation
    assert sp.metals is not None and 5.0 < sp.ph[0] < 7.0
    u = propagate_uncertainty(eq, catalog)
    complexes = sp.metals.complexes
    strong_charge, strong_ionic = _strong(eq)
    calcium = sp.metals.metal_ids.index("Ca")
    checked = 0
    for effect in u.effects:
        if effect.quantity != "log_beta":
            continue
        c = complexes.complex_ids.index(effect.species)
        stated = {row.complex_id: row.uncertainty for row in catalog.complexes}[effect.species]
        assert effect.uncertainty == (stated if stated is not None else DEFAULT_LOG_BETA_UNCERTAINTY)
        results = []
        for sign in (1.0, -1.0):
            log_beta = complexes.log_beta_25c.copy()
            log_beta[c] += sign * effect.uncertainty
            alone = solve_same_components(sp, sp.totals_mol_l, strong_charge, strong_ionic, sp.temperature_c,
                                          sp.systems, complexes=replace(complexes, log_beta_25c=log_beta))
            results.append((alone.ph[0], -np.log10(alone.metals.free_mol_l[0, calcium])))
        assert effect.ph_shift[0] == pytest.approx(0.5 * (results[0][0] - results[1][0]), abs=1e-9)
        checked += 1
    assert checked >= 2
    assert u.metal_ids == sp.metals.metal_ids
    assert 0.0 < u.p_free_metal_from_constants[0, calcium] < 0.2
    assert np.isfinite(u.p_free_metal[0, calcium])


def test_ph_report_carries_the_free_metal_uncertainty():
    # poise ph: the pM of each metal present with its standard uncertainty (JSON
    # metal_p_free_uncertainty, text "pCa 4.35 ± 0.10"), equal to the propagated figure.
    from selector.chemistry.properties import describe_solution
    from selector.report import format_solution_report

    amounts = {"trisodium citrate dihydrate": "16mM", "sodium dihydrogen citrate": "4mM",
               "calcium chloride dihydrate": "2mM"}
    report = describe_solution(amounts, 25.0)
    u = report.as_json()["metal_p_free_uncertainty"]
    assert set(u) == {"Ca"} and 0.0 < u["Ca"] < 0.2
    catalog = load_catalog()
    eq = solve_equilibrium(_ids(*amounts), [0.016, 0.004, 0.002], 25.0, catalog=catalog)
    assert u["Ca"] == pytest.approx(float(propagate_uncertainty(eq, catalog).p_free_metal[0, 0]), rel=1e-9)
    assert f"pCa  {report.metals.p_free['Ca']:.2f} ± {u['Ca']:.2f}" in format_solution_report(report)
