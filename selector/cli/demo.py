"""``poise demo``: the command-line demo (invented example solutions, each solved exactly)."""

from __future__ import annotations

#: The built-in demo: invented example solutions (demo data, not anyone's protocol).
DEMO_SOLUTIONS = (
    ("Demo 1 — assay buffer at use temperature: 50 mM Tris (9 mM base + 41 mM Tris-HCl) with 100 mM NaCl, 37 °C",
     {"Tris": "9mM", "Tris-HCl": "41mM", "NaCl": "100mM"}, 37.0),
    ("Demo 2 — pH standard: 0.025 M KH2PO4 + 0.025 M Na2HPO4 at 25 °C",
     {"KH2PO4": "25mM", "Na2HPO4": "25mM"}, 25.0),
    ("Demo 3 — half-neutralised acetic acid: 0.1 M acetic acid + 0.05 M NaOH at 25 °C",
     {"acetic acid": "100mM", "NaOH": "50mM"}, 25.0),
)


def register(commands) -> None:
    """Add the ``demo`` command to the CLI's subparsers."""
    parser = commands.add_parser("demo", help="run the built-in demo")
    parser.set_defaults(handler=command_demo)


def command_demo(args) -> int:
    from selector.chemistry.properties import describe_solution
    from selector.report import format_solution_report

    print("poise demo: three invented example solutions, each solved exactly "
          "(temperature, activity, polyprotic speciation).\n")
    for title, amounts, temperature in DEMO_SOLUTIONS:
        print(title)
        print("=" * len(title))
        print(format_solution_report(describe_solution(amounts, temperature)))
        print()
    return 0
