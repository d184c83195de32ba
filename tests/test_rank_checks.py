"""The ranking's shortcuts give what the long way gives: admission of one system (the remedy
checks), the preparation pH solved in the verification batch (the criteria)."""

from __future__ import annotations

from selector.admissible import admissible
from selector.chemistry.equilibrium import solve_equilibrium
from selector.optimise.solve import make_problem
from selector.optimise.verify import verify_mixes
from selector.prices import demo_price_book
from selector.rank import rank_systems
from selector.spec import make_spec


def test_admission_of_one_system_matches_the_whole_catalogs_for_that_system(shipped_catalog):
    # Case: pH 7.4 at 37 °C with Ca (README rank spec). Judging one system alone must admit it
    # (or exclude it) with the same reagents and reason as judging every system; no source
    # needed, the two are the same rules.
    spec = make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.010,
                     metals=[{"metal": "Ca", "max_bound_fraction": 0.05}])
    prices = demo_price_book(shipped_catalog)
    whole = admissible(spec, shipped_catalog, prices)
    reagents_of = {s: [r for r in whole.reagents if shipped_catalog.reagents[r].system_id == s]
                   for s in whole.systems}
    for system_id in (*whole.systems[:3], whole.excluded[0].system_id):
        alone = admissible(spec, shipped_catalog, prices, only={system_id})
        if system_id in whole.systems:
            assert alone.systems == (system_id,)
            assert [r for r in alone.reagents if shipped_catalog.reagents[r].system_id] == reagents_of[system_id]
            assert alone.excluded == ()
        else:
            assert alone.systems == ()
            assert alone.excluded == tuple(e for e in whole.excluded if e.system_id == system_id)
        assert (alone.acid_id, alone.base_id, alone.salt_id) == (whole.acid_id, whole.base_id, whole.salt_id)



def test_preparation_ph_from_the_verification_batch_matches_a_solve_of_its_own(shipped_catalog):
    # Case: the README rank spec (use 37 °C, pH meter read at 25 °C); the cheapest tris and
    # HEPES mixes. The preparation pH the verification batch carries for the criteria must be
    # the engine's pH of the same mix solved alone at 25 °C (same engine, same rows; 1e-9 pH,
    # the golden records' tolerance).
    spec = make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.010,
                     metals=[{"metal": "Ca", "max_bound_fraction": 0.05}])
    rows = {r.system_id: r for r in rank_systems(spec, catalog=shipped_catalog, assess=False) if r.feasible}
    mixes = [dict(rows[s].reagents_mol_l) for s in ("tris", "hepes")]
    problem = make_problem(spec, catalog=shipped_catalog, max_systems=1)
    plain, with_prep = verify_mixes(problem, mixes), verify_mixes(problem, mixes, preparation=True)
    for mix, a, b in zip(mixes, plain, with_prep):
        assert a.ph_at_preparation is None
        assert b.ph == a.ph and b.dph_dt_per_k == a.dph_dt_per_k and b.dilution_value_ph == a.dilution_value_ph
        ids = list(mix)
        alone = solve_equilibrium(ids, [[mix[r] for r in ids]], 25.0, catalog=shipped_catalog)
        assert b.ph_at_preparation is not None
        assert abs(b.ph_at_preparation - float(alone.ph[0])) < 1e-9
