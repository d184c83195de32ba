"""Recipe records and the bench lines of a verified composition.

A route (:mod:`selector.recipe.routes`) finds a composition [mol/L]; this module turns it
into what a person weighs and pipettes (:func:`recipe_line`), the sentences of the steps,
the Henderson-Hasselbalch comparison (:func:`textbook_gap`) and, re-solving it with the
exact engine at the use and preparation temperatures, the verified :class:`Recipe`
(:func:`summarise`), with cautions and warnings.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from catalog import Catalog
from catalog.records import Reagent, System
from selector.admissible import counter_ion_conflict, ion_label, metal_reagent
from selector.chemistry.complexation import (
    bound_by_ligands,
    precipitation_misses,
    precipitation_notes,
    saturation_of_metals,
)
from selector.chemistry.equilibrium import Equilibrium, composition_ph, solve_equilibrium
from selector.chemistry.properties import dilution_value, dph_dt, figure_or_none
from selector.chemistry.thermo import USEFUL_RANGE_HALF_WIDTH_PH, apparent_pka, apparent_pka_shift, pka_at_temperature
from selector.chemistry.uncertainty import FigureUncertainty, propagate_uncertainty
from selector.errors import InfeasibleSpecError, InputError
from selector.prices import PriceBook
from selector.recipe.co2 import co2_drift_for, co2_flag_sentences, one_co2_sentence
from selector.safety import SAFETY_NOTICE
from selector.spec import BufferSpec

#: Largest distance of the verified pH at the use temperature from the target [pH].
VERIFY_TOLERANCE_PH = 0.005
#: Concentration of the titrant stocks a recipe draws from [mol/L].
TITRANT_STOCK_MOL_L = 1.0
#: Hazard flag of a reagent whose neutral acid escapes as a toxic gas.
TOXIC_GAS_FLAG = "toxic_gas_with_acid"
#: Significant digits of the grams and mL a recipe's JSON prints: enough that the amounts
#: read back re-solve within the verify tolerance at any volume, from 1 mL to 10 L batches.
BENCH_SIGNIFICANT_DIGITS = 6
#: Fraction of the final volume of water a solid is first dissolved in.
DISSOLVE_FRACTION = 0.8
#: A recalled (from-memory) constant is named in the warnings when its uncertainty moves the
#: pH at use or at preparation by more than this [pH] (common practice: below the 0.01 a
#: calibrated meter resolves).
RECALLED_SHIFT_THRESHOLD_PH = 0.005
#: A step whose ΔH° is assumed rather than published (these source kinds) is named when the
#: recipe is used or prepared more than this far from 25 °C [K] (common practice: 1 K moves a
#: typical amine pKa by about 0.02, twice a meter's resolution) ...
ASSUMED_SOURCE_KINDS = ("common-practice",)
NO_ENTHALPY_TEMPERATURE_SPAN_K = 1.0
#: ... and its pKa lies within this of the target [pH] (common practice: farther steps carry
#: almost none of the buffering).
NO_ENTHALPY_STEP_SPAN_PH = 2.0
#: The catalog flag of a system that is in a recipe for the metal it binds, not for the pH.
CHELATING_FLAG = "chelating_agent"


@dataclass(frozen=True)
class RecipeLine:
    """One reagent of a recipe: ``grams`` of a solid, or ``millilitres`` of a stock.

    ``conc_mol_l`` is its concentration in the final solution [mol/L], ``stock_mol_l`` that
    of the stock it is drawn from [mol/L], ``cost`` in the price book's currency.
    """

    reagent_id: str
    name: str
    role: str
    conc_mol_l: float
    grams: float | None = None
    millilitres: float | None = None
    stock_mol_l: float | None = None
    cost: float | None = None


@dataclass(frozen=True)
class TextbookGap:
    """The Henderson-Hasselbalch estimate beside the exact answer.

    ``hh_ratio``: [base]/[acid] = 10^(pH − pKa) with the 25 °C, I = 0 pKa; ``exact_ratio``:
    the ratio of the two forms in the verified recipe; ``pka_25c``, ``pka_at_use`` (T only)
    and ``apparent_pka_at_use`` (T and ionic strength) of the step; the shifts in pH units.
    """

    step: int
    pka_25c: float
    pka_at_use: float
    apparent_pka_at_use: float
    hh_ratio: float
    exact_ratio: float
    temperature_shift_ph: float
    activity_shift_ph: float
    overlap_shift_ph: float

    def sentence(self) -> str:
        return (f"Henderson-Hasselbalch with pKa {self.pka_25c:.3f} (25 °C, I = 0) gives "
                f"[base]/[acid] = {self.hh_ratio:.3f}; the exact ratio is {self.exact_ratio:.3f}. "
                f"Temperature moves the pKa by {self.temperature_shift_ph:+.3f}, ionic strength by "
                f"{self.activity_shift_ph:+.3f}, and overlap with neighbouring steps (and water) accounts "
                f"for {self.overlap_shift_ph:+.3f} pH.")


@dataclass(frozen=True)
class Recipe:
    """A verified bench recipe.  Concentrations are of the final solution [mol/L]."""

    system_id: str
    route: str
    volume_l: float
    target_ph: float
    temperature_c: float
    prep_temperature_c: float
    lines: tuple[RecipeLine, ...]
    steps: tuple[str, ...]
    composition_mol_l: dict[str, float]
    meter_ph_at_prep: float
    verified_ph_at_use: float
    ionic_strength_mol_l: float
    osmolarity_osmol_l: float
    capacity_mol_l_per_ph: float
    dilution_value_ph: float
    dph_dt_per_k: float
    buffer_conc_mol_l: float
    cost: float | None
    currency: str
    cautions: tuple[str, ...]
    textbook: TextbookGap | None = None
    mixing_table: tuple[tuple[float, float, float], ...] = ()
    stock: dict = field(default_factory=dict)
    warnings: tuple[str, ...] = ()
    meter_reads: str = "the solution"
    meter_ph_uncertainty: float | None = None
    verified_ph_uncertainty: float | None = None
    capacity_uncertainty_mol_l_per_ph: float | None = None
    titrant_ml_uncertainty: float | None = None
    systems: tuple[str, ...] = ()
    title: str = ""
    batches: int = 1
    adjust_meter_ph: float | None = None
    co2_drift: dict | None = None

    @property
    def batch_volume_l(self) -> float:
        """Volume of one batch [L]; every line's grams and mL are for one batch."""
        return self.volume_l / self.batches

    def as_json(self) -> dict:
        """The recipe as the JSON object of ``poise recipe --json``."""
        return {
            "system": self.system_id,
            "systems": list(self.systems),
            "title": self.title,
            "route": self.route,
            "volume_l": self.volume_l,
            "batches": self.batches,
            "batch_volume_l": self.batch_volume_l,
            "target_ph": self.target_ph,
            "temperature_c": self.temperature_c,
            "prep_temperature_c": self.prep_temperature_c,
            "steps": list(self.steps),
            "reagents": [
                {"id": line.reagent_id, "name": line.name, "role": line.role, "conc_mol_l": line.conc_mol_l,
                 **({"grams": bench_digits(line.grams)} if line.grams is not None else {}),
                 **({"ml": bench_digits(line.millilitres)} if line.millilitres is not None else {}),
                 **({"stock_mol_l": line.stock_mol_l} if line.stock_mol_l is not None else {})}
                for line in self.lines],
            "composition_mol_l": self.composition_mol_l,
            "meter_ph_at_prep": self.meter_ph_at_prep,
            "adjust_meter_ph": self.adjust_meter_ph,
            "meter_ph_uncertainty": self.meter_ph_uncertainty,
            "meter_reads": self.meter_reads,
            "verified_ph_at_use": self.verified_ph_at_use,
            "verified_ph_uncertainty": self.verified_ph_uncertainty,
            "titrant_ml_uncertainty": self.titrant_ml_uncertainty,
            "ionic_strength_mol_l": self.ionic_strength_mol_l,
            "osmolarity_osmol_l": self.osmolarity_osmol_l,
            "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph,
            "capacity_uncertainty_mol_l_per_ph": self.capacity_uncertainty_mol_l_per_ph,
            "dilution_value_ph": self.dilution_value_ph,
            "dph_dt_per_k": self.dph_dt_per_k,
            "cost": self.cost,
            "currency": self.currency,
            "cautions": list(self.cautions),
            "warnings": list(self.warnings),
            "henderson_hasselbalch": None if self.textbook is None else {
                "hh_ratio": self.textbook.hh_ratio, "exact_ratio": self.textbook.exact_ratio,
                "pka_25c": self.textbook.pka_25c, "apparent_pka_at_use": self.textbook.apparent_pka_at_use,
                "sentence": self.textbook.sentence()},
            "mixing_table": [{"ph": p, "ml_acid_stock": a, "ml_base_stock": b} for p, a, b in self.mixing_table],
            "stock": self.stock,
            **({"co2_drift": self.co2_drift} if self.co2_drift is not None else {}),
        }


