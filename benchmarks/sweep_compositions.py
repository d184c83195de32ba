"""A sweep of random compositions over the whole catalog: no traceback, no wrong answer.

Solves ``--n`` random compositions (default 10⁶) in batches of ``--batch``.  Each batch
draws a few reagents from the catalog, an activity model and temperatures 0-95 °C; each
composition mixes one to five of those reagents at amounts spread from 1 µM to the
engine's limit (most under 0.2 mol/L, some up to 2 mol/L, a few far beyond), so the
edges of the model are visited as well as ordinary buffers.  Every batch is solved with
``strict=False`` (a status per solution) and checked:

* tracebacks: any exception out of ``solve_equilibrium`` (a batch lost);
* every "converged" solution must be a true equilibrium of the model: finite pH inside
  the search range, charge balance Σcz closed to 1e-9 of Σ|c z|, and the reported ionic
  strength equal to ½Σcz² of the reported species to 1e-8 (relative);
* every other solution must carry NaN figures (never a number passed off as an answer).

    python benchmarks/sweep_compositions.py --n 1000000 --json

prints one JSON object with the counts.  Bounded: about a minute per 10⁵ compositions on
a loaded 2-core machine.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))   # this checkout's code, not an installed one

from selector import load_catalog, solve_equilibrium  # noqa: E402

ACTIVITY_MODELS = ("davies", "bates-guggenheim", "guntelberg")
#: Reagents drawn per batch, and at most per composition.
REAGENTS_PER_BATCH, REAGENTS_PER_SOLUTION = 8, 5
#: Largest amount drawn [mol/L]: the engine's limit for one reagent.
MAX_AMOUNT_MOL_L = 20.0


def random_amounts(rng: np.random.Generator, n: int, width: int) -> np.ndarray:
    """Amounts [n, width] in mol/L: 1-5 reagents per row, log-spread with heavy tails."""
    amounts = np.zeros((n, width))
    count = rng.integers(1, REAGENTS_PER_SOLUTION + 1, n)
    order = np.argsort(rng.random((n, width)), axis=1)
    chosen = order < count[:, None]
    scale = rng.choice([0.2, 2.0, MAX_AMOUNT_MOL_L], size=(n, width), p=[0.9, 0.08, 0.02])
    values = scale * 10.0 ** rng.uniform(-5.3, 0.0, (n, width))
    amounts[chosen] = values[chosen]
    return amounts


def check_batch(eq) -> dict:
    """Counts of one solved batch: statuses and converged results that fail a check."""
    status = eq.status
    converged = status == 0
    conc = eq.species_mol_l
    charge = eq.species_charge
    residual = np.abs(conc @ charge)
    scale = np.abs(conc) @ np.abs(charge)
    ionic = 0.5 * conc @ (charge * charge)
    reported = eq.ionic_strength_mol_l
    ph = eq.ph
    bad_balance = converged & ~(residual <= 1e-9 * scale + 1e-300)
    bad_ionic = converged & ~(np.abs(ionic - reported) <= 1e-8 * np.maximum(ionic, 1e-300))
    bad_ph = converged & ~(np.isfinite(ph) & (ph > -2.0) & (ph < 16.0))
    unflagged = ~converged & np.isfinite(ph)
    wrong = bad_balance | bad_ionic | bad_ph
    return {
        "converged": int(converged.sum()),
        "beyond_model": int((status == 1).sum()),
        "failed": int((status == 2).sum()),
        "converged_but_wrong": int(wrong.sum()),
        "not_converged_with_a_ph": int(unflagged.sum()),
        "worst_balance": float(np.max(np.where(converged, residual / np.maximum(scale, 1e-300), 0.0), initial=0.0)),
        "worst_ionic": float(np.max(np.where(converged, np.abs(ionic - reported) / np.maximum(ionic, 1e-300), 0.0),
                                    initial=0.0)),
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=1_000_000, help="number of compositions")
    parser.add_argument("--batch", type=int, default=50_000, help="compositions per batch")
    parser.add_argument("--seed", type=int, default=2026, help="random seed")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    args = parser.parse_args()

    catalog = load_catalog()
    reagent_ids = sorted(catalog.reagents)
    rng = np.random.default_rng(args.seed)
    totals = {"n": 0, "batches": 0, "batches_lost": 0, "tracebacks": 0, "converged": 0, "beyond_model": 0,
              "failed": 0, "converged_but_wrong": 0, "not_converged_with_a_ph": 0,
              "worst_balance": 0.0, "worst_ionic": 0.0}
    errors: list[str] = []
    start = time.perf_counter()
    while totals["n"] < args.n:
        size = min(args.batch, args.n - totals["n"])
        ids = list(rng.choice(reagent_ids, REAGENTS_PER_BATCH, replace=False))
        amounts = random_amounts(rng, size, len(ids))
        temperature = rng.uniform(0.0, 95.0, size)
        activity = str(rng.choice(ACTIVITY_MODELS))
        totals["n"] += size
        totals["batches"] += 1
        try:
            eq = solve_equilibrium(ids, amounts, temperature, catalog=catalog, activity=activity, strict=False)
            counts = check_batch(eq)
        except Exception as error:  # the sweep counts what the engine must never do
            totals["tracebacks"] += 1
            totals["batches_lost"] += 1
            errors.append(f"{type(error).__name__}: {error} (reagents {ids}, {activity})")
            continue
        for key, value in counts.items():
            totals[key] = max(totals[key], value) if key.startswith("worst") else totals[key] + value
    totals["seconds"] = round(time.perf_counter() - start, 1)
    totals["errors"] = errors[:10]
    if args.json:
        print(json.dumps(totals))
    else:
        for key, value in totals.items():
            print(f"{key}: {value}")


if __name__ == "__main__":
    main()
