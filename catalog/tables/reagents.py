"""``reagents.csv``: something a lab buys and weighs, with its system, ions and protonation state.

The protonation state follows from charge neutrality: the system part of the formula has
charge −Σ(ion charges), so ``protons_removed = units·z0 − that charge``, which must lie
within the listed steps (DEVELOPERS.md, "The catalog").
"""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping

from catalog.records import HAZARD_FLAG_VOCABULARY, SOURCE_KINDS, Ion, Reagent, Source, Sourced, System
from catalog.rows import Row

TABLE = "reagents.csv"
COLUMNS = (
    "reagent_id", "name", "formula", "aliases", "system_id", "system_units", "ions",
    "hydrate_water", "molar_mass_g_mol", "physical_form", "solubility_g_l_25c",
    "solubility_source", "solubility_source_kind", "purity_fraction",
    "purity_source_kind", "demo_price_per_kg", "price_source_kind", "hazard_flags",
    "cautions", "density_g_ml", "density_source", "density_source_kind",
)

PHYSICAL_FORMS = ("solid", "liquid")


def reagents_from_rows(rows: Iterable[Row], systems: Mapping[str, System], ions: Mapping[str, Ion],
                       sources: Mapping[str, Source]) -> tuple[dict[str, Reagent], dict[str, int]]:
    """Reagents by id, and the line of each in the file."""
    reagents: dict[str, Reagent] = {}
    lines: dict[str, int] = {}
    for row in rows:
        reagent = _reagent(row, systems, ions, sources, reagents)
        reagents[reagent.reagent_id] = reagent
        lines[reagent.reagent_id] = row.line
    return reagents, lines


def parse_ions(row: Row, ions: Mapping[str, Ion]) -> tuple[tuple[str, int], ...]:
    """The ``ion:count;ion:count`` cell as (ion id, count) pairs of known ions and counts >= 1."""
    parsed = []
    for part in row.listing("ions"):
        ion_id, _, count = part.partition(":")
        ion_id = ion_id.strip()
        if ion_id not in ions:
            row.problem("ions", f"expected ion ids from ions.csv ({', '.join(ions)}), got {ion_id!r}")
            continue
        try:
            n = int(count)
        except ValueError:
            row.problem("ions", f"expected ion:count with a whole count, got {part!r}")
            continue
        if n <= 0:
            row.problem("ions", f"expected a count >= 1, got {part!r}")
            continue
        parsed.append((ion_id, n))
    return tuple(parsed)


def _reagent(row: Row, systems: Mapping[str, System], ions: Mapping[str, Ion],
             sources: Mapping[str, Source], seen: Collection[str]) -> Reagent:
    reagent_id = row.slug("reagent_id")
    row.unique("reagent_id", reagent_id, seen)
    system_id, units = _system_and_units(row, systems)
    reagent_ions = parse_ions(row, ions)
    protons_removed = _protons_removed(row, systems, ions, system_id, units, reagent_ions)
    hydrate = row.integer("hydrate_water", required=False, minimum=0)
    molar_mass = row.number("molar_mass_g_mol", positive=True)
    physical_form = row.choice("physical_form", PHYSICAL_FORMS)
    solubility = row.sourced("solubility_g_l_25c", "solubility_source", "solubility_source_kind",
                             sources, required=False, positive=True)
    purity = row.number("purity_fraction", minimum=0.1, maximum=1.0)
    purity_kind = row.choice("purity_source_kind", SOURCE_KINDS)
    price = _price(row)
    hazard_flags, cautions = _hazards(row)
    density = _density(row, physical_form, sources)
    return Reagent(
        reagent_id=reagent_id,
        name=row.text("name", required=True),
        formula=row.text("formula", required=True),
        aliases=row.listing("aliases"),
        system_id=system_id,
        system_units=units,
        ions=reagent_ions,
        hydrate_water=hydrate or 0,
        molar_mass_g_mol=molar_mass or 0.0,
        physical_form=physical_form,
        solubility_g_l_25c=solubility,
        purity_fraction=purity or 1.0,
        purity_source_kind=purity_kind,
        demo_price_per_kg=price,
        hazard_flags=hazard_flags,
        cautions=cautions,
        protons_removed=protons_removed,
        density_g_ml=density,
    )


