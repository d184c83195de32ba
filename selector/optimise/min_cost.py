"""The public entry: :func:`solve_min_cost` builds, solves strictly, verifies and returns a frozen result."""

from __future__ import annotations

from dataclasses import replace

from catalog import Catalog
from selector.errors import InfeasibleSpecError, SolverError
from selector.optimise.conflicts import conflict_error, infeasible_error
from selector.optimise.reports import binding_constraints, sensitivity
from selector.optimise.result import OptimisationResult, VerifiedFigures
from selector.optimise.solve import Problem, Status, make_problem, solve_rounds
from selector.optimise.verify import correct_and_verify, ph_uncertainty_of, verification_misses
from selector.prices import PriceBook, cost_per_plate
from selector.spec import BufferSpec

#: A verified pH this far from target is never reported [pH].
PH_REPORT_TOL = 0.005


def solve_problem(problem: Problem, what: str = "no mix meets the spec") -> int:
    """Solve with activity rounds; the number of rounds, or the conflict as an error.

    An infeasible solve is followed by an elastic solve at a self-consistent ionic
    strength.  If its nearest mix meets every row, the first solve's guessed I was the
    trouble and the model is solved once more; otherwise the conflict is raised.

    Raises
    ------
    InfeasibleSpecError
        no mix meets the spec; the message starts with ``what``, ``conflicts`` in words.
    SolverError
        HiGHS ended in another status, or the activity rounds did not settle.
    """
    status, rounds = solve_rounds(problem)
    return explain_rounds(problem, status, rounds, what)


def explain_rounds(problem: Problem, status: Status, rounds: int, what: str = "no mix meets the spec") -> int:
    """The end of :func:`solve_problem` after its first activity rounds ended in ``status``:
    the number of rounds, or (infeasible) the elastic solve and the conflict as an error."""
    if status == "optimal":
        return rounds
    error = infeasible_error(problem, what)
    if error is None:
        status, more = solve_rounds(problem)
        rounds += more
        if status == "optimal":
            return rounds
        error = infeasible_error(problem, what) or conflict_error(what, [])
    raise error


def solve_min_cost(spec: BufferSpec, prices: PriceBook | None = None, catalog: Catalog | None = None,
                   max_systems: int = 2, max_reagents: int | None = None, objective: str = "cost",
                   activity: str = "davies", ideal: bool = False) -> OptimisationResult:
    """The cheapest mix (or best by ``objective``) meeting ``spec``, verified exactly.

    Parameters
    ----------
    spec : BufferSpec
    prices : PriceBook, default the catalog's demo prices
    catalog : Catalog, default :func:`catalog.load_catalog` (the one used throughout)
    max_systems : at most this many buffer systems in the mix (k)
    max_reagents : at most this many reagents (titrant and salt included), or None
    objective : a name of :data:`selector.optimise.OBJECTIVES` ("cost", "ionic-strength",
        "temperature-drift" or "reagents")
    activity : activity model name (see :mod:`selector.chemistry.activity`)
    ideal : activity coefficients 1 (I = 0 in the model and the check); for checks on paper

    Returns
    -------
    OptimisationResult
        the mix [mol/L], its cost, the verified figures (exact engine), binding rows, sensitivity.

    Raises
    ------
    InfeasibleSpecError
        no mix meets the spec; ``conflicts`` names the clashing constraints in words.
    SolverError
        HiGHS ended in any status other than optimal or infeasible, or the verified pH
        cannot be brought within 0.005 of the target.
    InputError
        bad arguments (objective, k, m) or a reagent without a price.
    """
    problem = make_problem(spec, prices, catalog, max_systems, max_reagents, objective, activity, ideal)
    return finish(problem, solve_problem(problem))


def finish(problem: Problem, rounds: int, extra_binding: tuple[str, ...] = ()) -> OptimisationResult:
    """Result of the model's current optimal solution: correct, verify, cost, words.

    Raises
    ------
    SolverError
        the verified pH is more than 0.005 from the target.
    InfeasibleSpecError
        the exact engine finds the mix outside the band under a load or over the window.
    """
    data = problem.data
    x = problem.amounts()
    binding = binding_constraints(problem, x) + extra_binding
    notes = sensitivity(problem)
    mix = {r: float(v) for r, v in zip(data.reagent_ids, x) if v > 0}
    mixes, figures, flags = correct_and_verify(problem, [mix])
    mix, verified, corrected = mixes[0], figures[0], flags[0]
    if abs(verified.ph - problem.spec.ph) > PH_REPORT_TOL:
        raise SolverError(f"the verified pH {verified.ph:.4f} is more than {PH_REPORT_TOL} from the target "
                          f"{problem.spec.ph:g}; no result reported")
    misses = verification_misses(problem.spec, verified)
    if misses:
        raise InfeasibleSpecError("the cheapest mix of the linear model fails the exact check, so it is not "
                                  "reported as optimal: " + "; ".join(misses), misses)
    verified = replace(verified, ph_uncertainty=ph_uncertainty_of(problem, mix))
    return make_result(problem, mix, verified, binding, notes, rounds, corrected)


def make_result(problem: Problem, mix: dict[str, float], verified: VerifiedFigures, binding: tuple[str, ...],
                notes: tuple[str, ...], rounds: int, corrected: bool) -> OptimisationResult:
    """The frozen result of a verified mix [mol/L]: cost per litre, for the volume, per plate."""
    spec, catalog, prices = problem.spec, problem.catalog, problem.prices
    breakdown = {r: float(v or 0.0) for r, v in prices.cost_breakdown(mix, 1.0, catalog).items()}
    cost = float(sum(breakdown.values()))
    dominant = max(breakdown, key=lambda r: breakdown[r]) if breakdown else ""
    systems = tuple(dict.fromkeys(s for s in (catalog.reagents[r].system_id for r in mix) if s))
    return OptimisationResult(
        status="optimal", objective=problem.data.objective, reagents_mol_l=mix, systems=systems,
        cost_per_l=cost, currency=prices.currency, volume_l=spec.volume_l, cost_for_volume=cost * spec.volume_l,
        cost_per_plate=cost_per_plate(cost, spec.volume_l, spec.plates, spec.wells, spec.well_volume_l),
        cost_breakdown_per_l=breakdown, dominant_reagent=dominant, verified=verified, binding=binding,
        sensitivity=notes, activity_rounds=rounds, corrected=corrected, assumptions=problem.assumptions,
        excluded={e.system_id: e.reason for e in problem.allowed.excluded})
