"""One composition through ``solve_equilibrium`` (the plain-float path) agrees with the batch path.

No published source or value is involved: these are properties of the solver.  A batch of one
is started, iterated and polished in Python floats (recipes and the app make hundreds of single
solves); a batch of several goes through the arrays.  Both solve the same equations from the
same start with the same steps, so they must give the same answer.

Cases: random compositions of three reagent sets (phosphate, Tris, acetate, citrate with HCl,
NaOH and NaCl; borate and carbonate with HCl and KCl; Good's buffers, glycine and ammonium with
NaOH) at 0, 25, 37, 60 and 95 °C, under each charge-only activity model (davies,
bates-guggenheim, guntelberg) and the ion-size model (truesdell-jones, solved by the
multicomponent solver alone and in a batch), with the ionic strength iterated and held fixed.
Tolerances: status identical; pH, I and β within 1e-12 relative and absolute (measured over
these cases: 1.9e-15 in pH, 1.3e-14 in I, 4.0e-14 in β, relative); the warning masks identical;
the strong ions and the osmolarity within 1e-14 relative (the reagent-to-ion matrix product of
one row and of many rows adds in another order in BLAS: measured 1.4e-16 and 1.6e-16 at worst);
and the osmolarity of one solution, summed as floats, the same float as numpy's sums of its own
arrays (the float path relies on numpy adding up to 7 numbers of a row in order).
"""

import math

import numpy as np
import pytest

from selector.chemistry.activity import ACTIVITY_MODELS, FLOAT_ACTIVITY_MODELS, float_activity_model
from selector.chemistry.equilibrium import composition_ph, solve_equilibrium
from selector.errors import InputError

REAGENT_SETS = (
    ("kh2po4", "na2hpo4", "tris", "acetic_acid", "citric_acid", "hcl", "naoh", "nacl"),
    ("borax", "boric_acid", "nahco3", "na2co3", "hcl", "kcl"),
    ("hepes", "hepes_na", "mes", "glycine", "nh4cl", "naoh"),
)
TEMPERATURES_C = (0.0, 25.0, 37.0, 60.0, 95.0)
CHARGE_MODELS = tuple(ACTIVITY_MODELS)
SOLVER_FIELDS = ("ph", "ionic_strength_mol_l", "capacity_mol_l_per_ph", "log10_gamma_unit", "h_mol_l", "oh_mol_l")
MASKS = ("ionic_strength_high", "temperature_outside_data", "above_solubility")


def random_amounts(n: int, width: int, seed: int) -> np.ndarray:
    """Random amounts [n, width], 0-0.15 mol/L, about 40 % of them zero."""
    rng = np.random.default_rng(seed)
    return rng.uniform(0.0, 0.15, (n, width)) * (rng.random((n, width)) < 0.6)


def assert_alone_equals_row(reagents, amounts, temperature_c, n, **options):
    batch = solve_equilibrium(reagents, amounts, temperature_c, strict=False, **options)
    alone = solve_equilibrium(reagents, amounts[n:n + 1], temperature_c, strict=False, **options)
    assert alone.status[0] == batch.status[n], (reagents, n, temperature_c, options)
    for name in SOLVER_FIELDS:
        assert getattr(alone.speciation, name)[0] == pytest.approx(
            getattr(batch.speciation, name)[n], rel=1e-12, abs=1e-12, nan_ok=True), (name, n, temperature_c, options)
    for name in ("strong_ion_mol_l", "osmolarity_osmol_l"):
        np.testing.assert_allclose(getattr(alone, name)[0], getattr(batch, name)[n], rtol=1e-14, atol=0, err_msg=name)
    for name in MASKS:
        np.testing.assert_array_equal(getattr(alone, name)[0], getattr(batch, name)[n], err_msg=name)
    if alone.status[0] == 0 and alone.speciation.metals is None:
        sp = alone.speciation
        numpy_sum = sp.totals_mol_l.sum(axis=1)
        numpy_sum += alone.strong_ion_mol_l.sum(axis=1)
        numpy_sum += sp.h_mol_l
        numpy_sum += sp.oh_mol_l
        np.testing.assert_array_equal(alone.osmolarity_osmol_l, numpy_sum)


