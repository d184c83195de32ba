"""Model pieces the designs share: reagents over a pH range, coefficients per member, the
batched exact check and titrant correction, and the one call into the recipe package.

Every design here rests on the optimiser's observation (:mod:`selector.optimise`): at a
fixed pH and fixed activity coefficients every species is a fixed fraction of its system's
total, so the charge balance, β and I of a composition are linear in its reagent amounts
(:func:`selector.chemistry.linear.linear_coefficients`).  A design with N members (series
members, grid pHs, wells) takes those coefficients at N points in one call, builds one
Pyomo model over all members, solves it with the optimiser's strict HiGHS wrapper
(:class:`selector.optimise.Solver`) and checks every member with the exact engine in one
batch (:func:`selector.chemistry.equilibrium.solve_equilibrium`).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any, Sequence

import numpy as np

from catalog import Catalog
from selector.admissible import Admissible, admissible
from selector.chemistry.equilibrium import Equilibrium, composition_ph, solve_equilibrium
from selector.chemistry.linear import LinearCoefficients, linear_coefficients
from selector.errors import InfeasibleSpecError, InputError
from selector.prices import PriceBook
from selector.spec import BufferSpec

#: Amounts below this are zero [mol/L] (solver noise).
AMOUNT_ZERO_MOL_L = 1e-10
#: Newton steps of the batched titrant (and salt) correction.
CORRECTION_STEPS = 8
#: The correction stops when every pH is this close to its target [pH] ...
CORRECTION_TOL_PH = 1e-5
#: ... and every ionic strength this close, relative, to its target.
CORRECTION_TOL_RELATIVE_I = 1e-6
#: Activity rounds stop when every member's I changes by less than this [mol/L]
#: (the optimiser's tolerance, :data:`selector.optimise.ACTIVITY_TOL_MOL_L`).
ACTIVITY_TOL_MOL_L = 1e-4
#: At most this many activity rounds.
MAX_ROUNDS = 12


def admitted_each(spec: BufferSpec, ph_values: Sequence[float], catalog: Catalog,
                  prices: PriceBook) -> list[Admissible]:
    """What the spec admits at each of ``ph_values`` (:func:`selector.admissible.admissible`)."""
    return [admissible(dataclasses.replace(spec, ph=float(p)), catalog, prices) for p in ph_values]


def admitted_over(each: Sequence[Admissible]) -> Admissible:
    """The union of what is admitted at each member's pH.

    A system is admitted when it is admitted at one member's pH at least (its useful range
    then covers part of the design); a system excluded at every pH keeps the reason given
    at the middle pH.  A design lets a member use only what its own pH admits
    (:func:`admitted_mask`).

    Raises
    ------
    InfeasibleSpecError
        no system is admitted at any pH of the design.
    """
    systems = list(dict.fromkeys(s for a in each for s in a.systems))
    reagents = list(dict.fromkeys(r for a in each for r in a.reagents))
    middle = each[len(each) // 2]
    excluded = tuple(e for e in middle.excluded if e.system_id not in systems)
    if not systems:
        raise InfeasibleSpecError("no buffer system is admitted anywhere in the pH range: every one is excluded",
                                  [f"{e.system_id}: {e.reason}" for e in excluded])
    first = each[0]
    return Admissible(tuple(systems), tuple(reagents), first.acid_id, first.base_id, first.salt_id, excluded,
                      first.not_in_stock)


def admitted_mask(each: Sequence[Admissible], reagent_ids: Sequence[str]) -> np.ndarray:
    """[N, R] True where member n's pH admits reagent r."""
    return np.array([[r in set(a.reagents) for r in reagent_ids] for a in each], dtype=bool)


def system_columns(coefficients: LinearCoefficients) -> list[int | None]:
    """Per reagent, the column of its system in ``coefficients.system_ids`` (None: titrant or salt)."""
    out: list[int | None] = []
    for row in coefficients.system_units:
        hit = np.flatnonzero(row)
        out.append(int(hit[0]) if hit.size else None)
    return out


