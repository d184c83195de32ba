"""Ranking of buffer systems: the optimiser's model, one system at a time."""

from __future__ import annotations

from dataclasses import replace

import pytest

from selector.admissible import admissible
from selector.optimise import solve_min_cost
from selector.rank import conditional_pka, rank_systems
from selector.spec import make_spec

CA_LIMIT = [{"metal": "Ca", "max_bound_fraction": 0.05}]


@pytest.fixture(scope="module")
def ca_ranking(shipped_catalog):
    # pH 6.6 at 37 °C: both phosphate (pKa2' ≈ 6.85) and citrate (pKa3' ≈ 5.9) are within
    # their useful range, so what removes them is the calcium limit alone.
    spec = make_spec(ph=6.6, temperature_c=37.0, capacity_mol_l_per_ph=0.02, metals=CA_LIMIT)
    return spec, rank_systems(spec, catalog=shipped_catalog)


def test_calcium_limit_removes_phosphate_and_citrate_with_reasons(ca_ranking):
    # Ca²⁺ ≤ 5 % bound: phosphate precipitates Ca²⁺ (catalog qualitative row) and citrate
    # binds it (log K 4.87, MINTEQ via the catalog) far beyond 5 % at the needed amount.
    _, rows = ca_ranking
    by_id = {r.system_id: r for r in rows}
    assert not by_id["phosphate"].feasible and "precipitates Ca²⁺" in by_id["phosphate"].reason
    assert not by_id["citrate"].feasible and "Ca²⁺" in by_id["citrate"].reason
    assert all(r.bound_fraction["Ca"] <= 0.05 + 1e-6 for r in rows if r.feasible)


def test_ranking_and_optimiser_agree(ca_ranking, shipped_catalog):
    # Same model: the optimiser with k = 1 must cost what the cheapest system costs, whether the
    # ranking is sorted by cost or weighted by the purchasing profile (tolerance 1e-6 relative,
    # activity rounds stop at ΔI < 1e-4 mol/L).
    from dataclasses import replace

    spec, _ = ca_ranking
    result = solve_min_cost(spec, catalog=shipped_catalog, max_systems=1)
    for rows in (rank_systems(spec, catalog=shipped_catalog, sort="cost"),
                 rank_systems(replace(spec, profile="purchasing"), catalog=shipped_catalog)):
        top = rows[0]
        assert result.systems == (top.system_id,)
        assert result.cost_per_l == pytest.approx(top.cost_per_l, rel=1e-6)
        costs = [r.cost_per_l for r in rows if r.feasible]
        assert costs == sorted(costs)


def test_excluding_primary_amines_removes_tris_and_glycine(shipped_catalog):
    spec = make_spec(ph=8.0, exclude=["primary_amine"])
    allowed = admissible(spec, shipped_catalog)
    for system_id in ("tris", "glycine"):
        assert system_id not in allowed.systems
        assert "primary amine (excluded)" in allowed.reason(system_id)
    assert "hepes" in allowed.systems


def test_hazard_uv_and_counter_ion_rules(shipped_catalog):
    spec = make_spec(ph=7.0, uv_nm=230.0, counter_ion="K")
    allowed = admissible(spec, shipped_catalog)
    assert allowed.reason("cyanide").startswith("hazardous")
    # imidazole cut-off about 235 nm (catalog, from-memory) is at/above 230 nm
    assert "absorbs at 230 nm" in allowed.reason("imidazole")
    assert "naoh" not in allowed.reagents and "koh" in allowed.reagents
    assert not any("Na" in dict(shipped_catalog.reagents[r].ions) for r in allowed.reagents if r != "nacl")


