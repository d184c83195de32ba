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

import math
from collections.abc import Collection, Sequence
from dataclasses import dataclass, field, fields, replace
from typing import Any

from catalog import Catalog, load_catalog
from selector.admissible import Admissible, admissible, conditional_pka
from selector.chemistry.complexation import precipitation_notes
from selector.criteria import RULES, Criterion, MixFigures, measure_criteria, weighted_score
from selector.errors import InfeasibleSpecError, InputError, SolverError
from selector.names import resolve_system
from selector.optimise import (
    ActivityRounds,
    Problem,
    Status,
    VerifiedFigures,
    assumed_capacity,
    at_ionic_strengths,
    binding_constraints,
    correct_and_verify,
    explain_rounds,
    initial_ionic_strength,
    make_problem,
    verification_misses,
)
from selector.prices import PriceBook, cost_per_plate, demo_price_book
from selector.profiles import CRITERIA, DEFAULT_PROFILE, profile_weights
from selector.remedies import Remedy, find_remedy
from selector.spec import BufferSpec

__all__ = ["COMPARE_MAX", "SORTS", "RankedSystem", "cheapest_mix_of", "compare_systems", "conditional_pka",
           "rank_systems"]

#: Most systems one comparison shows side by side (a readable table).
COMPARE_MAX = 8


@dataclass(frozen=True)
class RankedSystem:
    """One system's place in the ranking.  Figures are verified (exact engine); None
    where the system is excluded or infeasible.

    ``score`` is the suitability under the profile (0-1), ``criteria`` each criterion's
    value, unit and score (:mod:`selector.criteria`); ``ph_uncertainty`` is u(pH) of the
    verified mix; an infeasible system carries its ``remedy`` (or None and
    ``remedy_reason``)."""

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
    score: float | None = None
    criteria: dict[str, Criterion] = field(default_factory=dict)
    ph_uncertainty: float | None = None
    remedy: Remedy | None = None
    remedy_reason: str | None = None
    saturation_indices: dict[str, float] = field(default_factory=dict)
    precipitation: tuple[str, ...] = ()
    ph_with_metals: float | None = None

    def as_json(self) -> dict:
        return {
            "system": self.system_id, "name": self.name, "feasible": self.feasible, "rank": self.rank,
            "score": self.score, "criteria": {k: c.as_json() for k, c in self.criteria.items()},
            "reason": self.reason, "reagents": dict(self.reagents_mol_l), "conc_mol_l": self.conc_mol_l,
            "pka_at_use": self.pka_at_use, "distance_ph": self.distance_ph,
            "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph, "dph_dt_per_k": self.dph_dt_per_k,
            "dilution_value_ph": self.dilution_value_ph, "ionic_strength_mol_l": self.ionic_strength_mol_l,
            "ph_uncertainty": self.ph_uncertainty,
            "bound_fraction": dict(self.bound_fraction), "cost_per_l": self.cost_per_l,
            "cost_for_volume": self.cost_for_volume, "cost_per_plate": self.cost_per_plate,
            "binding": list(self.binding), "excluded": self.excluded,
            "remedy": None if self.remedy is None else self.remedy.as_json(),
            **({"remedy_reason": self.remedy_reason} if not self.feasible else {}),
            **({"metal_bound_fraction": dict(self.bound_fraction), "saturation_indices": dict(self.saturation_indices),
                "precipitation": list(self.precipitation), "ph_with_metals": self.ph_with_metals}
               if self.bound_fraction else {}),
        }


def cheapest_mix_of(system_id: str, spec: BufferSpec, prices: PriceBook | None = None,
                    catalog: Catalog | None = None, activity: str = "davies") -> RankedSystem:
    """The ranking's row of one system: its cheapest verified mix for ``spec``, or why not.

    Solves only that system (the same model as :func:`rank_systems`, criteria and remedies
    not assessed), so a recipe sized by capacity or loads uses exactly the concentration
    the ranking shows.
    """
    rows = rank_systems(spec, prices, catalog, activity=activity, only=system_id, assess=False)
    return next(r for r in rows if r.system_id == system_id)


