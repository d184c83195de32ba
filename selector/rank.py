"""Ranking of buffer systems: the optimiser's model with one system allowed at a time.

For each admitted system s the model of :mod:`selector.optimise` is solved with y_s = 1
and every other y fixed at 0 (one model, re-used; only the fixings and the activity
parameters change), which gives the cheapest feasible mix of that system alone.  Systems
that cannot meet the spec get the elastic re-solve's conflict in words; systems the spec
excludes keep the admissibility reason.  Every feasible mix is verified with the exact
engine in one batch.  Because the same model is solved, the top system by cost costs
exactly what :func:`selector.optimise.solve_min_cost` finds with ``max_systems=1``.

The pKa shown is the conditional pKa of the step nearest the target at the use
temperature and the verified ionic strength:

    pKa'_j = pKa_j(T) + log10 γ₁ · (z_j² − z_{j−1}²)

with z_{j−1}, z_j the charges of the acid and base forms of step j, γ₁ the unit-charge
activity coefficient (Davies by default) and pKa_j(T) from the integrated van 't Hoff
equation (:func:`selector.chemistry.thermo.pka_at_temperature`).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

from catalog import Catalog, load_catalog
from selector.admissible import admissible, conditional_pka
from selector.errors import InfeasibleSpecError, InputError
from selector.optimise import (
    Problem,
    VerifiedFigures,
    binding_constraints,
    correct_and_verify,
    initial_ionic_strength,
    make_problem,
    solve_problem,
    verification_misses,
)
from selector.prices import PriceBook, demo_price_book
from selector.spec import BufferSpec

__all__ = ["SORTS", "RankedSystem", "cheapest_mix_of", "conditional_pka", "rank_systems"]


@dataclass(frozen=True)
class RankedSystem:
    """One system's place in the ranking.  Figures are verified (exact engine); None
    where the system is excluded or infeasible."""

    system_id: str
    name: str
    feasible: bool
    reason: str
    rank: int | None = None
    reagents_mol_l: dict[str, float] = field(default_factory=dict)
    conc_mol_l: float | None = None
    pka_at_use: float | None = None
    distance_ph: float | None = None
    capacity_mol_l_per_ph: float | None = None
    dph_dt_per_k: float | None = None
    dilution_value_ph: float | None = None
    ionic_strength_mol_l: float | None = None
    bound_fraction: dict[str, float] = field(default_factory=dict)
    cost_per_l: float | None = None
    cost_for_volume: float | None = None
    cost_per_plate: float | None = None
    binding: tuple[str, ...] = ()
    excluded: bool = False

    def as_json(self) -> dict:
        return {
            "system": self.system_id, "name": self.name, "feasible": self.feasible, "reason": self.reason,
            "rank": self.rank, "reagents": dict(self.reagents_mol_l), "conc_mol_l": self.conc_mol_l,
            "pka_at_use": self.pka_at_use, "distance_ph": self.distance_ph,
            "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph, "dph_dt_per_k": self.dph_dt_per_k,
            "dilution_value_ph": self.dilution_value_ph, "ionic_strength_mol_l": self.ionic_strength_mol_l,
            "bound_fraction": dict(self.bound_fraction), "cost_per_l": self.cost_per_l,
            "cost_for_volume": self.cost_for_volume, "cost_per_plate": self.cost_per_plate,
            "binding": list(self.binding),
        }


def cheapest_mix_of(system_id: str, spec: BufferSpec, prices: PriceBook | None = None,
                    catalog: Catalog | None = None, activity: str = "davies") -> RankedSystem:
    """The ranking's row of one system: its cheapest verified mix for ``spec``, or why not.

    Solves only that system (the same model as :func:`rank_systems`), so a recipe sized by
    capacity or loads uses exactly the concentration the ranking shows.
    """
    rows = rank_systems(spec, prices, catalog, activity=activity, only=system_id)
    return next(r for r in rows if r.system_id == system_id)


def rank_systems(spec: BufferSpec, prices: PriceBook | None = None, catalog: Catalog | None = None,
                 sort: str = "cost", activity: str = "davies", ideal: bool = False,
                 only: str | None = None) -> tuple[RankedSystem, ...]:
    """Every catalog system for ``spec``: feasible ones ranked, then infeasible, then excluded.

    Parameters
    ----------
    sort : "cost" (cheapest first), "distance" (pKa' nearest the target first), "capacity"
        (largest verified β first) or "drift" (smallest |dpH/dT| first); see :data:`SORTS`
    catalog : Catalog, default :func:`catalog.load_catalog` (the one used throughout)
    only : solve just this system (the others are left out of the result's feasible rows)

    Returns
    -------
    tuple of RankedSystem
        feasible systems carry ``rank`` 1.. and verified figures; the others a reason.

    Raises
    ------
    InputError
        an unknown sort; the message lists the valid ones.
    """
    if sort not in SORTS:
        raise InputError(f"unknown sort {sort!r}; choose one of: {', '.join(SORTS)}")
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    allowed = admissible(spec, catalog, prices)
    guess_i = 0.0 if ideal else initial_ionic_strength(spec)
    excluded_rows = [RankedSystem(e.system_id, catalog.systems[e.system_id].name, False, e.reason,
                                  pka_at_use=conditional_pka(e.system_id, spec.ph, spec.temperature_c, guess_i,
                                                             catalog, activity), excluded=True)
                     for e in allowed.excluded]
    if not allowed.systems:
        return tuple(excluded_rows)
    problem = make_problem(spec, prices, catalog, max_systems=1, activity=activity, ideal=ideal, allowed=allowed)
    systems = [s for s in problem.data.system_ids if only is None or s == only]
    feasible, infeasible = _solve_each(problem, systems, guess_i)
    mixes, verified, _ = correct_and_verify(problem, [c.mix for c in feasible])
    feasible = [_Candidate(c.system_id, mix, c.binding) for c, mix in zip(feasible, mixes)]
    ranked = []
    for candidate, figures in zip(feasible, verified):
        misses = verification_misses(spec, figures)
        if misses:   # the linear model's mix fails the exact check: not feasible
            infeasible.append((candidate.system_id, "exact check: " + "; ".join(misses)))
            continue
        ranked.append(_figures_of(candidate, figures, problem))
    ranked.sort(key=lambda f: (SORT_KEYS[sort](f), f.cost_per_l, f.system_id))
    rows = [_ranked_row(f, i + 1, ranked[0], sort, prices.currency, spec) for i, f in enumerate(ranked)]
    infeasible_rows = [RankedSystem(s, catalog.systems[s].name, False, reason,
                                    pka_at_use=conditional_pka(s, spec.ph, spec.temperature_c, guess_i, catalog,
                                                               activity))
                       for s, reason in infeasible]
    return tuple(rows + infeasible_rows + excluded_rows)


@dataclass(frozen=True)
class _Candidate:
    """A system's cheapest mix [mol/L] (of the linear model, then titrant corrected) and its binding rows."""

    system_id: str
    mix: dict[str, float]
    binding: tuple[str, ...]


def _solve_each(problem: Problem, systems: list[str],
                guess_i: float) -> tuple[list[_Candidate], list[tuple[str, str]]]:
    """Each system alone on the one model: its candidate mix, or (system, conflicts in words)."""
    feasible, infeasible = [], []
    if problem.data.ionic_strength_mol_l != guess_i:
        problem.recompute(guess_i)
    start = problem.data     # every system starts from the coefficients at the guessed I
    try:
        for system_id in systems:
            problem.restrict_to_system(system_id)
            if problem.data is not start:
                problem.use_data(start)
            try:
                solve_problem(problem, f"{system_id} alone")
            except InfeasibleSpecError as error:
                infeasible.append((system_id, "; ".join(error.conflicts)))
                continue
            x = problem.amounts()
            mix = {r: float(v) for r, v in zip(problem.data.reagent_ids, x) if v > 0}
            feasible.append(_Candidate(system_id, mix, binding_constraints(problem, x)))
    finally:
        problem.release_systems()
    return feasible, infeasible


@dataclass(frozen=True)
class _Figures:
    """A feasible system's verified figures (every one present, unlike a RankedSystem's)."""

    system_id: str
    name: str
    mix: dict[str, float]
    conc_mol_l: float
    pka_at_use: float
    distance_ph: float
    capacity_mol_l_per_ph: float
    dph_dt_per_k: float
    dilution_value_ph: float
    ionic_strength_mol_l: float
    bound_fraction: dict[str, float]
    cost_per_l: float
    binding: tuple[str, ...]


def _figures_of(candidate: _Candidate, figures: VerifiedFigures, problem: Problem) -> _Figures:
    spec, catalog = problem.spec, problem.catalog
    cost = problem.prices.cost(candidate.mix, 1.0, catalog) or 0.0
    pka = conditional_pka(candidate.system_id, spec.ph, spec.temperature_c, figures.ionic_strength_mol_l,
                          catalog, problem.activity)
    return _Figures(
        candidate.system_id, catalog.systems[candidate.system_id].name, candidate.mix, figures.buffer_conc_mol_l,
        pka, abs(pka - spec.ph), figures.capacity_mol_l_per_ph, figures.dph_dt_per_k, figures.dilution_value_ph,
        figures.ionic_strength_mol_l, dict(figures.bound_fraction), cost, candidate.binding)


#: Orders of the ranking: sort name → key of a feasible system (smaller first).
SORT_KEYS: dict[str, Callable[[_Figures], float]] = {
    "cost": lambda f: f.cost_per_l,
    "distance": lambda f: f.distance_ph,
    "capacity": lambda f: -f.capacity_mol_l_per_ph,
    "drift": lambda f: abs(f.dph_dt_per_k),
}
#: The names of the orders (``--sort``).
SORTS: tuple[str, ...] = tuple(SORT_KEYS)
#: The opening words of the top system's reason, per sort.
LEADS = {"cost": "cheapest", "distance": "pKa' nearest the target", "capacity": "largest capacity",
         "drift": "smallest temperature drift"}


def _ranked_row(f: _Figures, rank: int, top: _Figures, sort: str, currency: str, spec: BufferSpec) -> RankedSystem:
    """The row of a feasible system with its rank and a sentence saying why it stands there."""
    needs = f"needs {f.conc_mol_l * 1000:.3g} mM"
    limit = f" for {f.binding[0]}" if f.binding else ""
    where = f"pKa' {f.pka_at_use:.2f} is {f.distance_ph:.2f} from the target"
    if rank == 1:
        reason = f"{LEADS[sort]}: {needs}{limit}; {where}"
    elif sort == "cost" and top.cost_per_l:
        reason = f"{f.cost_per_l / top.cost_per_l:.2f}× the cost of {top.system_id}; {needs}{limit}; {where}"
    else:
        reason = f"{needs}{limit}; {where}; {f.cost_per_l:.3g} {currency}/L"
    return RankedSystem(
        f.system_id, f.name, True, reason, rank=rank, reagents_mol_l=f.mix, conc_mol_l=f.conc_mol_l,
        pka_at_use=f.pka_at_use, distance_ph=f.distance_ph, capacity_mol_l_per_ph=f.capacity_mol_l_per_ph,
        dph_dt_per_k=f.dph_dt_per_k, dilution_value_ph=f.dilution_value_ph,
        ionic_strength_mol_l=f.ionic_strength_mol_l, bound_fraction=f.bound_fraction, cost_per_l=f.cost_per_l,
        cost_for_volume=f.cost_per_l * spec.volume_l,
        cost_per_plate=f.cost_per_l * spec.volume_l / spec.plates if spec.plates else None, binding=f.binding)
