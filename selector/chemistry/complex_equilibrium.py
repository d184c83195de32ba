"""Equilibrium with metal ions as components: complexes of metals with buffers and chelators.

A solution that holds a complexing cation (Ca²⁺, Mg²⁺, Zn²⁺ …, or Na⁺/K⁺ when ion pairs
are asked for) is solved here; every other solution goes to the acid–base solver of
:mod:`selector.chemistry.speciation`, whose results this module reproduces when no complex
forms (tested to 1e-9 pH).

Notes
-----
Components: H⁺, the fully deprotonated form L_s of every weak system s present, and the free
metal ions M_m.  Every species i — H⁺, OH⁻, each protonation state of each system, each
complex M_a H_p L_b (p < 0 for hydroxo complexes) — is a product of components,

.. math:: c_i = K_i(T)\\, \\prod_k a_k^{ν_{ik}} / γ_i,\\qquad \\ln γ_i = z_i^2 \\ln γ_1(I),

with log K_i at I = 0 from the catalog (protonation: the sum of the pKa of the steps it
carries; complexes: ``complexes.csv``), moved to temperature by the integrated van 't Hoff
equation ([GKL2002] eq. 9).  The unknowns u_k = ln a_k solve the mass balances
Σ_i ν_ik c_i = T_k, where the proton total T_H follows from the charge balance
(T_H = −Σ strong c z − Σ_s z_L,s C_s − Σ_m z_M T_M).  At fixed γ these are the gradient of
the convex function f(u) = Σ_i c_i(u) − T·u, whose Hessian Σ_i c_i ν_i ν_iᵀ is positive
definite: the root is unique and a damped Newton iteration on u finds it (the Jacobian
symmetrically scaled, steps capped at :data:`MAX_STEP_LN` in ln a, the full step kept where
it meets Armijo's rule on f, else the best of a grid of shorter ones, so every step lowers
f) — the standard formulation of chemical-equilibrium programs ([Morel1993] ch. 2;
[Smith1982] ch. 6).  The ionic strength is updated from the species at every step; where
the two do not settle together (γ rising with I above about 0.5 mol/L with multiply charged
species) a bisection on I with the equilibrium solved at each fixed I takes over.  β is ln10 times the Schur
complement of the proton row of the Jacobian (dT_H/du_H with the other totals held).

Every operation is on arrays over the batch (the Jacobians [n, K, K] solved together);
Python loops run over iterations only.

References
----------
.. [GKL2002] R. N. Goldberg, N. Kishore, R. M. Lennen, J. Phys. Chem. Ref. Data 31 (2002)
   231-370, eq. (9).
.. [Morel1993] F. M. M. Morel, J. G. Hering, Principles and Applications of Aquatic
   Chemistry, Wiley (1993), ch. 2 (the tableau: components, species, mass laws).
.. [Smith1982] W. R. Smith, R. W. Missen, Chemical Reaction Equilibrium Analysis, Wiley
   (1982), ch. 6 (Newton on the log concentrations of components).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from selector.chemistry.activity import (
    activity_model,
    debye_huckel_b,
    log_gamma_truesdell_jones,
    per_species,
    species_parameters,
    unit_charge_model,
)
from selector.chemistry.arrays import ComplexArrays, SystemArrays
from selector.chemistry.speciation import (
    CHUNK_ROWS,
    MODEL_CEILING_IONIC_STRENGTH_MOL_L,
    PH_SEARCH_MAX,
    PH_SEARCH_MIN,
    STATUS_BEYOND_MODEL,
    STATUS_CONVERGED,
    STATUS_FAILED,
    MetalSpeciation,
    Speciation,
    equilibrium_constants,
    single_threaded_blas,
    solve_speciation,
)
from selector.chemistry.thermo import pka_at_temperature
from selector.chemistry.water import LN10, debye_huckel_a, log10_kw
from selector.errors import InputError

#: Largest Newton step of one component, in ln a (2 decades).
MAX_STEP_LN = 2.0 * LN10
#: Relative closure of every mass balance (and of I) required of a converged result.
CLOSURE_RELATIVE = 1e-10
#: Added to the unit diagonal of the scaled Jacobian (keeps it invertible; 1e-12 of the diagonal).
_RIDGE = 1e-12
#: Total given to an absent component so that its mass balance stays well posed [mol/L].
ABSENT_TOTAL_MOL_L = 1e-30


@dataclass(frozen=True)
class _Tableau:
    """Species × components of one solve: stoichiometry ν [P, K], charge z [P], ln K [T, P].

    Component order: H⁺, the S systems' deprotonated forms, the M metals.  Species order:
    H⁺, OH⁻, the system species (``system_species`` gives (s, j) of each), the free metals,
    the complexes (from ``first_complex`` on).
    """

    nu: np.ndarray
    charge: np.ndarray
    ln_k: np.ndarray
    system_species: np.ndarray
    n_systems: int
    n_metals: int
    tokens: tuple[str, ...] = ()

    @property
    def first_metal(self) -> int:
        return 2 + self.system_species.shape[0]

    @property
    def first_complex(self) -> int:
        return self.first_metal + self.n_metals


def _tableau(systems: SystemArrays, complexes: ComplexArrays, unique_t: np.ndarray) -> _Tableau:
    n_systems, n_metals = len(systems.system_ids), len(complexes.metal_ids)
    n_components = 1 + n_systems + n_metals
    k_steps = equilibrium_constants(systems, unique_t)                  # [J, S, T]
    with np.errstate(divide="ignore"):
        ln_k_steps = np.log(k_steps)                                      # −ln10 pKa, −inf padded
    pairs = [(s, j) for s in range(n_systems) for j in range(int(systems.n_steps[s]) + 1)]
    n_species = 2 + len(pairs) + n_metals + len(complexes.complex_ids)
    nu = np.zeros((n_species, n_components))
    charge = np.zeros(n_species)
    ln_k = np.zeros((unique_t.size, n_species))
    nu[0, 0], charge[0] = 1.0, 1.0
    nu[1, 0], charge[1] = -1.0, -1.0
    ln_k[:, 1] = LN10 * log10_kw(unique_t)
    z0 = systems.charge_most_protonated
    for p, (s, j) in enumerate(pairs, start=2):
        n = int(systems.n_steps[s])
        nu[p, 1 + s] = 1.0
        nu[p, 0] = n - j
        charge[p] = z0[s] - j
        # L + (n − j) H ⇌ species j: ln K = Σ_{i>j} ln10 pKa_i.
        ln_k[:, p] = -ln_k_steps[j:n, s, :].sum(axis=0)
    first_metal = 2 + len(pairs)
    nu[first_metal:first_metal + n_metals, 1 + n_systems:] = np.eye(n_metals)
    charge[first_metal:first_metal + n_metals] = complexes.metal_charge
    first = first_metal + n_metals
    ligand_charge = (z0 - systems.n_steps).astype(float)
    # A complex built on ligand species j (n − j protons on each ligand) adds those protons
    # and the species' protonation constant, ligand by ligand.
    ligands = complexes.ligand_count.sum(axis=1)
    protons = complexes.protons + ligands * complexes.ligand_protons
    nu[first:, 0] = protons
    nu[first:, 1:1 + n_systems] = complexes.ligand_count
    nu[first:, 1 + n_systems:] = complexes.metal_count
    charge[first:] = protons + complexes.ligand_count @ ligand_charge + complexes.metal_count @ complexes.metal_charge
    # log β(T): formation constant with formation enthalpy ΔH_f is the reverse of a
    # dissociation with pK = log β and ΔH = −ΔH_f ([GKL2002] eq. 9, ΔCp = 0).
    log_beta_t = pka_at_temperature(complexes.log_beta_25c[None, :], -complexes.dh_kj_mol[None, :], 0.0,
                                    unique_t[:, None])
    reference = np.zeros((unique_t.size, len(complexes.complex_ids)))
    for c in np.flatnonzero(complexes.ligand_protons):
        s = int(np.argmax(complexes.ligand_count[c]))
        j = int(systems.n_steps[s] - complexes.ligand_protons[c])
        reference[:, c] = ligands[c] * -ln_k_steps[j:int(systems.n_steps[s]), s, :].sum(axis=0)
    ln_k[:, first:] = LN10 * log_beta_t + reference
    # Species names as the catalog's ion-size table writes them (``phosphate(-2)``, ``Na``, ``NaHPO4-``).
    tokens = (("H", "OH") + tuple(f"{systems.system_ids[s]}({int(charge[p])})" for p, (s, _) in enumerate(pairs, start=2))
              + tuple(complexes.metal_ids) + tuple(complexes.complex_ids))
    return _Tableau(nu, charge, ln_k, np.array(pairs, dtype=int).reshape(-1, 2), n_systems, n_metals, tokens)


class _Gamma:
    """ln γ of every tableau species [n, P] at a given I: z² × the unit-charge model's value,
    or each species' own value under a per-species model (the complexes carry ``ion_sizes``)."""

    def __init__(self, activity: str, tableau: _Tableau, complexes: ComplexArrays, unique_t, t_index):
        self.z_sq = tableau.charge**2
        self.unit_function = activity_model(unit_charge_model(activity))
        self.a_dh = debye_huckel_a(unique_t)[t_index]
        self.sized = per_species(activity)
        if self.sized and not complexes.ion_sizes:
            raise InputError(f"activity model {activity!r} needs the catalog's ion sizes "
                             "(complex_arrays(..., ion_sizes=True))")
        if self.sized:
            self.size, self.b = species_parameters(tableau.tokens, complexes.ion_sizes)
            self.charge = tableau.charge
            self.b_dh = debye_huckel_b(unique_t)[t_index]

    def ln_unit(self, ionic, rows=slice(None)):
        """ln γ of a unit charge without ion-size parameters [n]."""
        return LN10 * self.unit_function(np.maximum(ionic, 0.0), self.a_dh[rows])

    def ln(self, ionic, rows=slice(None)):
        """ln γ of every species [n, P]."""
        if not self.sized:
            return self.z_sq * self.ln_unit(ionic, rows)[:, None]
        return LN10 * log_gamma_truesdell_jones(self.charge, np.maximum(ionic, 0.0), self.a_dh[rows],
                                                self.b_dh[rows], self.size, self.b)


