"""Volumes of a few stock solutions per well (or per series member): one MILP over all wells.

The model
---------
Wells w with target pH p_w, ionic strength I_w [mol/L] and buffer concentration c_w
[mol/L]; stocks k with compositions S_k [mol/L of each reagent], and water.  A well's
composition is Σ_k v_wk S_k / V (volumes additive), so at (p_w, I_w) with the linear
coefficients q, i, u (:func:`selector.chemistry.linear.linear_coefficients`):

    Σ_k (q_w · S_k) v_wk / V + w_w = 0        (pH p_w)
    Σ_k (i_w · S_k) v_wk / V + iw_w = I_w      (ionic strength, where given)
    (or, with a band, R(p_w − δ) ≥ 0 ≥ R(p_w + δ) and I within ± a fraction of I_w, the
    distance from p_w a small term of the objective: room for the zero-or-minimum rule)
    Σ_k (u · S_k) v_wk / V = c_w               (buffer concentration)
    Σ_k v_wk + v_w,water = V
    v_min d_wk ≤ v_wk ≤ V d_wk,  d_wk ∈ {0, 1}  (zero or at least the smallest pipetted volume)
    d_wk ≤ u_k,  u_k ∈ {0, 1}                  (stock k made at all)
    minimise Σ d_wk + ½ N Σ u_k  (fewest transfers, a stock fewer worth half a transfer per
                                  well), then the stock used (10⁻⁹ Σ v)

The coefficients are taken at I_w and I = I_w is a row, so the linear model is
self-consistent at its solution.  Volumes are rounded to the handling resolution and the
wells re-solved from the rounded volumes by the exact engine in one batch.

Stocks of a plate (:func:`plate_stocks`): the buffer of a pH series at the plate's lowest
ionic strength (:func:`selector.designs.series.solve_series`) at the lowest, middle and
highest pH, without its salt, concentrated :data:`STOCK_FACTORS` times (the largest factor
every reagent's solubility allows), and one salt stock (two when the smallest salt volume
would fall under the minimum pipette volume).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import Any, Sequence

import numpy as np

from catalog import Catalog
from selector.designs.bench import Roles, SaltSteps, bench_recipe, salt_stock_steps
from selector.designs.common import coefficients_at, own_ph, solve_strict
from selector.errors import InfeasibleSpecError, SolverError
from selector.prices import PriceBook
from selector.recipe import Recipe
from selector.spec import BufferSpec

#: Concentration factors tried for the buffer stocks, largest first (common practice: 10×
#: stocks, else 5× or 2×).
STOCK_FACTORS = (10.0, 5.0, 2.0)
#: Fraction of a reagent's solubility a stock may hold (common practice: a margin so the
#: stock stays dissolved on a cool bench).
STOCK_SOLUBILITY_FRACTION = 0.8
#: A stock without a published solubility is held below this [mol/L] (common practice).
STOCK_CAP_MOL_L = 2.0
#: The saltiest well draws about this fraction of the volume left after its buffer from
#: the salt stock (a design choice: room for water on both sides).
SALT_VOLUME_FRACTION = 0.6
#: Salt stocks are rounded up to this step [mol/L].
SALT_STEP_MOL_L = 0.1
#: A stock fewer is worth this many transfers per well in the mixing objective (a design
#: choice: every stock is one more bench recipe).
STOCK_WEIGHT_PER_WELL = 0.5
#: Smallest volume of a stock worth making [mL] (common practice: below this the weighings
#: fall under what a lab balance reads well).
MIN_STOCK_ML = 10.0
#: Name of the water "stock".
WATER = "water"


@dataclass(frozen=True)
class Stock:
    """A stock solution: its name, composition [mol/L] and what it is for."""

    name: str
    composition_mol_l: dict[str, float]
    kind: str          # "buffer", "salt" or "water"


@dataclass(frozen=True)
class StockRecipe:
    """A stock with the volume needed (dead volume included), the volume its recipe makes
    (at least :data:`MIN_STOCK_ML`) [mL] and its bench steps."""

    stock: Stock
    volume_ml: float
    make_ml: float
    recipe: Recipe | SaltSteps | None

    def as_json(self) -> dict:
        return {"name": self.stock.name, "kind": self.stock.kind,
                "composition_mol_l": dict(self.stock.composition_mol_l), "volume_ml": self.volume_ml,
                "make_ml": self.make_ml,
                "recipe": None if self.recipe is None else self.recipe.as_json()}


@dataclass(frozen=True)
class Mixing:
    """Volumes [N, K] of K stocks (water last) for N wells, and the exact check of each well."""

    stock_names: tuple[str, ...]
    volumes: np.ndarray            # [N, K] in the unit of ``volume``
    volume: float                  # V, the well or member volume (same unit)
    compositions: np.ndarray       # [N, R] mol/L from the rounded volumes
    reagent_ids: tuple[str, ...]
    verified_ph: np.ndarray        # [N]
    verified_ionic_mol_l: np.ndarray   # [N]
    transfers: int


def stock_limit_mol_l(reagent_id: str, catalog: Catalog) -> float:
    """Highest concentration of a reagent in a stock [mol/L]: a fraction of its solubility.

    Solubility is grams per litre of water at 25 °C (catalog), read as mol/L of stock.
    """
    reagent = catalog.reagents[reagent_id]
    if reagent.solubility_g_l_25c is None or not reagent.solubility_g_l_25c.value:
        return STOCK_CAP_MOL_L
    return STOCK_SOLUBILITY_FRACTION * reagent.solubility_g_l_25c.value / reagent.molar_mass_g_mol


def stock_factor(compositions: Sequence[dict[str, float]], catalog: Catalog) -> float:
    """The largest of :data:`STOCK_FACTORS` at which every composition stays dissolved (else 1)."""
    for factor in STOCK_FACTORS:
        if all(factor * v <= stock_limit_mol_l(r, catalog) for c in compositions for r, v in c.items()):
            return factor
    return 1.0


def _matrix(stocks: Sequence[Stock], reagent_ids: Sequence[str]) -> np.ndarray:
    """[K, R] stock compositions (water a row of zeros)."""
    out = np.zeros((len(stocks), len(reagent_ids)))
    for k, stock in enumerate(stocks):
        for r, v in stock.composition_mol_l.items():
            out[k, list(reagent_ids).index(r)] = v
    return out


@dataclass(frozen=True)
class Band:
    """How far the mixing model may leave a well's target: the charge rows at p ∓ δ [N, K]
    and [N] (R(p − δ) ≥ 0 ≥ R(p + δ): the pH within ±δ, R falling with pH), and I within
    ± ``ionic_relative`` of its target."""

    charge_low: np.ndarray
    water_charge_low: np.ndarray
    charge_high: np.ndarray
    water_charge_high: np.ndarray
    ionic_relative: float


#: Weight of the distance from the target pH (the scaled charge at p) and from the target I
#: (relative) in the mixing objective when a band is allowed: a tie-break that keeps wells
#: in the middle of the band unless a transfer or a stock is saved.
CENTRE_WEIGHT = 1e-3


def _scaled(charge: np.ndarray, water_charge: np.ndarray, volume: float) -> np.ndarray:
    """Each well's largest charge coefficient: stocks mixed near their own pH carry charges
    of 10⁻⁶-10⁻⁵ mol/L, under the solver's row tolerance unless the rows are divided by it."""
    return np.maximum(np.maximum(np.abs(charge).max(axis=1) / volume, np.abs(water_charge)), 1e-300)


