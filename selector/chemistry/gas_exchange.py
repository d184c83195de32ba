"""Equilibrium with a gas phase at a fixed partial pressure: CO₂ from the air in an open vessel.

An alkaline buffer left open takes up CO₂ and a carbonate buffer loses it, until the dissolved
neutral species (H₂CO₃* = CO₂(aq) + H₂CO₃, the carbonate system's most protonated form) has the
concentration Henry's law fixes:

.. math:: m_{\\mathrm{H_2CO_3^*}} = K_H(T)\\, p_{\\mathrm{CO_2}}, \\qquad
          \\gamma_{\\mathrm{H_2CO_3^*}} = 1

(the activity of a neutral species is its concentration, the engine's rule for z = 0), with
log K_H(T) from the catalog's ``gases.csv`` (phreeqc.dat CO2(g): −1.468 at 25 °C and its
analytic log K(T); the molality becomes mol/L with the density of water,
:func:`selector.chemistry.equilibrium.molal_to_molar`).  The unknown is the carbonate total C_T:
at a given C_T the solution is the closed one of the engine with C_T − C_T,0 of H₂CO₃* added
(CO₂ + H₂O: no strong ion changes; negative where CO₂ leaves).  The residual

.. math:: g(C_T) = \\ln\\big(\\alpha_0(C_T)\\, C_T\\big) - \\ln c_{eq}

rises with C_T (more CO₂ lowers the pH and raises α₀), and α₀ ≤ 1 gives C_T ≥ c_eq: g(c_eq) ≤ 0
is one end of the bracket, the other is found by widening; then a regula falsi on ln C_T with the
Illinois safeguard (Dowell & Jarratt, BIT 11 (1971) 168, from memory), each round ONE engine call
over the unsettled rows of the batch.  With metals present the engine's complexation solver is
the one inside, and α₀ is the free fraction.

The gas a solution meets is moist air.  A gas given as its fraction of DRY air (``420ppm``, the
way CO₂ in air is quoted) has the partial pressure

.. math:: p_{\\mathrm{CO_2}} = x_{\\mathrm{CO_2}}\\,\big(P - p_{\\mathrm{H_2O}}(T)\big)

with P = 1 atm and p_H₂O(T) the vapour pressure of water from phreeqc.dat's H2O(g) analytic
expression (catalog ``gases.csv`` row ``h2o``, file lines 1212-1216: 0.0123, 0.0314 and 0.0620 atm
at 10, 25 and 37 °C); a gas given as a pressure (``pressure_atm``) is that partial pressure
itself, with no correction.  Against x · 1 atm the correction raises the open pH of 1 mM NaHCO₃
by 0.005, 0.014 and 0.027 at 10, 25 and 37 °C (tests/test_gas_exchange.py); the agreement with
PHREEQC at the same partial pressure is unchanged.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping, Sequence

import numpy as np

from catalog import Catalog, load_catalog
from catalog.records import Gas
from catalog.tables.gases import analytic_log_k
from selector.chemistry.equilibrium import Equilibrium, amounts_matrix, molal_to_molar, solve_equilibrium
from selector.chemistry.speciation import STATUS_CONVERGED, STATUS_FAILED, STATUS_NAMES
from selector.chemistry.thermo import pka_at_temperature
from selector.chemistry.water import KELVIN_OFFSET
from selector.errors import InputError, SolverError
from selector.units import PPM

#: CO₂ in present-day outdoor air as a mole fraction of DRY air: 420 ppm (common practice;
#: laboratory air is often higher).
DEFAULT_CO2_DRY_AIR_FRACTION = 4.20e-4
#: Total pressure of the air a vessel meets [atm]: one standard atmosphere (common practice; a
#: laboratory far above sea level has less).
TOTAL_PRESSURE_ATM = 1.0
#: The gas of the catalog that air exchanges with a buffer.
CO2_GAS_ID = "co2"
#: The catalog's water vapour (H₂O(g), no system): the moisture of the air.
WATER_VAPOUR_GAS_ID = "h2o"
#: Largest partial pressure accepted [atm]: the total pressure of the vessel's gas.
MAX_PRESSURE_ATM = 1.0
#: Smallest partial pressure or fraction of dry air accepted [atm, fraction] (0.001 ppm: far below
#: any gas a buffer meets, and above the values whose logarithms underflow; common practice).
MIN_PRESSURE_ATM = 1e-9
#: Convergence of the outer solve: |ln(α₀ C_T / c_eq)| below this (pH to about 1e-9).
TOLERANCE_LN = 1e-9
#: Rounds of the outer solve; the Illinois safeguard settles within about 20.
MAX_ROUNDS = 80
#: Widening factor of the upper end of the bracket, and the largest total tried [mol/L].
WIDEN_FACTOR = 8.0
MAX_TOTAL_MOL_L = 20.0


def henry_log_k(gas: Gas, temperature_c) -> np.ndarray:
    """log10 K_H of ``gas`` [mol/(kg·atm)] at ``temperature_c`` [°C] (scalar or array).

    Notes
    -----
    The source's analytic expression where the catalog holds one
    (log K = A1 + A2 T + A3/T + A4 log10 T + A5/T² + A6 T², T in K; PHREEQC's form, Parkhurst &
    Appelo 2013), else van 't Hoff with its ΔH° (:func:`selector.chemistry.thermo.pka_at_temperature`),
    else the 25 °C value.  CO₂: −1.468 at 25 °C, −1.108 at 0 °C, −1.597 at 37 °C.

    Examples
    --------
    >>> round(float(henry_log_k(load_catalog().gases["co2"], 25.0)), 3)
    -1.468
    """
    t = np.asarray(temperature_c, dtype=float)
    if gas.analytic:
        return np.asarray(analytic_log_k(gas.analytic, t + KELVIN_OFFSET), dtype=float)
    dh_kj_mol = 0.0 if gas.dh_kj_mol is None else gas.dh_kj_mol
    return -np.asarray(pka_at_temperature(-gas.log_k_25c.value, dh_kj_mol, 0.0, t), dtype=float)


def dissolved_gas_mol_l(gas: Gas, pressure_atm, temperature_c) -> np.ndarray:
    """Concentration of the dissolved neutral species in equilibrium with the gas [mol/L].

    c = K_H(T) · p · ρ_w(T): Henry's law on the molal scale, then mol/kg → mol/L.
    """
    molality = 10.0 ** henry_log_k(gas, temperature_c) * np.asarray(pressure_atm, dtype=float)
    return np.asarray(molal_to_molar(molality, temperature_c), dtype=float)


def water_vapour_pressure_atm(temperature_c, catalog: Catalog | None = None) -> np.ndarray:
    """Vapour pressure of water p_H₂O [atm] at ``temperature_c`` [°C] (scalar or array).

    Notes
    -----
    The catalog's H₂O(g) = H₂O(l) constant (phreeqc.dat, ``gases.csv`` row ``h2o``) is
    log K = log10(a_w / p_H₂O); over water (a_w = 1, the activity of the solvent in a dilute buffer)
    p_H₂O = 10^−log K(T), log K(T) from the source's analytic expression (:func:`henry_log_k`).

    Examples
    --------
    >>> round(float(water_vapour_pressure_atm(25.0)), 4)
    0.0314
    """
    catalog = catalog if catalog is not None else load_catalog()
    vapour = catalog.gases.get(WATER_VAPOUR_GAS_ID)
    if vapour is None:
        raise InputError(f"no gas {WATER_VAPOUR_GAS_ID!r} (water vapour) in the catalog; a gas given as its "
                         "fraction of dry air needs it: give the partial pressure instead (e.g. 0.00042atm)")
    return np.asarray(10.0 ** -henry_log_k(vapour, temperature_c), dtype=float)


def partial_pressure_in_moist_air_atm(dry_air_fraction, temperature_c, catalog: Catalog | None = None,
                                      total_pressure_atm: float = TOTAL_PRESSURE_ATM) -> np.ndarray:
    """Partial pressure [atm] of a gas that makes ``dry_air_fraction`` of dry air, in air saturated
    with water vapour at ``temperature_c`` [°C] and ``total_pressure_atm`` [atm].

    .. math:: p = x\\,\big(P - p_{\\mathrm{H_2O}}(T)\big)

    (Dalton's law: the dry gases share what the vapour leaves of the total pressure; the air over
    an open buffer is taken as saturated, as at its surface).  420 ppm at 25 °C: 4.07e-4 atm.
    """
    fraction = check_dry_air_fraction(dry_air_fraction)
    dry_atm = total_pressure_atm - water_vapour_pressure_atm(temperature_c, catalog)
    if np.any(dry_atm <= 0):
        raise InputError(f"at {float(np.max(temperature_c)):g} °C water boils at {total_pressure_atm:g} atm; "
                         "give the gas as a partial pressure (e.g. 0.00042atm)")
    return np.asarray(fraction * dry_atm, dtype=float)


def check_dry_air_fraction(dry_air_fraction) -> np.ndarray:
    """Fractions of dry air as a float array; InputError unless each is finite and within
    :data:`MIN_PRESSURE_ATM` (0.001 ppm) to 1 (1e6 ppm)."""
    array = np.asarray(dry_air_fraction, dtype=float)
    bad = ~np.isfinite(array) | (array < MIN_PRESSURE_ATM) | (array > 1.0)
    if bad.any():
        value = array.reshape(-1)[int(np.flatnonzero(bad.reshape(-1))[0])]
        raise InputError(f"a fraction of dry air of {float(value) / PPM:g} ppm is not accepted; give "
                         f"{MIN_PRESSURE_ATM / PPM:g} to {1.0 / PPM:g} ppm (e.g. 420ppm), or a partial pressure "
                         "(e.g. 0.00042atm, 42Pa)")
    return array


def check_pressure_atm(pressure_atm) -> np.ndarray:
    """Partial pressures as a float array; InputError unless each is finite and within
    :data:`MIN_PRESSURE_ATM` to :data:`MAX_PRESSURE_ATM` atm."""
    array = np.asarray(pressure_atm, dtype=float)
    bad = ~np.isfinite(array) | (array < MIN_PRESSURE_ATM) | (array > MAX_PRESSURE_ATM)
    if bad.any():
        value = array.reshape(-1)[int(np.flatnonzero(bad.reshape(-1))[0])]
        raise InputError(f"partial pressure {float(value):g} atm is not accepted; give {MIN_PRESSURE_ATM:g} to "
                         f"{MAX_PRESSURE_ATM:g} atm (e.g. 420ppm, 0.00042atm, 42Pa)")
    return array


@dataclass(frozen=True)
class OpenEquilibrium:
    """A batch of N solutions closed and after equilibrium with a gas at a fixed partial pressure.

    Attributes
    ----------
    closed, open : Equilibrium of the solutions as made and after the exchange
    gas_id, system_id : the gas and the buffer system it dissolves into
    pressure_atm : [N] partial pressure of the gas [atm]
    dissolved_mol_l : [N] the dissolved neutral species at equilibrium [mol/L]
    total_closed_mol_l, total_open_mol_l : [N] the system's total before and after [mol/L]
    rounds : rounds of the outer solve
    status : [N] int8, converged only where both solves converged (NaN figures elsewhere)
    dry_air_fraction : [N] the gas's fraction of dry air the pressure was taken from, None where
        the partial pressure was given itself
    """

    closed: Equilibrium
    open: Equilibrium
    gas_id: str
    system_id: str
    pressure_atm: np.ndarray
    dissolved_mol_l: np.ndarray
    total_closed_mol_l: np.ndarray
    total_open_mol_l: np.ndarray
    rounds: int
    status: np.ndarray
    dry_air_fraction: np.ndarray | None = None

    @property
    def ph_closed(self) -> np.ndarray:
        return self.closed.ph

    @property
    def ph_open(self) -> np.ndarray:
        return self.open.ph

    @property
    def ph_drift(self) -> np.ndarray:
        """pH in the open vessel minus pH as made [pH units]."""
        return self.open.ph - self.closed.ph

    @property
    def uptake_mol_l(self) -> np.ndarray:
        """Gas taken up per litre [mol/L]; negative where the solution loses it."""
        return self.total_open_mol_l - self.total_closed_mol_l


class _Residual:
    """ln(α₀ C_T / c_eq) of chosen rows at chosen totals: one engine call per evaluation."""

    def __init__(self, reagent_ids, amounts, temperature, system_id, total_closed, target, solve_options):
        self.reagent_ids = reagent_ids
        self.amounts = amounts
        self.temperature = temperature
        self.system_id = system_id
        self.total_closed = total_closed
        self.log_target = np.log(target)
        self.options = solve_options

    def solve(self, rows: np.ndarray, total_mol_l: np.ndarray) -> Equilibrium:
        added = {self.system_id: total_mol_l - self.total_closed[rows]}
        return solve_equilibrium(self.reagent_ids, self.amounts[rows], self.temperature[rows], strict=False,
                                 added_totals_mol_l=added, **self.options)

    def __call__(self, rows: np.ndarray, total_mol_l: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """g at the rows and totals, and whether the engine solved them."""
        eq = self.solve(rows, total_mol_l)
        s = eq.system_ids.index(self.system_id)
        free_neutral = eq.speciation.fractions[:, s, 0] * total_mol_l
        ok = (eq.status == STATUS_CONVERGED) & (free_neutral > 0)
        with np.errstate(divide="ignore", invalid="ignore"):
            g = np.log(free_neutral) - self.log_target[rows]
        return np.where(ok, g, np.nan), ok


def _bracket(residual: _Residual, rows: np.ndarray, low: np.ndarray, total_closed: np.ndarray):
    """Ends (ln C_T) where g ≤ 0 and g ≥ 0 for each row, with g there; NaN rows failed."""
    n = rows.size
    s_low, s_high = np.log(low), np.full(n, np.nan)
    g_low, _ = residual(rows, low)
    g_high = np.full(n, np.nan)
    start = total_closed[rows] > low
    if start.any():
        g, _ = residual(rows[start], total_closed[rows][start])
        idx = np.flatnonzero(start)
        above = g >= 0
        s_high[idx[above]], g_high[idx[above]] = np.log(total_closed[rows][start][above]), g[above]
        s_low[idx[g < 0]], g_low[idx[g < 0]] = np.log(total_closed[rows][start][g < 0]), g[g < 0]
    s_try = np.where(g_low >= 0, s_low, s_low + np.log(WIDEN_FACTOR))
    s_high = np.where(g_low >= 0, s_low, s_high)
    g_high = np.where(g_low >= 0, g_low, g_high)
    while True:
        need = np.flatnonzero(np.isnan(g_high) & np.isfinite(g_low) & (s_try <= np.log(MAX_TOTAL_MOL_L)))
        if need.size == 0:
            return s_low, s_high, g_low, g_high
        g, _ = residual(rows[need], np.exp(s_try[need]))
        above = g >= 0
        s_high[need[above]], g_high[need[above]] = s_try[need[above]], g[above]
        below = need[g < 0]
        s_low[below], g_low[below] = s_try[below], g[g < 0]
        g_low[need[np.isnan(g)]] = np.nan
        s_try[need] += np.log(WIDEN_FACTOR)


def _settle(residual: _Residual, rows: np.ndarray, s_low, s_high, g_low, g_high) -> tuple[np.ndarray, int]:
    """ln C_T at g = 0 by regula falsi with the Illinois safeguard; NaN where it failed."""
    result = np.full(rows.size, np.nan)
    done = np.isfinite(g_high) & (np.abs(g_high) < TOLERANCE_LN)
    result[done] = s_high[done]
    active = np.flatnonzero(np.isfinite(g_low) & np.isfinite(g_high) & ~done)
    last_side = np.zeros(rows.size, dtype=int)
    rounds = 0
    while active.size and rounds < MAX_ROUNDS:
        rounds += 1
        a, b, ga, gb = s_low[active], s_high[active], g_low[active], g_high[active]
        s_new = (a * gb - b * ga) / (gb - ga)
        inside = np.isfinite(s_new) & (s_new > a) & (s_new < b)
        s_new = np.where(inside, s_new, 0.5 * (a + b))
        g_new, _ = residual(rows[active], np.exp(s_new))
        failed = np.isnan(g_new)
        settled = ~failed & ((np.abs(g_new) < TOLERANCE_LN) | (b - a < 1e-13))
        result[active[settled]] = s_new[settled]
        low_side = ~failed & (g_new < 0)
        high_side = ~failed & ~low_side
        # Illinois: the end that stays twice in a row has its g halved.
        g_high[active[low_side & (last_side[active] == -1)]] *= 0.5
        g_low[active[high_side & (last_side[active] == 1)]] *= 0.5
        s_low[active[low_side]], g_low[active[low_side]] = s_new[low_side], g_new[low_side]
        s_high[active[high_side]], g_high[active[high_side]] = s_new[high_side], g_new[high_side]
        last_side[active[low_side]], last_side[active[high_side]] = -1, 1
        active = active[~settled & ~failed]
    return result, rounds


def solve_open_equilibrium(reagent_ids: Sequence[str], amounts_mol_l, temperature_c=25.0,
                           pressure_atm=None, catalog: Catalog | None = None,
                           activity: str = "davies", ion_pairs: bool = False, strict: bool = True,
                           gas_id: str = CO2_GAS_ID,
                           dry_air_fraction=DEFAULT_CO2_DRY_AIR_FRACTION) -> OpenEquilibrium:
    """Solutions of catalog reagents as made (closed) and after equilibrium with a gas (open vessel).

    Parameters
    ----------
    reagent_ids : sequence of str
        Reagent ids of the batch's columns.
    amounts_mol_l : array [R'] or [N, R']
        Amount of each reagent per litre [mol/L].
    temperature_c : float or array [N]
        Temperature [°C].
    pressure_atm : float or array [N], optional
        Partial pressure of the gas [atm], taken as it is.  None (default): the partial pressure in
        moist air of ``dry_air_fraction`` (:func:`partial_pressure_in_moist_air_atm`).
    dry_air_fraction : float or array [N]
        The gas's mole fraction of dry air where no pressure is given; default CO₂ in air, 420 ppm
        (:data:`DEFAULT_CO2_DRY_AIR_FRACTION`), 4.07e-4 atm at 25 °C.
    strict : bool
        True: raise unless every solution converged closed and open (as
        :func:`~selector.chemistry.equilibrium.solve_equilibrium`); False: NaN figures and a status.

    Returns
    -------
    OpenEquilibrium: closed and open equilibria, the system totals before and after, the drift.

    Examples
    --------
    >>> result = solve_open_equilibrium(["naoh"], [1e-3])       # 1 mM NaOH left open at 25 °C
    >>> bool(result.ph_open[0] < result.ph_closed[0] - 1.5)      # takes up CO₂ until it is bicarbonate
    True
    """
    catalog = catalog if catalog is not None else load_catalog()
    gas = catalog.gases.get(gas_id)
    if gas is None or gas.system_id is None:
        choices = ", ".join(sorted(g for g, x in catalog.gases.items() if x.system_id is not None)) or "none"
        raise InputError(f"no gas {gas_id!r} that dissolves into a buffer system in the catalog; gases: {choices}")
    system_id = gas.system_id
    reagent_ids = tuple(reagent_ids)
    options: dict[str, Any] = {"catalog": catalog, "activity": activity, "ion_pairs": ion_pairs}
    closed = solve_equilibrium(reagent_ids, amounts_mol_l, temperature_c, strict=False, **options)
    amounts = amounts_matrix(amounts_mol_l, reagent_ids)
    n = amounts.shape[0]
    temperature = np.broadcast_to(np.asarray(temperature_c, dtype=float), (n,)).copy()
    fraction: np.ndarray | None = None
    if pressure_atm is None:
        fraction = np.broadcast_to(check_dry_air_fraction(dry_air_fraction), (n,)).copy()
        pressure = partial_pressure_in_moist_air_atm(fraction, temperature, catalog)
    else:
        pressure = np.broadcast_to(check_pressure_atm(pressure_atm), (n,)).copy()
    target = dissolved_gas_mol_l(gas, pressure, temperature)
    if system_id in closed.system_ids:
        total_closed = closed.speciation.totals_mol_l[:, closed.system_ids.index(system_id)].copy()
    else:
        total_closed = np.zeros(n)
    residual = _Residual(reagent_ids, amounts, temperature, system_id, total_closed, target, options)
    rows = np.flatnonzero(closed.status == STATUS_CONVERGED)
    total_open = np.full(n, np.nan)
    rounds = 0
    if rows.size:
        s_low, s_high, g_low, g_high = _bracket(residual, rows, target[rows], total_closed)
        log_total, rounds = _settle(residual, rows, s_low, s_high, g_low, g_high)
        total_open[rows] = np.exp(log_total)
    solved = np.isfinite(total_open)
    final_total = np.where(solved, total_open, total_closed)
    opened = residual.solve(np.arange(n), final_total)
    status = np.where(solved, opened.status,
                      np.where(closed.status != STATUS_CONVERGED, closed.status, STATUS_FAILED)).astype(np.int8)
    result = OpenEquilibrium(closed=closed, open=opened, gas_id=gas.gas_id, system_id=system_id,
                             pressure_atm=pressure, dissolved_mol_l=target, total_closed_mol_l=total_closed,
                             total_open_mol_l=total_open, rounds=rounds, status=status,
                             dry_air_fraction=fraction)
    if strict:
        closed.require_converged()
        opened.require_converged()
        if not solved.all():
            first = int(np.flatnonzero(~solved)[0])
            raise SolverError(f"the equilibrium of {closed.composition_text(first)} with {gas.name} at "
                             f"{pressure[first]:.3g} atm was not found; no open-vessel pH is reported for it")
    return result


@dataclass(frozen=True)
class OpenVessel:
    """One solution as made and left open to a gas (the figures of ``poise ph --open``).

    Plain values (None where a figure does not exist): pH closed and open, the drift (open −
    closed) [pH], the system's total before and after and the gas taken up (negative: lost)
    [mol/L], the partial pressure [atm] and temperature [°C], and the fraction of dry air the
    pressure was taken from (None where the pressure was given itself).
    """

    gas_id: str
    system_id: str
    pressure_atm: float
    temperature_c: float
    ph_closed: float | None
    ph_open: float | None
    ph_drift: float | None
    total_closed_mol_l: float | None
    total_open_mol_l: float | None
    uptake_mol_l: float | None
    status: str
    dry_air_fraction: float | None = None

    @property
    def ppm_dry_air(self) -> float | None:
        """The gas's fraction of dry air [ppm], None where the partial pressure was given itself."""
        return None if self.dry_air_fraction is None else self.dry_air_fraction / PPM

    def as_json(self) -> dict:
        """The keys ``poise ph --open --json`` adds (carbonate named as the CO₂ gas's system);
        ``pco2_atm`` is the partial pressure used, ``co2_ppm_dry_air`` what it was taken from."""
        return {"pco2_atm": self.pressure_atm, "co2_ppm_dry_air": self.ppm_dry_air,
                "ph_open": self.ph_open, "ph_drift_open": self.ph_drift,
                "carbonate_total_closed_mol_l": self.total_closed_mol_l,
                "carbonate_total_open_mol_l": self.total_open_mol_l,
                "carbonate_uptake_mol_l": self.uptake_mol_l, "open_status": self.status}


