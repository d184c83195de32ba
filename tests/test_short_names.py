"""Systems by name in text: one short name (``System.short_name``, the catalog name up to " (")
in rank reasons, remedies, recipe titles and pKa′ marks; JSON keeps the ``system_id`` keys."""

from __future__ import annotations

from selector.curves import pka_marks
from selector.rank import rank_systems
from selector.spec import make_spec


def test_short_name_is_the_catalog_name_up_to_the_bracket(shipped_catalog):
    # Catalog names (catalog/data/systems.csv): "Tris (tris(hydroxymethyl)aminomethane)", "HEPES".
    assert shipped_catalog.systems["tris"].short_name == "Tris"
    assert shipped_catalog.systems["hepes"].short_name == "HEPES"
    assert shipped_catalog.systems["edta"].short_name == "EDTA"


def test_pka_marks_are_labelled_by_short_name(shipped_catalog):
    labels = [m.label for m in pka_marks(["tris"], 25.0, 0.0, shipped_catalog)]
    assert len(labels) == 1 and labels[0].startswith("Tris pKa′ ")


def test_rank_reasons_and_remedies_name_systems_by_short_name(shipped_catalog):
    # Case: pH 7.4, 37 °C, 50 mM (the README's ranking): row 2's reason names the leader; a
    # capacity of 60 mM/pH no single system reaches gives each infeasible row a remedy sentence.
    spec = make_spec(ph=7.4, temperature_c=37.0, buffer_conc_mol_l=0.05)
    rows = [r for r in rank_systems(spec, catalog=shipped_catalog) if r.feasible]
    leader = shipped_catalog.systems[rows[0].system_id]
    assert f"of {leader.short_name}," in rows[1].reason
    assert f"ahead of {shipped_catalog.systems[rows[1].system_id].short_name} (" in rows[0].reason
    hard = make_spec(ph=7.4, temperature_c=37.0, buffer_conc_mol_l=0.05, capacity_mol_l_per_ph=0.06)
    remedied = [r for r in rank_systems(hard, catalog=shipped_catalog, only="phosphate") if r.remedy is not None]
    assert remedied and "then Phosphate meets the spec" in remedied[0].remedy.text
    assert remedied[0].system_id == "phosphate"   # the id stays the key