def solve_complexation(totals_mol_l, metal_totals_mol_l, strong_charge_mol_l, strong_ionic_mol_l, temperature_c,
                       systems: SystemArrays, complexes: ComplexArrays, activity: str = "davies",
                       max_iterations: int = 100, fixed_ionic_strength_mol_l=None) -> Speciation:
    """Equilibrium of N solutions with metal ions and their complexes as species.

    Parameters
    ----------
    totals_mol_l : array [N, S]
        Total of each weak system [mol/L].
    metal_totals_mol_l : array [N, M]
        Total of each metal of ``complexes.metal_ids`` [mol/L].
    strong_charge_mol_l, strong_ionic_mol_l : array [N]
        Σ c z and ½ Σ c z² of the other strong ions (not the metals) [mol/L].
    temperature_c : float or array [N]
        Temperature [°C].
    systems, complexes : the arrays of the systems and complexes present.
    activity : str
        Activity model (see :mod:`selector.chemistry.activity`).
    fixed_ionic_strength_mol_l : float or array [N], optional
        Hold γ at this ionic strength.

    Returns
    -------
    Speciation
        With ``metals`` set (free metals and complexes) and ``fractions`` the free system
        species over each system's total (they sum to less than 1 where complexes hold part).
    """
    totals = np.atleast_2d(np.asarray(totals_mol_l, dtype=float))
    metals = np.atleast_2d(np.asarray(metal_totals_mol_l, dtype=float))
    n = totals.shape[0]
    charge, ionic, temperature = (np.broadcast_to(np.asarray(a, dtype=float), (n,)).copy()
                                  for a in (strong_charge_mol_l, strong_ionic_mol_l, temperature_c))
    fixed = (None if fixed_ionic_strength_mol_l is None
             else np.broadcast_to(np.asarray(fixed_ionic_strength_mol_l, dtype=float), (n,)).copy())
    # Start: the acid–base equilibrium with the metals as spectators.
    start = solve_speciation(totals, charge + metals @ complexes.metal_charge,
                             ionic + 0.5 * metals @ complexes.metal_charge**2, temperature, systems,
                             activity=unit_charge_model(activity), fixed_ionic_strength_mol_l=fixed)
    # The Jacobians are small matrices: BLAS threads only get in each other's way on them.
    with single_threaded_blas():
        parts = [_solve_chunk(totals[a:b], metals[a:b], charge[a:b], ionic[a:b], temperature[a:b],
                              None if fixed is None else fixed[a:b], start.ph[a:b], start.ionic_strength_mol_l[a:b],
                              systems, complexes, activity, max_iterations)
                 for a, b in ((i, min(i + CHUNK_ROWS, n)) for i in range(0, n, CHUNK_ROWS))]
    return parts[0] if len(parts) == 1 else _concatenate(parts, totals, systems)