def compare_systems(names: Sequence[str], spec: BufferSpec, prices: PriceBook | None = None,
                    catalog: Catalog | None = None, activity: str = "davies") -> tuple[RankedSystem, ...]:
    """The rows of the named systems for ``spec``, in the order named, scored among themselves.

    Each name resolves through :func:`selector.names.resolve_system` (with "did you mean");
    the criteria, the score (under the spec's profile) and the remedies are those of
    :func:`rank_systems` solved for these systems only, so ``cost`` is scored against the
    cheapest of them.

    Raises
    ------
    InputError
        an unknown name, a name given twice, or fewer than 2 or more than :data:`COMPARE_MAX`
        systems.
    """
    catalog = catalog if catalog is not None else load_catalog()
    ids = [resolve_system(name, catalog) for name in names]
    if len(set(ids)) != len(ids):
        twice = next(i for i in ids if ids.count(i) > 1)
        raise InputError(f"system {twice} is named twice; name each system once")
    if not 2 <= len(ids) <= COMPARE_MAX:
        raise InputError(f"compare takes 2 to {COMPARE_MAX} systems, got {len(ids)}")
    rows = {r.system_id: r for r in rank_systems(spec, prices, catalog, activity=activity, only=ids)}
    return tuple(rows[i] for i in ids)


@dataclass
class _Outcome:
    """Solved systems of one spec: verified feasible figures, infeasible (id, reason), excluded rows."""

    feasible: list[MixFigures]
    infeasible: list[tuple[str, str]]
    excluded: list[RankedSystem]
    currency: str
    #: what the spec admits (None: solved over a concentration range, several specs)
    allowed: Admissible | None = None
    #: per infeasible system, its nearest mix's value of each violated limit a spec field sets
    #: (:func:`selector.optimise.conflicts.nearest_values`): where its remedy's search starts
    nearest: dict[str, dict[str, float]] = field(default_factory=dict)


def rank_systems(spec: BufferSpec, prices: PriceBook | None = None, catalog: Catalog | None = None,
                 sort: str = "score", activity: str = "davies", ideal: bool = False,
                 only: str | Collection[str] | None = None, assess: bool = True) -> tuple[RankedSystem, ...]:
    """Every catalog system for ``spec``: feasible ones ranked, then infeasible, then excluded.

    Parameters
    ----------
    sort : "score" (the suitability under the spec's profile and weights, highest first;
        :mod:`selector.profiles`) or one criterion of :data:`selector.profiles.CRITERIA`
        (best value first: "cost" cheapest, "distance" pKa' nearest the target, "capacity"
        largest β per mM, "drift" smallest |dpH/dT| …); see :data:`SORTS`
    catalog : Catalog, default :func:`catalog.load_catalog` (the one used throughout)
    only : solve just this system (or these systems)
    assess : measure the criteria, score, and search a remedy for each infeasible system
        (False: the cheapest mixes only, ordered by cost unless ``sort`` says otherwise)

    Returns
    -------
    tuple of RankedSystem
        feasible systems carry ``rank`` 1.. and verified figures; the others a reason.

    Raises
    ------
    InputError
        an unknown sort; the message lists the valid ones.

    Notes
    -----
    With a concentration range (``buffer_conc_min_mol_l`` .. ``buffer_conc_max_mol_l``)
    each system is first solved without a concentration (its cheapest mix meeting the
    capacity and loads); below the range it is re-solved at the low end, above it at the
    high end (where it is infeasible, with the reason).  Without capacity or loads the low
    end is taken.
    """
    if sort not in SORTS:
        raise InputError(f"unknown sort {sort!r}; choose one of: {', '.join(SORTS)}")
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    wanted = None if only is None else ({only} if isinstance(only, str) else set(only))
    if spec.buffer_conc_min_mol_l is not None:
        outcome = _solve_over_range(spec, prices, catalog, activity, ideal, wanted)
    else:
        outcome = _solve_spec(spec, prices, catalog, activity, ideal, wanted)
    if not assess:
        ordered = sorted(outcome.feasible, key=lambda f: (f.cost_per_l, f.system_id))
        rows = [_plain_row(f, i + 1, spec) for i, f in enumerate(ordered)]
        return tuple(rows + _infeasible_rows(outcome.infeasible, spec, catalog, activity, ideal)
                     + outcome.excluded)
    rows = _assessed_rows(outcome, spec, catalog, activity, sort)
    infeasible = _infeasible_rows(outcome.infeasible, spec, catalog, activity, ideal)
    if infeasible:
        allowed = outcome.allowed if outcome.allowed is not None else admissible(spec, catalog, prices)
        fixed = {r for r, _ in spec.fixed_amounts}

        def check(changed: BufferSpec, system_id: str) -> tuple[bool, float | None]:
            if _same_problem(changed, spec):    # the ranking's own solve: infeasible
                return False, None
            # Only this system's reagents, the titrants, salt and fixed amounts in stock: the
            # same one-system model, built smaller.
            own = tuple(r for r in allowed.reagents
                        if catalog.reagents[r].system_id in (None, system_id) or r in fixed)
            return _feasible_alone(replace(changed, in_stock=own), prices, catalog, activity, ideal, system_id)
        infeasible = [_with_remedy(r, find_remedy(r.system_id, spec, check, catalog.systems[r.system_id].short_name,
                                                  outcome.nearest.get(r.system_id))) for r in infeasible]
    return tuple(rows + infeasible + outcome.excluded)


