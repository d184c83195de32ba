"""The minimum-cost buffer: a small MILP over reagent amounts, solved with HiGHS.

At a fixed pH and fixed activity coefficients the charge balance, buffer capacity, ionic
strength, osmolarity and trace-metal binding of a mix are linear in the reagent amounts
(:mod:`selector.chemistry.linear`).  :func:`build_min_cost_model` turns those coefficients into a
Pyomo model; :func:`solve_min_cost` builds it, iterates the activity coefficients,
solves with HiGHS, checks the status strictly and verifies the mix with the exact
forward engine (:func:`selector.chemistry.equilibrium.solve_equilibrium`).  Only plain frozen records
leave this module.

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

Objectives: ``cost`` Σ_r c_r x_r with c_r = price_r M_r / (1000 purity_r) [currency per L
per mol/L] plus 10⁻⁶ Σ x_r to break ties; ``ionic-strength`` I; ``temperature-drift`` the
temperature slope of the charge balance |∂R/∂T| at the target pH (for a fixed β floor the
pH slope is −(∂R/∂T)/(∂R/∂pH) = (∂R/∂T)/β, so at β = β_min this minimises |dpH/dT|; the
verified dpH/dT is reported); ``reagents`` Σ z_r.  The last three add 10⁻⁶·cost.

Activity: the coefficients are computed at an ionic strength I; after each solve I is
recomputed from the mix, the model's mutable parameters are updated (the model is not
rebuilt) and it is solved again until I changes by less than 10⁻⁴ mol/L.

Infeasible specs: every constraint group has an elastic slack variable, fixed at zero in
the normal solve.  On infeasibility the slacks are freed and their weighted sum (each
relative to its right-hand side) is minimised; the groups left with slack are the
conflict, reported in words with the nearest mix's figures.
"""

from __future__ import annotations

import contextlib
import math
import os
import sys
import threading
from dataclasses import dataclass, field, replace

import numpy as np
import pyomo.environ as pyo
from pyomo.contrib.appsi.base import TerminationCondition
from pyomo.contrib.appsi.solvers import Highs
from pyomo.contrib.appsi.solvers import highs as _appsi_highs
from scipy.optimize import brentq

from catalog import Catalog, load_catalog
from selector.admissible import Admissible, admissible, ion_label
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.linear import linear_coefficients, metal_binding_terms
from selector.chemistry.properties import dilution_value, dph_dt
from selector.errors import InfeasibleSpecError, InputError, SolverError
from selector.prices import PriceBook, demo_price_book
from selector.spec import BufferSpec

# appsi wraps every HiGHS call in pyomo's capture_output(capture_fd=True), which swaps the
# process's file descriptors 1 and 2 and joins reader threads afterwards.  In a threaded
# server (the app) or on a busy machine that join can time out ("deadlock observed joining
# reader threads") and a good solve is reported as a failure.  All we need is silence (HiGHS
# prints a banner from C++ straight to fd 1), so appsi's HiGHS calls get a plain fd
# redirect to the null device instead, one at a time (the descriptors are the process's).
_QUIET_LOCK = threading.RLock()


@contextlib.contextmanager
def _quiet_file_descriptors(*args, **kwargs):
    """Send fds 1 and 2 to the null device for the duration (no reader threads)."""
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


_appsi_highs.capture_output = _quiet_file_descriptors


OBJECTIVES = ("cost", "ionic-strength", "temperature-drift", "reagents")
#: Temperatures of the window grid.
GRID_POINTS = 5
#: Cap on any reagent amount [mol/L] (common practice: stock-free bench buffers).
CONC_CAP_MOL_L = 1.0
#: Bound of every x in the elastic model [mol/L]; keeps the model bounded.
ELASTIC_CAP_MOL_L = 5.0
#: Capacity floor used when a spec asks for no concentration, capacity or load
#: [mol/L per pH]; common practice (about 20 mM of a system at its pKa).
DEFAULT_CAPACITY_MOL_L_PER_PH = 0.01
#: Activity rounds stop when I changes by less than this [mol/L].
ACTIVITY_TOL_MOL_L = 1e-4
MAX_ACTIVITY_ROUNDS = 12
#: Rounds after which the systems are held fixed so the rounds converge (no switching).
SWITCH_ROUNDS = 6
#: A verified pH this far from target is never reported [pH].
PH_REPORT_TOL = 0.005
#: Above this the titrant is corrected on the exact engine [pH].
PH_CORRECT_TOL = 0.0005
TIE_BREAK_PER_MOL_L = 1e-6
DRIFT_STEP_K = 0.5
AMOUNT_ZERO_MOL_L = 1e-10


def temperature_grid(spec: BufferSpec) -> tuple[float, ...]:
    """Temperatures at which the pH must stay in the band: 5 over the window, or T_use."""
    if spec.temperature_min_c is None:
        return (spec.temperature_c,)
    grid = set(np.round(np.linspace(spec.temperature_min_c, spec.temperature_max_c, GRID_POINTS), 6))
    grid.add(spec.temperature_c)
    return tuple(sorted(float(t) for t in grid))


# --------------------------------------------------------------------------- data

@dataclass(frozen=True)
class ModelData:
    """Arrays the model is built from (pure input of :func:`build_min_cost_model`).

    Point labels: ``use`` (p, T_use), ``lo{k}`` (p − δ, T_k), ``hi{k}`` (p + δ, T_k),
    ``dlo``/``dhi`` (p, T_use ∓ 0.5 K).  Shapes: R reagents, S systems, G points, M metals.
    """

    reagent_ids: tuple[str, ...]
    system_ids: tuple[str, ...]
    units: np.ndarray              # [R, S]
    upper_mol_l: np.ndarray        # [R]
    upper_is_solubility: np.ndarray  # [R] bool: U from solubility, not the 1 M cap
    cost_per_mol: np.ndarray       # [R] currency per L per mol/L
    point_labels: tuple[str, ...]
    point_ph: np.ndarray           # [G]
    point_temperature_c: np.ndarray  # [G]
    charge: np.ndarray             # [G, R]
    water_charge: np.ndarray       # [G]
    capacity: np.ndarray           # [R] at the use point
    water_capacity: float
    ionic: np.ndarray              # [R] at the use point
    water_ionic: float
    particles: np.ndarray          # [R]
    water_particles: float
    metal_ids: tuple[str, ...]
    metal_ratio: np.ndarray        # [M, R]
    metal_limit_ratio: np.ndarray  # [M] f/(1 − f)
    grid_temperatures_c: tuple[float, ...]
    acid_load_mol_l: float
    base_load_mol_l: float
    hold_rows: bool                # write the load/window rows
    capacity_min: float | None
    buffer_conc_mol_l: float | None
    ionic_target: float | None
    ionic_min: float | None
    ionic_max: float | None
    osm_min: float | None
    osm_max: float | None
    fixed_mol_l: tuple[tuple[str, float], ...]
    max_systems: int
    max_reagents: int | None
    objective: str
    ionic_strength_mol_l: float    # I the coefficients were computed at


def _points(spec: BufferSpec):
    grid = temperature_grid(spec)
    labels, ph, temp = ["use"], [spec.ph], [spec.temperature_c]
    for k, t in enumerate(grid):
        labels += [f"lo{k}", f"hi{k}"]
        ph += [spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph]
        temp += [t, t]
    t_lo = max(spec.temperature_c - DRIFT_STEP_K, 0.0)
    t_hi = min(spec.temperature_c + DRIFT_STEP_K, 95.0)
    labels += ["dlo", "dhi"]
    ph += [spec.ph, spec.ph]
    temp += [t_lo, t_hi]
    return grid, tuple(labels), np.array(ph), np.array(temp)