def _concatenate(parts: list[Speciation], totals: np.ndarray, systems: SystemArrays) -> Speciation:
    rows = {name: np.concatenate([getattr(p, name) for p in parts]) for name in (
        "ph", "ionic_strength_mol_l", "log10_gamma_unit", "temperature_c", "h_mol_l", "oh_mol_l",
        "capacity_mol_l_per_ph", "charge_residual_mol_l", "converged", "status")}
    first = parts[0].metals
    assert first is not None
    metals = MetalSpeciation(
        metal_ids=first.metal_ids, metal_charge=first.metal_charge,
        totals_mol_l=np.concatenate([p.metals.totals_mol_l for p in parts if p.metals is not None]),
        free_mol_l=np.concatenate([p.metals.free_mol_l for p in parts if p.metals is not None]),
        complex_ids=first.complex_ids, complex_charge=first.complex_charge,
        complex_mol_l=np.concatenate([p.metals.complex_mol_l for p in parts if p.metals is not None]),
        complex_metal_count=first.complex_metal_count, complex_ligand_count=first.complex_ligand_count,
        complex_protons=first.complex_protons, complexes=first.complexes)
    result = Speciation(totals_mol_l=totals, systems=systems, species_charge=parts[0].species_charge,
                        iterations=max(p.iterations for p in parts), metals=metals, **rows)
    object.__setattr__(result, "fractions", np.concatenate([p.fractions for p in parts]))
    return result