def test_top_systems_at_ph_7_4_and_37_c_have_pka_near_7_4(shipped_catalog):
    # pH 7.4 at 37 °C, β ≥ 20 mM/pH, I ≤ 100 mM and at most 300 mOsm/L (a cell-friendly
    # buffer), no exclusions: the three cheapest systems have pKa' within 1 of the target
    # (common practice: a buffer is used within about ±1 of its pKa).  Without the
    # osmolarity cap, ~460 mM boric acid (pKa' 9.1) is cheap enough to rank third.
    spec = make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.02, ionic_strength_max_mol_l=0.1,
                     osmolarity_max_osmol_l=0.3)
    rows = rank_systems(spec, catalog=shipped_catalog)
    top = [r for r in rows if r.feasible][:3]
    assert len(top) == 3
    assert all(abs(r.pka_at_use - 7.4) < 1.0 for r in top), [(r.system_id, r.pka_at_use) for r in top]


def test_conditional_pka_of_tris_at_37_c(shipped_catalog):
    # Tris at 37 °C, I = 0: eq. (9) of Goldberg et al. (2002) by hand with the catalog's
    # pKa 8.072 (from memory), ΔH° 47.53 kJ/mol and ΔCp° −67 J/(K mol) (tris_orn1987):
    # 8.072 − 47530/(R ln10)·(1/298.15 − 1/310.15) + 67/(R ln10)·(298.15/310.15 − 1 + ln(310.15/298.15))
    # = 7.7525; I = 0 so no activity shift.  Tolerance 0.001.
    assert conditional_pka("tris", 7.4, 37.0, 0.0, shipped_catalog) == pytest.approx(7.7525, abs=0.001)


def test_infeasible_system_says_why(shipped_catalog):
    # 400 mM/pH of capacity from MES alone: MES free acid solubility about 130 g/L
    # (0.67 M, catalog) and the 1 M cap cannot reach it near pH 6.
    spec = make_spec(ph=6.1, capacity_mol_l_per_ph=0.4, in_stock=["mes", "mops", "hcl", "naoh", "nacl"])
    rows = {r.system_id: r for r in rank_systems(spec, catalog=shipped_catalog)}
    assert not rows["mes"].feasible
    assert "capacity: best reachable" in rows["mes"].reason


def test_sort_orders(shipped_catalog):
    spec = make_spec(ph=7.2, capacity_mol_l_per_ph=0.015, in_stock=["mops", "mops_na", "hepes", "tris", "imidazole", "hcl", "naoh",
                                                                                   "nacl"])
    by_distance = [r for r in rank_systems(spec, catalog=shipped_catalog, sort="distance") if r.feasible]
    assert [r.distance_ph for r in by_distance] == sorted(r.distance_ph for r in by_distance)
    by_drift = [r for r in rank_systems(spec, catalog=shipped_catalog, sort="drift") if r.feasible]
    assert [abs(r.dph_dt_per_k) for r in by_drift] == sorted(abs(r.dph_dt_per_k) for r in by_drift)


def test_systems_outside_their_useful_range_are_left_out(shipped_catalog):
    # pH 7.4 at 37 °C: boric acid (pKa 9.24 at 25 °C, Goldberg et al. 2002 via the catalog)
    # and ammonium (9.25) buffer only at absurd concentrations; the rule pKa' ± 1 (common
    # practice) leaves them out with the reason, while HEPES (pKa 7.5) stays in.
    allowed = admissible(make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.02), shipped_catalog)
    for system_id in ("borate", "ammonia"):
        assert "outside its useful range" in allowed.reason(system_id)
    assert "hepes" in allowed.systems


def test_recipe_sized_by_capacity_uses_the_rankings_concentration(shipped_catalog):
    from selector.rank import cheapest_mix_of
    from selector.recipe import make_recipes

    spec = make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.01, tolerance_ph=0.1,
                     loads=[{"kind": "acid", "conc_mol_l": 0.002}], ionic_strength_mol_l=0.15)
    row = cheapest_mix_of("hepes", spec, catalog=shipped_catalog)
    recipe = make_recipes("hepes", spec, routes=["two-forms"], catalog=shipped_catalog)[0]
    assert recipe.buffer_conc_mol_l == pytest.approx(row.conc_mol_l, rel=1e-9)


