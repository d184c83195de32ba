"""The problem as numbers: admitted reagents, the temperature grid and the linear coefficients.

:func:`model_data` turns a spec, its admitted reagents, a price book and a catalog into a
frozen :class:`ModelData`, the only input of :func:`selector.optimise.model.build_min_cost_model`.
The coefficients that depend on the ionic strength are recomputed by
:func:`at_ionic_strength` for each activity round.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np

from catalog import Catalog
from selector.admissible import Admissible
from selector.chemistry.linear import LinearCoefficients, linear_coefficients, metal_binding_terms
from selector.errors import InputError
from selector.prices import PriceBook
from selector.spec import BufferSpec

#: Temperatures of the window grid.
GRID_POINTS = 5
#: Cap on any reagent amount [mol/L] (common practice: stock-free bench buffers).
CONC_CAP_MOL_L = 1.0
#: Bound of every x in the elastic model [mol/L]; keeps the model bounded.
ELASTIC_CAP_MOL_L = 5.0
#: Capacity floor used when a spec asks for no concentration, capacity or load
#: [mol/L per pH]; common practice (about 20 mM of a system at its pKa).
DEFAULT_CAPACITY_MOL_L_PER_PH = 0.01
#: Half the temperature step of the drift objective's slope [K].
DRIFT_STEP_K = 0.5
#: Highest temperature of the drift step [°C] (the engine's range, 0-95 °C).
DRIFT_MAX_TEMPERATURE_C = 95.0


def temperature_grid(spec: BufferSpec) -> tuple[float, ...]:
    """Temperatures [°C] at which the pH must stay in the band: 5 over the window, or T_use."""
    if spec.temperature_min_c is None or spec.temperature_max_c is None:
        return (spec.temperature_c,)
    points = np.linspace(spec.temperature_min_c, spec.temperature_max_c, GRID_POINTS)
    grid = {float(t) for t in np.round(points, 6)}
    grid.add(spec.temperature_c)
    return tuple(sorted(grid))


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


def assumed_capacity(spec: BufferSpec) -> float | None:
    """The capacity floor [mol/L per pH]: the spec's, or the default when it asks for nothing."""
    if spec.capacity_mol_l_per_ph is None and spec.buffer_conc_mol_l is None and not spec.loads:
        return DEFAULT_CAPACITY_MOL_L_PER_PH
    return spec.capacity_mol_l_per_ph


@dataclass(frozen=True)
class Coefficients:
    """The ionic-strength-dependent coefficients of the model at one I.

    Shapes: G points, R reagents, M metals.  Units as in
    :class:`selector.chemistry.linear.LinearCoefficients`.
    """

    charge: np.ndarray             # [G, R] mol of charge per mol of reagent
    water_charge: np.ndarray       # [G] [H⁺] − [OH⁻] terms [mol/L]
    capacity: np.ndarray           # [R] β per mol/L at the use point
    water_capacity: float          # [mol/L per pH]
    ionic: np.ndarray              # [R] I per mol/L at the use point
    water_ionic: float             # [mol/L]
    particles: np.ndarray          # [R] particles per formula unit
    water_particles: float         # [osmol/L]
    metal_ratio: np.ndarray        # [M, R] bound/free metal per mol/L of reagent
    system_ids: tuple[str, ...]
    units: np.ndarray              # [R, S] system units per reagent


def _linear_terms(reagent_ids: tuple[str, ...], point_ph: np.ndarray, point_temperature_c: np.ndarray,
                  ionic_strength_mol_l: float | np.ndarray, metal_ids: tuple[str, ...], catalog: Catalog,
                  activity: str) -> tuple[LinearCoefficients, np.ndarray]:
    """The linear coefficients at every point and the metals' binding ratios [M, G, R]."""
    lc = linear_coefficients(reagent_ids, point_ph, point_temperature_c, ionic_strength_mol_l, catalog, activity)
    ratio = np.zeros((len(metal_ids), len(lc.ph), len(reagent_ids)))
    for m, metal in enumerate(metal_ids):
        ratio[m] = metal_binding_terms(metal, lc, catalog, activity).ratio
    return lc, ratio


def coefficients_at(reagent_ids: tuple[str, ...], point_ph: np.ndarray, point_temperature_c: np.ndarray,
                    ionic_strength_mol_l: float, metal_ids: tuple[str, ...], catalog: Catalog,
                    activity: str) -> Coefficients:
    """The linear coefficients at every point, at ionic strength I [mol/L]."""
    lc, ratio = _linear_terms(reagent_ids, point_ph, point_temperature_c, ionic_strength_mol_l, metal_ids, catalog,
                              activity)
    return Coefficients(
        charge=lc.charge, water_charge=lc.water_charge, capacity=lc.capacity[0],
        water_capacity=float(lc.water_capacity[0]), ionic=lc.ionic[0], water_ionic=float(lc.water_ionic[0]),
        particles=lc.particles, water_particles=float(lc.water_particles[0]), metal_ratio=ratio[:, 0],
        system_ids=tuple(lc.system_ids), units=lc.system_units)