def _coefficient_arrays(reagent_ids, point_ph, point_t, ionic, metals, catalog, activity):
    lc = linear_coefficients(reagent_ids, point_ph, point_t, ionic, catalog, activity)
    ratio = np.zeros((len(metals), len(reagent_ids)))
    for m, metal in enumerate(metals):
        ratio[m] = metal_binding_terms(metal, lc, catalog, activity).ratio[0]
    return dict(charge=lc.charge, water_charge=lc.water_charge, capacity=lc.capacity[0],
                water_capacity=float(lc.water_capacity[0]), ionic=lc.ionic[0],
                water_ionic=float(lc.water_ionic[0]), particles=lc.particles,
                water_particles=float(lc.water_particles[0]), metal_ratio=ratio,
                system_ids=lc.system_ids, units=lc.system_units)


def model_data(spec: BufferSpec, allowed: Admissible, prices: PriceBook, catalog: Catalog,
               max_systems: int = 2, max_reagents: int | None = None, objective: str = "cost",
               ionic_strength_mol_l: float | None = None, activity: str = "davies") -> ModelData:
    """The arrays of the model of ``spec`` over the admitted reagents, at ionic strength I."""
    reagent_ids = allowed.reagents
    grid, labels, point_ph, point_t = _points(spec)
    if ionic_strength_mol_l is None:
        ionic_strength_mol_l = initial_ionic_strength(spec)
    metals = tuple(m.metal for m in spec.metals)
    arrays = _coefficient_arrays(reagent_ids, point_ph, point_t, ionic_strength_mol_l, metals, catalog, activity)
    upper, from_solubility, cost = [], [], []
    fixed = dict(spec.fixed_amounts)
    for reagent_id in reagent_ids:
        reagent = catalog.reagents[reagent_id]
        cap = CONC_CAP_MOL_L
        sol = reagent.solubility_g_l_25c.value / reagent.molar_mass_g_mol if reagent.solubility_g_l_25c else math.inf
        u = min(sol, cap)
        u = max(u, fixed.get(reagent_id, 0.0))
        upper.append(u)
        from_solubility.append(sol < cap)
        price = prices.price_per_kg(reagent_id)
        if price is None:
            if reagent_id in fixed:
                price = 0.0
            else:
                raise InputError(f"no price for {reagent.name}; add it to the price sheet")
        cost.append(price * reagent.molar_mass_g_mol / reagent.purity_fraction / 1000.0)
    acid = max((x.conc_mol_l for x in spec.loads if x.kind == "acid"), default=0.0)
    base = max((x.conc_mol_l for x in spec.loads if x.kind == "base"), default=0.0)
    capacity = spec.capacity_mol_l_per_ph
    if capacity is None and spec.buffer_conc_mol_l is None and not spec.loads:
        capacity = DEFAULT_CAPACITY_MOL_L_PER_PH
    return ModelData(
        reagent_ids=tuple(reagent_ids), system_ids=tuple(arrays["system_ids"]), units=arrays["units"],
        upper_mol_l=np.array(upper), upper_is_solubility=np.array(from_solubility),
        cost_per_mol=np.array(cost), point_labels=labels, point_ph=point_ph, point_temperature_c=point_t,
        charge=arrays["charge"], water_charge=arrays["water_charge"], capacity=arrays["capacity"],
        water_capacity=arrays["water_capacity"], ionic=arrays["ionic"], water_ionic=arrays["water_ionic"],
        particles=arrays["particles"], water_particles=arrays["water_particles"], metal_ids=metals,
        metal_ratio=arrays["metal_ratio"],
        metal_limit_ratio=np.array([m.max_bound_fraction / (1.0 - m.max_bound_fraction) for m in spec.metals]),
        grid_temperatures_c=grid, acid_load_mol_l=acid, base_load_mol_l=base,
        hold_rows=bool(spec.loads) or spec.temperature_min_c is not None,
        capacity_min=capacity, buffer_conc_mol_l=spec.buffer_conc_mol_l,
        ionic_target=spec.ionic_strength_mol_l, ionic_min=spec.ionic_strength_min_mol_l,
        ionic_max=spec.ionic_strength_max_mol_l, osm_min=spec.osmolarity_min_osmol_l,
        osm_max=spec.osmolarity_max_osmol_l, fixed_mol_l=tuple(spec.fixed_amounts),
        max_systems=max_systems, max_reagents=max_reagents, objective=objective,
        ionic_strength_mol_l=float(ionic_strength_mol_l),
    )


def initial_ionic_strength(spec: BufferSpec) -> float:
    """First guess of I [mol/L]: the target, the middle of the bounds, or half the buffer."""
    if spec.ionic_strength_mol_l is not None:
        return spec.ionic_strength_mol_l
    low, high = spec.ionic_strength_min_mol_l, spec.ionic_strength_max_mol_l
    if low is not None and high is not None:
        return 0.5 * (low + high)
    guess = 0.5 * (spec.buffer_conc_mol_l or 0.05)
    if high is not None:
        guess = min(guess, high)
    if low is not None:
        guess = max(guess, low)
    return guess


# --------------------------------------------------------------------------- model

