"""`poise optimise` and `poise rank` from the command line."""

from __future__ import annotations

import json

from cli_helpers import run

from selector.cli import main
from selector.safety import SAFETY_NOTICE

STOCK = ["--in-stock", "mops", "--in-stock", "mops_na", "--in-stock", "tris",
         "--in-stock", "hcl", "--in-stock", "naoh", "--in-stock", "nacl"]   # titrants and salt too


def test_optimise_json_keys(capsys):
    assert main(["optimise", "--ph", "7.2", "--capacity", "15", "--json", *STOCK]) == 0
    data = json.loads(capsys.readouterr().out)
    for key in ("status", "reagents", "cost_per_l", "verified", "binding", "conflicts"):
        assert key in data
    assert data["status"] == "optimal"
    assert abs(data["verified"]["ph"] - 7.2) < 0.005
    assert "ph_by_temperature" in data["verified"] and "capacity_mol_l_per_ph" in data["verified"]


def test_optimise_text_shows_cautions_and_notice(capsys):
    # The mix titrates with concentrated HCl (corrosive): its caution and the notice show.
    assert main(["optimise", "--ph", "7.8", "--capacity", "15", "--in-stock", "tris", "--in-stock", "hcl"]) == 0
    out = capsys.readouterr().out
    assert "hydrochloric acid" in out and "Cautions:" in out and SAFETY_NOTICE in out
    assert "Binding constraints:" in out and "EUR per litre" in out


def test_infeasible_exits_2_with_conflicts_and_no_traceback(capsys):
    code, _, err = run(capsys, "optimise", "--ph", "7.4", "--capacity", "200", "--ionic-strength-max", "0.01",
                       *STOCK)
    assert code == 2
    assert "Traceback" not in err
    assert "capacity: best reachable" in err


def test_bad_option_is_one_line(capsys):
    try:
        main(["optimise", "--ph", "7.4", "--objective", "speed"])
    except SystemExit as stop:
        assert stop.code == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poise: error:")


def test_price_sheet_problems_are_printed(tmp_path, capsys):
    sheet = tmp_path / "prices.csv"
    sheet.write_text("reagent,pack_size,pack_price,currency,supplier\n"
                     "MOPS,100 g,20,EUR,Example Supplies\nunobtainium,1 kg,5,EUR,Nobody\n", encoding="utf-8")
    assert main(["optimise", "--ph", "7.2", "--capacity", "15", "--prices", str(sheet), *STOCK]) == 0
    err = capsys.readouterr().err
    assert "row 3" in err and "unobtainium" in err


def test_rank_json_and_csv(capsys):
    assert main(["rank", "--ph", "7.2", "--capacity", "15", "--json", *STOCK]) == 0
    rows = json.loads(capsys.readouterr().out)
    for key in ("system", "feasible", "reason", "conc_mol_l", "pka_at_use", "cost_per_l", "bound_fraction"):
        assert key in rows[0]
    assert rows[0]["feasible"] and rows[0]["rank"] == 1
    assert main(["rank", "--ph", "7.2", "--capacity", "15", "--csv", *STOCK]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].startswith("rank,system,feasible,conc_mol_l,pka_at_use")
    assert main(["rank", "--ph", "7.2", "--capacity", "15", "--metal", "Ca:0.05", *STOCK]) == 0
    out = capsys.readouterr().out
    assert "Cannot meet the spec or excluded:" in out and "phosphate" in out


def test_choice_names_agree_with_their_registries():
    # The command line lists --objective, --sort and --route choices from plain tuples so that
    # registering a command imports no optimiser; the registries remain the source of truth.
    from selector.cli.choices import OBJECTIVE_NAMES, ROUTE_NAMES, SORT_NAMES
    from selector.optimise import OBJECTIVES
    from selector.rank import SORTS
    from selector.recipe import ROUTES

    assert OBJECTIVE_NAMES == tuple(OBJECTIVES)
    assert SORT_NAMES == SORTS
    assert ROUTE_NAMES == ROUTES


def test_unknown_choice_lists_the_valid_names(capsys):
    code, _, err = run(capsys, "optimise", "--ph", "7.4", "--objective", "speed")
    assert code == 2
    assert "cost" in err and "temperature-drift" in err and "Traceback" not in err
