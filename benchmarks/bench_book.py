"""The recipe book under use: save, show, list, verify latencies and concurrent writers.

One recipe (50 mM tris, pH 7.4 at 37 °C, titrated; an invented demo case) is saved
``--saves`` times in one process (median and max per operation), then ``--writers``
processes save ``--each`` versions of one name at once; the JSON gives the wall time, the
versions found and whether they are exactly 1..writers×each.  Run on demand from the
repository root (never in the test gate)::

    python benchmarks/bench_book.py --json
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import tempfile
import textwrap
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

WRITER = textwrap.dedent("""
    import json, sys
    from pathlib import Path
    from selector import book as B
    path, count, recipe = sys.argv[1], int(sys.argv[2]), json.loads(Path(sys.argv[3]).read_text())
    for i in range(count):
        with B.open_book(path) as opened:
            B.save_recipe(opened, "shared", recipe, {"ph": 7.4})
""")


def timed(fn) -> float:
    start = time.perf_counter()
    fn()
    return (time.perf_counter() - start) * 1000


def summary(values: list[float]) -> dict:
    return {"median_ms": round(statistics.median(values), 3), "max_ms": round(max(values), 3), "n": len(values)}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--saves", type=int, default=200)
    parser.add_argument("--writers", type=int, default=4)
    parser.add_argument("--each", type=int, default=50)
    parser.add_argument("--json", action="store_true")
    args = parser.parse_args()

    from selector import book as B
    from selector.recipe import make_recipes
    from selector.spec import make_spec

    spec = make_spec(ph=7.4, temperature_c=37.0, buffer_conc_mol_l=0.05)
    recipe = make_recipes("tris", spec, routes=["titrate"])[0].as_json()
    out: dict = {}
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "book.sqlite3"
        with B.open_book(path) as book:
            out["save"] = summary([timed(lambda: B.save_recipe(book, f"r{i % 50}", recipe, spec))
                                   for i in range(args.saves)])
            out["show"] = summary([timed(lambda: B.show_recipe(book, f"r{i % 50}")) for i in range(args.saves)])
            out["list_50_names"] = summary([timed(lambda: B.list_recipes(book)) for _ in range(20)])
            out["verify"] = summary([timed(lambda: B.verify_recipe(book, "r0")) for _ in range(20)])
        out["open"] = summary([timed(lambda: B.open_book(path).close()) for _ in range(50)])
        out["file_bytes"] = path.stat().st_size

        shared = Path(folder) / "shared.sqlite3"
        recipe_file = Path(folder) / "recipe.json"
        recipe_file.write_text(json.dumps(recipe))
        B.open_book(shared).close()
        start = time.perf_counter()
        children = [subprocess.Popen([sys.executable, "-c", WRITER, str(shared), str(args.each), str(recipe_file)],
                                     cwd=ROOT) for _ in range(args.writers)]
        codes = [child.wait() for child in children]
        wall_s = time.perf_counter() - start
        with B.open_book(shared) as book:
            versions = [e.version for e in B.versions_of(book, "shared")]
        out["concurrent"] = {"writers": args.writers, "saves_each": args.each, "exit_codes": codes,
                             "wall_s": round(wall_s, 3), "versions_found": len(versions),
                             "exactly_1_to_n": versions == list(range(1, args.writers * args.each + 1))}
    print(json.dumps(out, indent=2) if args.json else out)


if __name__ == "__main__":
    main()
