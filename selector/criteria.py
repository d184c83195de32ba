"""The ranking's criteria: each feasible system's value, unit and 0-1 score at the spec.

Each criterion of :data:`selector.profiles.CRITERIA` is measured on the verified mix (the
exact engine's figures, the catalog's flags and UV cut-offs, the price book) and scored
from 0 (worst) to 1 (best) by the rule in :data:`RULES`; the suitability score of a system
is the weighted mean of its scores under a profile's weights (:func:`weighted_score`).
Criteria that do not apply to a spec (``metal_bound`` without metals) are left out of the
mean.  The scoring rules are common practice unless the rule names a source:

========================  ==========================  ========================================
criterion                 value [unit]                score
========================  ==========================  ========================================
``distance``              |pH − pKa′| [pH]            4r/(1 + r)², r = 10^|pH − pKa′|: the
                                                      capacity of a conjugate pair relative to
                                                      its peak at pH = pKa′ (Van Slyke form of
                                                      β, from memory); 0.73 at 0.5, 0.33 at 1
``capacity``              β per mM of buffer          value / (ln 10 / 4), at most 1: the
                          [mM/pH per mM]              share of a monoprotic pair's largest
                                                      β = ln10·C/4 (Van Slyke, from memory)
``drift``                 |dpH/dT| [pH/K]             1 − value / 0.04, at least 0: 0.5 at
                                                      0.02 pH/K, the line between the low-drift
                                                      Good's buffers and the amine buffers
``temperature_shift``     largest |pH(T) − pH(T_use)| min(1, tolerance / value): exact pH at
                          over the preparation and    the preparation temperature and over
                          window temperatures [pH]    the window, against the spec's tolerance
``ionic_strength``        I of the buffer [mol/L]     1 − value / 0.3, at least 0
``metal_bound``           largest fraction bound of   1 − max(f / f_max) over the spec's
                          a listed metal [fraction]   metals
``uv_margin``             detection wavelength − UV   value / 40 nm within 0-1; 0.5 when the
                          cut-off [nm]                catalog has no cut-off; the detection
                                                      wavelength is the spec's, else 220 nm
``reactivity``            reactive-group flags        1 − 0.25 per flag, at least 0
                          [count]
``interference``          protein-assay flags [count] 1 − 0.5 per flag, at least 0
``biological``            biological-activity flags   1 − 0.5 per flag, at least 0
                          [count]
``volatility``            volatile for LC-MS [0/1]    1 if volatile, else 0
``cost``                  cost per litre [cur./L]     1 − log10(value / cheapest feasible) / 2,
                                                      at least 0 (0 at 100× the cheapest)
``uncertainty``           u(pH) of the verified mix   1 − value / 0.1, at least 0
                          [pH]
========================  ==========================  ========================================
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from catalog import Catalog
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.uncertainty import propagate_uncertainty
from selector.profiles import CRITERIA
from selector.spec import BufferSpec

__all__ = ["BIOLOGICAL_FLAGS", "Criterion", "INTERFERENCE_FLAGS", "MixFigures", "REACTIVITY_FLAGS", "RULES",
           "Rule", "measure_criteria", "weighted_score"]

#: Catalog flags (flags.csv) counted by ``reactivity``: groups that react with what an
#: assay adds or form radicals/peroxide, chelate metals or precipitate Ca/Mg.
REACTIVITY_FLAGS = frozenset({"primary_amine", "cis_diol_binding", "photo_peroxide", "redox_active", "unstable",
                              "metal_chelator", "ca_mg_precipitation"})
#: Flags counted by ``interference`` and ``biological``.
INTERFERENCE_FLAGS = frozenset({"protein_assay_interference"})
BIOLOGICAL_FLAGS = frozenset({"biological_activity"})
#: The LC-MS volatility flag.
VOLATILE_FLAG = "volatile_ms"
#: Largest β per mol of a monoprotic conjugate pair, at pH = pKa: ln10/4 [mol/L per pH per
#: mol/L] (Van Slyke form of β, from memory).
PEAK_CAPACITY_PER_MOL = math.log(10.0) / 4.0
#: |dpH/dT| scored 0 [pH/K] (common practice: twice 0.02 pH/K, the drift the scientist's
#: rule of thumb accepts).
DRIFT_ZERO_PH_PER_K = 0.04
#: Ionic strength scored 0 [mol/L] (common practice: twice physiological).
IONIC_STRENGTH_ZERO_MOL_L = 0.3
#: UV margin scored 1 [nm] and the wavelength assumed when the spec names none [nm]
#: (common practice: low-UV detection of peptide bonds).
UV_MARGIN_FULL_NM = 40.0
REFERENCE_DETECTION_NM = 220.0
#: Score of a criterion the catalog has no data for (common practice: neither good nor bad).
UNKNOWN_SCORE = 0.5
#: Score lost per flag (common practice).
REACTIVITY_PENALTY = 0.25
FLAG_PENALTY = 0.5
#: Cost scored 0 at this many decades above the cheapest feasible system (common practice:
#: buffer prices per litre span about two decades).
COST_DECADES_ZERO = 2.0
#: u(pH) scored 0 [pH] (common practice: a tenth of a pH unit is the whole tolerance of many assays).
UNCERTAINTY_ZERO_PH = 0.1


@dataclass(frozen=True)
class MixFigures:
    """A feasible system's verified figures (every one present), the input of the criteria.

    Attributes
    ----------
    system_id, name : the system
    mix : reagent id -> mol/L
    conc_mol_l : total buffer concentration [mol/L]
    pka_at_use : pKa' of the step nearest the target at use [pH]
    distance_ph : |pH − pKa'| [pH]
    capacity_mol_l_per_ph : β [mol/L per pH]
    dph_dt_per_k : dpH/dT at use [pH/K]
    dilution_value_ph : ΔpH½ [pH]
    ionic_strength_mol_l : I [mol/L]
    bound_fraction : metal -> fraction bound (exact, at the metal's concentration, worst over
        the window)
    cost_per_l : [currency/L]
    binding : the constraints that set the mix
    ph_by_temperature : exact pH at each grid temperature [°C -> pH]
    saturation_indices : solid id -> SI with the listed metals (use or preparation temperature,
        the larger)
    precipitation : the warnings of the supersaturated solids (``brushite SI +0.40 at 37 °C …``)
    ph_with_metals : pH at use with the spec's metals at their concentrations (None without)
    ph_at_preparation : exact pH at the preparation temperature, from the verification batch
        (None: not solved there, the criteria solve it)
    """

    system_id: str
    name: str
    mix: dict[str, float]
    conc_mol_l: float
    pka_at_use: float
    distance_ph: float
    capacity_mol_l_per_ph: float
    dph_dt_per_k: float
    dilution_value_ph: float
    ionic_strength_mol_l: float
    bound_fraction: dict[str, float]
    cost_per_l: float
    binding: tuple[str, ...]
    ph_by_temperature: dict[float, float] = field(default_factory=dict)
    saturation_indices: dict[str, float] = field(default_factory=dict)
    precipitation: tuple[str, ...] = ()
    ph_with_metals: float | None = None
    ph_at_preparation: float | None = None


@dataclass(frozen=True)
class Criterion:
    """One criterion of one system: its value [unit] (None: no data) and its 0-1 score."""

    name: str
    value: float | None
    unit: str
    score: float

    def as_json(self) -> dict:
        return {"value": self.value, "unit": self.unit, "score": self.score}

    def words(self, with_unit: bool = True) -> str:
        """The value as text: ``0.2052 pH`` (4 significant figures and the unit), ``yes``/``no``
        for a yes-or-no criterion (volatility), ``no data`` without a value; the one way
        reasons, the CLI and the app print a criterion."""
        if self.value is None:
            return "no data"
        rule = RULES.get(self.name)
        if rule is not None and rule.yes_no:
            return "yes" if self.value >= 0.5 else "no"
        return f"{self.value:.4g} {self.unit}" if with_unit else f"{self.value:.4g}"


@dataclass(frozen=True)
class Rule:
    """How a criterion is read: label, unit, which way is better, the scoring rule."""

    name: str
    label: str
    unit: str
    better: str            # "lower" or "higher"
    score: Callable[[float, "Context"], float]
    yes_no: bool = False   # the value is 1 (yes) or 0 (no), printed as words


@dataclass(frozen=True)
class Context:
    """What a score compares against: the spec and the cheapest feasible cost per litre."""

    spec: BufferSpec
    cheapest_per_l: float


def _clip(value: float) -> float:
    return float(min(1.0, max(0.0, value)))


def _distance_score(d: float, _: Context) -> float:
    r = 10.0 ** d
    return _clip(4.0 * r / (1.0 + r) ** 2)


def _shift_score(shift: float, ctx: Context) -> float:
    return 1.0 if shift <= ctx.spec.tolerance_ph else _clip(ctx.spec.tolerance_ph / shift)


def _metal_score(fraction_of_limit: float, _: Context) -> float:
    return _clip(1.0 - fraction_of_limit)


def _cost_score(cost: float, ctx: Context) -> float:
    if cost <= 0 or ctx.cheapest_per_l <= 0:
        return 1.0
    return _clip(1.0 - math.log10(cost / ctx.cheapest_per_l) / COST_DECADES_ZERO)


#: Criterion name -> its rule (the table of the module text).
RULES: dict[str, Rule] = {rule.name: rule for rule in (
    Rule("distance", "|pH − pKa′|", "pH", "lower", _distance_score),
    Rule("capacity", "β per mM", "mM/pH per mM", "higher", lambda v, _: _clip(v / PEAK_CAPACITY_PER_MOL)),
    Rule("drift", "|dpH/dT|", "pH/K", "lower", lambda v, _: _clip(1.0 - v / DRIFT_ZERO_PH_PER_K)),
    Rule("temperature_shift", "pH shift prep/window", "pH", "lower", _shift_score),
    Rule("ionic_strength", "ionic strength", "mol/L", "lower", lambda v, _: _clip(1.0 - v / IONIC_STRENGTH_ZERO_MOL_L)),
    Rule("metal_bound", "metal bound", "fraction", "lower", _metal_score),
    Rule("uv_margin", "UV margin", "nm", "higher", lambda v, _: _clip(v / UV_MARGIN_FULL_NM)),
    Rule("reactivity", "reactive groups", "flags", "lower", lambda v, _: _clip(1.0 - REACTIVITY_PENALTY * v)),
    Rule("interference", "assay interference", "flags", "lower", lambda v, _: _clip(1.0 - FLAG_PENALTY * v)),
    Rule("biological", "biological activity", "flags", "lower", lambda v, _: _clip(1.0 - FLAG_PENALTY * v)),
    Rule("volatility", "volatile (LC-MS)", "1 = volatile", "higher", lambda v, _: _clip(v), yes_no=True),
    Rule("cost", "cost per litre", "currency/L", "lower", _cost_score),
    Rule("uncertainty", "u(pH)", "pH", "lower", lambda v, _: _clip(1.0 - v / UNCERTAINTY_ZERO_PH)),
)}


def _exact_ph_and_uncertainty(figures: Sequence[MixFigures], spec: BufferSpec, catalog: Catalog,
                              activity: str) -> tuple[np.ndarray, np.ndarray]:
    """Exact pH at the preparation temperature and u(pH) at use of each mix.

    The preparation pH from the verification batch where every mix has it, else one batch for
    it; one batch for the use temperature (every mix on the union of their reagents), and the
    uncertainty of the whole use batch in one
    :func:`selector.chemistry.uncertainty.propagate_uncertainty` call (a perturbed constant
    moves only the mixes holding its system).  Where a mix holds a complexing metal the
    batch would go to the complexation solver as a whole, so then each mix is taken alone.
    """
    ids = list(dict.fromkeys(r for f in figures for r in f.mix))
    rows = np.array([[f.mix.get(r, 0.0) for r in ids] for f in figures])
    known = [f.ph_at_preparation for f in figures]
    if all(ph is not None for ph in known):
        prep_ph = np.array(known, dtype=float)
    else:
        prep_ph = np.asarray(solve_equilibrium(ids, rows, spec.prep_temperature_c, catalog=catalog,
                                               activity=activity, strict=False).ph, dtype=float)
    use = solve_equilibrium(ids, rows, spec.temperature_c, catalog=catalog, activity=activity, strict=False)
    if use.speciation.metals is None:
        return prep_ph, np.asarray(propagate_uncertainty(use, catalog, activity).ph, dtype=float)
    u_ph = np.full(len(figures), np.nan)
    for n, f in enumerate(figures):     # one small batch per mix: the metal routing of its own
        mine = [r for r in f.mix]
        alone = solve_equilibrium(mine, [[f.mix[r] for r in mine]], spec.temperature_c, catalog=catalog,
                                  activity=activity, strict=False)
        u_ph[n] = float(propagate_uncertainty(alone, catalog, activity).ph[0])
    return prep_ph, u_ph


def _flag_counts(system_id: str, catalog: Catalog) -> dict[str, float]:
    flags = {f.flag for f in catalog.flags_of(system_id)}
    return {"reactivity": float(len(flags & REACTIVITY_FLAGS)),
            "interference": float(len(flags & INTERFERENCE_FLAGS)),
            "biological": float(len(flags & BIOLOGICAL_FLAGS)),
            "volatility": 1.0 if VOLATILE_FLAG in flags else 0.0}


def _temperature_shift(f: MixFigures, prep_ph: float, spec: BufferSpec) -> float:
    """Largest |pH(T) − target| over the preparation temperature and the window [pH]."""
    shifts = [abs(ph - spec.ph) for ph in f.ph_by_temperature.values() if math.isfinite(ph)]
    if spec.prep_temperature_c != spec.temperature_c and math.isfinite(prep_ph):
        shifts.append(abs(prep_ph - spec.ph))
    return max(shifts, default=0.0)


def _values(f: MixFigures, prep_ph: float, u_ph: float, spec: BufferSpec,
            catalog: Catalog) -> dict[str, float | None]:
    """Each applicable criterion's value for one mix (None: no data)."""
    values: dict[str, float | None] = {
        "distance": f.distance_ph,
        "capacity": f.capacity_mol_l_per_ph / f.conc_mol_l if f.conc_mol_l > 0 else 0.0,
        "drift": abs(f.dph_dt_per_k),
        "temperature_shift": _temperature_shift(f, prep_ph, spec),
        "ionic_strength": f.ionic_strength_mol_l,
    }
    if spec.metals:
        values["metal_bound"] = max(f.bound_fraction.get(m.metal, 0.0) for m in spec.metals)
    cutoff = catalog.uv_cutoffs.get(f.system_id)
    detection = spec.uv_nm if spec.uv_nm is not None else REFERENCE_DETECTION_NM
    values["uv_margin"] = None if cutoff is None else detection - cutoff.uv_cutoff_nm.value
    values.update(_flag_counts(f.system_id, catalog))
    values["cost"] = f.cost_per_l
    values["uncertainty"] = u_ph if math.isfinite(u_ph) else None
    return values