def _initial_u(tableau: _Tableau, ln_k: np.ndarray, ph: np.ndarray, gamma_term: np.ndarray, totals_k: np.ndarray):
    """ln a of every component: H⁺ from the spectator solve; each system's L from its mass
    balance at that pH without metals; each metal from its own balance with the ligands free."""
    n = ph.shape[0]
    u = np.zeros((n, tableau.nu.shape[1]))
    u[:, 0] = -LN10 * ph
    ln_c = ln_k + np.outer(u[:, 0], tableau.nu[:, 0]) - gamma_term       # [n, P] with ln a_L = ln a_M = 0
    for k in range(1, 1 + tableau.n_systems):
        members = (tableau.nu[:, k] != 0) & (tableau.nu[:, 1 + tableau.n_systems:].sum(axis=1) == 0)
        u[:, k] = np.log(totals_k[:, k]) - _logsumexp(ln_c[:, members])
    ln_c = ln_k + u[:, :1 + tableau.n_systems] @ tableau.nu[:, :1 + tableau.n_systems].T - gamma_term
    for m in range(tableau.n_metals):
        k = 1 + tableau.n_systems + m
        members = tableau.nu[:, k] != 0
        u[:, k] = np.log(totals_k[:, k]) - _logsumexp(ln_c[:, members])
    return u


def _logsumexp(values: np.ndarray) -> np.ndarray:
    top = np.max(values, axis=1)
    return top + np.log(np.exp(values - top[:, None]).sum(axis=1))


def _solve_chunk(totals, metals, strong_charge, strong_ionic, temperature, fixed, ph_start, ionic_start,
                 systems: SystemArrays, complexes: ComplexArrays, activity: str, max_iterations: int) -> Speciation:
    unique_t, t_index = np.unique(temperature, return_inverse=True)
    tableau = _tableau(systems, complexes, unique_t)
    nu, z_sq = tableau.nu, tableau.charge**2
    ligand_charge = (systems.charge_most_protonated - systems.n_steps).astype(float)
    totals_k = np.column_stack([-(strong_charge + totals @ ligand_charge + metals @ complexes.metal_charge),
                                np.maximum(totals, ABSENT_TOTAL_MOL_L), np.maximum(metals, ABSENT_TOTAL_MOL_L)])
    ln_k = tableau.ln_k[t_index]
    gamma = _Gamma(activity, tableau, complexes, unique_t, t_index)
    ok_start = np.isfinite(ph_start)
    ph0 = np.where(ok_start, ph_start, 7.0)
    ionic = fixed.copy() if fixed is not None else np.where(np.isfinite(ionic_start), ionic_start, strong_ionic)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore", under="ignore"):
        u = _initial_u(tableau, ln_k, ph0, gamma.ln(ionic), totals_k)
        u_start, ionic_start_used = u.copy(), ionic.copy()
        u, ionic, done, iterations = _newton(u, ionic, fixed, ln_k, nu, z_sq, totals_k, strong_ionic, gamma,
                                             max_iterations)
        stiff = np.flatnonzero(~done)
        if stiff.size and fixed is None:
            # Restart from the first guess: the coupled iteration may have run far off.
            u[stiff], ionic[stiff], done[stiff] = _settle_ionic_strength(
                u_start[stiff], ionic_start_used[stiff], ln_k[stiff], nu, z_sq, totals_k[stiff], strong_ionic[stiff],
                gamma, stiff)
        return _result(u, ionic, done, iterations, tableau, ln_k, totals, totals_k, metals, strong_charge,
                       strong_ionic, temperature, gamma, systems, complexes, fixed is not None)


