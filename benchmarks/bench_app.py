"""Latency of the app, driven with Streamlit's AppTest (the script runs as a server runs it).

One fresh process per sample (so the first page is as cold as a new server's first visitor:
Streamlit imported, nothing of poise yet): the time of the first run of the frame (the
ranked table on the default spec), of a spec change that re-ranks (pH 7.4 → 7.2) and of
switching to each page and back (``--think S``: a pause after the first table, as a
person reading it; the app loads the other pages' modules in the background meanwhile).  Run on demand from the repository root (never in the
test gate)::

    python benchmarks/bench_app.py --repeat 3 --json
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
TARGETS_S = {"first_table_s": 2.0, "respec_rank_s": 0.3, "page_switch_max_s": 0.5}

_ONE_SAMPLE = r'''
import json, sys, time
from streamlit.testing.v1 import AppTest
if sys.argv[2] == "shared":   # one compiled-script cache for every run, as a server keeps it
    import streamlit.testing.v1.app_test as app_test_module
    import streamlit.testing.v1.local_script_runner as runner_module
    from streamlit.runtime.scriptrunner.script_cache import ScriptCache
    shared_cache = ScriptCache()
    app_test_module.ScriptCache = runner_module.ScriptCache = lambda: shared_cache
at = AppTest.from_file("app/main.py", default_timeout=300)
t = time.perf_counter(); at.run(); first = time.perf_counter() - t
assert not at.exception, [e.message for e in at.exception]
assert at.dataframe, "no ranked table on the first page"
time.sleep(float(sys.argv[1]))   # a person reading the first table
t = time.perf_counter(); at.number_input(key="spec_ph").set_value(7.2).run(); respec = time.perf_counter() - t
switches = {}
for page in ("pages/recipe_page.py", "pages/optimise_page.py", "pages/catalog_page.py", "pages/prices_page.py",
             "pages/rank_page.py"):
    t = time.perf_counter(); at.switch_page(page).run(); switches[page] = time.perf_counter() - t
    assert not at.exception, [e.message for e in at.exception]
print(json.dumps({"first_table_s": first, "respec_rank_s": respec, "switches_s": switches}))
'''


def sample(root: Path, think_s: float, script_cache: str = "shared") -> dict:
    """One cold process: the three timings [s]; ``think_s`` passes between the first table and the re-rank.

    ``script_cache`` "shared": the page scripts are compiled once and kept across reruns, as a
    running server keeps them (AppTest by itself compiles every script again on each run,
    ≈ 0.03 s of each rerun here); "fresh": AppTest's own behaviour.

    Bytecode is written and read as usual (a ``PYTHONDONTWRITEBYTECODE`` in the caller's
    environment is dropped: an installed package has its ``.pyc`` files); :func:`main` runs
    one sample first, not counted, that writes it.
    """
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    done = subprocess.run([sys.executable, "-c", _ONE_SAMPLE, str(think_s), script_cache], cwd=root, capture_output=True, text=True,
                          env={**env, "PYTHONPATH": str(root)})
    if done.returncode != 0:
        raise SystemExit(f"app sample failed: {done.stderr.strip()[-2000:]}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3, help="cold processes (default 3)")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    parser.add_argument("--root", type=Path, default=ROOT, help="checkout whose app runs (default this one)")
    parser.add_argument("--think", type=float, default=0.0,
                        help="seconds between the first table and the spec change, as a person reading it (default 0)")
    parser.add_argument("--fresh-compile", action="store_true",
                        help="let AppTest compile every page script again on each rerun (a server compiles once)")
    args = parser.parse_args()
    cache = "fresh" if args.fresh_compile else "shared"
    sample(args.root.resolve(), args.think, cache)   # writes the bytecode; not counted
    runs = [sample(args.root.resolve(), args.think, cache) for _ in range(args.repeat)]
    pages = list(runs[0]["switches_s"])
    out = {"repeat": args.repeat, "root": str(args.root.resolve()), "think_s": args.think, "script_cache": cache,
           "first_table_s": statistics.median(r["first_table_s"] for r in runs),
           "respec_rank_s": statistics.median(r["respec_rank_s"] for r in runs),
           "page_switch_s": {p: statistics.median(r["switches_s"][p] for r in runs) for p in pages}}
    out["page_switch_max_s"] = max(out["page_switch_s"].values())
    out["targets_s"] = TARGETS_S
    if args.json:
        print(json.dumps(out, indent=2))
        return
    for key, target in TARGETS_S.items():
        print(f"{key:<18} {out[key]:6.3f} s  (target {target:g} s)")
    for page, seconds in out["page_switch_s"].items():
        print(f"  switch to {page:<26} {seconds:6.3f} s")


if __name__ == "__main__":
    main()
