"""Design for a free metal concentration: how much metal (and titrant, and salt) gives the
requested free Ca²⁺, Mg²⁺ … with a chelator at a pH, temperature and ionic strength.

At a fixed pH, temperature and ionic strength every complex is a fixed multiple of its free
metal and free ligand, so the totals follow from the free values; but the titrant that holds
the pH (chelation releases protons) and the salt that sets the ionic strength move the
activity coefficients and with them every constant.  The design therefore solves the exact
equilibrium of the engine (:func:`selector.chemistry.equilibrium.solve_equilibrium`, the same
activity model and constants as ``poise ph``) for the unknowns together:

* log10 of each metal's total (one per requested metal),
* the titrant (strong base, or strong acid where the mix is too basic),
* the salt (only when an ionic strength is asked for),

against the targets log10 free metal, pH and ionic strength, by Newton's method with a
forward-difference Jacobian whose columns are solved in one batch per iteration.  The last
iterate IS a forward solve of the composition the recipe weighs, so the reported free
metal is the re-solved one; the design fails unless it equals the request to
:data:`FREE_TOLERANCE_RELATIVE`.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np

from catalog import Catalog, load_catalog
from selector.admissible import ACID_TITRANT, BASE_TITRANT, SALT_REAGENT
from selector.chemistry.activity import DAVIES_MAX_IONIC_STRENGTH_MOL_L
from selector.chemistry.equilibrium import Equilibrium, solve_equilibrium
from selector.errors import InfeasibleSpecError, InputError, SolverError
from selector.names import resolve_reagent, resolve_system
from selector.units import TEMPERATURE_MAX_C, TEMPERATURE_MIN_C

__all__ = [
    "FREE_TOLERANCE_RELATIVE", "FreeMetalDesign", "FreeMetalSpec", "SensitivityRow", "design_free_metal",
    "design_text", "free_metal_recipe", "metal_salt", "parse_free_metal_spec",
]

#: The forward re-solve must give each requested free metal to this relative tolerance.
FREE_TOLERANCE_RELATIVE = 1e-6
#: Newton stops when every residual is below these (log10 free metal, pH, I [mol/L]).
_LOG_TOLERANCE = 1e-8
_PH_TOLERANCE = 1e-8
_IONIC_TOLERANCE = 1e-9
_MAX_ITERATIONS = 60
#: Largest Newton step in log10 of a metal total (a factor of about 3), against overshoot on
#: the steep part of a metal–chelator titration.
_MAX_LOG_STEP = 0.5
#: The sensitivity steps: pH ± 0.1, ± 5 °C (the questions of issue 16) and the chelator's
#: purity ± 2 percentage points (common practice: lots of a chelator free acid differ by a
#: few per cent of water).
SENSITIVITY_PH = 0.1
SENSITIVITY_TEMPERATURE_C = 5.0
SENSITIVITY_PURITY = 0.02


@dataclass(frozen=True)
class FreeMetalSpec:
    """What the user asks for (validated by :func:`design_free_metal`).

    Attributes
    ----------
    free_mol_l : metal ion id (``Ca``, ``Mg``) -> requested free concentration [mol/L]
    chelators : chelator reagent id -> active chelator in the final solution [mol/L]
    ph : target pH at ``temperature_c``
    temperature_c : temperature of use [°C]
    ionic_strength_mol_l : target ionic strength [mol/L], or None for no salt added
    buffers : buffer system id -> total [mol/L] (weighed as its most acidic admitted form)
    purity : chelator reagent id -> mass fraction of chelator in what is weighed (default 1)
    counter_ion : ``K`` (KOH, KCl; default) or ``Na`` (NaOH, NaCl)
    volume_l : volume to make [L]
    """

    free_mol_l: Mapping[str, float]
    chelators: Mapping[str, float]
    ph: float
    temperature_c: float = 25.0
    ionic_strength_mol_l: float | None = None
    buffers: Mapping[str, float] = dataclasses.field(default_factory=dict)
    purity: Mapping[str, float] = dataclasses.field(default_factory=dict)
    counter_ion: str = "K"
    volume_l: float = 1.0


@dataclass(frozen=True)
class SensitivityRow:
    """Free metal when one condition moves and the weighed composition does not.

    ``change`` says what moved (``pH +0.1``: titrated to 0.1 higher; ``+5 °C``: used 5 °C
    warmer; ``purity 96 %``: the chelator is that pure, not the stated purity).
    """

    change: str
    ph: float
    temperature_c: float
    free_mol_l: dict[str, float]

    def as_json(self) -> dict:
        return {"change": self.change, "ph": self.ph, "temperature_c": self.temperature_c,
                "free_mol_l": dict(self.free_mol_l)}


@dataclass(frozen=True)
class FreeMetalDesign:
    """A verified free-metal design.

    ``composition`` is every reagent [mol/L] (chelators as active chelator, buffer forms,
    metal salts, titrant, salt); ``free_metal_mol_l`` comes from the forward re-solve of
    exactly that composition.
    """

    spec: FreeMetalSpec
    composition: dict[str, float]
    metal_reagents: dict[str, str]
    total_metal_mol_l: dict[str, float]
    free_metal_mol_l: dict[str, float]
    titrant_id: str | None
    titrant_mol_l: float
    salt_id: str | None
    salt_mol_l: float
    ph: float
    ionic_strength_mol_l: float
    iterations: int
    sensitivity: tuple[SensitivityRow, ...]
    notes: tuple[str, ...]

    def as_json(self) -> dict:
        """The design's JSON (keys are an interface: ``total_metal_mol_l``, ``free_metal_mol_l``,
        ``requested_free_mol_l``, ``titrant``, ``sensitivity``)."""
        return {
            "requested_free_mol_l": dict(self.spec.free_mol_l),
            "total_metal_mol_l": dict(self.total_metal_mol_l),
            "free_metal_mol_l": dict(self.free_metal_mol_l),
            "metal_reagents": dict(self.metal_reagents),
            "chelators_mol_l": dict(self.spec.chelators),
            "chelator_purity": {r: self.spec.purity.get(r, 1.0) for r in self.spec.chelators},
            "buffers_mol_l": dict(self.spec.buffers),
            "titrant": {"reagent_id": self.titrant_id, "conc_mol_l": self.titrant_mol_l},
            "salt": {"reagent_id": self.salt_id, "conc_mol_l": self.salt_mol_l},
            "ph": self.ph,
            "temperature_c": self.spec.temperature_c,
            "ionic_strength_mol_l": self.ionic_strength_mol_l,
            "composition_mol_l": dict(self.composition),
            "iterations": self.iterations,
            "sensitivity": [row.as_json() for row in self.sensitivity],
            "notes": list(self.notes),
        }


def metal_salt(metal: str, catalog: Catalog) -> str:
    """The reagent that brings ``metal`` in: its chloride (ions exactly M and Cl, no buffer
    system), the purest grade listed, then the first id.  InputError if the catalog has none."""
    salts = [r for r in catalog.reagents.values()
             if r.system_id is None and {ion for ion, _ in r.ions} == {metal, "Cl"}]
    if not salts:
        raise InputError(f"the catalog has no chloride of {metal} to weigh; metals with one: "
                         + ", ".join(sorted({i for r in catalog.reagents.values() if r.system_id is None
                                             for i, _ in r.ions if i not in ("Cl", "H", "OH", "Na", "K")})))
    return sorted(salts, key=lambda r: (-r.purity_fraction, r.reagent_id))[0].reagent_id


def _binding_metals(system_id: str, catalog: Catalog) -> set[str]:
    """Metals with a numeric complex constant with ``system_id`` (complexes.csv or a selected
    numeric metal_binding.csv row)."""
    metals = {c.metal for c in catalog.complexes if c.system_id == system_id and not c.ion_pair}
    metals |= {m.metal for m in catalog.metal_binding_of(system_id, selected_only=True) if m.log_k is not None}
    return metals


def _check_spec(spec: FreeMetalSpec, catalog: Catalog) -> None:
    if not spec.free_mol_l:
        raise InputError("give at least one free metal, e.g. --free Ca=100nM")
    if not spec.chelators:
        raise InputError("give a chelator and its concentration, e.g. --chelator EGTA=2mM")
    for metal, free in spec.free_mol_l.items():
        if metal not in catalog.ions or catalog.ions[metal].charge < 2:
            known = sorted(i for i, ion in catalog.ions.items() if ion.charge >= 2)
            raise InputError(f"--free {metal}: not a metal ion of the catalog; use one of {', '.join(known)}")
        if not (np.isfinite(free) and free > 0):
            raise InputError(f"--free {metal}: the free concentration must be above zero, e.g. {metal}=100nM")
    # The free metals alone, as chlorides, add I = Σ c z (z + 1) / 2; past the activity model's
    # range no design can be trusted.
    ionic = sum(c * catalog.ions[m].charge * (catalog.ions[m].charge + 1) / 2 for m, c in spec.free_mol_l.items())
    if ionic > DAVIES_MAX_IONIC_STRENGTH_MOL_L:
        raise InputError(f"--free: these free metals alone give an ionic strength of {ionic:.3g} mol/L, above the "
                         f"{DAVIES_MAX_IONIC_STRENGTH_MOL_L:g} mol/L the activity model covers; ask for less")
    for reagent_id, conc in spec.chelators.items():
        system_id = catalog.reagents[reagent_id].system_id
        if system_id is None:
            raise InputError(f"--chelator {reagent_id}: not a chelator (no ligand system); e.g. EGTA=2mM")
        if not (np.isfinite(conc) and conc > 0):
            raise InputError(f"--chelator {reagent_id}: the concentration must be above zero, e.g. EGTA=2mM")
        missing = [m for m in spec.free_mol_l if m not in _binding_metals(system_id, catalog)]
        if missing:
            raise InputError(f"--chelator {reagent_id}: the catalog has no constant for {', '.join(missing)} with "
                             f"{system_id}; it cannot set that free metal")
    _check_conditions(spec)


def _check_conditions(spec: FreeMetalSpec) -> None:
    """Purity, counter-ion, pH, ionic strength and volume of a spec."""
    for reagent_id, purity in spec.purity.items():
        if reagent_id not in spec.chelators:
            raise InputError(f"--purity {reagent_id}: not one of the chelators ({', '.join(spec.chelators)})")
        if not 0 < purity <= 1:
            raise InputError(f"--purity {reagent_id}: {purity!r} is not above 0 and at most 100 %")
    if spec.counter_ion not in ("K", "Na"):
        raise InputError(f"counter-ion {spec.counter_ion!r}: use K or Na")
    if not 0 <= spec.ph <= 14:
        raise InputError(f"--ph {spec.ph:g}: give a pH between 0 and 14")
    if spec.ionic_strength_mol_l is not None and not 0 < spec.ionic_strength_mol_l <= 0.5:
        raise InputError(f"--ionic-strength {spec.ionic_strength_mol_l:g} mol/L: give a value above 0 and at most "
                         "0.5 mol/L (the activity model's range)")
    if not spec.volume_l > 0:
        raise InputError("--volume must be above zero, e.g. 1L")


@dataclass(frozen=True)
class _Layout:
    """Reagent columns of the solves: fixed reagents, then metal salts, base, acid, salt."""

    reagent_ids: tuple[str, ...]
    fixed_mol_l: np.ndarray      # [R] chelators and buffer forms, zero elsewhere
    metal_columns: np.ndarray    # [M]
    base_column: int
    acid_column: int
    salt_column: int

    def amounts(self, unknowns: np.ndarray, chelator_scale: np.ndarray | None = None) -> np.ndarray:
        """[K, R] amounts of K unknown vectors [K, M + 2]: 10^log totals, signed titrant, salt."""
        unknowns = np.atleast_2d(unknowns)
        out = np.repeat(self.fixed_mol_l[None, :], unknowns.shape[0], axis=0)
        if chelator_scale is not None:
            out = out * chelator_scale
        m = self.metal_columns.size
        out[:, self.metal_columns] = 10.0 ** unknowns[:, :m]
        titrant = unknowns[:, m]
        out[:, self.base_column] = np.maximum(titrant, 0.0)
        out[:, self.acid_column] = np.maximum(-titrant, 0.0)
        out[:, self.salt_column] = np.maximum(unknowns[:, m + 1], 0.0)
        return out


def _layout(spec: FreeMetalSpec, metal_reagents: dict[str, str], buffer_forms: dict[str, str],
            catalog: Catalog) -> _Layout:
    base_id = BASE_TITRANT[spec.counter_ion]
    assert base_id is not None
    salt_id = SALT_REAGENT[f"{spec.counter_ion}Cl"]
    ids = list(dict.fromkeys([*spec.chelators, *buffer_forms.values(), *metal_reagents.values(), base_id,
                              ACID_TITRANT, salt_id]))
    fixed = np.zeros(len(ids))
    for reagent_id, conc in spec.chelators.items():
        fixed[ids.index(reagent_id)] += conc / catalog.reagents[reagent_id].system_units
    for system_id, reagent_id in buffer_forms.items():
        fixed[ids.index(reagent_id)] += spec.buffers[system_id] / catalog.reagents[reagent_id].system_units
    metal_columns = np.array([ids.index(metal_reagents[m]) for m in spec.free_mol_l], dtype=int)
    if len(set(metal_columns.tolist())) != metal_columns.size or set(metal_columns.tolist()) & {
            ids.index(r) for r in [*spec.chelators, *buffer_forms.values()]}:
        raise InputError("each metal needs its own salt, apart from the chelators and buffers")
    return _Layout(tuple(ids), fixed, metal_columns, ids.index(base_id), ids.index(ACID_TITRANT), ids.index(salt_id))


def _solve(layout: _Layout, unknowns: np.ndarray, temperature_c, catalog: Catalog,
           chelator_scale: np.ndarray | None = None) -> Equilibrium:
    return solve_equilibrium(layout.reagent_ids, layout.amounts(unknowns, chelator_scale), temperature_c,
                             catalog=catalog)


def _metal_speciation(eq: Equilibrium):
    """The metals of a solve (every design solve holds a complexing metal)."""
    metals = eq.speciation.metals
    if metals is None:
        raise SolverError("the design's solution holds no complexing metal; nothing to design")
    return metals


def _metal_index(eq: Equilibrium, metal_ids) -> np.ndarray:
    """Columns of ``metal_ids`` in the solve's free-metal array."""
    ids = _metal_speciation(eq).metal_ids
    return np.array([ids.index(x) for x in metal_ids], dtype=np.intp)


