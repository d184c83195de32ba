"""The exact equilibrium solver: speciation, charge balance and ionic strength, vectorised.

A batch of N solutions is solved at once.  Solution n holds total concentrations
``totals_mol_l[n, s]`` of the weak acid-base systems s, strong ions adding net charge
``strong_charge_mol_l[n]`` and ½Σcz² ``strong_ionic_mol_l[n]``, at ``temperature_c[n]``.

Notes
-----
Notation: species j of system s has lost j protons from the most protonated form and has
charge z_j = z0 − j.  pH = −log10 a(H⁺).  With the conditional constants
K'_j = K_j γ_{j−1}/γ_j the fractions are

    α_j ∝ β_j / (γ_j a_H^j),   β_j = K_1 ⋯ K_j,

and the charge balance

    R(pH) = Σ_s C_s Σ_j α_sj z_sj + Σ strong c·z + [H⁺] − [OH⁻] = 0

falls monotonically with pH.  It is solved for x = ln a_H and the ionic strength I (and
with it every γ, from the chosen activity model) together: near the root a Newton step on
both (R = 0 and I*(x, I) = I, with dR/dlnγ = −2 dI*/dx and dI*/dlnγ = −½ Σ C Var(z²)
from the moments of each system's species) with Halley's correction on x, farther away a
Newton step on x at fixed γ with I carried along; safeguarded by a bracket on x with
bisection, and bisection on I for the stiff rest (high I with multiply charged species).
dR/dx = Σ_s C_s Var_s(j) + [H⁺] + [OH⁻] > 0 is exact at fixed γ, and
β = ln10 · dR/dx is the buffer capacity (Van Slyke's buffer value) of the solution.

Every operation is on arrays over the batch; the only Python loops run over the
(at most a handful of) dissociation steps and over iterations, never over solutions.

Concentrations are mol/L; the thermodynamic constants (Kw, pKa, the Debye-Hückel A) are
molal.  They are used together without a density factor: the dilute-solution
approximation, off by the water density (0.3 % in concentration at 25 °C, 4 % at 95 °C;
a few thousandths of a pH unit).  β is the buffer capacity at fixed activity coefficients
(the analytic Van Slyke form); titrating with strong base also changes I, which raises the
measured dC_base/dpH by a few per cent at I ≈ 0.1 mol/L.

References
----------
.. [Butler1998] J. N. Butler, Ionic Equilibrium: Solubility and pH Calculations,
   Wiley (1998), ch. 3-4 (charge balance, α fractions, buffer index).
.. [VanSlyke1922] D. D. Van Slyke, J. Biol. Chem. 52 (1922) 525-570 (buffer value).
"""

from __future__ import annotations

import dataclasses
import math
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from functools import cached_property, lru_cache
from typing import Callable

import numpy as np
from threadpoolctl import ThreadpoolController

from selector.chemistry.activity import activity_model, float_activity_model
from selector.chemistry.arrays import ComplexArrays, SystemArrays
from selector.chemistry.thermo import pka_at_temperature
from selector.chemistry.water import LN10, debye_huckel_a, log10_kw

#: Search interval of the solver, pH −2 to 16, as x = ln a(H⁺).
PH_SEARCH_MIN, PH_SEARCH_MAX = -2.0, 16.0
_X_LOW, _X_HIGH = -PH_SEARCH_MAX * LN10, -PH_SEARCH_MIN * LN10
#: Largest Newton step, in x units (2 pH units).
_MAX_STEP = 2.0 * LN10

#: Status of each solution: a true equilibrium of the model; a composition the model cannot
#: describe (its root lies at or past the edge of the pH search range, or its ionic strength
#: is above :data:`MODEL_CEILING_IONIC_STRENGTH_MOL_L`); or no answer found.
STATUS_CONVERGED, STATUS_BEYOND_MODEL, STATUS_FAILED = 0, 1, 2
STATUS_NAMES = ("converged", "beyond_model", "failed")
#: Ionic strength above which a result is beyond the model [mol/L]: ten times the activity
#: models' stated range of 0.5 mol/L (:data:`selector.chemistry.activity.DAVIES_MAX_IONIC_STRENGTH_MOL_L`),
#: a design choice of this engine.  Between the two a result carries a warning (a 10× phosphate
#: stock reaches I ≈ 2.5 mol/L); past it the Davies unit-charge γ is above 2.5 by the equation
#: itself (log10 γ₁ = −A(√I/(1+√I) − 0.3 I), A ≈ 0.51 at 25 °C) and no longer describes a solution.
MODEL_CEILING_IONIC_STRENGTH_MOL_L = 5.0
#: The iteration runs to this pH tolerance at least, so that a solution's answer does not
#: depend on the path (the batch it sits in, the chunk, the thread): alone and in a batch
#: agree to about 1e-12 pH.
REPRODUCIBLE_TOL_PH = 1e-10
#: Relative closure required of a converged result: charge residual over the sum of the
#: charges present, and the ionic strength against the one recomputed from the species.
CLOSURE_RELATIVE = 1e-9

# The iteration's own numbers, used by the array solver and by its plain-float twin for one
# composition alike (one place each; design choices of this engine, measured on its tests).
#: dγ/dI by a forward difference of this step [mol/L]: relative × I + absolute.
GAMMA_SLOPE_STEP_RELATIVE = 1e-6
GAMMA_SLOPE_STEP_MOL_L = 1e-12
#: The joint pH/I step couples the two only where the charge residual is within this band of
#: the slope (ln-activity units): near the root.
COUPLING_BAND = 0.1 * LN10
#: A step larger than this fraction of the one before it, with both bracket ends set, is slow:
#: the next step bisects.
SLOW_STEP_RATIO = 0.5
#: Below this step (ln-activity units) the iteration is in its quadratic regime: the error after
#: the step is estimated from the last two steps.
QUADRATIC_REGIME_STEP = 1e-2
#: Ionic strength added to the strong ions' and the weak species' at the start [mol/L] (keeps
#: √I away from 0 for the first γ).
START_IONIC_FLOOR_MOL_L = 1e-7
#: Floors under a divisor and under √I in the convergence test (guards against 0, not tolerances).
TINY_DIVISOR = 1e-300
SETTLED_IONIC_FLOOR_MOL_L = 1e-12


@dataclass(frozen=True)
class MetalSpeciation:
    """Metals and their complexes in a solved batch (see :mod:`selector.chemistry.complex_equilibrium`).

    Attributes
    ----------
    metal_ids : tuple of str, length M (ion ids: ``Ca``, ``Mg`` ...)
    metal_charge : float array [M]
    totals_mol_l, free_mol_l : [N, M] total and free concentration of each metal
    complex_ids : tuple of str, length C
    complex_charge : [C]
    complex_mol_l : [N, C]
    complex_metal_count : [C, M], complex_ligand_count : [C, S], complex_protons : [C]
        stoichiometry of each complex over the metals, the systems and H⁺ (negative: OH⁻)
    complexes : ComplexArrays, the constants the batch was solved with
    """

    metal_ids: tuple[str, ...]
    metal_charge: np.ndarray
    totals_mol_l: np.ndarray
    free_mol_l: np.ndarray
    complex_ids: tuple[str, ...]
    complex_charge: np.ndarray
    complex_mol_l: np.ndarray
    complex_metal_count: np.ndarray
    complex_ligand_count: np.ndarray
    complex_protons: np.ndarray
    complexes: ComplexArrays


@dataclass(frozen=True)
class Speciation:
    """Solved equilibrium of a batch of N solutions over S systems (J steps at most).

    Attributes
    ----------
    ph : [N] −log10 a(H⁺)
    ionic_strength_mol_l : [N]
    log10_gamma_unit : [N] log10 γ of a singly charged ion
    temperature_c : [N]
    totals_mol_l : [N, S] system totals
    fractions : [N, S, J+1] α_j, species j of each system (0 beyond a system's last step),
        computed on first use from pH, γ and T (a batch that needs only pH keeps no [N, S, J+1] array)
    species_charge : [S, J+1] charge of each species
    h_mol_l, oh_mol_l : [N] concentrations of H⁺ and OH⁻
    capacity_mol_l_per_ph : [N] β = ln10 ([H⁺] + [OH⁻] + Σ C_s Var_s), fixed γ
    charge_residual_mol_l : [N] R at the returned pH
    converged : [N] bool, status == STATUS_CONVERGED
    iterations : int, solver iterations used by the slowest solution
    status : [N] int8, one of STATUS_CONVERGED, STATUS_BEYOND_MODEL, STATUS_FAILED
        (names in :data:`STATUS_NAMES`); the figures of a solution that is not converged
        are NaN, except the ionic strength of one beyond the model by its ionic strength.
    metals : MetalSpeciation or None
        free metals and complexes, where the batch was solved with metals as components
        (then ``fractions`` are the free system species and sum to less than 1 where
        complexes hold part of a system).
    """

    ph: np.ndarray
    ionic_strength_mol_l: np.ndarray
    log10_gamma_unit: np.ndarray
    temperature_c: np.ndarray
    totals_mol_l: np.ndarray
    systems: SystemArrays
    species_charge: np.ndarray
    h_mol_l: np.ndarray
    oh_mol_l: np.ndarray
    capacity_mol_l_per_ph: np.ndarray
    charge_residual_mol_l: np.ndarray
    converged: np.ndarray
    iterations: int
    status: np.ndarray
    metals: MetalSpeciation | None = None

    @cached_property
    def fractions(self) -> np.ndarray:
        return species_fractions(self.ph, self.log10_gamma_unit, self.temperature_c, self.systems)


def species_fractions(ph, log10_gamma_unit, temperature_c, systems: SystemArrays) -> np.ndarray:
    """α_j of every system at the given pH, log10 γ₁ and temperature: array [N, S, J+1].

    The same α_j ∝ β_j/(γ_j a_H^j) the solver iterates on (module notes), evaluated in
    chunks of :data:`CHUNK_ROWS`; NaN where pH is NaN.
    """
    ph = np.asarray(ph, dtype=float)
    n, n_systems = ph.shape[0], len(systems.system_ids)
    if n_systems == 0:
        return np.zeros((n, 0, 1))
    out = np.empty((n, n_systems, systems.max_steps + 1))
    charges = _Charges(systems.charge_most_protonated.astype(float))
    with np.errstate(invalid="ignore", over="ignore"):
        for start in range(0, n, CHUNK_ROWS):
            part = slice(start, min(start + CHUNK_ROWS, n))
            unique_t, t_index = distinct_temperatures(np.asarray(temperature_c, dtype=float)[part])
            k_steps = temperature_terms(systems, unique_t)[0][:, :, t_index]
            moments, terms = _moments(-LN10 * ph[part], LN10 * np.asarray(log10_gamma_unit)[part], k_steps, charges)
            out[part] = np.moveaxis(terms / moments[0][None], 0, -1).transpose(1, 0, 2)
    return out


