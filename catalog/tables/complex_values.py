"""``complex_values.csv``: other published values of a complex's log β and ΔH.

``complexes.csv`` holds one value per complex (the first listed); this table holds the others,
one row each, with source, kind and the file line.  Like every constant of the catalog, the
value used is the one marked ``chosen = yes`` (a deliberate choice, with ``why``), else the
best-ranked by source kind (:func:`catalog.selection.policy_rank`), the ``complexes.csv`` row
first among equals.  A value marked ``chosen = rejected`` (the reason in ``why``) is judged wrong,
as a step value so marked: listed, never used, and left out of the spread that
``complexes.csv``'s ``uncertainty`` carries (tests/test_catalog_nist46.py rebuilds it).  log β is on the same reference species as ``complexes.csv`` (the fully
deprotonated ligand, 25 °C, I = 0); a database that writes the reaction on another species is
converted with the catalog's selected step constants (said in ``note``).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import replace

from catalog.records import Complex, ComplexValue, Source
from catalog.rows import Row
from catalog.selection import policy_rank

TABLE = "complex_values.csv"
COLUMNS = ("complex_id", "log_beta", "dh_kj_mol", "source", "source_kind", "reference", "chosen", "why", "note")


def complex_values_from_rows(rows: Iterable[Row], complexes: Iterable[Complex],
                             sources: Mapping[str, Source]) -> tuple[ComplexValue, ...]:
    """Every other value of a complex of ``complexes.csv``; a chosen value states why."""
    known = {c.complex_id for c in complexes}
    values: list[ComplexValue] = []
    for row in rows:
        complex_id = row.text("complex_id", required=True)
        row.reference("complex_id", complex_id, known, "a complex_id of complexes.csv")
        log_beta = row.sourced("log_beta", "source", "source_kind", sources, minimum=-80.0, maximum=60.0)
        dh = row.number("dh_kj_mol", required=False, minimum=-500.0, maximum=500.0)
        mark = row.choice("chosen", ("true", "false", "rejected"))
        chosen, rejected = mark == "true", mark == "rejected"
        why = row.text("why")
        if chosen and not why:
            row.problem("why", "expected the reason for choosing this value, got an empty cell")
        if rejected and not why:
            row.problem("why", "expected the reason a value marked rejected is judged wrong, got an empty cell")
        if chosen and any(v.chosen and v.complex_id == complex_id for v in values):
            row.problem("chosen", f"expected at most one chosen value of {complex_id}, got a second")
        if complex_id in known and log_beta is not None:
            values.append(ComplexValue(complex_id, log_beta, dh, row.text("reference", required=True), chosen, why,
                                       row.text("note"), rejected))
    return tuple(values)


def select_complex_values(complexes: Iterable[Complex], values: Iterable[ComplexValue]) -> list[Complex]:
    """The complexes with the value the policy selects: a chosen one, else the best-ranked kind
    (the ``complexes.csv`` row first among equals)."""
    by_id: dict[str, list[ComplexValue]] = {}
    for value in values:
        by_id.setdefault(value.complex_id, []).append(value)
    selected = []
    for c in complexes:
        others = [v for v in by_id.get(c.complex_id, []) if not v.rejected]
        chosen = [v for v in others if v.chosen]
        best = min(others, key=lambda v: policy_rank(v.log_beta.source_kind), default=None)
        if chosen:
            pick = chosen[0]
        elif best is not None and policy_rank(best.log_beta.source_kind) < policy_rank(c.log_beta.source_kind):
            pick = best
        else:
            pick = None
        selected.append(c if pick is None else replace(c, log_beta=pick.log_beta, dh_kj_mol=pick.dh_kj_mol,
                                                       uncertainty=None, note=f"{pick.reference}; {pick.note}"))
    return selected