def _residuals(eq: Equilibrium, metal_index: np.ndarray, log_free_target: np.ndarray, ph_target,
               ionic_target) -> np.ndarray:
    """[K, M + 2]: log10 free − target per metal, pH − target, I − target (0 without a target)."""
    free = _metal_speciation(eq).free_mol_l[:, metal_index]
    ionic = np.zeros_like(eq.ph) if ionic_target is None else eq.ionic_strength_mol_l - ionic_target
    return np.column_stack([np.log10(free) - log_free_target, eq.ph - ph_target, ionic])


def _newton(layout: _Layout, start: np.ndarray, active: np.ndarray, targets: dict, temperature_c: float,
            catalog: Catalog, metal_ids: tuple[str, ...], chelator_scale: np.ndarray | None = None):
    """Newton on the ``active`` unknowns (bool [M + 2]) against the same-index residuals.

    Returns (unknowns, equilibrium of the last iterate, iterations).  The Jacobian's columns
    are forward differences, every column and the current point solved in one batch.
    """
    u = start.astype(float).copy()
    columns = np.flatnonzero(active)
    m = len(targets["log_free"])
    scale_of = np.array([1.0] * m + [1.0, 1.0 / max(targets["ionic"] or 1.0, 1e-3)])[columns]
    for iteration in range(1, _MAX_ITERATIONS + 1):
        steps = np.where(np.arange(u.size) < m, 1e-6, np.maximum(1e-9, 1e-6 * np.abs(u)))
        batch = np.repeat(u[None, :], columns.size + 1, axis=0)
        batch[np.arange(1, columns.size + 1), columns] += steps[columns]
        eq = _solve(layout, batch, temperature_c, catalog, chelator_scale)
        metal_index = _metal_index(eq, metal_ids)
        r = _residuals(eq, metal_index, targets["log_free"], targets["ph"], targets["ionic"])
        r_active = r[:, columns]
        tolerance = np.array([_LOG_TOLERANCE] * m + [_PH_TOLERANCE, _IONIC_TOLERANCE])[columns]
        if np.all(np.abs(r_active[0]) < tolerance):
            # The forward check: the final composition solved on its own.
            return u, _solve(layout, u[None, :], temperature_c, catalog, chelator_scale), iteration
        jacobian = (r_active[1:] - r_active[0]).T / steps[columns]
        try:
            delta = np.linalg.solve(jacobian, -r_active[0])
        except np.linalg.LinAlgError:
            raise SolverError("the free-metal design did not settle (singular Jacobian); check that each metal "
                              "binds the chelator") from None
        is_log = columns < m
        delta[is_log] = np.clip(delta[is_log], -_MAX_LOG_STEP, _MAX_LOG_STEP)
        span = targets.get("span")
        if span is not None:
            delta[columns == m] = np.clip(delta[columns == m], -span / 4, span / 4)
        u = _line_search(layout, u, columns, delta, r_active[0], scale_of, temperature_c, catalog, metal_ids,
                         targets, chelator_scale)
    raise SolverError(f"the free-metal design did not settle in {_MAX_ITERATIONS} iterations")


