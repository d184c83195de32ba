"""The curves of a side-by-side comparison: pH against temperature, β against pH, cost.

For each compared (feasible) system's verified mix:

- **pH against temperature** over the spec's window, widened to take in the preparation
  and use temperatures (:func:`selector.chemistry.properties.temperature_profile`, one
  batch per mix);
- **β against pH** at the mix's buffer concentration: the buffer reagents with strong
  acid (HCl) or base (NaOH) from 0 to :data:`TITRANT_SPAN` × the buffer concentration
  in :data:`CURVE_POINTS` steps each way, solved in one batch (the salt of the mix kept,
  its titrant left out), so each point is (pH, β) of the same buffer at another pH;
- **cost** per litre of the mix (from the ranking's row).

Pure numbers for a picture; the app draws them.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from catalog import Catalog
from selector.admissible import ACID_TITRANT, LOAD_REAGENT
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.properties import temperature_profile
from selector.spec import BufferSpec

__all__ = ["CURVE_POINTS", "ComparisonCurves", "comparison_curves"]

#: Points of each curve (common practice: smooth at screen size).
CURVE_POINTS = 41
#: Strong acid or base added for the β curve, as a multiple of the buffer concentration.
TITRANT_SPAN = 2.0
#: Half-width of the pH axis of the β curve around the target [pH].
PH_SPAN = 2.0


@dataclass(frozen=True)
class ComparisonCurves:
    """The curves of one system's mix.

    Attributes
    ----------
    system_id : the system
    temperatures_c, ph_at_temperature : the pH at each temperature [°C], [pH]
    ph, capacity_mol_l_per_ph : β against pH at the mix's buffer concentration [pH], [mol/L per pH]
    cost_per_l : [currency/L]
    """

    system_id: str
    temperatures_c: tuple[float, ...]
    ph_at_temperature: tuple[float, ...]
    ph: tuple[float, ...]
    capacity_mol_l_per_ph: tuple[float, ...]
    cost_per_l: float


def _temperatures(spec: BufferSpec) -> np.ndarray:
    ends = [spec.temperature_c, spec.prep_temperature_c]
    if spec.temperature_min_c is not None and spec.temperature_max_c is not None:
        ends += [spec.temperature_min_c, spec.temperature_max_c]
    low, high = min(ends), max(ends)
    if high - low < 10.0:        # a window of at least 10 K around the use temperature to show a slope
        low, high = max(0.0, spec.temperature_c - 5.0), spec.temperature_c + 5.0
    return np.linspace(low, high, CURVE_POINTS)


def _capacity_curve(mix: dict[str, float], spec: BufferSpec, catalog: Catalog) -> tuple[np.ndarray, np.ndarray]:
    """(pH, β) of the buffer reagents of ``mix`` titrated with HCl and NaOH, sorted by pH."""
    buffer = {r: v for r, v in mix.items() if catalog.reagents[r].system_id is not None}
    salt = {r: v for r, v in mix.items() if catalog.reagents[r].system_id is None
            and r not in (ACID_TITRANT, LOAD_REAGENT["base"])}
    conc = sum(v * catalog.reagents[r].system_units for r, v in buffer.items())
    ids = [*buffer, *salt, ACID_TITRANT, LOAD_REAGENT["base"]]
    steps = np.linspace(0.0, TITRANT_SPAN * conc, CURVE_POINTS)
    base_row = np.array([*buffer.values(), *salt.values(), 0.0, 0.0])
    rows = np.tile(base_row, (2 * CURVE_POINTS, 1))
    rows[:CURVE_POINTS, -2] = steps
    rows[CURVE_POINTS:, -1] = steps
    eq = solve_equilibrium(ids, rows, spec.temperature_c, catalog=catalog, strict=False)
    ph = np.asarray(eq.ph, dtype=float)
    beta = np.asarray(eq.speciation.capacity_mol_l_per_ph, dtype=float)
    keep = np.isfinite(ph) & np.isfinite(beta) & (np.abs(ph - spec.ph) <= PH_SPAN)
    order = np.argsort(ph[keep])
    return ph[keep][order], beta[keep][order]


def comparison_curves(rows: Sequence, spec: BufferSpec, catalog: Catalog) -> list[ComparisonCurves]:
    """The curves of each feasible row (a :class:`selector.rank.RankedSystem`) for ``spec``.

    Parameters
    ----------
    rows : ranked rows; those without a verified mix are left out
    spec : the spec they were ranked for
    catalog : the catalog used throughout
    """
    temperatures = _temperatures(spec)
    out = []
    for r in rows:
        if not r.feasible or not r.reagents_mol_l or r.cost_per_l is None:
            continue
        ids = list(r.reagents_mol_l)
        ph_t = temperature_profile(ids, [r.reagents_mol_l[i] for i in ids], temperatures, catalog=catalog,
                                   strict=False)
        ph, beta = _capacity_curve(dict(r.reagents_mol_l), spec, catalog)
        out.append(ComparisonCurves(r.system_id, tuple(float(t) for t in temperatures),
                                    tuple(float(p) for p in ph_t), tuple(float(p) for p in ph),
                                    tuple(float(b) for b in beta), float(r.cost_per_l)))
    return out
