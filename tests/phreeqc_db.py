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


