"""Names of catalog records: the folding rule and the name indexes built at load.

A reagent or system is found by its id, its name, any alias and (for reagents) its
formula where that is unique; lookups fold case, spaces, hyphens and hydrate dots with
:func:`normalize_name`.  A folded name that points at two records is a catalog problem.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping

from catalog.problems import ProblemLog
from catalog.records import Reagent, System

HYDRATE_DOTS = ("·", "•", "∙", "*")


def normalize_name(name: str) -> str:
    """Fold a user-typed name for lookup: case, spaces, hyphens and hydrate dots.

    ``"Na2HPO4 · 7H2O"``, ``"na2hpo4.7h2o"`` and ``"NA2HPO4*7H2O"`` all fold to the
    same key; ``"Tris-HCl"`` and ``"tris hcl"`` too.

    Examples
    --------
    >>> normalize_name("Na2HPO4 · 7H2O") == normalize_name("na2hpo4.7h2o")
    True
    """
    folded = name.casefold().strip()
    for dot in HYDRATE_DOTS:
        folded = folded.replace(dot, ".")
    return re.sub(r"[\s\-_,]+", "", folded)


def index_names(records: Iterable[tuple[str, tuple[str, ...], int]], table: str, column: str,
                problems: ProblemLog) -> dict[str, str]:
    """Name index ``folded name -> record id``; a name of two records is a problem.

    Parameters
    ----------
    records : iterable of (record_id, names, line)
        Each record's id, every name it answers to, and its line in ``table``.
    table, column : str
        Where a collision is reported (the later record's line).
    problems : ProblemLog
        Receives one problem per colliding name.
    """
    index: dict[str, str] = {}
    for record_id, names, line in records:
        for name in names:
            key = normalize_name(name)
            if not key:
                continue
            other = index.get(key)
            if other is not None and other != record_id:
                problems.add(table, line, column,
                             f"expected names unique across the table, got {name!r} which also names {other!r}")
            else:
                index[key] = record_id
    return index


def reagent_name_index(reagents: Mapping[str, Reagent], lines: Mapping[str, int],
                       problems: ProblemLog) -> dict[str, str]:
    """Folded reagent id, name, aliases and unique formulas -> reagent id.

    A formula names its reagent too, unless two reagents share it (isomers such as TAPS
    and DIPSO, C7H17NO6S) or it is already somebody's name.
    """
    index = index_names(((r.reagent_id, (r.reagent_id, r.name, *r.aliases), lines[r.reagent_id])
                         for r in reagents.values()), "reagents.csv", "aliases", problems)
    formula_owners: dict[str, list[str]] = {}
    for reagent in reagents.values():
        formula_owners.setdefault(normalize_name(reagent.formula), []).append(reagent.reagent_id)
    for key, owners in formula_owners.items():
        if len(owners) == 1 and key not in index:
            index[key] = owners[0]
    return index


def system_name_index(systems: Mapping[str, System], lines: Mapping[str, int],
                      problems: ProblemLog) -> dict[str, str]:
    """Folded system id, name and aliases -> system id."""
    return index_names(((s.system_id, (s.system_id, s.name, *s.aliases), lines[s.system_id])
                        for s in systems.values()), "systems.csv", "aliases", problems)
