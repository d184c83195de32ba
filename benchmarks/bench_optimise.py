"""Latency of the optimiser: model build, solve (activity rounds) and exact verification.

Full catalog, k = 2 systems, a 5-point temperature grid (20-37 °C), an acid load and a
capacity floor.  Run on demand (never in the test gate)::

    python benchmarks/bench_optimise.py --repeat 5 --json
"""

from __future__ import annotations

import argparse
import json
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))   # this checkout's code, not an installed one

from catalog import load_catalog  # noqa: E402
from selector.optimise import finish, make_problem, solve_rounds, temperature_grid  # noqa: E402
from selector.spec import make_spec  # noqa: E402


def run_once(spec, catalog):
    t0 = time.perf_counter()
    problem = make_problem(spec, catalog=catalog, max_systems=2)
    t1 = time.perf_counter()
    status, rounds = solve_rounds(problem)
    t2 = time.perf_counter()
    if status != "optimal":
        raise SystemExit(f"benchmark spec is {status}")
    result = finish(problem, rounds)
    t3 = time.perf_counter()
    return {"build_s": t1 - t0, "solve_s": t2 - t1, "verify_s": t3 - t2, "total_s": t3 - t0,
            "rounds": rounds, "cost_per_l": result.cost_per_l, "systems": list(result.systems),
            "reagents": len(problem.data.reagent_ids), "system_count": len(problem.data.system_ids)}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--json", action="store_true")
    args = parser.parse_args()
    catalog = load_catalog()
    spec = make_spec(ph=7.4, temperature_c=37.0, temperature_min_c=20.0, temperature_max_c=37.0,
                     tolerance_ph=0.3, capacity_mol_l_per_ph=0.02, loads=[{"kind": "acid", "conc_mol_l": 0.002}])
    run_once(spec, catalog)   # warm-up: imports, catalog tables, HiGHS library
    runs = [run_once(spec, catalog) for _ in range(args.repeat)]
    out = {"grid_temperatures_c": list(temperature_grid(spec)), "max_systems": 2, "repeat": args.repeat,
           **{k: statistics.median(r[k] for r in runs) for k in ("build_s", "solve_s", "verify_s", "total_s")},
           "rounds": runs[-1]["rounds"], "reagents": runs[-1]["reagents"], "systems_admitted": runs[-1]["system_count"],
           "mix_systems": runs[-1]["systems"], "cost_per_l": runs[-1]["cost_per_l"], "target_total_s": 1.0}
    print(json.dumps(out, indent=2) if args.json else
          f"build {out['build_s']:.3f} s, solve {out['solve_s']:.3f} s, verify {out['verify_s']:.3f} s, "
          f"total {out['total_s']:.3f} s (target < 1 s)")


if __name__ == "__main__":
    main()