def test_the_catalog_passed_in_names_the_reagents(catalog_copy):
    # A copy of the shipped catalog with MES free acid renamed: the ranking's reason
    # ("held back by: … at its solubility") must use the catalog it was given, not the
    # shipped one.  Same case as test_infeasible_system_says_why.
    from catalog import read_catalog

    reagents = catalog_copy / "reagents.csv"
    text = reagents.read_text(encoding="utf-8")
    assert text.count(",MES free acid,") == 1
    reagents.write_text(text.replace(",MES free acid,", ",MES acid of the copy,"), encoding="utf-8")
    copy = read_catalog(catalog_copy)
    spec = make_spec(ph=6.1, capacity_mol_l_per_ph=0.4, in_stock=["mes", "mops", "hcl", "naoh", "nacl"])
    rows = {r.system_id: r for r in rank_systems(spec, catalog=copy)}
    assert "held back by: MES acid of the copy at its solubility" in rows["mes"].reason


def test_chelating_agents_are_not_offered_as_ph_buffers():
    # Case: EDTA has a pKa′ near 6.2 but would strip Ca, Mg and Zn from an assay (common practice):
    # it is excluded from the buffers a spec admits unless the spec holds it as a fixed amount.
    allowed = admissible(make_spec(ph=6.2, buffer_conc_mol_l=0.05))
    reasons = {e.system_id: e.reason for e in allowed.excluded}
    assert "edta" not in allowed.systems and "chelating agent" in reasons["edta"]
    fixed = admissible(make_spec(ph=6.2, buffer_conc_mol_l=0.05, fixed_amounts={"na2h2edta_2h2o": 0.001}))
    assert "edta" not in {e.system_id for e in fixed.excluded}


def test_required_flag_admits_only_volatile_systems_for_lc_ms():
    # Case: an LC-MS method needs a volatile buffer (catalog flag volatile_ms; common practice):
    # `require` keeps every system without the flag out, with the reason.
    allowed = admissible(make_spec(ph=4.5, buffer_conc_mol_l=0.01, require=["volatile_ms"]))
    reasons = {e.system_id: e.reason for e in allowed.excluded}
    assert "acetate" in allowed.systems and "formate" in allowed.systems
    assert "citrate" not in allowed.systems and "not volatile for LC-MS (required)" in reasons["citrate"]


def test_a_systems_mix_does_not_depend_on_the_systems_ranked_beside_it(ca_ranking, shipped_catalog):
    # The systems' activity rounds run side by side, each solve started from that system's own
    # basis: ranked among all, among two or alone, a system's mix and cost are the same
    # floating-point numbers (exact equality, no tolerance).  The verified figures come from the
    # exact engine, where a composition alone and inside a batch agree to about 1e-12
    # (DEVELOPERS.md, the engine), hence that tolerance on them.
    from selector.rank import cheapest_mix_of

    spec, rows = ca_ranking
    feasible = [r for r in rows if r.feasible]
    pair = {r.system_id: r for r in rank_systems(spec, catalog=shipped_catalog, assess=False,
                                                 only=[r.system_id for r in feasible[:2]])}
    for row in feasible:
        alone = cheapest_mix_of(row.system_id, spec, catalog=shipped_catalog)
        for other in (alone, pair.get(row.system_id, alone)):
            assert other.reagents_mol_l == row.reagents_mol_l
            assert other.cost_per_l == row.cost_per_l
            assert other.capacity_mol_l_per_ph == pytest.approx(row.capacity_mol_l_per_ph, rel=1e-12)
            assert other.ionic_strength_mol_l == pytest.approx(row.ionic_strength_mol_l, rel=1e-12)


