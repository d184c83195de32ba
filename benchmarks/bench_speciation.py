"""Throughput and latency of the equilibrium solver.

Solves ``--n`` random compositions, each mixing up to four buffer systems (phosphate,
Tris, acetate, citrate, 0-100 mM each, each present with probability 0.7) with HCl or
NaOH (0-100 mM) and NaCl (0-150 mM), at 25 °C, pH tolerance 1e-6, ionic strength
self-consistent; then times one composition on its own.

    python benchmarks/bench_speciation.py --n 100000 --json

prints one JSON object {"n", "seconds", "solves_per_s", "single_latency_ms", ...}.
``--threads K`` sets the solver's threads (default: the machine's cores, at most 4).
"""

from __future__ import annotations

import argparse
import json
import os
import time

import numpy as np

from selector import solve_equilibrium

REAGENTS = ("kh2po4", "tris", "acetic_acid", "citric_acid", "hcl", "naoh", "nacl")


def random_compositions(n: int, seed: int = 7) -> np.ndarray:
    """Random amounts [n, 7] in mol/L over REAGENTS (reproducible with ``seed``)."""
    rng = np.random.default_rng(seed)
    amounts = np.zeros((n, len(REAGENTS)))
    amounts[:, :4] = rng.uniform(0.0, 0.1, (n, 4)) * (rng.random((n, 4)) < 0.7)
    strong = rng.uniform(0.0, 0.1, n)
    acid = rng.random(n) < 0.5
    amounts[:, 4] = np.where(acid, strong, 0.0)
    amounts[:, 5] = np.where(acid, 0.0, strong)
    amounts[:, 6] = rng.uniform(0.0, 0.15, n)
    return amounts


def solve_batch(amounts: np.ndarray, threads: int | None) -> np.ndarray:
    return solve_equilibrium(REAGENTS, amounts, 25.0, threads=threads).ph


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=100_000, help="number of compositions")
    parser.add_argument("--threads", type=int, default=None, help="solver threads (default: cores, at most 4)")
    parser.add_argument("--repeats", type=int, default=3, help="timed repeats; the best is reported")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    args = parser.parse_args()

    amounts = random_compositions(args.n)
    solve_batch(amounts[:1000], args.threads)  # warm up (catalog load, caches)
    best = np.inf
    for _ in range(args.repeats):
        start = time.perf_counter()
        ph = solve_batch(amounts, args.threads)
        best = min(best, time.perf_counter() - start)
    last = solve_equilibrium(REAGENTS, amounts, 25.0, threads=args.threads)
    single = amounts[:1]
    latencies = []
    for _ in range(200):
        start = time.perf_counter()
        solve_equilibrium(REAGENTS, single, 25.0)
        latencies.append(time.perf_counter() - start)
    result = {
        "n": args.n,
        "seconds": round(best, 4),
        "solves_per_s": round(args.n / best),
        "threads": args.threads or min(os.cpu_count() or 1, 4),
        "max_iterations": int(last.speciation.iterations),
        "single_latency_ms": round(1000 * float(np.median(latencies)), 3),
        "ph_range": [round(float(ph.min()), 3), round(float(ph.max()), 3)],
    }
    if args.json:
        print(json.dumps(result))
    else:
        for key, value in result.items():
            print(f"{key}: {value}")


if __name__ == "__main__":
    main()
