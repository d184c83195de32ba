"""What the model minimises: a registry of objectives, name → :class:`Objective`.

- ``cost``: Σ_r c_r x_r with c_r = price_r M_r / (1000 purity_r) [currency per L per mol/L],
  plus 10⁻⁶ Σ x_r to break ties.
- ``ionic-strength``: I, plus 10⁻⁶·cost.
- ``temperature-drift``: the temperature slope of the charge balance |∂R/∂T| at the target
  pH (for a fixed β floor the pH slope is −(∂R/∂T)/(∂R/∂pH) = (∂R/∂T)/β, so at β = β_min
  this minimises |dpH/dT|; the verified dpH/dT is reported), plus 10⁻⁸·cost.
- ``reagents``: Σ z_r (the number of reagents), plus 10⁻⁶·cost.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import pyomo.core as pyo

from selector.errors import InputError
from selector.optimise.blocks import charge_at
from selector.optimise.data import ModelData

#: Weight of Σ x_r [per mol/L] that breaks ties between mixes of equal cost.
TIE_BREAK_PER_MOL_L = 1e-6
#: Weight of the cost under the other objectives (the cheapest of the equally good mixes).
COST_WEIGHT = 1e-6
#: Weight of the cost under the drift objective (the slope is small: about 10⁻⁴ per K).
DRIFT_COST_WEIGHT = 1e-8


@dataclass(frozen=True)
class ObjectiveTerms:
    """The linear terms an objective is made of (Pyomo expressions of one model)."""

    model: Any        # the Pyomo model (the drift objective adds its own variable and rows)
    data: ModelData
    cost: Any         # Σ_r c_r x_r [currency/L]
    ionic: Any        # I [mol/L]
    total: Any        # Σ_r x_r [mol/L]
    reagent_count: Any  # Σ_r z_r, or None without reagent binaries


@dataclass(frozen=True)
class Objective:
    """One objective of the registry.

    Attributes
    ----------
    name : its name (``--objective``)
    expression : builds the expression to minimise from the model's terms
    needs_reagent_binaries : whether the model needs z_r (one binary per reagent)
    has_sensitivity : whether its duals have a unit a reader can act on (currency per litre)
    """

    name: str
    expression: Callable[[ObjectiveTerms], Any]
    needs_reagent_binaries: bool = False
    has_sensitivity: bool = False


def cost_objective(terms: ObjectiveTerms) -> Any:
    """Σ_r c_r x_r + 10⁻⁶ Σ_r x_r."""
    return terms.cost + TIE_BREAK_PER_MOL_L * terms.total


def ionic_strength_objective(terms: ObjectiveTerms) -> Any:
    """I + 10⁻⁶·cost."""
    return terms.ionic + COST_WEIGHT * terms.cost


def temperature_drift_objective(terms: ObjectiveTerms) -> Any:
    """|∂R/∂T| at the target pH (a variable above ± the slope) + 10⁻⁸·cost."""
    m, data = terms.model, terms.data
    m.drift = pyo.Var(bounds=(0.0, None))
    step_k = float(data.point_temperature_c[data.point("dhi")] - data.point_temperature_c[data.point("dlo")])
    slope = (charge_at(m, "dhi") - charge_at(m, "dlo")) / step_k
    m.drift_pos = pyo.Constraint(expr=m.drift >= slope)
    m.drift_neg = pyo.Constraint(expr=m.drift >= -slope)
    return m.drift + DRIFT_COST_WEIGHT * terms.cost


def reagent_count_objective(terms: ObjectiveTerms) -> Any:
    """Σ_r z_r + 10⁻⁶·cost."""
    return terms.reagent_count + COST_WEIGHT * terms.cost


#: The objectives by name (iteration order is the order offered to users).
OBJECTIVES: Mapping[str, Objective] = MappingProxyType({
    o.name: o for o in (
        Objective("cost", cost_objective, has_sensitivity=True),
        Objective("ionic-strength", ionic_strength_objective),
        Objective("temperature-drift", temperature_drift_objective),
        Objective("reagents", reagent_count_objective, needs_reagent_binaries=True),
    )
})


def objective_named(name: str) -> Objective:
    """The objective ``name``.

    Raises
    ------
    InputError
        an unknown name; the message lists the valid ones.
    """
    try:
        return OBJECTIVES[name]
    except (KeyError, TypeError):
        raise InputError(f"unknown objective {name!r}; choose one of: {', '.join(OBJECTIVES)}") from None