def _same_problem(changed: BufferSpec, spec: BufferSpec) -> bool:
    """Whether ``changed`` asks what ``spec`` asks: equal but for a capacity left out where
    ``spec``'s is the one assumed without it (:func:`selector.optimise.assumed_capacity`)."""
    return assumed_capacity(changed) == assumed_capacity(spec) and all(
        getattr(changed, f.name) == getattr(spec, f.name) for f in fields(spec) if f.name != "capacity_mol_l_per_ph")


def _feasible_alone(spec: BufferSpec, prices: PriceBook, catalog: Catalog, activity: str, ideal: bool,
                    system_id: str) -> tuple[bool, float | None]:
    """(whether ``system_id`` alone meets ``spec``, its buffer concentration [mol/L]); only
    this system (and those of the fixed amounts) is judged for admission."""
    if spec.buffer_conc_min_mol_l is not None:
        outcome = _solve_over_range(spec, prices, catalog, activity, ideal, {system_id}, judge_only=True)
    else:
        outcome = _solve_spec(spec, prices, catalog, activity, ideal, {system_id}, judge_only=True)
    found = min(outcome.feasible, key=lambda f: (f.cost_per_l, f.system_id), default=None)
    return (True, found.conc_mol_l) if found is not None else (False, None)


def _solve_spec(spec: BufferSpec, prices: PriceBook, catalog: Catalog, activity: str, ideal: bool,
                wanted: set[str] | None, judge_only: bool = False) -> _Outcome:
    """Each admitted (and wanted) system alone on one model, verified in one batch
    (``judge_only``: admission judges only the wanted systems)."""
    allowed = admissible(spec, catalog, prices, only=wanted if judge_only else None)
    guess_i = 0.0 if ideal else initial_ionic_strength(spec)
    excluded_rows = [RankedSystem(e.system_id, catalog.systems[e.system_id].name, False, e.reason,
                                  pka_at_use=conditional_pka(e.system_id, spec.ph, spec.temperature_c, guess_i,
                                                             catalog, activity), excluded=True,
                                  remedy_reason="the spec excludes it; no single numeric change was searched")
                     for e in allowed.excluded if wanted is None or e.system_id in wanted]
    if not allowed.systems:
        return _Outcome([], [], excluded_rows, prices.currency, allowed)
    problem = make_problem(spec, prices, catalog, max_systems=1, activity=activity, ideal=ideal, allowed=allowed)
    systems = [s for s in problem.data.system_ids if wanted is None or s in wanted]
    feasible, unmet = _solve_each(problem, systems, guess_i)
    infeasible = [(s, miss.reason) for s, miss in unmet]
    # the criteria's preparation pH rides in the verification batch (not for a remedy check,
    # which measures no criteria, nor ideal: the criteria solve it with activities)
    mixes, verified, _ = correct_and_verify(problem, [c.mix for c in feasible],
                                            preparation=not (ideal or judge_only))
    feasible = [_Candidate(c.system_id, mix, c.binding) for c, mix in zip(feasible, mixes)]
    figures = []
    for candidate, checked in zip(feasible, verified):
        misses = verification_misses(spec, checked)
        if misses:   # the linear model's mix fails the exact check: not feasible
            infeasible.append((candidate.system_id, "exact check: " + "; ".join(misses)))
            continue
        figures.append(_figures_of(candidate, checked, problem))
    return _Outcome(figures, infeasible, excluded_rows, prices.currency, allowed,
                    {s: miss.nearest for s, miss in unmet if miss.nearest})