def bench_digits(value: float) -> float:
    """A printed amount to :data:`BENCH_SIGNIFICANT_DIGITS` significant digits."""
    return float(f"{value:.{BENCH_SIGNIFICANT_DIGITS}g}")


# ---------------------------------------------------------------------------------------
# Choosing the reagents


def reagent_forms(system_id: str, spec: BufferSpec, catalog: Catalog, prices: PriceBook) -> list[Reagent]:
    """The system's reagent forms the spec admits, one per protonation state per system unit.

    Of several reagents in one state the cheapest per mol of system is kept; the forms come
    in order of protons removed (borax, 4 borate units with 2 protons removed, sits between
    boric acid and metaborate).  The counter-ion rule is
    :func:`selector.admissible.counter_ion_conflict`, the one admissibility uses.
    """
    best: dict[float, tuple[float, Reagent]] = {}
    for reagent in catalog.reagents.values():
        if reagent.system_id != system_id:
            continue
        if spec.in_stock is not None and reagent.reagent_id not in spec.in_stock:
            continue
        if counter_ion_conflict(reagent, spec.counter_ion, catalog) is not None:
            continue
        price = prices.price_per_kg(reagent.reagent_id)
        per_mol = np.inf if price is None else price * reagent.molar_mass_g_mol / reagent.purity_fraction
        per_unit = per_mol / reagent.system_units
        state = reagent.protons_removed / reagent.system_units   # protons removed per system unit
        if state not in best or per_unit < best[state][0]:
            best[state] = (per_unit, reagent)
    return [best[k][1] for k in sorted(best)]


