"""The solver's answer is the root of its equations, to a stated bound.

No published values: a check of the iteration against the model it solves.  Each solved
solution is re-evaluated by the fixed-pH speciation (:func:`speciate_at_ph`, no iteration):
at the reported pH, with γ at the reported ionic strength, the charge balance R must be
zero to within the pH offset R/(dR/dpH), and the ionic strength of that speciation must be
the reported one.  Case: 4 000 random compositions of eight reagents at 0-95 °C (one batch)
and the same at 25 °C with 0-150 mM NaCl.  Measured (joint Newton in pH and I, this
engine): largest |R/(dR/dpH)| 5.1e-14 / 6.1e-14 pH, largest |I* − I|/I 7.5e-13 / 1.9e-13
(the previous engine, Newton in pH with I carried along: 5.2e-14 / 6.8e-14 pH,
1.4e-11 / 7.6e-12 in I).  The two engines agree to 2.4e-12 pH, 5.2e-12 mol/L in I and
1.3e-12 relative in β over 2 x 10^5 random compositions.  Tolerances 1e-12 pH and
5e-12 relative in I.
"""

import numpy as np
import pytest

from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.speciation import STATUS_CONVERGED, speciate_at_ph
from selector.chemistry.water import LN10

REAGENTS = ["kh2po4", "na2hpo4", "tris", "acetic_acid", "citric_acid", "hcl", "naoh", "nacl"]
N = 4_000


def random_batch(seed: int, salt: bool) -> tuple[np.ndarray, np.ndarray]:
    """Random amounts [N, 8] (0-0.1 mol/L, about 60 % zero) and temperatures [N]."""
    rng = np.random.default_rng(seed)
    amounts = rng.uniform(0.0, 0.1, (N, len(REAGENTS))) * (rng.random((N, len(REAGENTS))) < 0.4)
    if salt:
        amounts[:, -1] = rng.uniform(0.0, 0.15, N)
        return amounts, np.full(N, 25.0)
    return amounts, rng.uniform(0.0, 95.0, N)


def root_offsets(eq) -> tuple[np.ndarray, np.ndarray]:
    """(R/(dR/dpH) [pH], (I* − I)/I) of every converged solution of ``eq``."""
    sp = eq.speciation
    ok = sp.status == STATUS_CONVERGED
    fixed = speciate_at_ph(sp.systems, sp.ph[ok], sp.temperature_c[ok], sp.ionic_strength_mol_l[ok])
    totals = sp.totals_mol_l[ok]
    z0 = sp.systems.charge_most_protonated.astype(float)
    strong = eq.strong_ion_mol_l[ok]
    charge = np.asarray(eq.strong_ion_charge, dtype=float)
    residual = (np.sum(totals * (z0[None, :] - fixed.mean_protons_lost), axis=1) + strong @ charge
                + fixed.h_mol_l - fixed.oh_mol_l)
    slope = LN10 * (np.sum(totals * fixed.variance_protons_lost, axis=1) + fixed.h_mol_l + fixed.oh_mol_l)
    ionic = (0.5 * strong @ (charge * charge) + 0.5 * np.sum(totals * fixed.mean_charge_squared, axis=1)
             + 0.5 * (fixed.h_mol_l + fixed.oh_mol_l))
    return residual / slope, ionic / sp.ionic_strength_mol_l[ok] - 1.0


@pytest.mark.parametrize("salt", [False, True])
def test_the_reported_ph_and_ionic_strength_are_the_root(salt):
    eq = solve_equilibrium(REAGENTS, *random_batch(31, salt), threads=1, strict=False)
    assert (eq.speciation.status == STATUS_CONVERGED).all()
    ph_offset, ionic_offset = root_offsets(eq)
    assert np.abs(ph_offset).max() <= 1e-12
    assert np.abs(ionic_offset).max() <= 5e-12
