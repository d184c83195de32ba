"""Which buffer systems and reagents a spec admits, and why the others are left out.

Rules, applied to every catalog system in this order (every reason that applies is kept):

1. **Hazardous** systems (``hazardous = true`` in the catalog) only with ``allow_hazardous``;
   the exclusion flag ``hazardous`` removes them even then.
2. **Excluded flags**: a system carrying a flag the spec excludes (``primary_amine``,
   ``cis_diol_binding`` ...); the extra flag ``phosphate`` removes orthophosphate and
   pyrophosphate.
3. **UV**: a system whose UV cut-off is at or above the detection wavelength absorbs there.
4. **Metals** the spec limits: a system that *precipitates* the metal (the catalog's flag,
   applied when the metal has no stated concentration or no catalog solid of the pair: with
   ``Ca:0.05@2mM`` the saturation indices of the verified mix decide instead), or that binds it by a
   qualitative statement only (weak, moderate, strong; no constant to put in the linear
   model), or by constants of complexes that are not 1:1 with the divalent ion (cyanides:
   :func:`selector.chemistry.linear.is_linear_binding`), or that the catalog says nothing
   about for that metal, is left out — the safe side, as
   :data:`selector.chemistry.linear.QUALITATIVE_LOG_K` treats them.  Systems with a selected
   1:1 constant stay in; the optimiser limits their amount.
5. **Useful range**: a system with no step whose conditional pKa' (use temperature, the
   spec's ionic strength or 0.1 mol/L) lies within ±1 of the target pH
   (:data:`selector.chemistry.thermo.USEFUL_RANGE_HALF_WIDTH_PH`, common practice: at
   pKa ± 1 a monoprotic pair keeps a third of its peak capacity).  Far from its pKa a system buffers only at absurd
   concentrations, which the cost objective would otherwise pick when it is cheap.
6. **Reagents**: a system none of whose reagents survive the reagent filters below.

Reagent filters (buffer reagents only):

- counter-ion (:func:`counter_ion_conflict`, the one rule recipes use too): ``Na``: no
  cation but Na⁺; ``K``: none but K⁺; ``none``: only free acid/base forms and their
  hydrochlorides (ions ⊆ {H⁺, Cl⁻}: Tris-HCl is Tris plus HCl); ``any``: no filter.
- ``in_stock``: only the listed reagents.
- with a price book: a reagent without a price cannot be costed and is left out.

Candidates beside the buffer reagents: the titrants of :func:`titrant_ids`, HCl as the acid
and as the base NaOH (counter-ion ``Na`` or ``any``), KOH (``K``) or none (``none``); the
spec's salt (NaCl or KCl, the user's explicit choice, kept even where it differs from the
counter-ion); and every reagent of ``fixed_amounts``.  With an ``in_stock`` list, a titrant
or the salt is a candidate only if the list has it; the ones it lacks are kept in
``not_in_stock`` so that a message can say which is missing.
"""

from __future__ import annotations

import functools
from collections.abc import Collection
from dataclasses import dataclass

from catalog import Catalog, load_catalog
from catalog.records import Reagent, System
from selector.chemistry.linear import QUALITATIVE_LOG_K, is_linear_binding
from selector.chemistry.thermo import USEFUL_RANGE_HALF_WIDTH_PH, apparent_pka
from selector.errors import InfeasibleSpecError, InputError
from selector.prices import PriceBook
from selector.spec import TRACE_METAL_CONC_MOL_L, BufferSpec

ACID_TITRANT = "hcl"
BASE_TITRANT: dict[str, str | None] = {"Na": "naoh", "any": "naoh", "K": "koh", "none": None}
SALT_REAGENT = {"NaCl": "nacl", "KCl": "kcl"}
#: The strong acid or base an acid or base load is modelled as (a load is a titration).
LOAD_REAGENT: dict[str, str] = {"acid": ACID_TITRANT, "base": "naoh"}
#: Ions any buffer reagent may carry whatever the counter-ion choice: the proton of a free
#: acid and the chloride of a hydrochloride (Tris-HCl is Tris plus HCl).
FREE_FORM_IONS = frozenset({"H", "Cl"})
#: Cations each counter-ion choice admits in a buffer reagent beside :data:`FREE_FORM_IONS`
#: (None: any).
COUNTER_ION_CATIONS: dict[str, frozenset[str] | None] = {
    "Na": frozenset({"Na"}), "K": frozenset({"K"}), "none": frozenset(), "any": None}