#: Step fractions tried by the line search, all in one batch.
_STEP_FRACTIONS = np.array([1.0, 0.5, 0.25, 0.125, 0.0625, 0.03125, 0.015625])


def _line_search(layout: _Layout, u: np.ndarray, columns: np.ndarray, delta: np.ndarray, residual: np.ndarray,
                 scale_of: np.ndarray, temperature_c: float, catalog: Catalog, metal_ids, targets,
                 chelator_scale) -> np.ndarray:
    """u + α Δ for the largest α of :data:`_STEP_FRACTIONS` that lowers the scaled residual
    norm (every α solved in one batch); the smallest α if none does."""
    trial = np.repeat(u[None, :], _STEP_FRACTIONS.size, axis=0)
    trial[:, columns] += _STEP_FRACTIONS[:, None] * delta[None, :]
    trial[:, -1] = np.maximum(trial[:, -1], 0.0)
    eq = _solve_lenient(layout, trial, temperature_c, catalog, chelator_scale)
    metal_index = _metal_index(eq, metal_ids)
    r = _residuals(eq, metal_index, targets["log_free"], targets["ph"], targets["ionic"])[:, columns] * scale_of
    norms = np.sqrt(np.sum(r**2, axis=1))
    norms[~np.isfinite(norms)] = np.inf
    better = np.flatnonzero(norms < np.sqrt(np.sum((residual * scale_of) ** 2)))
    return trial[int(better[0]) if better.size else -1]