def _solve_over_range(spec: BufferSpec, prices: PriceBook, catalog: Catalog, activity: str, ideal: bool,
                      wanted: set[str] | None, judge_only: bool = False) -> _Outcome:
    """The lowest concentration in the spec's range meeting capacity and loads, per system."""
    low, high = spec.buffer_conc_min_mol_l, spec.buffer_conc_max_mol_l
    assert low is not None and high is not None
    def plain(conc: float | None) -> BufferSpec:
        return replace(spec, buffer_conc_mol_l=conc, buffer_conc_min_mol_l=None, buffer_conc_max_mol_l=None)

    at_low = plain(low)
    if spec.capacity_mol_l_per_ph is None and not spec.loads:
        return replace(_solve_spec(at_low, prices, catalog, activity, ideal, wanted, judge_only), allowed=None)
    free = _solve_spec(plain(None), prices, catalog, activity, ideal, wanted, judge_only)
    below = {f.system_id for f in free.feasible if f.conc_mol_l < low}
    above = {f.system_id for f in free.feasible if f.conc_mol_l > high * (1 + RANGE_SLACK)}
    kept = [f for f in free.feasible if f.system_id not in below | above]
    infeasible = list(free.infeasible)
    nearest = dict(free.nearest)
    for ids, conc in ((below, low), (above, high)):
        if ids:
            again = _solve_spec(plain(conc), prices, catalog, activity, ideal, ids, judge_only)
            kept += again.feasible
            infeasible += again.infeasible
            nearest.update(again.nearest)
    return _Outcome(kept, infeasible, free.excluded, free.currency, nearest=nearest)


@dataclass(frozen=True)
class _Miss:
    """Why a system alone meets no mix (conflicts in words) and its nearest mix's values
    (:attr:`selector.errors.InfeasibleSpecError.nearest`)."""

    reason: str
    nearest: dict[str, float]


@dataclass(frozen=True)
class _Candidate:
    """A system's cheapest mix [mol/L] (of the linear model, then titrant corrected) and its binding rows."""

    system_id: str
    mix: dict[str, float]
    binding: tuple[str, ...]


def _solve_each(problem: Problem, systems: list[str],
                guess_i: float) -> tuple[list[_Candidate], list[tuple[str, _Miss]]]:
    """Each system alone on the one model: its candidate mix, or (system, why not).

    The systems' activity rounds run side by side: each round solves every system still
    iterating (its own choice, coefficients and simplex basis put back first), then the
    coefficients of all of them at their new ionic strengths come from one engine call
    (:func:`selector.optimise.data.at_ionic_strengths`).  Each system's first solve starts
    from scratch and each later one from its own last basis, so a system's mix is the same
    whichever systems are ranked beside it.  A system whose rounds hold reagents of their
    own (after round 8), or that turns out infeasible, is finished alone at once.
    """
    if problem.data.ionic_strength_mol_l != guess_i:
        problem.recompute(guess_i)
    start = problem.data     # every system starts from the coefficients at the guessed I
    data_of = dict.fromkeys(systems, start)
    rounds_of: dict[str, ActivityRounds] = {}
    basis_of: dict[str, Any] = {}
    found: dict[str, _Candidate | _Miss] = {}
    waiting = list(systems)
    try:
        while waiting:
            wanted: list[tuple[str, float, tuple[int, ...]]] = []
            for system_id in waiting:
                problem.restrict_to_system(system_id)
                if problem.data is not data_of[system_id]:
                    problem.use_data(data_of[system_id])
                rounds = rounds_of.setdefault(system_id, ActivityRounds(problem))
                try:
                    answer = _step(problem, rounds, basis_of.get(system_id))
                    while isinstance(answer, float) and not rounds.shared:    # holds of its own: finish alone
                        problem.recompute(answer)
                        answer = _step(problem, rounds, problem.solver.basis())
                except SolverError as error:    # this system has no answer; the others still do
                    rounds.release()
                    found[system_id] = _Miss(f"no settled mix: {error}", {})
                    data_of[system_id] = problem.data
                    continue
                if isinstance(answer, float):
                    basis_of[system_id] = problem.solver.basis()
                    wanted.append((system_id, answer, problem.focus or ()))
                    continue
                rounds.release()
                found[system_id] = _finished(problem, system_id, *answer)
                data_of[system_id] = problem.data
            if wanted:
                moved = at_ionic_strengths([data_of[s] for s, _, _ in wanted], [i for _, i, _ in wanted],
                                           problem.catalog, problem.activity, [c for _, _, c in wanted])
                data_of.update((s, d) for (s, _, _), d in zip(wanted, moved))
            waiting = [s for s, _, _ in wanted]
    finally:
        for rounds in rounds_of.values():
            rounds.release()
        problem.release_systems()
    feasible = [f for f in (found[s] for s in systems) if isinstance(f, _Candidate)]
    infeasible = [(s, f) for s, f in found.items() if isinstance(f, _Miss)]
    return feasible, sorted(infeasible, key=lambda t: systems.index(t[0]))