#: Bisection steps on I for the solutions where u and I did not settle together.
_SETTLE_STEPS = 60
#: Newton iterations of each fixed-I solve inside the bisection.
_INNER_ITERATIONS = 100


def _settle_ionic_strength(u, ionic, ln_k, nu, z_sq, totals_k, strong_ionic, gamma: _Gamma, rows):
    """Fallback where u and I did not settle together (γ rising with I at high ionic strength,
    multiply charged species): bisection on I.

    At a fixed I the equilibrium is unique (the convex problem of the module notes) and
    Newton finds it; its ionic strength I*(I) is bounded, so G(I) = I*(I) − I is ≥ 0 at the
    spectator ions' ½Σcz² and ≤ 0 at a large enough I; bisection on that bracket finds a
    self-consistent (u, I).  Returns (u, I, converged).
    """

    def gap(u, at):
        u, _, done, _ = _newton(u.copy(), at.copy(), at, ln_k, nu, z_sq, totals_k, strong_ionic, gamma,
                                _INNER_ITERATIONS, rows)
        conc = np.exp(ln_k + u @ nu.T - gamma.ln(at, rows))
        return u, strong_ionic + 0.5 * conc @ z_sq - at, done

    low = strong_ionic.copy()
    high = np.maximum(2.0 * np.nan_to_num(ionic), strong_ionic) + 1.0
    u, g_high, _ = gap(u, high)
    for _ in range(10):
        short = g_high > 0.0
        if not short.any():
            break
        high = np.where(short, 4.0 * high, high)
        u, g_high, _ = gap(u, high)
    for _ in range(_SETTLE_STEPS):
        middle = 0.5 * (low + high)
        u, g_middle, _ = gap(u, middle)
        above = g_middle > 0.0
        low = np.where(above, middle, low)
        high = np.where(above, high, middle)
        if np.all(high - low <= 1e-13 * (1.0 + high)):
            break
    middle = 0.5 * (low + high)
    u, g_middle, done = gap(u, middle)
    return u, middle, done & np.isfinite(g_middle)


def _newton(u, ionic, fixed, ln_k, nu, z_sq, totals_k, strong_ionic, gamma: _Gamma, max_iterations, rows=None):
    """Damped, scaled Newton on u = ln a with I updated from the species at every step.

    ``rows``: the chunk rows these solutions are (for their temperature), all if None."""
    done = np.zeros(u.shape[0], dtype=bool)
    active = np.arange(u.shape[0])
    rows = active if rows is None else np.asarray(rows)
    abs_nu = np.abs(nu)
    iterations = 0
    for iterations in range(1, max_iterations + 1):
        ua, ia = u[active], ionic[active]
        ln_gamma = gamma.ln(ia, rows[active])
        conc = np.exp(ln_k[active] + ua @ nu.T - ln_gamma)
        residual = conc @ nu - totals_k[active]
        scale = conc @ abs_nu + np.abs(totals_k[active])
        ionic_new = ia if fixed is not None else strong_ionic[active] + 0.5 * conc @ z_sq
        jacobian = (nu.T[None, :, :] * conc[:, None, :]) @ nu
        diagonal = np.sqrt(np.maximum(np.einsum("nkk->nk", jacobian), 1e-300))
        scaled = jacobian / (diagonal[:, :, None] * diagonal[:, None, :])
        # A component whose species all underflow has a zero row: a small ridge keeps the
        # system solvable (its step is then capped and line-searched like any other).
        scaled += _RIDGE * np.eye(scaled.shape[1])
        step = np.linalg.solve(scaled, -(residual / diagonal)[:, :, None])[:, :, 0] / diagonal
        largest = np.max(np.abs(step), axis=1)
        step *= np.minimum(1.0, MAX_STEP_LN / np.maximum(largest, 1e-300))[:, None]
        step *= _line_search(ua, step, ln_k[active] - ln_gamma, nu, totals_k[active],
                             residual)[:, None]
        closed = (np.all(np.abs(residual) <= CLOSURE_RELATIVE * scale, axis=1)
                  & (np.abs(ionic_new - ia) <= CLOSURE_RELATIVE * ia + 1e-18))
        u[active] = np.where(closed[:, None], ua, ua + step)
        ionic[active] = np.where(closed, ia, ionic_new)
        done[active[closed]] = True
        active = active[~closed]
        if active.size == 0:
            break
    return u, ionic, done, iterations