def build_min_cost_model(data: ModelData) -> pyo.ConcreteModel:
    """The Pyomo model of ``data`` (pure: no solve).  See the module docstring for the maths.

    Coefficients that depend on the ionic strength are mutable Params (q, qw, b, bw, ci,
    ciw, rho) so the activity rounds update them in place.  Elastic slacks (``s_*``) are
    fixed at zero; the elastic objective is deactivated.
    """
    m = pyo.ConcreteModel(name="poise_min_cost")
    reagents = list(data.reagent_ids)
    systems = list(data.system_ids)
    r_index = {r: i for i, r in enumerate(reagents)}
    m.R = pyo.Set(initialize=reagents, ordered=True)
    m.S = pyo.Set(initialize=systems, ordered=True)
    m.G = pyo.Set(initialize=list(data.point_labels), ordered=True)
    m.M = pyo.Set(initialize=list(data.metal_ids), ordered=True)
    g_index = {g: i for i, g in enumerate(data.point_labels)}

    m.q = pyo.Param(m.G, m.R, mutable=True, initialize=lambda _, g, r: float(data.charge[g_index[g], r_index[r]]))
    m.qw = pyo.Param(m.G, mutable=True, initialize=lambda _, g: float(data.water_charge[g_index[g]]))
    m.b = pyo.Param(m.R, mutable=True, initialize=lambda _, r: float(data.capacity[r_index[r]]))
    m.bw = pyo.Param(mutable=True, initialize=data.water_capacity)
    m.ci = pyo.Param(m.R, mutable=True, initialize=lambda _, r: float(data.ionic[r_index[r]]))
    m.ciw = pyo.Param(mutable=True, initialize=data.water_ionic)
    m.rho = pyo.Param(m.M, m.R, mutable=True,
                      initialize=lambda _, k, r: float(data.metal_ratio[data.metal_ids.index(k), r_index[r]]))

    m.x = pyo.Var(m.R, bounds=(0.0, ELASTIC_CAP_MOL_L), initialize=0.0)
    m.y = pyo.Var(m.S, within=pyo.Binary, initialize=0)

    def slack(name, index=None):
        var = pyo.Var(index, bounds=(0.0, None), initialize=0.0) if index is not None else \
            pyo.Var(bounds=(0.0, None), initialize=0.0)
        setattr(m, name, var)
        var.fix(0.0)
        return var

    system_of = {}
    for r in reagents:
        s = np.flatnonzero(data.units[r_index[r]])
        system_of[r] = systems[int(s[0])] if s.size else None
    s_upper = slack("s_upper", m.R)

    def upper_rule(_, r):
        u = float(data.upper_mol_l[r_index[r]])
        if system_of[r] is None:
            return m.x[r] <= u + s_upper[r]
        return m.x[r] <= u * m.y[system_of[r]] + s_upper[r]
    m.upper = pyo.Constraint(m.R, rule=upper_rule)
    linked = [r for r in reagents if system_of[r] is not None]
    m.upper_slack_link = pyo.Constraint(linked, rule=lambda _, r: s_upper[r] <= ELASTIC_CAP_MOL_L * m.y[system_of[r]])
    m.max_systems = pyo.Constraint(expr=sum(m.y[s] for s in systems) <= data.max_systems)
    # Two forms of one acid (citric acid and its monohydrate) share the concentration cap.
    m.system_cap = pyo.Constraint(
        m.S, rule=lambda _, s: sum(float(data.units[r_index[r], systems.index(s)]) * m.x[r]
                                   for r in reagents if data.units[r_index[r], systems.index(s)] > 0)
        <= CONC_CAP_MOL_L * m.y[s] + sum(s_upper[r] for r in reagents if system_of[r] == s))

    if data.max_reagents is not None or data.objective == "reagents":
        m.z = pyo.Var(m.R, within=pyo.Binary, initialize=0)
        m.reagent_on = pyo.Constraint(
            m.R, rule=lambda _, r: m.x[r] <= float(data.upper_mol_l[r_index[r]]) * m.z[r] + s_upper[r])
        if data.max_reagents is not None:
            m.max_reagents = pyo.Constraint(expr=sum(m.z[r] for r in reagents) <= data.max_reagents)

    def charge(g):
        return sum(m.q[g, r] * m.x[r] for r in reagents) + m.qw[g]

    s_cp, s_cn = slack("s_charge_pos"), slack("s_charge_neg")
    m.charge_balance = pyo.Constraint(expr=charge("use") + s_cp - s_cn == 0.0)

    if data.hold_rows:
        k_set = list(range(len(data.grid_temperatures_c)))
        m.K = pyo.Set(initialize=k_set, ordered=True)
        s_acid, s_base = slack("s_acid", m.K), slack("s_base", m.K)
        m.acid_hold = pyo.Constraint(m.K, rule=lambda _, k: charge(f"lo{k}") + s_acid[k] >= data.acid_load_mol_l)
        m.base_hold = pyo.Constraint(m.K, rule=lambda _, k: charge(f"hi{k}") - s_base[k] <= -data.base_load_mol_l)

    beta = sum(m.b[r] * m.x[r] for r in reagents) + m.bw
    ionic = sum(m.ci[r] * m.x[r] for r in reagents) + m.ciw
    osm = sum(float(data.particles[r_index[r]]) * m.x[r] for r in reagents) + data.water_particles
    m.ionic_strength = pyo.Expression(expr=ionic)
    if data.capacity_min is not None:
        s = slack("s_capacity")
        m.capacity = pyo.Constraint(expr=beta + s >= data.capacity_min)
    if data.buffer_conc_mol_l is not None:
        total = sum(float(data.units[r_index[r]].sum()) * m.x[r] for r in reagents if data.units[r_index[r]].any())
        sp, sn = slack("s_conc_pos"), slack("s_conc_neg")
        m.buffer_conc = pyo.Constraint(expr=total + sp - sn == data.buffer_conc_mol_l)
    if data.ionic_target is not None:
        sp, sn = slack("s_ionic_pos"), slack("s_ionic_neg")
        m.ionic_target = pyo.Constraint(expr=ionic + sp - sn == data.ionic_target)
    if data.ionic_min is not None:
        s = slack("s_ionic_min")
        m.ionic_min = pyo.Constraint(expr=ionic + s >= data.ionic_min)
    if data.ionic_max is not None:
        s = slack("s_ionic_max")
        m.ionic_max = pyo.Constraint(expr=ionic - s <= data.ionic_max)
    if data.osm_min is not None:
        s = slack("s_osm_min")
        m.osm_min = pyo.Constraint(expr=osm + s >= data.osm_min)
    if data.osm_max is not None:
        s = slack("s_osm_max")
        m.osm_max = pyo.Constraint(expr=osm - s <= data.osm_max)
    if data.metal_ids:
        s_metal = slack("s_metal", m.M)
        limit = {k: float(v) for k, v in zip(data.metal_ids, data.metal_limit_ratio)}
        m.metal = pyo.Constraint(m.M, rule=lambda _, k: sum(m.rho[k, r] * m.x[r] for r in reagents)
                                 - s_metal[k] <= limit[k])
    for r, amount in data.fixed_mol_l:
        m.x[r].fix(amount)

    cost = sum(float(data.cost_per_mol[r_index[r]]) * m.x[r] for r in reagents)
    m.cost_per_l = pyo.Expression(expr=cost)
    tie = TIE_BREAK_PER_MOL_L * sum(m.x[r] for r in reagents)
    if data.objective == "cost":
        m.objective = pyo.Objective(expr=cost + tie)
    elif data.objective == "ionic-strength":
        m.objective = pyo.Objective(expr=ionic + 1e-6 * cost)
    elif data.objective == "temperature-drift":
        m.drift = pyo.Var(bounds=(0.0, None))
        step_k = float(data.point_temperature_c[g_index["dhi"]] - data.point_temperature_c[g_index["dlo"]])
        slope = (charge("dhi") - charge("dlo")) / step_k
        m.drift_pos = pyo.Constraint(expr=m.drift >= slope)
        m.drift_neg = pyo.Constraint(expr=m.drift >= -slope)
        m.objective = pyo.Objective(expr=m.drift + 1e-8 * cost)
    else:
        m.objective = pyo.Objective(expr=sum(m.z[r] for r in reagents) + 1e-6 * cost)

    weights = []
    for var, rhs in _slack_groups(m, data):
        if var is s_upper:
            weights += [(s_upper[r], 1.0 / float(data.upper_mol_l[r_index[r]])) for r in reagents]
            continue
        for v in var.values() if var.is_indexed() else [var]:
            weights.append((v, 1.0 / max(abs(rhs), 1e-3)))
    m.elastic = pyo.Objective(expr=sum(w * v for v, w in weights) + 1e-6 * cost)
    m.elastic.deactivate()
    return m