def check_hazard(system_ids, spec: BufferSpec, catalog: Catalog) -> None:
    """InputError for a hazardous system among ``system_ids`` unless the spec allows hazardous systems."""
    for system_id in system_ids:
        system = catalog.systems[system_id]
        if system.hazardous and not spec.allow_hazardous:
            raise InputError(f"{system.name} is hazardous: {system.hazard_note} "
                             "Allow hazardous systems to make it anyway (--allow-hazardous on the command line, the "
                             "'allow hazardous systems' box in the app).")


def stocked(reagent_id: str, spec: BufferSpec, catalog: Catalog) -> str:
    """``reagent_id`` of a titrant or salt the recipe needs, if the spec's stock list has it.

    Raises
    ------
    InputError
        if the spec lists the reagents in stock and this one is not among them.
    """
    if spec.in_stock is not None and reagent_id not in spec.in_stock:
        raise InputError(f"{catalog.reagents[reagent_id].name} is needed but not in stock")
    return reagent_id


# ---------------------------------------------------------------------------------------
# Bench lines and sentences


def stock_volume_ml(conc_mol_l: float, volume_l: float, stock_mol_l: float) -> float:
    """Millilitres of a ``stock_mol_l`` stock that give ``conc_mol_l`` in ``volume_l`` litres."""
    return conc_mol_l * volume_l / stock_mol_l * 1000.0


def recipe_line(reagent_id: str, role: str, conc_mol_l: float, spec: BufferSpec, catalog: Catalog,
                prices: PriceBook, as_stock: float | None = None) -> RecipeLine:
    """The bench line of one reagent: grams of the product as bought, or mL of a stock.

    Parameters
    ----------
    reagent_id : str
        The reagent.
    role : str
        Its role in words (``buffer form``, ``titrant`` ...).
    conc_mol_l : float
        Its concentration in the final solution [mol/L].
    spec : BufferSpec
        Gives the volume [L].
    catalog : Catalog
        Molar mass, purity and name.
    prices : PriceBook
        Grams of product (purity included) and cost.
    as_stock : float, optional
        Concentration of the stock it is drawn from [mol/L]; None for a weighed solid.
    """
    reagent = catalog.reagents[reagent_id]
    cost = prices.cost({reagent_id: conc_mol_l}, spec.volume_l, catalog)
    if as_stock is not None:
        ml = stock_volume_ml(conc_mol_l, spec.volume_l, as_stock)
        return RecipeLine(reagent_id, reagent.name, role, conc_mol_l, millilitres=ml, stock_mol_l=as_stock, cost=cost)
    grams = prices.grams_of_product(reagent_id, conc_mol_l, spec.volume_l, catalog)
    return RecipeLine(reagent_id, reagent.name, role, conc_mol_l, grams=grams, cost=cost)


