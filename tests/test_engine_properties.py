"""Properties of the equilibrium engine that hold for any mixture (hypothesis).

No published values here: conservation laws and symmetries.  Tolerances: mass and charge
balance closed to 1e-10 mol/L (the project's requirement).
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.chemistry.equilibrium import solve_equilibrium
from selector.errors import InputError

REAGENTS = ["kh2po4", "na2hpo4", "tris", "tris_hcl", "acetic_acid", "citric_acid", "nahco3",
            "boric_acid", "nh4cl", "hepes", "hcl", "naoh", "nacl"]

amount = st.floats(min_value=0.0, max_value=0.2, allow_nan=False)
mixture = st.lists(amount, min_size=len(REAGENTS), max_size=len(REAGENTS))
temperature = st.floats(min_value=0.0, max_value=95.0, allow_nan=False)


@settings(max_examples=60, deadline=None)
@given(mixture, temperature)
def test_mass_and_charge_balance_close(amounts, temperature_c):
    eq = solve_equilibrium(REAGENTS, amounts, temperature_c)
    conc = eq.species_mol_l[0]
    charge = float(conc @ eq.species_charge)
    assert abs(charge) < 1e-10
    # Every system's species add up to its total.
    totals = eq.speciation.totals_mol_l[0]
    for s, system_id in enumerate(eq.system_ids):
        columns = [k for k, sid in enumerate(eq.species_ids) if sid.startswith(system_id + "(")]
        assert conc[columns].sum() == pytest.approx(totals[s], abs=1e-12, rel=1e-12)


@settings(max_examples=30, deadline=None)
@given(st.lists(amount, min_size=len(REAGENTS) - 2, max_size=len(REAGENTS) - 2), temperature)
def test_ph_rises_with_added_strong_base(amounts, temperature_c):
    base = np.linspace(0.0, 0.3, 16)
    batch = np.column_stack([np.tile(amounts, (16, 1)), np.zeros(16), base])
    eq = solve_equilibrium(REAGENTS[:-2] + ["hcl", "naoh"], batch, temperature_c)
    assert np.all(np.diff(eq.ph) > 0)


def test_result_independent_of_batch_order():
    rng = np.random.default_rng(3)
    batch = rng.uniform(0, 0.1, (500, len(REAGENTS)))
    order = rng.permutation(500)
    forward = solve_equilibrium(REAGENTS, batch, 25.0)
    shuffled = solve_equilibrium(REAGENTS, batch[order], 25.0)
    np.testing.assert_allclose(shuffled.ph, forward.ph[order], atol=1e-6)


def test_threaded_batch_equals_single_thread():
    rng = np.random.default_rng(5)
    batch = rng.uniform(0, 0.1, (40000, len(REAGENTS)))
    threaded = solve_equilibrium(REAGENTS, batch, 37.0, threads=2)
    single = solve_equilibrium(REAGENTS, batch, 37.0, threads=1)
    np.testing.assert_allclose(threaded.ph, single.ph, atol=1e-12)


def test_converges_to_tolerance():
    rng = np.random.default_rng(11)
    batch = rng.uniform(0, 0.1, (2000, len(REAGENTS)))
    loose = solve_equilibrium(REAGENTS, batch, 25.0, tol_ph=1e-6)
    tight = solve_equilibrium(REAGENTS, batch, 25.0, tol_ph=1e-12)
    assert np.abs(loose.ph - tight.ph).max() < 1e-6


def test_scalar_array_and_per_solution_temperature_agree():
    one = solve_equilibrium(["tris", "hcl"], [0.05, 0.02], 37.0)
    batch = solve_equilibrium(["tris", "hcl"], [[0.05, 0.02], [0.05, 0.02]], [25.0, 37.0])
    assert batch.ph[1] == pytest.approx(one.ph[0], abs=1e-9)
    assert batch.ph[0] > batch.ph[1]  # Tris pH falls with temperature


def test_batch_with_one_bad_entry_is_refused_with_its_index():
    batch = np.full((3, 2), 0.01)
    batch[2, 1] = -0.01
    with pytest.raises(InputError, match="solution 2"):
        solve_equilibrium(["tris", "hcl"], batch, 25.0)


def test_pure_water_is_neutral():
    # pH of pure water = pKw/2 = 6.998 at 25 °C (Marshall & Franck 1981: pKw 13.995).
    eq = solve_equilibrium(["nacl"], [0.0], 25.0)
    assert eq.ph[0] == pytest.approx(13.995 / 2, abs=0.002)


def test_strong_acid_ph():
    # 0.01 M HCl: pH = -log10(0.01·γ±), γ from Davies at I = 0.01: 0.9024 -> 2.045.
    eq = solve_equilibrium(["hcl"], [0.01], 25.0)
    assert eq.ph[0] == pytest.approx(2.045, abs=0.002)