def _slack_groups(m, data: ModelData):
    """(slack var, scale of its right-hand side) for every elastic group of ``m``."""
    out = [(m.s_charge_pos, 1e-4), (m.s_charge_neg, 1e-4)]   # the pH itself: weighted heavily
    if data.hold_rows:
        out += [(m.s_acid, max(data.acid_load_mol_l, 1e-3)), (m.s_base, max(data.base_load_mol_l, 1e-3))]
    for name, rhs in (("s_capacity", data.capacity_min), ("s_conc_pos", data.buffer_conc_mol_l),
                      ("s_conc_neg", data.buffer_conc_mol_l), ("s_ionic_pos", data.ionic_target),
                      ("s_ionic_neg", data.ionic_target), ("s_ionic_min", data.ionic_min),
                      ("s_ionic_max", data.ionic_max), ("s_osm_min", data.osm_min), ("s_osm_max", data.osm_max)):
        if hasattr(m, name):
            out.append((getattr(m, name), rhs))
    if data.metal_ids:
        out.append((m.s_metal, float(np.min(data.metal_limit_ratio))))
    out.append((m.s_upper, 0.1))
    return out


def update_model(m: pyo.ConcreteModel, data: ModelData) -> None:
    """Write the ionic-strength-dependent coefficients of ``data`` into ``m``'s Params."""
    g_index = {g: i for i, g in enumerate(data.point_labels)}
    r_index = {r: i for i, r in enumerate(data.reagent_ids)}
    for (g, r), param in m.q.items():
        param.set_value(float(data.charge[g_index[g], r_index[r]]))
    for g, param in m.qw.items():
        param.set_value(float(data.water_charge[g_index[g]]))
    for r, param in m.b.items():
        param.set_value(float(data.capacity[r_index[r]]))
        m.ci[r].set_value(float(data.ionic[r_index[r]]))
    m.bw.set_value(data.water_capacity)
    m.ciw.set_value(data.water_ionic)
    for (k, r), param in m.rho.items():
        param.set_value(float(data.metal_ratio[data.metal_ids.index(k), r_index[r]]))


# --------------------------------------------------------------------------- solving

class _Solver:
    """A persistent HiGHS solve of one model with a strict status map."""

    def __init__(self):
        self.highs = Highs()
        if not self.highs.available():
            raise SolverError("the HiGHS solver (highspy) is not available; install highspy")
        self.highs.config.load_solution = False
        self.highs.config.stream_solver = False
        self.highs.config.mip_gap = 1e-9
        self.highs.highs_options = {"output_flag": False, "log_to_console": False}
        # fixing a variable (system choice, elastic slacks) is then a bound change,
        # not a rebuild of every row that holds it
        self.highs.update_config.treat_fixed_vars_as_params = False
        self.last = None

    def solve(self, m) -> str:
        """'optimal' (solution loaded), 'infeasible', or SolverError for anything else.

        The model is bounded (every x in [0, 5 mol/L], binaries in {0, 1}, slacks ≥ 0 with
        non-negative weights, objective bounded below), so HiGHS's "infeasible or
        unbounded" can only mean infeasible.
        """
        try:
            result = self.highs.solve(m)
        except Exception as error:  # highspy/appsi raise assorted types on a failed solve
            raise SolverError(f"HiGHS failed: {error}") from None
        self.last = result
        tc = result.termination_condition
        if tc == TerminationCondition.optimal:
            result.solution_loader.load_vars()
            return "optimal"
        if tc in (TerminationCondition.infeasible, TerminationCondition.infeasibleOrUnbounded):
            return "infeasible"
        raise SolverError(f"HiGHS stopped without a trustworthy answer (status: {tc.name})")

    def duals(self):
        return self.last.solution_loader.get_duals()


def _amounts(m, data: ModelData) -> np.ndarray:
    x = np.array([pyo.value(m.x[r]) for r in data.reagent_ids])
    x[np.abs(x) < AMOUNT_ZERO_MOL_L] = 0.0
    return np.maximum(x, 0.0)


def _ionic_of(data: ModelData, x: np.ndarray) -> float:
    return float(data.ionic @ x + data.water_ionic)


@dataclass
class _Problem:
    """Everything a solve of one spec needs; holds the one model and its solver."""

    spec: BufferSpec
    allowed: Admissible
    prices: PriceBook
    catalog: Catalog
    data: ModelData
    model: pyo.ConcreteModel
    solver: _Solver
    activity: str
    ideal: bool
    assumptions: tuple[str, ...] = ()

    def recompute(self, ionic: float) -> None:
        """Coefficients at ionic strength ``ionic``, written into the model."""
        metals = self.data.metal_ids
        arrays = _coefficient_arrays(self.data.reagent_ids, self.data.point_ph, self.data.point_temperature_c,
                                     ionic, metals, self.catalog, self.activity)
        self.data = replace(self.data, charge=arrays["charge"], water_charge=arrays["water_charge"],
                            capacity=arrays["capacity"], water_capacity=arrays["water_capacity"],
                            ionic=arrays["ionic"], water_ionic=arrays["water_ionic"],
                            metal_ratio=arrays["metal_ratio"], ionic_strength_mol_l=float(ionic))
        update_model(self.model, self.data)


def make_problem(spec: BufferSpec, prices: PriceBook | None = None, catalog: Catalog | None = None,
                 max_systems: int = 2, max_reagents: int | None = None, objective: str = "cost",
                 activity: str = "davies", ideal: bool = False) -> _Problem:
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    if objective not in OBJECTIVES:
        raise InputError(f"unknown objective {objective!r}; choose one of: {', '.join(OBJECTIVES)}")
    if isinstance(max_systems, bool) or not isinstance(max_systems, int) or max_systems < 1:
        raise InputError(f"max systems must be a whole number >= 1, got {max_systems!r}")
    if max_reagents is not None and (isinstance(max_reagents, bool) or not isinstance(max_reagents, int)
                                     or max_reagents < 1):
        raise InputError(f"max reagents must be a whole number >= 1, got {max_reagents!r}")
    allowed = admissible(spec, catalog, prices)
    if not allowed.systems:
        conflicts = [f"{e.system_id}: {e.reason}" for e in allowed.excluded]
        raise InfeasibleSpecError("no buffer system is admitted by the spec: every one is excluded", conflicts)
    data = model_data(spec, allowed, prices, catalog, max_systems, max_reagents, objective,
                      0.0 if ideal else None, activity)
    assumptions = ()
    if spec.capacity_mol_l_per_ph is None and spec.buffer_conc_mol_l is None and not spec.loads:
        assumptions = (f"no concentration, capacity or load given: a capacity of at least "
                       f"{DEFAULT_CAPACITY_MOL_L_PER_PH * 1000:g} mM per pH unit is assumed (common practice)",)
    model = build_min_cost_model(data)
    return _Problem(spec, allowed, prices, catalog, data, model, _Solver(), activity, ideal, assumptions)


def _solve_rounds(problem: _Problem) -> tuple[str, int]:
    """Solve with activity rounds; ('optimal', rounds) or ('infeasible', rounds)."""
    m = problem.model
    rounds = 0
    held = []
    try:
        while True:
            rounds += 1
            status = problem.solver.solve(m)
            if status != "optimal":
                return status, rounds
            if problem.ideal:
                return status, rounds
            x = _amounts(m, problem.data)
            new_i = _ionic_of(problem.data, x)
            if abs(new_i - problem.data.ionic_strength_mol_l) < ACTIVITY_TOL_MOL_L:
                return status, rounds
            if rounds >= MAX_ACTIVITY_ROUNDS:
                raise SolverError(f"the activity rounds did not settle: ionic strength still moves by "
                                  f"{abs(new_i - problem.data.ionic_strength_mol_l):.2g} mol/L after {rounds} rounds")
            if rounds == SWITCH_ROUNDS:
                # the choice may flip between rounds (two mixes of near-equal cost at
                # different I): hold the systems, then the reagents in use, so the
                # rounds follow one mix continuously to its fixed point
                for var in _binaries(m):
                    if not var.fixed:
                        var.fix(round(pyo.value(var)))
                        held.append(var)
            if rounds == SWITCH_ROUNDS + 2:
                for r, v in zip(problem.data.reagent_ids, x):
                    if v == 0 and not m.x[r].fixed:
                        m.x[r].fix(0.0)
                        held.append(m.x[r])
            problem.recompute(max(new_i, 0.0))
    finally:
        for var in held:
            var.unfix()


