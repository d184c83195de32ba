"""Cost per plate: the ranking, the optimiser and the cost summaries give the same figure.

A spec quotes a cost per plate (or run) either from ``plates`` alone (the batch of ``volume_l``
shared over that many plates) or from a plate's own wells (``wells`` × ``well_volume_l``, what one
plate takes; ``plates`` then multiplies it into the volume to make).  The figures below are
hand-computed from invented prices (demo numbers, not a supplier's); no published source is
involved: the check values are arithmetic written beside each case.
"""

from __future__ import annotations

import pytest

from selector.optimise import solve_min_cost
from selector.prices import cost_figures, cost_per_plate, rounded
from selector.rank import rank_systems
from selector.spec import BufferSpec, make_spec


@pytest.mark.parametrize(("cost_per_l", "volume_l", "plates", "wells", "well_volume_l", "expected"), [
    (2.5, 1.0, 4, None, None, 0.625),            # 2.5 per L × 1 L / 4 plates
    (2.5, 0.0576, 3, 96, 200e-6, 0.048),          # 2.5 per L × 96 × 200 µL = 2.5 × 0.0192 L
    (2.5, 0.0192, None, 96, 200e-6, 0.048),       # a plate's own wells, plates not stated
    (2.5, 1.0, None, None, None, None),           # nothing to share the batch over
])
def test_cost_per_plate_by_hand(cost_per_l, volume_l, plates, wells, well_volume_l, expected):
    # Hand-computed (tolerance 1e-12 relative: float arithmetic only).
    found = cost_per_plate(cost_per_l, volume_l, plates, wells, well_volume_l)
    if expected is None:
        assert found is None
    else:
        assert found == pytest.approx(expected, rel=1e-12)
        assert cost_figures(cost_per_l, volume_l, plates, wells, well_volume_l)["cost_per_plate"] == \
            pytest.approx(expected, rel=1e-6)  # the summary rounds to 6 significant figures


SPECS = {
    # make_spec fills plates = 1 and volume_l = plates × wells × well volume.
    "3 plates of 96 × 200 µL": make_spec(ph=7.4, capacity_mol_l_per_ph=0.02, plates=3, wells=96,
                                         well_volume_l=200e-6),
    # The record built directly (as BufferSpec(**spec.as_dict()) rebuilds one whose plates were
    # left out): wells and well volume without plates.
    "96 × 200 µL, plates not stated": BufferSpec(ph=7.4, capacity_mol_l_per_ph=0.02, wells=96,
                                                 well_volume_l=200e-6, volume_l=0.0192),
    "1 L over 4 runs": make_spec(ph=7.4, capacity_mol_l_per_ph=0.02, plates=4),
}


def summary_per_plate(cost_per_l: float, spec: BufferSpec) -> float | None:
    return cost_figures(cost_per_l, spec.volume_l, spec.plates, spec.wells, spec.well_volume_l)["cost_per_plate"]


@pytest.mark.parametrize("name", sorted(SPECS))
def test_optimiser_and_ranking_quote_the_summary_per_plate(name, shipped_catalog):
    # The optimiser's and the ranking's cost per plate, rounded as the cost summary rounds (6
    # significant figures), are the summary's (which the CLI and the app print): exactly.
    spec = SPECS[name]
    result = solve_min_cost(spec, catalog=shipped_catalog, max_systems=1)
    expected = summary_per_plate(result.cost_per_l, spec)
    assert expected is not None
    assert rounded(result.cost_per_plate) == expected
    rows = [r for r in rank_systems(spec, catalog=shipped_catalog, sort="cost", assess=False) if r.feasible]
    assert rows
    for row in rows:
        assert rounded(row.cost_per_plate) == summary_per_plate(row.cost_per_l, spec), row.system_id
