"""Reading a large supplier price list: 20 000 offer rows, most naming products the catalog
does not know, through the public reader.  The list is invented (supplier "Invented Supply",
made-up product names and prices).  Reports the wall time of ``--repeat`` reads [s] and the
number of problem lines; run on demand from the repository root (never in the test gate)::

    python benchmarks/bench_price_sheet.py --rows 20000 --json
"""

from __future__ import annotations

import argparse
import json
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import selector  # noqa: E402

#: The bound the issue sets for a 20 000-row list [s] (common practice: "reads in seconds").
TARGET_S = 5.0
HEADER = "supplier,reagent,pack_size,pack_price,currency\n"
KNOWN = ("Tris", "HEPES", "NaCl", "KH2PO4", "acetic acid")


def invented_sheet(rows: int) -> bytes:
    """``rows`` invented offers: one in 20 names a catalog reagent (each a pack size of its own,
    so no offer repeats), the rest unknown products."""
    lines = [HEADER]
    for i in range(rows):
        name = KNOWN[i % len(KNOWN)] if i % 20 == 0 else f"unlisted product {i}"
        lines.append(f"Invented Supply,{name},{100 + i // 20} g,{12.5 + i % 11},EUR\n")
    return "".join(lines).encode()


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=20_000)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--json", action="store_true")
    args = parser.parse_args()
    data = invented_sheet(args.rows)
    selector.parse_price_bytes(data, "warm-up.csv")
    times, problems, used = [], 0, 0
    for _ in range(args.repeat):
        start = time.perf_counter()
        _, report = selector.parse_price_bytes(data, "supplier.csv")
        times.append(time.perf_counter() - start)
        problems, used = len(report.problems), report.rows_used
    figures = {"rows": args.rows, "rows_used": used, "median_s": statistics.median(times), "max_s": max(times),
               "problem_lines": problems, "target_s": TARGET_S}
    print(json.dumps(figures) if args.json else
          f"{args.rows} rows: median {figures['median_s']:.2f} s, max {figures['max_s']:.2f} s, "
          f"{problems} problem lines (target {TARGET_S:g} s)")
    return 0 if figures["max_s"] <= TARGET_S else 1


if __name__ == "__main__":
    raise SystemExit(main())