def _binaries(m):
    out = list(m.y.values())
    if hasattr(m, "z"):
        out += list(m.z.values())
    return out


# --------------------------------------------------------------------------- results

@dataclass(frozen=True)
class LoadCheck:
    """Verified pH of the mix with a load added (as HCl or NaOH) at one temperature."""

    kind: str
    conc_mol_l: float
    temperature_c: float
    ph: float
    within_band: bool


@dataclass(frozen=True)
class VerifiedFigures:
    """Figures of a mix from the exact forward engine (not the linear model)."""

    temperature_c: float
    ph: float
    ph_by_temperature: dict[float, float]
    ph_under_loads: tuple[LoadCheck, ...]
    capacity_mol_l_per_ph: float
    ionic_strength_mol_l: float
    osmolarity_osmol_l: float
    buffer_conc_mol_l: float
    bound_fraction: dict[str, float]
    dph_dt_per_k: float
    dilution_value_ph: float
    warnings: tuple[str, ...]

    def as_json(self) -> dict:
        return {
            "temperature_c": self.temperature_c, "ph": self.ph,
            "ph_by_temperature": {f"{t:g}": v for t, v in self.ph_by_temperature.items()},
            "ph_under_loads": [{"kind": c.kind, "conc_mol_l": c.conc_mol_l, "temperature_c": c.temperature_c,
                                "ph": c.ph, "within_band": c.within_band} for c in self.ph_under_loads],
            "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph,
            "ionic_strength_mol_l": self.ionic_strength_mol_l,
            "osmolarity_osmol_l": self.osmolarity_osmol_l, "buffer_conc_mol_l": self.buffer_conc_mol_l,
            "bound_fraction": dict(self.bound_fraction), "dph_dt_per_k": self.dph_dt_per_k,
            "dilution_value_ph": self.dilution_value_ph, "warnings": list(self.warnings),
        }


@dataclass(frozen=True)
class OptimisationResult:
    """The optimal mix of a spec, its verified figures and cost.  Plain data only.

    ``reagents_mol_l`` holds the reagents with a non-zero amount; ``cost_per_l`` and
    ``cost_breakdown_per_l`` are in ``currency``; ``cost_for_volume`` is for
    ``volume_l``; ``cost_per_plate`` divides it by the spec's plates (None without).
    ``binding`` names the constraints that hold with equality at the optimum;
    ``sensitivity`` says in words what relaxing them would gain (LP duals, binaries fixed).
    """

    status: str
    objective: str
    reagents_mol_l: dict[str, float]
    systems: tuple[str, ...]
    cost_per_l: float
    currency: str
    volume_l: float
    cost_for_volume: float
    cost_per_plate: float | None
    cost_breakdown_per_l: dict[str, float]
    dominant_reagent: str
    verified: VerifiedFigures
    binding: tuple[str, ...]
    sensitivity: tuple[str, ...]
    activity_rounds: int
    corrected: bool
    assumptions: tuple[str, ...] = ()
    excluded: dict[str, str] = field(default_factory=dict)

    def as_json(self) -> dict:
        return {
            "status": self.status, "objective": self.objective, "reagents": dict(self.reagents_mol_l),
            "systems": list(self.systems), "cost_per_l": self.cost_per_l, "currency": self.currency,
            "volume_l": self.volume_l, "cost_for_volume": self.cost_for_volume,
            "cost_per_plate": self.cost_per_plate, "cost_breakdown_per_l": dict(self.cost_breakdown_per_l),
            "dominant_reagent": self.dominant_reagent, "verified": self.verified.as_json(),
            "binding": list(self.binding), "sensitivity": list(self.sensitivity),
            "activity_rounds": self.activity_rounds, "corrected": self.corrected,
            "assumptions": list(self.assumptions), "conflicts": [],
        }


def verify_mixes(problem: _Problem, mixes: list[dict[str, float]]) -> list[VerifiedFigures]:
    """Verified figures of several mixes in one batch of the exact engine.

    Rows per mix: the use temperature, each grid temperature, each load at each grid
    temperature (acid as HCl, base as NaOH).  dpH/dT (±0.5 K) and the 1:1 dilution value
    come from :mod:`selector.chemistry.properties`; bound fractions from the catalog constants at
    the verified pH and I (f = B/(1 + B), B = Σ ρ_r x_r).
    """
    spec, catalog = problem.spec, problem.catalog
    ids = list(dict.fromkeys([r for mix in mixes for r in mix] + ["hcl", "naoh"]))
    col = {r: i for i, r in enumerate(ids)}
    grid = problem.data.grid_temperatures_c
    base_rows = np.zeros((len(mixes), len(ids)))
    for n, mix in enumerate(mixes):
        for r, v in mix.items():
            base_rows[n, col[r]] = v
    rows, temps = [], []
    for n in range(len(mixes)):
        rows.append(base_rows[n])
        temps.append(spec.temperature_c)
        for t in grid:
            rows.append(base_rows[n])
            temps.append(t)
        for load in spec.loads:
            for t in grid:
                row = base_rows[n].copy()
                row[col["hcl" if load.kind == "acid" else "naoh"]] += load.conc_mol_l
                rows.append(row)
                temps.append(t)
    fixed_i = 0.0 if problem.ideal else None
    options = dict(catalog=catalog, activity=problem.activity, fixed_ionic_strength_mol_l=fixed_i)
    eq = solve_equilibrium(ids, np.array(rows), np.array(temps), **options)
    per = 1 + len(grid) + len(spec.loads) * len(grid)
    use_rows = np.arange(len(mixes)) * per
    drift = dph_dt(ids, base_rows, spec.temperature_c, **options)
    dilution = dilution_value(ids, base_rows, spec.temperature_c, **options)
    bound = {}
    if spec.metals:
        lc = linear_coefficients(ids, eq.ph[use_rows], spec.temperature_c, eq.ionic_strength_mol_l[use_rows],
                                 catalog, problem.activity)
        for limit in spec.metals:
            ratio = metal_binding_terms(limit.metal, lc, catalog, problem.activity).ratio
            b = np.sum(ratio * base_rows, axis=1)
            bound[limit.metal] = b / (1.0 + b)
    tables_units = {r: catalog.reagents[r].system_units if catalog.reagents[r].system_id else 0 for r in ids}
    low, high = spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph
    out = []
    for n, mix in enumerate(mixes):
        u = use_rows[n]
        by_t = {float(t): float(eq.ph[u + 1 + k]) for k, t in enumerate(grid)}
        checks = []
        i = u + 1 + len(grid)
        for load in spec.loads:
            for t in grid:
                ph = float(eq.ph[i])
                ok = ph >= low - 1e-3 if load.kind == "acid" else ph <= high + 1e-3
                checks.append(LoadCheck(load.kind, load.conc_mol_l, float(t), ph, ok))
                i += 1
        warnings = eq.warnings_for(int(u), catalog)
        for t, ph in by_t.items():
            if not low - 1e-3 <= ph <= high + 1e-3:
                warnings.append(f"at {t:g} °C the verified pH {ph:.3f} is outside {low:.3f}-{high:.3f}")
        for c in checks:
            if not c.within_band:
                warnings.append(f"with {c.conc_mol_l * 1000:g} mM {c.kind} at {c.temperature_c:g} °C the verified "
                                f"pH {c.ph:.3f} leaves the band")
        out.append(VerifiedFigures(
            temperature_c=spec.temperature_c, ph=float(eq.ph[u]), ph_by_temperature=by_t,
            ph_under_loads=tuple(checks), capacity_mol_l_per_ph=float(eq.capacity_mol_l_per_ph[u]),
            ionic_strength_mol_l=float(eq.ionic_strength_mol_l[u]),
            osmolarity_osmol_l=float(eq.osmolarity_osmol_l[u]),
            buffer_conc_mol_l=float(sum(v * tables_units[r] for r, v in mix.items())),
            bound_fraction={k: float(v[n]) for k, v in bound.items()},
            dph_dt_per_k=float(drift[n]), dilution_value_ph=float(dilution[n]), warnings=tuple(warnings)))
    return out


