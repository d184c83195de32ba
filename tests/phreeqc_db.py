"""Reading a PHREEQC database's SOLUTION_SPECIES block (the test references for NIST SRD 46 via minteq.v4.dat).

Each reaction line ``a A + b B = C`` defines species C from master species; ``log_k`` is its
log K at 25 °C and I = 0, ``delta_h`` its ΔH (kJ/mol, or kcal/mol where the line says so;
the thermochemical calorie, 4.184 J, as PHREEQC uses it); comment lines carry the source tags
("log K source: NIST46.3").  Format: Parkhurst & Appelo, USGS Techniques and Methods 6-A43
(2013).
"""

from __future__ import annotations

import re
from pathlib import Path

KCAL_J = 4184.0  # thermochemical calorie, J (the unit PHREEQC means by kcal)


def _terms(side: str) -> list[tuple[float, str]]:
    terms = []
    for term in side.split(" + "):
        match = re.match(r"^\s*([0-9.]+)?\s*(\S+)\s*$", term)
        assert match, term
        terms.append((float(match.group(1) or 1), match.group(2)))
    return terms


def read_solution_species(path: Path) -> dict[str, dict]:
    """Every SOLUTION_SPECIES reaction of a PHREEQC database: lhs, rhs, log_k, delta_h [kJ/mol], source tags."""
    entries: dict[str, dict] = {}
    inside, current = False, None
    for raw in path.read_text(encoding="latin-1").splitlines():
        if re.match(r"^[A-Z_]{4,}\s*$", raw):
            inside, current = raw.strip() == "SOLUTION_SPECIES", None
            continue
        if not inside:
            continue
        line = raw.strip()
        if raw and not raw[0].isspace() and " = " in raw and not raw.startswith("#"):
            lhs, rhs = raw.split("#")[0].split(" = ")
            rhs_terms = _terms(rhs)
            current = {"lhs": _terms(lhs), "rhs": rhs_terms, "log_k": 0.0, "delta_h": None, "tags": {}}
            entries.setdefault(rhs_terms[0][1], current)
        elif current is not None and line.startswith("log_k"):
            current["log_k"] = float(line.split()[1])
        elif current is not None and line.startswith("delta_h"):
            parts = line.split()
            value = float(parts[1])
            current["delta_h"] = value * KCAL_J / 1000 if len(parts) > 2 and parts[2].startswith("kcal") else value
        elif current is not None and ("log K source:" in line or "Delta H source:" in line):
            label, _, tag = line.lstrip("#").partition(":")
            current["tags"][label.strip()] = tag.strip()
    return entries




# --- A grid of working buffers with NaCl, for the comparison with PHREEQC/phreeqc.dat --------------

#: Buffer families of the grid: poise reagents and, for amounts (acid form a, base form or
#: titrant b, NaCl c) in mol/kg, the PHREEQC totals in mmol/kgw.
GRID_FAMILIES = {
    "phosphate": (("kh2po4", "na2hpo4", "nacl"),
                  lambda a, b, c: {"K": a, "Na": 2 * b + c, "P": a + b, "Cl": c}),
    "carbonate": (("nahco3", "na2co3", "nacl"),
                  lambda a, b, c: {"Na": a + 2 * b + c, "C(4)": a + b, "Cl": c}),
    "borate": (("boric_acid", "naoh", "nacl"),
               lambda a, b, c: {"B": a, "Na": b + c, "Cl": c}),
    "ammonia": (("nh4cl", "naoh", "nacl"),
                lambda a, b, c: {"N(-3)": a, "Na": b + c, "Cl": a + c}),
}


def buffer_grid(per_family: int = 30, seed: int = 11):
    """Invented working buffers: (family, reagent ids, amounts mol/kg, PHREEQC totals mmol/kgw, °C).

    Each family ``per_family`` times: buffer total 10-100 mmol/kg, base form (or titrant)
    20-80 % of it, NaCl 0-0.45 mol/kg, temperature 10, 25 or 37 °C.
    """
    import numpy as np

    rng = np.random.default_rng(seed)
    cases = []
    for family, (ids, totals) in GRID_FAMILIES.items():
        for _ in range(per_family):
            total = rng.uniform(0.01, 0.1)
            part = rng.uniform(0.2, 0.8)
            salt = rng.uniform(0.0, 0.45)
            temperature = float(rng.choice([10.0, 25.0, 37.0]))
            if family in ("phosphate", "carbonate"):
                a, b = total * (1 - part), total * part
            else:  # boric acid or NH4Cl with NaOH: the titrant is part of the weak total
                a, b = total, total * part
            theirs = {k: 1000.0 * v for k, v in totals(a, b, salt).items()}
            cases.append((family, ids, (a, b, salt), theirs, temperature))
    return cases


def phreeqc_grid_ph(cases, database: str = "phreeqc.dat"):
    """pH and ionic strength [mol/kgw] of each grid case in PHREEQC with ``database``, both as the
    package ``phreeqc`` ships them (IPhreeqc and the database file ``sources.csv`` cites)."""
    import phreeqc

    engine = phreeqc.Phreeqc()
    engine.LoadBuiltInDatabase(database)
    blocks = ["SELECTED_OUTPUT 1\n -reset false\n -pH true\n -ionic_strength true\n"]
    for k, (_, _, _, theirs, temperature) in enumerate(cases, start=1):
        totals = "".join(f" {element} {amount!r}\n" for element, amount in theirs.items())
        blocks.append(f"SOLUTION {k}\n units mmol/kgw\n temp {temperature!r}\n pH 7 charge\n{totals}END\n")
    assert engine.RunString("".join(blocks)) == 0
    output = engine.GetSelectedOutput()
    return list(zip(output["pH"], output["mu"]))


def read_gamma_parameters(path: Path) -> dict[str, tuple[float, float, int]]:
    """The ``-gamma a b`` parameters of every SOLUTION_SPECIES entry: species -> (å [Å], b [kg/mol], line).

    Where an entry has several ``-gamma`` lines the last one counts, as PHREEQC reads them;
    commented lines (``#``) are skipped.
    """
    found: dict[str, tuple[float, float, int]] = {}
    inside, current = False, None
    for number, raw in enumerate(path.read_text(encoding="latin-1").splitlines(), start=1):
        if re.match(r"^[A-Z_]{4,}\s*$", raw):
            inside, current = raw.strip() == "SOLUTION_SPECIES", None
            continue
        if not inside:
            continue
        line = raw.split("#")[0].strip()
        if raw and not raw[0].isspace() and " = " in line:
            current = _terms(line.split(" = ")[1])[0][1]
        elif current is not None and line.startswith("-gamma"):
            parts = line.split()
            found[current] = (float(parts[1]), float(parts[2]), number)
    return found