def coefficients_at(reagent_ids: Sequence[str], ph: np.ndarray, temperature_c: float,
                    ionic_strength_mol_l: np.ndarray, catalog: Catalog) -> LinearCoefficients:
    """Linear coefficients of every reagent at N points (pH [N], I [N] mol/L) in one call."""
    return linear_coefficients(list(reagent_ids), np.asarray(ph, dtype=float), temperature_c,
                               np.asarray(ionic_strength_mol_l, dtype=float), catalog)


def model_ionic_strength(ionic: np.ndarray, water_ionic: np.ndarray, amounts_mol_l: np.ndarray) -> np.ndarray:
    """I [N] of the linear model: Σ_r i_r x_r + ½([H⁺] + [OH⁻]) per point (ionic [N, R],
    water_ionic [N], amounts [N, R] or [R] mol/L)."""
    return np.sum(ionic * amounts_mol_l, axis=1) + water_ionic


def solve_strict(model: Any) -> str:
    """Solve a Pyomo model with the optimiser's strict HiGHS wrapper: 'optimal' or 'infeasible'.

    Raises
    ------
    SolverError
        any other status (:meth:`selector.optimise.Solver.solve`).
    """
    from selector.optimise import Solver

    return Solver().solve(model)


def hold_binaries(variables: Any, values: dict[Any, int]) -> None:
    """Hold each binary of the indexed Pyomo variable at ``values`` (the optimiser's
    :func:`selector.optimise.solve.hold_binary`: fixed and continuous, so the model is an LP)."""
    from selector.optimise.solve import hold_binary

    for key, value in values.items():
        hold_binary(variables[key], value)


@dataclass(frozen=True)
class Titration:
    """What the batched correction may move: the acid and base titrant and the salt columns."""

    acid: int | None
    base: int | None
    salt: int | None


def titration_columns(reagent_ids: Sequence[str], allowed: Admissible) -> Titration:
    """Columns of the admitted titrants and salt in ``reagent_ids`` (None where absent)."""
    ids = list(reagent_ids)

    def column(reagent_id: str | None) -> int | None:
        return ids.index(reagent_id) if reagent_id in ids else None
    return Titration(column(allowed.acid_id), column(allowed.base_id), column(allowed.salt_id))


def correct_batch(reagent_ids: Sequence[str], amounts_mol_l: np.ndarray, target_ph: np.ndarray,
                  temperature_c: float, catalog: Catalog, columns: Titration,
                  target_ionic_mol_l: np.ndarray | None = None) -> tuple[np.ndarray, Equilibrium]:
    """Bring every row's exact pH (and I) to its target by Newton steps on the titrant (and salt).

    Parameters
    ----------
    reagent_ids : the columns of ``amounts_mol_l``
    amounts_mol_l : [N, R] the linear model's compositions [mol/L]
    target_ph : [N] target pH at ``temperature_c`` [°C]
    columns : the titrant and salt columns (:func:`titration_columns`)
    target_ionic_mol_l : [N] target I [mol/L], or None (the salt is not moved)

    Returns
    -------
    (amounts [N, R], the exact equilibrium of the corrected rows)

    Notes
    -----
    One batch of the exact engine per step for all rows.  The Van Slyke capacity β is
    dpH-per-mol of strong base at fixed activity coefficients, so a row ΔpH short of its
    target needs β ΔpH mol/L more base, or that much less acid (the titrant already in the
    row; the base where the row has neither and must go up, else the acid).  The salt
    moves by ΔI / i_salt (i_salt the salt's ionic-strength coefficient, 1 for a 1:1 salt).
    The optimiser corrects one mix the same way with a root find
    (:func:`selector.optimise.correct_titrant`); here every member's I is held as well.

    A row the admitted titrants cannot move stays where it is: callers check every row's
    pH against their tolerance and report the misses.
    """
    x = np.array(amounts_mol_l, dtype=float)
    ids = list(reagent_ids)
    target_ph = np.asarray(target_ph, dtype=float)
    eq = solve_equilibrium(ids, x, temperature_c, catalog=catalog)
    for _ in range(CORRECTION_STEPS):
        miss = target_ph - eq.ph
        i_miss = (np.zeros_like(miss) if target_ionic_mol_l is None or columns.salt is None
                  else target_ionic_mol_l - eq.ionic_strength_mol_l)
        done = np.abs(miss) < CORRECTION_TOL_PH
        if target_ionic_mol_l is not None and columns.salt is not None:
            done &= np.abs(i_miss) <= CORRECTION_TOL_RELATIVE_I * target_ionic_mol_l
        if done.all():
            return x, eq
        x = _titrant_step(x, miss * eq.capacity_mol_l_per_ph, columns)
        if target_ionic_mol_l is not None and columns.salt is not None:
            x[:, columns.salt] = np.maximum(x[:, columns.salt] + i_miss, 0.0)
        eq = solve_equilibrium(ids, x, temperature_c, catalog=catalog)
    return x, eq