def _exact_ph(problem: _Problem, mix: dict[str, float]) -> float:
    fixed_i = 0.0 if problem.ideal else None
    eq = solve_equilibrium(list(mix), np.array([list(mix.values())]), problem.spec.temperature_c,
                           catalog=problem.catalog, activity=problem.activity, fixed_ionic_strength_mol_l=fixed_i)
    return float(eq.ph[0])


def correct_titrant(problem: _Problem, mix: dict[str, float]) -> tuple[dict[str, float], bool]:
    """Bring the exact pH at the use temperature to the target by a 1-D root find.

    The titrant already in the mix is adjusted (HCl, else the base); without one the
    admitted titrant that moves the pH the right way is added.  Returns (mix, corrected).
    """
    target = problem.spec.ph
    ph = _exact_ph(problem, mix)
    if abs(ph - target) <= PH_CORRECT_TOL:
        return mix, False
    acid, base = problem.allowed.acid_id, problem.allowed.base_id
    fixed = dict(problem.spec.fixed_amounts)
    candidates = [r for r in (acid, base) if r and r in mix and mix[r] > 0 and r not in fixed]
    if not candidates:
        candidates = [acid] if ph > target else ([base] if base else [])
    if not candidates:
        raise SolverError(f"the verified pH {ph:.4f} misses the target {target:g} and no titrant may correct it")
    titrant = candidates[0]
    start = mix.get(titrant, 0.0)

    def f(amount):
        trial = dict(mix)
        trial[titrant] = amount
        return _exact_ph(problem, trial) - target

    low, high = 0.0, max(2.0 * start, start + 1e-3)
    for _ in range(40):
        if np.sign(f(low)) != np.sign(f(high)):
            break
        high *= 2.0
    else:
        raise SolverError(f"the verified pH {ph:.4f} misses the target {target:g}; the titrant cannot correct it")
    amount = brentq(f, low, high, xtol=1e-12, rtol=1e-10)
    out = dict(mix)
    out[titrant] = amount
    return {r: v for r, v in out.items() if v > 0}, True


def _reagent_name(reagent_id: str) -> str:
    """The reagent's name for messages (the shipped catalog's; the id if unknown)."""
    reagent = load_catalog().reagents.get(reagent_id)
    return reagent.name if reagent is not None else reagent_id


def constraint_values(data: ModelData, x: np.ndarray) -> list[tuple[str, str, float, float, str]]:
    """(key, sense, body, bound, words) of each row of the model at amounts ``x``."""
    rows = []
    q = {g: data.charge[i] @ x + data.water_charge[i] for i, g in enumerate(data.point_labels)}
    if data.hold_rows:
        for k, t in enumerate(data.grid_temperatures_c):
            what = "acid load" if data.acid_load_mol_l else "temperature window"
            rows.append((f"acid_hold[{k}]", ">=", q[f"lo{k}"], data.acid_load_mol_l,
                         f"{what} at {t:g} °C (pH ≥ {data.point_ph[1 + 2 * k]:.3f})"))
            what = "base load" if data.base_load_mol_l else "temperature window"
            rows.append((f"base_hold[{k}]", "<=", q[f"hi{k}"], -data.base_load_mol_l,
                         f"{what} at {t:g} °C (pH ≤ {data.point_ph[2 + 2 * k]:.3f})"))
    beta = data.capacity @ x + data.water_capacity
    ionic = data.ionic @ x + data.water_ionic
    osm = data.particles @ x + data.water_particles
    if data.capacity_min is not None:
        rows.append(("capacity", ">=", beta, data.capacity_min,
                     f"capacity β ≥ {data.capacity_min * 1000:g} mM/pH"))
    if data.buffer_conc_mol_l is not None:
        rows.append(("buffer_conc", "==", float(data.units.sum(axis=1) @ x), data.buffer_conc_mol_l,
                     f"buffer concentration = {data.buffer_conc_mol_l * 1000:g} mM"))
    if data.ionic_target is not None:
        rows.append(("ionic_target", "==", ionic, data.ionic_target,
                     f"ionic strength = {data.ionic_target * 1000:g} mM"))
    if data.ionic_min is not None:
        rows.append(("ionic_min", ">=", ionic, data.ionic_min, f"ionic strength ≥ {data.ionic_min * 1000:g} mM"))
    if data.ionic_max is not None:
        rows.append(("ionic_max", "<=", ionic, data.ionic_max,
                     f"the {data.ionic_max * 1000:g} mM ionic-strength cap"))
    if data.osm_min is not None:
        rows.append(("osm_min", ">=", osm, data.osm_min, f"osmolarity ≥ {data.osm_min * 1000:g} mOsm/L"))
    if data.osm_max is not None:
        rows.append(("osm_max", "<=", osm, data.osm_max, f"osmolarity ≤ {data.osm_max * 1000:g} mOsm/L"))
    for k, metal in enumerate(data.metal_ids):
        f = data.metal_limit_ratio[k] / (1 + data.metal_limit_ratio[k])
        rows.append((f"metal[{metal}]", "<=", float(data.metal_ratio[k] @ x), float(data.metal_limit_ratio[k]),
                     f"at most {f * 100:g} % of {ion_label(metal)} bound"))
    for i, r in enumerate(data.reagent_ids):
        if x[i] > 0:
            kind = "solubility" if data.upper_is_solubility[i] else f"{CONC_CAP_MOL_L:g} M cap"
            rows.append((f"upper[{r}]", "<=", float(x[i]), float(data.upper_mol_l[i]),
                         f"{_reagent_name(r)} at its {kind} ({data.upper_mol_l[i] * 1000:.4g} mM)"))
    return rows


def _is_tight(sense, body, bound) -> bool:
    tol = 1e-7 + 1e-5 * abs(bound)
    if sense == "==":
        return True
    return abs(body - bound) <= tol