def volume_text(millilitres: float) -> str:
    """A volume for the bench: µL below 1 mL, L from 1 L, else mL, to a sensible precision."""
    if millilitres < 1.0:
        return f"{millilitres * 1000:.3g} µL"
    if millilitres >= 1000.0:
        return f"{millilitres / 1000:.4g} L"
    return f"{millilitres:.4g} mL" if millilitres < 100 else f"{millilitres:.0f} mL"


def meter_sentence(composition: dict[str, float], spec: BufferSpec, catalog: Catalog) -> str:
    """What the meter reads at preparation, and the pH at use when the two temperatures differ."""
    prep = composition_ph(composition, spec.prep_temperature_c, catalog)
    if abs(spec.prep_temperature_c - spec.temperature_c) < 1e-9:
        return f"At {spec.temperature_c:g} °C the meter should read pH {prep:.2f}."
    return (f"At {spec.prep_temperature_c:g} °C the meter should read pH {prep:.2f}; at {spec.temperature_c:g} °C "
            f"the pH is {spec.ph:.2f}.")


def weigh_text(line: RecipeLine, catalog: Catalog) -> str:
    """``Weigh … g of …`` for a solid line, with formula and purity."""
    reagent = catalog.reagents[line.reagent_id]
    purity = f" (purity {reagent.purity_fraction:.3g} included)" if reagent.purity_fraction < 1 else ""
    form = f", {reagent.formula}" if reagent.formula else ""
    return f"Weigh {line.grams:.4f} g of {reagent.name}{form}{purity}."


def textbook_gap(system_id: str, spec: BufferSpec, composition: dict[str, float], acid_id: str, base_id: str,
                 catalog: Catalog) -> TextbookGap | None:
    """HH estimate for the step between the acid and base forms, beside the exact ratio.

    The apparent pKa' uses the activity coefficient of the verified solution
    (:func:`selector.chemistry.thermo.apparent_pka_shift`); None when the two forms are not
    the two sides of one step.
    """
    system = catalog.systems[system_id]
    acid, base = catalog.reagents[acid_id], catalog.reagents[base_id]
    step_index = base.protons_removed  # step j separates state j-1 (acid) and j (base)
    if step_index < 1 or step_index > system.n_steps or base.protons_removed - acid.protons_removed != 1:
        return None
    step = system.steps[step_index - 1]
    pka25 = step.pka_25c.value
    pka_t = float(pka_at_temperature(pka25, step.dh_kj_mol.value, step.dcp_j_k_mol.value, spec.temperature_c))
    ids = list(composition)
    eq = solve_equilibrium(ids, [composition[r] for r in ids], spec.temperature_c, catalog=catalog)
    acid_charge = system.charge_most_protonated - step_index + 1
    apparent = pka_t + float(apparent_pka_shift(acid_charge, float(eq.speciation.log10_gamma_unit[0])))
    hh_ratio = 10.0 ** (spec.ph - pka25)
    exact_ratio = composition.get(base_id, 0.0) / max(composition.get(acid_id, 0.0), 1e-300)
    # pH an HH calculation with the exact ratio would predict, and how far each effect moves it.
    hh_ph_of_exact = pka25 + np.log10(exact_ratio)
    temperature_shift = pka_t - pka25
    activity_shift = apparent - pka_t
    overlap = spec.ph - (hh_ph_of_exact + temperature_shift + activity_shift)
    return TextbookGap(step_index, pka25, pka_t, apparent, hh_ratio, exact_ratio,
                       temperature_shift, activity_shift, float(overlap))


# ---------------------------------------------------------------------------------------
# The verified recipe


def _cautions(systems: list[System], lines: list[RecipeLine], catalog: Catalog) -> tuple[str, ...]:
    """Each hazardous system's hazard, every reagent's cautions, then the safety notice."""
    cautions = [f"{system.name}: {system.hazard_note}" for system in systems if system.hazardous]
    for line in lines:
        reagent = catalog.reagents[line.reagent_id]
        if reagent.hazard_flags or reagent.cautions:
            cautions.append(f"{reagent.name}: {reagent.cautions}" if reagent.cautions else reagent.name)
    cautions.append(SAFETY_NOTICE)
    return tuple(cautions)