@dataclass(frozen=True)
class ModelData:
    """Arrays the model is built from (pure input of :func:`build_min_cost_model`).

    Point labels: ``use`` (p, T_use), ``lo{k}`` (p − δ, T_k), ``hi{k}`` (p + δ, T_k),
    ``dlo``/``dhi`` (p, T_use ∓ 0.5 K).  Shapes: R reagents, S systems, G points, M metals.
    Concentrations in mol/L, ionic strength in mol/L, osmolarity in osmol/L, costs in
    currency per L per mol/L.
    """

    reagent_ids: tuple[str, ...]
    reagent_names: tuple[str, ...]   # for words (the catalog's names)
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

    def point(self, label: str) -> int:
        """Position of the point ``label`` (``use``, ``lo0``, ``hi0`` …, ``dlo``, ``dhi``)."""
        return self.point_labels.index(label)


def _points(spec: BufferSpec) -> tuple[tuple[float, ...], tuple[str, ...], np.ndarray, np.ndarray]:
    grid = temperature_grid(spec)
    labels, ph, temp = ["use"], [spec.ph], [spec.temperature_c]
    for k, t in enumerate(grid):
        labels += [f"lo{k}", f"hi{k}"]
        ph += [spec.ph - spec.tolerance_ph, spec.ph + spec.tolerance_ph]
        temp += [t, t]
    t_lo = max(spec.temperature_c - DRIFT_STEP_K, 0.0)
    t_hi = min(spec.temperature_c + DRIFT_STEP_K, DRIFT_MAX_TEMPERATURE_C)
    labels += ["dlo", "dhi"]
    ph += [spec.ph, spec.ph]
    temp += [t_lo, t_hi]
    return grid, tuple(labels), np.array(ph), np.array(temp)


def _bounds_and_costs(spec: BufferSpec, reagent_ids: tuple[str, ...], prices: PriceBook,
                      catalog: Catalog) -> tuple[list[float], list[bool], list[float]]:
    """Upper bound U_r [mol/L], whether it is the solubility, and c_r [currency/L per mol/L]."""
    upper, from_solubility, cost = [], [], []
    fixed = dict(spec.fixed_amounts)
    for reagent_id in reagent_ids:
        reagent = catalog.reagents[reagent_id]
        sol = reagent.solubility_g_l_25c.value / reagent.molar_mass_g_mol if reagent.solubility_g_l_25c else math.inf
        upper.append(max(min(sol, CONC_CAP_MOL_L), fixed.get(reagent_id, 0.0)))
        from_solubility.append(sol < CONC_CAP_MOL_L)
        price = prices.price_per_kg(reagent_id)
        if price is None:
            if reagent_id not in fixed:
                raise InputError(f"no price for {reagent.name}; add it to the price sheet")
            price = 0.0
        cost.append(price * reagent.molar_mass_g_mol / reagent.purity_fraction / 1000.0)
    return upper, from_solubility, cost


def model_data(spec: BufferSpec, allowed: Admissible, prices: PriceBook, catalog: Catalog,
               max_systems: int = 2, max_reagents: int | None = None, objective: str = "cost",
               ionic_strength_mol_l: float | None = None, activity: str = "davies") -> ModelData:
    """The arrays of the model of ``spec`` over the admitted reagents, at ionic strength I [mol/L].

    Raises
    ------
    InputError
        a reagent that is not a fixed amount has no price.
    """
    reagent_ids = tuple(allowed.reagents)
    grid, labels, point_ph, point_t = _points(spec)
    if ionic_strength_mol_l is None:
        ionic_strength_mol_l = initial_ionic_strength(spec)
    metals = tuple(m.metal for m in spec.metals)
    coef = coefficients_at(reagent_ids, point_ph, point_t, ionic_strength_mol_l, metals, catalog, activity)
    upper, from_solubility, cost = _bounds_and_costs(spec, reagent_ids, prices, catalog)
    return ModelData(
        reagent_ids=reagent_ids, reagent_names=tuple(catalog.reagents[r].name for r in reagent_ids),
        system_ids=coef.system_ids, units=coef.units,
        upper_mol_l=np.array(upper), upper_is_solubility=np.array(from_solubility),
        cost_per_mol=np.array(cost), point_labels=labels, point_ph=point_ph, point_temperature_c=point_t,
        charge=coef.charge, water_charge=coef.water_charge, capacity=coef.capacity,
        water_capacity=coef.water_capacity, ionic=coef.ionic, water_ionic=coef.water_ionic,
        particles=coef.particles, water_particles=coef.water_particles, metal_ids=metals,
        metal_ratio=coef.metal_ratio,
        metal_limit_ratio=np.array([m.max_bound_fraction / (1.0 - m.max_bound_fraction) for m in spec.metals]),
        grid_temperatures_c=grid,
        acid_load_mol_l=max((x.conc_mol_l for x in spec.loads if x.kind == "acid"), default=0.0),
        base_load_mol_l=max((x.conc_mol_l for x in spec.loads if x.kind == "base"), default=0.0),
        hold_rows=bool(spec.loads) or spec.temperature_min_c is not None,
        capacity_min=assumed_capacity(spec), buffer_conc_mol_l=spec.buffer_conc_mol_l,
        ionic_target=spec.ionic_strength_mol_l, ionic_min=spec.ionic_strength_min_mol_l,
        ionic_max=spec.ionic_strength_max_mol_l, osm_min=spec.osmolarity_min_osmol_l,
        osm_max=spec.osmolarity_max_osmol_l, fixed_mol_l=tuple(spec.fixed_amounts),
        max_systems=max_systems, max_reagents=max_reagents, objective=objective,
        ionic_strength_mol_l=float(ionic_strength_mol_l),
    )


