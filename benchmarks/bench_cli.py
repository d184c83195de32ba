"""Cold start of the command line: whole-process times of ``poise`` commands.

Each command runs as a fresh process (the same way the ``poise`` script starts it:
``from selector.cli import main``), interleaved round by round with a bare
``python -c "import numpy"`` so that both see the same machine load; the JSON gives the
median, min and max of each and the ratio of each median to the numpy median.  Bytecode
is cached in a temporary directory for the run (round 0 writes it), as an installed
package has it.  Run on
demand from the repository root (never in the test gate)::

    python benchmarks/bench_cli.py --repeat 7 --json
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import statistics
import subprocess
import sys
import tempfile
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


def child_environment(root: Path, pycache: Path) -> dict[str, str]:
    """The environment of every timed process: this checkout first on the path, and bytecode
    written to and read from ``pycache`` (as an installed package has its ``.pyc`` files; a
    ``PYTHONDONTWRITEBYTECODE`` in the caller's environment would otherwise make every
    process compile every module from source, about 0.3 s measured here)."""
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    return {**env, "PYTHONPATH": str(root), "PYTHONPYCACHEPREFIX": str(pycache)}


def time_process(command: list[str], root: Path, env: dict[str, str]) -> tuple[float, float]:
    """Wall time and CPU time (user + system) of one process run in checkout ``root`` [s].

    The CPU time hardly depends on what else the machine runs, so it compares two
    checkouts fairly on a busy machine.  A failing command stops the benchmark.
    """
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run(command, cwd=root, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env=env)
    elapsed = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(command)} failed: {done.stderr.decode(errors='replace').strip()}")
    return elapsed, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def measure(repeat: int, root: Path = ROOT, compare: Path | None = None) -> dict[str, list[tuple[float, float]]]:
    """(wall, CPU) times [s] of every command, ``repeat`` interleaved rounds after one warm-up round.

    With ``compare`` (another checkout) each round also runs its commands, named
    ``NAME@compare``, so that a before/after sees the same machine load.
    """
    names = {name: argv for name, argv in {**LIGHT, **DESIGN}.items()}
    runs: dict[str, tuple[list[str], Path]] = {NUMPY[0]: (NUMPY[1], root)}
    for checkout, suffix in ((root, ""), (compare, "@compare")):
        if checkout is not None:
            runs.update({name + suffix: (poise_command(argv), checkout) for name, argv in names.items()})
    times: dict[str, list[tuple[float, float]]] = {name: [] for name in runs}
    with tempfile.TemporaryDirectory(prefix="poise-bench-pycache-") as pycache:
        checkouts = [root] if compare is None else [root, compare]
        envs = {checkout: child_environment(checkout, Path(pycache) / str(n)) for n, checkout in enumerate(checkouts)}
        for round_index in range(repeat + 1):
            for name, (command, checkout) in runs.items():
                elapsed = time_process(command, checkout, envs[checkout])
                if round_index:   # round 0 warms the file cache and writes the bytecode
                    times[name].append(elapsed)
    return times


def summary(times: dict[str, list[tuple[float, float]]], repeat: int) -> dict:
    """Medians, spreads, ratios to the numpy baseline and whether each target is met (on wall time)."""
    base = statistics.median(t[0] for t in times[NUMPY[0]])
    base_cpu = statistics.median(t[1] for t in times[NUMPY[0]])
    out: dict = {"repeat": repeat, "python": sys.version.split()[0], "numpy_import_s": base,
                 "numpy_import_cpu_s": base_cpu, "commands": {}}
    for name, runs in times.items():
        if name == NUMPY[0]:
            continue
        values = [t[0] for t in runs]
        median = statistics.median(values)
        cpu = statistics.median(t[1] for t in runs)
        command = name.split("@")[0]
        light = command in LIGHT
        out["commands"][name] = {
            "argv": LIGHT.get(command) or DESIGN[command], "median_s": median, "min_s": min(values),
            "max_s": max(values), "ratio_to_numpy": median / base, "cpu_s": cpu, "cpu_ratio_to_numpy": cpu / base_cpu,
            "target": f"<= {LIGHT_RATIO_TARGET:g}x numpy" if light else f"<= {DESIGN_TARGET_S:g} s",
            "met": (median / base <= LIGHT_RATIO_TARGET) if light else (median <= DESIGN_TARGET_S)}
    return out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7, help="rounds after the warm-up (default 7)")
    parser.add_argument("--json", action="store_true", help="print one JSON object")
    parser.add_argument("--root", type=Path, default=ROOT,
                        help="checkout whose code runs (default this one; another gives a before/after)")
    parser.add_argument("--compare", type=Path, default=None,
                        help="another checkout run in the same rounds (its commands named NAME@compare)")
    args = parser.parse_args()
    compare = args.compare.resolve() if args.compare is not None else None
    out = summary(measure(args.repeat, args.root.resolve(), compare), args.repeat)
    out["root"] = str(args.root.resolve())
    if compare is not None:
        out["compare"] = str(compare)
    if args.json:
        print(json.dumps(out, indent=2))
        return
    print(f"python -c 'import numpy'  {out['numpy_import_s']:.3f} s, CPU {out['numpy_import_cpu_s']:.3f} s "
          f"(median of {args.repeat})")
    for name, c in out["commands"].items():
        print(f"poise {name:<17} {c['median_s']:.3f} s  ({c['min_s']:.3f}-{c['max_s']:.3f})  "
              f"{c['ratio_to_numpy']:4.1f}x numpy  CPU {c['cpu_s']:.3f} s ({c['cpu_ratio_to_numpy']:.1f}x)  "
              f"target {c['target']}: {'met' if c['met'] else 'NOT met'}")


if __name__ == "__main__":
    main()