def _score(name: str, value: float | None, f: MixFigures, ctx: Context) -> float:
    if value is None:
        return UNKNOWN_SCORE
    if name == "metal_bound":    # the share of each metal's own limit that is used
        used = max(f.bound_fraction.get(m.metal, 0.0) / m.max_bound_fraction for m in ctx.spec.metals)
        return RULES[name].score(used, ctx)
    return RULES[name].score(value, ctx)


def measure_criteria(figures: Sequence[MixFigures], spec: BufferSpec, catalog: Catalog,
                     activity: str = "davies", currency: str = "EUR") -> list[dict[str, Criterion]]:
    """Every applicable criterion of each feasible mix, with value, unit and score.

    Parameters
    ----------
    figures : the verified mixes of the feasible systems
    spec : the spec they were solved for
    catalog : the catalog used throughout (flags, UV cut-offs, constants)
    activity : the activity model of the solve
    currency : of the price book (the unit of ``cost``)

    Returns
    -------
    list of dict
        per mix, criterion name -> :class:`Criterion`, in :data:`selector.profiles.CRITERIA` order.
    """
    if not figures:
        return []
    prep_ph, u_ph = _exact_ph_and_uncertainty(figures, spec, catalog, activity)
    ctx = Context(spec, min(f.cost_per_l for f in figures))
    out = []
    for f, prep, u in zip(figures, prep_ph, u_ph):
        values = _values(f, float(prep), float(u), spec, catalog)
        out.append({name: Criterion(name, values[name], f"{currency}/L" if name == "cost" else RULES[name].unit,
                                    _score(name, values[name], f, ctx))
                    for name in CRITERIA if name in values})
    return out


def weighted_score(criteria: Mapping[str, Criterion], weights: Mapping[str, float]) -> float:
    """The suitability score: Σ w_c s_c / Σ w_c over the criteria present with w_c > 0.

    Returns 0 when no weighted criterion applies.

    Examples
    --------
    >>> c = {"drift": Criterion("drift", 0.01, "pH/K", 0.75), "cost": Criterion("cost", 1.0, "EUR/L", 0.25)}
    >>> weighted_score(c, {"drift": 3.0, "cost": 1.0})
    0.625
    """
    used = [(weights[name], c.score) for name, c in criteria.items() if weights.get(name, 0.0) > 0]
    total = sum(w for w, _ in used)
    return sum(w * s for w, s in used) / total if total > 0 else 0.0