@pytest.mark.parametrize("model", CHARGE_MODELS)
@pytest.mark.parametrize("reagents", REAGENT_SETS, ids=lambda r: r[0])
def test_one_composition_equals_its_row_in_a_batch(reagents, model):
    amounts = random_amounts(12, len(reagents), seed=len(reagents) * 7 + len(model))
    for temperature_c in TEMPERATURES_C:
        for n in range(0, amounts.shape[0], 3):
            assert_alone_equals_row(reagents, amounts, temperature_c, n, activity=model)


@pytest.mark.parametrize("model", CHARGE_MODELS)
def test_one_composition_at_fixed_ionic_strength_equals_its_row(model):
    reagents = REAGENT_SETS[0]
    amounts = random_amounts(8, len(reagents), seed=3)
    for temperature_c in (5.0, 37.0):
        for n in range(0, 8, 2):
            assert_alone_equals_row(reagents, amounts, temperature_c, n, activity=model,
                                    fixed_ionic_strength_mol_l=0.1)


def test_ion_size_model_alone_equals_its_row():
    # truesdell-jones goes through the multicomponent solver, alone and in a batch.
    reagents = REAGENT_SETS[1]
    amounts = random_amounts(6, len(reagents), seed=11)
    for temperature_c in (10.0, 37.0):
        for n in range(0, 6, 2):
            assert_alone_equals_row(reagents, amounts, temperature_c, n, activity="truesdell-jones")


def test_ion_size_model_without_strong_ions_is_solved():
    # Tris base alone (no Na+, K+ or Cl-) under the ion-size model once raised a TypeError from
    # an empty mask; now it is solved like any other solution, alone as in a batch.
    alone = solve_equilibrium(("tris",), [0.05], 25.0, activity="truesdell-jones")
    batch = solve_equilibrium(("tris",), [[0.05], [0.05]], 25.0, activity="truesdell-jones")
    assert np.isfinite(alone.ph[0])
    assert alone.ph[0] == pytest.approx(batch.ph[1], abs=1e-12)


def test_composition_ph_is_the_batch_ph():
    reagents = REAGENT_SETS[0]
    amounts = random_amounts(10, len(reagents), seed=5)
    batch = solve_equilibrium(reagents, amounts, 37.0, strict=False)
    for n in range(10):
        if batch.status[n] != 0 or not amounts[n].any():
            continue
        composition = {r: float(c) for r, c in zip(reagents, amounts[n])}
        assert composition_ph(composition, 37.0) == pytest.approx(batch.ph[n], abs=1e-12)


@pytest.mark.parametrize("model", CHARGE_MODELS)
def test_float_twin_of_each_activity_model_is_the_array_model_to_the_bit(model):
    # One formula per model serves both; the twin must give the same float for every I and A,
    # NaN below zero as np.sqrt gives it.
    ionic = np.array([0.0, 1e-12, 1e-7, 1e-4, 0.0123, 0.1, 0.25, 0.5, 1.7, 5.0, 40.0, -1e-9, math.nan])
    for a_dh in (0.4918, 0.5108, 0.5373, 0.6086):
        with np.errstate(invalid="ignore"):
            array_values = ACTIVITY_MODELS[model](ionic, a_dh)
        float_values = np.array([float_activity_model(model)(float(i), a_dh) for i in ionic])
        np.testing.assert_array_equal(float_values, array_values)


def test_every_activity_model_has_its_float_twin():
    assert tuple(FLOAT_ACTIVITY_MODELS) == tuple(ACTIVITY_MODELS)
    with pytest.raises(InputError, match="davies"):
        float_activity_model("no-such-model")
    with pytest.raises(InputError, match="ion size"):
        float_activity_model("truesdell-jones")
