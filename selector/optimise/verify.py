"""Verification of a mix by the exact forward engine, and the titrant correction.

Only verified figures are reported: the linear model's mix is re-solved by
:func:`selector.chemistry.equilibrium.solve_equilibrium` at the use temperature, at each
grid temperature and under each load (a load is the reagent
:data:`selector.admissible.LOAD_REAGENT` names, added at each grid temperature).

The verified pH, the titrant correction and the band checks are those of the buffer as made
(the solution a recipe makes and a meter reads).  The spec's metals are checked in a second
batch where each mix holds them at their stated concentrations (as the salt
:func:`selector.admissible.metal_reagent` names; 1 µM by default): the exact fraction of each
metal bound by the mix's own systems (worst over the use and grid temperatures), the pH with
the metals at the use temperature (``ph_with_metals``: 5 mM Ca²⁺ lowers a 20 mM phosphate
buffer made for pH 7.4 at 37 °C to 7.29), and at the use and preparation temperatures the
saturation indices of the solids of the listed metals
(:func:`selector.chemistry.complexation.saturation_of_metals`, one call for every mix).
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

import numpy as np

from selector.admissible import LOAD_REAGENT, ion_label, metal_reagent
from selector.chemistry.complexation import (
    bound_by_ligands,
    precipitation_misses,
    precipitation_notes,
    saturation_of_metals,
)
from selector.chemistry.equilibrium import composition_ph, solve_equilibrium
from selector.chemistry.properties import properties_from_rows, property_rows
from selector.chemistry.uncertainty import propagate_uncertainty
from selector.digits import apart
from selector.errors import SolverError
from selector.optimise.result import LoadCheck, SolidSaturation, VerifiedFigures
from selector.optimise.solve import Problem
from selector.spec import BufferSpec

#: Above this the titrant is corrected on the exact engine [pH].
PH_CORRECT_TOL = 0.0005
#: Slack of the band checks of the verified pH [pH] (the linear model's I estimate).
BAND_SLACK_PH = 1e-3
#: Doublings of the bracket the titrant root find may try.
MAX_BRACKET_DOUBLINGS = 40


def load_reagent(kind: str) -> str:
    """The reagent a ``kind`` ("acid" or "base") load is modelled as (:data:`selector.admissible.LOAD_REAGENT`)."""
    return LOAD_REAGENT[kind]


def with_load(mix: dict[str, float], kind: str, conc_mol_l: float) -> dict[str, float]:
    """``mix`` with a ``kind`` ("acid" or "base") load of ``conc_mol_l`` [mol/L] added."""
    amounts = dict(mix)
    titrant = load_reagent(kind)
    amounts[titrant] = amounts.get(titrant, 0.0) + conc_mol_l
    return amounts


def metal_amounts(problem: Problem) -> dict[str, float]:
    """The salts that put the spec's metals into a verified solution -> mol/L (each metal at its
    stated concentration, :func:`selector.admissible.metal_reagent`)."""
    amounts: dict[str, float] = {}
    for limit in problem.spec.metals:
        reagent = metal_reagent(limit.metal, problem.catalog)
        amounts[reagent] = amounts.get(reagent, 0.0) + limit.conc_mol_l
    return amounts


def exact_ph(problem: Problem, mix: dict[str, float], temperature_c: float | None = None) -> float:
    """pH of ``mix`` [mol/L] by the exact engine at ``temperature_c`` [°C] (default: the use temperature)."""
    t = problem.spec.temperature_c if temperature_c is None else temperature_c
    return composition_ph(mix, t, problem.catalog, problem.activity, problem.fixed_ionic_strength_mol_l)


def _batch(spec: BufferSpec, grid: tuple[float, ...], base_rows: np.ndarray,
           col: dict[str, int]) -> tuple[np.ndarray, np.ndarray]:
    """Rows per mix: use temperature, each grid temperature, each load at each grid temperature."""
    rows, temps = [], []
    for base in base_rows:
        rows.append(base)
        temps.append(spec.temperature_c)
        for t in grid:
            rows.append(base)
            temps.append(t)
        for load in spec.loads:
            for t in grid:
                row = base.copy()
                row[col[load_reagent(load.kind)]] += load.conc_mol_l
                rows.append(row)
                temps.append(t)
    return np.array(rows), np.array(temps)


def _bound_fractions(problem: Problem, ids: list[str], base_rows: np.ndarray, eq: Any, per: int,
                     n_window: int) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray]]:
    """Exact fraction of each limited metal bound by the mix's own systems, worst over the use
    and grid temperatures: (metal -> [N] fraction, metal -> [N] temperature [°C] of the worst)."""
    spec, catalog = problem.spec, problem.catalog
    metals = getattr(eq.speciation, "metals", None)
    if not spec.metals or metals is None:
        return {}, {}
    system_ids = list(eq.speciation.systems.system_ids)
    mask = np.zeros((len(base_rows), len(system_ids)), dtype=bool)
    for r, reagent_id in enumerate(ids):
        sid = catalog.reagents[reagent_id].system_id
        if sid in system_ids:
            mask[:, system_ids.index(sid)] |= base_rows[:, r] > 0
    window = (np.arange(len(base_rows))[:, None] * per + np.arange(n_window)[None, :]).ravel()   # [N·W]
    fraction = bound_by_ligands(_rows_of(metals, window), np.repeat(mask, n_window, axis=0))
    temps = np.asarray(eq.speciation.temperature_c)[window].reshape(len(base_rows), n_window)
    bound, at_c = {}, {}
    for limit in spec.metals:
        f = fraction[:, metals.metal_ids.index(limit.metal)].reshape(len(base_rows), n_window)
        worst = np.argmax(np.where(np.isfinite(f), f, np.inf), axis=1)
        bound[limit.metal] = f[np.arange(len(base_rows)), worst]
        at_c[limit.metal] = temps[np.arange(len(base_rows)), worst]
    return bound, at_c


def _rows_of(metals: Any, rows: np.ndarray) -> Any:
    """The metal speciation of the solutions ``rows`` only."""
    return replace(metals, totals_mol_l=metals.totals_mol_l[rows], free_mol_l=metals.free_mol_l[rows],
                   complex_mol_l=metals.complex_mol_l[rows])


def _load_checks(spec: BufferSpec, grid: tuple[float, ...], ph: np.ndarray, first: int) -> list[LoadCheck]:
    """The load rows of one mix (from row ``first``), each checked against its side of the band."""
    low, high = spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph
    checks = []
    i = first
    for load in spec.loads:
        for t in grid:
            value = float(ph[i])
            ok = value >= low - BAND_SLACK_PH if load.kind == "acid" else value <= high + BAND_SLACK_PH
            checks.append(LoadCheck(load.kind, load.conc_mol_l, float(t), value, ok))
            i += 1
    return checks


def _band_warnings(spec: BufferSpec, by_t: dict[float, float], checks: list[LoadCheck]) -> list[str]:
    low, high = spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph
    warnings = [f"at {t:g} °C the verified pH {ph:.3f} is outside {low:.3f}-{high:.3f}"
                for t, ph in by_t.items() if not low - BAND_SLACK_PH <= ph <= high + BAND_SLACK_PH]
    warnings += [f"with {c.conc_mol_l * 1000:g} mM {c.kind} at {c.temperature_c:g} °C the verified "
                 f"pH {c.ph:.3f} leaves the band" for c in checks if not c.within_band]
    return warnings


def verify_mixes(problem: Problem, mixes: list[dict[str, float]],
                 preparation: bool = False) -> list[VerifiedFigures]:
    """Verified figures of several mixes [mol/L] in one batch of the exact engine.

    ``preparation``: the same batch also solves each mix at the preparation temperature
    (``ph_at_preparation``; a row the engine cannot solve gives NaN there, never an error).

    Rows per mix: the use temperature, each grid temperature, each load at each grid
    temperature (the buffer as made).  With metals, a second batch holds each mix with the
    spec's metals at their concentrations (:func:`metal_amounts`) at the use and grid
    temperatures, then at the preparation temperature.  dpH/dT (±0.5 K) and the 1:1 dilution
    value come from :mod:`selector.chemistry.properties`; bound fractions, saturation indices
    and the pH with the metals from the second batch (see the module).
    """
    spec, catalog = problem.spec, problem.catalog
    metal_conc = metal_amounts(problem)
    # the buffer as made holds no metal salt of its own, so the batch has no such column (a
    # column of a complexing metal sends the whole batch to the complexation solver); the metal
    # batch adds the salts' columns after these
    made = list(dict.fromkeys([r for mix in mixes for r in mix] + [load_reagent(k) for k in LOAD_REAGENT]))
    ids = list(dict.fromkeys(made + list(metal_conc)))
    col = {r: i for i, r in enumerate(ids)}
    grid = problem.data.grid_temperatures_c
    base_rows = np.zeros((len(mixes), len(ids)))
    for n, mix in enumerate(mixes):
        for r, v in mix.items():
            base_rows[n, col[r]] = v
    rows, temps = _batch(spec, grid, base_rows, col)
    fixed_i = problem.fixed_ionic_strength_mol_l
    # dpH/dT and the dilution value's solutions ride in the same engine call, after the rows
    extra_rows, extra_temps = property_rows(base_rows, spec.temperature_c)
    checked = len(rows) + len(extra_rows)
    if preparation:     # after the checked rows, not held to converge (the criteria take NaN)
        extra_rows = np.concatenate([extra_rows, base_rows])
        extra_temps = np.concatenate([extra_temps, np.full(len(base_rows), spec.prep_temperature_c)])
    kept = len(made)
    rows, extra_rows = rows[:, :kept], extra_rows[:, :kept]
    eq = solve_equilibrium(made, np.concatenate([rows, extra_rows]), np.concatenate([temps, extra_temps]),
                           catalog=catalog, activity=problem.activity, fixed_ionic_strength_mol_l=fixed_i,
                           strict=not preparation)
    if preparation and np.any(eq.status[:checked] != 0):   # the strict solve of the checked rows raises
        solve_equilibrium(made, np.concatenate([rows, extra_rows[:checked - len(rows)]]),
                          np.concatenate([temps, extra_temps[:checked - len(rows)]]), catalog=catalog,
                          activity=problem.activity, fixed_ionic_strength_mol_l=fixed_i)
    prep_ph = eq.ph[checked:] if preparation else None
    per = 1 + len(grid) + len(spec.loads) * len(grid)
    use_rows = np.arange(len(mixes)) * per
    drift, dilution = properties_from_rows(eq.ph[len(rows):checked], eq.ph[use_rows], spec.temperature_c)
    metal_figures = _with_metal_figures(problem, ids, base_rows, col, metal_conc)
    system_units = {r: catalog.reagents[r].system_units if catalog.reagents[r].system_id else 0 for r in ids}
    out = []
    for n, mix in enumerate(mixes):
        u = int(use_rows[n])
        by_t = {float(t): float(eq.ph[u + 1 + k]) for k, t in enumerate(grid)}
        checks = _load_checks(spec, grid, eq.ph, u + 1 + len(grid))
        bound, bound_at_c, solids, ph_metals = metal_figures[n]
        warnings = eq.warnings_for(u, catalog) + _band_warnings(spec, by_t, checks) + precipitation_notes(solids)
        out.append(VerifiedFigures(
            temperature_c=spec.temperature_c, ph=float(eq.ph[u]), ph_by_temperature=by_t,
            ph_under_loads=tuple(checks), capacity_mol_l_per_ph=float(eq.capacity_mol_l_per_ph[u]),
            ionic_strength_mol_l=float(eq.ionic_strength_mol_l[u]),
            osmolarity_osmol_l=float(eq.osmolarity_osmol_l[u]),
            buffer_conc_mol_l=float(sum(v * system_units[r] for r, v in mix.items())),
            bound_fraction=bound, dph_dt_per_k=float(drift[n]), dilution_value_ph=float(dilution[n]),
            warnings=tuple(warnings), bound_at_c=bound_at_c, solids=solids, ph_with_metals=ph_metals,
            ph_at_preparation=None if prep_ph is None else float(prep_ph[n])))
    return out


def _with_metal_figures(problem: Problem, ids: list[str], base_rows: np.ndarray, col: dict[str, int],
                        metal_conc: dict[str, float]) -> list[tuple[dict[str, float], dict[str, float],
                                                                    tuple[SolidSaturation, ...], float | None]]:
    """Per mix, with the spec's metals present: (metal -> exact bound fraction, worst over the use
    and grid temperatures; metal -> its temperature [°C]; the solids of the metals at the use or
    preparation temperature; the pH at the use temperature).  One batch for every mix."""
    spec, n = problem.spec, len(base_rows)
    if not spec.metals:
        return [({}, {}, (), None)] * n
    solution_rows = base_rows.copy()
    for r, v in metal_conc.items():
        solution_rows[:, col[r]] += v
    window = (spec.temperature_c, *problem.data.grid_temperatures_c)
    rows = np.vstack([np.repeat(solution_rows, len(window), axis=0), solution_rows])
    temps = np.concatenate([np.tile(window, n), np.full(n, spec.prep_temperature_c)])
    eq = solve_equilibrium(ids, rows, temps, catalog=problem.catalog, activity=problem.activity,
                           fixed_ionic_strength_mol_l=problem.fixed_ionic_strength_mol_l)
    bound, at_c = _bound_fractions(problem, ids, base_rows, eq, len(window), len(window))
    use = np.arange(n) * len(window)
    solids = saturation_of_metals(eq, np.concatenate([use, n * len(window) + np.arange(n)]), n,
                                  {m.metal for m in spec.metals}, problem.catalog)
    return [({k: float(v[i]) for k, v in bound.items()}, {k: float(v[i]) for k, v in at_c.items()}, solids[i],
             float(eq.ph[use[i]])) for i in range(n)]


def verification_misses(spec: BufferSpec, verified: VerifiedFigures) -> list[str]:
    """What the exact engine finds outside the spec: the pH band (loads, temperature window),
    each metal's bound-fraction limit, and with ``no_precipitate`` a supersaturated solid of
    a listed metal (not one that forms slowly, which :func:`precipitation_notes` only warns of)."""
    low, high = spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph
    misses = [f"with {c.conc_mol_l * 1000:g} mM {c.kind} at {c.temperature_c:g} °C the exact pH is "
              f"{_outside(c.ph, low, high)}" for c in verified.ph_under_loads if not c.within_band]
    if spec.temperature_min_c is not None:
        misses += [f"at {t:g} °C the exact pH is {_outside(ph, low, high)}"
                   for t, ph in verified.ph_by_temperature.items()
                   if not low - BAND_SLACK_PH <= ph <= high + BAND_SLACK_PH]
    for limit in spec.metals:
        f = verified.bound_fraction.get(limit.metal)
        if f is not None and not f <= limit.max_bound_fraction:
            shown, _ = apart(100 * f, 100 * limit.max_bound_fraction, decimals=1)
            misses.append(f"{ion_label(limit.metal)} {shown} % bound at "
                          f"{verified.bound_at_c.get(limit.metal, verified.temperature_c):g} °C "
                          f"(limit {100 * limit.max_bound_fraction:g} %)")
    if spec.no_precipitate:
        misses += precipitation_misses(verified.solids)
    return misses


def _outside(ph: float, low: float, high: float) -> str:
    """``7.3496, outside 7.3500-7.4500``: digits enough to show the pH beyond the nearer end."""
    shown, end = apart(ph, low if abs(ph - low) < abs(ph - high) else high)
    decimals = len(end.partition(".")[2])
    return f"{shown}, outside {low:.{decimals}f}-{high:.{decimals}f}"


def _titrant(problem: Problem, mix: dict[str, float], ph: float) -> str:
    """The titrant in the mix (HCl first, else the base), else the one that moves the pH the right way."""
    target = problem.spec.ph
    acid, base = problem.allowed.acid_id, problem.allowed.base_id
    fixed = dict(problem.spec.fixed_amounts)
    candidates = [r for r in (acid, base) if r and r in mix and mix[r] > 0 and r not in fixed]
    if not candidates:
        candidates = [r for r in ([acid] if ph > target else [base]) if r]
    if not candidates:
        raise SolverError(f"the verified pH {ph:.4f} misses the target {target:g} and no titrant may correct it")
    return candidates[0]


def correct_titrant(problem: Problem, mix: dict[str, float]) -> tuple[dict[str, float], bool]:
    """Bring the exact pH at the use temperature to the target by a 1-D root find.

    The titrant already in the mix is adjusted (the acid titrant, else the base); without
    one the admitted titrant that moves the pH the right way is added (the ``acid_id`` and
    ``base_id`` of :func:`selector.admissible.admissible`).  Returns (mix [mol/L], corrected).

    Raises
    ------
    SolverError
        no admitted titrant can bring the pH to the target.
    """
    target = problem.spec.ph
    ph = exact_ph(problem, mix)
    if abs(ph - target) <= PH_CORRECT_TOL:
        return mix, False
    titrant = _titrant(problem, mix, ph)
    start = mix.get(titrant, 0.0)

    def miss(amount: float) -> float:
        trial = dict(mix)
        trial[titrant] = amount
        return exact_ph(problem, trial) - target

    low, high = 0.0, max(2.0 * start, start + 1e-3)
    for _ in range(MAX_BRACKET_DOUBLINGS):
        if np.sign(miss(low)) != np.sign(miss(high)):
            break
        high *= 2.0
    else:
        raise SolverError(f"the verified pH {ph:.4f} misses the target {target:g}; the titrant cannot correct it")
    from scipy.optimize import brentq  # heavy (about a second to import); only here

    amount = brentq(miss, low, high, xtol=1e-12, rtol=1e-10)
    out = dict(mix)
    out[titrant] = amount
    return {r: v for r, v in out.items() if v > 0}, True


def ph_uncertainty_of(problem: Problem, mix: dict[str, float]) -> float | None:
    """u(pH) of a mix [mol/L] at the use temperature (constants and activity model,
    :func:`selector.chemistry.uncertainty.propagate_uncertainty`); None without a figure."""
    ids = list(mix)
    eq = solve_equilibrium(ids, [[mix[r] for r in ids]], problem.spec.temperature_c, catalog=problem.catalog,
                           activity=problem.activity, strict=False)
    value = float(propagate_uncertainty(eq, problem.catalog, problem.activity).ph[0])
    return value if np.isfinite(value) else None


def correct_and_verify(problem: Problem, mixes: list[dict[str, float]], preparation: bool = False
                       ) -> tuple[list[dict[str, float]], list[VerifiedFigures], list[bool]]:
    """Each mix [mol/L] brought to the target pH by its titrant and verified exactly
    (``preparation``: also its pH at the preparation temperature, :func:`verify_mixes`).

    All mixes are verified in one batch (:func:`verify_mixes`); only those whose verified pH
    at the use temperature misses the target by more than :data:`PH_CORRECT_TOL` are
    corrected (:func:`correct_titrant`) and verified again.  Returns (mixes, figures,
    corrected), one each per mix.

    Raises
    ------
    SolverError
        no admitted titrant can bring a mix to the target pH.
    """
    mixes = list(mixes)
    figures = verify_mixes(problem, mixes, preparation) if mixes else []
    corrected = [False] * len(mixes)
    off = [n for n, f in enumerate(figures) if abs(f.ph - problem.spec.ph) > PH_CORRECT_TOL]
    for n in off:
        mixes[n], corrected[n] = correct_titrant(problem, mixes[n])
    again = [n for n in off if corrected[n]]
    for n, f in zip(again, verify_mixes(problem, [mixes[n] for n in again], preparation) if again else []):
        figures[n] = f
    return mixes, figures, corrected