def _solve_lenient(layout: _Layout, unknowns: np.ndarray, temperature_c, catalog: Catalog,
                   chelator_scale: np.ndarray | None = None) -> Equilibrium:
    """As :func:`_solve`, but a trial beyond the model comes back with NaN figures."""
    return solve_equilibrium(layout.reagent_ids, layout.amounts(unknowns, chelator_scale), temperature_c,
                             catalog=catalog, strict=False)


def _titrant_span(layout: _Layout, start: np.ndarray, catalog: Catalog) -> float:
    """Largest titrant a design can need [mol/L]: every proton of the weighed systems and two
    per metal ion, twice over, plus 1 mmol/L."""
    ids = layout.reagent_ids
    protons = 0.0
    for reagent_id, conc in zip(ids, layout.fixed_mol_l):
        reagent = catalog.reagents[reagent_id]
        if conc > 0 and reagent.system_id is not None:
            protons += conc * reagent.system_units * catalog.systems[reagent.system_id].n_steps
    metals = float(np.sum(10.0 ** start[:layout.metal_columns.size]))
    return 2.0 * (protons + 2.0 * metals) + 1e-3


def _initial_titrant(layout: _Layout, start: np.ndarray, span: float, ph: float, temperature_c: float,
                     catalog: Catalog) -> float:
    """A titrant [mol/L] near the target pH at the starting metal totals: the pH of 81 titrant
    amounts from −span to +span (logarithmic on each side) solved in one batch, the crossing of
    the target interpolated linearly (the pH rises with the titrant)."""
    side = span * np.logspace(-7, 0, 40)
    grid = np.concatenate([-side[::-1], [0.0], side])
    batch = np.repeat(start[None, :], grid.size, axis=0)
    batch[:, layout.metal_columns.size] = grid
    eq = solve_equilibrium(layout.reagent_ids, layout.amounts(batch), temperature_c, catalog=catalog, strict=False)
    ph_values = eq.ph
    ok = np.isfinite(ph_values)
    above = np.flatnonzero(ok & (ph_values >= ph))
    below = np.flatnonzero(ok & (ph_values < ph))
    if above.size == 0 or below.size == 0:
        reach = f"{np.nanmin(ph_values):.2f} to {np.nanmax(ph_values):.2f}" if ok.any() else "none"
        raise InfeasibleSpecError(f"--ph {ph:g} cannot be reached with the titrant (pH reachable: {reach})")
    hi, lo = int(above[0]), int(below[below < above[0]][-1]) if (below < above[0]).any() else int(below[0])
    t_lo, t_hi, p_lo, p_hi = grid[lo], grid[hi], ph_values[lo], ph_values[hi]
    return float(t_lo + (ph - p_lo) * (t_hi - t_lo) / (p_hi - p_lo)) if p_hi != p_lo else float(t_lo)


