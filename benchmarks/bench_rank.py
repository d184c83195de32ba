"""Warm latency of ranking and optimisation through the public API.

Specs: the README's rank example (``--ph 7.4 --temperature 37 --capacity 10 --metal
Ca:0.05``), the README's optimise example (``--ph 7.4 --temperature 37 --capacity 10 --load
acid:2 --max-systems 2``) and an optimise over a 5-point temperature window (20-37 °C,
k = 2, the spec of ``bench_optimise.py``).  One warm-up call each (imports, catalog,
HiGHS), then the median, min and max of ``--repeat`` calls [ms].  Run on demand from the
repository root (never in the test gate)::

    python benchmarks/bench_rank.py --repeat 9 --json
    python benchmarks/bench_rank.py --compare ../other-checkout --rounds 4   # before/after, alternating

``--compare`` runs this script for this checkout and for the other one (``--root``: whose
code is imported) in alternating subprocesses, ``--rounds`` times each, and prints the
medians of each figure over the rounds side by side with their ratio (on a busy machine
compare the CPU times).
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import time
from pathlib import Path
from typing import Any, Callable

HERE = Path(__file__).resolve().parents[1]

RANK_TARGET_MS = 60.0
OPTIMISE_TARGET_MS = 50.0


def timed_ms(call: Callable[[], object], repeat: int) -> dict[str, float]:
    """Median, min and max wall time [ms] of ``repeat`` calls after one warm-up call, and the
    median CPU time of the process [ms] (hardly moved by other work on the machine)."""
    call()
    times, cpu = [], []
    for _ in range(repeat):
        start, start_cpu = time.perf_counter(), time.process_time()
        call()
        times.append((time.perf_counter() - start) * 1000.0)
        cpu.append((time.process_time() - start_cpu) * 1000.0)
    return {"median": statistics.median(times), "min": min(times), "max": max(times), "cpu": statistics.median(cpu)}


def compare(other: Path, rounds: int, repeat: int) -> dict[str, Any]:
    """Medians over ``rounds`` alternating runs of this checkout and ``other``: figure -> (this, other, ratio)."""
    runs: dict[str, list[dict[str, float]]] = {"this": [], "other": []}
    for _ in range(rounds):
        for name, root in (("this", HERE), ("other", other)):
            out = subprocess.run([sys.executable, str(Path(__file__).resolve()), "--json", "--repeat", str(repeat),
                                  "--root", str(root)], check=True, capture_output=True, text=True).stdout
            runs[name].append(json.loads(out))
    keys = [k for k in runs["this"][0] if k.endswith("_ms") and not k.endswith("target_ms")]
    table = {}
    for key in keys:
        mine, theirs = (statistics.median(r[key] for r in runs[n]) for n in ("this", "other"))
        table[key] = {"this": mine, "other": theirs, "ratio": mine / theirs if theirs else None}
    return {"rounds": rounds, "repeat": repeat, "other": str(other), "figures": table}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=9, help="timed calls per spec (default 9, at least 7)")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    parser.add_argument("--root", type=Path, default=HERE, help="the checkout whose code is timed (default: this one)")
    parser.add_argument("--compare", type=Path, help="another checkout, timed in alternating runs with this one")
    parser.add_argument("--rounds", type=int, default=3, help="alternating runs per checkout with --compare (default 3)")
    args = parser.parse_args()
    repeat = max(args.repeat, 7)
    if args.compare is not None:
        result = compare(args.compare.resolve(), max(args.rounds, 1), repeat)
        if args.json:
            print(json.dumps(result, indent=2))
            return
        for key, row in result["figures"].items():
            print(f"{key:<24} this {row['this']:7.1f}  other {row['other']:7.1f}  ratio {row['ratio']:.3f}")
        return
    sys.path.insert(0, str(args.root.resolve()))
    import selector

    catalog = selector.load_catalog()
    rank_spec = selector.make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.010,
                                   metals=[{"metal": "Ca", "max_bound_fraction": 0.05}])
    optimise_spec = selector.make_spec(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.010,
                                       loads=[{"kind": "acid", "conc_mol_l": 0.002}])
    window_spec = selector.make_spec(ph=7.4, temperature_c=37.0, temperature_min_c=20.0, temperature_max_c=37.0,
                                     tolerance_ph=0.3, capacity_mol_l_per_ph=0.02,
                                     loads=[{"kind": "acid", "conc_mol_l": 0.002}])
    rank = timed_ms(lambda: selector.rank_systems(rank_spec, catalog=catalog), repeat)
    optimise = timed_ms(lambda: selector.solve_min_cost(optimise_spec, catalog=catalog, max_systems=2), repeat)
    window = timed_ms(lambda: selector.solve_min_cost(window_spec, catalog=catalog, max_systems=2), repeat)
    out = {"repeat": repeat,
           "rank_ms": rank["median"], "rank_min_ms": rank["min"], "rank_max_ms": rank["max"],
           "optimise_ms": optimise["median"], "optimise_min_ms": optimise["min"], "optimise_max_ms": optimise["max"],
           "optimise_window_ms": window["median"], "optimise_window_min_ms": window["min"],
           "optimise_window_max_ms": window["max"],
           "rank_cpu_ms": rank["cpu"], "optimise_cpu_ms": optimise["cpu"], "optimise_window_cpu_ms": window["cpu"],
           "rank_target_ms": RANK_TARGET_MS, "optimise_target_ms": OPTIMISE_TARGET_MS}
    if args.json:
        print(json.dumps(out, indent=2))
        return
    for name, target in (("rank", RANK_TARGET_MS), ("optimise", OPTIMISE_TARGET_MS),
                         ("optimise_window", OPTIMISE_TARGET_MS)):
        print(f"{name:<16} {out[name + '_ms']:7.1f} ms  ({out[name + '_min_ms']:.1f}-{out[name + '_max_ms']:.1f})  "
              f"CPU {out[name + '_cpu_ms']:.1f} ms  target {target:g} ms")


if __name__ == "__main__":
    main()
