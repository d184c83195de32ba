"""The ion-size (Truesdell–Jones) activity model and its catalog tables.

Checks, like a lab notebook:

* every row of ``catalog/data/ion_size.csv`` is the ``-gamma a b`` line of phreeqc.dat it cites
  (the file as the package ``phreeqc`` ships it, dated 22/05/2024; the last ``-gamma`` line of a
  species counts, as PHREEQC reads it), and names a species of the catalog with its charge;
* every row of ``catalog/data/complex_values.csv`` is the ``-log_k`` (and ``-delta_h``) of the
  file's reaction it cites, moved to the catalog's reference species with the selected step
  constants its note names;
* single-ion γ at I = 0.1 mol/kg NaCl against PHREEQC 3 (IPhreeqc of the package ``phreeqc``)
  with phreeqc.dat: Na⁺ 0.78510, Cl⁻ 0.76662, NH3 1.02329, H⁺ 0.82536 at 25 °C (and 10, 37 °C),
  tolerance 0.001 (PHREEQC's own Debye–Hückel A differs from the engine's in the 4th digit).
  The Truesdell & Jones 1974 paper itself was not read: PHREEQC with the cited file is the
  reference;
* the model function is vectorised (scalar and batch of I; species without parameters take
  Davies, uncharged species b I), selectable where a solution is solved, refused with one line
  where only a unit-charge model can serve (the catalog's apparent-pKa view);
* past I = 0.5 mol/L a solution under the new model carries the ionic-strength warning.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

from catalog import load_catalog, read_catalog
from selector.chemistry.activity import (
    ACTIVITY_MODEL_NAMES,
    DAVIES_MAX_IONIC_STRENGTH_MOL_L,
    TRUESDELL_JONES_MAX_IONIC_STRENGTH_MOL_L,
    debye_huckel_b,
    log_gamma_species,
    log_gamma_truesdell_jones,
    log_gamma_unit_davies,
)
from selector.chemistry.equilibrium import solve_equilibrium
from selector.cli.choices import ACTIVITY_NAMES
from selector.errors import InputError
from tests.phreeqc_db import read_gamma_parameters
from tests.test_catalog_loader import edit

phreeqc = pytest.importorskip("phreeqc")

DATABASE = Path(phreeqc.__file__).parent / "databases" / "phreeqc.dat"
CATALOG = load_catalog()


def test_ion_size_rows_are_the_gamma_lines_of_phreeqc_dat():
    found = read_gamma_parameters(DATABASE)
    assert len(CATALOG.ion_sizes) == 34
    for token, row in CATALOG.ion_sizes.items():
        size, b, line = found[row.formula]
        assert (row.ion_size_angstrom.value, row.b_kg_mol) == (size, b), token
        assert row.reference == f"phreeqc.dat:{line}", token
        assert row.ion_size_angstrom.source == "phreeqc_dat"


def test_every_ion_size_row_names_a_species_of_the_catalog_with_its_charge():
    complex_ids = {c.complex_id for c in CATALOG.complexes}
    for token, row in CATALOG.ion_sizes.items():
        species = re.match(r"^([a-z0-9_]+)\((-?\d+)\)$", token)
        if species:
            system = CATALOG.systems[species.group(1)]
            assert row.charge in {system.species_charge(j) for j in range(system.n_steps + 1)}, token
        else:
            assert token in {"H", "OH"} | set(CATALOG.ions) | complex_ids, token


def test_a_wrong_charge_and_an_unknown_species_are_reported(catalog_copy):
    edit(catalog_copy, "ion_size.csv", {"species": "Na"}, {"charge": "2"})
    edit(catalog_copy, "ion_size.csv", {"species": "K"}, {"species": "phosphate(-7)"})
    with pytest.raises(Exception) as raised:
        read_catalog(catalog_copy)
    message = str(raised.value)
    assert "ion_size.csv:4: charge: expected 1 (the charge of Na), got 2" in message
    assert "ion_size.csv:5: species: expected H, OH, an ion of ions.csv, SYSTEM(CHARGE)" in message


def _reaction_lines(reference: str) -> str:
    first, last = (int(n) for n in re.search(r"phreeqc\.dat:(\d+)-(\d+)", reference).groups())
    return "\n".join(DATABASE.read_text(encoding="latin-1").splitlines()[first - 1:last])


def test_other_pair_values_are_the_file_s_moved_to_the_catalog_reference_species():
    # NaHPO4⁻: Na⁺ + HPO4²⁻, log_k 0.29 (phreeqc.dat:467) + selected pKa3 12.375 = 12.665;
    # NaHCO3: Na⁺ + HCO3⁻, log_k -0.06, delta_h 21 kJ + pKa2 10.329, ΔH° 14.6 (phreeqc.dat:454).
    # (The rows marked rejected, other databases' outliers, are checked in tests/test_catalog_nist46.py.)
    pairs = [v for v in CATALOG.complex_values if not v.rejected]
    assert len(pairs) == 5
    by_id = {c.complex_id: c for c in CATALOG.complexes}
    for value in pairs:
        text = _reaction_lines(value.reference)
        log_k = float(re.search(r"-log_k\s+(-?[0-9.]+)", text).group(1))
        system = CATALOG.systems[by_id[value.complex_id].system_id]
        protons = by_id[value.complex_id].protons
        basis = system.steps[-1].pka_25c.value if protons else 0.0
        assert value.log_beta.value == pytest.approx(log_k + basis, abs=1e-9), value.complex_id
        enthalpy = re.search(r"-delta_h\s+(-?[0-9.]+)\s*kJ", text)
        if enthalpy:
            basis_h = -system.steps[-1].dh_kj_mol.value if protons else 0.0
            assert value.dh_kj_mol == pytest.approx(float(enthalpy.group(1)) + basis_h, abs=1e-9)
        assert value.log_beta.source == "phreeqc_dat" and not value.chosen
        # The selection policy keeps the critically evaluated NIST SRD 46 value in use.
        assert by_id[value.complex_id].log_beta.source == "minteq4"


# Single-ion γ at I = 0.1 mol/kg NaCl (+1e-6 NH3), PHREEQC 3 (IPhreeqc, package phreeqc) with
# phreeqc.dat, γ = 10^la / m from SELECTED_OUTPUT; I = 0.1000006-0.1000007.
PHREEQC_GAMMA_0_1 = {
    25.0: {"Na": 0.785099, "Cl": 0.766618, "ammonia(0)": 1.023293, "H": 0.825362},
    10.0: {"Na": 0.789569, "Cl": 0.771166, "ammonia(0)": 1.023293, "H": 0.828611},
    37.0: {"Na": 0.781016, "Cl": 0.762467, "ammonia(0)": 1.023293, "H": 0.822379},
}


@pytest.mark.parametrize("temperature_c", sorted(PHREEQC_GAMMA_0_1))
def test_single_ion_gammas_at_0_1_agree_with_phreeqc(temperature_c):
    expected = PHREEQC_GAMMA_0_1[temperature_c]
    tokens = list(expected)
    charges = [CATALOG.ion_sizes[t].charge if t in CATALOG.ion_sizes else 0 for t in tokens]
    gamma = 10.0 ** log_gamma_species(tokens, charges, 0.1, temperature_c, CATALOG.ion_sizes)
    assert gamma == pytest.approx([expected[t] for t in tokens], abs=1e-3)


def test_debye_huckel_b_at_25_c():
    # 0.3286 Å⁻¹ kg^½ mol^-½ at 25 °C (Robinson & Stokes' tables, from memory); computed from the
    # Debye length with the engine's water density and permittivity: 0.32865.
    assert float(debye_huckel_b(25.0)) == pytest.approx(0.3286, abs=2e-4)
    assert debye_huckel_b(np.array([0.0, 25.0, 50.0])).shape == (3,)


def test_model_function_is_vectorised_with_davies_and_uncharged_fallbacks():
    charge = np.array([1.0, -2.0, 0.0, 0.0])
    size = np.array([4.08, np.nan, np.nan, 0.0])
    b = np.array([0.082, np.nan, np.nan, 0.2])
    one = log_gamma_truesdell_jones(charge, 0.1, 0.5108, 0.3286, size, b)
    batch = log_gamma_truesdell_jones(charge, np.array([0.1, 0.3]), np.array([0.5108, 0.5108]),
                                      np.array([0.3286, 0.3286]), size, b)
    assert one.shape == (4,) and batch.shape == (2, 4)
    assert batch[0] == pytest.approx(one, abs=1e-15)
    assert one[1] == pytest.approx(4.0 * float(log_gamma_unit_davies(0.1, 0.5108)), abs=1e-15)
    assert one[2] == pytest.approx(0.1 * 0.1) and one[3] == pytest.approx(0.2 * 0.1)


def test_model_is_selectable_and_the_default_is_unchanged():
    assert ACTIVITY_NAMES == ACTIVITY_MODEL_NAMES
    ids, amounts = ["kh2po4", "na2hpo4", "nacl"], [0.025, 0.025, 0.2]
    default = solve_equilibrium(ids, amounts, 25.0).ph[0]
    assert default == solve_equilibrium(ids, amounts, 25.0, activity="davies").ph[0]
    sized = solve_equilibrium(ids, amounts, 25.0, activity="truesdell-jones")
    assert abs(sized.ph[0] - default) > 0.01
    # Each species its own γ in the report: HPO4²⁻ (å 5.0) is not H2PO4⁻ (å 5.4) squared-charge scaled.
    gamma = dict(zip(sized.species_ids, sized.species_gamma[0]))
    assert gamma["Na+"] != pytest.approx(gamma["K+"], abs=1e-3)
    with pytest.raises(InputError, match="unknown activity model 'pitzer'.*truesdell-jones"):
        solve_equilibrium(ids, amounts, 25.0, activity="pitzer")


def test_unit_charge_views_refuse_the_model_in_one_line():
    from selector.catalog_view.table import system_table

    with pytest.raises(InputError, match="needs each species' ion size") as raised:
        system_table(25.0, 0.1, activity="truesdell-jones")
    assert "\n" not in str(raised.value)


def test_past_half_molar_the_solution_carries_the_ionic_strength_warning():
    assert TRUESDELL_JONES_MAX_IONIC_STRENGTH_MOL_L == DAVIES_MAX_IONIC_STRENGTH_MOL_L == 0.5  # one warning serves both
    eq = solve_equilibrium(["kh2po4", "na2hpo4", "nacl"], [[0.02, 0.02, 0.3], [0.02, 0.02, 0.6]], 25.0,
                           activity="truesdell-jones", ion_pairs=True)
    assert list(eq.ionic_strength_high) == [False, True]


def test_complex_values_rules_are_checked(catalog_copy):
    edit(catalog_copy, "complex_values.csv", {"complex_id": "NaHPO4-"}, {"chosen": "true"})
    edit(catalog_copy, "complex_values.csv", {"complex_id": "KHPO4-"}, {"complex_id": "KH2PO4"})
    with pytest.raises(Exception) as raised:
        read_catalog(catalog_copy)
    message = str(raised.value)
    assert "complex_values.csv:2: why: expected the reason for choosing this value" in message
    assert "complex_values.csv:3: complex_id: expected a complex_id of complexes.csv, got 'KH2PO4'" in message


def test_a_chosen_other_value_replaces_the_complex_constant(catalog_copy):
    edit(catalog_copy, "complex_values.csv", {"complex_id": "NaHPO4-"},
         {"chosen": "true", "why": "test: the database's own constant"})
    chosen = {c.complex_id: c for c in read_catalog(catalog_copy).complexes}["NaHPO4-"]
    assert (chosen.log_beta.value, chosen.log_beta.source) == (12.665, "phreeqc_dat")


# The seven IUPAC primary standards (catalog/data/ph_standards.csv, Bates–Guggenheim scale) under
# the ion-size model without pairs, 0-50 °C: worst |pH - pH(PS)| measured, each held here as a
# ceiling 0.002 above it (the model is not declared on the standards' scale; see DEVELOPERS.md).
STANDARD_CEILINGS = {
    "phthalate": 0.011,        # measured +0.0086 at 50 °C
    "phosphate_1_1": 0.022,    # +0.0194 at 50 °C
    "phosphate_1_3_5": 0.032,  # +0.0292 at 50 °C
    "borax": 0.015,            # -0.0124 at 0 °C
    "carbonate": 0.015,        # +0.0127 at 50 °C
    "tartrate": 0.029,         # -0.0265 at 50 °C (from-memory table)
    "citrate": 0.013,          # -0.0107 at 20 °C
}


@pytest.mark.parametrize("standard_id", sorted(STANDARD_CEILINGS))
def test_primary_standards_under_the_ion_size_model(standard_id):
    from selector.chemistry.equilibrium import molal_to_molar
    from selector.names import resolve_reagent

    standard = CATALOG.ph_standards[standard_id]
    ids = [resolve_reagent(name, CATALOG) for name, _ in standard.components_mol_kg]
    temperature = np.array([t for t, _ in standard.values])
    molal = np.array([m for _, m in standard.components_mol_kg])
    amounts = molal[None, :] * molal_to_molar(1.0, temperature)[:, None]
    ph = solve_equilibrium(ids, amounts, temperature, activity="truesdell-jones").ph
    published = np.array([v.value for _, v in standard.values])
    assert np.max(np.abs(ph - published)) <= STANDARD_CEILINGS[standard_id]