def _step(problem: Problem, rounds: ActivityRounds, basis: Any | None) -> tuple[Status, int] | float:
    """One step of a system's activity rounds, the simplex started from ``basis`` (None: from scratch)."""
    problem.solver.start_from(basis)
    return rounds.step()


def _finished(problem: Problem, system_id: str, status: Status, rounds: int) -> _Candidate | _Miss:
    """A system's candidate mix once its rounds ended in ``status``, or why not
    (an infeasible end is explained by the elastic re-solve, :func:`selector.optimise.explain_rounds`)."""
    try:
        explain_rounds(problem, status, rounds, f"{system_id} alone")
    except InfeasibleSpecError as error:
        return _Miss("; ".join(error.conflicts), error.nearest)
    x = problem.amounts()
    mix = {r: float(v) for r, v in zip(problem.data.reagent_ids, x) if v > 0}
    return _Candidate(system_id, mix, binding_constraints(problem, x))


def _figures_of(candidate: _Candidate, figures: VerifiedFigures, problem: Problem) -> MixFigures:
    spec, catalog = problem.spec, problem.catalog
    cost = problem.prices.cost(candidate.mix, 1.0, catalog) or 0.0
    pka = conditional_pka(candidate.system_id, spec.ph, spec.temperature_c, figures.ionic_strength_mol_l,
                          catalog, problem.activity)
    return MixFigures(
        candidate.system_id, catalog.systems[candidate.system_id].name, candidate.mix, figures.buffer_conc_mol_l,
        pka, abs(pka - spec.ph), figures.capacity_mol_l_per_ph, figures.dph_dt_per_k, figures.dilution_value_ph,
        figures.ionic_strength_mol_l, dict(figures.bound_fraction), cost, candidate.binding,
        dict(figures.ph_by_temperature), figures.saturation_indices, tuple(precipitation_notes(figures.solids)),
        figures.ph_with_metals, figures.ph_at_preparation)


#: The names of the orders (``--sort``): the profile's score, then each criterion.
SORTS: tuple[str, ...] = ("score", *CRITERIA)
#: Relative slack on the top of a concentration range (the solver's own tolerance).
RANGE_SLACK = 1e-6


def _sort_key(sort: str, criteria: dict[str, Criterion], score: float) -> float:
    """Smaller first: minus the score, or the criterion's value in its better direction
    (a criterion without a value last)."""
    if sort == "score":
        return -score
    c = criteria.get(sort)
    if c is None or c.value is None:
        return math.inf
    return c.value if RULES[sort].better == "lower" else -c.value


def _assessed_rows(outcome: _Outcome, spec: BufferSpec, catalog: Catalog, activity: str,
                   sort: str) -> list[RankedSystem]:
    """The feasible rows with criteria and score, in the order of ``sort``, each with its reason."""
    weights = profile_weights(spec.profile, spec.weights)
    measured = measure_criteria(outcome.feasible, spec, catalog, activity, outcome.currency)
    scored = [(f, c, weighted_score(c, weights)) for f, c in zip(outcome.feasible, measured)]
    scored.sort(key=lambda t: (_sort_key(sort, t[1], t[2]), t[0].cost_per_l, t[0].system_id))
    top = scored[0] if scored else None
    rows = []
    for i, (f, criteria, score) in enumerate(scored):
        assert top is not None
        runner_up = scored[1] if len(scored) > 1 else None
        reason = _reason(i + 1, (f, criteria, score), top, runner_up, sort, weights, spec.profile or DEFAULT_PROFILE,
                         catalog)
        u = criteria["uncertainty"].value if "uncertainty" in criteria else None
        rows.append(replace(_plain_row(f, i + 1, spec), reason=reason, score=score, criteria=criteria,
                            ph_uncertainty=u))
    return rows


