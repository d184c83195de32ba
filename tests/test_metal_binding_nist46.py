"""The catalog's metal-binding constants against minteq.v4.dat (NIST SRD 46 entries).

Case: every selected 1:1 (and every stored) catalog complex that minteq.v4.dat defines —
found by composition (metal + n ligand species), not by name.
Reference: minteq.v4.dat as shipped by the ``phreeqc`` package (the catalog's source
``minteq4``; entries tagged ``log K source: NIST46.x`` are NIST Standard Reference Database
46, Critically Selected Stability Constants of Metal Complexes, Martell, Smith & Motekaitis).
log K(M + n L = ML_n) = log K_f(ML_n) − log K_f(M) − n log K_f(L), each K_f built from the
file's master species through the reactions that define it; I = 0, 25 °C as tabulated.
Tolerances: a ``minteq4`` row must carry the file's number (1e-6, rounding of the file's own
decimals); a selected constant may differ from a NIST46 entry by at most 0.2 log K (the
project's acceptance limit) unless its row states why it was chosen.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from phreeqc_db import read_solution_species

from catalog import load_catalog
from selector.chemistry.complexation import binding_constants

phreeqc = pytest.importorskip("phreeqc", reason="the phreeqc package (test extra) ships minteq.v4.dat")

MINTEQ = Path(phreeqc.__file__).parent / "databases" / "minteq.v4.dat"
LOG_K_TOLERANCE = 0.2

#: minteq.v4.dat name of each catalog ligand species (system, charge).
LIGANDS = {
    ("phosphate", -2): "HPO4-2", ("phosphate", -3): "PO4-3", ("carbonate", -2): "CO3-2",
    ("carbonate", -1): "HCO3-", ("borate", -1): "H2BO3-", ("ammonia", 0): "NH3", ("sulfate", -2): "SO4-2",
    ("fluoride", -1): "F-", ("cyanide", -1): "Cyanide-", ("formate", -1): "Formate-",
    ("acetate", -1): "Acetate-", ("citrate", -3): "Citrate-3", ("phthalate", -2): "Phthalate-2",
    ("tartrate", -2): "Tartarate-2", ("glycine", -1): "Glycine-",
}


def build(name: str, entries: dict[str, dict], cache: dict) -> tuple[dict[str, float], float]:
    """(composition in master species, log K_f) of a species."""
    if name not in cache:
        entry = entries[name]
        if entry["lhs"] == [(1.0, name)]:
            cache[name] = ({name: 1.0}, 0.0)
        else:
            composition: dict[str, float] = {}
            log_k = entry["log_k"]
            for sign, side in ((1.0, entry["lhs"]), (-1.0, entry["rhs"][1:])):
                for coefficient, other in side:
                    part, part_log_k = build(other, entries, cache)
                    for master, n in part.items():
                        composition[master] = composition.get(master, 0.0) + sign * coefficient * n
                    log_k += sign * coefficient * part_log_k
            cache[name] = ({m: n for m, n in composition.items() if abs(n) > 1e-12 and m != "H2O"}, log_k)
    return cache[name]


ENTRIES = read_solution_species(MINTEQ)
CACHE: dict = {}
for _name in ENTRIES:
    build(_name, ENTRIES, CACHE)


def file_constants(metal: str, metal_charge: int, ligand: str, n: int) -> list[tuple[str, float, str]]:
    """(species, log K of M + n L = species, log K source tag) of every species with that composition."""
    metal_name = f"{metal}+" if metal_charge == 1 else f"{metal}+{metal_charge}"
    metal_comp, metal_log_k = CACHE[metal_name]
    ligand_comp, ligand_log_k = CACHE[ligand]
    target: dict[str, float] = dict(metal_comp)
    for master, count in ligand_comp.items():
        target[master] = target.get(master, 0.0) + n * count
    target = {m: c for m, c in target.items() if abs(c) > 1e-12}
    found = []
    for name, (composition, log_k) in CACHE.items():
        if name not in (metal_name, ligand) and composition.keys() == target.keys() and all(
                abs(composition[m] - target[m]) < 1e-9 for m in target):
            found.append((name, log_k - metal_log_k - n * ligand_log_k, ENTRIES[name]["tags"].get("log K source", "")))
    return found


def _cases():
    catalog = load_catalog()
    return [m for m in catalog.metal_binding
            if m.log_k is not None and (m.system_id, m.ligand_species_charge) in LIGANDS]


CASES = _cases()


def test_the_file_defines_what_the_research_read():
    # CaHPO4: minteq.v4.dat lines 4433 and 4257: 15.035 - 12.375 = 2.66 (NIST46.3).
    (found,) = file_constants("Ca", 2, "HPO4-2", 1)
    assert found[0] == "CaHPO4" and found[1] == pytest.approx(2.66, abs=1e-9) and found[2] == "NIST46.3"


@pytest.mark.parametrize("binding", [m for m in CASES if m.source == "minteq4"],
                         ids=lambda m: f"{m.system_id}-{m.metal}{m.ligand_species_charge}x{m.ligand_count}")
def test_minteq4_rows_carry_the_files_number_and_kind(binding):
    found = file_constants(binding.metal, binding.metal_charge, LIGANDS[binding.system_id, binding.ligand_species_charge],
                           binding.ligand_count)
    assert found, "no species of that composition in minteq.v4.dat"
    assert any(abs(log_k - binding.log_k.value) < 1e-6 for _, log_k, _ in found), found
    nist46 = any(abs(log_k - binding.log_k.value) < 1e-6 and tag.startswith("NIST46") for _, log_k, tag in found)
    assert (binding.source_kind == "measured-review") == nist46


@pytest.mark.parametrize("binding", [m for m in CASES if m.selected],
                         ids=lambda m: f"{m.system_id}-{m.metal}{m.ligand_species_charge}x{m.ligand_count}")
def test_selected_constants_agree_with_nist46_or_say_why(binding):
    reference = [(name, log_k) for name, log_k, tag in file_constants(
        binding.metal, binding.metal_charge, LIGANDS[binding.system_id, binding.ligand_species_charge],
        binding.ligand_count) if tag.startswith("NIST46")]
    if not reference:
        pytest.skip("NIST46 has no entry for this complex")
    (constant,) = [c for c in binding_constants(load_catalog(), binding.system_id, binding.metal)
                   if c.binding == binding]
    for name, log_k in reference:
        if abs(constant.log_k0_25c - log_k) > LOG_K_TOLERANCE:
            assert binding.why, (f"{binding.system_id}/{binding.metal}: selected {constant.log_k0_25c:.3f} differs "
                                 f"from NIST46 {name} {log_k:.3f} by more than {LOG_K_TOLERANCE} and states no reason")
