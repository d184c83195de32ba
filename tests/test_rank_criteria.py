"""Ranking by suitability: the scoring rules on hand-made cases, profiles, the assay example,
concentration ranges and remedies re-verified by re-solving."""

from __future__ import annotations

import math
from dataclasses import replace

import pytest

from selector.criteria import RULES, Context, Criterion, weighted_score
from selector.profiles import CRITERIA, PROFILES, profile_weights
from selector.rank import SORTS, rank_systems
from selector.spec import SpecError, make_spec

SPEC = make_spec(ph=7.4, tolerance_ph=0.05)
CTX = Context(SPEC, cheapest_per_l=1.0)


def score(name: str, value: float, ctx: Context = CTX) -> float:
    return RULES[name].score(value, ctx)


# --- the scoring rules (each rule is common practice unless its docstring names a source) ---

def test_distance_score_is_the_share_of_peak_capacity_of_a_conjugate_pair():
    # 4r/(1 + r)², r = 10^d: at d = 0 the pair is half dissociated, β at its peak (score 1);
    # at d = 1 by hand 4·10/121 = 0.330579 (tolerance 1e-6); at d = 0.5 4·3.16228/4.16228² = 0.730.
    assert score("distance", 0.0) == pytest.approx(1.0, abs=1e-12)
    assert score("distance", 1.0) == pytest.approx(40 / 121, abs=1e-6)
    assert score("distance", 0.5) == pytest.approx(4 * 10**0.5 / (1 + 10**0.5) ** 2, abs=1e-12)


def test_capacity_score_is_the_share_of_the_monoprotic_maximum():
    # β_max = ln10·C/4 = 0.5756 per mol (Van Slyke form, from memory): score 1 there, 0.5 at half.
    assert score("capacity", math.log(10) / 4) == pytest.approx(1.0)
    assert score("capacity", math.log(10) / 8) == pytest.approx(0.5)
    assert score("capacity", 1.0) == 1.0     # above the monoprotic maximum (water, two steps): capped


def test_drift_score_halves_at_two_hundredths_per_kelvin():
    # common practice: 1 − |dpH/dT| / 0.04, so 0.5 at 0.02 pH/K; Tris (about 0.028 pH/K, from
    # memory) scores below HEPES (about 0.014 pH/K, from memory).
    assert score("drift", 0.0) == 1.0
    assert score("drift", 0.02) == pytest.approx(0.5)
    assert score("drift", 0.05) == 0.0
    assert score("drift", 0.028) < score("drift", 0.014)


def test_cost_score_falls_by_half_per_decade():
    # common practice: 1 − log10(cost / cheapest) / 2: the cheapest 1, ten times it 0.5, 100× 0.
    assert score("cost", 1.0) == 1.0
    assert score("cost", 10.0) == pytest.approx(0.5)
    assert score("cost", 100.0) == pytest.approx(0.0)
    assert score("cost", 1000.0) == 0.0


def test_flag_temperature_shift_ionic_uv_and_uncertainty_scores():
    assert score("reactivity", 2.0) == pytest.approx(0.5)         # 1 − 0.25 per flag
    assert score("interference", 1.0) == pytest.approx(0.5)       # 1 − 0.5 per flag
    assert score("temperature_shift", 0.05) == 1.0                # within the spec's tolerance 0.05
    assert score("temperature_shift", 0.2) == pytest.approx(0.25)  # tolerance / shift
    assert score("ionic_strength", 0.15) == pytest.approx(0.5)    # 1 − I / 0.3 mol/L
    assert score("uv_margin", 20.0) == pytest.approx(0.5)         # margin / 40 nm
    assert score("uv_margin", -5.0) == 0.0
    assert score("uncertainty", 0.05) == pytest.approx(0.5)       # 1 − u / 0.1 pH


