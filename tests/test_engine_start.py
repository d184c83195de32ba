"""The solver's starting pH: a weak acid or base on its own needs few rounds.

No published source or value is involved (a property of the solver, like the root and chunking tests).
The start solves the proton balance of the step that holds the root exactly and the other
steps to first order (the weak acid and weak base approximations: ½(pKa − log10 C) and its
pOH for a lone weak base), so a weak acid or base alone no longer starts at pH 7.

Case: acetic acid, Tris base and Tris base with a little NaOH, 0.1 mM to 0.1 M, at 25 and
80 °C, one composition alone and the same composition in a batch of two.  Measured rounds
of the iteration: 3-5 with this start, 4-9 with the previous one (pH 7 for a lone weak acid
or base); tolerance: at most 5 rounds, the same count alone and in a batch.
"""

import numpy as np
import pytest

from selector.chemistry.equilibrium import solve_equilibrium

CASES = [
    (["acetic_acid"], [0.1]),
    (["acetic_acid"], [1e-4]),
    (["tris"], [0.05]),
    (["tris"], [1e-4]),
    (["tris", "naoh"], [0.05, 1e-3]),
]


@pytest.mark.parametrize("temperature_c", [25.0, 80.0])
@pytest.mark.parametrize(("reagents", "amounts_mol_l"), CASES)
def test_lone_weak_acid_or_base_solves_in_few_rounds(reagents, amounts_mol_l, temperature_c):
    alone = solve_equilibrium(reagents, np.array([amounts_mol_l]), temperature_c).speciation
    batch = solve_equilibrium(reagents, np.array([amounts_mol_l] * 2), temperature_c, threads=1).speciation
    assert alone.converged.all() and batch.converged.all()
    assert alone.iterations <= 5
    assert batch.iterations == alone.iterations