def build_mixing_model(charge: np.ndarray, water_charge: np.ndarray, ionic: np.ndarray | None,
                       water_ionic: np.ndarray, ionic_target: np.ndarray | None, conc: np.ndarray,
                       conc_target: np.ndarray, volume: float, min_volume: float, band: Band | None = None) -> Any:
    """The Pyomo model of the volumes (pure).  Per well and stock coefficients [N, K] (stock
    k's charge, I and buffer total per unit of v/V); see the module for the maths.  Without a
    ``band`` the pH and I rows are equalities; with one, the pH and I may move within it."""
    import pyomo.core as pyo

    n_wells, n_stocks = charge.shape
    m = pyo.ConcreteModel(name="poise_mixing")
    m.W = pyo.RangeSet(0, n_wells - 1)
    m.K = pyo.RangeSet(0, n_stocks - 1)
    m.v = pyo.Var(m.W, m.K, bounds=(0.0, volume), initialize=0.0)
    m.d = pyo.Var(m.W, m.K, within=pyo.Binary)
    m.low = pyo.Constraint(m.W, m.K, rule=lambda _, w, k: m.v[w, k] >= min_volume * m.d[w, k])
    m.high = pyo.Constraint(m.W, m.K, rule=lambda _, w, k: m.v[w, k] <= volume * m.d[w, k])
    m.fill = pyo.Constraint(m.W, rule=lambda _, w: sum(m.v[w, k] for k in m.K) == volume)

    def row(q: np.ndarray, qw: np.ndarray, w: int) -> Any:
        return (sum(float(q[w, k]) * m.v[w, k] for k in m.K) / volume + float(qw[w])) / float(scale[w])
    scale = _scaled(charge, water_charge, volume)
    m.off = pyo.Var(m.W, [0, 1], bounds=(0.0, None))
    if band is None:
        m.charge = pyo.Constraint(m.W, rule=lambda _, w: row(charge, water_charge, w) == 0.0)
    else:
        m.charge = pyo.Constraint(m.W, rule=lambda _, w: row(charge, water_charge, w) == m.off[w, 0] - m.off[w, 1])
        m.ph_low = pyo.Constraint(m.W, rule=lambda _, w: row(band.charge_low, band.water_charge_low, w) >= 0.0)
        m.ph_high = pyo.Constraint(m.W, rule=lambda _, w: row(band.charge_high, band.water_charge_high, w) <= 0.0)
    if ionic is not None and ionic_target is not None:
        width = band.ionic_relative if band is not None else 0.0

        def ionic_of(w: int) -> Any:
            return sum(float(ionic[w, k]) * m.v[w, k] for k in m.K) / volume + float(water_ionic[w])
        m.ionic_off = pyo.Var(m.W, [0, 1], bounds=lambda _, w, j: (0.0, float(ionic_target[w]) * width))
        m.ionic = pyo.Constraint(m.W, rule=lambda _, w: ionic_of(w) - float(ionic_target[w])
                                 == m.ionic_off[w, 0] - m.ionic_off[w, 1])
        m.ionic_centre = pyo.Expression(expr=sum(m.ionic_off[w, j] / float(ionic_target[w])
                                                 for w in m.W for j in (0, 1)))
    else:
        m.ionic_centre = pyo.Expression(expr=0.0)
    m.conc = pyo.Constraint(m.W, rule=lambda _, w: sum(float(conc[w, k]) * m.v[w, k] for k in m.K) / volume
                            == float(conc_target[w]))
    m.u = pyo.Var(m.K, within=pyo.Binary)
    m.stock_used = pyo.Constraint(m.W, m.K, rule=lambda _, w, k: m.d[w, k] <= m.u[k])
    m.objective = pyo.Objective(expr=sum(m.d[w, k] for w in m.W for k in m.K)
                                + STOCK_WEIGHT_PER_WELL * n_wells * sum(m.u[k] for k in m.K)
                                + CENTRE_WEIGHT * (sum(m.off.values()) + m.ionic_centre)
                                + 1e-9 * sum(m.v[w, k] for w in m.W for k in m.K) / volume)
    return m