#: Ionic strength assumed for the useful-range test when the spec sets none [mol/L].
DEFAULT_IONIC_STRENGTH_MOL_L = 0.1
#: Slack on the useful-range test [pH], so a pKa' shown as exactly 1.00 away is not left
#: out by rounding.
USEFUL_RANGE_SLACK_PH = 0.005

__all__ = [
    "ACID_TITRANT", "BASE_TITRANT", "COUNTER_ION_CATIONS", "DEFAULT_IONIC_STRENGTH_MOL_L", "FREE_FORM_IONS",
    "LOAD_REAGENT", "SALT_REAGENT", "USEFUL_RANGE_HALF_WIDTH_PH", "Admissible", "Exclusion",
    "admissible", "conditional_pka", "counter_ion_conflict", "ion_label", "metal_reagent", "titrant_ids",
]


def titrant_ids(counter_ion: str) -> tuple[str, str | None]:
    """(acid id, base id or None) of the strong titrants a counter-ion choice admits.

    HCl is always the acid; the base is NaOH (counter-ion ``Na`` or ``any``), KOH (``K``)
    or none (``none``: free acid/base forms only).

    Examples
    --------
    >>> titrant_ids("K"), titrant_ids("none")
    (('hcl', 'koh'), ('hcl', None))
    """
    return ACID_TITRANT, BASE_TITRANT[counter_ion]


