"""The catalog's chosen step constants against NIST SRD 46, as carried in minteq.v4.dat.

Case: every catalog step whose acid and base species minteq.v4.dat defines from entries
tagged ``log K source: NIST46.x`` (and, for ΔH°, ``Delta H source: NIST46.x``).
Reference: minteq.v4.dat as shipped by the ``phreeqc`` package (the catalog's source
``minteq4``; NIST Standard Reference Database 46, Critically Selected Stability Constants
of Metal Complexes, A. E. Martell, R. M. Smith, R. J. Motekaitis).  Each species' reaction
is combined into the stepwise dissociation acid = base + H⁺:
pKa = log K_f(acid) − log K_f(base), ΔH° = ΔH_f(base) − ΔH_f(acid) (formation from the
file's master species).  A ``delta_h`` of exactly 0 in this file often means "no value"
(the research notes count 850 of 1827), so a ΔH° built from a zero is not compared.
Tolerance: 0.03 in pKa, 2.5 kJ/mol in ΔH° (the project's acceptance limits for a
critically selected constant); a larger difference passes only if the chosen value is a
deliberate choice whose ``why`` the catalog row states.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest
from phreeqc_db import read_solution_species

from catalog import load_catalog
from selector.chemistry.water import GAS_CONSTANT_J_MOL_K

phreeqc = pytest.importorskip("phreeqc", reason="the phreeqc package (test extra) ships minteq.v4.dat")

MINTEQ = Path(phreeqc.__file__).parent / "databases" / "minteq.v4.dat"
PKA_TOLERANCE = 0.03
DH_TOLERANCE_KJ_MOL = 2.5

#: minteq.v4.dat species of each catalog system, most protonated first (species j = index).
SPECIES = {
    "phosphate": ("H3PO4", "H2PO4-", "HPO4-2", "PO4-3"),
    "phthalate": ("H2(Phthalate)", "H(Phthalate)-", "Phthalate-2"),
    "borate": ("H3BO3", "H2BO3-"),
    "carbonate": ("H2CO3", "HCO3-", "CO3-2"),
    "citrate": ("H3(Citrate)", "H2(Citrate)-", "H(Citrate)-2", "Citrate-3"),
    "acetate": ("H(Acetate)", "Acetate-"),
    "ammonia": ("NH4+", "NH3"),
    "sulfate": ("HSO4-", "SO4-2"),
    "fluoride": ("HF", "F-"),
    "cyanide": ("HCyanide", "Cyanide-"),
    "formate": ("H(Formate)", "Formate-"),
    "tartrate": ("H2(Tartarate)", "H(Tartarate)-", "Tartarate-2"),
    "glycine": ("H2(Glycine)+", "H(Glycine)", "Glycine-"),
}


@dataclass
class Species:
    """A species built from the file's master species: composition, log K_f, ΔH_f [kJ/mol] and the
    reactions (by defined species, with their multiplicity) that build it."""

    composition: dict[str, float]
    log_k: float
    dh_kj_mol: float
    reactions: dict[str, float]


def build_species(name: str, entries: dict[str, dict], cache: dict[str, Species]) -> Species:
    """The species ``name`` in terms of master species (recursively through the reactions that define it)."""
    if name in cache:
        return cache[name]
    entry = entries[name]
    if entry["lhs"] == [(1.0, name)]:  # a master species: "X = X"
        species = Species({name: 1.0}, 0.0, 0.0, {})
    else:
        composition: dict[str, float] = {}
        reactions = {name: 1.0}
        log_k, dh = entry["log_k"], entry["delta_h"] or 0.0
        parts = [(c, s) for c, s in entry["lhs"]] + [(-c, s) for c, s in entry["rhs"][1:]]
        for coefficient, other in parts:
            built = build_species(other, entries, cache)
            for master, n in built.composition.items():
                composition[master] = composition.get(master, 0.0) + coefficient * n
            for reaction, n in built.reactions.items():
                reactions[reaction] = reactions.get(reaction, 0.0) + coefficient * n
            log_k += coefficient * built.log_k
            dh += coefficient * built.dh_kj_mol
        species = Species(composition, log_k, dh, reactions)
    cache[name] = species
    return species


def nist46_steps() -> list[tuple[str, int, float, float | None]]:
    """(system id, step, pKa, ΔH° or None) of every catalog step covered by NIST46 entries of minteq.v4.dat."""
    entries = read_solution_species(MINTEQ)
    cache: dict[str, Species] = {}
    steps = []
    for system_id, names in SPECIES.items():
        for j in range(1, len(names)):
            acid, base = build_species(names[j - 1], entries, cache), build_species(names[j], entries, cache)
            difference = {m: acid.composition.get(m, 0.0) - base.composition.get(m, 0.0)
                          for m in set(acid.composition) | set(base.composition) if m != "H2O"}
            assert {m: n for m, n in difference.items() if n} == {"H+": 1.0}, (system_id, j, difference)
            # Only the reactions that do not cancel between acid and base carry the step.
            used = [r for r in set(acid.reactions) | set(base.reactions)
                    if acid.reactions.get(r, 0.0) != base.reactions.get(r, 0.0)]
            if not all(entries[r]["tags"].get("log K source", "").startswith("NIST46") for r in used):
                continue
            dh_known = all(entries[r]["tags"].get("Delta H source", "").startswith("NIST46")
                           and entries[r]["delta_h"] for r in used)
            steps.append((system_id, j, acid.log_k - base.log_k,
                          base.dh_kj_mol - acid.dh_kj_mol if dh_known else None))
    return steps


STEPS = nist46_steps()


def test_the_file_covers_the_steps_the_research_found():
    # 21 steps of 13 systems (research notes, db_steps.csv: every minteq.v4.dat row is NIST46-tagged).
    assert len(STEPS) == 21
    phosphate_1 = next(s for s in STEPS if s[:2] == ("phosphate", 1))
    # minteq.v4.dat lines 4265/4273: 21.721 − 19.573 = 2.148; ΔH −10.1 − (−18) ... as dissociation −7.9 kJ/mol.
    assert phosphate_1[2] == pytest.approx(2.148, abs=1e-9)
    assert phosphate_1[3] == pytest.approx(-7.9, abs=1e-9)


@pytest.mark.parametrize("system_id, step, pka, dh_kj_mol", STEPS, ids=[f"{s[0]}-{s[1]}" for s in STEPS])
def test_chosen_constants_agree_with_nist46_or_say_why(system_id, step, pka, dh_kj_mol):
    chosen = load_catalog().systems[system_id].steps[step - 1]
    for label, selected, reference, tolerance in (("pKa", chosen.pka_25c, pka, PKA_TOLERANCE),
                                                  ("ΔH°", chosen.dh_kj_mol, dh_kj_mol, DH_TOLERANCE_KJ_MOL)):
        if reference is None:
            continue
        used = selected.values[selected.chosen_index]
        if abs(selected.value - reference) > tolerance:
            assert used.chosen and used.why, (
                f"{system_id} step {step} {label}: chosen {selected.value:g} ({selected.source or selected.source_kind})"
                f" differs from NIST46 {reference:.4g} by more than {tolerance:g} and the row states no reason")


# --------------------------------------------------------------------------- Thermoddem rows

#: Thermoddem V1.10 as shipped by the phreeqc package (the catalog's source ``thermoddem``).
THERMODDEM = Path(phreeqc.__file__).parent / "databases" / "PHREEQC_ThermoddemV1.10_15Dec2020.dat"

#: Each catalog step the ``thermoddem`` rows describe, as (sign, reaction) terms of the file whose sum
#: is the stepwise dissociation acid = base + H⁺ (sign −1: the file writes the protonation).
THERMODDEM_STEPS = {
    ("phosphate", 1): ((-1, "1.000H2PO4- + 1.000H+  = H3PO4"),),
    ("phosphate", 2): ((1, "1.000H2PO4-  = HPO4-2 + 1.000H+"),),
    ("phosphate", 3): ((1, "1.000H2PO4-  = PO4-3 + 2.000H+"), (-1, "1.000H2PO4-  = HPO4-2 + 1.000H+")),
    ("borate", 1): ((1, "1.000B(OH)3 + 1.000H2O  = B(OH)4- + 1.000H+"),),
    ("carbonate", 1): ((-1, "1.000HCO3- + 1.000H+  = CO2 + 1.000H2O"),),
    ("carbonate", 2): ((1, "1.000HCO3-  = CO3-2 + 1.000H+"),),
    ("chlorite", 1): ((-1, "1.000ClO2- + 1.000H+  = HClO2"),),
}


def thermoddem_reactions() -> dict[str, tuple[float, float, list[float]]]:
    """reaction line -> (log_k, delta_h [kJ/mol], -analytic coefficients A1..A5) of the file."""
    reactions: dict[str, tuple[float, float, list[float]]] = {}
    current, log_k, delta_h = None, 0.0, 0.0
    for raw in THERMODDEM.read_text(encoding="utf-8-sig").splitlines():
        line = raw.split("#")[0].strip()
        if raw[:1].isdigit() and " = " in raw:
            current = raw.strip()
        elif current and line.startswith("log_k"):
            log_k = float(line.split()[1])
        elif current and line.startswith("delta_h"):
            delta_h = float(line.split()[1])
        elif current and line.startswith("-analytic"):
            reactions[current] = (log_k, delta_h, [float(x) for x in line.split()[1:6]])
            current = None
    return reactions


def analytic_dh_dcp(coefficients: list[float], t_k: float = 298.15) -> tuple[float, float]:
    """ΔH° [kJ/mol] and ΔCp° [J/(K mol)] of log K = A1 + A2 T + A3/T + A4 log10 T + A5/T² (PHREEQC
    ``-analytic``, Parkhurst & Appelo 2013): ΔH = R ln10 T² dlogK/dT, ΔCp = dΔH/dT, in closed form."""
    a2, a3, a4, a5 = coefficients[1:5]
    ln10 = np.log(10.0)
    dh = GAS_CONSTANT_J_MOL_K * ln10 * (a2 * t_k**2 - a3 + a4 * t_k / ln10 - 2 * a5 / t_k)
    dcp = GAS_CONSTANT_J_MOL_K * ln10 * (2 * a2 * t_k + a4 / ln10 + 2 * a5 / t_k**2)
    return dh / 1000.0, dcp


@pytest.mark.parametrize("system_id, step", list(THERMODDEM_STEPS), ids=[f"{s}-{j}" for s, j in THERMODDEM_STEPS])
def test_thermoddem_rows_are_what_the_file_says(system_id, step):
    # Case: each step value the catalog cites as ``thermoddem``.  Reference: the file's log_k and
    # delta_h (pKa and ΔH° as entered, 3 decimals), and ΔCp° from its -analytic expression (entered
    # to 0.1 J/(K mol)).  Tolerances: 5e-4 in pKa and ΔH°, 0.06 J/(K mol) in ΔCp° (the rounding).
    reactions = thermoddem_reactions()
    log_k = dh = dcp = 0.0
    for sign, reaction in THERMODDEM_STEPS[(system_id, step)]:
        k, h, coefficients = reactions[reaction]
        log_k += sign * k
        dh += sign * h
        dcp += sign * analytic_dh_dcp(coefficients)[1]
    chosen = load_catalog().systems[system_id].steps[step - 1]
    entered = {q: next(v.value for v in getattr(chosen, q).values if v.source == "thermoddem")
               for q in ("pka_25c", "dh_kj_mol", "dcp_j_k_mol")}
    assert entered["pka_25c"] == pytest.approx(-log_k, abs=5e-4)
    assert entered["dh_kj_mol"] == pytest.approx(dh, abs=5e-4)
    assert entered["dcp_j_k_mol"] == pytest.approx(dcp, abs=0.06)


def test_thermoddem_closed_form_matches_a_numerical_derivative():
    # The closed-form ΔH°/ΔCp° against central differences of the same expression (phosphate step 2,
    # file line 4144): they agree to 1e-6 kJ/mol and 0.01 J/(K mol) (measured: 0.003, the rounding of
    # the nested differences of an expression whose terms reach 1e6).
    coefficients = thermoddem_reactions()["1.000H2PO4-  = HPO4-2 + 1.000H+"][2]
    def log_k(t):
        return (coefficients[0] + coefficients[1] * t + coefficients[2] / t + coefficients[3] * np.log10(t)
                + coefficients[4] / t**2)
    def dh(t, h=1e-3):
        return GAS_CONSTANT_J_MOL_K * np.log(10.0) * t**2 * (log_k(t + h) - log_k(t - h)) / (2 * h) / 1000.0
    closed_dh, closed_dcp = analytic_dh_dcp(coefficients)
    assert closed_dh == pytest.approx(dh(298.15), abs=1e-6)
    assert closed_dcp == pytest.approx((dh(298.65) - dh(297.65)) * 1000.0, abs=0.01)


# --------------------------------------------------------------------------- complexes' spread

#: The other compilations a complex of ``complexes.csv`` (read in minteq.v4.dat) is looked up in:
#: NEA / ThermoChimie as carried in sit.dat, and LLNL as carried in llnl.dat.
OTHER_COMPILATIONS = {"sit": "sit.dat", "llnl": "llnl.dat"}

#: The fully deprotonated ligand of each system as each file names it (absent: not carried).
LIGAND_NAMES = {
    "carbonate": {"minteq": "CO3-2", "sit": "CO3-2", "llnl": "CO3-2"},
    "phosphate": {"minteq": "PO4-3", "sit": "PO4-3", "llnl": "PO4-3"},
    "sulfate": {"minteq": "SO4-2", "sit": "SO4-2", "llnl": "SO4-2"},
    "citrate": {"minteq": "Citrate-3", "sit": "Cit-3"},
    "edta": {"minteq": "Edta-4", "sit": "Edta-4"},
    "nta": {"minteq": "Nta-3", "sit": "Nta-3"},
}

#: A complex's log β uncertainty where no source states one (catalog.selection.DEFAULT_LOG_BETA_UNCERTAINTY,
#: common practice); complexes.csv carries the spread instead only where it is larger.
SPREAD_FLOOR = 0.1

#: A difference above this many log units is taken as a different reaction definition, not a
#: spread of measurements, and left out (common practice): llnl.dat's CaH2PO4+, MgH2PO4+,
#: FeH2PO4+ and FeH2PO4+2 lie 7.2 (phosphate's second pK) below minteq.v4.dat, its Fe(OH)3-
#: 2.0 and sit.dat's 4.8 apart, Co(OH)3- 10 apart.
SAME_REACTION_LIMIT = 3.0

#: A value further than this many log units from the value in use is judged an error, not a spread of
#: measurements (common practice, the rule of the step values' ``rejected`` marker): it must be on
#: record in complex_values.csv marked ``chosen = rejected`` with the reason, and leaves the spread.
REJECT_ABOVE = 2.0

#: The compilation key of this module -> the source key the catalog gives its values.
COMPILATION_SOURCES = {"minteq": "minteq4", "sit": "thermochimie", "llnl": "llnl"}

#: The source of a complexes.csv row -> the compilation it is read in: minteq.v4.dat, except where a
#: value there is rejected and another compilation's is in use (Ni(SO4)2-2 from sit.dat).
ROW_COMPILATIONS = {"minteq4": "minteq", "thermochimie": "sit"}

#: Spreads above REJECT_ABOVE kept on purpose, with the reason: Fe(OH)3- reads -28.99 in
#: minteq.v4.dat, -31.0 in llnl.dat and -33.84 in sit.dat: no two agree, so none is singled out.
KEPT_ABOVE_REJECT = {"Fe(OH)3-": "the three compilations scatter over 4.8 log units; none is singled out"}


def _metal_name(metal: str, charge: int) -> str:
    symbol = metal.rstrip("0123456789")
    return f"{symbol}+{charge}" if charge > 1 else f"{symbol}+"


def _composition_key(composition: dict[str, float]) -> tuple:
    return tuple(sorted((m, round(n, 6)) for m, n in composition.items() if m != "H2O" and round(n, 6)))


def _signed_terms(side: str) -> list[tuple[float, str]]:
    """``Ca+2 - 3 H+ + Am+3`` -> [(1, Ca+2), (-3, H+), (1, Am+3)] (sit.dat writes subtracted terms)."""
    parts = re.split(r"\s+([+-])\s+", " " + side.strip())
    terms, sign = [], 1.0
    for part in parts:
        if part in ("+", "-"):
            sign = 1.0 if part == "+" else -1.0
            continue
        if not part.strip():
            continue
        match = re.match(r"^\s*([0-9.]+)?\s*(\S+)\s*$", part)
        assert match, part
        terms.append((sign * float(match.group(1) or 1), match.group(2)))
    return terms


def read_reactions(path: Path) -> dict[str, dict]:
    """SOLUTION_SPECIES reactions of a PHREEQC database (subtracted terms allowed), in the entry form
    :func:`build_species` reads: lhs, rhs (product first), log_k."""
    entries: dict[str, dict] = {}
    inside, current = False, None
    for raw in path.read_text(encoding="latin-1").splitlines():
        if re.match(r"^[A-Z_]{4,}\s*$", raw):
            inside, current = raw.strip() == "SOLUTION_SPECIES", None
            continue
        if not inside:
            continue
        line = raw.strip()
        body = line.split("#")[0]
        if " = " in body and not line.startswith(("log_k", "delta_h", "-")):
            lhs, rhs = body.split(" = ")
            rhs_terms = _signed_terms(rhs)
            current = {"lhs": _signed_terms(lhs), "rhs": rhs_terms, "log_k": 0.0, "delta_h": None, "tags": {}}
            if rhs_terms and rhs_terms[0][0] == 1.0:
                entries.setdefault(rhs_terms[0][1], current)
        elif current is not None and (line.startswith("log_k") or line.startswith("-log_k")):
            current["log_k"] = float(line.split()[1])
    return entries


class Compilation:
    """One PHREEQC database: every species built from its master species, found by composition."""

    def __init__(self, key: str, path: Path):
        self.key = key
        self.entries = read_reactions(path)
        self.cache: dict[str, Species] = {}
        self.by_composition: dict[tuple, list[str]] = {}
        for name in self.entries:
            try:
                built = build_species(name, self.entries, self.cache)
            except KeyError:
                continue
            self.by_composition.setdefault(_composition_key(built.composition), []).append(name)

    def species(self, name: str) -> Species | None:
        try:
            return build_species(name, self.entries, self.cache) if name in self.entries else None
        except KeyError:
            return None

    def log_beta(self, complex_row, charge: int, name: str | None = None) -> tuple[float, str] | None:
        """(log β from M, L and H⁺, the species name) of a complexes.csv row in this file: the species
        ``name``, else the one species of the row's composition (None where there is none, or several
        that differ only by water, as Co(OH)3- and CoOOH-)."""
        metal = self.species(_metal_name(complex_row.metal, charge))
        ligand = None
        if complex_row.system_id:
            ligand_name = LIGAND_NAMES.get(complex_row.system_id, {}).get(self.key)
            ligand = self.species(ligand_name) if ligand_name else None
            if ligand is None:
                return None
        if metal is None:
            return None
        target: dict[str, float] = {}
        parts = [(complex_row.metal_count, metal)] + ([(complex_row.ligand_count, ligand)] if ligand else [])
        for n, built in parts:
            for master, k in built.composition.items():
                target[master] = target.get(master, 0.0) + n * k
        target["H+"] = target.get("H+", 0.0) + complex_row.protons
        if name is None:
            names = self.by_composition.get(_composition_key(target), [])
            if len(names) != 1:
                return None
            name = names[0]
        found = self.species(name)
        if found is None or _composition_key(found.composition) != _composition_key(target):
            return None
        assert found is not None
        return found.log_k - sum(n * built.log_k for n, built in parts), name


def complex_spreads() -> dict[str, tuple[float, float, dict[str, float]]]:
    """complex id -> (log β in the row's own compilation (:data:`ROW_COMPILATIONS`), largest
    |difference| from the other compilations within :data:`SAME_REACTION_LIMIT`, values marked
    rejected in complex_values.csv left out, the other values) for every complexes.csv row read in
    minteq.v4.dat or sit.dat."""
    catalog = load_catalog()
    databases = Path(phreeqc.__file__).parent / "databases"
    compilations = [Compilation("minteq", MINTEQ)] + [Compilation(key, databases / name)
                                                      for key, name in OTHER_COMPILATIONS.items()]
    rejected = {(v.complex_id, v.log_beta.source) for v in catalog.complex_values if v.rejected}
    out = {}
    for row in catalog.complexes:
        if row.log_beta.source not in ROW_COMPILATIONS:
            continue
        own_key = ROW_COMPILATIONS[row.log_beta.source]
        home = next(c for c in compilations if c.key == own_key)
        others = [c for c in compilations if c.key != own_key]
        charge = catalog.ions[row.metal].charge
        own = home.log_beta(row, charge, name=row.complex_id)
        if own is None:
            continue
        values = {c.key: found[0] for c in others if (found := c.log_beta(row, charge)) is not None}
        spread = max((abs(v - own[0]) for key, v in values.items() if abs(v - own[0]) <= SAME_REACTION_LIMIT
                      and (row.complex_id, COMPILATION_SOURCES[key]) not in rejected), default=0.0)
        out[row.complex_id] = (own[0], spread, values)
    return out


SPREADS = complex_spreads()


def spread_uncertainty(spread: float) -> float | None:
    """The uncertainty complexes.csv carries for a spread: rounded up to 0.01, where that exceeds
    :data:`SPREAD_FLOOR` (else None: the common-practice default applies)."""
    rounded = float(np.ceil(round(spread * 100, 6)) / 100)
    return rounded if rounded > SPREAD_FLOOR + 1e-9 else None


def test_complexes_are_found_in_minteq_with_their_catalog_log_beta():
    # Every minteq4 row of complexes.csv (and the thermochimie row, in sit.dat) is rebuilt from the
    # file's reactions with the catalog's log β (to 0.001; the files give three decimals at most).
    catalog = load_catalog()
    rows = {c.complex_id: c for c in catalog.complexes if c.log_beta.source in ROW_COMPILATIONS}
    assert len(SPREADS) >= 0.9 * len(rows)
    for complex_id, (log_beta, _, _) in SPREADS.items():
        assert log_beta == pytest.approx(rows[complex_id].log_beta.value, abs=1e-3), complex_id


def test_complex_uncertainty_is_the_spread_where_it_exceeds_the_common_practice_floor():
    # complexes.csv's uncertainty of a minteq4 row is the largest difference from the same
    # complex in sit.dat (NEA/ThermoChimie) or llnl.dat (LLNL), rounded up to 0.01, where that
    # spread exceeds 0.1 (common practice); else empty (the 0.1 default applies).
    catalog = load_catalog()
    rows = {c.complex_id: c for c in catalog.complexes}
    for complex_id, (_, spread, values) in SPREADS.items():
        stated = rows[complex_id].uncertainty
        rounded = spread_uncertainty(spread)
        if rounded is not None:
            assert stated == pytest.approx(rounded, abs=1e-9), (complex_id, values)
        else:
            assert stated is None, (complex_id, spread, values)


def test_the_spread_of_magnesium_phosphate_is_kept():
    # Issue 9: compilations differing by more than 0.3 (Mg-PO4 among them) keep the spread as the
    # uncertainty.  minteq.v4.dat MgPO4- log β 4.654 (NIST46) against llnl.dat's 6.589 (its
    # Mg+2 + HPO4-2 = MgPO4- + H+, log_k -5.7328, with HPO4-2 = PO4-3 + H+, log_k -12.3218):
    # spread 1.935, carried as 1.94.
    assert SPREADS["MgPO4-"][1] == pytest.approx(1.935, abs=1e-3)
    assert {c.complex_id: c.uncertainty for c in load_catalog().complexes}["MgPO4-"] == 1.94


def test_spreads_above_two_log_units_are_marked_rejected_with_the_file_value():
    # A compilation value more than 2 log units from the one in use is on record in
    # complex_values.csv as rejected, with the reason and the file's own number (to 1e-4); the
    # spread then leaves it out.  llnl.dat's CoSO4 0.0436 (against 2.3 in minteq.v4.dat and
    # sit.dat) and minteq.v4.dat's Ni(SO4)2-2 0.82 (against sit.dat's 3.01 in use) among them.
    catalog = load_catalog()
    rejected = {(v.complex_id, v.log_beta.source): v for v in catalog.complex_values if v.rejected}
    expected = set()
    for complex_id, (own, _, values) in SPREADS.items():
        for key, value in values.items():
            if REJECT_ABOVE < abs(value - own) <= SAME_REACTION_LIMIT and complex_id not in KEPT_ABOVE_REJECT:
                marked = rejected.get((complex_id, COMPILATION_SOURCES[key]))
                assert marked is not None, (complex_id, key, value, own)
                assert marked.log_beta.value == pytest.approx(value, abs=1e-4) and marked.why
                expected.add((complex_id, COMPILATION_SOURCES[key]))
    assert expected == set(rejected)
    assert {("CoSO4", "llnl"), ("Ni(SO4)2-2", "minteq4")} <= expected
    assert SPREADS["CoSO4"][1] == pytest.approx(0.0, abs=1e-9)  # sit.dat's 2.3 is minteq.v4.dat's
    assert SPREADS["Ni(SO4)2-2"][1] == 0.0  # no value left beside sit.dat's


def test_a_rejected_complex_value_is_never_selected():
    # Ni(SO4)2-2: minteq.v4.dat's 0.82 is marked rejected (a stepwise K2 entered as β2:
    # tests/test_nickel_disulfate.py); the catalog uses sit.dat's 3.01 (ThermoChimie,
    # measured-review) with the 0.1 default, the rejected value out of the spread.
    ni = {c.complex_id: c for c in load_catalog().complexes}["Ni(SO4)2-2"]
    assert (ni.log_beta.value, ni.log_beta.source) == (3.01, "thermochimie") and ni.uncertainty is None
