"""Golden outputs: a fixed list of ``poise`` commands whose output pins behaviour.

``python tests/golden_commands.py`` records each command's
exit code, stdout (parsed when it is JSON) and stderr into ``tests/data/golden/NAME.json``.
``tests/test_golden.py`` compares today's output with those files, numbers to 1e-9
relative.  A change that moves numbers on purpose regenerates them and says why in its
commit message.
"""

from __future__ import annotations

import contextlib
import io
import json
import sys
from pathlib import Path

GOLDEN_DIR = Path(__file__).parent / "data" / "golden"
# Run as a script, import this checkout's code (not an installed copy).
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

#: name -> argv.  Spec values are invented demo cases, not anyone's protocol.
GOLDEN_COMMANDS: dict[str, list[str]] = {
    "ph_phosphate_standard": ["ph", "KH2PO4=25mM", "Na2HPO4=25mM", "--temperature", "25", "--json"],
    "ph_tris_37": ["ph", "Tris=50mM", "HCl=40mM", "--temperature", "37", "--json"],
    "ph_acetate_bates_guggenheim": ["ph", "acetic acid=100mM", "NaOH=50mM", "--activity",
                                    "bates-guggenheim", "--json"],
    "ph_borax_grams": ["ph", "borax=3.81g/L", "--temperature", "10", "--json"],
    "ph_hazard_text": ["ph", "sodium azide=10mM", "HEPES=20mM", "NaOH=10mM"],
    "ph_text": ["ph", "KH2PO4=25mM", "Na2HPO4=25mM"],
    "ph_calcium_edta_json": ["ph", "CaCl2=1mM", "Na2H2EDTA=2mM", "tris=20mM", "--temperature", "25", "--json"],
    "ph_borax_open_json": ["ph", "borax=10mM", "--temperature", "20", "--open", "--json"],
    "metal_egta_json": ["metal", "--free", "Ca=100nM", "--free", "Mg=1mM", "--chelator", "EGTA=2mM", "--ph", "7.2",
                        "--temperature", "22", "--ionic-strength", "0.1", "--buffer", "hepes=20mM", "--json"],
    "catalog_json": ["catalog", "--json"],
    "catalog_37c_i015_json": ["catalog", "--temperature", "37", "--ionic-strength", "150mM", "--json"],
    "catalog_csv": ["catalog", "--csv"],
    "catalog_text": ["catalog"],
    "catalog_tris_json": ["catalog", "tris", "--json"],
    "catalog_phosphate_json": ["catalog", "phosphate", "--json"],
    "catalog_tris_text": ["catalog", "tris"],
    "catalog_search_json": ["catalog", "--search", "phosph", "--json"],
    "rank_readme_json": ["rank", "--ph", "7.4", "--temperature", "37", "--capacity", "10",
                         "--metal", "Ca:0.05", "--json"],
    "rank_readme_text": ["rank", "--ph", "7.4", "--temperature", "37", "--capacity", "10",
                         "--metal", "Ca:0.05"],
    "rank_acidic_json": ["rank", "--ph", "4.8", "--conc", "20mM", "--ionic-strength", "0.1",
                         "--counter-ion", "K", "--json"],
    "recipe_tris_titrate_json": ["recipe", "tris", "--ph", "7.4", "--temperature", "37", "--conc",
                                 "50mM", "--volume", "1L", "--route", "titrate", "--json"],
    "recipe_tris_titrate_text": ["recipe", "tris", "--ph", "7.4", "--temperature", "37", "--conc",
                                 "50mM", "--volume", "1L", "--route", "titrate"],
    "recipe_hepes_all_json": ["recipe", "hepes", "--ph", "7.4", "--prep-temperature", "22",
                              "--temperature", "37", "--conc", "50mM", "--ionic-strength", "0.15",
                              "--json"],
    "recipe_phosphate_two_forms_json": ["recipe", "phosphate", "--ph", "7.0", "--conc", "100mM",
                                        "--volume", "500mL", "--route", "two-forms", "--json"],
    "recipe_acetate_stocks_json": ["recipe", "acetate", "--ph", "4.8", "--conc", "100mM",
                                   "--route", "stocks", "--json"],
    "recipe_mops_stock10x_json": ["recipe", "mops", "--ph", "7.2", "--conc", "20mM", "--ionic-strength",
                                  "0.1", "--route", "stock10x", "--json"],
    "recipe_capacity_text": ["recipe", "hepes", "--ph", "7.4", "--temperature", "37", "--capacity",
                             "10", "--load", "acid:2"],
    "recipe_standard_borax_json": ["recipe", "--standard", "borax", "--json"],
    "recipe_standard_phthalate_text": ["recipe", "--standard", "phthalate", "--water-kg", "0.5"],
    "optimise_readme_json": ["optimise", "--ph", "7.4", "--temperature", "37", "--capacity", "10",
                             "--load", "acid:2", "--max-systems", "2", "--json"],
    "optimise_readme_text": ["optimise", "--ph", "7.4", "--temperature", "37", "--capacity", "10",
                             "--load", "acid:2", "--max-systems", "2"],
    "optimise_one_system_json": ["optimise", "--ph", "7.4", "--temperature", "37", "--capacity", "10",
                                 "--metal", "Ca:0.05", "--max-systems", "1", "--json"],
    "optimise_ionic_strength_json": ["optimise", "--ph", "6.5", "--conc", "25mM", "--objective",
                                     "ionic-strength", "--json"],
    "optimise_infeasible_json": ["optimise", "--ph", "7.4", "--capacity", "500", "--ionic-strength-max",
                                 "0.05", "--json"],
    "optimise_infeasible_text": ["optimise", "--ph", "7.4", "--capacity", "500", "--ionic-strength-max",
                                 "0.05"],
    "series_json": ["series", "--ph", "7.0:7.5:0.5", "--conc", "20mM", "--ionic-strength", "0.1",
                    "--max-systems", "1", "--json"],
    "span_json": ["span", "--ph", "6.0:7.0:0.5", "--capacity", "10", "--max-systems", "1", "--json"],
    "plate_json": ["plate", "--ph", "7.0", "--ionic-strength", "0.1:0.2:0.1", "--conc", "20mM",
                   "--max-systems", "1", "--json"],
    "demo_text": ["demo"],
    "buy_text": ["buy", "--need", "tris=2.5kg", "--need", "HCl=1L", "--prices", "examples/purchasing/offers.csv",
                 "--suppliers", "examples/purchasing/suppliers.csv"],
    "buy_plan_json": ["buy", "--plan", "examples/purchasing/quarter.toml", "--json"],
    "buy_prepared_json": ["buy", "--prices", "examples/purchasing/offers.csv", "--compare-prepared", "--json"],
    "error_unknown_reagent": ["ph", "KH2PO5=25mM"],
    "error_bad_unit": ["ph", "KH2PO4=25furlongs"],
    "error_unknown_system": ["catalog", "trizma base"],
    "error_bad_spec": ["rank", "--ph", "17"],
}


def run_command(argv: list[str]) -> dict:
    """Run ``poise ARGV`` in-process; return its exit code, stdout (JSON parsed) and stderr."""
    from selector.cli import main

    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            code = main(list(argv))
        except SystemExit as stop:
            code = stop.code
    stdout = out.getvalue()
    if "--json" in argv and stdout.strip():
        stdout = json.loads(stdout)
    return {"argv": argv, "exit_code": code, "stdout": stdout, "stderr": err.getvalue()}


def write_all() -> None:
    GOLDEN_DIR.mkdir(parents=True, exist_ok=True)
    for name, argv in GOLDEN_COMMANDS.items():
        record = run_command(argv)
        (GOLDEN_DIR / f"{name}.json").write_text(
            json.dumps(record, indent=1, ensure_ascii=False, allow_nan=False) + "\n", encoding="utf-8")
        print(f"{name}: exit {record['exit_code']}", file=sys.stderr)


if __name__ == "__main__":
    write_all()