#: A feasible system's figures, criteria and score.
_Scored = tuple[MixFigures, dict[str, Criterion], float]


def _deciding(mine: dict[str, Criterion], theirs: dict[str, Criterion], weights: dict[str, float]) -> str | None:
    """The criterion on which ``mine`` loses most weighted score to ``theirs`` (None: none)."""
    losses = {name: weights.get(name, 0.0) * (theirs[name].score - c.score)
              for name, c in mine.items() if name in theirs}
    name = max(losses, key=lambda k: losses[k], default=None)
    return name if name is not None and losses[name] > 0 else None


def _reason(rank: int, row: _Scored, top: _Scored, runner_up: _Scored | None, sort: str,
            weights: dict[str, float], profile: str, catalog: Catalog) -> str:
    """One sentence naming what decided the place (and what sets the mix); other systems by
    their short names."""
    f, criteria, score = row
    needs = f"needs {f.conc_mol_l * 1000:.4g} mM" + (f" for {f.binding[0]}" if f.binding else "")
    if sort != "score":
        c = criteria.get(sort)
        shown = c.words() if c is not None else "no data"
        lead = "best" if rank == 1 else f"#{rank}"
        return f"{lead} by {RULES[sort].label}: {shown}; {needs}"
    if rank == 1:
        if runner_up is None:
            return f"the only feasible system; {profile} score {score:.3f}; {needs}"
        name = _deciding(runner_up[1], criteria, weights)
        ahead = f"highest {profile} score {score:.3f}, ahead of {catalog.systems[runner_up[0].system_id].short_name} ({runner_up[2]:.3f})"
        if name is None:
            return f"{ahead}; {needs}"
        return f"{ahead} mostly on {RULES[name].label}: {criteria[name].words()} against " \
               f"{runner_up[1][name].words()}; {needs}"
    name = _deciding(criteria, top[1], weights)
    if name is None:
        return f"{profile} score {score:.3f}, level with {catalog.systems[top[0].system_id].short_name} but dearer; {needs}"
    return (f"{profile} score {score:.3f} against {top[2]:.3f} of {catalog.systems[top[0].system_id].short_name}, mostly on "
            f"{RULES[name].label}: {criteria[name].words()} against {top[1][name].words()}; {needs}")


def _plain_row(f: MixFigures, rank: int, spec: BufferSpec) -> RankedSystem:
    """The row of a feasible system: figures and costs, the reason what sets the mix."""
    reason = f"needs {f.conc_mol_l * 1000:.4g} mM" + (f" for {f.binding[0]}" if f.binding else "") + \
        f"; pKa' {f.pka_at_use:.2f} is {f.distance_ph:.2f} from the target"
    return RankedSystem(
        f.system_id, f.name, True, reason, rank=rank, reagents_mol_l=f.mix, conc_mol_l=f.conc_mol_l,
        pka_at_use=f.pka_at_use, distance_ph=f.distance_ph, capacity_mol_l_per_ph=f.capacity_mol_l_per_ph,
        dph_dt_per_k=f.dph_dt_per_k, dilution_value_ph=f.dilution_value_ph,
        ionic_strength_mol_l=f.ionic_strength_mol_l, bound_fraction=f.bound_fraction, cost_per_l=f.cost_per_l,
        cost_for_volume=f.cost_per_l * spec.volume_l,
        cost_per_plate=cost_per_plate(f.cost_per_l, spec.volume_l, spec.plates, spec.wells, spec.well_volume_l),
        binding=f.binding,
        saturation_indices=f.saturation_indices, precipitation=f.precipitation, ph_with_metals=f.ph_with_metals)


def _infeasible_rows(infeasible: list[tuple[str, str]], spec: BufferSpec, catalog: Catalog, activity: str,
                     ideal: bool) -> list[RankedSystem]:
    guess_i = 0.0 if ideal else initial_ionic_strength(spec)
    return [RankedSystem(s, catalog.systems[s].name, False, reason,
                         pka_at_use=conditional_pka(s, spec.ph, spec.temperature_c, guess_i, catalog, activity))
            for s, reason in infeasible]


def _with_remedy(row: RankedSystem, found: tuple[Remedy | None, str | None]) -> RankedSystem:
    remedy, why_not = found
    return replace(row, remedy=remedy, remedy_reason=why_not)
