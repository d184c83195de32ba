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