def binding_constraints(data: ModelData, x: np.ndarray) -> tuple[str, ...]:
    """Words for the rows that hold with equality at ``x`` (equality rows always do)."""
    out = [words for _, sense, body, bound, words in constraint_values(data, x) if _is_tight(sense, body, bound)]
    used = int(np.sum(data.units.T @ x > 0)) if data.units.size else 0
    if data.max_systems < len(data.system_ids) and used >= data.max_systems:
        out.append(f"at most {data.max_systems} system(s)")
    return tuple(out)


_DUAL_ROWS = {
    "capacity": ("capacity", 1e-3, "1 mM/pH more capacity"),
    "buffer_conc": ("buffer concentration", 1e-3, "1 mM more buffer"),
    "ionic_target": ("ionic strength", 1e-3, "1 mM more ionic strength"),
    "ionic_min": ("ionic-strength floor", 1e-3, "raising the floor by 1 mM"),
    "ionic_max": ("ionic-strength cap", 1e-3, "raising the cap by 1 mM"),
    "osm_min": ("osmolarity floor", 1e-3, "raising the floor by 1 mOsm/L"),
    "osm_max": ("osmolarity cap", 1e-3, "raising the cap by 1 mOsm/L"),
}


def sensitivity(problem: _Problem) -> tuple[str, ...]:
    """What relaxing the binding rows would change, from the LP duals with binaries fixed.

    The binaries are fixed at the optimum and relaxed to [0, 1] (an LP), HiGHS's row
    duals d = ∂objective/∂rhs are read, then the model is restored.  Only the cost objective
    has a unit a reader can act on (currency per litre); the others get no sensitivity lines.
    """
    if problem.data.objective != "cost":
        return ()
    m = problem.model
    binaries = [v for v in _binaries(m) if not v.fixed]
    for v in binaries:
        v.fix(round(pyo.value(v)))
        v.domain = pyo.UnitInterval
    try:
        if problem.solver.solve(m) != "optimal":
            return ()
        duals = problem.solver.duals()
    finally:
        for v in binaries:
            v.domain = pyo.Binary
            v.unfix()
    unit = f"{problem.prices.currency}/L" if problem.data.objective == "cost" else "objective units"
    out = []
    for key, (name, scale, step) in _DUAL_ROWS.items():
        con = getattr(m, key, None)
        if con is None or con not in duals:
            continue
        d = duals[con] * scale
        if abs(d) > 1e-9:
            out.append(f"{name}: {step} changes the {problem.data.objective} by {d:+.3g} {unit}")
    if problem.data.hold_rows:
        for k, t in enumerate(problem.data.grid_temperatures_c):
            for key, kind in (("acid_hold", "acid"), ("base_hold", "base")):
                con = getattr(m, key)[k]
                d = duals.get(con, 0.0) * 1e-3
                if kind == "base":
                    d = -d
                if abs(d) > 1e-9:
                    out.append(f"{kind} load at {t:g} °C: 1 mM more load changes the {problem.data.objective} "
                               f"by {d:+.3g} {unit}")
    for k, metal in enumerate(problem.data.metal_ids):
        d = duals.get(m.metal[metal], 0.0)
        if abs(d) > 1e-9:
            lim = problem.data.metal_limit_ratio[k]
            f = lim / (1 + lim)
            df = 0.01 / (1 - f) ** 2    # d(f/(1−f))/df · 1 %
            out.append(f"{ion_label(metal)} limit: allowing 1 % more bound changes the {problem.data.objective} "
                       f"by {d * df:+.3g} {unit}")
    return tuple(out)


def solve_min_cost(spec: BufferSpec, prices: PriceBook | None = None, catalog: Catalog | None = None,
                   max_systems: int = 2, max_reagents: int | None = None, objective: str = "cost",
                   activity: str = "davies", ideal: bool = False) -> OptimisationResult:
    """The cheapest mix (or best by ``objective``) meeting ``spec``, verified exactly.

    Parameters
    ----------
    spec : BufferSpec
    prices : PriceBook, default the catalog's demo prices
    max_systems : at most this many buffer systems in the mix (k)
    max_reagents : at most this many reagents (titrant and salt included), or None
    objective : "cost", "ionic-strength", "temperature-drift" or "reagents"
    activity : activity model name (see :mod:`selector.chemistry.activity`)
    ideal : activity coefficients 1 (I = 0 in the model and the check); for checks on paper

    Returns
    -------
    OptimisationResult
        the mix, its cost, the verified figures (exact engine), binding rows, sensitivity.

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
    status, rounds = _solve_rounds(problem)
    if status == "infeasible":
        error, retry = infeasible_or_retry(problem)
        if not retry:
            raise error
        status, more = _solve_rounds(problem)
        rounds += more
        if status == "infeasible":
            raise infeasible_error(problem)
    return finish(problem, rounds)


def finish(problem: _Problem, rounds: int, extra_binding: tuple[str, ...] = ()) -> OptimisationResult:
    """Result of the model's current optimal solution: correct, verify, cost, words."""
    data = problem.data
    x = _amounts(problem.model, data)
    binding = binding_constraints(data, x) + extra_binding
    notes = sensitivity(problem)
    mix = {r: float(v) for r, v in zip(data.reagent_ids, x) if v > 0}
    mix, corrected = correct_titrant(problem, mix)
    verified = verify_mixes(problem, [mix])[0]
    if abs(verified.ph - problem.spec.ph) > PH_REPORT_TOL:
        raise SolverError(f"the verified pH {verified.ph:.4f} is more than {PH_REPORT_TOL} from the target "
                          f"{problem.spec.ph:g}; no result reported")
    misses = verification_misses(problem.spec, verified)
    if misses:
        raise InfeasibleSpecError("the cheapest mix of the linear model fails the exact check, so it is not "
                                  "reported as optimal: " + "; ".join(misses), misses)
    return make_result(problem, mix, verified, binding, notes, rounds, corrected)


def verification_misses(spec: BufferSpec, verified: "VerifiedFigures") -> list[str]:
    """What the exact engine finds outside the spec's pH band (loads, temperature window)."""
    low, high = spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph
    misses = [f"with {c.conc_mol_l * 1000:g} mM {c.kind} at {c.temperature_c:g} °C the exact pH is {c.ph:.3f}, "
              f"outside {low:.3f}-{high:.3f}" for c in verified.ph_under_loads if not c.within_band]
    if spec.temperature_min_c is not None:
        misses += [f"at {t:g} °C the exact pH is {ph:.3f}, outside {low:.3f}-{high:.3f}"
                   for t, ph in verified.ph_by_temperature.items() if not low - 1e-3 <= ph <= high + 1e-3]
    return misses


def make_result(problem: _Problem, mix, verified, binding, notes, rounds, corrected) -> OptimisationResult:
    spec, catalog, prices = problem.spec, problem.catalog, problem.prices
    breakdown = {r: float(v or 0.0) for r, v in prices.cost_breakdown(mix, 1.0, catalog).items()}
    cost = float(sum(breakdown.values()))
    dominant = max(breakdown, key=breakdown.get) if breakdown else ""
    systems = tuple(dict.fromkeys(catalog.reagents[r].system_id for r in mix if catalog.reagents[r].system_id))
    return OptimisationResult(
        status="optimal", objective=problem.data.objective, reagents_mol_l=mix, systems=systems,
        cost_per_l=cost, currency=prices.currency, volume_l=spec.volume_l, cost_for_volume=cost * spec.volume_l,
        cost_per_plate=cost * spec.volume_l / spec.plates if spec.plates else None,
        cost_breakdown_per_l=breakdown, dominant_reagent=dominant, verified=verified, binding=binding,
        sensitivity=notes, activity_rounds=rounds, corrected=corrected, assumptions=problem.assumptions,
        excluded={e.system_id: e.reason for e in problem.allowed.excluded})


