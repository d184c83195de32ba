"""The curves behind the app's pictures of a buffer: β against pH, a titration, pH against
temperature, each with the marks a reader needs (pKa′ of every step, the target, the
preparation and use temperatures).

Pure numbers for a picture, computed by the exact engine in one batch each; the app only
draws them.

- **β against pH** (:func:`capacity_curve`): the buffer forms of a composition (its titrant
  left out, its salt kept) titrated with strong acid one way and strong base the other, far
  enough to cover every step and the free H⁺/OH⁻ at the ends of the axis, so each point is
  (pH, β) of the same buffer at another pH.  The axis spans the systems' pKa′ ± 2, within
  pH 2–12 (:data:`PH_AXIS_LIMITS`), and takes in the target.  β is the engine's exact
  buffer value at fixed activity coefficients; for a single conjugate pair it peaks at
  pH = pKa′ with ln10 · C/4 (Van Slyke 1922, from memory).
- **Titration** (:func:`buffer_titration`): the same buffer forms titrated with one
  titrant stock (:func:`selector.chemistry.properties.titration_curve`, the dilution by the
  titrant included), so the curve crosses the target where the recipe stops adding it.
- **pH against temperature** (:func:`temperature_axis_c` and
  :func:`selector.chemistry.properties.temperature_profile`): an axis that takes in the use
  and preparation temperatures and any window, at least :data:`MIN_TEMPERATURE_SPAN_K` wide.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass

import numpy as np

from catalog import Catalog
from selector.admissible import ACID_TITRANT, LOAD_REAGENT
from selector.catalog_view.table import steps_at_conditions, view_conditions
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.properties import TitrationCurve, titration_curve

__all__ = ["CapacityCurve", "PkaMark", "PH_AXIS_LIMITS", "PKA_MARGIN_PH", "MIN_TEMPERATURE_SPAN_K",
           "buffer_forms", "buffer_titration", "capacity_curve", "pka_marks", "temperature_axis_c"]

#: The pH axis of a β curve never goes beyond these ends (common practice: the range where
#: a glass electrode reads without acid or alkaline error).
PH_AXIS_LIMITS = (2.0, 12.0)
#: The β axis spans every step's pKa′ ± this [pH] (common practice: β of a pair falls to 4 %
#: of its peak 2 pH units away).
PKA_MARGIN_PH = 2.0
#: Points of the β curve along each titrant's buffering part (common practice: smooth at
#: screen size), plus :data:`EXCESS_POINTS` beyond it.
BUFFERING_POINTS = 241
EXCESS_POINTS = 60
#: Largest pH step between neighbouring points of a β curve, filled by up to
#: :data:`REFINE_ROUNDS` rounds of :data:`REFINE_POINTS` points between the two (common practice).
MAX_GAP_PH = 0.05
REFINE_ROUNDS = 4
REFINE_POINTS = 7
#: Narrowest temperature axis [K] (common practice: enough to show a slope).
MIN_TEMPERATURE_SPAN_K = 10.0
#: Points of a temperature axis.
TEMPERATURE_POINTS = 41


@dataclass(frozen=True)
class PkaMark:
    """One step's apparent pKa′ at the conditions of a picture.

    Attributes
    ----------
    system_id : the system
    system_name : its short name (:attr:`catalog.records.System.short_name`)
    step : 1 for the first proton lost
    pka_apparent : pKa′ at the picture's temperature and ionic strength [pH]
    """

    system_id: str
    system_name: str
    step: int
    pka_apparent: float

    @property
    def label(self) -> str:
        """``"HEPES pKa′2 7.45"``: the short name, the step when it is not the first, the value
        to 0.01."""
        return f"{self.system_name} pKa′{self.step if self.step > 1 else ''} {self.pka_apparent:.2f}"


@dataclass(frozen=True)
class CapacityCurve:
    """β against pH of one buffer at its concentration.

    Attributes
    ----------
    ph : [K] pH of each point, rising [pH]
    capacity_mol_l_per_ph : [K] β at each point [mol/L per pH]
    pka : the steps' pKa′ at the curve's temperature and ionic strength, inside the axis
    ph_low, ph_high : the axis [pH]
    temperature_c : [°C]
    """

    ph: tuple[float, ...]
    capacity_mol_l_per_ph: tuple[float, ...]
    pka: tuple[PkaMark, ...]
    ph_low: float
    ph_high: float
    temperature_c: float


def buffer_forms(composition_mol_l: Mapping[str, float], catalog: Catalog,
                 titrants: Iterable[str] = (ACID_TITRANT, *LOAD_REAGENT.values())) -> dict[str, float]:
    """The composition without its strong acid and base titrants [mol/L]: buffer forms and salt."""
    drop = set(titrants)
    return {r: float(v) for r, v in composition_mol_l.items()
            if catalog.reagents[r].system_id is not None or r not in drop}


def pka_marks(system_ids: Iterable[str], temperature_c: float, ionic_strength_mol_l: float,
              catalog: Catalog) -> tuple[PkaMark, ...]:
    """Every step's pKa′ of ``system_ids`` at ``temperature_c`` [°C] and ``ionic_strength_mol_l``
    [mol/L] (Davies), from :func:`selector.catalog_view.table.steps_at_conditions`."""
    steps = steps_at_conditions(catalog, view_conditions(temperature_c, ionic_strength_mol_l, "davies"))
    return tuple(PkaMark(s, catalog.systems[s].short_name, step.step, step.pka_apparent)
                 for s in dict.fromkeys(system_ids) for step in steps[s])


def _buffer_of(forms: Mapping[str, float], catalog: Catalog) -> tuple[list[str], float, int]:
    """(systems present, total buffer in system units [mol/L], most steps of a system present)."""
    systems: list[str] = []
    conc = 0.0
    for reagent_id, amount in forms.items():
        reagent = catalog.reagents[reagent_id]
        if reagent.system_id is not None:
            systems.append(reagent.system_id)
            conc += amount * reagent.system_units
    return systems, conc, max((catalog.systems[s].n_steps for s in systems), default=1)


def _ph_axis(pkas: list[float], target_ph: float | None) -> tuple[float, float]:
    low, high = PH_AXIS_LIMITS
    marks = pkas + ([target_ph] if target_ph is not None else [])
    if not marks:
        return low, high
    return max(low, min(marks) - PKA_MARGIN_PH), min(high, max(marks) + PKA_MARGIN_PH)


def capacity_curve(composition_mol_l: Mapping[str, float], temperature_c: float, catalog: Catalog,
                   target_ph: float | None = None, ionic_strength_mol_l: float | None = None,
                   acid_id: str = ACID_TITRANT, base_id: str = LOAD_REAGENT["base"]) -> CapacityCurve:
    """β against pH of the buffer in ``composition_mol_l`` [mol/L] at ``temperature_c`` [°C].

    Parameters
    ----------
    composition_mol_l : reagent id -> concentration [mol/L] (a recipe's or a ranked mix's)
    temperature_c : [°C]
    catalog : the catalog used throughout
    target_ph : taken into the axis when given [pH]
    ionic_strength_mol_l : the ionic strength of the pKa′ marks [mol/L]; default: that of the
        composition as given (solved)
    acid_id, base_id : the strong acid and base the buffer forms are titrated with

    Notes
    -----
    Each direction adds the titrant from 0 to n·C (n the most steps of a system present, C
    the buffer's total in system units) in :data:`BUFFERING_POINTS` steps, then up to the
    free H⁺ (acid) or OH⁻ (base) of the axis end in :data:`EXCESS_POINTS` geometric steps
    (and as many geometric steps from zero); each direction is solved in one batch, then
    wherever neighbouring points lie more than :data:`MAX_GAP_PH` apart (an equivalence
    point) more points are put between them, one batch per round; the points inside the
    axis are kept, sorted by pH.
    """
    forms = buffer_forms(composition_mol_l, catalog, (acid_id, base_id))
    systems, conc, n_steps = _buffer_of(forms, catalog)
    if ionic_strength_mol_l is None:
        ids = list(composition_mol_l)
        given = solve_equilibrium(ids, np.array([[composition_mol_l[r] for r in ids]]), temperature_c,
                                  catalog=catalog, strict=False)
        ionic_strength_mol_l = float(np.nan_to_num(given.ionic_strength_mol_l[0]))
    marks = pka_marks(systems, temperature_c, ionic_strength_mol_l, catalog)
    low, high = _ph_axis([m.pka_apparent for m in marks], target_ph)
    ids = [*forms, acid_id, base_id]
    fixed = np.array(list(forms.values()))

    def solve(acid: np.ndarray, base: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        rows = np.zeros((acid.size, len(ids)))
        rows[:, :len(forms)] = fixed
        rows[:, -2], rows[:, -1] = acid, base
        eq = solve_equilibrium(ids, rows, temperature_c, catalog=catalog, strict=False)
        return np.asarray(eq.ph, dtype=float), np.asarray(eq.capacity_mol_l_per_ph, dtype=float)

    buffering = np.union1d(np.linspace(0.0, n_steps * conc, BUFFERING_POINTS),
                           np.geomspace(1e-9, max(n_steps * conc, 1e-8), EXCESS_POINTS))
    amounts = [np.union1d(buffering, n_steps * conc + np.geomspace(1e-7, 3 * 10.0 ** -low, EXCESS_POINTS)),
               np.union1d(buffering, n_steps * conc + np.geomspace(1e-7, 3 * 10.0 ** (high - 13.0), EXCESS_POINTS))]
    ph_parts, beta_parts = [], []
    for direction, added in enumerate(amounts):
        acid, base = (added, np.zeros_like(added)) if direction == 0 else (np.zeros_like(added), added)
        ph, beta = solve(acid, base)
        for _ in range(REFINE_ROUNDS):       # fill the jumps (equivalence points) with more points
            order = np.argsort(added)
            added, ph, beta = added[order], ph[order], beta[order]
            jumps = np.flatnonzero(np.abs(np.diff(ph)) > MAX_GAP_PH)
            if jumps.size == 0:
                break
            new = (added[jumps, None] + (added[jumps + 1] - added[jumps])[:, None]
                   * np.linspace(0.0, 1.0, REFINE_POINTS + 2)[None, 1:-1]).ravel()
            new_ph, new_beta = solve(new, np.zeros_like(new)) if direction == 0 else solve(np.zeros_like(new), new)
            added, ph, beta = np.concatenate([added, new]), np.concatenate([ph, new_ph]), np.concatenate([beta, new_beta])
        ph_parts.append(ph)
        beta_parts.append(beta)
    ph, beta = np.concatenate(ph_parts), np.concatenate(beta_parts)
    keep = np.isfinite(ph) & np.isfinite(beta) & (ph >= low) & (ph <= high)
    order = np.argsort(ph[keep], kind="stable")
    inside = tuple(m for m in marks if low <= m.pka_apparent <= high)
    return CapacityCurve(tuple(ph[keep][order].tolist()), tuple(beta[keep][order].tolist()), inside,
                         float(low), float(high), float(temperature_c))


def buffer_titration(composition_mol_l: Mapping[str, float], titrant_id: str, temperature_c: float,
                     catalog: Catalog, points: int = 101, stock_mol_l: float = 1.0) -> TitrationCurve:
    """The buffer forms of ``composition_mol_l`` (its strong acid and base left out, its salt
    kept) titrated with a ``stock_mol_l`` stock of ``titrant_id``, 1 L of sample, from no
    titrant to (n + ½)·C mol of it (n the most steps of a system present, C the buffer's
    total in system units) in ``points`` steps, at ``temperature_c`` [°C]."""
    forms = buffer_forms(composition_mol_l, catalog)
    _, conc, n_steps = _buffer_of(forms, catalog)
    volumes_l = np.linspace(0.0, (n_steps + 0.5) * conc / stock_mol_l, points)
    ids = list(forms)
    return titration_curve(ids, [forms[r] for r in ids], titrant_id, stock_mol_l, volumes_l, 1.0, temperature_c,
                           catalog=catalog, strict=False)


def temperature_axis_c(use_c: float, prep_c: float, window_c: tuple[float, float] | None = None) -> np.ndarray:
    """Temperatures [°C] for a pH-against-temperature picture: from the lowest to the highest
    of the use and preparation temperatures and the window, widened symmetrically to
    :data:`MIN_TEMPERATURE_SPAN_K` (within 0–95 °C), :data:`TEMPERATURE_POINTS` points."""
    ends = [use_c, prep_c, *(window_c or ())]
    low, high = min(ends), max(ends)
    if high - low < MIN_TEMPERATURE_SPAN_K:
        middle = (low + high) / 2.0
        low = min(max(0.0, middle - MIN_TEMPERATURE_SPAN_K / 2.0), 95.0 - MIN_TEMPERATURE_SPAN_K)
        high = low + MIN_TEMPERATURE_SPAN_K
    return np.linspace(low, high, TEMPERATURE_POINTS)