def _system_and_units(row: Row, systems: Mapping[str, System]) -> tuple[str | None, int]:
    """The reagent's system id (None for a strong reagent) and how many units of it one formula holds."""
    system_id = row.text("system_id") or None
    if system_id is None:
        if row.text("system_units") not in ("", "0"):
            row.problem("system_units", "expected an empty cell for a reagent with no system, "
                        f"got {row.text('system_units')!r}")
        return None, 0
    row.reference("system_id", system_id, systems, "a system of systems.csv or an empty cell")
    return system_id, row.integer("system_units", minimum=1) or 0


def _protons_removed(row: Row, systems: Mapping[str, System], ions: Mapping[str, Ion], system_id: str | None,
                     units: int, reagent_ions: tuple[tuple[str, int], ...]) -> int:
    """Protons taken from ``units`` most protonated units, by charge neutrality (0 for a strong reagent)."""
    ion_charge = sum(ions[i].charge * n for i, n in reagent_ions)
    if system_id is None:
        if not reagent_ions:
            row.problem("ions", "expected ions for a reagent with no system, got none")
        elif ion_charge != 0:
            row.problem("ions", f"expected ions that sum to charge 0, got {ion_charge:+d}")
        return 0
    # H may stand beside a system for a proton more acidic than any listed step
    # (PIPES free acid, H2L: its first step, pK below 3, is taken as strong).
    if any(i == "OH" for i, _ in reagent_ions):
        row.problem("ions", "expected no OH among the ions of a reagent that carries a system")
    system = systems.get(system_id)
    if system is None or not units:
        return 0
    system_part_charge = -ion_charge
    protons_removed = units * system.charge_most_protonated - system_part_charge
    if not 0 <= protons_removed <= units * system.n_steps:
        row.problem("ions", f"expected ions that leave {system_id} in a listed protonation "
                    f"state (0..{units * system.n_steps} protons removed), got {protons_removed}")
    return protons_removed


def _density(row: Row, physical_form: str, sources: Mapping[str, Source]) -> Sourced | None:
    """The density of a liquid as bought near 20 °C [g/mL] with its source, or None; a solid carries none."""
    density = row.sourced("density_g_ml", "density_source", "density_source_kind", sources, required=False,
                          minimum=0.5, maximum=3.0)
    if density is not None and physical_form != "liquid":
        row.problem("density_g_ml", f"expected an empty cell for a {physical_form} (only liquids are measured "
                    f"by volume), got {row.text('density_g_ml')!r}")
    return density


def _price(row: Row) -> Sourced | None:
    """The invented demo price [EUR/kg] with its source kind, or None where the cell is empty."""
    price_per_kg = row.number("demo_price_per_kg", required=False, minimum=0.0)
    if price_per_kg is None:
        return None
    return Sourced(price_per_kg, "", row.choice("price_source_kind", SOURCE_KINDS))


def _hazards(row: Row) -> tuple[tuple[str, ...], str]:
    """Hazard flags from the vocabulary, and the cautions every flagged reagent must carry."""
    hazard_flags = row.listing("hazard_flags")
    for flag in hazard_flags:
        if flag not in HAZARD_FLAG_VOCABULARY:
            row.problem("hazard_flags", f"expected flags from {', '.join(HAZARD_FLAG_VOCABULARY)}, got {flag!r}")
    cautions = row.text("cautions")
    if hazard_flags and not cautions:
        row.problem("cautions", "expected cautions for a reagent with hazard flags, got an empty cell")
    return hazard_flags, cautions