def mix_from_stocks(stocks: Sequence[Stock], target_ph: np.ndarray, target_ionic_mol_l: np.ndarray | None,
                    target_conc_mol_l: np.ndarray, volume: float, min_volume: float, resolution: float,
                    temperature_c: float, catalog: Catalog, ionic_guess_mol_l: np.ndarray | None = None,
                    ph_band: float = 0.0, ionic_band_relative: float = 0.0) -> Mixing:
    """Volumes of ``stocks`` (water last) for every well, verified by the exact engine.

    Parameters
    ----------
    stocks : the stocks, the last one water (an empty composition)
    target_ph, target_ionic_mol_l, target_conc_mol_l : [N] per well (I may be None: no row)
    volume : V of each well; min_volume : the smallest volume pipetted (0: no rule);
        resolution : volumes are rounded to multiples of this (all in one unit, e.g. µL)
    ionic_guess_mol_l : [N] I of the coefficients where no I target is given
    ph_band, ionic_band_relative : how far [pH] and how far relative a well may sit from its
        targets in the model (0: exactly on them); room for the zero-or-minimum rule

    Raises
    ------
    InfeasibleSpecError
        no volumes meet every well with each volume zero or at least ``min_volume``
        (the wells that cannot are named).
    """
    ids = tuple(dict.fromkeys(r for s in stocks for r in s.composition_mol_l))
    matrix = _matrix(stocks, ids)
    ionic_at = target_ionic_mol_l if target_ionic_mol_l is not None else ionic_guess_mol_l
    if ionic_at is None:
        ionic_at = np.full(len(target_ph), 0.1)
    n = len(target_ph)
    points = np.concatenate([target_ph, target_ph - ph_band, target_ph + ph_band]) if ph_band else target_ph
    lc = coefficients_at(ids, points, temperature_c, np.tile(ionic_at, len(points) // n), catalog)
    charge_all = lc.charge @ matrix.T                                   # [points, K]
    charge, ionic = charge_all[:n], (lc.ionic @ matrix.T)[:n]
    band = None if not ph_band else Band(charge_all[n:2 * n], lc.water_charge[n:2 * n], charge_all[2 * n:],
                                         lc.water_charge[2 * n:], ionic_band_relative)
    conc = np.broadcast_to(matrix @ lc.system_units.sum(axis=1), charge.shape)
    m = build_mixing_model(charge, lc.water_charge[:n], ionic, lc.water_ionic[:n], target_ionic_mol_l, conc,
                           target_conc_mol_l, volume, min_volume, band)
    if solve_strict(m) != "optimal":
        raise _explain_mixing(m, target_ph, target_ionic_mol_l, min_volume)
    k = charge.shape[1]
    raw = np.array([[m.v[w, j].value or 0.0 for j in range(k)] for w in range(n)])
    volumes = _rounded(raw, volume, resolution, min_volume)
    compositions = volumes @ matrix / volume
    from selector.chemistry.equilibrium import solve_equilibrium

    eq = solve_equilibrium(list(ids), compositions, temperature_c, catalog=catalog)
    return Mixing(tuple(s.name for s in stocks), volumes, volume, compositions, ids, eq.ph,
                  eq.ionic_strength_mol_l, int(np.count_nonzero(volumes)))


def _rounded(raw: np.ndarray, volume: float, resolution: float, min_volume: float) -> np.ndarray:
    """Volumes rounded to ``resolution``; the water (last column) takes up the rounding."""
    out = np.round(raw / resolution) * resolution
    out[np.abs(raw) < 0.5 * resolution] = 0.0
    water = volume - out[:, :-1].sum(axis=1)
    out[:, -1] = np.where(raw[:, -1] > 0.5 * resolution, water, 0.0)
    return np.maximum(out, 0.0)


def _explain_mixing(m: Any, target_ph: np.ndarray, target_ionic: np.ndarray | None,
                    min_volume: float) -> InfeasibleSpecError:
    """Which wells cannot be mixed: re-solve without the zero-or-minimum rule and name the
    wells left with a volume between zero and the minimum (or none at all)."""
    import pyomo.core as pyo

    for var in m.d.values():
        var.domain = pyo.UnitInterval
    m.low.deactivate()
    if solve_strict(m) != "optimal":
        return InfeasibleSpecError("the stocks cannot reach every well's pH and ionic strength at any volumes; "
                                   "narrow the pH or ionic-strength range", ["stocks"])
    wells = sorted({w for (w, k), var in m.v.items() if 0 < (var.value or 0.0) < min_volume * (1 - 1e-9)})
    words = [f"pH {target_ph[w]:g}" + ("" if target_ionic is None else f", I {target_ionic[w] * 1000:g} mM")
             for w in wells]
    return InfeasibleSpecError(f"{len(wells)} well(s) need a volume below the minimum pipette volume "
                               f"{min_volume:g} from every set of the stocks (e.g. {words[0] if words else '-'}); "
                               "use a larger well volume or a smaller minimum pipette volume", words)


def buffer_part(composition: dict[str, float], salt_id: str | None) -> dict[str, float]:
    """The composition without its salt."""
    return {r: v for r, v in composition.items() if r != salt_id}


def salt_concentrations(salt_needed_mol_l: np.ndarray, room: float, min_volume: float, volume: float,
                        catalog_limit_mol_l: float) -> tuple[float, ...]:
    """The salt stock(s) [mol/L]: the saltiest well uses :data:`SALT_VOLUME_FRACTION` of the
    ``room`` left after its buffer; a tenfold dilution beside it when the least salty well
    would pipette less than ``min_volume``."""
    positive = salt_needed_mol_l[salt_needed_mol_l > 1e-9]
    if positive.size == 0:
        return ()
    high = positive.max() * volume / (SALT_VOLUME_FRACTION * room)
    high = min(math.ceil(high / SALT_STEP_MOL_L) * SALT_STEP_MOL_L, catalog_limit_mol_l)
    if positive.min() * volume / high >= min_volume:
        return (high,)
    return (high, round(high / 10.0, 6))


def stock_recipes(stocks: Sequence[Stock], used_per_stock: np.ndarray, dead_volume_ml: float, spec: BufferSpec,
                  roles: Roles, catalog: Catalog, prices: PriceBook) -> tuple[StockRecipe, ...]:
    """Each stock with the volume to make [mL] (used + dead volume) and its bench steps."""
    out = []
    temperature = spec.temperature_c
    for stock, used_ml in zip(stocks, used_per_stock):
        volume_ml = float(used_ml) + dead_volume_ml
        make_ml = max(volume_ml, MIN_STOCK_ML) if stock.kind != "water" else volume_ml
        recipe: Recipe | SaltSteps | None = None
        at = dataclasses.replace(spec, volume_l=make_ml / 1000.0, ionic_strength_mol_l=None)
        if stock.kind == "buffer":
            ph = own_ph(stock.composition_mol_l, temperature, catalog)
            recipe = bench_recipe(stock.composition_mol_l, at, ph, roles, catalog, prices)
        elif stock.kind == "salt" and roles.salt is not None:
            recipe = salt_stock_steps(roles.salt, stock.composition_mol_l[roles.salt], make_ml / 1000.0, at,
                                      catalog, prices)
        out.append(StockRecipe(stock, volume_ml, make_ml, recipe))
    return tuple(out)


@dataclass(frozen=True)
class MixingPlan:
    """A series as volumes of shared stocks per member [mL], with the stocks' recipes."""

    stocks: tuple[StockRecipe, ...]
    member_ph: tuple[float, ...]
    volumes_ml: np.ndarray          # [N, K], water last
    verified_ph: tuple[float, ...]
    verified_ionic_mol_l: tuple[float, ...]

    def as_json(self) -> dict:
        names = [s.stock.name for s in self.stocks]
        return {"stocks": [s.as_json() for s in self.stocks],
                "members": [{"target_ph": p, "volumes_ml": {k: round(float(v), 6) for k, v in zip(names, row)},
                             "verified_ph": vp, "ionic_strength_mol_l": vi}
                            for p, row, vp, vi in zip(self.member_ph, self.volumes_ml, self.verified_ph,
                                                      self.verified_ionic_mol_l)]}


#: Mixing-plan volumes are rounded to this [mL] (a graduated pipette).
PLAN_RESOLUTION_ML = 0.01
#: Smallest volume of the mixing plan [mL] (common practice: a 1 mL graduated pipette).
PLAN_MIN_ML = 0.1


def stock_choices(count: int, blocks: int = 1) -> list[list[int]]:
    """Which members become buffer stocks, tried in order: the lowest, middle and highest
    pH of each block of members (enough when the members lie on one titration line), then
    every member.  ``blocks``: the members are ``blocks`` runs of the same pH values."""
    per = count // blocks
    few = sorted({b * per + i for b in range(blocks) for i in (0, per // 2, per - 1)})
    return [few] if len(few) == count else [few, list(range(count))]


def pick_buffer_stocks(compositions: Sequence[dict[str, float]], salt_id: str | None, catalog: Catalog,
                       picks: Sequence[int], labels: Sequence[str]) -> tuple[list[Stock], float]:
    """Buffer stocks from the members ``picks`` (salt removed), concentrated by one factor;
    each named for its member (``labels``) and the factor."""
    parts = [buffer_part(compositions[i], salt_id) for i in picks]
    factor = stock_factor(parts, catalog)
    return [Stock(f"buffer {labels[i]} ({factor:g}x)", {r: v * factor for r, v in part.items()}, "buffer")
            for i, part in zip(picks, parts)], factor


def salt_stocks(salt_needed_mol_l: np.ndarray, factor: float, min_volume: float, volume: float, salt_id: str | None,
                catalog: Catalog) -> list[Stock]:
    """The salt stock(s) of :func:`salt_concentrations`, then water."""
    out = []
    if salt_id:
        room = volume * (1.0 - 1.0 / factor)
        for conc in salt_concentrations(salt_needed_mol_l, room, min_volume, volume, stock_limit_mol_l(salt_id, catalog)):
            out.append(Stock(f"{catalog.reagents[salt_id].name} {conc:g} M", {salt_id: conc}, "salt"))
    return out + [Stock(WATER, {}, "water")]


def mix_members(compositions: Sequence[dict[str, float]], labels: Sequence[str], salt_needed_mol_l: np.ndarray, target_ph: np.ndarray,
                target_ionic_mol_l: np.ndarray, target_conc_mol_l: np.ndarray, volume: float, min_volume: float,
                resolution: float, salt_id: str | None, temperature_c: float,
                catalog: Catalog, blocks: int = 1, ph_band: float = 0.0,
                ionic_band_relative: float = 0.0) -> tuple[list[Stock], Mixing]:
    """Stocks from series members (named by ``labels``) and the volumes of every well (targets per well, members
    repeated as the wells need); the fewest buffer stocks that can be mixed
    (:func:`stock_choices`).

    Raises
    ------
    InfeasibleSpecError
        not even one stock per member can be mixed into every well.
    """
    error: InfeasibleSpecError | None = None
    for picks in stock_choices(len(compositions), blocks):
        stocks, factor = pick_buffer_stocks(compositions, salt_id, catalog, picks, labels)
        stocks += salt_stocks(salt_needed_mol_l, factor, min_volume, volume, salt_id, catalog)
        try:
            return stocks, mix_from_stocks(stocks, target_ph, target_ionic_mol_l, target_conc_mol_l, volume,
                                           min_volume, resolution, temperature_c, catalog, None, ph_band,
                                           ionic_band_relative)
        except InfeasibleSpecError as failed:
            error = failed
    assert error is not None
    raise error


def series_plan(spec: BufferSpec, members: Sequence[Any], reagent_ids: Sequence[str], roles: Roles,
                catalog: Catalog, prices: PriceBook) -> MixingPlan:
    """The series as a mixing plan: buffer stocks, salt stock(s), water per member [mL].

    Raises
    ------
    InfeasibleSpecError
        the stocks cannot be mixed into every member (see :func:`mix_from_stocks`).
    SolverError
        a member mixed from the stocks misses its pH by more than 0.005 or its I by 1 %.
    """
    from selector.designs.series import IONIC_TOL_RELATIVE, PH_TOL

    compositions = [m.composition_mol_l for m in members]
    volume_ml = spec.volume_l * 1000.0
    salt_needed = np.array([c.get(roles.salt or "", 0.0) for c in compositions])
    ph = np.array([m.target_ph for m in members])
    ionic = np.array([m.ionic_strength_mol_l for m in members])
    conc = np.array([m.buffer_conc_mol_l for m in members])
    labels = [f"pH {p:g}" for p in ph]
    stocks, mixing = mix_members(compositions, labels, salt_needed, ph, ionic, conc, volume_ml, PLAN_MIN_ML,
                                 PLAN_RESOLUTION_ML, roles.salt, spec.temperature_c, catalog)
    misses = [f"pH {p:g}: {v:.4f}" for p, v, i, t in zip(ph, mixing.verified_ph, mixing.verified_ionic_mol_l, ionic)
              if abs(v - p) > PH_TOL or abs(i - t) > IONIC_TOL_RELATIVE * t]
    if misses:
        raise SolverError("members mixed from the stocks miss their targets: " + "; ".join(misses))
    used = mixing.volumes.sum(axis=0) > 0
    recipes = stock_recipes([s for s, u in zip(stocks, used) if u], mixing.volumes.sum(axis=0)[used], 0.0, spec,
                            roles, catalog, prices)
    return MixingPlan(recipes, tuple(float(p) for p in ph), mixing.volumes[:, used],
                      tuple(float(v) for v in mixing.verified_ph), tuple(float(v) for v in mixing.verified_ionic_mol_l))