def test_weighted_score_is_the_weighted_mean_of_the_criteria_present():
    criteria = {"drift": Criterion("drift", 0.01, "pH/K", 0.75), "cost": Criterion("cost", 2.0, "EUR/L", 0.25),
                "uv_margin": Criterion("uv_margin", None, "nm", 0.5)}
    assert weighted_score(criteria, {"drift": 3, "cost": 1}) == pytest.approx((3 * 0.75 + 0.25) / 4)
    assert weighted_score(criteria, {"metal_bound": 3}) == 0.0    # no weighted criterion applies


def test_every_criterion_has_a_rule_and_every_profile_names_known_criteria():
    assert tuple(RULES) == CRITERIA
    assert SORTS == ("score", *CRITERIA)
    for weights in PROFILES.values():
        assert set(weights) <= set(CRITERIA)
    assert profile_weights("assay", (("cost", 5.0),))["cost"] == 5.0


def test_spec_refuses_unknown_profile_and_weight():
    with pytest.raises(SpecError, match="profile: expected one of assay"):
        make_spec(ph=7.4, profile="fastest")
    with pytest.raises(SpecError, match="unknown criterion 'speed'"):
        make_spec(ph=7.4, weights={"speed": 1})


# --- the ranking ---

ASSAY = dict(ph=7.4, temperature_c=37.0, prep_temperature_c=22.0, buffer_conc_mol_l=0.05,
             metals=[{"metal": "Ca", "max_bound_fraction": 0.05}])


@pytest.fixture(scope="module")
def assay_rows(shipped_catalog):
    return rank_systems(make_spec(**ASSAY), catalog=shipped_catalog)


def test_assay_profile_puts_first_low_drift_near_pka_systems_that_leave_calcium_free(assay_rows):
    # The done-when of the ranking: for pH 7.4 at 37 °C, prepared at 22 °C, 50 mM, Ca²⁺ ≤ 5 %
    # bound, the default (assay) ranking starts with systems that hold |dpH/dT| ≤ 0.02 pH/K,
    # |pH − pKa′| ≤ 0.5 and bind < 5 % of the Ca²⁺ (the scientist's rule of thumb, common
    # practice).  The five first must all pass it.
    top = [r for r in assay_rows if r.feasible][:5]
    assert len(top) == 5
    for r in top:
        assert abs(r.dph_dt_per_k) <= 0.02 and r.distance_ph <= 0.5 and r.bound_fraction["Ca"] < 0.05, r.system_id
    ranks = {r.system_id: r.rank for r in assay_rows if r.feasible}
    assert ranks["hepes"] < ranks["tris"] and ranks["hepes"] < ranks["imidazole"]


def test_each_feasible_row_carries_its_criteria_score_reason_and_ph_uncertainty(assay_rows):
    for r in (r for r in assay_rows if r.feasible):
        row = r.as_json()
        assert 0.0 <= row["score"] <= 1.0
        assert set(row["criteria"]) == set(CRITERIA)   # metals given: every criterion applies
        for c in row["criteria"].values():
            assert set(c) == {"value", "unit", "score"} and 0.0 <= c["score"] <= 1.0
        assert row["reason"] and 0.0 < row["ph_uncertainty"] < 0.2
    scores = [r.score for r in assay_rows if r.feasible]
    assert scores == sorted(scores, reverse=True)


def test_purchasing_profile_and_cost_sort_put_the_cheapest_first(assay_rows, shipped_catalog):
    spec = make_spec(**ASSAY)
    cheapest = min((r for r in assay_rows if r.feasible), key=lambda r: r.cost_per_l)
    for rows in (rank_systems(replace(spec, profile="purchasing"), catalog=shipped_catalog),
                 rank_systems(spec, catalog=shipped_catalog, sort="cost")):
        assert rows[0].system_id == cheapest.system_id
        costs = [r.cost_per_l for r in rows if r.feasible]
        assert costs == sorted(costs)


