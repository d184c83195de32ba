"""Solutions made of catalog reagents: mixing and their equilibrium.

:func:`solve_equilibrium` is the engine's public entry for "what is in this beaker": it
takes reagent amounts (one solution or a batch), maps them onto systems and strong ions,
calls :func:`selector.chemistry.speciation.solve_speciation` and returns a :class:`Equilibrium`
with every species, the derived figures and vectorised warning masks.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import cached_property
from typing import Mapping, Sequence

import numpy as np

from catalog import Catalog, load_catalog
from selector.chemistry.activity import DAVIES_MAX_IONIC_STRENGTH_MOL_L, log_gamma_species, per_species
from selector.chemistry.arrays import EngineTables, SystemArrays, complex_arrays, complexing_ions, engine_tables
from selector.chemistry.complex_equilibrium import solve_complexation, uncorrected_complexes_warning
from selector.chemistry.speciation import (
    CHUNK_ROWS,
    MODEL_CEILING_IONIC_STRENGTH_MOL_L,
    PH_SEARCH_MAX,
    PH_SEARCH_MIN,
    STATUS_BEYOND_MODEL,
    STATUS_CONVERGED,
    STATUS_NAMES,
    Speciation,
    distinct_temperatures,
    single_threaded_blas,
    solve_speciation,
)
from selector.chemistry.water import water_density_g_cm3
from selector.errors import InputError, SolverError
from selector.names import resolve_reagent
from selector.units import check_temperature


def molal_to_molar(molality_mol_kg, temperature_c=25.0):
    """mol/kg water → mol/L for dilute solutions: c ≈ m · ρ_w(T) (solute volume neglected).

    Good to about 0.3 % for the 0.01-0.1 mol/kg pH standards; ρ_w from Kell (1975).
    """
    return np.asarray(molality_mol_kg, dtype=float) * water_density_g_cm3(temperature_c)


def mix_solutions(parts: Sequence[tuple[Mapping[str, float], float]]) -> dict[str, float]:
    """Amounts (mol/L) after mixing solutions: ``parts`` = [(amounts mol/L, volume L), ...].

    Volumes are taken as additive: c_r = Σ_k c_rk V_k / Σ_k V_k.  Equal volumes of 0.2 M
    acetic acid and 0.1 M NaOH give 0.1 M acetate in all, half of it neutralised:
    0.05 M acid + 0.05 M acetate, not 0.1 + 0.1.
    """
    total_volume = 0.0
    moles: dict[str, float] = {}
    for amounts, volume_l in parts:
        if not (isinstance(volume_l, (int, float)) and math.isfinite(volume_l) and volume_l >= 0):
            raise InputError(f"volume {volume_l!r} is not a non-negative number of litres")
        total_volume += volume_l
        for reagent, conc in amounts.items():
            moles[reagent] = moles.get(reagent, 0.0) + conc * volume_l
    if total_volume <= 0:
        raise InputError("the mixed volume is zero; give at least one positive volume")
    return {reagent: n / total_volume for reagent, n in moles.items()}


@dataclass(frozen=True)
class Equilibrium:
    """Equilibrium of a batch of N solutions of catalog reagents.

    Attributes
    ----------
    reagent_ids : tuple, length R'   reagents of the batch
    amounts_mol_l : [N, R']
    speciation : Speciation over the systems present
    system_ids : tuple, length S'
    system_n_steps : steps of each system (species j = 0..n)
    strong_ion_ids, strong_ion_charge, strong_ion_mol_l : [N, K'] strong ions present
    species_ids, species_mol_l, species_gamma, species_charge : every species, built on
        first use: ids like ``phosphate(-2)``, then ``H+``, ``OH-`` and ions like ``Na+``
    osmolarity_osmol_l : [N] ideal osmolarity (sum of all solute particles)
    ionic_strength_high : [N] bool  I above the activity model's range
    temperature_outside_data : [N, S'] bool  T outside a step's data range (system present)
    above_solubility : [N, R'] bool  amount above the 25 °C solubility
    status : [N] int8  converged (0), beyond the model (1) or failed (2), see
        :data:`selector.chemistry.speciation.STATUS_NAMES`; the figures of a solution that
        is not converged are NaN.  :meth:`require_converged` raises for them.
    """

    reagent_ids: tuple[str, ...]
    amounts_mol_l: np.ndarray
    speciation: Speciation
    system_ids: tuple[str, ...]
    system_n_steps: tuple[int, ...]
    strong_ion_ids: tuple[str, ...]
    strong_ion_charge: tuple[int, ...]
    strong_ion_mol_l: np.ndarray
    osmolarity_osmol_l: np.ndarray
    ionic_strength_high: np.ndarray
    temperature_outside_data: np.ndarray
    above_solubility: np.ndarray

    @cached_property
    def _species(self):
        sp = self.speciation
        ids, columns, charges = [], [], []
        for s, system_id in enumerate(self.system_ids):
            for j in range(self.system_n_steps[s] + 1):
                charge = int(sp.species_charge[s, j])
                ids.append(f"{system_id}({charge:+d})" if charge else f"{system_id}(0)")
                columns.append((s, j))
                charges.append(charge)
        n = self.amounts_mol_l.shape[0]
        weak = np.empty((n, len(columns)))
        for k, (s, j) in enumerate(columns):
            weak[:, k] = sp.totals_mol_l[:, s] * sp.fractions[:, s, j]
        labels = [f"{i}{'+' * z if z > 0 else '-' * -z}" for i, z in zip(self.strong_ion_ids, self.strong_ion_charge)]
        ids += ["H+", "OH-"] + labels
        charges += [1, -1] + list(self.strong_ion_charge)
        ions = self.strong_ion_mol_l
        parts = [weak, sp.h_mol_l, sp.oh_mol_l, ions]
        if sp.metals is not None:
            # A metal that is a component appears free; its complexes are species of their own.
            ions = ions.copy()
            for m, metal in enumerate(sp.metals.metal_ids):
                ions[:, self.strong_ion_ids.index(metal)] = sp.metals.free_mol_l[:, m]
            parts = [weak, sp.h_mol_l, sp.oh_mol_l, ions, sp.metals.complex_mol_l]
            ids += list(sp.metals.complex_ids)
            charges += [int(z) for z in sp.metals.complex_charge]
        conc = np.column_stack(parts)
        charge_array = np.asarray(charges, dtype=float)
        gamma = 10.0 ** (charge_array[None, :] ** 2 * sp.log10_gamma_unit[:, None])
        if sp.metals is not None and sp.metals.complexes.ion_sizes:
            # Per-species model: each species' own γ (the tokens of ion_size.csv).
            tokens = [f"{self.system_ids[s]}({int(sp.species_charge[s, j])})" for s, j in columns]
            tokens += ["H", "OH", *self.strong_ion_ids, *sp.metals.complex_ids]
            gamma = 10.0 ** log_gamma_species(tokens, charge_array, sp.ionic_strength_mol_l, sp.temperature_c,
                                              sp.metals.complexes.ion_sizes)
        return tuple(ids), conc, gamma, charge_array

    @property
    def species_ids(self) -> tuple[str, ...]:
        return self._species[0]

    @property
    def species_mol_l(self) -> np.ndarray:
        return self._species[1]

    @property
    def species_gamma(self) -> np.ndarray:
        return self._species[2]

    @property
    def species_charge(self) -> np.ndarray:
        return self._species[3]

    @property
    def ph(self) -> np.ndarray:
        return self.speciation.ph

    @property
    def status(self) -> np.ndarray:
        return self.speciation.status

    def status_name(self, index: int) -> str:
        """``"converged"``, ``"beyond_model"`` or ``"failed"`` for solution ``index``."""
        return STATUS_NAMES[int(self.status[index])]

    def composition_text(self, index: int) -> str:
        """Solution ``index`` in words: ``hcl 16.5 mol/L at 0 °C``."""
        parts = [f"{r} {c:.4g} mol/L" for r, c in zip(self.reagent_ids, self.amounts_mol_l[index]) if c > 0]
        return f"{', '.join(parts) or 'water'} at {self.speciation.temperature_c[index]:g} °C"

    def status_message(self, index: int) -> str:
        """Why solution ``index`` has no trustworthy answer, in one sentence ('' if converged)."""
        status = int(self.status[index])
        if status == STATUS_CONVERGED:
            return ""
        what = self.composition_text(index)
        if status == STATUS_BEYOND_MODEL:
            ionic = float(self.ionic_strength_mol_l[index])
            if np.isfinite(ionic):
                reason = (f"its ionic strength ({ionic:.3g} mol/L) is above {MODEL_CEILING_IONIC_STRENGTH_MOL_L:g} "
                          f"mol/L, where the activity model (stated range up to "
                          f"{DAVIES_MAX_IONIC_STRENGTH_MOL_L:g} mol/L) no longer describes a solution")
            else:
                reason = f"its pH would lie outside {PH_SEARCH_MIN:g} to {PH_SEARCH_MAX:g}, the range the model covers"
            return f"{what} is beyond the model: {reason}; no pH is reported for it"
        return f"the equilibrium of {what} was not found (the solver did not settle); no pH is reported for it"

    def require_converged(self) -> "Equilibrium":
        """This result if every solution converged; else InputError (a composition beyond the
        model) or SolverError (no answer found) naming the first such solution."""
        status = self.status
        if (status[0] == STATUS_CONVERGED) if status.shape == (1,) else not status.any():   # STATUS_CONVERGED is 0
            return self
        bad = np.flatnonzero(self.status != STATUS_CONVERGED)
        first = int(bad[0])
        more = f" ({bad.size} of {self.status.size} solutions)" if self.status.size > 1 else ""
        message = self.status_message(first) + more
        if int(self.status[first]) == STATUS_BEYOND_MODEL:
            raise InputError(message)
        raise SolverError(message)

    @property
    def ionic_strength_mol_l(self) -> np.ndarray:
        return self.speciation.ionic_strength_mol_l

    @property
    def capacity_mol_l_per_ph(self) -> np.ndarray:
        return self.speciation.capacity_mol_l_per_ph

    def warnings_for(self, index: int, catalog: Catalog | None = None) -> list[str]:
        """The warnings of solution ``index`` as sentences."""
        catalog = catalog if catalog is not None else load_catalog()
        out = []
        sp = self.speciation
        if self.ionic_strength_high[index]:
            out.append(f"ionic strength {sp.ionic_strength_mol_l[index]:.3g} mol/L is above "
                       f"{DAVIES_MAX_IONIC_STRENGTH_MOL_L:g} mol/L, the range of the activity model; "
                       "the pH is less certain")
        out += uncorrected_complexes_warning(sp, index)
        for s, system_id in enumerate(self.system_ids):
            if self.temperature_outside_data[index, s]:
                t = sp.temperature_c[index]
                outside = [st for st in catalog.systems[system_id].steps if not st.t_min_c <= t <= st.t_max_c]
                ranges = ", ".join(f"step {st.step}: {st.t_min_c:g}-{st.t_max_c:g} °C" for st in outside)
                out.append(f"{t:g} °C is outside the temperature range of the data for {system_id} ({ranges}); "
                           "those pKa values are extrapolated")
        for r, reagent_id in enumerate(self.reagent_ids):
            if self.above_solubility[index, r]:
                reagent = catalog.reagents[reagent_id]
                grams = self.amounts_mol_l[index, r] * reagent.molar_mass_g_mol
                limit = reagent.solubility_g_l_25c
                assert limit is not None  # above_solubility is False where no solubility is listed
                out.append(f"{reagent.name}: {grams:.4g} g/L is above its solubility of about "
                           f"{limit.value:g} g/L at 25 °C")
        return out


#: Largest amount of one reagent the engine accepts [mol/L] (neat water is 55 mol/L).
MAX_AMOUNT_MOL_L = 20.0


def amounts_matrix(amounts, reagent_ids: Sequence[str]) -> np.ndarray:
    """Amounts as a float array [N, R']; a 1-D input is one solution."""
    if type(amounts) is np.ndarray and amounts.ndim == 2 and amounts.dtype == np.float64:
        array = amounts   # (what np.atleast_2d(np.asarray(...)) returns for it, without the calls)
    else:
        array = np.atleast_2d(np.asarray(amounts, dtype=float))
    if array.shape[1] != len(reagent_ids):
        raise InputError(f"expected {len(reagent_ids)} amounts per solution, got {array.shape[1]}")
    if array.shape[0] == 1:
        # One solution: its few amounts checked as floats (numpy's min/max cost more than the check).
        for amount in array[0].tolist():
            if not 0.0 <= amount <= MAX_AMOUNT_MOL_L:   # NaN fails it too
                break
        else:
            return array
    elif array.size and 0.0 <= array.min() and array.max() <= MAX_AMOUNT_MOL_L:
        return array   # every amount finite (NaN fails both comparisons), none negative or too large
    if not (np.isfinite(array).all() and (array >= 0).all()):
        n, r = (int(i) for i in np.argwhere(~np.isfinite(array) | (array < 0))[0])
        raise InputError(f"amount of {reagent_ids[r]} in solution {n} is {array[n, r]!r}; "
                         "amounts must be finite and zero or more (mol/L)")
    if array.size and array.max() > MAX_AMOUNT_MOL_L:
        n, r = (int(i) for i in np.unravel_index(np.argmax(array), array.shape))
        raise InputError(f"amount of {reagent_ids[r]} is {array[n, r]:g} mol/L; that is not a solution poise can "
                         f"model (at most {MAX_AMOUNT_MOL_L:g} mol/L of one reagent)")
    return array


def composition_ph(composition: Mapping[str, float], temperature_c: float = 25.0, catalog: Catalog | None = None,
                   activity: str = "davies", fixed_ionic_strength_mol_l: float | None = None) -> float:
    """Exact pH of one solution given as reagent id -> amount [mol/L], at ``temperature_c`` [°C].

    :func:`solve_equilibrium` for one composition; reagents at zero amount are left out of
    the solve (all kept if every amount is zero).  ``fixed_ionic_strength_mol_l`` holds γ
    at that ionic strength [mol/L] instead of iterating it.
    """
    ids = [r for r, c in composition.items() if c > 0] or list(composition)
    eq = solve_equilibrium(ids, np.array([[composition[r] for r in ids]]), temperature_c, catalog=catalog,
                           activity=activity, fixed_ionic_strength_mol_l=fixed_ionic_strength_mol_l)
    return float(eq.ph[0])


def solve_equilibrium(reagent_ids: Sequence[str], amounts_mol_l, temperature_c=25.0,
                      catalog: Catalog | None = None, activity: str = "davies",
                      tol_ph: float = 1e-6, fixed_ionic_strength_mol_l=None,
                      threads: int | None = None, strict: bool = True,
                      ion_pairs: bool = False, added_totals_mol_l: Mapping[str, np.ndarray] | None = None
                      ) -> Equilibrium:
    """Equilibrium of solutions of catalog reagents in water.

    Parameters
    ----------
    reagent_ids : sequence of str
        Reagent ids (resolved names) of the batch's columns.
    amounts_mol_l : array [R'] or [N, R']
        Amount of each reagent dissolved per litre of final solution [mol/L].
    temperature_c : float or array [N]
        Temperature [°C], 0-95.
    threads : int, optional
        Threads for a large batch (see :func:`selector.chemistry.speciation.solve_speciation`).
    ion_pairs : bool
        Also take the ion pairs of Na⁺ and K⁺ (``complexes.csv``) as species (default False:
        they are spectators).  Divalent metals present (Ca²⁺, Mg²⁺, Zn²⁺ …) are always
        components with their complexes (:mod:`selector.chemistry.complex_equilibrium`).
    strict : bool
        True (default): raise unless every solution converged (see Raises).  False: return
        every solution with its ``status`` (converged, beyond the model, failed) and NaN
        figures where it is not converged, so one bad composition costs its batch nothing;
        :meth:`Equilibrium.require_converged` raises later.
    added_totals_mol_l : mapping system id -> array [N] or float, optional
        The system's most protonated form added per litre [mol/L] on top of the reagents
        (negative: taken away; the total must stay ≥ 0): the exchange of a volatile acid with
        a gas phase (CO₂ for carbonate, :mod:`selector.chemistry.gas_exchange`).

    Raises
    ------
    InputError for bad amounts or temperatures, or (strict) for a composition beyond the
    model; SolverError (strict) if a solution's equilibrium was not found.
    """
    catalog = catalog if catalog is not None else load_catalog()
    tables = engine_tables(catalog)
    reagent_ids = tuple(reagent_ids)
    for reagent_id in reagent_ids:
        if reagent_id not in catalog.reagents:
            resolve_reagent(reagent_id, catalog)
    amounts = amounts_matrix(amounts_mol_l, reagent_ids)
    temperature = check_temperature(temperature_c)
    n = amounts.shape[0]
    if temperature.ndim:
        temperature = np.broadcast_to(temperature, (n,)).copy()
    else:
        temperature = np.array([float(temperature)]) if n == 1 else np.full(n, float(temperature))

    if n > CHUNK_ROWS:
        with single_threaded_blas():
            eq = _solve(catalog, tables, reagent_ids, amounts, temperature, activity, tol_ph,
                        fixed_ionic_strength_mol_l, threads, ion_pairs, added_totals_mol_l)
    else:
        eq = _solve(catalog, tables, reagent_ids, amounts, temperature, activity, tol_ph,
                    fixed_ionic_strength_mol_l, threads, ion_pairs, added_totals_mol_l)
    return eq.require_converged() if strict else eq


@dataclass(frozen=True)
class _Plan:
    """What a batch's reagent columns mean for the engine, worked out once per catalog,
    reagents, added systems and ion-pair choice (a recipe or the app solves the same
    reagents hundreds of times): the systems present and their arrays, the strong ions
    present, the complexing metals, the solubilities in mol/L."""

    catalog: Catalog
    units: np.ndarray            # [R', S'] system units of each reagent, systems present
    present: np.ndarray          # [S'] indices of the systems present in the tables
    systems: SystemArrays        # the systems present
    added_columns: dict[int, int]  # tables' system index -> column among the present
    ion_present: np.ndarray      # [K'] indices of the strong ions present
    ion_counts: np.ndarray       # [R', K']
    ion_charge: np.ndarray       # [K']
    half_ion_charge_sq: np.ndarray  # [K'] ½ z² of each
    ion_ids: list[str]
    metals: tuple[str, ...]
    solubility_mol_l: np.ndarray  # [1, R'] 25 °C solubility (inf where none is listed)
    system_n_steps: tuple[int, ...]
    strong_ion_ids: tuple[str, ...]
    strong_ion_charge: tuple[int, ...]
    outside_by_t: dict[float, np.ndarray] = field(default_factory=dict)  # filled by outside_at

    def outside_at(self, temperature_c: float) -> np.ndarray:
        """[S'] bool: ``temperature_c`` [°C] outside the data range of a step of each system
        present (kept per temperature: for batches at one temperature)."""
        outside = self.outside_by_t.get(temperature_c)
        if outside is None:
            systems = self.systems
            outside = np.any((temperature_c < systems.t_min_c) | (temperature_c > systems.t_max_c), axis=1)
            if len(self.outside_by_t) >= _PLANS_MAX:
                self.outside_by_t.clear()
            self.outside_by_t[temperature_c] = outside
        return outside


#: Plans of recently used reagent sets (see :class:`_Plan`).
_PLANS: dict[tuple, _Plan] = {}
_PLANS_MAX = 512


def _plan(catalog: Catalog, tables: EngineTables, reagent_ids: tuple, added_ids: tuple, ion_pairs: bool) -> _Plan:
    key = (id(catalog), id(tables), reagent_ids, added_ids, ion_pairs)
    plan = _PLANS.get(key)
    if plan is not None and plan.catalog is catalog:
        return plan
    rows = np.array([tables.reagent_index(r) for r in reagent_ids], dtype=int)
    units = tables.system_units[rows]
    added = [tables.system_index(s) for s in added_ids]
    in_use = units.any(axis=0)
    in_use[added] = True
    present = np.flatnonzero(in_use)
    systems = tables.systems.subset(present)
    ion_counts = tables.strong_ion_counts[rows]
    ion_present = np.flatnonzero(ion_counts.any(axis=0))
    ion_ids = [tables.strong_ion_ids[k] for k in ion_present]
    limits = [catalog.reagents[r].solubility_g_l_25c for r in reagent_ids]
    solubility = np.array([limit.value if limit else np.inf for limit in limits])
    molar_mass = np.array([catalog.reagents[r].molar_mass_g_mol for r in reagent_ids])
    plan = _Plan(catalog=catalog, units=units[:, present], present=present, systems=systems,
                 added_columns={index: int(np.searchsorted(present, index)) for index in added},
                 ion_present=ion_present, ion_counts=ion_counts[:, ion_present],
                 ion_charge=tables.strong_ion_charge[ion_present],
                 half_ion_charge_sq=0.5 * tables.strong_ion_charge[ion_present] ** 2, ion_ids=ion_ids,
                 metals=complexing_ions(catalog, ion_ids, systems.system_ids, ion_pairs),
                 solubility_mol_l=(solubility / molar_mass)[None, :], system_n_steps=tuple(int(k) for k in systems.n_steps),
                 strong_ion_ids=tuple(ion_ids), strong_ion_charge=tuple(int(z) for z in tables.strong_ion_charge[ion_present]))
    if len(_PLANS) >= _PLANS_MAX:
        _PLANS.clear()
    _PLANS[key] = plan
    return plan


def _solve(catalog, tables, reagent_ids, amounts, temperature, activity, tol_ph,
           fixed_ionic_strength_mol_l, threads, ion_pairs=False, added_totals_mol_l=None) -> Equilibrium:
    added_totals_mol_l = added_totals_mol_l or {}
    plan = _plan(catalog, tables, tuple(reagent_ids), tuple(added_totals_mol_l), ion_pairs)
    systems = plan.systems
    totals = amounts @ plan.units
    for system_id, added_mol_l in added_totals_mol_l.items():
        column = plan.added_columns[tables.system_index(system_id)]
        totals[:, column] = np.maximum(totals[:, column] + added_mol_l, 0.0)
    ion_conc = amounts @ plan.ion_counts
    ion_charge, ion_ids, metals = plan.ion_charge, plan.ion_ids, plan.metals
    if metals or per_species(activity):
        # Complexing cations are components of the equilibrium, the other ions spectators; a
        # per-species activity model needs every species' own γ, which this solver takes.
        is_metal = np.array([i in metals for i in ion_ids], dtype=bool)   # (bool also when no strong ion is present)
        spectator = ion_conc[:, ~is_metal]
        speciation = solve_complexation(
            totals, ion_conc[:, [ion_ids.index(m) for m in metals]], spectator @ ion_charge[~is_metal],
            0.5 * spectator @ (ion_charge[~is_metal] ** 2), temperature, systems,
            complex_arrays(catalog, metals, systems.system_ids, ion_pairs, per_species(activity)), activity=activity,
            fixed_ionic_strength_mol_l=fixed_ionic_strength_mol_l)
    else:
        speciation = solve_speciation(
            # ½ Σ c z² as (c @ ½z²): halving is exact, so this is the same float as (½ c) @ z².
            totals, ion_conc @ ion_charge, ion_conc @ plan.half_ion_charge_sq, temperature, systems,
            activity=activity, tol_ph=tol_ph, fixed_ionic_strength_mol_l=fixed_ionic_strength_mol_l,
            threads=threads)
    return _assemble(plan, reagent_ids, amounts, speciation, ion_conc)


#: numpy sums up to this many numbers of a row one after the other (its pairwise summation
#: starts at 8; measured on every length 1-13, and held by tests/test_engine_one_composition.py).
_IN_ORDER_SUM_MAX = 7


def _osmolarity(speciation: Speciation, ion_conc: np.ndarray) -> np.ndarray:
    """Ideal osmolarity of solutions without complexes [osmol/L], array [N]: the system totals,
    the strong ions, H⁺ and OH⁻.  A single solution with few systems and ions is summed as
    floats, in numpy's order (the same float; five numpy calls on one-element arrays cost
    more than the sums)."""
    totals = speciation.totals_mol_l
    if totals.shape[0] == 1 and max(totals.shape[1], ion_conc.shape[1]) <= _IN_ORDER_SUM_MAX:
        systems_sum = ions_sum = 0.0
        for conc in totals[0].tolist():
            systems_sum += conc
        for conc in ion_conc[0].tolist():
            ions_sum += conc
        total = systems_sum + ions_sum
        total += float(speciation.h_mol_l[0])
        total += float(speciation.oh_mol_l[0])
        return np.array([total])
    osmolarity = totals.sum(axis=1)
    osmolarity += ion_conc.sum(axis=1)
    osmolarity += speciation.h_mol_l
    osmolarity += speciation.oh_mol_l
    return osmolarity


def _outside_data(plan: _Plan, temperature_c: np.ndarray) -> np.ndarray:
    """[N, S'] bool (or [1, S'] for a batch at one temperature): each solution's temperature [°C]
    outside the data range of a step of each system present, worked out per distinct temperature
    (a batch has few; one kept per plan)."""
    if temperature_c.shape == (1,):   # one solution: no sorting, no index
        return plan.outside_at(float(temperature_c[0]))[None, :]
    unique_t, t_index = distinct_temperatures(temperature_c)
    if unique_t.size == 1:
        return plan.outside_at(float(unique_t[0]))[None, :]
    t = unique_t[:, None, None]
    systems = plan.systems
    return np.any((t < systems.t_min_c[None]) | (t > systems.t_max_c[None]), axis=2)[t_index]


def _assemble(plan: _Plan, reagent_ids, amounts, speciation: Speciation, ion_conc) -> Equilibrium:
    systems = plan.systems
    metals = speciation.metals
    if metals is None:
        osmolarity = _osmolarity(speciation, ion_conc)
    else:
        # Complexes join particles: count the free system species, free ions and complexes.
        osmolarity = np.einsum("ns,nsj->n", speciation.totals_mol_l, speciation.fractions)
        osmolarity += ion_conc.sum(axis=1) - metals.totals_mol_l.sum(axis=1) + metals.free_mol_l.sum(axis=1)
        osmolarity += metals.complex_mol_l.sum(axis=1)
        osmolarity += speciation.h_mol_l
        osmolarity += speciation.oh_mol_l
    temperature_outside = _outside_data(plan, speciation.temperature_c) & (speciation.totals_mol_l > 0)
    above_solubility = amounts > plan.solubility_mol_l  # mol/L against g/L ÷ g/mol, no [N, R'] floats
    return Equilibrium(
        reagent_ids=tuple(reagent_ids), amounts_mol_l=amounts, speciation=speciation,
        system_ids=systems.system_ids, system_n_steps=plan.system_n_steps,
        strong_ion_ids=plan.strong_ion_ids, strong_ion_charge=plan.strong_ion_charge,
        strong_ion_mol_l=ion_conc, osmolarity_osmol_l=osmolarity,
        ionic_strength_high=speciation.ionic_strength_mol_l > DAVIES_MAX_IONIC_STRENGTH_MOL_L,
        temperature_outside_data=temperature_outside, above_solubility=above_solubility,
    )