def _charged(ion_id: str, catalog: Catalog) -> str:
    """``K`` -> ``K⁺``, ``Ca`` -> ``Ca²⁺`` from the catalog's ion charges."""
    charge = catalog.ions[ion_id].charge
    size = "" if abs(charge) == 1 else str(abs(charge)).translate(str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹"))
    return f"{ion_id}{size}{'⁺' if charge > 0 else '⁻'}"


def counter_ion_conflict(reagent: Reagent, counter_ion: str, catalog: Catalog) -> str | None:
    """Why a buffer reagent breaks the spec's counter-ion choice, or None if it keeps it.

    The rule: every ion of the reagent outside :data:`FREE_FORM_IONS` must be a cation the
    choice admits (:data:`COUNTER_ION_CATIONS`): ``Na`` only Na⁺, ``K`` only K⁺, ``none``
    none (free acid/base forms and their hydrochlorides), ``any`` everything.
    """
    admitted = COUNTER_ION_CATIONS[counter_ion]
    if admitted is None:
        return None
    foreign = [ion for ion, _ in reagent.ions if ion not in FREE_FORM_IONS and ion not in admitted]
    if not foreign:
        return None
    if not admitted:
        return f"is a salt (counter-ion {counter_ion})"
    return f"contains {', '.join(_charged(ion, catalog) for ion in foreign)} (counter-ion {counter_ion})"


def conditional_pka(system_id: str, ph: float, temperature_c: float, ionic_strength_mol_l: float,
                    catalog: Catalog | None = None, activity: str = "davies") -> float:
    """pKa' of the step of ``system_id`` nearest ``ph`` at T and I.

    Parameters
    ----------
    system_id : str
        Catalog system id.
    ph : float
        pH the nearest step is chosen for [pH].
    temperature_c : float
        Temperature [°C].
    ionic_strength_mol_l : float
        Ionic strength [mol/L]; a negative value counts as 0.
    catalog : Catalog, optional
        The catalog (default: the shipped one).
    activity : str
        Activity model name.

    Notes
    -----
    pKa'_j from :func:`selector.chemistry.thermo.apparent_pka` (integrated van 't Hoff
    equation and the activity correction of the step's charges).
    """
    catalog = catalog if catalog is not None else load_catalog()
    system = catalog.systems[system_id]
    steps = system.steps
    values = _apparent_pkas(tuple(s.pka_25c.value for s in steps), tuple(s.dh_kj_mol.value for s in steps),
                            tuple(s.dcp_j_k_mol.value for s in steps), float(temperature_c),
                            float(max(ionic_strength_mol_l, 0.0)),
                            tuple(system.charge_most_protonated - (s.step - 1) for s in steps), activity)
    return min(values, key=lambda v: abs(v - ph))


@functools.lru_cache(maxsize=4096)
def _apparent_pkas(pka_25c: tuple[float, ...], dh_kj_mol: tuple[float, ...], dcp_j_k_mol: tuple[float, ...],
                   temperature_c: float, ionic_strength_mol_l: float, acid_charge: tuple[int, ...],
                   activity: str) -> tuple[float, ...]:
    """The pKa' of each step (:func:`apparent_pka`), kept per set of constants and conditions.

    A ranking asks for the same system's pKa' at the same T and I several times (the
    admission test, the excluded and infeasible rows, each remedy's re-solve); the key is
    the values themselves, so a changed constant is a new entry.
    """
    values = apparent_pka(list(pka_25c), list(dh_kj_mol), list(dcp_j_k_mol), temperature_c, ionic_strength_mol_l,
                          list(acid_charge), activity)
    return tuple(float(v) for v in values)


def metal_reagent(metal: str, catalog: Catalog) -> str:
    """The reagent that puts ``metal`` into a verified solution: its salt without a buffer
    system (the chloride, MCl₂), else its salt with the fewest other ions (CuSO₄, NiSO₄:
    the sulfate is then a system of the solution, never counted as binding the metal).

    Raises
    ------
    InputError
        no catalog reagent carries the metal.
    """
    salts = [r for r in catalog.reagents.values() if any(ion == metal for ion, _ in r.ions)]
    if not salts:
        raise InputError(f"no reagent in the catalog carries {ion_label(metal)}; its concentration cannot be checked")
    return min(salts, key=lambda r: (r.system_id is not None, len(r.ions), r.hydrate_water, r.reagent_id)).reagent_id


def has_solid_with(system_id: str, metal: str, catalog: Catalog) -> bool:
    """Whether a catalog solid (``solids.csv``) holds both ``metal`` and a species of ``system_id``
    (``phosphate(-3)`` is a species of ``phosphate``), so that its saturation can be computed."""
    return any(any(token == metal for token, _ in solid.components)
               and any(token.partition("(")[0] == system_id for token, _ in solid.components)
               for solid in catalog.solids.values())


def ion_label(metal: str) -> str:
    """``Ca`` -> ``Ca²⁺`` (every metal a spec may name is divalent)."""
    return f"{metal}²⁺"


@dataclass(frozen=True)
class Exclusion:
    """A system the spec leaves out, with every reason in words."""

    system_id: str
    reasons: tuple[str, ...]

    @property
    def reason(self) -> str:
        return "; ".join(self.reasons)


@dataclass(frozen=True)
class Admissible:
    """The systems and reagents a spec admits.

    Attributes
    ----------
    systems : admitted system ids (each with at least one admitted reagent), catalog order
    reagents : admitted reagent ids: buffer reagents, then titrants, salt, fixed extras
    acid_id, base_id : titrant reagent ids (base None for counter-ion "none"; either None
        when the stock list lacks it)
    salt_id : the salt reagent id of the spec (a candidate only if in ``reagents``)
    excluded : one :class:`Exclusion` per left-out system, catalog order
    not_in_stock : titrant and salt ids the spec's stock list leaves out
    """

    systems: tuple[str, ...]
    reagents: tuple[str, ...]
    acid_id: str | None
    base_id: str | None
    salt_id: str
    excluded: tuple[Exclusion, ...]
    not_in_stock: tuple[str, ...] = ()

    def reason(self, system_id: str) -> str | None:
        """Why ``system_id`` is left out, or None if it is admitted."""
        for exclusion in self.excluded:
            if exclusion.system_id == system_id:
                return exclusion.reason
        return None


def _reagent_allowed(reagent: Reagent, spec: BufferSpec, prices: PriceBook | None, catalog: Catalog) -> str | None:
    """None if a buffer reagent passes the filters, else the filter that removes it."""
    conflict = counter_ion_conflict(reagent, spec.counter_ion, catalog)
    if conflict is not None:
        return conflict
    if spec.in_stock is not None and reagent.reagent_id not in spec.in_stock:
        return "not in stock"
    if prices is not None and prices.price_per_kg(reagent.reagent_id) is None:
        return "no price"
    return None


def _metal_reasons(system_id: str, spec: BufferSpec, catalog: Catalog) -> list[str]:
    reasons = []
    order = list(QUALITATIVE_LOG_K)
    for limit in spec.metals:
        rows = [m for m in catalog.metal_binding_of(system_id, selected_only=True) if m.metal == limit.metal]
        if not rows:
            # Nothing in the catalog says how it binds: the limit cannot be checked (safe side).
            reasons.append(f"no binding data for {ion_label(limit.metal)} in the catalog (the limit cannot be "
                           "checked)")
            continue
        if any(m.qualitative == "precipitates" for m in rows):
            if limit.conc_mol_l == TRACE_METAL_CONC_MOL_L or not has_solid_with(system_id, limit.metal, catalog):
                reasons.append(f"precipitates {ion_label(limit.metal)}")   # the catalog flag: nothing to compute
                continue
            if not any(m.log_k is not None for m in rows):   # computed instead: saturation indices at the conc
                continue
        if any(is_linear_binding(m) for m in rows):
            continue
        if any(m.log_k is not None for m in rows):
            reasons.append(f"binds {ion_label(limit.metal)} (constants of complexes that are not 1:1 with "
                           f"{ion_label(limit.metal)} only; not placed in the linear model)")
            continue
        worst = max((m.qualitative for m in rows), key=order.index)
        if QUALITATIVE_LOG_K[worst] is None:
            reasons.append(f"binds {ion_label(limit.metal)} (qualitative: {worst}; no constant in the catalog)")
    return reasons


#: How a required flag reads in a reason ("not volatile for LC-MS (required)").
FLAG_WORDS = {"volatile_ms": "volatile for LC-MS"}


def _flag_reasons(system: System, spec: BufferSpec, catalog: Catalog) -> list[str]:
    """Rules 1-2: hazard and the excluded flags."""
    reasons = []
    if system.hazardous and not spec.allow_hazardous:
        reasons.append("hazardous (admit with allow_hazardous / --allow-hazardous)")
    if system.hazardous and "hazardous" in spec.exclude:
        reasons.append("hazardous (excluded)")
    flags = {f.flag for f in catalog.flags_of(system.system_id)}
    reasons += [f"{flag.replace('_', ' ')} (excluded)" for flag in spec.exclude if flag in flags]
    reasons += [f"not {FLAG_WORDS.get(flag, flag.replace('_', ' '))} (required)" for flag in spec.require
                if flag not in flags]
    fixed = {catalog.reagents[r].system_id for r, _ in spec.fixed_amounts}
    if "chelating_agent" in flags and system.system_id not in fixed:
        reasons.append("a chelating agent (it sets the free metal), not offered as a pH buffer; "
                       "give it as a fixed amount to include it")
    return reasons


def _uv_reasons(system_id: str, spec: BufferSpec, catalog: Catalog) -> list[str]:
    """Rule 3: a UV cut-off at or above the detection wavelength."""
    cutoff = catalog.uv_cutoffs.get(system_id)
    if spec.uv_nm is None or cutoff is None or cutoff.uv_cutoff_nm.value < spec.uv_nm:
        return []
    return [f"absorbs at {spec.uv_nm:g} nm (UV cut-off about {cutoff.uv_cutoff_nm.value:g} nm)"]


def _range_reasons(system_id: str, spec: BufferSpec, catalog: Catalog) -> list[str]:
    """Rule 5: no step's pKa' within :data:`USEFUL_RANGE_HALF_WIDTH_PH` of the target."""
    ionic = spec.ionic_strength_mol_l if spec.ionic_strength_mol_l is not None else DEFAULT_IONIC_STRENGTH_MOL_L
    nearest = conditional_pka(system_id, spec.ph, spec.temperature_c, ionic, catalog)
    if abs(nearest - spec.ph) <= USEFUL_RANGE_HALF_WIDTH_PH + USEFUL_RANGE_SLACK_PH:
        return []
    return [f"pH {spec.ph:g} is outside its useful range: nearest pKa' {nearest:.2f} at "
            f"{spec.temperature_c:g} °C (buffers {nearest - USEFUL_RANGE_HALF_WIDTH_PH:.2f}-"
            f"{nearest + USEFUL_RANGE_HALF_WIDTH_PH:.2f})"]


def _system_reasons(system: System, spec: BufferSpec, catalog: Catalog) -> list[str]:
    """Every reason of rules 1-5 that leaves ``system`` out (empty: it may stay)."""
    sid = system.system_id
    return (_flag_reasons(system, spec, catalog) + _uv_reasons(sid, spec, catalog)
            + _metal_reasons(sid, spec, catalog) + _range_reasons(sid, spec, catalog))


def _check_fixed_amounts(spec: BufferSpec, excluded: list[Exclusion], catalog: Catalog) -> None:
    """Raise if a reagent of ``fixed_amounts`` belongs to an excluded system."""
    exclusion_of = {e.system_id: e for e in excluded}
    for reagent_id, _ in spec.fixed_amounts:
        system_id = catalog.reagents[reagent_id].system_id
        if system_id in exclusion_of:
            reason = exclusion_of[system_id].reason
            raise InfeasibleSpecError(
                f"fixed amount of {catalog.reagents[reagent_id].name}: its system {system_id} is excluded "
                f"({reason})", [f"fixed amount: {reagent_id} belongs to excluded {system_id} ({reason})"])


def admissible(spec: BufferSpec, catalog: Catalog | None = None,
               prices: PriceBook | None = None, only: Collection[str] | None = None) -> Admissible:
    """The systems and reagents ``spec`` admits, and a reason for each excluded system.

    ``only``: judge just these systems (and those of ``fixed_amounts``); the others are
    neither admitted nor listed as excluded (a check of one system skips the rest).

    Raises
    ------
    InfeasibleSpecError
        if a reagent of ``fixed_amounts`` belongs to a system the spec excludes.
    """
    catalog = catalog if catalog is not None else load_catalog()
    by_system: dict[str, list[str]] = {}
    for reagent in catalog.reagents.values():
        if reagent.system_id is not None:
            by_system.setdefault(reagent.system_id, []).append(reagent.reagent_id)
    systems: list[str] = []
    reagents: list[str] = []
    excluded: list[Exclusion] = []
    judged: set[str | None] | None = None
    if only is not None:
        judged = set(only) | {catalog.reagents[r].system_id for r, _ in spec.fixed_amounts}
    for system in catalog.systems.values():
        sid = system.system_id
        if judged is not None and sid not in judged:
            continue
        reasons = _system_reasons(system, spec, catalog)
        why_not = {r: _reagent_allowed(catalog.reagents[r], spec, prices, catalog) for r in by_system.get(sid, [])}
        kept = [r for r, why in why_not.items() if why is None]
        if not kept and not reasons:
            whys = sorted({why for why in why_not.values() if why}) or ["no reagent in the catalog"]
            reasons.append("no usable reagent (" + ", ".join(whys) + ")")
        if reasons:
            excluded.append(Exclusion(sid, tuple(reasons)))
        else:
            systems.append(sid)
            reagents += kept
    _check_fixed_amounts(spec, excluded, catalog)
    acid, base = titrant_ids(spec.counter_ion)
    salt_id = SALT_REAGENT[spec.salt]
    wanted = [r for r in (acid, base, salt_id) if r]
    not_in_stock = tuple(r for r in wanted if spec.in_stock is not None and r not in spec.in_stock)
    extras = [r for r in wanted if r not in not_in_stock]
    acid_id, base_id = (None if r in not_in_stock else r for r in (acid, base))
    for reagent_id, _ in spec.fixed_amounts:
        system_id = catalog.reagents[reagent_id].system_id
        if system_id is not None and system_id not in systems:
            systems.append(system_id)
        extras.append(reagent_id)
    reagents += [r for r in dict.fromkeys(extras) if r not in reagents]
    return Admissible(tuple(systems), tuple(reagents), acid_id, base_id, salt_id, tuple(excluded), not_in_stock)
