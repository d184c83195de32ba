"""The solver's status per solution, its edges and its reproducibility.

No published values here: properties of the solver.  Cases: compositions whose root lies
past the pH search range or whose ionic strength is far beyond the activity model
(reported as beyond the model, never as converged), one bad composition inside a batch,
the stiff region of concentrated phosphate titrated with NaOH, and the same composition
alone, in a batch, over several threads and chunks.
"""

import json

import numpy as np
import pytest
from cli_helpers import run

from selector.chemistry import speciation
from selector.chemistry.arrays import engine_tables
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.properties import describe_solution
from selector.chemistry.speciation import CHUNK_ROWS, STATUS_BEYOND_MODEL, STATUS_CONVERGED
from selector.errors import InputError

REAGENTS = ["kh2po4", "na2hpo4", "tris", "tris_hcl", "acetic_acid", "citric_acid", "nahco3",
            "boric_acid", "hepes", "hcl", "naoh", "nacl"]

#: Compositions past the model: roots beyond pH −2 or 16, I far above 5 mol/L.
BEYOND = [
    ({"HCl": "17M", "KCl": "17M"}, 79.0),
    ({"HCl": "16.5M"}, 0.0),
    ({"NaOH": "5M"}, 0.0),
]


def random_batch(n: int, seed: int) -> np.ndarray:
    """Random amounts [n, len(REAGENTS)], 0-0.1 mol/L each, about half of them zero."""
    rng = np.random.default_rng(seed)
    return rng.uniform(0.0, 0.1, (n, len(REAGENTS))) * (rng.random((n, len(REAGENTS))) < 0.5)


@pytest.mark.parametrize(("amounts", "temperature_c"), BEYOND)
def test_edge_compositions_are_beyond_the_model(amounts, temperature_c):
    report = describe_solution(amounts, temperature_c)
    assert report.status == "beyond_model"
    assert report.ph is None and report.ionic_strength_mol_l is None
    assert "beyond the model" in report.warnings[0]
    text = json.dumps(report.as_json(), allow_nan=False)  # valid JSON: no NaN or Infinity
    assert json.loads(text)["pH"] is None


def test_ph_command_prints_valid_json_and_exits_2_beyond_the_model(capsys):
    code, out, _ = run(capsys, "ph", "HCl=17M", "KCl=17M", "--temperature", "79", "--json")
    assert code == 2
    assert "NaN" not in out and "Infinity" not in out
    report = json.loads(out)
    assert report["status"] == "beyond_model" and report["pH"] is None


@pytest.mark.parametrize(("amounts", "temperature_c"), BEYOND)
def test_strict_solve_refuses_a_composition_beyond_the_model(amounts, temperature_c):
    ids = [name.lower() for name in amounts]
    values = [float(v.rstrip("M")) for v in amounts.values()]
    with pytest.raises(InputError, match="beyond the model"):
        solve_equilibrium(ids, values, temperature_c)
    eq = solve_equilibrium(ids, values, temperature_c, strict=False)
    assert eq.status[0] == STATUS_BEYOND_MODEL and np.isnan(eq.ph[0])


def test_one_bad_composition_costs_its_batch_nothing():
    batch = random_batch(2000, seed=11)
    bad = batch.copy()
    bad[700] = 0.0
    bad[700, REAGENTS.index("hcl")] = 16.5
    eq = solve_equilibrium(REAGENTS, bad, 0.0, strict=False)
    assert eq.status[700] == STATUS_BEYOND_MODEL and np.isnan(eq.ph[700])
    others = np.arange(2000) != 700
    assert np.all(eq.status[others] == STATUS_CONVERGED)
    clean = solve_equilibrium(REAGENTS, batch, 0.0)
    np.testing.assert_allclose(eq.ph[others], clean.ph[others], rtol=0, atol=1e-12)
    with pytest.raises(InputError, match="hcl 16.5 mol/L at 0 °C is beyond the model"):
        eq.require_converged()