def open_vessel(reagents_mol_l: Mapping[str, float], temperature_c: float = 25.0,
                pressure_atm: float | None = None, catalog: Catalog | None = None, activity: str = "davies",
                ion_pairs: bool = False, dry_air_fraction: float = DEFAULT_CO2_DRY_AIR_FRACTION) -> OpenVessel:
    """One solution (reagent id -> mol/L) closed and after equilibrium with CO₂ at ``pressure_atm``
    [atm], or where None at ``dry_air_fraction`` of dry air (420 ppm) in moist air.

    A solution the engine cannot solve (closed or open) gives None figures and its status
    rather than an error (:func:`solve_open_equilibrium` with ``strict=False``).
    """
    ids = [r for r, c in reagents_mol_l.items() if c > 0] or list(reagents_mol_l)
    result = solve_open_equilibrium(ids, [[reagents_mol_l[r] for r in ids]], temperature_c, pressure_atm,
                                    catalog=catalog, activity=activity, ion_pairs=ion_pairs, strict=False,
                                    dry_air_fraction=dry_air_fraction)
    ok = int(result.status[0]) == STATUS_CONVERGED

    def figure(values: np.ndarray) -> float | None:
        value = float(values[0])
        return value if ok and np.isfinite(value) else None

    return OpenVessel(gas_id=result.gas_id, system_id=result.system_id, pressure_atm=float(result.pressure_atm[0]),
                      temperature_c=float(temperature_c), ph_closed=figure(result.ph_closed),
                      ph_open=figure(result.ph_open), ph_drift=figure(result.ph_drift),
                      total_closed_mol_l=figure(result.total_closed_mol_l),
                      total_open_mol_l=figure(result.total_open_mol_l), uptake_mol_l=figure(result.uptake_mol_l),
                      status=STATUS_NAMES[int(result.status[0])],
                      dry_air_fraction=None if result.dry_air_fraction is None else float(result.dry_air_fraction[0]))
