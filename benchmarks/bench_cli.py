"""Cold start of the command line: whole-process times of ``poise`` commands.

Each command runs as a fresh process (the same way the ``poise`` script starts it:
``from selector.cli import main``), interleaved round by round with a bare
``python -c "import numpy"`` so that both see the same machine load; the JSON gives the
median, min and max of each and the ratio of each median to the numpy median.  Run on
demand from the repository root (never in the test gate)::

    python benchmarks/bench_cli.py --repeat 7 --json
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: The baseline: a bare interpreter importing numpy.
NUMPY = ("import numpy", [sys.executable, "-c", "import numpy"])

#: Commands that solve no model (target: ≤ 4× the numpy baseline).
LIGHT = {
    "help": ["--help"],
    "ph": ["ph", "KH2PO4=25mM", "Na2HPO4=25mM"],
    "catalog": ["catalog"],
}
#: The README's design commands (target: ≤ 0.9 s each).
DESIGN = {
    "rank": ["rank", "--ph", "7.4", "--temperature", "37", "--capacity", "10", "--metal", "Ca:0.05"],
    "recipe": ["recipe", "tris", "--ph", "7.4", "--temperature", "37", "--conc", "50mM", "--volume", "1L",
               "--route", "titrate"],
    "optimise": ["optimise", "--ph", "7.4", "--temperature", "37", "--capacity", "10", "--load", "acid:2",
                 "--max-systems", "2"],
}
LIGHT_RATIO_TARGET = 4.0
DESIGN_TARGET_S = 0.9

_POISE = "import sys; from selector.cli import main; sys.exit(main(sys.argv[1:]))"


def poise_command(argv: list[str]) -> list[str]:
    """The process that runs ``poise ARGV`` with this checkout's code."""
    return [sys.executable, "-c", _POISE, *argv]


def time_process(command: list[str], root: Path) -> float:
    """Wall time of one process run in checkout ``root`` [s]; a failing command stops the benchmark."""
    start = time.perf_counter()
    done = subprocess.run(command, cwd=root, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                          env={**os.environ, "PYTHONPATH": str(root)})
    elapsed = time.perf_counter() - start
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(command)} failed: {done.stderr.decode(errors='replace').strip()}")
    return elapsed


def measure(repeat: int, root: Path = ROOT) -> dict[str, list[float]]:
    """Times [s] of every command, ``repeat`` interleaved rounds after one warm-up round."""
    commands = {NUMPY[0]: NUMPY[1], **{name: poise_command(argv) for name, argv in {**LIGHT, **DESIGN}.items()}}
    times: dict[str, list[float]] = {name: [] for name in commands}
    for round_index in range(repeat + 1):
        for name, command in commands.items():
            elapsed = time_process(command, root)
            if round_index:   # round 0 warms the file cache
                times[name].append(elapsed)
    return times


def summary(times: dict[str, list[float]], repeat: int) -> dict:
    """Medians, spreads, ratios to the numpy baseline and whether each target is met."""
    base = statistics.median(times[NUMPY[0]])
    out: dict = {"repeat": repeat, "python": sys.version.split()[0], "numpy_import_s": base, "commands": {}}
    for name, values in times.items():
        if name == NUMPY[0]:
            continue
        median = statistics.median(values)
        light = name in LIGHT
        out["commands"][name] = {
            "argv": LIGHT.get(name) or DESIGN[name], "median_s": median, "min_s": min(values),
            "max_s": max(values), "ratio_to_numpy": median / base,
            "target": f"<= {LIGHT_RATIO_TARGET:g}x numpy" if light else f"<= {DESIGN_TARGET_S:g} s",
            "met": (median / base <= LIGHT_RATIO_TARGET) if light else (median <= DESIGN_TARGET_S)}
    return out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7, help="rounds after the warm-up (default 7)")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    parser.add_argument("--root", type=Path, default=ROOT,
                        help="checkout whose code runs (default this one; another gives a before/after)")
    args = parser.parse_args()
    out = summary(measure(args.repeat, args.root.resolve()), args.repeat)
    out["root"] = str(args.root.resolve())
    if args.json:
        print(json.dumps(out, indent=2))
        return
    print(f"python -c 'import numpy'  {out['numpy_import_s']:.3f} s (median of {args.repeat})")
    for name, c in out["commands"].items():
        print(f"poise {name:<9} {c['median_s']:.3f} s  ({c['min_s']:.3f}-{c['max_s']:.3f})  "
              f"{c['ratio_to_numpy']:4.1f}x numpy  target {c['target']}: {'met' if c['met'] else 'NOT met'}")


if __name__ == "__main__":
    main()