def _toxic_gas_warning(system: System, use: Equilibrium, ids: list[str], spec: BufferSpec,
                       catalog: Catalog) -> list[str]:
    """The fraction of a volatile toxic neutral acid (HCN, HN3, HF, HClO2 ...) at the target pH."""
    if not any(TOXIC_GAS_FLAG in catalog.reagents[r].hazard_flags for r in ids):
        return []
    neutral = [k for k, sid in enumerate(use.species_ids) if sid == f"{system.system_id}(0)"]
    if not neutral:
        return []
    total = float(use.speciation.totals_mol_l[0, list(use.system_ids).index(system.system_id)])
    fraction = float(use.species_mol_l[0, neutral[0]]) / total if total else 0.0
    return [f"at pH {spec.ph:g}, {fraction:.0%} of the {system.short_name.lower()} "
            "is the neutral acid, which escapes as a toxic gas: work only in a fume hood, "
            "add any acid slowly and keep the vessel closed"]


def _dissolving_warnings(lines: list[RecipeLine], volume_l: float, already: set[str],
                         catalog: Catalog) -> list[str]:
    """Weighed solids that will not dissolve in the water of the dissolving step.

    The water is :data:`DISSOLVE_FRACTION` of the final volume; a solid whose grams per
    litre of that water exceed its catalog solubility at 25 °C (grams per litre of water) is
    named, unless ``already`` holds it (warned about at the final volume).  Solids that fit
    one by one but share the water are named together when the fractions of their
    solubilities add up to more than 1 (common practice: a rough rule that ignores how
    one solute changes the solubility of another).
    """
    water_l = DISSOLVE_FRACTION * volume_l
    solids = []   # (name, reagent id, grams per litre of the water, solubility [g/L of water])
    for line in lines:
        solubility = catalog.reagents[line.reagent_id].solubility_g_l_25c
        if line.grams is not None and solubility is not None and solubility.value:
            solids.append((line.name, line.reagent_id, line.grams / water_l, float(solubility.value)))
    water = volume_text(water_l * 1000.0)
    out = [f"{name}: {g_l * water_l:.4g} g in about {water} of water is {g_l:.4g} g/L, above its solubility of "
           f"about {limit:g} g/L at 25 °C; it will not all dissolve: make a lower concentration or a larger volume"
           for name, r, g_l, limit in solids if g_l > limit and r not in already]
    share = sum(g_l / limit for _, _, g_l, limit in solids)
    if all(g_l <= limit for _, _, g_l, limit in solids) and share > 1:
        out.append(f"{' and '.join(name for name, *_ in solids)} together need more water than the about {water} "
                   f"of the dissolving step ({share * 100:.0f} % of their solubilities at 25 °C); they may not all "
                   "dissolve: make a lower concentration or a larger volume")
    return out


def _recalled_warning(uncertainty: FigureUncertainty) -> list[str]:
    """The recalled (from-memory) constants whose uncertainty moves the pH at use or at preparation
    by more than :data:`RECALLED_SHIFT_THRESHOLD_PH`, each with how far it moves it."""
    moving = uncertainty.largest_ph_shifts(RECALLED_SHIFT_THRESHOLD_PH, source_kind="from-memory")
    if not moving:
        return []
    named = ", ".join(f"{effect.label} (± {effect.uncertainty:.3g} moves the pH by {shift:.3f})"
                      for effect, shift in moving)
    return [f"constants recalled rather than read in a source (from memory) that move the result by more than "
            f"{RECALLED_SHIFT_THRESHOLD_PH:g} pH: {named}; treat the figures as estimates until they are checked"]


