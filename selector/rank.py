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

from dataclasses import dataclass, field

from catalog import Catalog, load_catalog
from selector.admissible import admissible, conditional_pka
from selector.errors import InputError
from selector.optimise import (
    _amounts,
    _solve_rounds,
    binding_constraints,
    correct_titrant,
    infeasible_or_retry,
    initial_ionic_strength,
    make_problem,
    verification_misses,
    verify_mixes,
)
from selector.prices import PriceBook, demo_price_book
from selector.spec import BufferSpec

SORTS = ("cost", "distance", "capacity", "drift")


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
        (largest verified β first) or "drift" (smallest |dpH/dT| first)

    only : solve just this system (the others are left out of the result's feasible rows)

    Returns
    -------
    tuple of RankedSystem
        feasible systems carry ``rank`` 1.. and verified figures; the others a reason.
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
    problem = make_problem(spec, prices, catalog, max_systems=1, activity=activity, ideal=ideal)
    m = problem.model
    feasible, infeasible = [], []
    for system_id in problem.data.system_ids:
        if only is not None and system_id != only:
            continue
        for s, var in m.y.items():
            var.fix(1 if s == system_id else 0)
        if abs(problem.data.ionic_strength_mol_l - guess_i) > 0:
            problem.recompute(guess_i)
        status, _ = _solve_rounds(problem)
        if status == "infeasible":
            error, retry = infeasible_or_retry(problem, f"{system_id} alone")
            if retry:
                status, _ = _solve_rounds(problem)
            if status == "infeasible":
                if retry:
                    error, _ = infeasible_or_retry(problem, f"{system_id} alone")
                infeasible.append((system_id, "; ".join(error.conflicts)))
                continue
        x = _amounts(m, problem.data)
        mix = {r: float(v) for r, v in zip(problem.data.reagent_ids, x) if v > 0}
        mix, _ = correct_titrant(problem, mix)
        feasible.append((system_id, mix, binding_constraints(problem.data, x)))
    for var in m.y.values():
        var.unfix()

    verified = verify_mixes(problem, [mix for _, mix, _ in feasible]) if feasible else []
    rows = []
    for (system_id, mix, binding), figures in zip(feasible, verified):
        misses = verification_misses(spec, figures)
        if misses:   # the linear model's mix fails the exact check: not feasible
            infeasible.append((system_id, "exact check: " + "; ".join(misses)))
            continue
        cost = prices.cost(mix, 1.0, catalog) or 0.0
        pka = conditional_pka(system_id, spec.ph, spec.temperature_c, figures.ionic_strength_mol_l, catalog, activity)
        rows.append(RankedSystem(
            system_id, catalog.systems[system_id].name, True, "", reagents_mol_l=mix,
            conc_mol_l=figures.buffer_conc_mol_l, pka_at_use=pka, distance_ph=abs(pka - spec.ph),
            capacity_mol_l_per_ph=figures.capacity_mol_l_per_ph, dph_dt_per_k=figures.dph_dt_per_k,
            dilution_value_ph=figures.dilution_value_ph, ionic_strength_mol_l=figures.ionic_strength_mol_l,
            bound_fraction=dict(figures.bound_fraction), cost_per_l=cost, cost_for_volume=cost * spec.volume_l,
            cost_per_plate=cost * spec.volume_l / spec.plates if spec.plates else None, binding=binding))
    key = {"cost": lambda r: r.cost_per_l, "distance": lambda r: r.distance_ph,
           "capacity": lambda r: -r.capacity_mol_l_per_ph, "drift": lambda r: abs(r.dph_dt_per_k)}[sort]
    rows.sort(key=lambda r: (key(r), r.cost_per_l, r.system_id))
    rows = [_with_reason(r, i + 1, rows[0], sort, prices.currency, catalog) for i, r in enumerate(rows)]
    infeasible_rows = [RankedSystem(s, catalog.systems[s].name, False, reason,
                                    pka_at_use=conditional_pka(s, spec.ph, spec.temperature_c, guess_i, catalog,
                                                               activity))
                       for s, reason in infeasible]
    return tuple(rows + infeasible_rows + excluded_rows)


def _with_reason(row: RankedSystem, rank: int, top: RankedSystem, sort: str, currency: str,
                 catalog: Catalog) -> RankedSystem:
    """The row with its rank and a sentence saying why it stands there."""
    needs = f"needs {row.conc_mol_l * 1000:.3g} mM"
    limit = f" for {row.binding[0]}" if row.binding else ""
    where = f"pKa' {row.pka_at_use:.2f} is {row.distance_ph:.2f} from the target"
    if rank == 1:
        lead = {"cost": "cheapest", "distance": "pKa' nearest the target", "capacity": "largest capacity",
                "drift": "smallest temperature drift"}[sort]
        reason = f"{lead}: {needs}{limit}; {where}"
    elif sort == "cost" and top.cost_per_l:
        reason = f"{row.cost_per_l / top.cost_per_l:.2f}× the cost of {top.system_id}; {needs}{limit}; {where}"
    else:
        reason = f"{needs}{limit}; {where}; {row.cost_per_l:.3g} {currency}/L"
    return RankedSystem(**{**row.__dict__, "rank": rank, "reason": reason})
