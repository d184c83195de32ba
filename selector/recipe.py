"""Bench recipes: a verified composition turned into steps for a volume.

For one buffer system and a spec, :func:`make_recipes` builds each preparation route that
applies:

- ``titrate``   weigh one form and bring it to pH with strong base (or acid);
- ``two-forms`` weigh an acid form and its conjugate salt, no titration;
- ``stocks``    mix two equimolar stock solutions (with a table of volumes across pH);
- ``stock10x``  make a 10× stock at the pH that lands the 1× dilution on target.

Every composition is found with the exact engine (1-D root finds on the amounts) and
re-solved before it is returned: the verified pH at the use temperature must be within
:data:`VERIFY_TOLERANCE_PH` of target or no recipe is returned.  The pH the meter must read
is the same composition solved at the preparation temperature.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from catalog import Catalog, load_catalog
from selector.chemistry.equilibrium import solve_equilibrium
from selector.chemistry.properties import dilution_value, dph_dt
from selector.chemistry.thermo import pka_at_temperature
from selector.errors import InfeasibleSpecError, InputError
from selector.names import resolve_system
from selector.prices import PriceBook, demo_price_book
from selector.safety import SAFETY_NOTICE
from selector.spec import BufferSpec

ROUTES = ("titrate", "two-forms", "stocks", "stock10x")
VERIFY_TOLERANCE_PH = 0.005
#: Concentration of the titrant stocks a recipe draws from [mol/L].
TITRANT_STOCK_MOL_L = 1.0
#: Total boron above which polyborate species matter [mol/L] (from memory; the catalog's
#: borate note says the same).
POLYBORATE_LIMIT_MOL_L = 0.025
#: Stock concentration factor of the ``stock10x`` route.
STOCK_FACTOR = 10.0
#: Concentration of the equimolar stocks of the ``stocks`` route, as a multiple of the final.
EQUIMOLAR_STOCK_FACTOR = 2.0


@dataclass(frozen=True)
class RecipeLine:
    """One reagent of a recipe: ``grams`` of a solid, or ``millilitres`` of a stock."""

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
    """A verified bench recipe.  Concentrations are of the final solution."""

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

    def as_json(self) -> dict:
        """The recipe as the JSON object of ``poise recipe --json``."""
        return {
            "system": self.system_id,
            "route": self.route,
            "volume_l": self.volume_l,
            "target_ph": self.target_ph,
            "temperature_c": self.temperature_c,
            "prep_temperature_c": self.prep_temperature_c,
            "steps": list(self.steps),
            "reagents": [
                {"id": line.reagent_id, "name": line.name, "role": line.role, "conc_mol_l": line.conc_mol_l,
                 **({"grams": round(line.grams, 4)} if line.grams is not None else {}),
                 **({"ml": round(line.millilitres, 3), "stock_mol_l": line.stock_mol_l}
                    if line.millilitres is not None else {})}
                for line in self.lines],
            "composition_mol_l": self.composition_mol_l,
            "meter_ph_at_prep": self.meter_ph_at_prep,
            "meter_reads": self.meter_reads,
            "verified_ph_at_use": self.verified_ph_at_use,
            "ionic_strength_mol_l": self.ionic_strength_mol_l,
            "osmolarity_osmol_l": self.osmolarity_osmol_l,
            "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph,
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
        }


# ---------------------------------------------------------------------------------------
# Choosing the reagent forms


def _counter_ion_ok(reagent, counter_ion: str) -> bool:
    """Counter-ion rule of the recipe forms: "none" admits free acids/bases and their
    hydrochlorides (Tris-HCl is Tris plus HCl), as :mod:`selector.admissible` does."""
    ions = {ion for ion, _ in reagent.ions if ion not in ("H", "OH", "Cl")}
    if counter_ion in ("any", ""):
        return True
    if counter_ion == "none":
        return not ions
    return ions <= {counter_ion}


def _forms(system_id: str, spec: BufferSpec, catalog: Catalog, prices: PriceBook) -> list:
    """The system's reagent forms the spec admits, one per protonation state per system unit
    (cheapest per mol of system), in order of protons removed (borax, 4 borate units with 2
    protons removed, sits between boric acid and metaborate)."""
    system = catalog.systems[system_id]
    best = {}
    for reagent in catalog.reagents.values():
        if reagent.system_id != system_id:
            continue
        if spec.in_stock is not None and reagent.reagent_id not in spec.in_stock:
            continue
        if not _counter_ion_ok(reagent, spec.counter_ion):
            continue
        price = prices.price_per_kg(reagent.reagent_id)
        per_mol = np.inf if price is None else price * reagent.molar_mass_g_mol / reagent.purity_fraction
        per_unit = per_mol / reagent.system_units
        state = reagent.protons_removed / reagent.system_units   # protons removed per system unit
        if state not in best or per_unit < best[state][0]:
            best[state] = (per_unit, reagent)
    del system
    return [best[k][1] for k in sorted(best)]


def _strong(kind: str, spec: BufferSpec, catalog: Catalog) -> str:
    """Reagent id of the strong acid, strong base or salt a recipe uses."""
    if kind == "acid":
        choice = "hcl"
    elif kind == "base":
        choice = "koh" if spec.counter_ion == "K" else "naoh"
    else:
        choice = "kcl" if spec.salt == "KCl" else "nacl"
    if spec.in_stock is not None and choice not in spec.in_stock:
        raise InputError(f"{catalog.reagents[choice].name} is needed but not in stock")
    return choice


# ---------------------------------------------------------------------------------------
# Exact solving helpers


def _ph(composition: dict[str, float], temperature_c: float, catalog: Catalog) -> float:
    ids = [r for r, c in composition.items() if c > 0] or list(composition)
    return float(solve_equilibrium(ids, [composition[r] for r in ids], temperature_c, catalog=catalog).ph[0])


@dataclass(frozen=True)
class _Line:
    """Compositions base + a·direction over reagent ids, for a scalar free amount a."""

    ids: tuple[str, ...]
    base: np.ndarray
    direction: np.ndarray

    def at(self, a) -> np.ndarray:
        return self.base[None, :] + np.atleast_1d(a)[:, None] * self.direction[None, :]

    def composition(self, a: float) -> dict[str, float]:
        return {r: float(c) for r, c in zip(self.ids, self.at(a)[0])}


#: Points per batch of the vectorised root find (three batches narrow the bracket 32³-fold).
_GRID_POINTS = 33


def _find_amount(line: _Line, target_ph: float, temperature_c: float, low: float, high: float,
                 catalog, what: str) -> float:
    """The amount a in [low, high] with pH(base + a·direction) = target, pH monotone in a.

    Each round solves a grid of compositions in one call of the engine and keeps the
    interval where pH crosses the target; the last round interpolates linearly.
    """
    grid = np.linspace(low, high, _GRID_POINTS)
    for _ in range(4):
        ph = solve_equilibrium(line.ids, line.at(grid), temperature_c, catalog=catalog).ph
        gap = ph - target_ph
        if gap[0] * gap[-1] > 0:
            reach = sorted([float(ph[0]), float(ph[-1])])
            raise InfeasibleSpecError(f"{what}: pH {target_ph:g} is out of reach; this route spans "
                                      f"pH {reach[0]:.2f} to {reach[1]:.2f} at {temperature_c:g} °C",
                                      [f"pH: reachable {reach[0]:.2f}-{reach[1]:.2f}"])
        crossings = np.flatnonzero(np.sign(gap[:-1]) * np.sign(gap[1:]) <= 0)
        k = int(crossings[0])
        a0, a1, g0, g1 = grid[k], grid[k + 1], gap[k], gap[k + 1]
        estimate = a0 if g1 == g0 else a0 - g0 * (a1 - a0) / (g1 - g0)
        if a1 - a0 < 1e-13 * max(1.0, abs(high)):
            return float(estimate)
        grid = np.linspace(a0, a1, _GRID_POINTS)
    return float(estimate)


def _solve_composition(line: _Line, spec: BufferSpec, low: float, high: float, salt_id: str, catalog,
                       what: str) -> dict[str, float]:
    """Root-find the free amount; with an ionic-strength target, iterate the salt beside it.

    I is nearly linear in the salt, so s ← s + (I_target − I) converges in a few rounds.
    """
    ids = list(line.ids)
    if spec.ionic_strength_mol_l is not None and salt_id not in ids:
        ids.append(salt_id)
        line = _Line(tuple(ids), np.append(line.base, 0.0), np.append(line.direction, 0.0))
    amount = _find_amount(line, spec.ph, spec.temperature_c, low, high, catalog, what)
    if spec.ionic_strength_mol_l is None:
        return line.composition(amount)
    column = ids.index(salt_id)
    for _ in range(8):
        composition = line.at(amount)[0]
        eq = solve_equilibrium(line.ids, composition, spec.temperature_c, catalog=catalog)
        missing = spec.ionic_strength_mol_l - float(eq.ionic_strength_mol_l[0])
        if abs(missing) < 1e-9:
            break
        if line.base[column] + missing < -1e-12:
            ionic = float(eq.ionic_strength_mol_l[0]) - line.base[column]
            raise InfeasibleSpecError(
                f"ionic strength: the buffer alone gives {ionic:.4f} mol/L, above the target "
                f"{spec.ionic_strength_mol_l:g} mol/L; lower the concentration or raise the target",
                [f"ionic strength: buffer alone {ionic:.4f} mol/L"])
        base = line.base.copy()
        base[column] = max(base[column] + missing, 0.0)
        line = _Line(line.ids, base, line.direction)
        amount = _find_amount(line, spec.ph, spec.temperature_c, low, high, catalog, what)
    return line.composition(amount)


# ---------------------------------------------------------------------------------------
# Building recipes


def buffer_concentration(system_id: str, spec: BufferSpec, catalog: Catalog | None = None,
                         prices: PriceBook | None = None) -> float:
    """Total buffer concentration [mol/L]: the spec's, or the one the ranking finds.

    Without a concentration, the spec's capacity, loads, ionic strength and metal limits
    size the buffer: the cheapest verified mix of this system alone
    (:func:`selector.rank.cheapest_mix_of`, the same model as the ranking and optimiser).
    """
    catalog = catalog if catalog is not None else load_catalog()
    if spec.buffer_conc_mol_l is not None:
        return spec.buffer_conc_mol_l
    if spec.capacity_mol_l_per_ph is None and not spec.loads:
        raise InputError("give a buffer concentration (--conc, e.g. 50mM), a capacity (--capacity, mM per pH) "
                         "or a load (--load acid:5)")
    from selector.rank import (
        cheapest_mix_of,  # rank builds on the optimiser; import on use
    )

    row = cheapest_mix_of(system_id, spec, prices, catalog)
    if not row.feasible or row.conc_mol_l is None:
        raise InfeasibleSpecError(f"{system_id} cannot meet the spec: {row.reason}", [row.reason])
    return row.conc_mol_l


def _summary(system_id, route, spec, composition, lines, steps, catalog, prices, textbook=None,
             mixing_table=(), stock=None, conc=0.0) -> Recipe:
    ids = [r for r, c in composition.items() if c > 0]
    amounts = [composition[r] for r in ids]
    use = solve_equilibrium(ids, amounts, spec.temperature_c, catalog=catalog)
    verified = float(use.ph[0])
    if abs(verified - spec.ph) > VERIFY_TOLERANCE_PH:
        raise InfeasibleSpecError(f"{system_id} {route}: the recipe verifies at pH {verified:.4f}, not "
                                  f"{spec.ph:g} ± {VERIFY_TOLERANCE_PH}; not shown", ["verification"])
    prep = float(solve_equilibrium(ids, amounts, spec.prep_temperature_c, catalog=catalog).ph[0])
    cautions = []
    for line in lines:
        reagent = catalog.reagents[line.reagent_id]
        if reagent.hazard_flags or reagent.cautions:
            cautions.append(f"{reagent.name}: {reagent.cautions}" if reagent.cautions else reagent.name)
    system = catalog.systems[system_id]
    if system.hazardous:
        cautions.insert(0, f"{system.name}: {system.hazard_note}")
    cautions.append(SAFETY_NOTICE)
    cost = prices.cost(composition, spec.volume_l, catalog)
    warnings = list(use.warnings_for(0, catalog))
    if system.hazardous:
        steps = [f"Before you start: {system.hazard_note}", *steps]
        if any("toxic_gas_with_acid" in catalog.reagents[r].hazard_flags for r in ids):
            # The neutral acid (HCN, HN3, HF, HClO2 ...) is the form that escapes as a gas.
            neutral = [k for k, sid in enumerate(use.species_ids) if sid == f"{system_id}(0)"]
            if neutral:
                total = float(use.speciation.totals_mol_l[0, list(use.system_ids).index(system_id)])
                fraction = float(use.species_mol_l[0, neutral[0]]) / total if total else 0.0
                warnings.insert(0, f"at pH {spec.ph:g}, {fraction:.0%} of the {system.name.split(' (')[0].lower()} "
                                   "is the neutral acid, which escapes as a toxic gas: work only in a fume hood, "
                                   "add any acid slowly and keep the vessel closed")
    recalled = [f"{label} of step {st.step}" for st in system.steps
                for label, value in (("pKa", st.pka_25c), ("ΔH°", st.dh_kj_mol), ("ΔCp°", st.dcp_j_k_mol))
                if value.source_kind == "from-memory"]
    if recalled:
        warnings.append(f"constants of {system_id} recalled rather than read in a source (from memory): "
                        f"{', '.join(recalled)}; treat the figures as estimates until they are checked")
    if system_id == "borate" and conc > POLYBORATE_LIMIT_MOL_L:
        warnings.append(f"{conc * 1000:.3g} mM borate is above about {POLYBORATE_LIMIT_MOL_L * 1000:g} mM, where "
                        "polyborates (ignored by poise) start to form; the pH may differ (from memory)")
    pkas = [float(pka_at_temperature(st.pka_25c.value, st.dh_kj_mol.value, st.dcp_j_k_mol.value,
                                     spec.temperature_c)) for st in system.steps]
    nearest = min(pkas, key=lambda p: abs(p - spec.ph))
    if abs(nearest - spec.ph) > 1.0:
        warnings.append(f"pH {spec.ph:g} is {abs(nearest - spec.ph):.1f} units from the nearest pKa of "
                        f"{system_id} ({nearest:.2f} at {spec.temperature_c:g} °C), outside its useful range "
                        "(pKa ± 1): little of the capacity comes from the buffer")
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
        buffer_conc_mol_l=conc, cost=cost, currency=prices.currency, cautions=tuple(cautions),
        textbook=textbook, mixing_table=tuple(mixing_table), stock=stock or {}, warnings=tuple(warnings),
    )


def _line(reagent_id, role, conc, spec, catalog, prices, as_stock=None) -> RecipeLine:
    reagent = catalog.reagents[reagent_id]
    cost = prices.cost({reagent_id: conc}, spec.volume_l, catalog)
    if as_stock is not None:
        ml = conc * spec.volume_l / as_stock * 1000.0
        return RecipeLine(reagent_id, reagent.name, role, conc, millilitres=ml, stock_mol_l=as_stock, cost=cost)
    grams = prices.grams_of_product(reagent_id, conc, spec.volume_l, catalog)
    return RecipeLine(reagent_id, reagent.name, role, conc, grams=grams, cost=cost)


def _volume_text(millilitres: float) -> str:
    """A volume for the bench: µL below 1 mL, else mL, to a sensible precision."""
    if millilitres < 1.0:
        return f"{millilitres * 1000:.3g} µL"
    return f"{millilitres:.4g} mL" if millilitres < 100 else f"{millilitres:.0f} mL"


def _meter_sentence(composition, spec: BufferSpec, catalog) -> str:
    """What the meter reads at preparation, and the pH at use when the two temperatures differ."""
    prep = _ph(composition, spec.prep_temperature_c, catalog)
    if abs(spec.prep_temperature_c - spec.temperature_c) < 1e-9:
        return f"At {spec.temperature_c:g} °C the meter should read pH {prep:.2f}."
    return (f"At {spec.prep_temperature_c:g} °C the meter should read pH {prep:.2f}; at {spec.temperature_c:g} °C "
            f"the pH is {spec.ph:.2f}.")


def _weigh_text(line: RecipeLine, catalog) -> str:
    reagent = catalog.reagents[line.reagent_id]
    purity = f" (purity {reagent.purity_fraction:.3g} included)" if reagent.purity_fraction < 1 else ""
    form = f", {reagent.formula}" if reagent.formula else ""
    return f"Weigh {line.grams:.4f} g of {reagent.name}{form}{purity}."


def _textbook_gap(system_id, spec, composition, acid_id, base_id, catalog) -> TextbookGap | None:
    """HH estimate for the step between the acid and base forms, beside the exact ratio."""
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
    z_base = system.charge_most_protonated - step_index
    # log K' = log K + (2 z_j + 1) log γ₁ (K'_j = K_j γ_(j−1)/γ_j), so pKa' = pKa − (2 z_j + 1) log γ₁.
    apparent = pka_t - (2 * z_base + 1) * float(eq.speciation.log10_gamma_unit[0])
    hh_ratio = 10.0 ** (spec.ph - pka25)
    exact_ratio = composition.get(base_id, 0.0) / max(composition.get(acid_id, 0.0), 1e-300)
    # pH an HH calculation with the exact ratio would predict, and how far each effect moves it.
    hh_ph_of_exact = pka25 + np.log10(exact_ratio)
    temperature_shift = pka_t - pka25
    activity_shift = apparent - pka_t
    overlap = spec.ph - (hh_ph_of_exact + temperature_shift + activity_shift)
    return TextbookGap(step_index, pka25, pka_t, apparent, hh_ratio, exact_ratio,
                       temperature_shift, activity_shift, float(overlap))


def _titrate(system_id, spec, conc, forms, catalog, prices, split) -> list[Recipe]:
    """Weigh one form and titrate: the form next below the target with strong base, or the
    form next above it with strong acid, whichever needs less titrant."""
    salt_id = _strong("salt", spec, catalog)
    own_ph = solve_equilibrium([f.reagent_id for f in forms], np.diag([conc / f.system_units for f in forms]),
                               spec.temperature_c, catalog=catalog).ph
    options = []
    below = [f for f, p in zip(forms, own_ph) if p < spec.ph]
    above = [f for f, p in zip(forms, own_ph) if p > spec.ph]
    if below and spec.counter_ion != "none":   # counter-ion "none": no NaOH/KOH, only HCl
        options.append((below[-1], _strong("base", spec, catalog)))
    if above:
        options.append((above[0], _strong("acid", spec, catalog)))
    if not options:
        why = (" (counter-ion 'none' admits no NaOH or KOH to titrate up)" if below and spec.counter_ion == "none"
               else "")
        raise InfeasibleSpecError(f"no form of {system_id} can be titrated to pH {spec.ph:g}{why}",
                                  [f"titrate: no admissible form and titrant{why}"])
    best, failures = None, []
    for form, titrant in options:
        line = _Line((form.reagent_id, titrant), np.array([conc / form.system_units, 0.0]), np.array([0.0, 1.0]))
        try:
            composition = _solve_composition(line, spec, 0.0, 4.0 * conc + 0.05, salt_id, catalog,
                                             f"{system_id} titrated with {titrant}")
        except InfeasibleSpecError as error:
            failures.append(error)
            continue
        if best is None or composition[titrant] < best[2][best[1]]:
            best = (form, titrant, composition)
    if best is None:
        if failures:
            raise failures[-1]
        return []
    form, titrant, composition = best
    amount = composition[titrant]
    lines = [_line(form.reagent_id, "buffer form", composition[form.reagent_id], spec, catalog, prices),
             _line(titrant, "titrant", amount, spec, catalog, prices, as_stock=TITRANT_STOCK_MOL_L)]
    if composition.get(salt_id):
        lines.append(_line(salt_id, "salt for ionic strength", composition[salt_id], spec, catalog, prices))
    steps = [_weigh_text(lines[0], catalog),
             *(_weigh_text(line, catalog) for line in lines[2:]),
             f"Dissolve in about {_volume_text(0.8 * spec.volume_l * 1000)} of water.",
             f"At {spec.prep_temperature_c:g} °C, add {TITRANT_STOCK_MOL_L:g} M "
             f"{catalog.reagents[titrant].name} (about {_volume_text(lines[1].millilitres)}) until the meter "
             f"reads pH {_ph(composition, spec.prep_temperature_c, catalog):.2f}.",
             f"Make up to {_volume_text(spec.volume_l * 1000)} with water and mix; check the pH once more.",
             f"At the use temperature, {spec.temperature_c:g} °C, the pH is {spec.ph:.2f}."]
    return [_summary(system_id, "titrate", spec, composition, lines, steps, catalog, prices, conc=conc)]


def _split(system_id, spec, conc, forms, catalog):
    """The two adjacent forms that bracket the target and the exact split between them."""
    salt_id = _strong("salt", spec, catalog)
    failures = []
    for acid, base in zip(forms, forms[1:]):
        line = _Line((acid.reagent_id, base.reagent_id), np.array([conc / acid.system_units, 0.0]),
                     np.array([-conc / acid.system_units, conc / base.system_units]))
        try:
            composition = _solve_composition(line, spec, 0.0, 1.0, salt_id, catalog,
                                             f"{system_id} from {acid.name} and {base.name}")
        except InfeasibleSpecError as error:
            failures.append(error)
            continue
        return acid, base, composition, salt_id
    # Only a failure other than "out of reach" (e.g. the ionic strength) says more than None.
    for error in failures:
        if not str(error).count("out of reach"):
            raise error
    return None


def _split_once(system_id, spec, conc, forms, catalog):
    """:func:`_split` for the routes of one make_recipes call, solved once and shared
    (two-forms, stocks and stock10x all start from the same split)."""
    memo: dict = {}

    def split():
        if not memo:
            try:
                memo["value"] = _split(system_id, spec, conc, forms, catalog)
            except InfeasibleSpecError as error:
                memo["error"] = error
        if "error" in memo:
            raise memo["error"]
        return memo["value"]
    return split


def _two_forms(system_id, spec, conc, forms, catalog, prices, split) -> list[Recipe]:
    found = split()
    if found is None:
        return []
    acid, base, composition, salt_id = found
    lines = [_line(acid.reagent_id, "acid form", composition[acid.reagent_id], spec, catalog, prices),
             _line(base.reagent_id, "base form", composition[base.reagent_id], spec, catalog, prices)]
    if composition.get(salt_id):
        lines.append(_line(salt_id, "salt for ionic strength", composition[salt_id], spec, catalog, prices))
    steps = [*(_weigh_text(line, catalog) for line in lines),
             f"Dissolve in about {_volume_text(0.8 * spec.volume_l * 1000)} of water and make up to "
             f"{_volume_text(spec.volume_l * 1000)}.",
             f"No titration is needed. {_meter_sentence(composition, spec, catalog)}"]
    gap = _textbook_gap(system_id, spec, composition, acid.reagent_id, base.reagent_id, catalog)
    return [_summary(system_id, "two-forms", spec, composition, lines, steps, catalog, prices, textbook=gap,
                     conc=conc)]


def _stocks(system_id, spec, conc, forms, catalog, prices, split) -> list[Recipe]:
    found = split()
    if found is None:
        return []
    acid, base, composition, salt_id = found
    stock_mol_l = EQUIMOLAR_STOCK_FACTOR * conc
    lines = [_line(acid.reagent_id, "acid-form stock", composition[acid.reagent_id], spec, catalog, prices,
                   as_stock=stock_mol_l),
             _line(base.reagent_id, "base-form stock", composition[base.reagent_id], spec, catalog, prices,
                   as_stock=stock_mol_l)]
    if composition.get(salt_id):
        lines.append(_line(salt_id, "salt for ionic strength", composition[salt_id], spec, catalog, prices))
    grams_per_l = {r.reagent_id: stock_mol_l * r.molar_mass_g_mol / r.purity_fraction for r in (acid, base)}
    stock_warnings = [f"stock of {r.name}: {grams_per_l[r.reagent_id]:.4g} g/L is above its solubility of about "
                      f"{r.solubility_g_l_25c.value:g} g/L at 25 °C" for r in (acid, base)
                      if r.solubility_g_l_25c is not None and grams_per_l[r.reagent_id] > r.solubility_g_l_25c.value]
    steps = [f"Stock A: {grams_per_l[acid.reagent_id]:.4f} g of {acid.name} per litre ({stock_mol_l * 1000:g} mM).",
             f"Stock B: {grams_per_l[base.reagent_id]:.4f} g of {base.name} per litre ({stock_mol_l * 1000:g} mM).",
             f"Mix {_volume_text(lines[0].millilitres)} of stock A with {_volume_text(lines[1].millilitres)} of stock B.",
             *(_weigh_text(line, catalog) for line in lines[2:]),
             f"Make up to {_volume_text(spec.volume_l * 1000)} with water. {_meter_sentence(composition, spec, catalog)}"]
    table = []
    for ph in np.round(np.arange(spec.ph - 1.0, spec.ph + 1.0001, 0.2), 2):
        try:
            shifted = _split(system_id, _replace_ph(spec, float(ph)), conc, [acid, base], catalog)
        except InputError:
            shifted = None
        if shifted is None:
            continue
        c = shifted[2]
        scale = spec.volume_l * 1000.0 / stock_mol_l
        table.append((float(ph), c[acid.reagent_id] * scale, c[base.reagent_id] * scale))
    gap = _textbook_gap(system_id, spec, composition, acid.reagent_id, base.reagent_id, catalog)
    recipe = _summary(system_id, "stocks", spec, composition, lines, steps, catalog, prices, textbook=gap,
                      mixing_table=table, conc=conc)
    return [dataclasses.replace(recipe, warnings=recipe.warnings + tuple(stock_warnings))]


def _replace_ph(spec: BufferSpec, ph: float) -> BufferSpec:
    return dataclasses.replace(spec, ph=ph)


def _stock10x(system_id, spec, conc, forms, catalog, prices, split) -> list[Recipe]:
    """A 10× stock of the two forms; the salt for the ionic strength goes in the diluent.

    The stock's pH is what the meter reads at preparation; the 1× dilution (1 volume of
    stock + 9 of diluent) is the verified composition.
    """
    found = split()
    if found is None:
        return []
    acid, base, composition, salt_id = found
    stock = {r: c * STOCK_FACTOR for r, c in composition.items() if r != salt_id}
    stock_ids = list(stock)
    stock_eq = solve_equilibrium(stock_ids, [stock[r] for r in stock_ids], spec.prep_temperature_c, catalog=catalog)
    stock_ph_prep = float(stock_eq.ph[0])
    stock_warnings = [f"10× stock: {w}" for w in stock_eq.warnings_for(0, catalog)]
    lines = [_line(acid.reagent_id, "acid form (10× stock)", composition[acid.reagent_id], spec, catalog, prices),
             _line(base.reagent_id, "base form (10× stock)", composition[base.reagent_id], spec, catalog, prices)]
    stock_volume_ml = spec.volume_l * 1000.0 / STOCK_FACTOR
    diluent_volume_l = spec.volume_l * (1.0 - 1.0 / STOCK_FACTOR)
    diluent = ""
    if composition.get(salt_id):
        lines.append(_line(salt_id, "salt for ionic strength (in the diluent)", composition[salt_id], spec, catalog,
                           prices))
        diluent = (f" containing {lines[2].grams / diluent_volume_l:.4f} g/L of {lines[2].name} "
                   f"({lines[2].grams:.4f} g in {diluent_volume_l * 1000:g} mL)")
    steps = [f"10× stock ({stock_volume_ml:g} mL): {lines[0].grams:.4f} g of {acid.name} and {lines[1].grams:.4f} g "
             f"of {base.name}, dissolved and made up to {stock_volume_ml:g} mL.",
             (f"The stock should read about pH {stock_ph_prep:.2f} at {spec.prep_temperature_c:g} °C. Do not "
              f"adjust it to {spec.ph:.2f}: dilution shifts the pH."
              if not stock_eq.ionic_strength_high[0] else
              f"Do not adjust the stock's pH: its ionic strength ({float(stock_eq.ionic_strength_mol_l[0]):.2f} mol/L) "
              "is beyond the activity model, so poise cannot say what a meter reads in it (the figure below is "
              "the model's, not a target)."),
             f"For use, mix 1 volume of stock with 9 volumes of water{diluent}: the 1× buffer is pH "
             f"{spec.ph:.2f} at {spec.temperature_c:g} °C."]
    stock_info = {"factor": STOCK_FACTOR, "stock_ph_at_prep": stock_ph_prep,
                  "stock_ionic_strength_mol_l": float(stock_eq.ionic_strength_mol_l[0]),
                  "stock_composition_mol_l": stock, "stock_volume_ml": stock_volume_ml,
                  "diluent_volume_ml": diluent_volume_l * 1000.0,
                  "diluent_salt_g_l": (lines[2].grams / diluent_volume_l) if len(lines) > 2 else 0.0}
    if stock_warnings:
        steps.append("Check the pH of the 1× dilution with the meter: that is the solution poise verifies.")
    recipe = _summary(system_id, "stock10x", spec, composition, lines, steps, catalog, prices, stock=stock_info,
                      conc=conc)
    reads = ("the 10× stock" if not stock_eq.ionic_strength_high[0]
             else "the 10× stock (model value, beyond the activity model's range)")
    return [dataclasses.replace(recipe, warnings=recipe.warnings + tuple(stock_warnings),
                                meter_ph_at_prep=stock_ph_prep, meter_reads=reads)]


_BUILDERS = {"titrate": _titrate, "two-forms": _two_forms, "stocks": _stocks, "stock10x": _stock10x}


def make_recipes(system: str, spec: BufferSpec, routes: Sequence[str] | None = None,
                 prices: PriceBook | None = None, catalog: Catalog | None = None) -> list[Recipe]:
    """Verified recipes for ``system`` (a name or alias) meeting ``spec``, one per route.

    Raises
    ------
    InputError for an unknown system or route; InfeasibleSpecError when no route reaches
    the target (with the reason of each route).
    """
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    system_id = resolve_system(system, catalog)
    chosen = list(routes) if routes else list(ROUTES)
    for route in chosen:
        if route not in ROUTES:
            raise InputError(f"unknown route {route!r}; routes: {', '.join(ROUTES)}")
    if catalog.systems[system_id].hazardous and not spec.allow_hazardous:
        raise InputError(f"{catalog.systems[system_id].name} is hazardous: {catalog.systems[system_id].hazard_note} "
                         "Allow hazardous systems to make it anyway (--allow-hazardous on the command line, the "
                         "'allow hazardous systems' box in the app).")
    forms = _forms(system_id, spec, catalog, prices)
    if not forms:
        raise InputError(f"no reagent form of {system_id} fits the spec (counter-ion {spec.counter_ion!r}"
                         f"{', in-stock list' if spec.in_stock is not None else ''})")
    conc = buffer_concentration(system_id, spec, catalog, prices)
    recipes, reasons = [], []
    split = _split_once(system_id, spec, conc, forms, catalog)
    for route in chosen:
        try:
            built = _BUILDERS[route](system_id, spec, conc, forms, catalog, prices, split)
        except InfeasibleSpecError as error:
            reasons.append(f"{route}: {error}")
            continue
        if built:
            recipes.extend(built)
        else:
            reasons.append(f"{route}: no pair of forms of {system_id} brackets pH {spec.ph:g}")
    if not recipes:
        raise InfeasibleSpecError(f"no recipe for {system_id} at pH {spec.ph:g} and {spec.temperature_c:g} °C: "
                                  + "; ".join(reasons), reasons)
    return recipes


def recipe_markdown(recipe: Recipe, catalog: Catalog | None = None) -> str:
    """A recipe as Markdown (also the readable text of ``poise recipe``)."""
    catalog = catalog if catalog is not None else load_catalog()
    system = catalog.systems[recipe.system_id]
    out = [f"# {system.name}: pH {recipe.target_ph:g} at {recipe.temperature_c:g} °C — route {recipe.route}",
           "",
           f"{recipe.volume_l * 1000:g} mL, {recipe.buffer_conc_mol_l * 1000:.4g} mM buffer.",
           "", "| reagent | role | final mM | amount |", "| --- | --- | --- | --- |"]
    for line in recipe.lines:
        amount = (f"{line.grams:.4f} g" if line.grams is not None
                  else f"{_volume_text(line.millilitres)} of {line.stock_mol_l:g} M stock")
        out.append(f"| {line.name} | {line.role} | {line.conc_mol_l * 1000:.4g} | {amount} |")
    out += ["", "## Steps", ""] + [f"{i}. {s}" for i, s in enumerate(recipe.steps, 1)]
    out += ["", "## Figures (re-solved)", "",
            f"- meter pH of {recipe.meter_reads} at {recipe.prep_temperature_c:g} °C (preparation): "
            f"**{recipe.meter_ph_at_prep:.3f}**",
            f"- verified pH at {recipe.temperature_c:g} °C (use): {recipe.verified_ph_at_use:.4f}",
            f"- ionic strength {recipe.ionic_strength_mol_l:.4f} mol/L, osmolarity (ideal) "
            f"{recipe.osmolarity_osmol_l * 1000:.1f} mOsm/L",
            f"- buffer capacity β {recipe.capacity_mol_l_per_ph * 1000:.2f} mM per pH, dilution value ΔpH½ "
            f"{recipe.dilution_value_ph:+.3f}, dpH/dT {recipe.dph_dt_per_k:+.4f} per K"]
    if recipe.cost is not None:
        out.append(f"- reagent cost {recipe.cost:.2f} {recipe.currency} for this volume")
    if recipe.textbook is not None:
        out += ["", "## Textbook vs bench", "", recipe.textbook.sentence()]
    if recipe.mixing_table:
        out += ["", "## Mixing volumes across pH (stock A + stock B, then make up)", "",
                "| pH | mL stock A | mL stock B |", "| --- | --- | --- |"]
        out += [f"| {p:.2f} | {a:.2f} | {b:.2f} |" for p, a, b in recipe.mixing_table]
    if recipe.warnings:
        out += ["", "## Warnings", ""] + [f"- {w}" for w in recipe.warnings]
    out += ["", "## Cautions", ""] + [f"- {c}" for c in recipe.cautions]
    return "\n".join(out)


@dataclass(frozen=True)
class StandardRecipe:
    """A pH standard made by its published recipe (molalities: grams per kg of water)."""

    standard_id: str
    name: str
    water_kg: float
    grams: dict[str, float]
    table: tuple[tuple[float, float, str], ...]
    engine_ph: tuple[tuple[float, float], ...]
    preparation: str
    note: str
    cautions: tuple[str, ...]

    def as_json(self) -> dict:
        return {"standard": self.standard_id, "name": self.name, "water_kg": self.water_kg,
                "grams": self.grams, "preparation": self.preparation, "note": self.note,
                "ph_table": [{"temperature_c": t, "ph": p, "source": s} for t, p, s in self.table],
                "engine_ph": [{"temperature_c": t, "ph": p} for t, p in self.engine_ph],
                "cautions": list(self.cautions)}


def standard_recipe(standard_id: str, water_kg: float = 1.0, catalog: Catalog | None = None) -> StandardRecipe:
    """The recipe of a pH standard buffer and its pH table across temperature, from the catalog.

    Grams are of the product as bought (purity included) per ``water_kg`` of water, because
    the standards are defined by molality.  ``engine_ph`` is poise's own value beside the
    published one (Davies activity; see tests/test_ph_standards.py for the agreement).
    """
    catalog = catalog if catalog is not None else load_catalog()
    standard = catalog.ph_standards.get(standard_id)
    if standard is None:
        raise InputError(f"unknown pH standard {standard_id!r}; standards: {', '.join(catalog.ph_standards)}")
    if not (np.isfinite(water_kg) and water_kg > 0):
        raise InputError(f"water mass must be above 0 kg, got {water_kg!r}")
    grams = {}
    for reagent_id, molality in standard.components_mol_kg:
        reagent = catalog.reagents[reagent_id]
        grams[reagent_id] = molality * water_kg * reagent.molar_mass_g_mol / reagent.purity_fraction
    from selector.chemistry.equilibrium import molal_to_molar

    ids = [r for r, _ in standard.components_mol_kg]
    molal = np.array([m for _, m in standard.components_mol_kg])
    temperatures = np.array([t for t, _ in standard.values])
    amounts = molal[None, :] * np.asarray(molal_to_molar(1.0, temperatures))[:, None]
    engine = solve_equilibrium(ids, amounts, temperatures, catalog=catalog).ph
    cautions = tuple(f"{catalog.reagents[r].name}: {catalog.reagents[r].cautions}" for r in ids
                     if catalog.reagents[r].cautions) + (SAFETY_NOTICE,)
    table = tuple((t, v.value, v.source or v.source_kind) for t, v in standard.values)
    return StandardRecipe(standard_id, standard.name, water_kg, grams, table,
                          tuple((float(t), float(p)) for t, p in zip(temperatures, engine)),
                          standard.preparation, standard.note, cautions)


def standard_markdown(recipe: StandardRecipe, catalog: Catalog | None = None) -> str:
    catalog = catalog if catalog is not None else load_catalog()
    out = [f"# pH standard: {recipe.name}", "", f"Per {recipe.water_kg:g} kg of water:", ""]
    out += [f"- {grams:.4f} g of {catalog.reagents[r].name} ({catalog.reagents[r].formula})"
            for r, grams in recipe.grams.items()]
    out += ["", recipe.preparation, "", "| °C | pH(PS) | source | poise |", "| --- | --- | --- | --- |"]
    engine = dict(recipe.engine_ph)
    out += [f"| {t:g} | {p:.3f} | {s} | {engine[t]:.3f} |" for t, p, s in recipe.table]
    out += ["", recipe.note, "", "## Cautions", ""] + [f"- {c}" for c in recipe.cautions]
    return "\n".join(out)


def recipe_csv(recipe: Recipe) -> str:
    """The recipe's reagent lines as CSV (reagent, role, final mM, grams, mL, stock M, cost)."""
    import csv
    import io

    buffer = io.StringIO()
    writer = csv.writer(buffer)
    writer.writerow(["reagent_id", "name", "role", "final_mM", "grams", "ml", "stock_mol_l",
                     f"cost_{recipe.currency}"])
    for line in recipe.lines:
        writer.writerow([line.reagent_id, line.name, line.role, f"{line.conc_mol_l * 1000:.6g}",
                         "" if line.grams is None else f"{line.grams:.4f}",
                         "" if line.millilitres is None else f"{line.millilitres:.3f}",
                         "" if line.stock_mol_l is None else f"{line.stock_mol_l:g}",
                         "" if line.cost is None else f"{line.cost:.4f}"])
    return buffer.getvalue()