def _buffer_forms(spec: FreeMetalSpec, catalog: Catalog) -> dict[str, str]:
    """Buffer system id -> the reagent weighed: its form with no counter-ion (free acid or
    base) if the catalog lists one, else its most acidic form with the chosen counter-ion."""
    forms = {}
    for system_id in spec.buffers:
        candidates = [r for r in catalog.reagents.values() if r.system_id == system_id]
        plain = [r for r in candidates if not r.ions]
        own = [r for r in candidates if {i for i, _ in r.ions} <= {spec.counter_ion, "H"}]
        pick = sorted(plain or own or candidates, key=lambda r: (r.protons_removed, r.reagent_id))
        if not pick:
            raise InputError(f"--buffer {system_id}: the catalog has no reagent of it to weigh")
        forms[system_id] = pick[0].reagent_id
    return forms


def design_free_metal(spec: FreeMetalSpec, catalog: Catalog | None = None) -> FreeMetalDesign:
    """Totals of metal, titrant and salt that give ``spec.free_mol_l`` at ``spec.ph``.

    Parameters
    ----------
    spec : FreeMetalSpec
        Requested free metals [mol/L], chelators [mol/L], pH, temperature [°C], ionic
        strength [mol/L] or None, buffers, purity, counter-ion, volume [L].
    catalog : Catalog, optional
        The catalog (default the shipped one).

    Returns
    -------
    FreeMetalDesign
        Verified: the forward solve of the returned composition gives each free metal within
        :data:`FREE_TOLERANCE_RELATIVE` of the request, the pH within 1e-6.

    Raises
    ------
    InputError
        unknown or non-binding metal, a chelator without a constant, bad numbers.
    InfeasibleSpecError
        an ionic strength below what the mix alone gives.
    SolverError
        the iteration did not settle.

    Notes
    -----
    Unknowns u = (log10 c_M for each metal, titrant t [mol/L] — strong base for t > 0,
    HCl for t < 0 —, salt s [mol/L]); residuals r = (log10 [M]free − log10 [M]req, pH − pH*,
    I − I*).  Newton: J Δu = −r with J by forward differences, |Δ log10 c_M| ≤ 0.5.
    """
    catalog = catalog if catalog is not None else load_catalog()
    spec = dataclasses.replace(
        spec, chelators={resolve_reagent(r, catalog): c for r, c in spec.chelators.items()},
        purity={resolve_reagent(r, catalog): p for r, p in spec.purity.items()},
        buffers={resolve_system(s, catalog): c for s, c in spec.buffers.items()})
    _check_spec(spec, catalog)
    metal_ids = tuple(spec.free_mol_l)
    metal_reagents = {m: metal_salt(m, catalog) for m in metal_ids}
    layout = _layout(spec, metal_reagents, _buffer_forms(spec, catalog), catalog)
    m = len(metal_ids)
    log_free = np.log10(np.array([spec.free_mol_l[x] for x in metal_ids]))
    chelator_total = sum(spec.chelators.values())
    start = np.concatenate([np.log10(np.array([spec.free_mol_l[x] for x in metal_ids]) + chelator_total / (m + 1)),
                            [0.0, 0.0]])
    span = _titrant_span(layout, start, catalog)
    start[m] = _initial_titrant(layout, start, span, spec.ph, spec.temperature_c, catalog)
    targets = {"log_free": log_free, "ph": spec.ph, "ionic": None, "span": span}
    active = np.array([True] * m + [True, False])
    u, eq, iterations = _newton(layout, start, active, targets, spec.temperature_c, catalog, metal_ids)
    if spec.ionic_strength_mol_l is not None:
        reached = float(eq.ionic_strength_mol_l[0])
        if spec.ionic_strength_mol_l < reached:
            raise InfeasibleSpecError(
                f"--ionic-strength {spec.ionic_strength_mol_l:g} mol/L is below the {reached:.4g} mol/L the "
                f"chelator, buffer, metal salts and titrant give alone; ask for at least {reached:.4g} mol/L")
        targets["ionic"] = spec.ionic_strength_mol_l
        u[m + 1] = spec.ionic_strength_mol_l - reached
        u, eq, more = _newton(layout, u, np.ones(m + 2, dtype=bool), targets, spec.temperature_c, catalog,
                              metal_ids)
        iterations += more
    free = _free_of(eq, metal_ids, 0)
    off = {x: abs(free[x] / spec.free_mol_l[x] - 1) for x in metal_ids}
    if max(off.values()) > FREE_TOLERANCE_RELATIVE or abs(float(eq.ph[0]) - spec.ph) > 1e-6:
        raise SolverError("the forward re-solve of the design does not give the requested free metal "
                          f"(relative gaps {off}); no design is reported")
    amounts = layout.amounts(u)[0]
    composition = {r: float(c) for r, c in zip(layout.reagent_ids, amounts) if c > 0}
    titrant = float(u[m])
    titrant_id = None if titrant == 0 else layout.reagent_ids[layout.base_column if titrant > 0
                                                               else layout.acid_column]
    salt = float(amounts[layout.salt_column])
    sensitivity = _sensitivity(layout, u, spec, catalog, metal_ids)
    notes = _notes(spec, catalog)
    return FreeMetalDesign(
        spec=spec, composition=composition, metal_reagents=metal_reagents,
        total_metal_mol_l={x: float(10 ** u[i]) for i, x in enumerate(metal_ids)}, free_metal_mol_l=free,
        titrant_id=titrant_id, titrant_mol_l=abs(titrant), salt_id=layout.reagent_ids[layout.salt_column]
        if salt > 0 else None, salt_mol_l=salt, ph=float(eq.ph[0]),
        ionic_strength_mol_l=float(eq.ionic_strength_mol_l[0]), iterations=iterations,
        sensitivity=sensitivity, notes=notes)