def test_a_weight_moves_the_order_the_expected_way(shipped_catalog):
    # Raising the weight of cost moves a cheap system up (or keeps it) and an expensive one
    # down (or keeps it): the order follows the weights, not a fixed list.
    spec = make_spec(**ASSAY)
    plain = {r.system_id: r.rank for r in rank_systems(spec, catalog=shipped_catalog) if r.feasible}
    costly = {r.system_id: r.rank for r in rank_systems(replace(spec, weights=(("cost", 20.0),)),
                                                        catalog=shipped_catalog) if r.feasible}
    assert costly["triethanolamine"] <= plain["triethanolamine"]
    assert costly["tapso"] >= plain["tapso"]
    drifty = {r.system_id: r.rank for r in rank_systems(replace(spec, weights=(("drift", 30.0),)),
                                                        catalog=shipped_catalog) if r.feasible}
    assert drifty["pipes"] < plain["pipes"]      # the smallest |dpH/dT| of the list (-0.0069 pH/K)


def test_chromatography_profile_prefers_transparent_low_ionic_strength_systems(shipped_catalog):
    spec = make_spec(ph=7.4, temperature_c=25.0, buffer_conc_mol_l=0.02, uv_nm=230.0, profile="chromatography")
    rows = [r for r in rank_systems(spec, catalog=shipped_catalog) if r.feasible]
    top = rows[0]
    assert top.criteria["uv_margin"].score >= max(r.criteria["uv_margin"].score for r in rows) - 0.5
    assert top.score == max(r.score for r in rows)


def test_conc_range_takes_the_lowest_concentration_meeting_the_capacity(shipped_catalog):
    # β ≥ 10 mM/pH needs about 18 mM HEPES at pH 7.4 (37 °C, the cheapest mix alone); with the
    # range 20-100 mM the ranking takes the low end 20 mM; with 5-100 mM the 18 mM; with
    # 5-15 mM HEPES cannot meet it.  Concentrations to 1e-6 relative (solver tolerance).
    base = dict(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.01)
    free = next(r for r in rank_systems(make_spec(**base), catalog=shipped_catalog, only="hepes"))
    assert 0.005 < free.conc_mol_l < 0.02

    def hepes(low, high):
        spec = make_spec(**base, buffer_conc_min_mol_l=low, buffer_conc_max_mol_l=high)
        return next(r for r in rank_systems(spec, catalog=shipped_catalog, only="hepes"))

    assert hepes(0.02, 0.1).conc_mol_l == pytest.approx(0.02, rel=1e-6)
    assert hepes(0.005, 0.1).conc_mol_l == pytest.approx(free.conc_mol_l, rel=1e-6)
    assert not hepes(0.001, free.conc_mol_l * 0.8).feasible


REMEDY_SPECS = {
    # POPSO free acid dissolves to about 5.5 mM only (catalog solubility): --conc lowers.
    "conc_solubility": (dict(ASSAY), None),
    # 400 mM/pH of capacity at pH 6.1: MES cannot reach it (test_rank.py): --capacity lowers.
    "capacity": (dict(ph=6.1, capacity_mol_l_per_ph=0.4, in_stock=["mes", "mops", "hcl", "naoh", "nacl"]), None),
    # A 2 mM acid load within ±0.02 pH at 10 mM: tolerance or concentration must move.
    "tolerance": (dict(ph=7.2, buffer_conc_mol_l=0.01, tolerance_ph=0.02, loads=[{"kind": "acid", "conc_mol_l": 0.002}],
                       in_stock=["mops", "hepes", "pipes", "hcl", "naoh", "nacl"]), None),
    # An ionic-strength cap of 10 mM with β ≥ 20 mM/pH: PIPES (dianion) cannot stay under it.
    "ionic_cap": (dict(ph=7.0, capacity_mol_l_per_ph=0.02, ionic_strength_max_mol_l=0.01,
                       in_stock=["pipes", "mops", "hcl", "naoh", "nacl"]), None),
    # Tris drifts about −0.028 pH/K (from memory): over a 23-45 °C window it leaves ±0.05 pH;
    # the window's ends (or the tolerance) must move.
    "window": (dict(ph=7.4, temperature_c=25.0, buffer_conc_mol_l=0.05, temperature_min_c=23.0,
                    temperature_max_c=45.0, in_stock=["tris", "hepes", "hcl", "naoh", "nacl"]), None),
    # Citrate at pH 6.6 binds far more than 5 % of the Mg²⁺ at 20 mM/pH (catalog constant):
    # only a larger bound fraction lets it in.
    "metal": (dict(ph=6.6, temperature_c=37.0, capacity_mol_l_per_ph=0.02,
                   metals=[{"metal": "Mg", "max_bound_fraction": 0.05}], in_stock=["citric_acid", "mops", "hcl", "naoh", "nacl"]),
              None),
}


