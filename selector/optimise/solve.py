"""Solving: a persistent HiGHS solve with a strict status map, and the activity rounds.

:class:`Solver` answers ``"optimal"`` (solution loaded) or ``"infeasible"``; any other
HiGHS status is a :class:`~selector.errors.SolverError` — never half a result.
:func:`solve_rounds` iterates the activity coefficients: after each solve I is recomputed
from the mix, the model's mutable parameters are updated (the model is not rebuilt) and it
is solved again until I changes by less than 10⁻⁴ mol/L.  Only the first round and a
confirming last round are MILPs: in between, the choice of systems is held and the rounds
are LPs.

Silence.  HiGHS prints a banner from C++ straight to file descriptor 1 when an instance is
made.  Each HiGHS call that may print runs inside :func:`quiet_solver_output`: for its
duration only, descriptors 1 and 2 go to the null device (no reader threads, nothing to
join in a threaded server), one call at a time under a lock (the descriptors are the
process's).  Nothing is installed at import.

Speed.  The model is handed to HiGHS once (:class:`selector.optimise.highs_link.HighsLink`)
and only what changed is written between solves: the Params of an activity round, a held
or released system choice, the elastic slacks, the active objective.
"""

from __future__ import annotations

import contextlib
import functools
import os
import sys
import threading
from collections.abc import Iterator
from dataclasses import dataclass, field
from typing import Any, Literal

import highspy
import numpy as np
import pyomo.core as pyo  # the modelling components only: pyomo.environ loads every plugin (0.3-0.6 s)

from catalog import Catalog, load_catalog
from selector.admissible import Admissible, admissible
from selector.errors import InfeasibleSpecError, InputError, SolverError
from selector.optimise.blocks import Written
from selector.optimise.data import (
    DEFAULT_CAPACITY_MOL_L_PER_PH,
    ModelData,
    at_ionic_strength,
    ionic_strength_of,
    model_data,
)
from selector.optimise.highs_link import HighsLink
from selector.optimise.model import MinCostModel, build_min_cost_model, update_model
from selector.optimise.objectives import objective_named
from selector.prices import PriceBook, demo_price_book
from selector.spec import BufferSpec

Status = Literal["optimal", "infeasible"]
#: Activity rounds stop when I changes by less than this [mol/L].
ACTIVITY_TOL_MOL_L = 1e-4
MAX_ACTIVITY_ROUNDS = 12
#: From this round on, a change of I of the other sign than the last one (the rounds
#: oscillate) takes the mean of the two ionic strengths instead (under-relaxation, common
#: practice for a fixed-point iteration whose slope is near −1; the fixed point is the same).
DAMP_FROM_ROUND = 3
#: Rounds after which the systems are held fixed so the rounds converge (no switching).
SWITCH_ROUNDS = 6
#: Amounts below this are zero [mol/L] (solver noise).
AMOUNT_ZERO_MOL_L = 1e-10
#: Relative MIP gap asked of HiGHS.
MIP_GAP = 1e-9
#: HiGHS options for models this small (about 150 rows and columns, a few dozen binaries,
#: branch-and-bound done at the root): presolve and the primal heuristics cost more than
#: they save, and one thread avoids starting workers for a solve of a millisecond.  None of
#: them changes what is optimal (the gap stays MIP_GAP).  Measured side by side on the
#: README specs: warm optimise about 35 % less CPU time (benchmarks/bench_rank.py).
HIGHS_OPTIONS: dict[str, Any] = {"presolve": "off", "threads": 1, "mip_heuristic_effort": 0.0,
                                 "mip_heuristic_run_feasibility_jump": False}

_QUIET_LOCK = threading.RLock()