def _free_of(eq: Equilibrium, metal_ids, row: int) -> dict[str, float]:
    free = _metal_speciation(eq).free_mol_l[row, _metal_index(eq, metal_ids)]
    return {x: float(c) for x, c in zip(metal_ids, free)}


def _sensitivity(layout: _Layout, u: np.ndarray, spec: FreeMetalSpec, catalog: Catalog,
                 metal_ids: tuple[str, ...]) -> tuple[SensitivityRow, ...]:
    """Free metal at pH ± 0.1 and at the chelator's purity ± 2 points (metal and chelator as
    weighed, titrated to the meter: the titrant re-solved), and used at ± 5 °C (the made-up
    solution unchanged, its pH drifting)."""
    m = len(metal_ids)
    rows = []
    only_titrant = np.zeros(m + 2, dtype=bool)
    only_titrant[m] = True
    for shift in (-SENSITIVITY_PH, SENSITIVITY_PH):
        targets = {"log_free": np.zeros(m), "ph": spec.ph + shift, "ionic": None}
        _, eq, _ = _newton(layout, u, only_titrant, targets, spec.temperature_c, catalog, metal_ids)
        rows.append(SensitivityRow(f"pH {shift:+.1f}", float(eq.ph[0]), spec.temperature_c,
                                   _free_of(eq, metal_ids, 0)))
    # Within the engine's 0-95 °C: near an end the step is shortened to the end.
    temperatures = np.clip(spec.temperature_c + np.array([-SENSITIVITY_TEMPERATURE_C, SENSITIVITY_TEMPERATURE_C]),
                           TEMPERATURE_MIN_C, TEMPERATURE_MAX_C)
    temperatures = temperatures[temperatures != spec.temperature_c]
    if temperatures.size:
        eq = _solve(layout, np.repeat(u[None, :], temperatures.size, axis=0), temperatures, catalog)
        for k, t in enumerate(temperatures):
            rows.append(SensitivityRow(f"{t - spec.temperature_c:+g} °C", float(eq.ph[k]), float(t),
                                       _free_of(eq, metal_ids, k)))
    for reagent_id in spec.chelators:
        stated = spec.purity.get(reagent_id, 1.0)
        for true in (stated - SENSITIVITY_PURITY, min(stated + SENSITIVITY_PURITY, 1.0)):
            if true == stated or true <= 0:
                continue
            # The lab titrates to the meter, so the titrant follows the chelator that is there.
            scale = np.where(np.array(layout.reagent_ids) == reagent_id, true / stated, 1.0)
            targets = {"log_free": np.zeros(m), "ph": spec.ph, "ionic": None}
            _, eq, _ = _newton(layout, u, only_titrant, targets, spec.temperature_c, catalog, metal_ids, scale)
            rows.append(SensitivityRow(f"{reagent_id} purity {true * 100:.4g} %", float(eq.ph[0]),
                                       spec.temperature_c, _free_of(eq, metal_ids, 0)))
    return tuple(rows)