def _titrant_step(x: np.ndarray, base_needed: np.ndarray, columns: Titration) -> np.ndarray:
    """Add ``base_needed`` [N] mol/L of base: less acid where a row holds acid (or holds no
    base and must go down), else more (or less) base; amounts never go below zero, and a row
    without the titrant it needs stays as it is (the caller's check reports it)."""
    x = x.copy()
    n = len(x)
    acid = x[:, columns.acid] if columns.acid is not None else np.zeros(n)
    base = x[:, columns.base] if columns.base is not None else np.zeros(n)
    use_acid = (acid > 0) | ((base <= 0) & (base_needed < 0))
    if columns.acid is None:
        use_acid[:] = False
    if columns.acid is not None:
        x[:, columns.acid] = np.where(use_acid, np.maximum(acid - base_needed, 0.0), acid)
    if columns.base is not None:
        x[:, columns.base] = np.where(use_acid, base, np.maximum(base + base_needed, 0.0))
    return x


def composition_of(reagent_ids: Sequence[str], row: np.ndarray) -> dict[str, float]:
    """Reagent id -> mol/L of the non-zero entries of one row."""
    return {r: float(v) for r, v in zip(reagent_ids, row) if v > AMOUNT_ZERO_MOL_L}


def main_system(composition: dict[str, float], catalog: Catalog) -> str | None:
    """The system holding most of the composition's buffer (None for a salt alone)."""
    totals: dict[str, float] = {}
    for r, v in composition.items():
        reagent = catalog.reagents[r]
        if reagent.system_id:
            totals[reagent.system_id] = totals.get(reagent.system_id, 0.0) + v * reagent.system_units
    return max(totals, key=lambda s: totals[s]) if totals else None


def refuse_metal_options(spec: BufferSpec, design: str) -> None:
    """Refuse metal limits and ``no_precipitate`` for a design that does not check them (a
    series, a span, a plate), in one line, rather than ignore them."""
    if spec.metals or spec.no_precipitate:
        raise InputError(f"a {design} does not check metals: --metal and --no-precipitate (metals, no_precipitate "
                         "in a spec file) are for 'poise rank', 'poise optimise' and 'poise recipe'; "
                         "leave them out here")


def own_ph(composition: dict[str, float], temperature_c: float, catalog: Catalog) -> float:
    """The exact pH of a composition as made (no titration) at ``temperature_c`` [°C]."""
    return composition_ph(composition, temperature_c, catalog)


def system_notes(system_ids: Sequence[str], catalog: Catalog) -> tuple[str, ...]:
    """The catalog's flags of the systems a design uses, in words, with the option that
    leaves each out (a plate or an open beaker meets CO2 exchange, metal precipitation …)."""
    notes = []
    for system_id in system_ids:
        for flag in dict.fromkeys((f.flag, f.detail) for f in catalog.flags_of(system_id)):
            notes.append(f"{system_id}: {flag[1]} (flag {flag[0]}; leave it out with --exclude {flag[0]})")
    return tuple(notes)