@contextlib.contextmanager
def quiet_solver_output() -> Iterator[None]:
    """Silence HiGHS for the duration: fds 1 and 2 to the null device, no reader threads.

    Holds a process-wide lock (solves from several threads run one at a time) and restores
    both descriptors on the way out, whatever happens inside.
    """
    with _QUIET_LOCK:
        for stream in (sys.stdout, sys.stderr):
            try:
                stream.flush()
            except (AttributeError, ValueError):
                pass
        saved = [os.dup(1), os.dup(2)]
        devnull = os.open(os.devnull, os.O_WRONLY)
        try:
            os.dup2(devnull, 1)
            os.dup2(devnull, 2)
            yield
        finally:
            os.dup2(saved[0], 1)
            os.dup2(saved[1], 2)
            for fd in (*saved, devnull):
                os.close(fd)


#: HiGHS model status → the answer of :meth:`Solver.solve` (any other status is a SolverError).
#: The model is bounded (every x in [0, 5 mol/L], binaries in {0, 1}, slacks ≥ 0 with
#: non-negative weights, objective bounded below), so "infeasible or unbounded" can only
#: mean infeasible.
STATUS: dict[Any, Status] = {
    highspy.HighsModelStatus.kOptimal: "optimal",
    highspy.HighsModelStatus.kInfeasible: "infeasible",
    highspy.HighsModelStatus.kUnboundedOrInfeasible: "infeasible",
}


class Solver:
    """A persistent HiGHS solve of one model with a strict status map.

    The first :meth:`solve` hands the model to HiGHS (:class:`HighsLink`); later solves of
    the same model pass on only what changed.
    """

    def __init__(self) -> None:
        with quiet_solver_output():
            self.highs = highspy.Highs()
            self.highs.setOptionValue("output_flag", False)
        self.highs.setOptionValue("log_to_console", False)
        self.highs.setOptionValue("mip_rel_gap", MIP_GAP)
        for option, value in HIGHS_OPTIONS.items():
            self.highs.setOptionValue(option, value)
        self.link: HighsLink | None = None

    def run(self) -> Any:
        """Run HiGHS on the model as it stands; its model status."""
        with quiet_solver_output():
            self.highs.run()
        return self.highs.getModelStatus()

    def solve(self, m: pyo.ConcreteModel, warm: bool = False, written: Written | None = None) -> Status:
        """'optimal' (solution loaded), 'infeasible', or SolverError for anything else.

        ``warm`` hands HiGHS the variables' current values as a starting MIP solution;
        ``written`` is every write into the model's Params since the last solve
        (:meth:`HighsLink.sync`; None: every Param is read back).
        """
        try:
            if self.link is None or self.link.model is not m:
                self.highs.clearModel()
                self.link = HighsLink(m, self.highs)
            self.link.sync(written)
            if warm:
                self.link.set_start()
            status = self.run()
        except Exception as error:  # highspy raises assorted types on a failed solve
            raise SolverError(f"HiGHS failed: {error}") from None
        answer = STATUS.get(status)
        if answer is None:
            raise SolverError(f"HiGHS stopped without a trustworthy answer (status: {self.highs.modelStatusToString(status)})")
        if answer == "optimal":
            self.link.load_solution()
        return answer

    def basis(self) -> Any:
        """The simplex basis of the last solve (for :meth:`start_from`)."""
        return self.highs.getBasis()

    def start_from(self, basis: Any | None) -> None:
        """Start the next solve of this model from ``basis`` (:meth:`basis` of an earlier solve),
        or from scratch (None): either way nothing of the solves in between carries over."""
        if basis is None or self.highs.setBasis(basis) != highspy.HighsStatus.kOk:
            self.highs.clearSolver()

    def duals(self) -> dict[Any, float]:
        """Row duals of the last (optimal) solve: Pyomo constraint → ∂objective/∂rhs."""
        if self.link is None or self.link.solution is None:
            raise SolverError("no solve to read duals from")
        return self.link.duals()