#: Step lengths tried along each Newton direction (the full step first).
_STEP_LENGTHS = 0.5 ** np.arange(12)


def _objective(u, ln_k_gamma, nu, totals):
    """f(u) = Σ_i c_i(u) − T·u at fixed γ, for u [n, K] (or [n, L, K]: L trial points)."""
    if u.ndim == 2:
        return np.exp(ln_k_gamma + u @ nu.T).sum(axis=1) - np.einsum("nk,nk->n", u, totals)
    return (np.exp(ln_k_gamma[:, None, :] + u @ nu.T).sum(axis=2) - np.einsum("nlk,nk->nl", u, totals))


def _line_search(u, step, ln_k_gamma, nu, totals, residual):
    """Step length t along ``step``: the full step where it decreases f(u) = Σ c_i − T·u
    (γ fixed) by at least 1e-4 of the first-order decrease (Armijo's rule), else the t among
    :data:`_STEP_LENGTHS` that minimises f.

    f is convex with gradient the mass-balance residual, so each accepted step decreases it:
    the iteration cannot cycle (Nocedal & Wright, Numerical Optimization, 2nd ed., 2006,
    §3.1 and §3.5).
    """
    here = _objective(u, ln_k_gamma, nu, totals)
    there = _objective(u + step, ln_k_gamma, nu, totals)
    slope = np.einsum("nk,nk->n", residual, step)
    rounding = 1e-12 * (np.abs(here) + np.abs(totals).sum(axis=1) * (np.abs(u).sum(axis=1) + 1.0))
    lengths = np.ones(u.shape[0])
    search = np.flatnonzero(~(there <= here + 1e-4 * np.minimum(slope, 0.0) + rounding))
    if search.size:
        trial = u[search, None, :] + _STEP_LENGTHS[None, :, None] * step[search, None, :]       # [s, L, K]
        objective = _objective(trial, ln_k_gamma[search], nu, totals[search])
        lengths[search] = _STEP_LENGTHS[np.argmin(objective, axis=1)]
    return lengths


def _result(u, ionic, done, iterations, tableau: _Tableau, ln_k, totals, totals_k, metals, strong_charge,
            strong_ionic, temperature, gamma: _Gamma, systems: SystemArrays,
            complexes: ComplexArrays, ionic_held: bool = False) -> Speciation:
    nu, charge = tableau.nu, tableau.charge
    ln_gamma = gamma.ln_unit(ionic)
    conc = np.exp(ln_k + u @ nu.T - gamma.ln(ionic))
    residual_charge = conc @ charge + strong_charge
    jacobian = (nu.T[None, :, :] * conc[:, None, :]) @ nu
    rest = jacobian[:, 1:, 1:]
    cross = jacobian[:, 1:, :1]
    schur = jacobian[:, 0, 0] - np.einsum("nk,nk->n", cross[:, :, 0], np.linalg.solve(rest, cross)[:, :, 0])
    capacity = LN10 * schur
    ph = -u[:, 0] / LN10
    ionic_check = strong_ionic + 0.5 * conc @ charge**2
    charges_present = np.abs(conc) @ np.abs(charge) + 2.0 * strong_ionic
    closed = np.abs(residual_charge) <= 1e-9 * charges_present
    if not ionic_held:
        closed &= np.abs(ionic_check - ionic) <= 1e-9 * ionic + 1e-16
    finite = np.isfinite(ph) & np.isfinite(ionic)
    status = np.where(done & closed & finite, STATUS_CONVERGED, STATUS_FAILED).astype(np.int8)
    beyond = (ph <= PH_SEARCH_MIN) | (ph >= PH_SEARCH_MAX) | (ionic > MODEL_CEILING_IONIC_STRENGTH_MOL_L)
    status[beyond & finite] = STATUS_BEYOND_MODEL
    n, width = totals.shape[0], systems.max_steps + 1
    fractions = np.zeros((n, len(systems.system_ids), width))
    first, first_metal = tableau.first_complex, tableau.first_metal
    if tableau.system_species.size:
        s_index, j_index = tableau.system_species[:, 0], tableau.system_species[:, 1]
        with np.errstate(invalid="ignore", divide="ignore"):
            fractions[:, s_index, j_index] = conc[:, 2:first_metal] / totals[:, s_index]
        fractions = np.nan_to_num(fractions, nan=0.0)
    free_metal = np.where(metals > 0, conc[:, first_metal:first], 0.0)
    complex_conc = np.where((metals @ (complexes.metal_count.T > 0)) > 0, conc[:, first:], 0.0)
    bad = status != STATUS_CONVERGED
    ph = np.where(bad, np.nan, ph)
    for array in (capacity, residual_charge):
        array[bad] = np.nan
    h, oh = conc[:, 0].copy(), conc[:, 1].copy()
    h[bad] = np.nan
    oh[bad] = np.nan
    species_charge = systems.charge_most_protonated[:, None] - np.arange(width)[None, :]
    result = Speciation(
        ph=ph, ionic_strength_mol_l=np.where(status == STATUS_FAILED, np.nan, ionic),
        log10_gamma_unit=np.where(bad, np.nan, ln_gamma / LN10), temperature_c=temperature, totals_mol_l=totals,
        systems=systems, species_charge=species_charge, h_mol_l=h, oh_mol_l=oh, capacity_mol_l_per_ph=capacity,
        charge_residual_mol_l=residual_charge, converged=~bad, iterations=iterations, status=status,
        metals=MetalSpeciation(
            metal_ids=complexes.metal_ids, metal_charge=complexes.metal_charge, totals_mol_l=metals,
            free_mol_l=np.where(bad[:, None], np.nan, free_metal), complex_ids=complexes.complex_ids,
            complex_charge=charge[first:], complex_mol_l=np.where(bad[:, None], np.nan, complex_conc),
            complex_metal_count=complexes.metal_count, complex_ligand_count=complexes.ligand_count,
            complex_protons=complexes.protons, complexes=complexes))
    object.__setattr__(result, "fractions", np.where(bad[:, None, None], np.nan, fractions))
    return result


