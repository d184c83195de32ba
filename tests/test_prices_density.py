"""Densities of liquid reagents: one catalog column, read by recipes and price sheets alike.

Check values: Perry's Chemical Engineers' Handbook, 8th ed. (Green & Perry 2008), Table 2-32,
DIPPR equation 105 coefficients as carried in the package ``chemicals`` 1.5.2 (file
``Density/Perry Parameters 105.tsv``), evaluated here at 20 °C; the other densities of the
catalog are recalled (``from-memory``) and only their provenance is checked.  Supplier, pack
and price are invented.
"""

from __future__ import annotations

import pytest

from catalog import CatalogError, load_catalog, read_catalog
from selector.prices import demo_price_book, parse_price_bytes
from selector.recipe.bench import bench_line
from tests.test_catalog_loader import edit

CATALOG = load_catalog()
OFFER_HEADER = "supplier,reagent,pack_size,pack_price,currency,grade,catalog_number,lead_time_days\n"


def dippr_105_g_ml(c1_mol_m3: float, c2: float, c3_k: float, c4: float, molar_mass_g_mol: float,
                   temperature_k: float) -> float:
    """ρ = C1 / C2^(1 + (1 − T/C3)^C4) [mol/m³] × M, in g/mL (Perry's 8th ed., Table 2-32)."""
    return c1_mol_m3 / c2 ** (1.0 + (1.0 - temperature_k / c3_k) ** c4) * molar_mass_g_mol / 1e6


@pytest.mark.parametrize("reagent_id, coefficients, molar_mass_g_mol", [
    # Perry Table 2-32 (via chemicals 1.5.2): acetic acid C1 1448.6 mol/m³, C2 0.25892, C3 591.95 K,
    # C4 0.2529 (valid 289.81-591.95 K); formic acid 1938, 0.24225, 588 K, 0.24435 (281.45-588 K).
    ("acetic_acid", (1448.6, 0.25892, 591.95, 0.2529), 60.05196),
    ("formic_acid", (1938.0, 0.24225, 588.0, 0.24435), 46.02538),
])
def test_handbook_densities_are_the_equation_at_20c(reagent_id, coefficients, molar_mass_g_mol):
    # The catalog keeps 4 decimals: 1.0471 (acetic, equation 1.047058), 1.2197 (formic, 1.219709).
    expected = dippr_105_g_ml(*coefficients, molar_mass_g_mol, 293.15)
    density = CATALOG.reagents[reagent_id].density_g_ml
    assert density is not None and density.source == "perry8e-105"
    assert density.value == pytest.approx(expected, abs=5e-5)


def test_every_liquid_density_names_its_provenance():
    # Recalled values say so (from-memory); read ones carry a key of sources.csv.
    liquids = {r.reagent_id: r.density_g_ml for r in CATALOG.reagents.values() if r.physical_form == "liquid"}
    assert {k for k, d in liquids.items() if d is None} == {"lactic_acid"}
    for density in (d for d in liquids.values() if d is not None):
        assert density.source_kind == "from-memory" or density.source in CATALOG.sources
    assert all(r.density_g_ml is None for r in CATALOG.reagents.values() if r.physical_form == "solid")


def test_recipe_and_price_sheet_read_the_same_density():
    # 1 L of glacial acetic acid sold by volume = 1047.1 g (catalog density); the bench line of
    # 1 mol/L in 1 L measures 60.0521/0.998 g over the same density.
    book, report = parse_price_bytes((OFFER_HEADER + "Alder Reagents,acetic acid,1 L,10,EUR,,,\n").encode(),
                                     "acid.csv")
    assert not report.problems
    assert book.offers[0].pack_g == pytest.approx(1047.1, rel=1e-12)
    line = bench_line("acetic_acid", "buffer form", 1.0, 1.0, CATALOG, demo_price_book(CATALOG))
    assert line.millilitres == pytest.approx(60.0521 / 0.998 / 1.0471, rel=1e-12)


def test_a_solid_with_a_density_is_refused(catalog_copy):
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "nacl"},
                {"density_g_ml": "2.16", "density_source_kind": "from-memory"})
    with pytest.raises(CatalogError, match=rf"reagents.csv:{line}: density_g_ml: expected an empty cell for a solid"):
        read_catalog(catalog_copy)


def test_a_density_without_provenance_is_refused(catalog_copy):
    line = edit(catalog_copy, "reagents.csv", {"reagent_id": "lactic_acid"}, {"density_g_ml": "1.2"})
    with pytest.raises(CatalogError, match=rf"reagents.csv:{line}: density_source_kind: expected a source kind"):
        read_catalog(catalog_copy)
