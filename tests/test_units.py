"""The unit parser at the edge (selector.units): molar symbols case-sensitive, molal refused.

Symbols: IUPAC Green Book, 3rd ed. (2007), §2.10 and §3 — M = mol/L (mol dm⁻³); molality
b in mol/kg, for which a lower-case "m" is still widely written.  Conversion factors are
the SI prefixes (exact).
"""

import pytest

from selector.errors import InputError
from selector.units import parse_amount, parse_ionic_strength, parse_mass, parse_volume


@pytest.mark.parametrize("text, mol_l", [
    ("0.1M", 0.1), ("25mM", 0.025), ("25 mM", 0.025), ("10uM", 1e-5), ("10µM", 1e-5),
    ("50nM", 5e-8), ("0.2 mol/L", 0.2), ("3 mmol/L", 0.003),
])
def test_molar_units_exact_si_prefixes(text, mol_l):
    assert parse_amount(text) == pytest.approx(mol_l, rel=1e-15)


@pytest.mark.parametrize("text", ["0.1m", "50mm", "10um", "50nm", "2 m"])
def test_lower_case_m_is_molal_and_refused_with_the_molar_spelling(text):
    with pytest.raises(InputError, match="molal"):
        parse_amount(text)


def test_molal_refusal_names_the_molar_spelling():
    with pytest.raises(InputError, match=r"write mM \(e.g. 50mM\)"):
        parse_amount("50mm", what="--conc")


def test_mass_concentration_needs_molar_mass():
    # NaCl 58.44 g/mol (IUPAC 2013 standard atomic weights: Na 22.990, Cl 35.45): 5.844 g/L = 0.1 mol/L.
    assert parse_amount("5.844 g/L", molar_mass_g_mol=58.44) == pytest.approx(0.1, rel=1e-12)
    with pytest.raises(InputError, match="molar mass"):
        parse_amount("5 g/L")


@pytest.mark.parametrize("text, mol_l", [("0.15", 0.15), ("150mM", 0.15), ("0", 0.0)])
def test_ionic_strength_bare_number_is_mol_per_litre(text, mol_l):
    assert parse_ionic_strength(text) == pytest.approx(mol_l, rel=1e-15)


@pytest.mark.parametrize("text, message", [
    ("0.15m", "molal"), ("5 g/L", "cannot read"), ("-1", "negative"), ("nan", "finite"), ("abc", "cannot read"),
])
def test_ionic_strength_bad_input(text, message):
    with pytest.raises(InputError, match=message):
        parse_ionic_strength(text, what="--ionic-strength")


def test_volume_and_mass():
    assert parse_volume("500 mL") == pytest.approx(0.5, rel=1e-15)
    assert parse_volume("250uL") == pytest.approx(2.5e-4, rel=1e-15)
    assert parse_mass("1kg") == pytest.approx(1000.0, rel=1e-15)
    with pytest.raises(InputError, match="zero"):
        parse_volume("0 L")
    with pytest.raises(InputError, match="density"):
        parse_mass("1 L")


def test_range_parser_reads_ph_grids_and_concentration_ranges():
    # Case: the FROM:TO[:STEP] form shared by `--conc 20mM:100mM`, `--ph 6.0:8.0:0.5` (common practice).
    from selector.units import parse_amount, parse_range, range_grid
    assert parse_range("6.0:8.0:0.5", float, "pH range", step="required") == (6.0, 8.0, 0.5)
    low, high, step = parse_range("20mM:100mM", parse_amount, "concentration")
    assert (low, high, step) == (0.02, 0.1, None)
    assert parse_range("50mM", parse_amount, "concentration") == (0.05, 0.05, None)
    assert list(range_grid(6.0, 8.0, 0.5)) == [6.0, 6.5, 7.0, 7.5, 8.0]
    assert list(range_grid(6.0, 7.9, 0.5)) == [6.0, 6.5, 7.0, 7.5]
    for bad, kind in (("8:6:0.5", "required"), ("6:8", "required"), ("6:8:0", "required"),
                      ("6:x:1", "required"), ("1:2:3", "forbidden"), ("6:nan:1", "required")):
        with pytest.raises(InputError):
            parse_range(bad, float, "pH range", step=kind)


def test_capacity_takes_a_bare_number_in_mm_per_ph_or_a_unit(capsys):
    # Case: one unit convention across options (common practice: β is quoted in mM per pH).
    from selector.units import parse_capacity
    from tests.cli_helpers import run
    assert parse_capacity("10") == parse_capacity("10mM/pH") == parse_capacity("0.01 M/pH") == 0.01
    code, _, err = run(capsys, "rank", "--ph", "7.4", "--capacity", "10mM")
    assert code == 2 and "--capacity" in err and "10mM/pH" in err and "Traceback" not in err