def _data_warnings(system: System, spec: BufferSpec, conc_mol_l: float, catalog: Catalog) -> list[str]:
    """Polymeric species and a target outside the useful range (not said of a chelating agent:
    it is in the recipe for the metal, not for its capacity)."""
    warnings = []
    polymer = catalog.polymerisation.get(system.system_id)
    if polymer is not None and conc_mol_l > polymer.above_mol_l.value:
        kind = " (from memory)" if polymer.above_mol_l.source_kind == "from-memory" else ""
        warnings.append(f"{conc_mol_l * 1000:.3g} mM {system.short_name} is above about "
                        f"{polymer.above_mol_l.value * 1000:g} mM, where {polymer.species} (ignored by poise) "
                        f"start to form; the pH may differ{kind}")
    # The useful range here is judged on the pKa at the use temperature and I = 0.
    steps = system.steps
    pkas = apparent_pka([s.pka_25c.value for s in steps], [s.dh_kj_mol.value for s in steps],
                        [s.dcp_j_k_mol.value for s in steps], spec.temperature_c, 0.0,
                        [system.charge_most_protonated - (s.step - 1) for s in steps])
    nearest = min((float(p) for p in pkas), key=lambda p: abs(p - spec.ph))
    if abs(nearest - spec.ph) > USEFUL_RANGE_HALF_WIDTH_PH and not is_chelating_agent(system.system_id, catalog):
        warnings.append(f"pH {spec.ph:g} is {abs(nearest - spec.ph):.1f} units from the nearest pKa of "
                        f"{system.short_name} ({nearest:.2f} at {spec.temperature_c:g} °C), outside its useful range "
                        f"(pKa ± {USEFUL_RANGE_HALF_WIDTH_PH:g}): little of the capacity comes from the buffer")
    return warnings + _no_enthalpy_warnings(system, spec, pkas) + _co2_warnings(system, catalog)


def _no_enthalpy_warnings(system: System, spec: BufferSpec, pkas) -> list[str]:
    """Steps near the target whose ΔH° is assumed (no published value) when used away from 25 °C.

    Without ΔH° the engine keeps the 25 °C pKa at every temperature; a step within
    :data:`NO_ENTHALPY_STEP_SPAN_PH` of the target moves the pH, so a recipe used or
    prepared more than :data:`NO_ENTHALPY_TEMPERATURE_SPAN_K` from 25 °C says so.
    """
    away = max(abs(spec.temperature_c - 25.0), abs(spec.prep_temperature_c - 25.0))
    if away <= NO_ENTHALPY_TEMPERATURE_SPAN_K:
        return []
    assumed = [step.step for step, pka in zip(system.steps, pkas)
               if step.dh_kj_mol.source_kind in ASSUMED_SOURCE_KINDS and abs(float(pka) - spec.ph) <= NO_ENTHALPY_STEP_SPAN_PH]
    if not assumed:
        return []
    named = ", ".join(str(k) for k in assumed)
    return [f"no published ΔH° for step {named} of {system.short_name} (0 assumed): its pKa is held at the 25 °C "
            f"value, so the pH at {spec.temperature_c:g} °C and the meter reading at {spec.prep_temperature_c:g} °C "
            "may be off; check the pH at the temperature of use"]


def _co2_warnings(system: System, catalog: Catalog) -> list[str]:
    """The catalog's CO₂-exchange flag of a system (replaced by the computed drift where there is one)."""
    return co2_flag_sentences([system.system_id], catalog)


@dataclass(frozen=True)
class RecipeExtras:
    """What some routes add to a recipe: the HH comparison, a mixing table, a stock's figures."""

    textbook: TextbookGap | None = None
    mixing_table: tuple[tuple[float, float, float], ...] = ()
    stock: dict = field(default_factory=dict)