def replicate_complexes(complexes: ComplexArrays, copies: int) -> ComplexArrays:
    """The complexes over ``copies`` side-by-side copies of their S systems (S·copies columns):
    each complex with a ligand once per copy, bound to that copy's system; hydroxo complexes
    once.  For solving perturbed copies of the systems in one batch (block-diagonal totals)."""
    with_ligand = complexes.ligand_count.any(axis=1)
    hydroxo = np.flatnonzero(~with_ligand)
    ligand = np.flatnonzero(with_ligand)
    order = np.concatenate([hydroxo, np.tile(ligand, copies)])
    n_systems = complexes.ligand_count.shape[1]
    ligand_count = np.zeros((order.size, n_systems * copies))
    blocks = np.kron(np.eye(copies), complexes.ligand_count[ligand])        # [copies·C_L, copies·S]
    ligand_count[hydroxo.size:] = blocks
    return ComplexArrays(
        complex_ids=tuple(complexes.complex_ids[i] for i in order), metal_ids=complexes.metal_ids,
        metal_charge=complexes.metal_charge, metal_count=complexes.metal_count[order], ligand_count=ligand_count,
        protons=complexes.protons[order], log_beta_25c=complexes.log_beta_25c[order],
        dh_kj_mol=complexes.dh_kj_mol[order], ligand_protons=complexes.ligand_protons[order],
        recalled=complexes.recalled[order], ion_sizes=complexes.ion_sizes)


def solve_same_components(speciation: Speciation, totals_mol_l, strong_charge_mol_l, strong_ionic_mol_l,
                          temperature_c, systems: SystemArrays, activity: str = "davies", copies: int = 1,
                          complexes: ComplexArrays | None = None) -> Speciation:
    """Solve other compositions (or perturbed constants) with the components of ``speciation``.

    Without metals this is :func:`selector.chemistry.speciation.solve_speciation`.  With
    metals, ``strong_*`` still count the metals as strong ions (as an :class:`Equilibrium`
    lists them); the metal totals of ``speciation`` are taken, repeated for ``copies``
    stacked blocks of its N solutions, and the complexes replicated over ``copies`` copies
    of the systems (see :func:`replicate_complexes`), or ``complexes`` where given (already
    over the copies: perturbed log β of one copy).
    """
    metals = speciation.metals
    if metals is None:
        return solve_speciation(totals_mol_l, strong_charge_mol_l, strong_ionic_mol_l, temperature_c, systems,
                                activity=activity)
    metal_totals = np.tile(metals.totals_mol_l, (copies, 1))
    if complexes is None:
        complexes = metals.complexes if copies == 1 else replicate_complexes(metals.complexes, copies)
    return solve_complexation(totals_mol_l, metal_totals, strong_charge_mol_l - metal_totals @ metals.metal_charge,
                              strong_ionic_mol_l - 0.5 * metal_totals @ metals.metal_charge**2, temperature_c,
                              systems, complexes, activity=activity)


