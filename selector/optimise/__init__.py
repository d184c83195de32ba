"""The minimum-cost buffer: a small MILP over reagent amounts, solved with HiGHS.

At a fixed pH and fixed activity coefficients the charge balance, buffer capacity, ionic
strength, osmolarity and trace-metal binding of a mix are linear in the reagent amounts
(:mod:`selector.chemistry.linear`).  :func:`build_min_cost_model` turns those coefficients into a
Pyomo model; :func:`solve_min_cost` builds it, iterates the activity coefficients,
solves with HiGHS, checks the status strictly and verifies the mix with the exact
forward engine (:func:`selector.chemistry.equilibrium.solve_equilibrium`).  Only plain frozen records
leave this package.

The model
---------
Variables: x_r ≥ 0 mol/L of reagent r; y_s ∈ {0, 1} system s used; optionally
z_r ∈ {0, 1} reagent r used.  With q_r(p, T) the charge per mol of r at pH p and
temperature T, w(p, T) = [H⁺] − [OH⁻], R(p, T) = Σ_r q_r x_r + w:

    x_r ≤ U_r y_s(r)                    U_r = min(solubility_r / M_r, 1 mol/L)
    Σ_s y_s ≤ k                         (at most k systems)
    x_r ≤ U_r z_r,  Σ_r z_r ≤ m         (at most m reagents, when asked)
    R(p, T_use) = 0                     (the target pH at the use temperature)
    R(p − δ, T_k) ≥ L_acid              for every T_k of the grid (acid load, window)
    R(p + δ, T_k) ≤ −L_base             (base load, window)
    β(p, T_use) = Σ_r b_r x_r + ln10([H⁺] + [OH⁻]) ≥ β_min
    Σ_s C_s = Σ_r,s u_rs x_r = c        (buffer concentration, if given)
    I = Σ_r i_r x_r + ½([H⁺] + [OH⁻]) = I*, or I_lo ≤ I ≤ I_hi
    osm_lo ≤ Σ_r n_r x_r + [H⁺] + [OH⁻] ≤ osm_hi
    Σ_r ρ_Mr x_r ≤ f_M / (1 − f_M)      (at most f_M of trace metal M bound)
    x_r = a_r                           (fixed amounts)

R falls monotonically with pH, so the two load rows hold the pH inside [p − δ, p + δ]
under the loads at every grid temperature.  The grid is five temperatures spanning the
spec's window (``temperature_min_c`` .. ``temperature_max_c``) or the use temperature
alone; load rows are written only when there is a load or a window.

Objectives (a registry, :data:`OBJECTIVES`, in :mod:`selector.optimise.objectives`):
``cost`` Σ_r c_r x_r with c_r = price_r M_r / (1000 purity_r) [currency per L per mol/L]
plus 10⁻⁶ Σ x_r to break ties; ``ionic-strength`` I; ``temperature-drift`` the temperature
slope of the charge balance |∂R/∂T| at the target pH; ``reagents`` Σ z_r.  The last three
add a small multiple of the cost.

Activity: the coefficients are computed at an ionic strength I; after each solve I is
recomputed from the mix, the model's mutable parameters are updated (the model is not
rebuilt) and it is solved again until I changes by less than 10⁻⁴ mol/L.

Infeasible specs: every constraint group has an elastic slack variable, fixed at zero in
the normal solve.  On infeasibility the slacks are freed and their weighted sum (each
relative to its right-hand side) is minimised; the groups left with slack are the
conflict, reported in words with the nearest mix's figures.

The package, in the order a solve runs through it:

- :mod:`~selector.optimise.data`: the problem as numbers (:class:`ModelData`);
- :mod:`~selector.optimise.blocks`: one ``add_*`` function per constraint group, each
  returning typed :class:`Row` records (kind, sense, bound, words, slacks) that the
  binding, conflict and sensitivity reports read;
- :mod:`~selector.optimise.objectives`: the objectives by name;
- :mod:`~selector.optimise.model`: :func:`build_min_cost_model` (pure);
- :mod:`~selector.optimise.solve`: the strict HiGHS solve and the activity rounds;
- :mod:`~selector.optimise.verify`: the exact forward check and the titrant correction;
- :mod:`~selector.optimise.reports`, :mod:`~selector.optimise.conflicts`: binding rows,
  sensitivity, the elastic re-solve and the conflict in words;
- :mod:`~selector.optimise.result`: the frozen records; :mod:`~selector.optimise.min_cost`:
  :func:`solve_min_cost`.
"""

from __future__ import annotations

from selector.optimise.blocks import DualNote, Row, RowKind
from selector.optimise.conflicts import conflict_error, conflicts_at, elastic_solve, infeasible_error
from selector.optimise.data import (
    CONC_CAP_MOL_L,
    DEFAULT_CAPACITY_MOL_L_PER_PH,
    ELASTIC_CAP_MOL_L,
    GRID_POINTS,
    ModelData,
    assumed_capacity,
    at_ionic_strengths,
    initial_ionic_strength,
    model_data,
    temperature_grid,
)
from selector.optimise.min_cost import PH_REPORT_TOL, explain_rounds, finish, make_result, solve_min_cost, solve_problem
from selector.optimise.model import MinCostModel, build_min_cost_model, update_model
from selector.optimise.objectives import OBJECTIVES, Objective, objective_named
from selector.optimise.reports import binding_constraints, sensitivity
from selector.optimise.result import LoadCheck, OptimisationResult, VerifiedFigures
from selector.optimise.solve import (
    ACTIVITY_TOL_MOL_L,
    MAX_ACTIVITY_ROUNDS,
    ActivityRounds,
    Problem,
    Solver,
    Status,
    make_problem,
    quiet_solver_output,
    solve_rounds,
)
from selector.optimise.verify import (
    correct_and_verify,
    correct_titrant,
    exact_ph,
    verification_misses,
    verify_mixes,
)

__all__ = [
    "ACTIVITY_TOL_MOL_L",
    "ActivityRounds",
    "CONC_CAP_MOL_L",
    "DEFAULT_CAPACITY_MOL_L_PER_PH",
    "ELASTIC_CAP_MOL_L",
    "GRID_POINTS",
    "MAX_ACTIVITY_ROUNDS",
    "OBJECTIVES",
    "PH_REPORT_TOL",
    "DualNote",
    "LoadCheck",
    "MinCostModel",
    "ModelData",
    "Objective",
    "OptimisationResult",
    "Problem",
    "Row",
    "RowKind",
    "Solver",
    "Status",
    "VerifiedFigures",
    "binding_constraints",
    "assumed_capacity",
    "at_ionic_strengths",
    "build_min_cost_model",
    "conflict_error",
    "conflicts_at",
    "correct_and_verify",
    "correct_titrant",
    "elastic_solve",
    "exact_ph",
    "explain_rounds",
    "finish",
    "infeasible_error",
    "initial_ionic_strength",
    "make_problem",
    "make_result",
    "model_data",
    "objective_named",
    "quiet_solver_output",
    "sensitivity",
    "solve_min_cost",
    "solve_problem",
    "solve_rounds",
    "temperature_grid",
    "update_model",
    "verification_misses",
    "verify_mixes",
]