def metal_warnings(ids: list[str], amounts: list[float], spec: BufferSpec, catalog: Catalog) -> list[str]:
    """What the spec's metals do to the recipe's buffer once the assay adds them at their
    concentrations (they are not in the recipe): the pH at use, each metal's exact fraction
    bound by the buffer, and each supersaturated solid at the use and preparation
    temperatures (:func:`selector.chemistry.complexation.saturation_of_metals`).

    Raises
    ------
    InfeasibleSpecError
        ``no_precipitate`` and a solid of a listed metal supersaturated (slow-forming aside).
    """
    if not spec.metals:
        return []
    salts: dict[str, float] = {}
    for limit in spec.metals:
        reagent = metal_reagent(limit.metal, catalog)
        salts[reagent] = salts.get(reagent, 0.0) + limit.conc_mol_l
    all_ids = list(dict.fromkeys([*ids, *salts]))
    row = [dict(zip(ids, amounts)).get(r, 0.0) + salts.get(r, 0.0) for r in all_ids]
    eq = solve_equilibrium(all_ids, [row, row], [spec.temperature_c, spec.prep_temperature_c], catalog=catalog)
    added = ", ".join(f"{m.conc_mol_l * 1000:g} mM {ion_label(m.metal)}" for m in spec.metals)
    ph_with_metals = float(eq.ph[0])
    warnings = [f"with {added} added (the assay's metals, not in this recipe) the pH at "
                f"{spec.temperature_c:g} °C is {ph_with_metals:.3f}"] \
        if round(ph_with_metals, 3) != round(spec.ph, 3) else []
    metals = eq.speciation.metals
    if metals is not None:
        buffer_systems = {catalog.reagents[r].system_id for r in ids}
        mask = np.array([[sid in buffer_systems for sid in eq.speciation.systems.system_ids]] * 2)
        bound = bound_by_ligands(metals, mask)
        for limit in spec.metals:
            f = float(bound[0, metals.metal_ids.index(limit.metal)])
            if f < 5e-4 and f <= limit.max_bound_fraction:
                continue   # prints as 0.0 % and within its limit: nothing to say
            over = "" if f <= limit.max_bound_fraction else ", above"
            warnings.append(f"{ion_label(limit.metal)} {100 * f:.1f} % bound by the buffer at {spec.temperature_c:g} °C "
                            f"(limit {100 * limit.max_bound_fraction:g} %{over})")
    solids = saturation_of_metals(eq, [0, 1], 1, {m.metal for m in spec.metals}, catalog)[0]
    misses = precipitation_misses(solids) if spec.no_precipitate else []
    if misses:
        raise InfeasibleSpecError("the buffer with the assay's metals is supersaturated: " + "; ".join(misses), misses)
    return warnings + precipitation_notes(solids)


def summarise(system_id: str, route: str, spec: BufferSpec, composition: dict[str, float],
              lines: list[RecipeLine], steps: list[str], catalog: Catalog, prices: PriceBook, conc_mol_l: float,
              extras: RecipeExtras = RecipeExtras()) -> Recipe:
    """The verified :class:`Recipe` of ``composition`` [mol/L], re-solved at use and preparation.

    Parameters
    ----------
    system_id, route : str
        The buffer system and the route's name.
    spec : BufferSpec
        Target pH, use and preparation temperatures [°C], volume [L].
    composition : dict of str to float
        Reagent id -> concentration in the final solution [mol/L].
    lines, steps : list
        The bench lines and the sentences of the steps.
    catalog : Catalog
        The catalog the ids refer to.
    prices : PriceBook
        Cost of the composition.
    conc_mol_l : float
        Total buffer concentration [mol/L].
    extras : RecipeExtras
        The HH comparison, mixing table or stock figures of the route.

    Raises
    ------
    InfeasibleSpecError
        if the pH at the use temperature misses the target by more than
        :data:`VERIFY_TOLERANCE_PH`.
    """
    ids = [r for r, c in composition.items() if c > 0]
    amounts = [composition[r] for r in ids]
    # One batch: row 0 at the use temperature, row 1 at the preparation temperature.
    use = solve_equilibrium(ids, [amounts, amounts], [spec.temperature_c, spec.prep_temperature_c], catalog=catalog)
    verified = float(use.ph[0])
    if abs(verified - spec.ph) > VERIFY_TOLERANCE_PH:
        named = " + ".join(catalog.systems[s].short_name if s in catalog.systems else s for s in system_id.split("+"))
        raise InfeasibleSpecError(f"{named} {route}: the recipe verifies at pH {verified:.4f}, not "
                                  f"{spec.ph:g} ± {VERIFY_TOLERANCE_PH}; not shown", ["verification"])
    prep = float(use.ph[1])
    uncertainty = propagate_uncertainty(use, catalog)
    systems = [catalog.systems[s] for s in dict.fromkeys(catalog.reagents[r].system_id for r in ids)
               if s is not None]
    warnings = list(use.warnings_for(0, catalog))
    for system in reversed([s for s in systems if s.hazardous]):
        steps = [f"Before you start: {system.hazard_note}", *steps]
        warnings = _toxic_gas_warning(system, use, ids, spec, catalog) + warnings
    warnings += _recalled_warning(uncertainty)
    for system in systems:
        system_conc = sum(composition[r] * catalog.reagents[r].system_units for r in ids
                          if catalog.reagents[r].system_id == system.system_id)
        warnings += _data_warnings(system, spec, system_conc, catalog)
    if systems and all(is_chelating_agent(s.system_id, catalog) for s in systems):
        warnings.append(f"no pH buffer in this recipe: only the chelator's own acid-base steps hold the pH (β "
                        f"{float(use.capacity_mol_l_per_ph[0]) * 1000:.3g} mM per pH at use); add a pH buffer if the "
                        "assay adds acid or base")
    warned = {r for k, r in enumerate(use.reagent_ids) if use.above_solubility[0, k]}
    warnings += _dissolving_warnings(list(lines), spec.volume_l, warned, catalog)
    drift = co2_drift_for({r: composition[r] for r in ids}, verified, spec.temperature_c, catalog)
    warnings = list(one_co2_sentence(warnings, drift, [s.system_id for s in systems], catalog))
    warnings += metal_warnings(ids, amounts, spec, catalog)
    return Recipe(
        system_id=system_id, route=route, volume_l=spec.volume_l, target_ph=spec.ph,
        temperature_c=spec.temperature_c, prep_temperature_c=spec.prep_temperature_c,
        lines=tuple(lines), steps=tuple(steps), composition_mol_l={r: composition[r] for r in ids},
        meter_ph_at_prep=prep, verified_ph_at_use=verified,
        ionic_strength_mol_l=float(use.ionic_strength_mol_l[0]),
        osmolarity_osmol_l=float(use.osmolarity_osmol_l[0]),
        capacity_mol_l_per_ph=float(use.capacity_mol_l_per_ph[0]),
        dilution_value_ph=float(dilution_value(ids, amounts, spec.temperature_c, catalog=catalog)[0]),
        dph_dt_per_k=float(dph_dt(ids, amounts, spec.temperature_c, catalog=catalog)[0]),
        buffer_conc_mol_l=conc_mol_l, cost=prices.cost(composition, spec.volume_l, catalog),
        currency=prices.currency, cautions=_cautions(systems, lines, catalog),
        textbook=extras.textbook, mixing_table=tuple(extras.mixing_table), stock=dict(extras.stock),
        warnings=tuple(warnings),
        meter_ph_uncertainty=figure_or_none(uncertainty.ph[1]), verified_ph_uncertainty=figure_or_none(uncertainty.ph[0]),
        capacity_uncertainty_mol_l_per_ph=figure_or_none(uncertainty.capacity_mol_l_per_ph[0]),
        titrant_ml_uncertainty=titrant_uncertainty_ml(lines, float(use.capacity_mol_l_per_ph[0]),
                                                      float(uncertainty.ph[0]), spec.volume_l),
        systems=tuple(s.system_id for s in systems), title=_title_of(systems, catalog) or system_id, co2_drift=drift,
    )