def _notes(spec: FreeMetalSpec, catalog: Catalog) -> tuple[str, ...]:
    """Words on the constants behind the design: recalled constants say so."""
    notes = []
    for reagent_id in spec.chelators:
        system_id = catalog.reagents[reagent_id].system_id
        assert system_id is not None
        recalled = [m.metal for m in catalog.metal_binding_of(system_id, selected_only=True)
                    if m.log_k is not None and m.source_kind == "from-memory" and m.metal in spec.free_mol_l]
        steps = [s for s in catalog.systems[system_id].steps if s.pka_25c.source_kind == "from-memory"]
        if recalled or steps:
            notes.append(f"the {system_id} constants ({', '.join(sorted(set(recalled)))} binding"
                         f"{' and pKa values' if steps else ''}) are recalled, not read in a source (from memory): "
                         "measure the free metal (a calibrated electrode or indicator) before relying on it")
    return tuple(notes)


def free_metal_recipe(design: FreeMetalDesign, catalog: Catalog | None = None, prices=None):
    """The bench recipe of a design through the shared recipe path
    (:func:`selector.recipe.bench.bench_recipe`), weighing each chelator at its stated purity."""
    from selector.recipe.bench import bench_recipe
    from selector.spec import make_spec

    catalog = catalog if catalog is not None else load_catalog()
    reagents = dict(catalog.reagents)
    weighed = dict(design.composition)
    for reagent_id in design.spec.chelators:
        reagents[reagent_id] = dataclasses.replace(reagents[reagent_id],
                                                   purity_fraction=design.spec.purity.get(reagent_id, 1.0))
    stated = dataclasses.replace(catalog, reagents=reagents)
    spec = make_spec(ph=design.ph, temperature_c=design.spec.temperature_c,
                     prep_temperature_c=design.spec.temperature_c, volume_l=design.spec.volume_l,
                     counter_ion=design.spec.counter_ion)
    return bench_recipe(weighed, spec, stated, prices, route="free metal")