def recipe_html(recipe: Recipe, catalog: Catalog | None = None) -> str:
    """A printable, self-contained HTML recipe card."""
    import html

    catalog = catalog if catalog is not None else load_catalog()
    system = catalog.systems[recipe.system_id]
    esc = html.escape
    rows = "".join(
        f"<tr><td>{esc(line.name)}</td><td>{esc(line.role)}</td><td>{line.conc_mol_l * 1000:.4g}</td>"
        f"<td>{(f'{line.grams:.4f} g' if line.grams is not None else f'{line.millilitres:.2f} mL of {line.stock_mol_l:g} M')}</td></tr>"
        for line in recipe.lines)
    steps = "".join(f"<li>{esc(s)}</li>" for s in recipe.steps)
    cautions = "".join(f"<li>{esc(c)}</li>" for c in recipe.cautions)
    warnings = "".join(f"<li>{esc(w)}</li>" for w in recipe.warnings)
    return f"""<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>{esc(system.name)} pH {recipe.target_ph:g}</title>
<style>body{{font-family:sans-serif;max-width:46em;margin:2em auto}}table{{border-collapse:collapse}}
td,th{{border:1px solid #999;padding:.3em .6em}}.meter{{font-size:1.4em;font-weight:bold}}
@media print{{body{{margin:0}}}}</style></head><body>
<h1>{esc(system.name)} — pH {recipe.target_ph:g} at {recipe.temperature_c:g} °C</h1>
<p>Route: {esc(recipe.route)} · {recipe.volume_l * 1000:g} mL · {recipe.buffer_conc_mol_l * 1000:.4g} mM buffer</p>
<table><tr><th>reagent</th><th>role</th><th>final mM</th><th>amount</th></tr>{rows}</table>
<h2>Steps</h2><ol>{steps}</ol>
<p class="meter">Meter ({esc(recipe.meter_reads)}) at {recipe.prep_temperature_c:g} °C: pH {recipe.meter_ph_at_prep:.2f}</p>
<p>Verified pH at {recipe.temperature_c:g} °C: {recipe.verified_ph_at_use:.3f} · I = {recipe.ionic_strength_mol_l:.4f} mol/L
· β = {recipe.capacity_mol_l_per_ph * 1000:.2f} mM/pH · ΔpH½ = {recipe.dilution_value_ph:+.3f}</p>
{f"<h2>Warnings</h2><ul>{warnings}</ul>" if warnings else ""}
<h2>Cautions</h2><ul>{cautions}</ul>
</body></html>
"""