def is_chelating_agent(system_id: str | None, catalog: Catalog) -> bool:
    """True for a system the catalog flags ``chelating_agent`` (EDTA, EGTA, NTA): in a recipe it
    is an additive that sets the free metal, not the pH buffer."""
    return system_id is not None and any(f.flag == CHELATING_FLAG for f in catalog.flags_of(system_id))


def _title_of(systems: list[System], catalog: Catalog) -> str:
    """The pH buffer's full name; a mix's short names joined (``Tris + HEPES``).  A chelating
    agent is not the buffer: it is left out unless the recipe holds nothing else."""
    buffers = [s for s in systems if not is_chelating_agent(s.system_id, catalog)] or systems
    if len(buffers) == 1:
        return buffers[0].name
    return " + ".join(s.short_name for s in buffers)


def titrant_uncertainty_ml(lines, capacity_mol_l_per_ph: float, ph_uncertainty: float, volume_l: float) -> float | None:
    """Standard uncertainty of the titrant volume [mL] a recipe's titrant line needs (None without one).

    To first order, the constants that would move the pH by u(pH) need
    Δc = β·u(pH) more or less strong acid or base [mol/L] to bring it back, β being the
    capacity at the use temperature (Van Slyke's buffer value, [Bates1973] ch. 4 as cited in
    :mod:`selector.chemistry.properties`); its stock volume is the uncertainty of the line.
    """
    titrants = [line for line in lines if line.role == "titrant" and line.stock_mol_l]
    if not titrants or not np.isfinite(capacity_mol_l_per_ph * ph_uncertainty):
        return None
    return stock_volume_ml(capacity_mol_l_per_ph * ph_uncertainty, volume_l, titrants[0].stock_mol_l)
