"""``ion_size.csv``: per-species parameters of the ion-size (Truesdell–Jones) activity model.

One row per aqueous species: the ion-size parameter å [Å] and the ionic-strength coefficient
b [kg/mol] of log10 γ = −A z² √I/(1 + B å √I) + b I, as a database carries them (the
``-gamma a b`` lines of PHREEQC's phreeqc.dat; the file line in ``reference``).  ``species``
names an engine species the way ``solids.csv`` does: an ion of ``ions.csv`` (``Na``), ``H``,
``OH``, a buffer species by its charge (``phosphate(-2)`` is HPO4²⁻), or a ``complex_id`` of
``complexes.csv`` (``NaHPO4-``).  ``charge`` must be that species' charge.  An uncharged
species has å = 0 and its own b (log10 γ = b I).  A charged species without a row takes the
Davies equation, an uncharged one b = 0.1 (see :mod:`selector.chemistry.activity`).
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping

from catalog.records import Complex, Ion, IonSize, Source, System
from catalog.rows import Row

TABLE = "ion_size.csv"
COLUMNS = ("species", "formula", "charge", "ion_size_angstrom", "b_kg_mol", "source", "source_kind",
           "reference", "note")

_SPECIES = re.compile(r"^([a-z0-9_]+)\((-?\d+)\)$")


def _known_charge(token: str, ions: Mapping[str, Ion], systems: Mapping[str, System],
                  complexes: Iterable[Complex]) -> int | None:
    """The charge of the engine species ``token`` names, or None for a name no table knows."""
    if token in ("H", "OH"):
        return 1 if token == "H" else -1
    species = _SPECIES.match(token)
    if species:
        system = systems.get(species.group(1))
        charges = set() if system is None else {system.species_charge(j) for j in range(system.n_steps + 1)}
        return int(species.group(2)) if int(species.group(2)) in charges else None
    if token in ions:
        return ions[token].charge
    for c in complexes:
        if c.complex_id == token and c.metal in ions:
            ligand = systems.get(c.system_id)
            ligand_charge = 0 if ligand is None else ligand.species_charge(ligand.n_steps)
            return c.metal_count * ions[c.metal].charge + c.ligand_count * ligand_charge + c.protons
    return None


def ion_sizes_from_rows(rows: Iterable[Row], ions: Mapping[str, Ion], systems: Mapping[str, System],
                        complexes: Iterable[Complex], sources: Mapping[str, Source]) -> dict[str, IonSize]:
    """Ion-size parameters by species token, each species known to the catalog with its charge."""
    complexes = tuple(complexes)
    sizes: dict[str, IonSize] = {}
    for row in rows:
        token = row.text("species", required=True)
        row.unique("species", token, sizes, "species")
        charge = row.integer("charge")
        known = _known_charge(token, ions, systems, complexes) if token else None
        # A complex's row may outlive its complex in a trimmed catalog (unused then); every
        # shipped row names a species of the shipped catalog (tests/test_ion_size_activity.py).
        unused_complex = not _SPECIES.match(token) and token not in ions and token not in ("H", "OH")
        if token and known is None and not unused_complex:
            row.problem("species", f"expected H, OH, an ion of ions.csv, SYSTEM(CHARGE) or a complex_id, got {token!r}")
        elif charge is not None and known is not None and charge != known:
            row.problem("charge", f"expected {known} (the charge of {token}), got {charge}")
        size = row.sourced("ion_size_angstrom", "source", "source_kind", sources, minimum=0.0, maximum=15.0)
        if charge and size is not None and size.value <= 0:
            row.problem("ion_size_angstrom", f"expected a positive ion size for a charged species, got {size.value:g}")
        b = row.number("b_kg_mol", minimum=-1.0, maximum=1.0)
        if token and size is not None and b is not None and charge is not None:
            sizes[token] = IonSize(token, row.text("formula", required=True), charge, size, b,
                                   row.text("reference", required=True), row.text("note"))
    return sizes
