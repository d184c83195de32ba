"""Which buffer systems and reagents a spec admits, and why the others are left out.

Rules, applied to every catalog system in this order (every reason that applies is kept):

1. **Hazardous** systems (``hazardous = true`` in the catalog) only with ``allow_hazardous``;
   the exclusion flag ``hazardous`` removes them even then.
2. **Excluded flags**: a system carrying a flag the spec excludes (``primary_amine``,
   ``cis_diol_binding`` ...); the extra flag ``phosphate`` removes orthophosphate and
   pyrophosphate.
3. **UV**: a system whose UV cut-off is at or above the detection wavelength absorbs there.
4. **Metals** the spec limits: a system that *precipitates* the metal, or that binds it by a
   qualitative statement only (weak, moderate, strong; no constant to put in the linear
   model), or that the catalog says nothing about for that metal, is left out — the safe
   side, as :data:`selector.chemistry.linear.QUALITATIVE_LOG_K` treats them.  Systems with a published constant stay in; the optimiser limits their amount.
5. **Useful range**: a system with no step whose conditional pKa' (use temperature, the
   spec's ionic strength or 0.1 mol/L) lies within ±1 of the target pH
   (:data:`USEFUL_RANGE_HALF_WIDTH_PH`, common practice: at pKa ± 1 a monoprotic pair keeps
   a third of its peak capacity).  Far from its pKa a system buffers only at absurd
   concentrations, which the cost objective would otherwise pick when it is cheap.
6. **Reagents**: a system none of whose reagents survive the reagent filters below.

Reagent filters (buffer reagents only):

- counter-ion ``Na``: no reagent containing K⁺; ``K``: none containing Na⁺; ``none``: only
  free acid/base forms and their hydrochlorides (ions ⊆ {H⁺, Cl⁻}: Tris-HCl is Tris plus
  HCl); ``any``: no filter.
- ``in_stock``: only the listed reagents.
- with a price book: a reagent without a price cannot be costed and is left out.

Always candidates (whatever the stock list says; a lab has them): HCl as the acid titrant;
the base titrant NaOH (counter-ion ``Na`` or ``any``) or KOH (``K``), none for counter-ion
``none``; the spec's salt (NaCl or KCl, the user's explicit choice, kept even where it
differs from the counter-ion); and every reagent of ``fixed_amounts``.
"""

from __future__ import annotations

from dataclasses import dataclass

from catalog import Catalog, load_catalog
from selector.chemistry.activity import activity_model
from selector.chemistry.linear import QUALITATIVE_LOG_K
from selector.chemistry.thermo import pka_at_temperature
from selector.chemistry.water import debye_huckel_a
from selector.errors import InfeasibleSpecError
from selector.prices import PriceBook
from selector.spec import BufferSpec

ACID_TITRANT = "hcl"
BASE_TITRANT = {"Na": "naoh", "any": "naoh", "K": "koh", "none": None}
SALT_REAGENT = {"NaCl": "nacl", "KCl": "kcl"}
#: The strong acid or base an acid or base load is modelled as (a load is a titration).
LOAD_REAGENT = {"acid": ACID_TITRANT, "base": BASE_TITRANT["Na"]}
#: Systems the exclusion flag "phosphate" removes.
PHOSPHATE_SYSTEMS = ("phosphate", "pyrophosphate")
#: Ions a counter-ion choice of "none" allows in a buffer reagent.
FREE_FORM_IONS = frozenset({"H", "Cl"})


#: Half-width of a system's useful buffering range around each pKa' [pH] (common practice).
USEFUL_RANGE_HALF_WIDTH_PH = 1.0
#: Ionic strength assumed for the useful-range test when the spec sets none [mol/L].
DEFAULT_IONIC_STRENGTH_MOL_L = 0.1