#: Name of the ligand of a complex without a system (M(OH)_n).
HYDROXIDE = "hydroxide"


@dataclass(frozen=True)
class MetalFigures:
    """The metals of one solution, as plain values (``poise ph``).

    Attributes
    ----------
    total_mol_l, free_mol_l : metal symbol → total and free concentration [mol/L]
    p_free : metal symbol → −log10 of the free concentration [mol/L] (pCa, pMg …)
    bound_fraction : metal symbol → ligand (a system id or ``hydroxide``) → fraction of the
        metal's total held in complexes with that ligand (a complex with a system and
        hydroxide counts for the system)
    species_mol_l : the free metal ions (``Ca++``) and every complex → mol/L
    """

    total_mol_l: dict[str, float]
    free_mol_l: dict[str, float]
    p_free: dict[str, float]
    bound_fraction: dict[str, dict[str, float]]
    species_mol_l: dict[str, float]


def metal_figures(speciation: Speciation, index: int = 0) -> MetalFigures | None:
    """The metals of solution ``index`` of a solved batch (None without metals or figures)."""
    metals = speciation.metals
    if metals is None or not np.isfinite(speciation.ph[index]):
        return None
    system_ids = speciation.systems.system_ids
    ligand_of = [system_ids[int(np.argmax(row))] if row.any() else HYDROXIDE for row in metals.complex_ligand_count]
    totals, free, complexes = metals.totals_mol_l[index], metals.free_mol_l[index], metals.complex_mol_l[index]
    present = [m for m in range(len(metals.metal_ids)) if totals[m] > 0]
    bound: dict[str, dict[str, float]] = {}
    for m in present:
        held = complexes * metals.complex_metal_count[:, m] / totals[m]
        shares: dict[str, float] = {}
        for ligand, share in zip(ligand_of, held):
            if share > 0:
                shares[ligand] = shares.get(ligand, 0.0) + float(share)
        bound[metals.metal_ids[m]] = shares
    labels = {m: f"{metals.metal_ids[m]}{'+' * int(metals.metal_charge[m])}" for m in present}
    species = {labels[m]: float(free[m]) for m in present}
    species.update({cid: float(c) for cid, c, counts in zip(metals.complex_ids, complexes, metals.complex_metal_count)
                    if counts[present].any()})
    return MetalFigures(
        total_mol_l={metals.metal_ids[m]: float(totals[m]) for m in present},
        free_mol_l={metals.metal_ids[m]: float(free[m]) for m in present},
        p_free={metals.metal_ids[m]: float(-np.log10(free[m])) for m in present},
        bound_fraction=bound, species_mol_l=species)


#: Share of a metal's total a complex must hold for its missing ΔH to be worth a warning.
WARN_SHARE = 0.01


def _major_complexes(speciation: Speciation, index: int) -> np.ndarray:
    """Mask [C]: the complexes holding at least :data:`WARN_SHARE` of a metal in solution ``index``."""
    metals = speciation.metals
    assert metals is not None
    totals = metals.totals_mol_l[index]
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.nanmax(metals.complex_mol_l[index][:, None] * metals.complex_metal_count
                          / np.where(totals > 0, totals, np.inf)[None, :], axis=1, initial=0.0)
    return share >= WARN_SHARE


def uncorrected_complexes_warning(speciation: Speciation, index: int) -> list[str]:
    """Warnings for solution ``index`` about the complexes that hold at least
    :data:`WARN_SHARE` of a metal: those whose constant is recalled rather than read in a
    source, and (away from 25 °C) those without a published ΔH (their log β is used at its
    25 °C value)."""
    metals = speciation.metals
    if metals is None or not np.isfinite(speciation.ph[index]):
        return []
    major = _major_complexes(speciation, index)
    out = []
    recalled = [cid for cid, big, flag in zip(metals.complex_ids, major, metals.complexes.recalled) if big and flag]
    if recalled:
        out.append(f"the stability constants of {', '.join(recalled)} are recalled (from memory), not read in a "
                   "source: the free metal is less certain")
    temperature = float(speciation.temperature_c[index])
    names = [cid for cid, big, dh in zip(metals.complex_ids, major, metals.complexes.dh_kj_mol) if big and dh == 0.0]
    if names and abs(temperature - 25.0) >= 0.5:
        out.append(f"no reaction enthalpy is published for {', '.join(names)}: their stability constants are "
                   f"used at their 25 °C values at {temperature:g} °C, so the free metal is less certain")
    return out