def test_a_remedy_starts_at_the_nearest_mix_and_no_check_asks_what_the_spec_asks(shipped_catalog, monkeypatch):
    # README spec (pH 7.4, 37 °C, capacity 10 mM/pH, Ca ≤ 5 %): POPSO is infeasible (its free
    # acid's solubility caps β; the elastic solve's nearest mix reaches 3.11 mM/pH).  The
    # remedy's search starts there: lower the capacity to 3.1 mM/pH (2 significant figures, on
    # the feasible side), verified by one re-solve.  Leaving the capacity out would assume
    # 10 mM/pH (common practice, selector.optimise.DEFAULT_CAPACITY_MOL_L_PER_PH), the spec
    # itself: no check solves that again.  No published value: a property of the search.
    import selector.rank as rank
    from selector.optimise import assumed_capacity

    spec = make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.010, metals=CA_LIMIT)
    solved = []
    real = rank._feasible_alone

    def counting(changed, *args):
        solved.append(changed)
        return real(changed, *args)

    monkeypatch.setattr(rank, "_feasible_alone", counting)
    rows = {r.system_id: r for r in rank_systems(spec, catalog=shipped_catalog)}
    popso = rows["popso"]
    assert not popso.feasible and popso.remedy is not None
    assert (popso.remedy.field, popso.remedy.field_value) == ("capacity_mol_l_per_ph", pytest.approx(0.0031))
    moved = [s.capacity_mol_l_per_ph for s in solved if s.capacity_mol_l_per_ph != spec.capacity_mol_l_per_ph]
    assert moved == [pytest.approx(0.0031)], "the capacity: one check, at the nearest value"
    assert any(s.metals != spec.metals for s in solved), "the metal limit is still searched"
    assert all(assumed_capacity(s) != assumed_capacity(spec) or s.metals != spec.metals for s in solved)
    monkeypatch.setattr(rank, "_feasible_alone", real)
    for capacity, feasible in ((0.0031, True), (0.0032, False)):    # the remedy is the nearest at 2 figures
        again = {r.system_id: r for r in rank_systems(replace(spec, capacity_mol_l_per_ph=capacity),
                                                      catalog=shipped_catalog, only="popso")}
        assert again["popso"].feasible is feasible, capacity


def test_oscillating_activity_rounds_settle_and_the_ranking_answers(shipped_catalog):
    # Case (no published value; behaviour): pH 9 at 25 °C, β ≥ 10 mM/pH, 3 mM base load.
    # Pyrophosphate's cheapest linear mix sits near I = 1 mol/L, where each round's I
    # overshoots the last by a factor of about −0.7 (measured: 0.85, 1.16, 0.94, 1.09 …
    # 1.022 after 12 rounds); the whole ranking used to end in "did not settle".  With the
    # rounds under-relaxed once they oscillate they settle (10 rounds) and every system
    # gets a row with a reason.
    spec = make_spec(ph=9.0, temperature_c=25.0, capacity_mol_l_per_ph=0.01,
                     loads=[{"kind": "base", "conc_mol_l": 0.003}])
    rows = rank_systems(spec, catalog=shipped_catalog)
    by_id = {r.system_id: r for r in rows}
    assert by_id["pyrophosphate"].reason
    assert any(r.feasible for r in rows)


def test_one_system_whose_rounds_fail_leaves_the_others_ranked(monkeypatch, shipped_catalog):
    # Case (no published value; behaviour): a solver failure in one system's activity rounds
    # makes that system a row with the reason, not an error for the whole ranking.
    import selector.rank as rank_module
    from selector.errors import SolverError

    real_step = rank_module._step

    def failing_for_hepes(problem, rounds, basis):
        if problem.held_system == "hepes":
            raise SolverError("the activity rounds did not settle (test)")
        return real_step(problem, rounds, basis)

    monkeypatch.setattr(rank_module, "_step", failing_for_hepes)
    rows = rank_systems(make_spec(ph=7.4, temperature_c=25.0, buffer_conc_mol_l=0.05), catalog=shipped_catalog)
    by_id = {r.system_id: r for r in rows}
    assert not by_id["hepes"].feasible and "did not settle (test)" in by_id["hepes"].reason
    assert by_id["mops"].feasible