def conditional_pka(system_id: str, ph: float, temperature_c: float, ionic_strength_mol_l: float,
                    catalog: Catalog | None = None, activity: str = "davies") -> float:
    """pKa' of the step of ``system_id`` nearest ``ph`` at T and I.

    Notes
    -----
    pKa'_j = pKa_j(T) + log10 γ₁ · (z_j² − z_{j−1}²), z_{j−1} and z_j the charges of the
    acid and base forms of step j (K'_j = K_j γ_{j−1}/γ_j), pKa_j(T) from the integrated van
    't Hoff equation (:func:`selector.chemistry.thermo.pka_at_temperature`).
    """
    catalog = catalog if catalog is not None else load_catalog()
    system = catalog.systems[system_id]
    log_g = float(activity_model(activity)(max(ionic_strength_mol_l, 0.0), debye_huckel_a(temperature_c)))
    values = []
    for step in system.steps:
        pka = float(pka_at_temperature(step.pka_25c.value, step.dh_kj_mol.value, step.dcp_j_k_mol.value,
                                       temperature_c))
        z_acid = system.charge_most_protonated - (step.step - 1)
        z_base = z_acid - 1
        values.append(pka + log_g * (z_base**2 - z_acid**2))
    return min(values, key=lambda v: abs(v - ph))


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
    acid_id, base_id : titrant reagent ids (base None for counter-ion "none")
    salt_id : the salt reagent id
    excluded : one :class:`Exclusion` per left-out system, catalog order
    """

    systems: tuple[str, ...]
    reagents: tuple[str, ...]
    acid_id: str
    base_id: str | None
    salt_id: str
    excluded: tuple[Exclusion, ...]

    def reason(self, system_id: str) -> str | None:
        """Why ``system_id`` is left out, or None if it is admitted."""
        for exclusion in self.excluded:
            if exclusion.system_id == system_id:
                return exclusion.reason
        return None


def _reagent_allowed(reagent, spec: BufferSpec, prices: PriceBook | None) -> str | None:
    """None if a buffer reagent passes the filters, else the filter that removes it."""
    ions = {ion for ion, _ in reagent.ions}
    if spec.counter_ion == "Na" and "K" in ions:
        return "contains K⁺ (counter-ion Na)"
    if spec.counter_ion == "K" and "Na" in ions:
        return "contains Na⁺ (counter-ion K)"
    if spec.counter_ion == "none" and not ions <= FREE_FORM_IONS:
        return "is a salt (counter-ion none)"
    if spec.in_stock is not None and reagent.reagent_id not in spec.in_stock:
        return "not in stock"
    if prices is not None and prices.price_per_kg(reagent.reagent_id) is None:
        return "no price"
    return None


def _metal_reasons(system_id: str, spec: BufferSpec, catalog: Catalog) -> list[str]:
    reasons = []
    order = list(QUALITATIVE_LOG_K)
    for limit in spec.metals:
        rows = [m for m in catalog.metal_binding_of(system_id) if m.metal == limit.metal]
        if not rows:
            # Nothing in the catalog says how it binds: the limit cannot be checked (safe side).
            reasons.append(f"no binding data for {ion_label(limit.metal)} in the catalog (the limit cannot be "
                           "checked)")
            continue
        if any(m.qualitative == "precipitates" for m in rows):
            reasons.append(f"precipitates {ion_label(limit.metal)}")
            continue
        if rows and not any(m.log_k is not None for m in rows):
            worst = max((m.qualitative for m in rows), key=order.index)
            if QUALITATIVE_LOG_K[worst] is None:
                reasons.append(f"binds {ion_label(limit.metal)} (qualitative: {worst}; no constant in the catalog)")
    return reasons


def admissible(spec: BufferSpec, catalog: Catalog | None = None,
               prices: PriceBook | None = None) -> Admissible:
    """The systems and reagents ``spec`` admits, and a reason for each excluded system.

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
    systems, reagents, excluded = [], [], []
    for system in catalog.systems.values():
        sid = system.system_id
        reasons: list[str] = []
        if system.hazardous and not spec.allow_hazardous:
            reasons.append("hazardous (admit with allow_hazardous / --allow-hazardous)")
        if system.hazardous and "hazardous" in spec.exclude:
            reasons.append("hazardous (excluded)")
        if "phosphate" in spec.exclude and sid in PHOSPHATE_SYSTEMS:
            reasons.append("phosphate (excluded)")
        flags = {f.flag for f in catalog.flags_of(sid)}
        for flag in spec.exclude:
            if flag in flags:
                reasons.append(f"{flag.replace('_', ' ')} (excluded)")
        cutoff = catalog.uv_cutoffs.get(sid)
        if spec.uv_nm is not None and cutoff is not None and cutoff.uv_cutoff_nm.value >= spec.uv_nm:
            reasons.append(f"absorbs at {spec.uv_nm:g} nm (UV cut-off about {cutoff.uv_cutoff_nm.value:g} nm)")
        reasons += _metal_reasons(sid, spec, catalog)
        ionic = spec.ionic_strength_mol_l if spec.ionic_strength_mol_l is not None else DEFAULT_IONIC_STRENGTH_MOL_L
        nearest = conditional_pka(sid, spec.ph, spec.temperature_c, ionic, catalog)
        # (0.005 pH of slack so a pKa' shown as exactly 1.00 away is not left out by rounding)
        if abs(nearest - spec.ph) > USEFUL_RANGE_HALF_WIDTH_PH + 0.005:
            reasons.append(f"pH {spec.ph:g} is outside its useful range: nearest pKa' {nearest:.2f} at "
                           f"{spec.temperature_c:g} °C (buffers {nearest - USEFUL_RANGE_HALF_WIDTH_PH:.2f}-"
                           f"{nearest + USEFUL_RANGE_HALF_WIDTH_PH:.2f})")
        kept, removed = [], []
        for reagent_id in by_system.get(sid, []):
            why = _reagent_allowed(catalog.reagents[reagent_id], spec, prices)
            (removed if why else kept).append((reagent_id, why))
        if not kept and not reasons:
            whys = sorted({why for _, why in removed}) or ["no reagent in the catalog"]
            reasons.append("no usable reagent (" + ", ".join(whys) + ")")
        if reasons:
            excluded.append(Exclusion(sid, tuple(reasons)))
        else:
            systems.append(sid)
            reagents += [r for r, _ in kept]
    base_id = BASE_TITRANT[spec.counter_ion]
    salt_id = SALT_REAGENT[spec.salt]
    extras = [ACID_TITRANT] + ([base_id] if base_id else []) + [salt_id]
    exclusion_of = {e.system_id: e for e in excluded}
    for reagent_id, _ in spec.fixed_amounts:
        system_id = catalog.reagents[reagent_id].system_id
        if system_id in exclusion_of:
            reason = exclusion_of[system_id].reason
            raise InfeasibleSpecError(
                f"fixed amount of {catalog.reagents[reagent_id].name}: its system {system_id} is excluded "
                f"({reason})", [f"fixed amount: {reagent_id} belongs to excluded {system_id} ({reason})"])
        if system_id is not None and system_id not in systems:
            systems.append(system_id)
        extras.append(reagent_id)
    reagents += [r for r in dict.fromkeys(extras) if r not in reagents]
    return Admissible(tuple(systems), tuple(reagents), ACID_TITRANT, base_id, salt_id, tuple(excluded))