@dataclass
class Problem:
    """Everything a solve of one spec needs; holds the one model and its solver.

    ``data`` is replaced (and the model's Params updated) by :meth:`recompute` in each
    activity round; everything else stays.
    """

    spec: BufferSpec
    allowed: Admissible
    prices: PriceBook
    catalog: Catalog
    data: ModelData
    built: MinCostModel
    solver: Solver
    activity: str
    ideal: bool
    assumptions: tuple[str, ...] = ()
    #: Reagent columns whose coefficients the activity rounds recompute (None: every one);
    #: set by :meth:`restrict_to_system` to the system's reagents and those of no system.
    focus: tuple[int, ...] | None = None
    #: The system :meth:`restrict_to_system` holds the choice at (None: the choice is free).
    held_system: str | None = None
    #: Every write into the model's Params since the last :meth:`solve` (:meth:`use_data`).
    written: Written = field(default_factory=list)
    #: :meth:`columns_of` per system.
    system_columns: dict[str, tuple[int, ...]] = field(default_factory=dict)

    @property
    def model(self) -> Any:
        """The Pyomo model."""
        return self.built.model

    @property
    def fixed_ionic_strength_mol_l(self) -> float | None:
        """I the exact engine is held at [mol/L]: 0 for an ideal problem, else None (solved)."""
        return 0.0 if self.ideal else None

    def recompute(self, ionic_strength_mol_l: float) -> None:
        """Coefficients at ionic strength I [mol/L], written into the model."""
        self.use_data(at_ionic_strength(self.data, ionic_strength_mol_l, self.catalog, self.activity, self.focus))

    def use_data(self, data: ModelData) -> None:
        """Coefficients computed before (by :meth:`recompute`, for this problem), written into the model."""
        previous, self.data = self.data, data
        self.written += update_model(self.built, data, previous)

    def solve(self, warm: bool = False) -> Status:
        """Solve the model as it stands (:meth:`Solver.solve`), passing on the Params written since the last solve."""
        written, self.written = self.written, []
        return self.solver.solve(self.model, warm, written)

    @functools.cached_property
    def amount_vars(self) -> tuple[Any, ...]:
        """The model's x_r, in the order of ``data.reagent_ids``."""
        return tuple(self.model.x[r] for r in self.data.reagent_ids)

    def amounts(self) -> np.ndarray:
        """x [mol/L] of the model's current solution, solver noise set to zero."""
        x = np.array([v.value for v in self.amount_vars], dtype=float)
        x[np.abs(x) < AMOUNT_ZERO_MOL_L] = 0.0
        return np.maximum(x, 0.0)

    def restrict_to_system(self, system_id: str) -> None:
        """Allow only ``system_id`` (y fixed at 1 for it, 0 for the others: an LP, see :func:`hold_binary`).

        From one system to the next only the two choices that change are touched (the
        solves never free a held y; :meth:`release_systems` frees them all).
        """
        y = self.model.y
        if self.held_system is None:
            for s, var in y.items():
                hold_binary(var, 1 if s == system_id else 0)
        elif self.held_system != system_id:
            hold_binary(y[self.held_system], 0)
            hold_binary(y[system_id], 1)
        self.held_system = system_id
        self.focus = self.columns_of(system_id)

    def columns_of(self, system_id: str) -> tuple[int, ...]:
        """Positions of ``system_id``'s reagents and of those of no system (titrants, salt) in
        ``data.reagent_ids`` (worked out once per system)."""
        found = self.system_columns.get(system_id)
        if found is None:
            reagents = self.catalog.reagents
            found = tuple(i for i, r in enumerate(self.data.reagent_ids)
                          if reagents[r].system_id in (None, "", system_id))
            self.system_columns[system_id] = found
        return found

    def release_systems(self) -> None:
        """Undo :meth:`restrict_to_system`."""
        for var in self.model.y.values():
            release_binary(var)
        self.focus = None
        self.held_system = None


def hold_binary(var: Any, value: int) -> None:
    """Fix a binary at ``value`` and make it continuous in [0, 1].

    A model whose binaries are all held is an LP: HiGHS then runs the simplex method
    alone (no branch-and-bound set-up) and gives row duals.  :func:`release_binary` undoes it.
    """
    var.fix(value)
    var.domain = pyo.UnitInterval


