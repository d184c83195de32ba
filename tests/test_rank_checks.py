"""Admission of one system (the remedy checks) gives what admission of the whole catalog gives for it."""

from __future__ import annotations

from selector.admissible import admissible
from selector.prices import demo_price_book
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

