"""The Pyomo model of a :class:`~selector.optimise.data.ModelData`: pure, nothing solved.

:func:`build_min_cost_model` declares the constraint groups of
:mod:`selector.optimise.blocks` in a fixed order (the order pins the LP file), the objective
of the registry (:mod:`selector.optimise.objectives`) and the elastic objective, and
returns a :class:`MinCostModel`: the Pyomo model with the typed rows the reports read.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import pyomo.core as pyo

from selector.optimise import blocks
from selector.optimise.blocks import Row
from selector.optimise.data import ModelData
from selector.optimise.objectives import ObjectiveTerms, objective_named

#: Weight of the cost in the elastic objective (the cheapest of the nearest mixes).
ELASTIC_COST_WEIGHT = 1e-6


@dataclass(frozen=True)
class MinCostModel:
    """A built model and the rows the reports read.

    Attributes
    ----------
    model : the Pyomo model (objective ``objective`` active, ``elastic`` deactivated)
    charge : the target-pH row (charge balance at the use point)
    rows : the spec's rows in report order: loads and window (per grid temperature, acid
        then base), capacity, buffer concentration, ionic strength, osmolarity, metal limits,
        then the per-reagent upper bounds
    binaries : y_s, then z_r where the model has them
    """

    model: Any
    charge: Row
    rows: tuple[Row, ...]
    binaries: tuple[Any, ...]

    @property
    def slacks(self) -> tuple[Any, ...]:
        """Every elastic slack variable, the target pH's first."""
        return self.charge.slacks + tuple(v for row in self.rows for v in row.slacks)


def build_min_cost_model(data: ModelData) -> MinCostModel:
    """The Pyomo model of ``data`` (pure: no solve).  See :mod:`selector.optimise` for the maths.

    Coefficients that depend on the ionic strength are mutable Params (q, qw, b, bw, ci,
    ciw, rho) so the activity rounds update them in place (:func:`update_model`).  Elastic
    slacks (``s_*``) are fixed at zero; the elastic objective is deactivated.
    """
    objective = objective_named(data.objective)
    m = pyo.ConcreteModel(name="poise_min_cost")
    blocks.add_parameters(m, data)
    blocks.add_amounts(m)
    upper = blocks.add_reagent_bounds(m, data)
    blocks.add_system_choice(m, data)
    z: tuple[Any, ...] = ()
    if data.max_reagents is not None or objective.needs_reagent_binaries:
        z = blocks.add_reagent_count(m, data, data.max_reagents)
    charge = blocks.add_charge_balance(m)
    holds = blocks.add_load_holds(m, data)
    ionic = blocks.ionic_expression(m)
    m.ionic_strength = pyo.Expression(expr=ionic)
    rows = (holds + blocks.add_capacity(m, data) + blocks.add_buffer_conc(m, data)
            + blocks.add_ionic_strength(m, data, ionic) + blocks.add_osmolarity(m, data)
            + blocks.add_metal_limits(m, data) + upper)
    for r, amount in data.fixed_mol_l:
        m.x[r].fix(amount)

    cost = pyo.quicksum(float(data.cost_per_mol[i]) * m.x[r] for i, r in enumerate(data.reagent_ids))
    m.cost_per_l = pyo.Expression(expr=cost)
    terms = ObjectiveTerms(model=m, data=data, cost=cost, ionic=ionic,
                           total=pyo.quicksum(m.x[r] for r in data.reagent_ids),
                           reagent_count=pyo.quicksum(z) if z else None)
    m.objective = pyo.Objective(expr=objective.expression(terms))
    built = MinCostModel(m, charge, rows, tuple(m.y.values()) + z)
    weighted = (charge,) + rows
    m.elastic = pyo.Objective(expr=pyo.quicksum(row.weight * v for row in weighted for v in row.slacks)
                              + ELASTIC_COST_WEIGHT * cost)
    m.elastic.deactivate()
    return built


def update_model(built: MinCostModel, data: ModelData, previous: ModelData | None = None) -> blocks.Written:
    """Write the ionic-strength-dependent coefficients of ``data`` into the model's Params
    (:func:`selector.optimise.blocks.write_parameters`; with ``previous``, the data the
    Params hold now, only the reagents whose coefficients differ); what was written."""
    return blocks.write_parameters(built.model, data, previous)
