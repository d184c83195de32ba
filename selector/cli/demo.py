"""``poise demo``: the three users' jobs on an invented scenario, each shown as the command
that does it and its output, then three example solutions solved exactly."""

from __future__ import annotations

#: The built-in demo (invented scenario and solutions, not anyone's protocol): (who, what to
#: look at, the poise command line that does the job).
DEMO_JOBS = (
    ("Assay developer",
     "which buffer holds pH 7.4 at 37 °C, made up at 22 °C, with Ca²⁺ in the assay? Read pKa′, dpH/dT and "
     "the bound fraction of each system",
     ("rank", "--ph", "7.4", "--temperature", "37", "--prep-temperature", "22", "--conc", "50mM",
      "--metal", "Ca:0.05")),
    ("Assay developer, at the bench",
     "the recipe of one system: grams, the meter reading to titrate to at 22 °C, the cautions",
     ("recipe", "hepes", "--ph", "7.4", "--temperature", "37", "--prep-temperature", "22", "--conc", "50mM",
      "--volume", "1L")),
    ("Purchaser",
     "the cheapest mix of catalog reagents that holds the same pH under 2 mM of acid (invented demo prices)",
     ("optimise", "--ph", "7.4", "--temperature", "37", "--capacity", "10", "--load", "acid:2",
      "--max-systems", "2")),
    ("Metal-ion assay",
     "keep out every system binding more than 5 % of the Ca²⁺ or Mg²⁺; the excluded systems say why",
     ("rank", "--ph", "7.2", "--temperature", "25", "--capacity", "5", "--metal", "Ca:0.05", "--metal", "Mg:0.05")),
)

#: Invented example solutions (demo data), each solved exactly by ``poise ph``.
DEMO_SOLUTIONS = (
    ("assay buffer at use temperature: 50 mM Tris (9 mM base + 41 mM Tris-HCl) with 100 mM NaCl, 37 °C",
     ("ph", "Tris=9mM", "Tris-HCl=41mM", "NaCl=100mM", "--temperature", "37")),
    ("pH standard: 0.025 M KH2PO4 + 0.025 M Na2HPO4 at 25 °C",
     ("ph", "KH2PO4=25mM", "Na2HPO4=25mM", "--temperature", "25")),
    ("half-neutralised acetic acid: 0.1 M acetic acid + 0.05 M NaOH at 25 °C",
     ("ph", "acetic acid=100mM", "NaOH=50mM", "--temperature", "25")),
)


def register(commands) -> None:
    """Add the ``demo`` command to the CLI's subparsers."""
    parser = commands.add_parser("demo", help="walk through the three users' jobs on an invented scenario")
    parser.set_defaults(handler=command_demo)


def _shown(argv: tuple[str, ...]) -> str:
    """The command line as a user types it (arguments with spaces quoted)."""
    return "poise " + " ".join(f'"{a}"' if " " in a else a for a in argv)


def command_demo(args) -> int:
    from selector.cli import main

    print("poise demo: an invented scenario, walked through as each of poise's users would, then three "
          "example solutions solved exactly (temperature, activity, polyprotic speciation). Prices are the "
          "invented demo prices.\n")
    worst = 0
    steps: list[tuple[str, str, tuple[str, ...]]] = list(DEMO_JOBS)
    steps += [("Check a solution", what, argv) for what, argv in DEMO_SOLUTIONS]
    for number, (who, what, argv) in enumerate(steps, 1):
        title = f"{number}. {who} — {what}"
        print(title)
        print("=" * min(len(title), 100))
        print(f"$ {_shown(argv)}\n", flush=True)
        worst = max(worst, main(list(argv)))
        print(flush=True)
    return worst