# --------------------------------------------------------------------------- infeasible

def elastic_solve(problem: _Problem) -> np.ndarray | None:
    """Free the slacks, minimise their weighted sum; amounts of the nearest mix (or None).

    The target pH (charge balance) is held exactly first; only if no mix reaches the pH
    at all is its slack freed too.  Activity rounds run on the elastic model as well, so
    the nearest mix's figures are those of its own ionic strength.
    """
    m = problem.model
    slacks = [v for var, _ in _slack_groups(m, problem.data)
              for v in (var.values() if var.is_indexed() else [var])]
    charge = [m.s_charge_pos, m.s_charge_neg]
    charge_ids = {id(v) for v in charge}
    for v in slacks:
        if id(v) not in charge_ids:
            v.unfix()
    m.objective.deactivate()
    m.elastic.activate()
    x = None
    try:
        for _ in range(MAX_ACTIVITY_ROUNDS):
            status = problem.solver.solve(m)
            if status != "optimal" and charge[0].fixed:
                for v in charge:
                    v.unfix()
                status = problem.solver.solve(m)
            if status != "optimal":
                return None
            x = _amounts(m, problem.data)
            new_i = _ionic_of(problem.data, x)
            if problem.ideal or abs(new_i - problem.data.ionic_strength_mol_l) < ACTIVITY_TOL_MOL_L:
                break
            problem.recompute(max(new_i, 0.0))
    finally:
        for v in slacks:
            v.fix(0.0)
        m.elastic.deactivate()
        m.objective.activate()
    return x


def conflicts_at(problem: _Problem, x: np.ndarray) -> list[str]:
    """The rows ``x`` violates, in words with the nearest mix's figures and what limits it."""
    data = problem.data
    spec = problem.spec
    rows = constraint_values(data, x)
    violated, limits = [], []
    for key, sense, body, bound, words in rows:
        tol = 1e-7 + 1e-4 * abs(bound)
        bad = (sense == ">=" and body < bound - tol) or (sense == "<=" and body > bound + tol) or \
              (sense == "==" and abs(body - bound) > tol)
        if bad:
            violated.append((key, body, bound, words))
        elif sense != "==" and abs(body - bound) <= tol and not key.startswith(("acid_hold", "base_hold")):
            limits.append(words)
    charge = float(data.charge[0] @ x + data.water_charge[0])
    out = []
    if abs(charge) > 1e-6:
        side = "base" if charge > 0 else "acid"
        hint = " (counter-ion none admits no base titrant)" if side == "base" and problem.allowed.base_id is None \
            else ""
        out.append(f"pH {spec.ph:g}: no admitted mix reaches it; the nearest lacks {abs(charge) * 1000:.3g} mM "
                   f"of {side}{hint}")
    mix = {r: float(v) for r, v in zip(data.reagent_ids, x) if v > 0}
    holds: dict[str, list[tuple[float, float]]] = {}
    for key, body, bound, words in violated:
        if key == "capacity":
            out.append(f"capacity: best reachable {body * 1000:.3g} mM/pH (needs {bound * 1000:g})")
        elif key == "buffer_conc":
            out.append(f"buffer concentration: nearest mix {body * 1000:.3g} mM (needs {bound * 1000:g})")
        elif key.startswith("ionic"):
            out.append(f"ionic strength: nearest mix {body * 1000:.3g} mM ({words})")
        elif key.startswith("osm"):
            out.append(f"osmolarity: nearest mix {body * 1000:.4g} mOsm/L ({words})")
        elif key.startswith("metal"):
            metal = key[6:-1]
            out.append(f"{ion_label(metal)}: the mix binds {body / (1 + body) * 100:.3g} % "
                       f"(limit {bound / (1 + bound) * 100:g} %)")
        elif key.startswith("upper"):
            reagent = key[6:-1]
            i = data.reagent_ids.index(reagent)
            what = "its solubility" if data.upper_is_solubility[i] else f"the {CONC_CAP_MOL_L:g} M cap"
            out.append(f"{problem.catalog.reagents[reagent].name}: needs {body * 1000:.4g} mM, above {what} "
                       f"(about {bound * 1000:.4g} mM)")
        elif key.startswith(("acid_hold", "base_hold")):
            k = int(key.split("[")[1][:-1])
            holds.setdefault(key[:4], []).append((data.grid_temperatures_c[k], 0.0))
    for kind, items in holds.items():
        load = data.acid_load_mol_l if kind == "acid" else data.base_load_mol_l
        phs = [(_exact_ph_at(problem, mix, t, kind, load) if mix else float("nan"), t) for t, _ in items]
        if kind == "acid":
            ph, t = min(phs)
            limit, verb = f"pH ≥ {spec.ph - spec.tolerance_ph:.3f}", "falls to"
        else:
            ph, t = max(phs)
            limit, verb = f"pH ≤ {spec.ph + spec.tolerance_ph:.3f}", "rises to"
        what = f"{kind} load {load * 1000:g} mM" if load else "temperature window"
        temps = ", ".join(f"{t:g}" for t, _ in items)
        out.append(f"{what}: the nearest mix {verb} pH {ph:.3f} at {t:g} °C (needs {limit} at {temps} °C)")
    if out and limits:
        out.append("held back by: " + ", ".join(dict.fromkeys(limits)))
    return list(dict.fromkeys(out))


def _exact_ph_at(problem: _Problem, mix, temperature_c, kind, load) -> float:
    amounts = dict(mix)
    titrant = "hcl" if kind == "acid" else "naoh"
    amounts[titrant] = amounts.get(titrant, 0.0) + load
    fixed_i = 0.0 if problem.ideal else None
    eq = solve_equilibrium(list(amounts), np.array([list(amounts.values())]), temperature_c,
                           catalog=problem.catalog, activity=problem.activity, fixed_ionic_strength_mol_l=fixed_i)
    return float(eq.ph[0])


def infeasible_or_retry(problem: _Problem, what: str = "no mix meets the spec"):
    """(error, retry): after an elastic solve at a self-consistent I, whether the spec may
    be feasible after all (the first solve ran at a guessed I), else the error."""
    x = elastic_solve(problem)
    if x is not None and not conflicts_at(problem, x):
        return None, True
    return _error_from(problem, x, what), False


def _error_from(problem, x, what) -> InfeasibleSpecError:
    conflicts = conflicts_at(problem, x) if x is not None else []
    if not conflicts:
        conflicts = ["the constraints cannot all hold together (no single group explains it)"]
    return InfeasibleSpecError(f"{what}: " + "; ".join(conflicts), conflicts)


def infeasible_error(problem: _Problem, what: str = "no mix meets the spec") -> InfeasibleSpecError:
    """The InfeasibleSpecError of the model's current (infeasible) state, from an elastic solve."""
    x = elastic_solve(problem)
    conflicts = conflicts_at(problem, x) if x is not None else []
    if not conflicts:
        conflicts = ["the constraints cannot all hold together (no single group explains it)"]
    return InfeasibleSpecError(f"{what}: " + "; ".join(conflicts), conflicts)