def test_same_composition_alone_and_in_a_batch_agree_to_1e_9_ph():
    batch = random_batch(300, seed=12)
    together = solve_equilibrium(REAGENTS, batch, 37.0).ph
    for n in range(0, 300, 7):
        present = batch[n] > 0
        ids = [r for r, p in zip(REAGENTS, present) if p] or ["nacl"]
        amounts = batch[n, present] if present.any() else [0.0]
        alone = solve_equilibrium(ids, amounts, 37.0).ph[0]
        assert alone == pytest.approx(together[n], abs=1e-9)


def test_results_identical_whatever_the_thread_count():
    batch = random_batch(2 * CHUNK_ROWS + 1000, seed=13)
    one = solve_equilibrium(REAGENTS, batch, 25.0, threads=1)
    for threads in (2, 3):
        other = solve_equilibrium(REAGENTS, batch, 25.0, threads=threads)
        np.testing.assert_array_equal(other.ph, one.ph)
        np.testing.assert_array_equal(other.ionic_strength_mol_l, one.ionic_strength_mol_l)


def test_results_do_not_depend_on_chunk_boundaries():
    batch = random_batch(CHUNK_ROWS + 3000, seed=14)
    whole = solve_equilibrium(REAGENTS, batch, 25.0).ph
    shifted = solve_equilibrium(REAGENTS, batch[2000:], 25.0).ph  # every chunk boundary moves
    np.testing.assert_allclose(shifted, whole[2000:], rtol=0, atol=1e-12)


def test_stiff_phosphate_titration_is_settled_not_failed(monkeypatch):
    # 1 M H3PO4 titrated with 2.0-3.6 M NaOH: I ≈ 3-5 mol/L, where the Davies γ rises with
    # I and x and I no longer settle together by Newton steps alone.
    naoh = np.linspace(2.0, 3.6, 33)
    batch = np.column_stack([np.ones_like(naoh), naoh])
    eq = solve_equilibrium(["h3po4", "naoh"], batch, 25.0, strict=False)
    assert set(eq.status) <= {STATUS_CONVERGED, STATUS_BEYOND_MODEL}  # never "failed"
    beyond = eq.status == STATUS_BEYOND_MODEL
    assert np.all(eq.ionic_strength_mol_l[beyond] > speciation.MODEL_CEILING_IONIC_STRENGTH_MOL_L)
    # With the ceiling lifted, the same solves are true equilibria of the model: charge
    # balance closed, I equal to the ionic strength of the species, pH rising with base.
    monkeypatch.setattr(speciation, "MODEL_CEILING_IONIC_STRENGTH_MOL_L", np.inf)
    eq = solve_equilibrium(["h3po4", "naoh"], batch, 25.0)
    assert np.all(np.diff(eq.ph) > 0)
    conc = eq.species_mol_l
    assert np.all(np.abs(conc @ eq.species_charge) < 1e-9 * 10)
    ionic = 0.5 * conc @ eq.species_charge**2
    np.testing.assert_allclose(ionic, eq.ionic_strength_mol_l, rtol=1e-9)


def test_fallback_on_ionic_strength_agrees_with_newton():
    # Force every solution through the bisection on I after one Newton step: same answer.
    batch = random_batch(500, seed=15)
    eq = solve_equilibrium(REAGENTS, batch, 25.0)
    charge = np.asarray(eq.strong_ion_charge, dtype=float)
    tables = engine_tables()
    arrays = tables.systems.subset([tables.system_index(s) for s in eq.system_ids])
    forced = speciation.solve_speciation(eq.speciation.totals_mol_l, eq.strong_ion_mol_l @ charge,
                                         0.5 * eq.strong_ion_mol_l @ charge**2, 25.0, arrays, max_iterations=1)
    assert np.all(forced.status == STATUS_CONVERGED)
    np.testing.assert_allclose(forced.ph, eq.ph, rtol=0, atol=1e-9)