def release_binary(var: Any) -> None:
    """Undo :func:`hold_binary`: the variable is a free binary again."""
    var.domain = pyo.Binary
    var.unfix()


def _whole_number(value: object) -> bool:
    return isinstance(value, int) and not isinstance(value, bool) and value >= 1


def make_problem(spec: BufferSpec, prices: PriceBook | None = None, catalog: Catalog | None = None,
                 max_systems: int = 2, max_reagents: int | None = None, objective: str = "cost",
                 activity: str = "davies", ideal: bool = False, allowed: Admissible | None = None) -> Problem:
    """The data, model and solver of ``spec`` (nothing solved yet).

    ``catalog`` defaults to :func:`catalog.load_catalog`, ``prices`` to its demo prices;
    the catalog given is the one used everywhere below.  ``allowed`` is
    :func:`selector.admissible.admissible` of the same spec, catalog and prices when the
    caller has it already.

    Raises
    ------
    InputError
        unknown objective, k or m not a whole number ≥ 1, a reagent without a price.
    InfeasibleSpecError
        the spec admits no buffer system (each exclusion with its reason).
    """
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    objective_named(objective)
    if not _whole_number(max_systems):
        raise InputError(f"max systems must be a whole number >= 1, got {max_systems!r}")
    if max_reagents is not None and not _whole_number(max_reagents):
        raise InputError(f"max reagents must be a whole number >= 1, got {max_reagents!r}")
    allowed = allowed if allowed is not None else admissible(spec, catalog, prices)
    if not allowed.systems:
        conflicts = [f"{e.system_id}: {e.reason}" for e in allowed.excluded]
        raise InfeasibleSpecError("no buffer system is admitted by the spec: every one is excluded", conflicts)
    data = model_data(spec, allowed, prices, catalog, max_systems, max_reagents, objective,
                      0.0 if ideal else None, activity)
    assumptions: tuple[str, ...] = ()
    if spec.capacity_mol_l_per_ph is None and spec.buffer_conc_mol_l is None and not spec.loads:
        assumptions = (f"no concentration, capacity or load given: a capacity of at least "
                       f"{DEFAULT_CAPACITY_MOL_L_PER_PH * 1000:g} mM per pH unit is assumed (common practice)",)
    built = build_min_cost_model(data)
    return Problem(spec, allowed, prices, catalog, data, built, Solver(), activity, ideal, assumptions)


def _hold_choice(problem: Problem, rounds: int, x: np.ndarray, held: list[Any]) -> None:
    """From round 6 hold the systems, from round 8 the unused reagents (so the rounds settle).

    The choice may flip between rounds (two mixes of near-equal cost at different I):
    holding it lets the rounds follow one mix continuously to its fixed point.
    """
    m = problem.model
    if rounds == SWITCH_ROUNDS:
        for var in problem.built.binaries:
            if not var.fixed:
                hold_binary(var, round(pyo.value(var)))
                held.append(var)
    if rounds == SWITCH_ROUNDS + 2:
        for r, v in zip(problem.data.reagent_ids, x):
            if v == 0 and not m.x[r].fixed:
                m.x[r].fix(0.0)
                held.append(m.x[r])


def _hold_free_binaries(problem: Problem) -> list[Any]:
    """Hold every free binary at its value in the current solution (:func:`hold_binary`); those held."""
    held = [var for var in problem.built.binaries if not var.fixed]
    for var in held:
        hold_binary(var, round(pyo.value(var)))
    return held


def _release_all(held: list[Any], binaries: set[int]) -> None:
    """Undo the holds of ``held`` (binaries back to free binaries, amounts unfixed) and empty it."""
    for var in held:
        if id(var) in binaries:
            release_binary(var)
        else:
            var.unfix()
    held.clear()


