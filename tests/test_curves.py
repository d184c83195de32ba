"""The curves behind the app's pictures (selector.curves): β against pH over the whole
useful range with the pKa′ marks, the titration of the buffer forms, the temperature axis.

Lab notebook: each case names what it checks, the value expected and where it comes from.
"""

import math

import numpy as np
import pytest

from catalog import load_catalog
from selector.chemistry.equilibrium import solve_equilibrium
from selector.curves import (
    MAX_GAP_PH,
    PH_AXIS_LIMITS,
    buffer_titration,
    capacity_curve,
    pka_marks,
    temperature_axis_c,
)

CATALOG = load_catalog()

#: β of one conjugate pair at its peak, per mol/L of buffer: ln10/4 = 0.5756 at pH = pKa′
#: (Van Slyke 1922, the buffer value of a weak acid; from memory).
VAN_SLYKE_PEAK = math.log(10) / 4


@pytest.mark.parametrize("composition, temperature_c", [
    ({"hepes": 0.05, "naoh": 0.02, "nacl": 0.1}, 25.0),     # HEPES: second step, 4 pH above the first
    ({"tris": 0.05, "hcl": 0.03}, 37.0),
    ({"naoac": 0.05}, 25.0),
])
def test_beta_peaks_at_the_marked_pka_with_the_van_slyke_height(composition, temperature_c):
    curve = capacity_curve(composition, temperature_c, CATALOG, target_ph=7.4)
    ph, beta = np.array(curve.ph), np.array(curve.capacity_mol_l_per_ph)
    mark = curve.pka[-1].pka_apparent
    near = np.abs(ph - mark) < 1.0
    peak = np.argmax(np.where(near, beta, 0.0))
    # The marks are at the ionic strength of the solution as given; along the titration I
    # moves by a few mM, which moves pKa′ by less than 0.03 (Davies).
    assert ph[peak] == pytest.approx(mark, abs=0.03)
    # 50 mM of buffer: 0.5756 × 0.05 = 28.8 mM per pH; water adds < 0.1 % near pH 7.
    assert beta[peak] == pytest.approx(VAN_SLYKE_PEAK * 0.05, rel=0.01)


def test_the_axis_spans_every_pka_and_the_target_within_ph_2_to_12():
    # Phosphate: pKa′ ≈ 2.0, 6.9, 11.8 at I ≈ 0.1: pKa′ ± 2 reaches past both ends.
    curve = capacity_curve({"kh2po4": 0.025, "na2hpo4": 0.025}, 25.0, CATALOG, target_ph=7.0)
    assert (curve.ph_low, curve.ph_high) == PH_AXIS_LIMITS
    assert [m.step for m in curve.pka] == [1, 2, 3]
    assert curve.ph[0] >= curve.ph_low and curve.ph[-1] <= curve.ph_high
    assert curve.ph[0] < 2.1 and curve.ph[-1] > 11.9          # the curve fills the axis
    assert np.all(np.diff(curve.ph) <= MAX_GAP_PH + 1e-12)    # no jump left unfilled
    # A target far from the buffer widens the axis to take it in (Tris pKa′ ≈ 8.1 at 25 °C).
    tris = capacity_curve({"tris": 0.05, "hcl": 0.025}, 25.0, CATALOG, target_ph=4.0)
    assert tris.ph_low == pytest.approx(PH_AXIS_LIMITS[0]) and tris.ph_high == pytest.approx(
        tris.pka[0].pka_apparent + 2.0)


def test_every_point_is_the_engine_answer_for_its_composition():
    # The curve's points are solved compositions: MOPS 20 mM with 10 mM NaOH (half-way along
    # the base's grid) is one of them, and the direct solve of that mix lies on the curve.
    curve = capacity_curve({"mops": 0.02, "naoh": 0.01}, 25.0, CATALOG)
    mix = solve_equilibrium(["mops", "naoh"], np.array([[0.02, 0.01]]), 25.0, catalog=CATALOG)
    nearest = np.argmin(np.abs(np.array(curve.ph) - mix.ph[0]))
    assert curve.ph[nearest] == pytest.approx(mix.ph[0], abs=1e-9)
    assert curve.capacity_mol_l_per_ph[nearest] == pytest.approx(mix.capacity_mol_l_per_ph[0], rel=1e-9)


def test_the_titration_crosses_the_target_with_the_recipes_titrant():
    # Tris base titrated with 1 M HCl: the pH falls through pKa′ (≈ 8.1 at 25 °C) as HCl is added.
    curve = buffer_titration({"tris": 0.05, "hcl": 0.03}, "hcl", 25.0, CATALOG)
    assert curve.titrant_id == "hcl"
    assert curve.added_volume_l[0] == 0.0 and curve.added_volume_l[-1] == pytest.approx(1.5 * 0.05)
    assert np.all(np.diff(curve.ph) < 0)
    assert curve.ph[0] > 10.0 and curve.ph[-1] < 3.0
    assert np.any(curve.ph > 7.4) and np.any(curve.ph < 7.4)


def test_the_temperature_axis_takes_in_preparation_and_use():
    axis = temperature_axis_c(37.0, 22.0)
    assert axis[0] == 22.0 and axis[-1] == 37.0
    narrow = temperature_axis_c(25.0, 25.0)
    assert (narrow[0], narrow[-1]) == (20.0, 30.0)            # at least 10 K, centred
    assert temperature_axis_c(2.0, 4.0)[0] == 0.0             # not below 0 °C
    assert tuple(temperature_axis_c(25.0, 25.0, (10.0, 40.0))[[0, -1]]) == (10.0, 40.0)


def test_pka_marks_name_the_system():
    marks = pka_marks(["tris"], 25.0, 0.0, CATALOG)
    assert len(marks) == 1 and marks[0].label.startswith("Tris pKa′ 8.")