def at_ionic_strength(data: ModelData, ionic_strength_mol_l: float, catalog: Catalog, activity: str,
                      columns: tuple[int, ...] | None = None) -> ModelData:
    """``data`` with its ionic-strength-dependent coefficients recomputed at I [mol/L].

    ``columns`` (positions in ``data.reagent_ids``) limits the recomputation to those
    reagents; the others keep their coefficients.  A model whose other reagents are held
    at zero (one system alone, :meth:`selector.optimise.solve.Problem.restrict_to_system`)
    has the same solution either way, and the engine then speciates one system, not all.
    """
    if columns is not None:
        return at_ionic_strengths([data], [ionic_strength_mol_l], catalog, activity, [columns])[0]
    coef = coefficients_at(data.reagent_ids, data.point_ph, data.point_temperature_c, ionic_strength_mol_l,
                           data.metal_ids, catalog, activity)
    return replace(data, charge=coef.charge, water_charge=coef.water_charge, capacity=coef.capacity,
                   water_capacity=coef.water_capacity, ionic=coef.ionic, water_ionic=coef.water_ionic,
                   metal_ratio=coef.metal_ratio, ionic_strength_mol_l=float(ionic_strength_mol_l))


def at_ionic_strengths(datas: Sequence[ModelData], ionic_strengths_mol_l: Sequence[float], catalog: Catalog,
                       activity: str, columns: Sequence[tuple[int, ...]]) -> list[ModelData]:
    """Each ``datas[k]`` with the coefficients of its ``columns[k]`` recomputed at its own I
    [mol/L] (:func:`at_ionic_strength` with columns), all in one engine call.

    The data are of one model (the same reagents, points and metals).  The engine gets the
    union of the columns at one block of the model's points per data, each block at its own
    I; a data's coefficients are read from its own block and columns.

    Raises
    ------
    ValueError
        the data are not of one model.
    """
    first = datas[0]
    if any(d.reagent_ids != first.reagent_ids or d.point_labels != first.point_labels
           or d.metal_ids != first.metal_ids for d in datas):
        raise ValueError("at_ionic_strengths takes the data of one model")
    union = sorted(set().union(*columns))
    where = {c: j for j, c in enumerate(union)}
    g, k = len(first.point_ph), len(datas)
    lc, ratio = _linear_terms(tuple(first.reagent_ids[i] for i in union), np.tile(first.point_ph, k),
                              np.tile(first.point_temperature_c, k),
                              np.repeat(np.asarray(ionic_strengths_mol_l, dtype=float), g),
                              first.metal_ids, catalog, activity)
    out = []
    for n, (data, ionic, index) in enumerate(zip(datas, ionic_strengths_mol_l, columns)):
        use, block, mine = n * g, slice(n * g, (n + 1) * g), [where[c] for c in index]
        charge, capacity, ionic_r, metal = (data.charge.copy(), data.capacity.copy(), data.ionic.copy(),
                                            data.metal_ratio.copy())
        charge[:, list(index)] = lc.charge[block][:, mine]
        capacity[list(index)], ionic_r[list(index)] = lc.capacity[use, mine], lc.ionic[use, mine]
        metal[:, list(index)] = ratio[:, use][:, mine]
        out.append(replace(data, charge=charge, water_charge=lc.water_charge[block].copy(), capacity=capacity,
                           water_capacity=float(lc.water_capacity[use]), ionic=ionic_r,
                           water_ionic=float(lc.water_ionic[use]), metal_ratio=metal,
                           ionic_strength_mol_l=float(ionic)))
    return out


def ionic_strength_of(data: ModelData, x: np.ndarray) -> float:
    """I [mol/L] of the linear model at amounts ``x`` [mol/L]."""
    return float(data.ionic @ x + data.water_ionic)