class ActivityRounds:
    """The activity rounds of one problem, one solve at a time (:func:`solve_rounds` runs
    them to the end).

    :meth:`step` solves once and returns either the answer, ('optimal' or 'infeasible',
    rounds), or the ionic strength [mol/L] the next round needs the coefficients at; the
    caller writes those (:meth:`Problem.recompute` or :meth:`Problem.use_data`) and steps
    again.  While :attr:`shared` holds, the rounds hold nothing in the model of their own
    (no binary or amount fixed by them), so other solves of the same model may run between
    two steps once the caller has put back this problem's choice and coefficients.
    :meth:`release` undoes the holds.
    """

    def __init__(self, problem: Problem) -> None:
        self.problem = problem
        self.rounds = 0
        self.held: list[Any] = []
        self.lp: list[Any] = []     # binaries held at the first MILP's choice: those rounds are LPs
        self.binaries = set(map(id, problem.built.binaries))
        self.confirm = False        # the next solve is the confirming MILP: start it from the settled mix
        self.last_change = 0.0      # signed change of I of the last round [mol/L]

    @property
    def shared(self) -> bool:
        """Whether the rounds hold nothing in the model (see the class)."""
        return not (self.held or self.lp)

    def step(self) -> tuple[Status, int] | float:
        """Solve; the answer (status, rounds), or the ionic strength [mol/L] of the next round.

        Raises
        ------
        SolverError
            the rounds do not settle within 12, or HiGHS ends in another status.
        """
        problem = self.problem
        while True:
            self.rounds += 0 if self.confirm else 1      # the confirming solve is no new activity round
            status = problem.solve(warm=self.confirm)
            self.confirm = False
            if status != "optimal" and self.lp:
                _release_all(self.lp, self.binaries)
                continue
            if status != "optimal" or problem.ideal:
                return status, self.rounds
            x = problem.amounts()
            new_i = ionic_strength_of(problem.data, x)
            change = abs(new_i - problem.data.ionic_strength_mol_l)
            if change < ACTIVITY_TOL_MOL_L:
                if not self.lp:
                    return status, self.rounds
                _release_all(self.lp, self.binaries)    # settled as LPs: confirm with the MILP
                self.confirm = True
                continue
            if self.rounds >= MAX_ACTIVITY_ROUNDS:
                raise SolverError(f"the activity rounds did not settle: ionic strength still moves by "
                                  f"{change:.2g} mol/L after {self.rounds} rounds")
            if self.rounds == 1:
                self.lp = _hold_free_binaries(problem)
            _hold_choice(problem, self.rounds, x, self.held)
            old_i = problem.data.ionic_strength_mol_l
            signed = new_i - old_i
            if self.rounds >= DAMP_FROM_ROUND and signed * self.last_change < 0:
                new_i = 0.5 * (old_i + new_i)
            self.last_change = signed
            return max(new_i, 0.0)

    def release(self) -> None:
        """Undo the holds of the rounds (binaries free again, amounts unfixed)."""
        _release_all(self.lp, self.binaries)
        _release_all(self.held, self.binaries)


def solve_rounds(problem: Problem) -> tuple[Status, int]:
    """Solve with activity rounds; ('optimal', rounds) or ('infeasible', rounds).

    The first round is the MILP.  The rounds that follow hold its choice of systems (and
    reagents) and are LPs (:func:`hold_binary`); once I has settled, one more MILP round
    with the binaries free confirms the choice at the settled I (the answer is that MILP's;
    if it chooses otherwise, the rounds go on as MILPs).  A held choice that turns
    infeasible at a new I is released and the MILP chooses again.

    Raises
    ------
    SolverError
        the rounds do not settle within 12, or HiGHS ends in another status.
    """
    rounds = ActivityRounds(problem)
    try:
        while True:
            answer = rounds.step()
            if not isinstance(answer, float):
                return answer
            problem.recompute(answer)
    finally:
        rounds.release()