@pytest.mark.parametrize("case", sorted(REMEDY_SPECS))
def test_every_remedy_makes_its_system_feasible_when_applied(case, shipped_catalog):
    # Apply each remedy, re-rank: the system is feasible; and the remedy is the change of one field.
    fields, _ = REMEDY_SPECS[case]
    try:
        spec = make_spec(fields, catalog=shipped_catalog)
    except SpecError:
        pytest.skip(f"{case}: spec not accepted by this catalog")
    rows = rank_systems(spec, catalog=shipped_catalog)
    infeasible = [r for r in rows if not r.feasible and not r.excluded]
    assert infeasible, f"{case}: expected an infeasible system"
    verified = 0
    for r in infeasible:
        if r.remedy is None:
            assert r.remedy_reason
            continue
        changed = r.remedy.apply(spec)
        assert [f for f in spec.__dataclass_fields__ if getattr(spec, f) != getattr(changed, f)] == [r.remedy.field]
        again = rank_systems(changed, catalog=shipped_catalog, only=r.system_id, assess=False)
        assert again[0].feasible, (case, r.system_id, r.remedy)
        verified += 1
    assert verified >= 1, (case, [(r.system_id, r.reason, r.remedy_reason) for r in infeasible])


@pytest.mark.parametrize("name", ["selector.digits", "selector.criteria", "selector.profiles", "selector.remedies"])
def test_docstring_examples_of_the_ranking_modules(name):
    # Worked examples: digits added until a value and its limit differ (7.3504 against 7.35
    # shows as 7.3504 / 7.3500, never 7.350 / 7.350); the weighted mean; rounding a remedy.
    import doctest
    import importlib

    result = doctest.testmod(importlib.import_module(name))
    assert result.attempted > 0 and result.failed == 0


@pytest.mark.parametrize("fields, words", [
    (dict(buffer_conc_min_mol_l=0.02), "give both ends of the concentration range"),
    (dict(buffer_conc_min_mol_l=0.1, buffer_conc_max_mol_l=0.02), "is above buffer_conc_max_mol_l"),
    (dict(buffer_conc_mol_l=0.05, buffer_conc_min_mol_l=0.02, buffer_conc_max_mol_l=0.1), "not both"),
    (dict(weights=["drift"]), "expected a table of criterion = weight"),
    (dict(weights={"drift": "heavy"}), "weights.drift: expected a number"),
    (dict(weights={"drift": 5000}), "expected <= 1000"),
])
def test_spec_refuses_bad_ranking_fields_naming_the_key(fields, words):
    with pytest.raises(SpecError, match=words):
        make_spec(ph=7.4, **fields)


def test_ranking_fields_survive_a_spec_file_round_trip():
    from selector.spec import parse_spec, spec_to_json, spec_to_toml

    spec = make_spec(ph=7.4, profile="chromatography", weights={"drift": 2.5},
                     buffer_conc_min_mol_l=0.02, buffer_conc_max_mol_l=0.1)
    assert parse_spec(spec_to_toml(spec)) == spec
    assert parse_spec(spec_to_json(spec), "json") == spec