def parse_free_metal_spec(free: Sequence[str], chelators: Sequence[str], ph: float, temperature_c: float = 25.0,
                          ionic_strength: str | None = None, buffers: Sequence[str] = (), purity: Sequence[str] = (),
                          counter_ion: str = "K", volume: str = "1L",
                          catalog: Catalog | None = None) -> FreeMetalSpec:
    """A :class:`FreeMetalSpec` from the text a user types (the CLI's and the app's inputs).

    ``free``: ``Ca=100nM`` items; ``chelators``: ``EGTA=2mM``; ``buffers``: ``hepes=20mM``;
    ``purity``: ``EGTA=98%``; ``ionic_strength``: ``0.1`` or ``100mM``; ``volume``: ``1L``.
    Each item may hold several pairs separated by spaces, commas or semicolons.
    """
    from selector.recipe.mix import parse_pairs
    from selector.units import parse_amount, parse_fraction, parse_ionic_strength, parse_volume

    catalog = catalog if catalog is not None else load_catalog()

    def pairs(items, what):
        out: dict[str, str] = {}
        for item in items:
            out.update(parse_pairs(item, what))
        return out

    ions = {i.lower(): i for i in catalog.ions}
    free_mol_l = {}
    for name, amount in pairs(free, "--free").items():
        metal = ions.get(name.lower())
        if metal is None or catalog.ions[metal].charge < 2:
            known = sorted(i for i, ion in catalog.ions.items() if ion.charge >= 2)
            raise InputError(f"--free {name}: not a metal ion of the catalog; use one of {', '.join(known)}")
        free_mol_l[metal] = parse_amount(amount, what=f"--free {name}")
    chelator_mol_l = {resolve_reagent(n, catalog): parse_amount(a, what=f"--chelator {n}")
                      for n, a in pairs(chelators, "--chelator").items()}
    buffer_mol_l = {resolve_system(n, catalog): parse_amount(a, what=f"--buffer {n}")
                    for n, a in pairs(buffers, "--buffer").items()}
    purities = {resolve_reagent(n, catalog): parse_fraction(a, what=f"--purity {n}")
                for n, a in pairs(purity, "--purity").items()}
    return FreeMetalSpec(
        free_mol_l=free_mol_l, chelators=chelator_mol_l, ph=float(ph), temperature_c=float(temperature_c),
        ionic_strength_mol_l=None if ionic_strength in (None, "") else parse_ionic_strength(
            ionic_strength, what="--ionic-strength"),
        buffers=buffer_mol_l, purity=purities, counter_ion=counter_ion,
        volume_l=parse_volume(volume, what="--volume"))


def _conc_text(conc_mol_l: float) -> str:
    """``1.025 mM``, ``100 nM``: a concentration in the unit that reads best."""
    for unit, factor in (("M", 1.0), ("mM", 1e-3), ("µM", 1e-6), ("nM", 1e-9)):
        if abs(conc_mol_l) >= 0.9995 * factor:
            return f"{conc_mol_l / factor:.4g} {unit}"
    return f"{conc_mol_l / 1e-12:.4g} pM"


def design_text(design: FreeMetalDesign) -> str:
    """The design in words: one line per metal (asked, to add, re-solved), the titrant, the
    salt, the sensitivity table and the notes (the text output of ``poise metal``)."""
    spec = design.spec
    metals = list(spec.free_mol_l)
    lines = [f"Free metal at pH {spec.ph:g}, {spec.temperature_c:g} °C, I = {design.ionic_strength_mol_l:.4g} mol/L "
             f"with {', '.join(f'{r} {_conc_text(c)}' for r, c in spec.chelators.items())}", ""]
    lines.append("metal  asked free  total to add  free (re-solved)  salt")
    for x in metals:
        lines.append(f"{x}  {_conc_text(spec.free_mol_l[x])}  {_conc_text(design.total_metal_mol_l[x])}  "
                     f"{_conc_text(design.free_metal_mol_l[x])}  {design.metal_reagents[x]}")
    lines.append("")
    if design.titrant_id:
        lines.append(f"Titrant to hold pH {spec.ph:g}: {design.titrant_id} {_conc_text(design.titrant_mol_l)} "
                     "in the final solution.")
    if design.salt_id:
        lines.append(f"Salt for the ionic strength: {design.salt_id} {_conc_text(design.salt_mol_l)}.")
    lines += ["", "Sensitivity (metal and chelator as weighed; pH and purity rows titrated to the meter, temperature rows as made)",
              "change  pH  " + "  ".join(f"free {x}" for x in metals)]
    for row in design.sensitivity:
        lines.append(f"{row.change}  {row.ph:.3f}  " + "  ".join(
            f"{_conc_text(row.free_mol_l[x])} ({row.free_mol_l[x] / spec.free_mol_l[x] - 1:+.1%})" for x in metals))
    if design.notes:
        lines += ["", *(f"Note: {n}." for n in design.notes)]
    return "\n".join(lines)
