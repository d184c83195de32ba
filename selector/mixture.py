"""Solutions made of catalog reagents: amounts, units, mixing, and their equilibrium.

:func:`solve_equilibrium` is the engine's public entry for "what is in this beaker": it
takes reagent amounts (one solution or a batch), maps them onto systems and strong ions,
calls :func:`selector.speciation.solve_speciation` and returns a :class:`Equilibrium`
with every species, the derived figures and vectorised warning masks.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from functools import cached_property
from typing import Mapping, Sequence

import numpy as np

from catalog import Catalog, load_catalog, normalize_name
from selector.activity import DAVIES_MAX_IONIC_STRENGTH_MOL_L
from selector.errors import InputError, SolverError, UnknownNameError
from selector.speciation import Speciation, single_threaded_blas, solve_speciation
from selector.tables import EngineTables, engine_tables
from selector.water import water_density_g_cm3

#: Temperatures the engine accepts [°C]: liquid water at 0.1 MPa within the water fits.
TEMPERATURE_MIN_C, TEMPERATURE_MAX_C = 0.0, 95.0

#: Units of amount accepted on input and their factor to mol/L (None: needs molar mass,
#: the factor is then to g/L).
AMOUNT_UNITS: dict[str, tuple[str, float]] = {
    "m": ("mol/L", 1.0),
    "mol/l": ("mol/L", 1.0),
    "mm": ("mol/L", 1e-3),
    "mmol/l": ("mol/L", 1e-3),
    "um": ("mol/L", 1e-6),
    "µm": ("mol/L", 1e-6),
    "μm": ("mol/L", 1e-6),
    "umol/l": ("mol/L", 1e-6),
    "µmol/l": ("mol/L", 1e-6),
    "nm": ("mol/L", 1e-9),
    "g/l": ("g/L", 1.0),
    "mg/ml": ("g/L", 1.0),
    "mg/l": ("g/L", 1e-3),
}
UNIT_HELP = "M, mM, uM (µM), nM, mol/L, mmol/L, g/L, mg/mL, mg/L"

_AMOUNT_PATTERN = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?nan|[-+]?inf)\s*(\S*)\s*$",
                             re.IGNORECASE)


def resolve_reagent(name: str, catalog: Catalog | None = None) -> str:
    """The reagent id that ``name`` (id, name, formula or alias, any case) stands for."""
    catalog = catalog if catalog is not None else load_catalog()
    reagent_id = catalog.reagent_names.get(normalize_name(name))
    if reagent_id is None:
        raise UnknownNameError("reagent", name, close_names(name, catalog.reagent_names, catalog_names(catalog)))
    return reagent_id


def resolve_system(name: str, catalog: Catalog | None = None) -> str:
    """The system id that ``name`` (id, name or alias, any case) stands for."""
    catalog = catalog if catalog is not None else load_catalog()
    system_id = catalog.system_names.get(normalize_name(name))
    if system_id is None:
        display = {normalize_name(n): n for s in catalog.systems.values() for n in (s.system_id, s.name, *s.aliases)}
        raise UnknownNameError("buffer system", name, close_names(name, catalog.system_names, display))
    return system_id


def catalog_names(catalog: Catalog) -> dict[str, str]:
    """Folded name -> a display form, for suggestions."""
    return {normalize_name(n): n for r in catalog.reagents.values() for n in (r.reagent_id, r.name, *r.aliases)}


def close_names(name: str, index: Mapping[str, str], display: Mapping[str, str], limit: int = 4) -> list[str]:
    """Up to ``limit`` display names close to ``name`` (difflib ratio on folded names)."""
    folded = normalize_name(name)
    matches = difflib.get_close_matches(folded, list(index), n=limit * 3, cutoff=0.6)
    matches += [key for key in index if folded and folded in key and key not in matches]
    seen, out = set(), []
    for key in matches:
        label = display.get(key, key)
        if index[key] not in seen:
            seen.add(index[key])
            out.append(label)
        if len(out) == limit:
            break
    return out


def parse_amount(text: str, molar_mass_g_mol: float | None = None, what: str = "amount") -> float:
    """An amount such as ``25mM``, ``0.1 M``, ``5 g/L`` as mol/L.

    Mass units (g/L, mg/mL, mg/L) need ``molar_mass_g_mol``.  Zero is accepted;
    negative, NaN, infinite or garbled amounts and unknown units raise InputError.
    """
    match = _AMOUNT_PATTERN.match(text or "")
    if not match:
        raise InputError(f"cannot read {what} {text!r}: expected a number and a unit, e.g. 25mM "
                         f"(units: {UNIT_HELP})")
    value = float(match.group(1))
    unit = match.group(2)
    if not math.isfinite(value):
        raise InputError(f"{what} {text!r} is not a finite number; give e.g. 25mM")
    if value < 0:
        raise InputError(f"{what} {text!r} is negative; amounts must be zero or more")
    if not unit:
        raise InputError(f"{what} {text!r} has no unit; add one of: {UNIT_HELP}")
    entry = AMOUNT_UNITS.get(unit.replace("µ", "u").replace("μ", "u").lower())
    if entry is None:
        raise InputError(f"unknown unit {unit!r} in {what} {text!r}; use one of: {UNIT_HELP}")
    kind, factor = entry
    if kind == "g/L":
        if not molar_mass_g_mol:
            raise InputError(f"{what} {text!r} is a mass concentration; it needs a reagent with a molar mass")
        return value * factor / molar_mass_g_mol
    return value * factor


VOLUME_UNITS = {"l": 1.0, "ml": 1e-3, "ul": 1e-6, "µl": 1e-6, "μl": 1e-6}
VOLUME_HELP = "L, mL, uL"
MASS_UNITS = {"kg": 1000.0, "g": 1.0, "mg": 1e-3}
MASS_HELP = "kg, g, mg"


def _split_quantity(text: str, what: str, units_help: str) -> tuple[float, str]:
    match = _AMOUNT_PATTERN.match(text or "")
    if not match:
        raise InputError(f"cannot read {what} {text!r}: expected a number and a unit ({units_help})")
    value = float(match.group(1))
    if not math.isfinite(value):
        raise InputError(f"{what} {text!r} is not a finite number")
    if value < 0:
        raise InputError(f"{what} {text!r} is negative")
    if not match.group(2):
        raise InputError(f"{what} {text!r} has no unit; add one of: {units_help}")
    return value, match.group(2)


def parse_volume(text: str, what: str = "volume") -> float:
    """A volume such as ``1L``, ``500 mL`` in litres; zero, negative or garbled -> InputError."""
    value, unit = _split_quantity(text, what, VOLUME_HELP)
    factor = VOLUME_UNITS.get(unit.lower())
    if factor is None:
        raise InputError(f"unknown unit {unit!r} in {what} {text!r}; use one of: {VOLUME_HELP}")
    if value == 0:
        raise InputError(f"{what} {text!r} is zero; give a positive volume")
    return value * factor


def parse_mass(text: str, what: str = "mass") -> float:
    """A mass such as ``500 g``, ``1kg`` in grams; zero, negative or garbled -> InputError."""
    value, unit = _split_quantity(text, what, MASS_HELP)
    factor = MASS_UNITS.get(unit.lower())
    if factor is None:
        hint = " (volumes need a density the catalog does not hold: give the pack by mass)" \
            if unit.lower() in VOLUME_UNITS else ""
        raise InputError(f"unknown unit {unit!r} in {what} {text!r}; use one of: {MASS_HELP}{hint}")
    if value == 0:
        raise InputError(f"{what} {text!r} is zero; give a positive mass")
    return value * factor


def check_temperature(temperature_c) -> np.ndarray:
    """The temperature(s) as an array, or InputError outside 0-95 °C or not a number."""
    try:
        t = np.asarray(temperature_c, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"temperature {temperature_c!r} is not a number; give °C between "
                         f"{TEMPERATURE_MIN_C:g} and {TEMPERATURE_MAX_C:g}") from None
    bad = ~np.isfinite(t) | (t < TEMPERATURE_MIN_C) | (t > TEMPERATURE_MAX_C)
    if np.any(bad):
        first = t.reshape(-1)[np.argmax(bad.reshape(-1))]
        raise InputError(f"temperature {first:g} °C is out of range; poise works from "
                         f"{TEMPERATURE_MIN_C:g} to {TEMPERATURE_MAX_C:g} °C (liquid water)")
    return t


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
        conc = np.column_stack([weak, sp.h_mol_l, sp.oh_mol_l, self.strong_ion_mol_l])
        charge_array = np.asarray(charges, dtype=float)
        gamma = 10.0 ** (charge_array[None, :] ** 2 * sp.log10_gamma_unit[:, None])
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
                out.append(f"{reagent.name}: {grams:.4g} g/L is above its solubility of about "
                           f"{reagent.solubility_g_l_25c.value:g} g/L at 25 °C")
        return out


#: Largest amount of one reagent the engine accepts [mol/L] (neat water is 55 mol/L).
MAX_AMOUNT_MOL_L = 20.0


def amounts_matrix(amounts, reagent_ids: Sequence[str]) -> np.ndarray:
    """Amounts as a float array [N, R']; a 1-D input is one solution."""
    array = np.atleast_2d(np.asarray(amounts, dtype=float))
    if array.shape[1] != len(reagent_ids):
        raise InputError(f"expected {len(reagent_ids)} amounts per solution, got {array.shape[1]}")
    bad = ~np.isfinite(array) | (array < 0)
    if bad.any():
        n, r = np.argwhere(bad)[0]
        raise InputError(f"amount of {reagent_ids[r]} in solution {n} is {array[n, r]!r}; "
                         "amounts must be finite and zero or more (mol/L)")
    if array.size and array.max() > MAX_AMOUNT_MOL_L:
        n, r = np.unravel_index(np.argmax(array), array.shape)
        raise InputError(f"amount of {reagent_ids[r]} is {array[n, r]:g} mol/L; that is not a solution poise can "
                         f"model (at most {MAX_AMOUNT_MOL_L:g} mol/L of one reagent)")
    return array


def solve_equilibrium(reagent_ids: Sequence[str], amounts_mol_l, temperature_c=25.0,
                      catalog: Catalog | None = None, activity: str = "davies",
                      tol_ph: float = 1e-6, fixed_ionic_strength_mol_l=None,
                      threads: int | None = None) -> Equilibrium:
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
        Threads for a large batch (see :func:`selector.speciation.solve_speciation`).

    Raises
    ------
    InputError for bad amounts or temperatures, SolverError if a solution does not converge.
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
    temperature = np.broadcast_to(temperature, (n,)).copy()

    with single_threaded_blas():
        return _solve(catalog, tables, reagent_ids, amounts, temperature, activity, tol_ph,
                      fixed_ionic_strength_mol_l, threads)


def _solve(catalog, tables, reagent_ids, amounts, temperature, activity, tol_ph,
           fixed_ionic_strength_mol_l, threads) -> Equilibrium:
    rows = np.array([tables.reagent_index(r) for r in reagent_ids], dtype=int)
    units = tables.system_units[rows]
    present = np.flatnonzero(units.any(axis=0))
    systems = tables.systems.subset(present)
    totals = amounts @ units[:, present]
    ion_counts = tables.strong_ion_counts[rows]
    ion_present = np.flatnonzero(ion_counts.any(axis=0))
    ion_conc = amounts @ ion_counts[:, ion_present]
    ion_charge = tables.strong_ion_charge[ion_present]
    speciation = solve_speciation(
        totals, ion_conc @ ion_charge, 0.5 * ion_conc @ (ion_charge**2), temperature, systems,
        activity=activity, tol_ph=tol_ph, fixed_ionic_strength_mol_l=fixed_ionic_strength_mol_l,
        threads=threads)
    if not speciation.converged.all():
        bad = np.flatnonzero(~speciation.converged)
        ionic = float(speciation.ionic_strength_mol_l[bad[0]])
        hint = (f"; its ionic strength ({ionic:.3g} mol/L) is far beyond the activity model's range "
                f"(about {DAVIES_MAX_IONIC_STRENGTH_MOL_L:g} mol/L)" if ionic > 2 * DAVIES_MAX_IONIC_STRENGTH_MOL_L
                else "; check the amounts")
        raise SolverError(f"the equilibrium did not converge for {bad.size} solution(s) "
                          f"(first: index {bad[0]}){hint}")
    return _assemble(catalog, tables, reagent_ids, amounts, speciation, systems.system_ids,
                     present, ion_present, ion_conc, ion_charge)


def _assemble(catalog, tables: EngineTables, reagent_ids, amounts, speciation: Speciation,
              system_ids, present, ion_present, ion_conc, ion_charge) -> Equilibrium:
    systems = tables.systems.subset(present)
    ion_ids = [tables.strong_ion_ids[k] for k in ion_present]
    osmolarity = (speciation.totals_mol_l.sum(axis=1) + ion_conc.sum(axis=1)
                  + speciation.h_mol_l + speciation.oh_mol_l)
    # Per distinct temperature (a batch has few), then spread to the solutions.
    unique_t, t_index = np.unique(speciation.temperature_c, return_inverse=True)
    t = unique_t[:, None, None]
    outside = ((t < systems.t_min_c[None]) | (t > systems.t_max_c[None])).any(axis=2)
    temperature_outside = outside[t_index] & (speciation.totals_mol_l > 0)
    solubility = np.array([
        catalog.reagents[r].solubility_g_l_25c.value if catalog.reagents[r].solubility_g_l_25c else np.inf
        for r in reagent_ids])
    molar_mass = np.array([catalog.reagents[r].molar_mass_g_mol for r in reagent_ids])
    above_solubility = amounts * molar_mass[None, :] > solubility[None, :]
    return Equilibrium(
        reagent_ids=tuple(reagent_ids), amounts_mol_l=amounts, speciation=speciation,
        system_ids=tuple(system_ids), system_n_steps=tuple(int(k) for k in systems.n_steps),
        strong_ion_ids=tuple(ion_ids), strong_ion_charge=tuple(int(z) for z in ion_charge),
        strong_ion_mol_l=ion_conc, osmolarity_osmol_l=osmolarity,
        ionic_strength_high=speciation.ionic_strength_mol_l > DAVIES_MAX_IONIC_STRENGTH_MOL_L,
        temperature_outside_data=temperature_outside, above_solubility=above_solubility,
    )