def distinct_temperatures(temperature_c: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The distinct temperatures of a batch [°C] and each solution's index into them.

    ``np.unique(temperature_c, return_inverse=True)``, except that a batch at one
    temperature (the usual case) is neither sorted nor given an [N] integer index: its
    index is a read-only zero-stride view (no memory for a million rows).
    """
    t = np.asarray(temperature_c, dtype=float)
    if t.size == 1:
        return t.reshape(1).copy(), np.zeros(t.shape, dtype=np.intp)
    if t.size and t[0] == t[0] and bool((t == t[0]).all()):
        return t[:1].copy(), np.broadcast_to(np.intp(0), t.shape)
    return np.unique(t, return_inverse=True)


#: Per-solution fields of :class:`Speciation` (leading axis N).
_ROW_FIELDS = ("ph", "ionic_strength_mol_l", "log10_gamma_unit", "temperature_c", "h_mol_l",
               "oh_mol_l", "capacity_mol_l_per_ph", "charge_residual_mol_l", "converged", "status")


def equilibrium_constants(systems: SystemArrays, temperature_c) -> np.ndarray:
    """K_j at each temperature: array [J, S, T] (0 for padded steps).  temperature_c: [T]."""
    t = np.atleast_1d(np.asarray(temperature_c, dtype=float))[None, None, :]
    pka = pka_at_temperature(systems.pka_25c.T[:, :, None], systems.dh_kj_mol.T[:, :, None],
                             systems.dcp_j_k_mol.T[:, :, None], t)
    return np.where(np.isnan(pka), 0.0, 10.0 ** (-np.nan_to_num(pka, nan=0.0)))


#: Temperature terms of recently used (systems, temperatures), see :func:`temperature_terms`.
_TEMPERATURE_TERMS: dict[bytes, tuple[np.ndarray, np.ndarray, np.ndarray]] = {}
#: Entries kept before the store is emptied (a ranking or a recipe uses a few dozen).
_TEMPERATURE_TERMS_MAX = 512


def temperature_terms(systems: SystemArrays, temperature_c: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """K_j [J, S, T] (:func:`equilibrium_constants`), ln Kw [T] and the Debye–Hückel A [T] at
    the temperatures given [°C], read-only.

    They depend on the systems' constants and the temperatures alone, and the activity
    rounds of the optimiser, the remedies and the recipes ask for the same ones again and
    again: each set is computed once and kept (keyed on the exact bytes of the constants
    and temperatures, so a perturbed copy of a system is a set of its own).
    """
    t = np.ascontiguousarray(temperature_c, dtype=float)
    return _terms_of(systems, t, _terms_key(systems, t))


def _terms_key(systems: SystemArrays, t: np.ndarray) -> bytes:
    """The key of :data:`_TEMPERATURE_TERMS`: the exact bytes of the constants and temperatures."""
    return b"|".join((np.array(systems.pka_25c.shape).tobytes(), t.tobytes(),
                      *(np.ascontiguousarray(a, dtype=float).tobytes()
                        for a in (systems.pka_25c, systems.dh_kj_mol, systems.dcp_j_k_mol))))


def _terms_of(systems: SystemArrays, t: np.ndarray, key: bytes) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """:func:`temperature_terms` under its ``key``."""
    terms = _TEMPERATURE_TERMS.get(key)
    if terms is None:
        terms = (equilibrium_constants(systems, t), LN10 * log10_kw(t), debye_huckel_a(t))
        for array in terms:
            array.flags.writeable = False
        if len(_TEMPERATURE_TERMS) >= _TEMPERATURE_TERMS_MAX:
            _TEMPERATURE_TERMS.clear()
        _TEMPERATURE_TERMS[key] = terms
    return terms


class _Charges:
    """Charges of the systems' most protonated forms, with w^(−2 z0) built per distinct z0."""

    def __init__(self, z0: np.ndarray):
        self.z0 = z0
        self.values, self.index = np.unique(z0, return_inverse=True)

    def u_factor(self, x, w):
        """u = exp(−x + 2 z0 lnγ) = a_H⁻¹ w^(−2 z0), w = exp(−lnγ): array [S, n]."""
        inverse_h = np.exp(-x)
        if self.values.size == 0:
            return np.empty((0, x.shape[0]))
        # w^(−2 z) by repeated products (the charges are small whole numbers).
        up = 1.0 / (w * w)
        down = w * w
        rows = np.empty((self.values.size, x.shape[0]))
        for row, z in zip(rows, self.values):
            factor = up if z > 0 else down
            np.copyto(row, inverse_h)
            for _ in range(int(abs(z))):
                row *= factor
        return rows[self.index]


#: _Charges per set of charges (a few dozen sets: the catalog's systems, one or a few at a time).
_CHARGES: dict[bytes, _Charges] = {}


def _charges_of(z0: np.ndarray) -> _Charges:
    """:class:`_Charges` of ``z0`` (float array), built once per set of charges."""
    key = z0.tobytes()
    charges = _CHARGES.get(key)
    if charges is None:
        if len(_CHARGES) >= _TEMPERATURE_TERMS_MAX:
            _CHARGES.clear()
        charges = _CHARGES[key] = _Charges(z0.copy())
    return charges


def _moments(x, ln_gamma, k_steps, charges: _Charges, third=False):
    """Moments Σ_j j^k T_j (k = 0..2, or 0..3 if ``third``) with T_j ∝ α_j, and the T_j.

    x: [n]; ln_gamma: [n] natural log γ of unit charge; k_steps: [J, S, n or 1].
    T_j = T_{j−1} K_j u w^(2j−1), u = exp(−x + 2 z0 lnγ), w = exp(−lnγ), T_0 = 1:
    the j-dependent part of ln(β_j/(γ_j a_H^j)) with ln γ_j = z_j² lnγ, z_j = z0 − j.
    Returns (moments [k, S, n], terms [J+1, S, n]).
    """
    n = x.shape[0]
    n_steps, n_systems = k_steps.shape[0], k_steps.shape[1]
    w = np.exp(-ln_gamma)
    w_squared = w * w
    q = charges.u_factor(x, w)
    q *= w
    terms = np.empty((n_steps + 1, n_systems, n))
    terms[0] = 1.0
    for j in range(1, n_steps + 1):
        if j > 1:
            q *= w_squared
        np.multiply(q, k_steps[j - 1], out=terms[j])
        terms[j] *= terms[j - 1]
    # An einsum, not a matrix product: BLAS threads gain nothing on a [4, J+1] by [J+1, S n]
    # product and, spinning on a busy machine, made it 8-16x slower (measured: 16 ms against
    # 1 ms at S n = 65 536 with two OpenBLAS threads).
    moments = np.einsum("kj,jsn->ksn", _moment_weights(n_steps, third), terms)
    return moments, terms


@lru_cache(maxsize=32)
def _moment_weights(n_steps: int, third: bool) -> np.ndarray:
    """j^k for k = 0..2 (or 0..3) and j = 0..n_steps: array [3 or 4, n_steps + 1], read-only."""
    powers = np.arange(4 if third else 3)[:, None]
    weights = np.arange(n_steps + 1, dtype=float)[None, :] ** powers
    weights.flags.writeable = False
    return weights


def _charge_state(x, ln_gamma, k_steps, totals, charges: _Charges, weak_charge, weak_z0_sq,
                  strong_charge, strong_ionic, ln_kw):
    """Charge balance R, its slope dR/dx, the ionic strength I and dI/dx at (x, γ).

    totals: [S, n]; weak_charge = Σ C z0 and weak_z0_sq = Σ C z0²: [n].
    dI/dx follows from d<j>/dx = −Var(j) and d<j²>/dx = −Cov(j, j²) at fixed γ.
    """
    moments, _ = _moments(x, ln_gamma, k_steps, charges, third=True)
    m0, m1, m2, m3 = moments
    z0 = charges.z0[:, None]
    weight = totals / m0
    weight_mean = weight * m1 / m0
    weight_z0 = weight * z0
    weight_mean_z0 = weight_mean * z0

    def total(a, b):
        return np.einsum("sn,sn->n", a, b)

    sum_mean = total(weight, m1)
    sum_sq = total(weight, m2)
    sum_mean_mean = total(weight_mean, m1)
    h = np.exp(x - ln_gamma)
    oh = np.exp(ln_kw - x - ln_gamma)
    residual = weak_charge - sum_mean + strong_charge + h - oh
    slope = np.maximum(sum_sq - sum_mean_mean, 0.0) + h + oh
    ionic = strong_ionic + 0.5 * (weak_z0_sq - 2.0 * total(weight_z0, m1) + sum_sq) + 0.5 * (h + oh)
    sum_cube = total(weight, m3)
    sum_mean_sq = total(weight_mean, m2)
    ionic_slope = ((total(weight_z0, m2) - total(weight_mean_z0, m1))
                   - 0.5 * (sum_cube - sum_mean_sq) + 0.5 * (h - oh))
    # d²R/dx² = −Σ C μ3 + [H⁺] − [OH⁻], μ3 the third central moment of j.
    third_central = sum_cube - 3.0 * sum_mean_sq + 2.0 * total(weight_mean * (m1 / m0), m1)
    curvature = h - oh - third_central
    return residual, slope, ionic, ionic_slope, curvature


def _initial_ph(totals, excess, k_ladder, t_index, step_system, kw):
    """A first pH for each solution from its proton balance on the ladder of pKa values.

    Each step m, taken in order of pKa, can give up C_s(m) protons.  The base excess
    P = Σ C z0 + Σ strong c z (the charge if every system were fully protonated) is the
    number of protons the systems must have lost; the step k where the running sum of the
    capacities reaches P holds the root (the first step with a capacity where P ≤ 0, the
    last where P exceeds them all).  With δ = P − (the capacities before k), the balance
    is kept to step k exactly and the others to first order, at γ = 1:

    * δ < ½ C_k: the steps below k still hold C_m h/K_m (h ≪ K_m) and H⁺ is free,
      δ = C_k K_k/(h + K_k) − a h, a = 1 + Σ_(m<k) C_m/K_m;
    * δ ≥ ½ C_k: the steps above k have given up C_m K_m/h (h ≫ K_m) and OH⁻ is free,
      δ − C_k = c/h − C_k h/(h + K_k), c = Kw + Σ_(m>k) C_m K_m;

    each a quadratic in h = [H⁺].  It gives ½(pKa − log10 C) for a lone weak acid and the
    matching pOH for a lone weak base (the weak acid and base approximations, from
    memory), ½(pKa_k + pKa_(k+1)) for an ampholyte, the strong acid or base excess beyond
    the ladder's ends and Henderson–Hasselbalch in the middle of a step.  Only a starting
    point.  totals: [S, n]; excess: [n]; k_ladder: [M, T] K of each step at the distinct
    temperatures, about ascending pKa; t_index: [n] into them; step_system: [M] system of
    each step; kw: [n].
    """
    n = excess.shape[0]
    m_steps = k_ladder.shape[0]
    one_t = k_ladder.shape[1] == 1
    k_steps = k_ladder if one_t else np.ascontiguousarray(k_ladder[:, t_index])   # [M, 1 or n]
    a_coef, b_coef, c_coef = np.ones(n), excess, kw          # no step: h − Kw/h = −P
    if m_steps:
        capacity = totals[step_system]                       # [M, n]
        # Running sums row by row (as cumsum adds them, without its slow strided loop):
        # the capacities up to m, Σ C/K below m and Σ C K above m.
        running = np.empty_like(capacity)
        below = np.empty_like(capacity)
        above = np.empty_like(capacity)
        np.copyto(running[0], capacity[0])
        below[0] = 0.0
        above[-1] = 0.0
        for m in range(1, m_steps):
            np.add(running[m - 1], capacity[m], out=running[m])
            np.add(below[m - 1], capacity[m - 1] / k_steps[m - 1], out=below[m])
        for m in range(m_steps - 2, -1, -1):
            np.add(above[m + 1], capacity[m + 1] * k_steps[m + 1], out=above[m])
        total = running[-1]
        used = np.sum(running < excess, axis=0)              # steps fully used, 0..M
        last = np.sum(running < total, axis=0)               # the last step with a capacity
        first = np.sum(running <= 0.0, axis=0)               # the first step with a capacity (M: none)
        some = first < m_steps
        k = np.where(used == 0, np.minimum(first, m_steps - 1), np.minimum(used, last))
        at = k * n + np.arange(n)
        size = capacity.take(at)
        delta = excess - np.where(k > 0, running.take(np.maximum(at - n, 0)), 0.0)
        k_k = k_ladder[:, 0].take(k) if one_t else k_steps.take(at)
        lower = delta < 0.5 * size
        a_low = 1.0 + below.take(at)
        c_high = kw + above.take(at)
        a_coef = np.where(some, np.where(lower, a_low, delta), a_coef)
        b_coef = np.where(some, np.where(lower, a_low * k_k + delta, (delta - size) * k_k - c_high), b_coef)
        c_coef = np.where(some, np.where(lower, k_k * (size - delta), c_high * k_k), c_coef)
    # The positive root of a h² + b h − c = 0 (a, c > 0), without cancellation.
    root = np.sqrt(b_coef * b_coef + 4.0 * a_coef * c_coef)
    h = np.where(b_coef > 0.0, 2.0 * c_coef / (b_coef + root), (root - b_coef) / (2.0 * a_coef))
    return np.clip(-np.log10(h), PH_SEARCH_MIN + 0.5, PH_SEARCH_MAX - 0.5)


#: Rows per chunk.  A batch is cut into chunks of this many solutions whatever the thread
#: count, so each chunk's working arrays stay in cache and a solution's result does not
#: depend on how many threads share the batch.  8 192 rows: an [n] array is 64 KiB, a
#: group's [2, n] 128 KiB, below the allocator's mmap threshold, so the temporaries of an
#: iteration reuse the heap instead of being mapped and faulted in afresh (measured, bench
#: mix, n = 10^5, one thread, CPU medians of 4: 4 096 rows 0.284 s, 8 192 rows 0.225 s
#: with no page faults, 16 384 rows 0.257 s with 30 000 minor faults, 32 768 rows 0.288 s).
CHUNK_ROWS = 8192


@lru_cache(maxsize=1)
def default_threads() -> int:
    """Threads for a large batch when the caller names none: one.

    With 8 192-row chunks and the joint pH/I step a chunk's numpy passes are short, and a
    second thread costs more in cache and GIL hand-offs than it gains.  Measured on the 2-core
    machine, quiet (bench's mix, three alternating pairs): n = 10^5, 1 thread 0.205-0.212 s
    wall (CPU the same) against 0.247-0.250 s wall (CPU 0.36 s) for 2; n = 10^6, 2.02 s and
    248 MB against 2.32 s and 262 MB.  (With 16 384-row chunks and the older iteration, 2
    threads had won 0.247 against 0.313 s with one core free.)  A caller with idle cores may
    still pass ``threads``; results do not depend on it.
    """
    return 1


@lru_cache(maxsize=1)
def _thread_controller() -> ThreadpoolController:
    """The BLAS thread-pool controller (scanning loaded libraries is slow: do it once)."""
    return ThreadpoolController()


def single_threaded_blas():
    """Context in which BLAS runs on one thread.

    The engine's matrix products are small; BLAS worker threads gain nothing on them and,
    spinning after each call, take a core from the solver's own threads.
    """
    return _thread_controller().limit(limits=1, user_api="blas")


def solve_speciation(totals_mol_l, strong_charge_mol_l, strong_ionic_mol_l, temperature_c,
                     systems: SystemArrays, activity: str = "davies", tol_ph: float = 1e-6,
                     max_iterations: int = 60, fixed_ionic_strength_mol_l=None,
                     threads: int | None = None) -> Speciation:
    """Equilibrium pH, ionic strength and speciation of N solutions at once.

    Parameters
    ----------
    totals_mol_l : array [N, S]
        Total concentration of each system of ``systems`` [mol/L].
    strong_charge_mol_l : array [N]
        Σ c·z of the strong ions (Na⁺, K⁺, Cl⁻ ...) [mol/L of charge].
    strong_ionic_mol_l : array [N]
        ½ Σ c·z² of the strong ions [mol/L].
    temperature_c : float or array [N]
        Temperature [°C].
    systems : SystemArrays
        Parameters of the S systems (see :mod:`selector.chemistry.arrays`).
    activity : str
        Activity model, a name of :data:`selector.chemistry.activity.ACTIVITY_MODELS`.
    tol_ph : float
        Convergence tolerance on pH.
    fixed_ionic_strength_mol_l : float or array [N], optional
        Hold γ at this ionic strength instead of iterating it to self-consistency.

    threads : int, optional
        Split a large batch over this many threads (default :func:`default_threads`: one);
        each chunk is solved independently, so the result does not depend on it.

    Returns
    -------
    Speciation
    """
    totals_ns = _float_matrix(totals_mol_l)
    n = totals_ns.shape[0]
    if n == 1 and len(systems.system_ids):
        # One solution (recipes, the app): straight to the float path, no chunk set-up.
        alone = _solve_one(totals_ns, strong_charge_mol_l, strong_ionic_mol_l, temperature_c,
                           fixed_ionic_strength_mol_l, systems, activity, tol_ph, max_iterations)
        if alone is not None:
            return alone
    threads = threads if threads is not None else default_threads()
    charge, ionic, temperature = (_per_row(a, n) for a in (strong_charge_mol_l, strong_ionic_mol_l, temperature_c))
    fixed = None if fixed_ionic_strength_mol_l is None else _per_row(fixed_ionic_strength_mol_l, n)

    def solve_part(part: slice) -> Speciation:
        return _solve_chunk(totals_ns[part], charge[part], ionic[part], temperature[part],
                            None if fixed is None else fixed[part], systems, activity, tol_ph, max_iterations)

    if n <= CHUNK_ROWS:
        return solve_part(slice(0, n))
    out = {name: np.empty(n) for name in _ROW_FIELDS}
    out["converged"] = np.empty(n, dtype=bool)
    out["status"] = np.empty(n, dtype=np.int8)

    def solve_into(start: int) -> tuple[int, np.ndarray]:
        part = solve_part(slice(start, min(start + CHUNK_ROWS, n)))
        for name in _ROW_FIELDS:
            out[name][start:start + part.ph.shape[0]] = getattr(part, name)
        return part.iterations, part.species_charge

    starts = range(0, n, CHUNK_ROWS)
    if threads <= 1:
        done = [solve_into(start) for start in starts]
    else:
        with single_threaded_blas(), ThreadPoolExecutor(threads) as pool:
            done = list(pool.map(solve_into, starts))
    return Speciation(totals_mol_l=totals_ns, systems=systems, species_charge=done[0][1],
                      iterations=max(iterations for iterations, _ in done), metals=None, **out)


def _float_matrix(values) -> np.ndarray:
    """``values`` as a float array of at least 2 dimensions (``np.atleast_2d(np.asarray(values,
    dtype=float))``), the array itself where it already is one."""
    if type(values) is np.ndarray and values.ndim == 2 and values.dtype == np.float64:
        return values
    return np.atleast_2d(np.asarray(values, dtype=float))


def _per_row(value, n: int) -> np.ndarray:
    """``value`` (a number or an array [n]) as a float array [n]: the array itself where it
    already is one, else a read-only broadcast view."""
    array = np.asarray(value, dtype=float)
    return array if array.shape == (n,) else np.broadcast_to(array, (n,))


@dataclass
class _Chunk:
    """The solutions still iterating, as arrays over them (n = solutions left).

    totals [S, n]; weak_charge = Σ C z0, weak_z0_sq = Σ C z0², strong_charge, strong_ionic,
    ln_kw, kw = exp(ln_kw), a_dh [n]; fixed [n] or None (γ held at this I); t_index [n] into
    the distinct temperatures; groups: per :class:`_Group` of the layout, its totals C [G, n],
    C z0 and C z0² [G, n] (None where every z0 of the group is 0) and K_j [J, G, n or 1].
    """

    totals: np.ndarray
    weak_charge: np.ndarray
    weak_z0_sq: np.ndarray
    strong_charge: np.ndarray
    strong_ionic: np.ndarray
    ln_kw: np.ndarray
    a_dh: np.ndarray
    fixed: np.ndarray | None
    t_index: np.ndarray
    kw: np.ndarray
    groups: tuple[tuple[np.ndarray, np.ndarray | None, np.ndarray | None, np.ndarray], ...]

    def take(self, keep: np.ndarray) -> "_Chunk":
        """The solutions at positions ``keep``."""
        def rows(a):
            return None if a is None else (a if a.shape[-1] == 1 else a.take(keep, axis=-1))
        return _Chunk(self.totals.take(keep, axis=1), self.weak_charge[keep], self.weak_z0_sq[keep],
                      self.strong_charge[keep], self.strong_ionic[keep], self.ln_kw[keep], self.a_dh[keep],
                      None if self.fixed is None else self.fixed[keep], self.t_index[keep], self.kw[keep],
                      tuple((rows(c), rows(cz), rows(czz), rows(k)) for c, cz, czz, k in self.groups))


@dataclass
class _Bracket:
    """Iteration state per solution: x = ln a_H, I, the bracket ends as last set with the ln γ
    at the time each was set, and the last two steps (for the rtsafe safeguard)."""

    x: np.ndarray
    ionic: np.ndarray
    low_set: np.ndarray
    high_set: np.ndarray
    ln_gamma_low: np.ndarray
    ln_gamma_high: np.ndarray
    step_before: np.ndarray
    step_last: np.ndarray

    def take(self, keep: np.ndarray) -> "_Bracket":
        """The solutions at positions ``keep``."""
        return _Bracket(*(getattr(self, f.name)[keep] for f in dataclasses.fields(self)))


@dataclass(frozen=True)
class _Model:
    """What every step of one chunk shares: constants by temperature, charges, γ model."""

    k_by_t: np.ndarray
    single_t: bool
    charges: _Charges
    gamma_function: Callable[[np.ndarray, np.ndarray], np.ndarray]
    drift_factor: float
    tol_ph: float
    layout: _Layout

    def k_steps(self, t_index: np.ndarray) -> np.ndarray:
        return self.k_by_t if self.single_t else self.k_by_t[:, :, t_index]


@dataclass(frozen=True)
class _Group:
    """Systems of a set with the same number of steps J, iterated together as arrays [G, n]
    (no padded steps)."""

    index: np.ndarray      # [G] positions of the systems in the set
    n_steps: int
    z0: np.ndarray         # [G, 1] charge of each system's most protonated form
    z_rows: np.ndarray     # [G] row of each z0 among the layout's distinct charges
    one_charge: bool       # every system of the group has the same z0
    neutral: bool          # every z0 is 0 (the z0-weighted sums vanish)


@dataclass(frozen=True)
class _Layout:
    """The systems of a set grouped by step count, and their distinct charges z0."""

    groups: tuple[_Group, ...]
    z_values: tuple[int, ...]


#: _Layout per set of charges and step counts.
_LAYOUTS: dict[bytes, _Layout] = {}


def _layout_of(systems: SystemArrays) -> _Layout:
    """:class:`_Layout` of ``systems``, built once per set of charges and step counts."""
    z0 = systems.charge_most_protonated.astype(int)
    n_steps = systems.n_steps.astype(int)
    key = z0.tobytes() + b"|" + n_steps.tobytes()
    layout = _LAYOUTS.get(key)
    if layout is None:
        z_values = tuple(sorted({int(z) for z in z0}))
        groups = []
        for steps in sorted({int(k) for k in n_steps if k > 0}):
            index = np.flatnonzero(n_steps == steps)
            charges = z0[index]
            groups.append(_Group(index, steps, charges.astype(float)[:, None],
                                 np.array([z_values.index(int(z)) for z in charges]),
                                 bool((charges == charges[0]).all()), bool((charges == 0).all())))
        if len(_LAYOUTS) >= _TEMPERATURE_TERMS_MAX:
            _LAYOUTS.clear()
        layout = _LAYOUTS[key] = _Layout(tuple(groups), z_values)
    return layout


def _group_rows(layout: _Layout, totals: np.ndarray, k_by_t: np.ndarray, t_index, single_t: bool):
    """Per group of ``layout``: C [G, n], C z0 and C z0² [G, n] (None for a neutral group) and
    K_j [J, G, 1] (one temperature) or [J, G, n]."""
    rows = []
    for group in layout.groups:
        c = totals[group.index]
        cz = None if group.neutral else c * group.z0
        czz = None if group.neutral else cz * group.z0
        k = k_by_t[:group.n_steps][:, group.index]
        k = k[:, :, :1] if single_t else np.ascontiguousarray(k[:, :, t_index])
        rows.append((c, cz, czz, k))
    return tuple(rows)


def _dot(weights: np.ndarray, values: np.ndarray) -> np.ndarray:
    """Σ_g weights[g] values[g] for arrays [G, n]: array [n] (summed in the order of g)."""
    if weights.shape[0] == 1:
        return weights[0] * values[0]
    return np.einsum("gn,gn->n", weights, values)


def _joint_state(chunk: _Chunk, layout: _Layout, x: np.ndarray, ln_gamma: np.ndarray):
    """Charge balance R and ionic strength I* at (x, γ), with the derivatives of a joint Newton
    step in (x, I): dR/dx, dI*/dx, dI*/dlnγ and d²R/dx² (dR/dlnγ = −2 dI*/dx).

    With z = z0 − j the charge of species j and <·> the mean over a system's species,
    d ln α_j/dx = z_j − <z> and d ln α_j/dlnγ = −(z_j² − <z²>) (α_j ∝ β_j γ_0/(γ_j a_H^j),
    ln γ_j = z_j² lnγ), so that

        dR/dx      = Σ C Var(z) + [H⁺] + [OH⁻]
        dI*/dx     = ½ Σ C Cov(z, z²) + ½([H⁺] − [OH⁻])
        dI*/dlnγ   = −½ Σ C Var(z²) − ½([H⁺] + [OH⁻])
        d²R/dx²    = Σ C μ3(z) + [H⁺] − [OH⁻]

    each from the moments of j up to the fourth, system group by system group (no padded
    steps).  Two exponentials per call: [H⁺] = w/y and [OH⁻] = Kw y w with y = 1/a_H,
    w = 1/γ₁.  Returns (R, I*, dR/dx, dI*/dx, dI*/dlnγ, d²R/dx²), arrays [n].
    """
    n = x.shape[0]
    y = np.exp(-x)
    w = np.exp(-ln_gamma)
    w_squared = w * w
    yw = y * w
    h = w / y
    oh = chunk.kw * yw
    # y w^(1 − 2 z0) for each distinct z0: the step factor of the first step.
    factors = np.empty((len(layout.z_values), n))
    inverse_w_squared = 1.0 / w_squared if layout.z_values[-1] > 0 else w_squared
    for row, z in zip(factors, layout.z_values):
        np.copyto(row, yw)
        for _ in range(abs(z)):
            row *= inverse_w_squared if z > 0 else w_squared
    zero = np.zeros(n)
    sum_mean = sum_sq = sum_var = sum_cov = sum_var_sq = sum_third = zero
    sum_z_mean = sum_z_var = sum_zz_var = sum_z_cov = zero
    for group, (c, cz, czz, k) in zip(layout.groups, chunk.groups):
        f = factors[group.z_rows[0]][None] if group.one_charge else factors[group.z_rows]
        term = k[0] * f
        m0 = term + 1.0
        if group.n_steps == 1:
            inverse = 1.0 / m0
            mean = term * inverse
            var = mean - mean * mean
            third = var * (1.0 - 2.0 * mean)
            # One step: j is 0 or 1, so j² = j and every moment of j is the mean.
            m = _dot(c, mean)
            sum_mean = sum_mean + m
            sum_sq = sum_sq + m
            v = _dot(c, var)
            sum_var = sum_var + v
            sum_cov = sum_cov + v
            sum_var_sq = sum_var_sq + v
            sum_third = sum_third + _dot(c, third)
            if cz is not None and czz is not None:
                sum_z_mean = sum_z_mean + _dot(cz, mean)
                v = _dot(cz, var)
                sum_z_var = sum_z_var + v
                sum_z_cov = sum_z_cov + v
                sum_zz_var = sum_zz_var + _dot(czz, var)
            continue
        s1, s2, s3, s4 = term.copy(), term.copy(), term.copy(), term.copy()
        step = f
        for j in range(2, group.n_steps + 1):
            step = step * w_squared
            term = term * step
            term *= k[j - 1]
            m0 += term
            s1 += j * term
            s2 += (j * j) * term
            s3 += (j * j * j) * term
            s4 += (j * j * j * j) * term
        inverse = 1.0 / m0
        s1 *= inverse
        s2 *= inverse
        s3 *= inverse
        s4 *= inverse
        var = s2 - s1 * s1
        cov = s3 - s1 * s2
        var_sq = s4 - s2 * s2
        third = cov - 2.0 * s1 * var
        sum_mean = sum_mean + _dot(c, s1)
        sum_sq = sum_sq + _dot(c, s2)
        sum_var = sum_var + _dot(c, var)
        sum_cov = sum_cov + _dot(c, cov)
        sum_var_sq = sum_var_sq + _dot(c, var_sq)
        sum_third = sum_third + _dot(c, third)
        if cz is not None and czz is not None:
            sum_z_mean = sum_z_mean + _dot(cz, s1)
            sum_z_var = sum_z_var + _dot(cz, var)
            sum_zz_var = sum_zz_var + _dot(czz, var)
            sum_z_cov = sum_z_cov + _dot(cz, cov)
    return _state_from_moments(chunk.weak_charge, chunk.strong_charge, chunk.strong_ionic, chunk.weak_z0_sq, h, oh,
                               (sum_mean, sum_sq, sum_var, sum_cov, sum_var_sq, sum_third),
                               (sum_z_mean, sum_z_var, sum_z_cov, sum_zz_var), np.maximum)


def _state_from_moments(weak_charge, strong_charge, strong_ionic, weak_z0_sq, h, oh, moments, charged_moments, clip):
    """(charge residual, I, slope, dI/dx, dI/d ln γ, curvature) from the species' moments: the one
    formula of the array solver (arrays, ``clip`` = ``np.maximum``) and of its one-composition twin
    (floats, ``clip`` = ``max``).  ``weak_charge`` is the weak systems' charge at x = 0 and
    ``strong_charge`` the strong ions' [mol/L]; ``moments`` the Σ c·(mean, second moment, variance, covariance,
    var², third) and ``charged_moments`` the Σ c·z·mean, Σ c·z·var, Σ c·z·cov, Σ c·z²·var."""
    sum_mean, sum_sq, sum_var, sum_cov, sum_var_sq, sum_third = moments
    sum_z_mean, sum_z_var, sum_z_cov, sum_zz_var = charged_moments
    residual = weak_charge - sum_mean + strong_charge + h - oh
    ionic = strong_ionic + 0.5 * (weak_z0_sq - 2.0 * sum_z_mean + sum_sq) + 0.5 * (h + oh)
    slope = clip(sum_var, 0.0) + h + oh
    ionic_slope = sum_z_var - 0.5 * sum_cov + 0.5 * (h - oh)
    ionic_gamma = -0.5 * (sum_var_sq - 4.0 * sum_z_cov + 4.0 * sum_zz_var) - 0.5 * (h + oh)
    curvature = h - oh - sum_third
    return residual, ionic, slope, ionic_slope, ionic_gamma, curvature


def _solve_empty(totals_ns, strong_charge_mol_l, strong_ionic_mol_l, temperature_c,
                 fixed_ionic_strength_mol_l, systems: SystemArrays, activity: str, tol_ph: float,
                 max_iterations: int) -> Speciation:
    """Water and strong ions only: solve with one empty placeholder system, then drop it."""
    placeholder = SystemArrays(("none",), np.zeros(1, dtype=int), np.ones(1, dtype=int),
                               np.full((1, 1), 7.0), np.zeros((1, 1)), np.zeros((1, 1)),
                               np.zeros((1, 1)), np.full((1, 1), 100.0))
    result = _solve_chunk(np.zeros((totals_ns.shape[0], 1)), strong_charge_mol_l, strong_ionic_mol_l,
                          temperature_c, fixed_ionic_strength_mol_l, placeholder, activity,
                          tol_ph, max_iterations)
    return dataclasses.replace(result, totals_mol_l=totals_ns, systems=systems,
                               species_charge=result.species_charge[:0, :1])


def _solve_chunk(totals_ns, strong_charge_mol_l, strong_ionic_mol_l, temperature_c,
                 fixed_ionic_strength_mol_l, systems: SystemArrays, activity: str,
                 tol_ph: float, max_iterations: int) -> Speciation:
    """solve_speciation on one chunk, in this thread: set up, iterate, settle the stiff rest, polish."""
    if len(systems.system_ids) == 0:
        return _solve_empty(totals_ns, strong_charge_mol_l, strong_ionic_mol_l, temperature_c,
                            fixed_ionic_strength_mol_l, systems, activity, tol_ph, max_iterations)
    n = totals_ns.shape[0]
    if n == 1:
        alone = _solve_one(totals_ns, strong_charge_mol_l, strong_ionic_mol_l, temperature_c,
                           fixed_ionic_strength_mol_l, systems, activity, tol_ph, max_iterations)
        if alone is not None:
            return alone
    totals = np.ascontiguousarray(totals_ns.T)
    strong_charge, strong_ionic, temperature = (np.array(_per_row(a, n)) for a in
                                                (strong_charge_mol_l, strong_ionic_mol_l, temperature_c))
    z0 = systems.charge_most_protonated.astype(float)
    unique_t, t_index = distinct_temperatures(temperature)
    k_by_t, ln_kw, a_dh = temperature_terms(systems, unique_t)
    fixed = None
    if fixed_ionic_strength_mol_l is not None:
        fixed = np.array(_per_row(fixed_ionic_strength_mol_l, n))
    layout = _layout_of(systems)
    single_t = unique_t.size == 1
    chunk = _Chunk(totals, z0 @ totals, (z0 * z0) @ totals, strong_charge, strong_ionic,
                   ln_kw[t_index], a_dh[t_index], fixed, t_index, np.exp(ln_kw)[t_index],
                   _group_rows(layout, totals, k_by_t, t_index, single_t))
    charges = _charges_of(z0)
    zmax = max(1.0, *(abs(z) for z in charges.values), *(abs(z - systems.max_steps) for z in charges.values))
    model = _Model(k_by_t, single_t, charges,
                   activity_model(activity), 2.0 * zmax + 2.0, min(tol_ph, REPRODUCIBLE_TOL_PH), layout)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore", under="ignore"):
        x_out, ionic_out, converged, iterations = _iterate(chunk, _start(chunk, systems, model), model,
                                                           max_iterations)
        stiff = np.flatnonzero(~converged)
        if stiff.size and chunk.fixed is None:
            x_out[stiff], ionic_out[stiff], converged[stiff] = _settle_ionic_strength(
                chunk.take(stiff), model, x_out[stiff], ionic_out[stiff])
        return _polish(chunk, model, systems, x_out, ionic_out, converged, iterations, temperature, totals_ns)


def _start(chunk: _Chunk, systems: SystemArrays, model: _Model) -> _Bracket:
    """The starting state: pH from the proton ladder, I from the fully protonated forms.

    The ladder of each solution uses the pKa at its own temperature, taken in the order of
    the pKa at 25 °C, so the start (and the path) depends on the solution alone.
    """
    valid = ~np.isnan(systems.pka_25c)
    step_system = np.nonzero(valid)[0]
    order = np.argsort(systems.pka_25c[valid], kind="stable")
    k_ladder = model.k_by_t.transpose(1, 0, 2)[valid][order]          # [M, T]
    x = -LN10 * _initial_ph(chunk.totals, chunk.weak_charge + chunk.strong_charge, k_ladder, chunk.t_index,
                            step_system[order], chunk.kw)
    ionic = chunk.fixed.copy() if chunk.fixed is not None else chunk.strong_ionic + 0.5 * chunk.weak_z0_sq + START_IONIC_FLOOR_MOL_L
    return _full_bracket(x, ionic)


@dataclass(frozen=True)
class _OnePlan:
    """What the float path of one solution needs of its systems at one temperature, as plain
    floats and lists, kept per systems, temperature, activity model and tolerance (recipes
    and the app solve the same few hundreds of times), for as long as the temperature terms
    it was built from are the ones kept (:func:`temperature_terms`)."""

    systems: SystemArrays
    terms_key: bytes                                # the temperature terms it was built from:
    terms: tuple[np.ndarray, np.ndarray, np.ndarray]  # valid while that store still holds them
    grouped: list[tuple[int, float, int, float, tuple]]  # per system, layout order: (s, z0, |z0|, K_1,
                                                    # ((K_j, j, j², j³, j⁴) for j ≥ 2 of its real steps))
    polish_of: list[tuple[float, int, tuple]]       # per system, system order: (z0, |z0|, ((K_j, j, j²) of
                                                    # its real steps))
    z0: list[float]
    ladder: list[tuple[int, float]]                 # (s, K at T), in the order of pKa at 25 °C
    ln_kw: float
    kw: float
    a_dh: float
    drift_factor: float
    tol_ph: float
    gamma_function: Callable[[float, float], float]   # the model's log10 γ₁(I, A), its plain-float twin
    species_charge: np.ndarray


#: _OnePlan per (id of the systems, temperature, activity model, tolerance).
_ONE_PLANS: dict[tuple, _OnePlan] = {}


def _step_constants(k_steps: np.ndarray) -> tuple[float, tuple[tuple[float, float, float, float, float], ...]]:
    """K_1 and, for each later step j, (K_j, j, j², j³, j⁴) as floats: what the float path's moments
    multiply by, worked out once per plan (a whole number times a float is the same float)."""
    ks = k_steps.tolist()
    return ks[0], tuple((k, float(j), float(j * j), float(j * j * j), float(j * j * j * j))
                        for j, k in enumerate(ks[1:], start=2))


def _one_plan(systems: SystemArrays, temperature_c: float, activity: str, tol_ph: float) -> _OnePlan:
    """:class:`_OnePlan` of ``systems`` at ``temperature_c`` [°C], built once."""
    key = (id(systems), temperature_c, activity, tol_ph)
    plan = _ONE_PLANS.get(key)
    if plan is not None and plan.systems is systems and _TEMPERATURE_TERMS.get(plan.terms_key) is plan.terms:
        return plan
    t = np.array([temperature_c])
    terms_key = _terms_key(systems, t)
    terms = _terms_of(systems, t, terms_key)
    k_by_t, ln_kw, a_dh = terms
    layout = _layout_of(systems)
    grouped = [(int(s), float(group.z0[g, 0]), int(abs(group.z0[g, 0])), *_step_constants(k_by_t[:group.n_steps, s, 0]))
               for group in layout.groups for g, s in enumerate(group.index)]
    valid = ~np.isnan(systems.pka_25c)
    order = np.argsort(systems.pka_25c[valid], kind="stable")
    k_ladder = k_by_t.transpose(1, 0, 2)[valid][order][:, 0]
    ladder = list(zip(np.nonzero(valid)[0][order].tolist(), k_ladder.tolist()))
    z0 = systems.charge_most_protonated.astype(float)
    zmax = max(1.0, *(abs(z) for z in z0), *(abs(z - systems.max_steps) for z in z0))
    polish_of = [(float(z), int(abs(z)), tuple((k, float(j), float(j * j)) for j, k in
                                              enumerate(k_by_t[:int(steps), s, 0].tolist(), start=1)))
                 for s, (z, steps) in enumerate(zip(z0, systems.n_steps))]
    plan = _OnePlan(systems, terms_key, terms, grouped, polish_of, z0.tolist(), ladder, float(ln_kw[0]),
                    float(np.exp(ln_kw[0])), float(a_dh[0]), float(2.0 * zmax + 2.0), min(tol_ph, REPRODUCIBLE_TOL_PH),
                    float_activity_model(activity), _species_charge(systems))
    if len(_ONE_PLANS) >= _TEMPERATURE_TERMS_MAX:
        _ONE_PLANS.clear()
    _ONE_PLANS[key] = plan
    return plan


def _first_float(value) -> float:
    """The value of one solution (a number or an array [1]) as a Python float; any other shape
    raises as :func:`_per_row` does."""
    if type(value) is np.ndarray and value.shape == (1,):
        return float(value[0])
    return float(_per_row(value, 1)[0])


def _solve_one(totals_ns, strong_charge_mol_l, strong_ionic_mol_l, temperature_c, fixed_ionic_strength_mol_l,
               systems: SystemArrays, activity: str, tol_ph: float, max_iterations: int) -> Speciation | None:
    """ONE solution (``totals_ns`` [1, S]) in plain floats: start, iterate and polish as the
    arrays do, term by term.  None unless it converged with finite figures (the arrays then
    solve it: their NaN handling, stiff-region fallback and status are the reference)."""
    temperature = (temperature_c.copy() if isinstance(temperature_c, np.ndarray) and temperature_c.shape == (1,)
                   else np.array(_per_row(temperature_c, 1)))
    plan = _one_plan(systems, float(temperature[0]), activity, tol_ph)
    totals = totals_ns[0].tolist()
    weak_charge = weak_z0_sq = 0.0
    for c, z in zip(totals, plan.z0):      # Σ C z0 and Σ C z0², added in system order
        weak_charge += c * z
        weak_z0_sq += c * (z * z)
    strong_charge, strong_ionic = _first_float(strong_charge_mol_l), _first_float(strong_ionic_mol_l)
    fixed = None if fixed_ionic_strength_mol_l is None else _first_float(fixed_ionic_strength_mol_l)
    x, ionic = _start_one(plan, totals, weak_charge + strong_charge, strong_ionic, weak_z0_sq, fixed)
    one = _iterate_one(plan, totals, (weak_charge, weak_z0_sq, strong_charge, strong_ionic), fixed, x, ionic,
                       max_iterations)
    if one is None or not one[2]:
        return None
    return _polish_one(plan, totals, (weak_charge, strong_charge, strong_ionic), fixed is None, one[0], one[1],
                       one[3], temperature, totals_ns)


def _start_one(plan: _OnePlan, totals: list[float], excess: float, strong_ionic: float, weak_z0_sq: float,
               fixed: float | None) -> tuple[float, float]:
    """:func:`_start` (with :func:`_initial_ph`) of ONE solution in plain floats: (x, I).
    ``excess`` is Σ C z0 + Σ strong c z."""
    capacity = [totals[s] for s, _ in plan.ladder]
    k_of = [k for _, k in plan.ladder]
    present = [m for m, size in enumerate(capacity) if size > 0.0]   # (zero capacities add exact zeros)
    a_coef, b_coef, c_coef = 1.0, excess, plan.kw          # no step: h − Kw/h = −P
    if present:
        running, before, k = 0.0, 0.0, present[-1]
        for m in present:
            before, running = running, running + capacity[m]
            if running >= excess:                           # the first step the excess reaches
                k = m
                break
        size, k_k = capacity[k], k_of[k]
        delta = excess - before
        if delta < 0.5 * size:
            below = 0.0
            for m in present:
                if m >= k:
                    break
                below += capacity[m] / k_of[m]
            a_coef = 1.0 + below
            b_coef, c_coef = a_coef * k_k + delta, k_k * (size - delta)
        else:
            above = 0.0
            for m in reversed(present):
                if m <= k:
                    break
                above += capacity[m] * k_of[m]
            c_high = plan.kw + above
            a_coef, b_coef, c_coef = delta, (delta - size) * k_k - c_high, c_high * k_k
    root = math.sqrt(b_coef * b_coef + 4.0 * a_coef * c_coef)
    h = 2.0 * c_coef / (b_coef + root) if b_coef > 0.0 else (root - b_coef) / (2.0 * a_coef)
    ph = min(max(-math.log10(h) if h > 0.0 else math.inf, PH_SEARCH_MIN + 0.5), PH_SEARCH_MAX - 0.5)
    ionic = fixed if fixed is not None else strong_ionic + 0.5 * weak_z0_sq + START_IONIC_FLOOR_MOL_L
    return -LN10 * ph, ionic


def _full_bracket(x: np.ndarray, ionic: np.ndarray) -> _Bracket:
    """Iteration state at (x, I) with the bracket the whole search range."""
    n = x.shape[0]
    # (An end never set sits at the search limit, where widening is clipped away.)
    return _Bracket(x, ionic, np.full(n, _X_LOW), np.full(n, _X_HIGH), np.zeros(n), np.zeros(n),
                    np.full(n, _X_HIGH - _X_LOW), np.full(n, _X_HIGH - _X_LOW))


def _iterate(chunk: _Chunk, state: _Bracket, model: _Model, max_iterations: int):
    """Safeguarded Newton/Halley on x with I carried along; finished solutions leave the batch.

    Returns (x [n], I [n], converged [n], iterations used).
    """
    n = chunk.totals.shape[1]
    x_out = np.empty(n)
    ionic_out = np.empty(n)
    converged = np.zeros(n, dtype=bool)
    active = np.arange(n)
    iterations = 0
    for iterations in range(1, max_iterations + 1):
        done = _step(chunk, state, model)
        if done.any():
            finished = active[done]
            x_out[finished] = state.x[done]
            ionic_out[finished] = state.ionic[done]
            converged[finished] = True
            keep = np.flatnonzero(~done)
            active = active[keep]
            if active.size == 0:
                break
            state, chunk = state.take(keep), chunk.take(keep)
    if active.size:
        x_out[active] = state.x
        ionic_out[active] = state.ionic
    return x_out, ionic_out, converged, iterations


def _exp(value: float) -> float:
    """e**value as numpy gives it on overflow (inf), without the exception of ``math.exp``."""
    try:
        return math.exp(value)
    except OverflowError:
        return math.inf


def _joint_state_one(x: float, ln_gamma: float, systems_one, weak_charge: float, weak_z0_sq: float,
                     strong_charge: float, strong_ionic: float, kw: float):
    """:func:`_joint_state` of ONE solution in plain floats, in the same order (group by group
    of the layout, each system's real steps only): ``systems_one`` lists (C, z0, |z0|, K_1,
    ((K_j, j, j², j³, j⁴) for j ≥ 2)) per system.  The arrays cost more to set up than to
    compute at n = 1; this is the same formula written over the handful of systems and steps
    (checked against the batch path to 1e-12 pH in the tests)."""
    try:
        y, w = math.exp(-x), math.exp(-ln_gamma)
    except OverflowError:
        y, w = _exp(-x), _exp(-ln_gamma)
    w_squared = w * w
    yw = y * w
    h = w / y
    oh = kw * yw
    sum_mean = sum_sq = sum_var = sum_cov = sum_var_sq = sum_third = 0.0
    sum_z_mean = sum_z_var = sum_zz_var = sum_z_cov = 0.0
    factors: dict[float, float] = {}
    for total, z, lifts, k_first, higher in systems_one:
        f = yw if not lifts else factors.get(z)   # (z0 = 0: the first step's factor is y w)
        if f is None:
            f = yw
            lift = (1.0 / w_squared) if z > 0 else w_squared
            for _ in range(lifts):
                f *= lift
            factors[z] = f
        term = k_first * f
        m0 = term + 1.0
        if not higher:
            mean = term * (1.0 / m0)
            mean_sq = mean
            var = mean - mean * mean
            cov = var_sq = var
            third = var * (1.0 - 2.0 * mean)
        else:
            s1 = s2 = s3 = s4 = term
            step = f
            for k, j, j_sq, j_cube, j_fourth in higher:
                step = step * w_squared
                term = term * step
                term *= k
                m0 += term
                s1 += j * term
                s2 += j_sq * term
                s3 += j_cube * term
                s4 += j_fourth * term
            inverse = 1.0 / m0
            mean, mean_sq, s3, s4 = s1 * inverse, s2 * inverse, s3 * inverse, s4 * inverse
            var = mean_sq - mean * mean
            cov = s3 - mean * mean_sq
            var_sq = s4 - mean_sq * mean_sq
            third = cov - 2.0 * mean * var
        sum_mean += total * mean
        sum_sq += total * mean_sq
        sum_var += total * var
        sum_cov += total * cov
        sum_var_sq += total * var_sq
        sum_third += total * third
        if z:
            total_z = total * z
            sum_z_mean += total_z * mean
            sum_z_var += total_z * var
            sum_zz_var += (total_z * z) * var
            sum_z_cov += total_z * cov
    return _state_from_moments(weak_charge, strong_charge, strong_ionic, weak_z0_sq, h, oh,
                               (sum_mean, sum_sq, sum_var, sum_cov, sum_var_sq, sum_third),
                               (sum_z_mean, sum_z_var, sum_z_cov, sum_zz_var), max)


def _iterate_one(plan: _OnePlan, totals: list[float], charges: tuple[float, float, float, float],
                 fixed: float | None, x: float, ionic: float, max_iterations: int):
    """:func:`_iterate` for ONE solution from (x, I) with the bracket the whole search range
    (:func:`_full_bracket`), each step of :func:`_step` in plain floats.  ``charges`` is
    (Σ C z0, Σ C z0², Σ strong c z, ½ Σ strong c z²).

    Returns (x, I, converged, iterations used), or None where a figure turns non-finite (the
    arrays then solve it: their NaN and overflow handling is the reference).

    Written for speed with the same float operations as the arrays' step: module constants
    read once into locals, ``min(a, b)`` as ``b if b < a else a`` and ``max(a, b)`` as
    ``b if b > a else a`` (what the built-ins return, NaN included).
    """
    # Systems at zero total add exact zeros to the arrays' sums: left out.
    systems_one = [(totals[s], z, lifts, k_first, higher) for s, z, lifts, k_first, higher in plan.grouped
                   if totals[s] != 0.0]
    weak_charge, weak_z0_sq, strong_charge, strong_ionic = charges
    kw, a_dh = plan.kw, plan.a_dh
    x_low, x_high, max_step, ln10, isfinite, sqrt = _X_LOW, _X_HIGH, _MAX_STEP, LN10, math.isfinite, math.sqrt
    low_set, high_set, gamma_low, gamma_high = x_low, x_high, 0.0, 0.0
    step_before = step_last = x_high - x_low
    drift, tol_x = plan.drift_factor, plan.tol_ph * ln10
    settle_factor = drift / plan.tol_ph
    gamma_function = plan.gamma_function
    done = False
    iterations = 0
    for iterations in range(1, max_iterations + 1):
        held = 0.0 if 0.0 > ionic else ionic    # max(I, 0)
        ln_gamma = ln10 * gamma_function(held, a_dh)
        residual, ionic_at_x, slope, ionic_slope, ionic_gamma, curvature = _joint_state_one(
            x, ln_gamma, systems_one, weak_charge, weak_z0_sq, strong_charge, strong_ionic, kw)
        if not (isfinite(residual) and isfinite(curvature) and slope > 0.0 and isfinite(slope)):
            return None
        if residual > 0.0:
            high_set, gamma_high = x, ln_gamma
        else:
            low_set, gamma_low = x, ln_gamma
        high = high_set + drift * abs(ln_gamma - gamma_high)
        high = x_high if x_high < high else high
        low = low_set - drift * abs(ln_gamma - gamma_low)
        low = x_low if x_low > low else low
        if fixed is not None:
            newton = -residual / slope
        else:
            delta = GAMMA_SLOPE_STEP_RELATIVE * held + GAMMA_SLOPE_STEP_MOL_L
            gamma_slope = (ln10 * gamma_function(held + delta, a_dh) - ln_gamma) / delta
            coupling = (0.0 if 0.0 < gamma_slope else gamma_slope) if abs(residual) < COUPLING_BAND * slope else 0.0
            diagonal = ionic_gamma * coupling - 1.0
            diagonal = _JOINT_CONTRACTION if _JOINT_CONTRACTION < diagonal else diagonal
            off = -2.0 * ionic_slope * coupling
            gap = ionic_at_x - ionic
            determinant = slope * diagonal - off * ionic_slope
            newton = (off * gap - residual * diagonal) / determinant
            widen = drift * abs(coupling * (ionic_slope * residual - slope * gap) / determinant)
            high = high + widen
            high = x_high if x_high < high else high
            low = low - widen
            low = x_low if x_low > low else low
        halley_denominator = 1.0 + 0.5 * newton * curvature / slope
        if halley_denominator > 0.5:
            newton = newton / halley_denominator
        newton = -max_step if -max_step > newton else newton
        newton = max_step if max_step < newton else newton
        x_newton = x + newton
        step_size = abs(newton)
        slow = step_size > SLOW_STEP_RATIO * abs(step_before) and low_set > x_low and high_set < x_high
        bisect = (x_newton >= high or x_newton <= low or slow) and step_size > tol_x
        x_next = 0.5 * (low + high) if bisect else x_newton
        step_before, step_last = step_last, x_next - x
        if fixed is not None:
            ionic_new = fixed
        else:
            change = ionic_slope * step_last
            ahead = ionic_at_x + change if change >= 0.0 else ionic_at_x * ionic_at_x / (ionic_at_x - change)
            ionic_new = ionic + (ahead - ionic) / -diagonal
            ionic_new = strong_ionic if strong_ionic > ionic_new else ionic_new
        if not (isfinite(x_next) and isfinite(ionic_new)):
            return None
        step_now = abs(step_last)
        floor = step_before * step_before
        error_after = step_now * step_now * step_now / (TINY_DIVISOR if TINY_DIVISOR > floor else floor)
        settled = abs(ionic_new - ionic) * a_dh * settle_factor < sqrt(ionic + SETTLED_IONIC_FLOOR_MOL_L)
        done = ((step_now < tol_x) or (step_now < QUADRATIC_REGIME_STEP and error_after < tol_x and not bisect)) and settled
        x, ionic = x_next, ionic_new
        if done:
            break
    return x, ionic, done, iterations


#: Bisection steps of the stiff-region fallback on I (the bracket shrinks 2^-60).
_SETTLE_STEPS = 60


def _settle_ionic_strength(chunk: _Chunk, model: _Model, x: np.ndarray, ionic: np.ndarray):
    """Fallback for solutions where x and I did not settle together: bisection on I.

    For a fixed I (γ fixed) the charge balance has one root, which the safeguarded Newton
    always finds; the ionic strength I*(I) of that speciation is bounded, so
    G(I) = I*(I) − I is ≥ 0 at I = Σ strong ½cz² and ≤ 0 at a large enough I, and bisection
    on that bracket converges to a self-consistent (x, I) however strongly γ couples them
    (high ionic strength with multiply charged species, where the Davies γ rises with I).
    Returns (x, I, converged) for these solutions.
    """
    low = chunk.strong_ionic.copy()
    high = np.maximum(2.0 * ionic, chunk.strong_ionic + 0.5 * chunk.weak_z0_sq) + 1.0
    x, gap = _ionic_gap(chunk, model, x, high)
    for _ in range(20):
        short = gap > 0.0
        if not short.any():
            break
        high = np.where(short, 4.0 * high, high)
        x, gap = _ionic_gap(chunk, model, x, high)
    bracketed = gap <= 0.0
    for _ in range(_SETTLE_STEPS):
        middle = 0.5 * (low + high)
        x, gap = _ionic_gap(chunk, model, x, middle)
        above = gap > 0.0
        low = np.where(above, middle, low)
        high = np.where(above, high, middle)
        if np.all(high - low <= 1e-13 * (1.0 + high)):
            break
    middle = 0.5 * (low + high)
    x, gap = _ionic_gap(chunk, model, x, middle)
    return x, middle, bracketed & np.isfinite(gap) & np.isfinite(x)


def _ionic_gap(chunk: _Chunk, model: _Model, x: np.ndarray, ionic: np.ndarray):
    """Root x of the charge balance with γ held at ``ionic``, and I*(x) − I there."""
    held = dataclasses.replace(chunk, fixed=ionic)
    x, _, _, _ = _iterate(held, _full_bracket(x.copy(), ionic), model, 200)
    ln_gamma = LN10 * model.gamma_function(np.maximum(ionic, 0.0), chunk.a_dh)
    ionic_at_x = _charge_state(x, ln_gamma, model.k_steps(chunk.t_index), chunk.totals, model.charges,
                               chunk.weak_charge, chunk.weak_z0_sq, chunk.strong_charge, chunk.strong_ionic,
                               chunk.ln_kw)[2]
    return x, ionic_at_x - ionic


def _gamma_and_slope(model: _Model, ionic: np.ndarray, a_dh: np.ndarray, fixed: bool):
    """ln γ₁ at I (≥ 0) and, unless γ is held, d lnγ₁/dI by a forward difference
    (step 1e-6 I + 1e-12: the slope only steers the joint Newton step, the root does not
    depend on it)."""
    ionic = np.maximum(ionic, 0.0)
    if fixed:
        return LN10 * model.gamma_function(ionic, a_dh), None
    delta = GAMMA_SLOPE_STEP_RELATIVE * ionic + GAMMA_SLOPE_STEP_MOL_L
    ln_gamma = LN10 * model.gamma_function(ionic, a_dh)
    return ln_gamma, (LN10 * model.gamma_function(ionic + delta, a_dh) - ln_gamma) / delta


#: Largest value of (dI*/dlnγ)(dlnγ/dI) − 1 the joint step uses: the fixed point of I is
#: taken as contracting at least this much (keeps the 2×2 determinant away from zero).
_JOINT_CONTRACTION = -0.1


def _step(chunk: _Chunk, state: _Bracket, model: _Model) -> np.ndarray:
    """One iteration for every solution of the chunk (updates ``state``); returns the done mask.

    A Newton step on x = ln a_H and I together (the 2×2 system of R(x, I) = 0 and
    I*(x, I) = I, :func:`_joint_state`), with Halley's correction on x where it is mild;
    where γ falls with I (dlnγ/dI ≤ 0) the coupling is taken, elsewhere the step is Newton
    on x at fixed γ with I carried to first order.  Safeguarded by the bracket on x.
    """
    fixed = chunk.fixed is not None
    ln_gamma, gamma_slope = _gamma_and_slope(model, state.ionic, chunk.a_dh, fixed)
    residual, ionic_at_x, slope, ionic_slope, ionic_gamma, curvature = _joint_state(
        chunk, model.layout, state.x, ln_gamma)
    x = state.x
    above = residual > 0.0
    state.high_set = np.where(above, x, state.high_set)
    state.ln_gamma_high = np.where(above, ln_gamma, state.ln_gamma_high)
    state.low_set = np.where(above, state.low_set, x)
    state.ln_gamma_low = np.where(above, state.ln_gamma_low, ln_gamma)
    # An end set under another γ is widened by the most the root can have moved
    # since: each conditional pKa moves by at most (2|z|+1) Δlnγ.
    high = np.minimum(state.high_set + model.drift_factor * np.abs(ln_gamma - state.ln_gamma_high), _X_HIGH)
    low = np.maximum(state.low_set - model.drift_factor * np.abs(ln_gamma - state.ln_gamma_low), _X_LOW)
    if fixed:
        newton = -residual / slope
    else:
        # Joint Newton: [[R_x, −2 I*_x g'], [I*_x, I*_g g' − 1]] (dx, dI) = −(R, I* − I).
        # The coupling is taken near the root only (a Newton step at fixed γ below 0.1 pH):
        # far from it the linearised I* means little and the step is Newton's at fixed γ.
        coupling = np.where(np.abs(residual) < COUPLING_BAND * slope, np.minimum(gamma_slope, 0.0), 0.0)
        diagonal = np.minimum(ionic_gamma * coupling - 1.0, _JOINT_CONTRACTION)
        off = -2.0 * ionic_slope * coupling
        gap = ionic_at_x - state.ionic
        determinant = slope * diagonal - off * ionic_slope
        newton = (off * gap - residual * diagonal) / determinant
        # The step aims at the root under the next γ: the bracket widens by its drift.
        widen = model.drift_factor * np.abs(coupling * (ionic_slope * residual - slope * gap) / determinant)
        high = np.minimum(high + widen, _X_HIGH)
        low = np.maximum(low - widen, _X_LOW)
    # Halley's correction (cubic convergence in x) where it is mild.
    halley_denominator = 1.0 + 0.5 * newton * curvature / slope
    newton = np.where(halley_denominator > 0.5, newton / halley_denominator, newton)
    newton = np.minimum(np.maximum(newton, -_MAX_STEP), _MAX_STEP)
    x_newton = x + newton
    # Safeguard as in rtsafe (Press et al., Numerical Recipes, 9.4): bisect when the
    # Newton point leaves the bracket or the step does not shrink fast enough.
    # A step below the tolerance is taken as it is (at the root the bracket is as narrow as
    # rounding and the sign of R is noise, while I may still be settling).
    tol_x = model.tol_ph * LN10
    step_size = np.abs(newton)
    # The step counts as not shrinking only once both ends of the bracket are set (before
    # that, bisecting would jump to the middle of the whole search range).
    slow = (step_size > SLOW_STEP_RATIO * np.abs(state.step_before)) & (state.low_set > _X_LOW) & (state.high_set < _X_HIGH)
    bisect = ((x_newton >= high) | (x_newton <= low) | slow) & (step_size > tol_x)
    x_next = np.where(bisect, 0.5 * (low + high), x_newton)
    state.step_before, state.step_last = state.step_last, x_next - x
    if chunk.fixed is not None:
        ionic_new = chunk.fixed
    else:
        # I for the x step taken, self-consistent to first order:
        # I' − I = (I*(x + Δx) − I) / (1 − I*_g g') (the joint step's I when Δx is its own), with
        # I*(x + Δx) = I* + I*_x Δx where that rises, I*²/(I* − I*_x Δx) where it falls (the same
        # to first order, and never below zero however long the step).
        change = ionic_slope * state.step_last
        ahead = np.where(change >= 0.0, ionic_at_x + change, ionic_at_x * ionic_at_x / (ionic_at_x - change))
        ionic_new = np.maximum(state.ionic + (ahead - state.ionic) / -diagonal, chunk.strong_ionic)
    # Converged when this step, or the error left after it, is below tolerance.  In the
    # quadratic regime the error after step δ_k is about δ_k³/δ_(k−1)² (δ_k ≈ c δ_(k−1)²).
    # (No estimate after a bisection.)
    step_now = np.abs(state.step_last)
    error_after = step_now * step_now * step_now / np.maximum(state.step_before * state.step_before, TINY_DIVISOR)
    # I is settled when its last change moves no pKa by tol_ph/2:
    # |d log10 γ/dI| ≤ A/(2√I) for these models, times (2|z|+2) for the steps, i.e.
    # |ΔI| (2|z|+2) A / (2√I) < tol_ph/2.
    settled = (np.abs(ionic_new - state.ionic) * chunk.a_dh * (model.drift_factor / model.tol_ph)
               < np.sqrt(state.ionic + SETTLED_IONIC_FLOOR_MOL_L))
    done = ((step_now < tol_x) | ((step_now < QUADRATIC_REGIME_STEP) & (error_after < tol_x) & ~bisect)) & settled
    state.x, state.ionic = x_next, ionic_new
    return done


def _group_weights(chunk: _Chunk) -> list[tuple[np.ndarray, np.ndarray | None]]:
    """(C, C z0) of each group of a chunk."""
    return [(c, cz) for c, cz, _, _ in chunk.groups]


def _polish_groups(chunk: _Chunk, layout: _Layout, x: np.ndarray, ln_gamma: np.ndarray):
    """Per group of the layout: the fractions [α_0 .. α_J] (arrays [G, n]), <j> and Var(j) at
    (x, γ), the terms T_j ∝ α_j built as in :func:`_moments`."""
    n = x.shape[0]
    w = np.exp(-ln_gamma)
    w_squared = w * w
    inverse_h = np.exp(-x)
    factors = np.empty((len(layout.z_values), n))
    up, down = 1.0 / w_squared, w_squared
    for row, z in zip(factors, layout.z_values):
        np.copyto(row, inverse_h)
        for _ in range(abs(z)):
            row *= up if z > 0 else down
        row *= w
    out = []
    for group, (_, _, _, k) in zip(layout.groups, chunk.groups):
        q = factors[group.z_rows[0]][None] if group.one_charge else factors[group.z_rows]
        term = q * k[0]
        m0 = term + 1.0
        m1 = term.copy()
        m2 = term.copy()
        terms = [term]
        for j in range(2, group.n_steps + 1):
            q = q * w_squared
            term = (q * k[j - 1]) * term
            terms.append(term)
            m0 += term
            m1 += j * term
            m2 += (j * j) * term
        inverse = 1.0 / m0
        alphas = [np.broadcast_to(inverse, term.shape)] + [t * inverse for t in terms]
        mean = m1 * inverse
        out.append((alphas, mean, np.maximum(m2 * inverse - mean * mean, 0.0)))
    return out


def _polish(chunk: _Chunk, model: _Model, systems: SystemArrays, x_out, ionic_out, converged, iterations,
            temperature, totals_ns) -> Speciation:
    """Final evaluation of every solution at its solved (x, I), then one last Newton step
    applied to first order (dα_j/dx = α_j (<j> − j)), which closes the charge balance to
    rounding at the cost of a few array operations.  System group by system group of the
    layout (no padded steps)."""
    weak_charge, strong_charge, ln_kw = chunk.weak_charge, chunk.strong_charge, chunk.ln_kw
    ln_gamma = LN10 * model.gamma_function(np.maximum(ionic_out, 0.0), chunk.a_dh)
    groups = _polish_groups(chunk, model.layout, x_out, ln_gamma)
    h = np.exp(x_out - ln_gamma)
    oh = np.exp(ln_kw - x_out - ln_gamma)
    sum_mean = sum(_dot(c, mean) for (c, _), (_, mean, _) in zip(_group_weights(chunk), groups))
    sum_variance = sum(_dot(c, variance) for (c, _), (_, _, variance) in zip(_group_weights(chunk), groups))
    residual = weak_charge - sum_mean + strong_charge + h - oh
    polish = -residual / (sum_variance + h + oh)
    x_out = x_out + polish
    h = h * np.exp(polish)
    oh = oh * np.exp(-polish)
    sum_mean = sum_variance = sum_second = sum_z_mean = np.zeros(x_out.shape[0])
    for (c, cz), (alphas, mean, _) in zip(_group_weights(chunk), groups):
        moved = [alpha * (1.0 + (mean - j) * polish) for j, alpha in enumerate(alphas)]
        norm = moved[0] + moved[1]
        for alpha in moved[2:]:
            norm = norm + alpha
        mean = second = moved[1] / norm
        for j, alpha in enumerate(moved[2:], start=2):
            alpha = alpha / norm
            mean = mean + j * alpha
            second = second + (j * j) * alpha
        variance = np.maximum(second - mean * mean, 0.0)
        sum_mean = sum_mean + _dot(c, mean)
        sum_variance = sum_variance + _dot(c, variance)
        sum_second = sum_second + _dot(c, variance + mean * mean)
        if cz is not None:
            sum_z_mean = sum_z_mean + _dot(cz, mean)
    residual = weak_charge - sum_mean + strong_charge + h - oh
    capacity = LN10 * (sum_variance + h + oh)
    ionic_check = chunk.strong_ionic + 0.5 * (chunk.weak_z0_sq - 2.0 * sum_z_mean + sum_second + h + oh)
    status, at_edge = _status(chunk, model, x_before=x_out - polish, x_after=x_out, ionic=ionic_out,
                     ionic_check=ionic_check, residual=residual, h=h, oh=oh, converged=converged)
    species_charge = _species_charge(systems)
    bad = status != STATUS_CONVERGED
    if bad.any():
        for row in (x_out, ln_gamma, h, oh, capacity, residual):
            row[bad] = np.nan
        # A solution beyond the model by its ionic strength keeps that figure (the reason);
        # at the edge of the pH range I means nothing either.
        ionic_out[(status == STATUS_FAILED) | at_edge] = np.nan
    return Speciation(
        ph=-x_out / LN10,
        ionic_strength_mol_l=ionic_out,
        log10_gamma_unit=ln_gamma / LN10,
        temperature_c=temperature,
        totals_mol_l=totals_ns,
        systems=systems,
        species_charge=species_charge,
        h_mol_l=h,
        oh_mol_l=oh,
        capacity_mol_l_per_ph=capacity,
        charge_residual_mol_l=residual,
        converged=~bad,
        iterations=iterations,
        status=status,
    )


def _polish_one(plan: _OnePlan, totals: list[float], charges: tuple[float, float, float], iterate_ionic: bool,
                x: float, ionic: float, iterations: int, temperature, totals_ns) -> Speciation | None:
    """:func:`_polish` (and :func:`_status`) of ONE converged solution in plain floats, term by
    term as the arrays do; ``charges`` is (Σ C z0, Σ strong c z, ½ Σ strong c z²).  None unless
    the result is converged (the arrays then give the reference NaN figures and status)."""
    weak_charge, strong_charge, strong_ionic = charges
    ln_kw = plan.ln_kw
    ln_gamma = LN10 * plan.gamma_function(0.0 if 0.0 > ionic else ionic, plan.a_dh)   # max(I, 0)
    w = _exp(-ln_gamma)
    w_squared = w * w
    inverse_h = _exp(-x)
    up, down = 1.0 / (w * w), w * w
    # Systems at zero total and padded steps add exact zeros to the arrays' sums: left out.
    present = [(s, total) for s, total in enumerate(totals) if total != 0.0]
    alphas, means = [], []
    sum_mean = sum_variance = 0.0
    for s, total in present:
        z, lifts, steps = plan.polish_of[s]
        q = inverse_h
        if lifts:
            lift = up if z > 0 else down
            for _ in range(lifts):
                q *= lift
        q *= w
        term = m0 = 1.0
        m1 = m2 = 0.0
        terms = [1.0]
        for k, j, j_sq in steps:
            if j > 1.0:
                q *= w_squared
            term = (q * k) * term
            terms.append(term)
            m0 += term
            m1 += j * term
            m2 += j_sq * term
        alphas.append([t / m0 for t in terms])
        mean = m1 / m0
        means.append(mean)
        sum_mean += total * mean
        variance = m2 / m0 - mean * mean
        sum_variance += total * (0.0 if 0.0 > variance else variance)
    h = _exp(x - ln_gamma)
    oh = _exp(ln_kw - x - ln_gamma)
    polish = -(weak_charge - sum_mean + strong_charge + h - oh) / (sum_variance + h + oh)
    x_after = x + polish
    h = h * _exp(polish)
    oh = oh * _exp(-polish)
    sum_mean = sum_variance = sum_ionic = 0.0
    for (s, total), alpha, mean in zip(present, alphas, means):
        moved = []
        norm = 0.0
        for j, a in enumerate(alpha):
            a = a * (1.0 + (mean - j) * polish)
            moved.append(a)
            norm += a
        mean = mean_sq = 0.0
        for j, a in enumerate(moved):
            a = a / norm
            mean += j * a
            mean_sq += (j * j) * a
        variance = mean_sq - mean * mean
        variance = 0.0 if 0.0 > variance else variance
        z = plan.z0[s]
        sum_mean += total * mean
        sum_variance += total * variance
        sum_ionic += total * (z * z - 2.0 * z * mean + (variance + mean * mean))
    residual = weak_charge - sum_mean + strong_charge + h - oh
    capacity = LN10 * (sum_variance + h + oh)
    ionic_check = strong_ionic + 0.5 * (sum_ionic + h + oh)
    edge_x = 1e-6
    at_edge = (x <= _X_LOW + edge_x or x >= _X_HIGH - edge_x or x_after <= _X_LOW or x_after >= _X_HIGH)
    charges_present = plan.drift_factor * sum(totals) + 2.0 * strong_ionic + h + oh
    closed = abs(residual) <= CLOSURE_RELATIVE * charges_present
    if iterate_ionic:
        closed = closed and abs(ionic_check - ionic) <= CLOSURE_RELATIVE * (1.0 + ionic)
    finite = math.isfinite(x_after) and math.isfinite(ionic) and math.isfinite(residual)
    beyond = (at_edge or ionic > MODEL_CEILING_IONIC_STRENGTH_MOL_L
              or ionic_check > MODEL_CEILING_IONIC_STRENGTH_MOL_L)
    if not (closed and finite) or beyond:
        return None
    # One array, each figure a view of its own element.
    figures = np.array([-x_after / LN10, ionic, ln_gamma / LN10, h, oh, capacity, residual])
    return Speciation(
        ph=figures[0:1], ionic_strength_mol_l=figures[1:2], log10_gamma_unit=figures[2:3],
        temperature_c=temperature, totals_mol_l=totals_ns, systems=plan.systems,
        species_charge=plan.species_charge, h_mol_l=figures[3:4], oh_mol_l=figures[4:5],
        capacity_mol_l_per_ph=figures[5:6], charge_residual_mol_l=figures[6:7],
        converged=np.array([True]), iterations=iterations, status=np.zeros(1, dtype=np.int8))


def _species_charge(systems: SystemArrays) -> np.ndarray:
    """Charge of each species of each system: array [S, J+1]."""
    return systems.charge_most_protonated.astype(float)[:, None] - np.arange(systems.max_steps + 1)[None, :]


def _status(chunk: _Chunk, model: _Model, x_before, x_after, ionic, ionic_check, residual, h, oh,
            converged) -> tuple[np.ndarray, np.ndarray]:
    """Status of each solution (STATUS_*), from what the solved point satisfies, and whether
    its root sits at the edge of the pH search range.

    Beyond the model: the root sits at the edge of the pH search range (the charge balance
    has no root inside it) or I is above :data:`MODEL_CEILING_IONIC_STRENGTH_MOL_L`.
    Failed: the iteration did not settle, a figure is not finite, the charge balance is
    not closed to :data:`CLOSURE_RELATIVE` of the charges present, or I differs from the
    ionic strength of the returned species by more than that.
    """
    edge_x = 1e-6
    at_edge = ((x_before <= _X_LOW + edge_x) | (x_before >= _X_HIGH - edge_x)
               | (x_after <= _X_LOW) | (x_after >= _X_HIGH))
    charges_present = (model.drift_factor * chunk.totals.sum(axis=0) + 2.0 * chunk.strong_ionic + h + oh)
    closed = np.abs(residual) <= CLOSURE_RELATIVE * charges_present
    if chunk.fixed is None:
        closed &= np.abs(ionic_check - ionic) <= CLOSURE_RELATIVE * (1.0 + ionic)
    finite = np.isfinite(x_after) & np.isfinite(ionic) & np.isfinite(residual)
    status = np.where(converged & finite & closed, STATUS_CONVERGED, STATUS_FAILED).astype(np.int8)
    beyond = at_edge | (ionic > MODEL_CEILING_IONIC_STRENGTH_MOL_L) | (ionic_check > MODEL_CEILING_IONIC_STRENGTH_MOL_L)
    status[beyond] = STATUS_BEYOND_MODEL
    return status, at_edge


@dataclass(frozen=True)
class FixedPhSpeciation:
    """Speciation of unit amounts of each system at a given pH, temperature and I.

    Every array has a leading axis over the G given (pH, T, I) points.

    Attributes
    ----------
    fractions : [G, S, J+1] α_j
    mean_protons_lost : [G, S] <j>
    variance_protons_lost : [G, S] Var(j)
    mean_charge_squared : [G, S] <z²>
    h_mol_l, oh_mol_l : [G]
    log10_gamma_unit : [G]
    """

    fractions: np.ndarray
    mean_protons_lost: np.ndarray
    variance_protons_lost: np.ndarray
    mean_charge_squared: np.ndarray
    h_mol_l: np.ndarray
    oh_mol_l: np.ndarray
    log10_gamma_unit: np.ndarray


def speciate_at_ph(systems: SystemArrays, ph, temperature_c, ionic_strength_mol_l,
                   activity: str = "davies") -> FixedPhSpeciation:
    """Fractions of each system at fixed pH, temperature and ionic strength (γ fixed).

    At fixed pH and γ every species is a fixed fraction of its system's total, so the
    charge balance, β, I and osmolarity of any mix are linear in the amounts: this is what
    the optimiser's linear model is built from.  Arguments broadcast to G points.
    """
    ph, temperature, ionic = np.broadcast_arrays(np.atleast_1d(np.asarray(ph, dtype=float)),
                                                 np.asarray(temperature_c, dtype=float),
                                                 np.asarray(ionic_strength_mol_l, dtype=float))
    ph, temperature, ionic = (np.ascontiguousarray(a, dtype=float) for a in (ph, temperature, ionic))
    gamma_function = activity_model(activity)
    z0 = systems.charge_most_protonated.astype(float)
    unique_t, t_index = np.unique(temperature, return_inverse=True)
    k_by_t, ln_kw_by_t, a_dh_by_t = temperature_terms(systems, unique_t)
    k_steps = k_by_t[:, :, t_index]
    ln_gamma = LN10 * gamma_function(np.maximum(ionic, 0.0), a_dh_by_t[t_index])
    x = -LN10 * ph
    if len(systems.system_ids):
        moments, terms = _moments(x, ln_gamma, k_steps, _charges_of(z0))
        m0, m1, m2 = moments
        mean = m1 / m0
        mean_sq = m2 / m0
        fractions = np.moveaxis(terms / m0[None], 0, -1).transpose(1, 0, 2)
    else:
        mean = mean_sq = np.zeros((0, ph.size))
        fractions = np.zeros((ph.size, 0, 1))
    h = np.exp(x - ln_gamma)
    oh = np.exp(ln_kw_by_t[t_index] - x - ln_gamma)
    return FixedPhSpeciation(
        fractions=fractions,
        mean_protons_lost=mean.T,
        variance_protons_lost=np.maximum(mean_sq - mean * mean, 0.0).T,
        mean_charge_squared=((z0 * z0)[:, None] - 2.0 * z0[:, None] * mean + mean_sq).T,
        h_mol_l=h,
        oh_mol_l=oh,
        log10_gamma_unit=ln_gamma / LN10,
    )
