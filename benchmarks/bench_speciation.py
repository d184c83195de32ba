"""Throughput and latency of the equilibrium solver.

Solves ``--n`` random compositions, each mixing up to four buffer systems (phosphate,
Tris, acetate, citrate, 0-100 mM each, each present with probability 0.7) with HCl or
NaOH (0-100 mM) and NaCl (0-150 mM), at 25 °C, pH tolerance 1e-6, ionic strength
self-consistent; then times one composition on its own.

    python benchmarks/bench_speciation.py --n 100000 --json
    python benchmarks/bench_speciation.py --n 1000000 --repeats 1 --json

prints one JSON object {"n", "seconds", "solves_per_s", "cpu_seconds", "solves_per_cpu_s"
(CPU time of the process, all threads: hardly moved by other work on the machine),
"single_latency_ms", "single_latency_cpu_ms", "composition_ph_latency_ms", "peak_memory_mb",
"chunk_rows" (the engine's rows per chunk), "status_counts", ...}.  ``--threads K`` sets
the solver's threads (default: the engine's default, ``default_threads()``).  ``peak_memory_mb`` is the process's peak
resident set (``resource.getrusage``, ru_maxrss) after the timed solves; the single-
composition latency is the median of 200 calls of ``solve_equilibrium`` with one
composition and the catalog passed in (``single_latency_default_catalog_ms``: the same
without it, so each call also goes through ``load_catalog()``; ``composition_ph_latency_ms``:
``composition_ph`` on the same composition as a mapping, the catalog passed in).
"""

from __future__ import annotations

import argparse
import json
import resource
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))   # this checkout's code, not an installed one

from selector import load_catalog, solve_equilibrium  # noqa: E402
from selector.chemistry.equilibrium import composition_ph  # noqa: E402
from selector.chemistry.speciation import CHUNK_ROWS, default_threads  # noqa: E402

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


def solve_batch(amounts: np.ndarray, threads: int | None, catalog) -> np.ndarray:
    return solve_equilibrium(REAGENTS, amounts, 25.0, threads=threads, catalog=catalog, strict=False).status


def median_latency_ms(single: np.ndarray, catalog, calls: int = 200) -> tuple[float, float]:
    """Median wall and CPU time of one ``solve_equilibrium`` call on one composition [ms] (the CPU
    time of this thread: idle BLAS workers spinning after the batch do not count)."""
    latencies, cpu = [], []
    for _ in range(calls):
        start, start_cpu = time.perf_counter(), time.thread_time()
        solve_equilibrium(REAGENTS, single, 25.0, catalog=catalog)
        latencies.append(time.perf_counter() - start)
        cpu.append(time.thread_time() - start_cpu)
    return 1000 * float(np.median(latencies)), 1000 * float(np.median(cpu))


def composition_ph_latency_ms(single: np.ndarray, catalog, calls: int = 200) -> float:
    """Median wall time of one ``composition_ph`` call on one composition given as a mapping [ms]."""
    composition = dict(zip(REAGENTS, single.tolist()))
    latencies = []
    for _ in range(calls):
        start = time.perf_counter()
        composition_ph(composition, 25.0, catalog=catalog)
        latencies.append(time.perf_counter() - start)
    return 1000 * float(np.median(latencies))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=100_000, help="number of compositions (e.g. 1000000)")
    parser.add_argument("--threads", type=int, default=None, help="solver threads (default: the engine's, the cores up to 4)")
    parser.add_argument("--repeats", type=int, default=3, help="timed repeats; the best is reported")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    args = parser.parse_args()

    catalog = load_catalog()
    amounts = random_compositions(args.n)
    solve_batch(amounts[:1000], args.threads, catalog)  # warm up (catalog load, caches)
    best = best_cpu = np.inf
    status = np.zeros(0)
    for _ in range(args.repeats):
        start, start_cpu = time.perf_counter(), time.process_time()
        status = solve_batch(amounts, args.threads, catalog)
        best = min(best, time.perf_counter() - start)
        best_cpu = min(best_cpu, time.process_time() - start_cpu)
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # ru_maxrss is in KiB on Linux
    last = solve_equilibrium(REAGENTS, amounts[:100_000], 25.0, threads=args.threads, catalog=catalog)
    single = amounts[:1]
    single_ms, single_cpu_ms = median_latency_ms(single, catalog)
    result = {
        "n": args.n,
        "seconds": round(best, 4),
        "solves_per_s": round(args.n / best),
        "cpu_seconds": round(best_cpu, 4),
        "solves_per_cpu_s": round(args.n / best_cpu),
        "threads": args.threads or default_threads(),
        "chunk_rows": CHUNK_ROWS,
        "max_iterations": int(last.speciation.iterations),
        "single_latency_ms": round(single_ms, 3),
        "single_latency_cpu_ms": round(single_cpu_ms, 3),
        "single_latency_default_catalog_ms": round(median_latency_ms(single, None)[0], 3),
        "composition_ph_latency_ms": round(composition_ph_latency_ms(single[0], catalog), 3),
        "peak_memory_mb": round(peak_mb, 1),
        "status_counts": {name: int(np.sum(status == code))
                          for code, name in enumerate(("converged", "beyond_model", "failed"))},
        "ph_range": [round(float(np.nanmin(last.ph)), 3), round(float(np.nanmax(last.ph)), 3)],
    }
    if args.json:
        print(json.dumps(result))
    else:
        for key, value in result.items():
            print(f"{key}: {value}")


if __name__ == "__main__":
    main()
