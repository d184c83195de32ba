"""Recipes as a person reads and prints them: the recipe, the bench sheet, the bottle label
and the methods sentence.

Each output is ONE template (``*_document``: a :class:`~selector.recipe.document.Document`),
rendered to text, Markdown, HTML or CSV by :mod:`selector.recipe.document`, so the formats
cannot drift apart.  Every function takes a finished record
(:class:`~selector.recipe.compose.Recipe` or :class:`~selector.recipe.standards.StandardRecipe`)
and returns text; nothing is computed here.
"""

from __future__ import annotations

from typing import Callable

from catalog import Catalog, load_catalog
from selector.errors import InputError
from selector.recipe.bench import ROLE_ORDER, role_of
from selector.recipe.compose import Recipe, RecipeLine, volume_text
from selector.recipe.document import (
    Blanks,
    Block,
    Document,
    Heading,
    Items,
    Paragraph,
    Table,
    render,
    to_csv,
    to_html,
    to_markdown,
    to_text,
)
from selector.recipe.standards import StandardRecipe
from selector.report import plus_minus
from selector.safety import SAFETY_NOTICE


def amount_text(line: RecipeLine) -> str:
    """``12.1140 g`` for a solid, ``25 mL of 1 M stock`` for a stock, ``5.2 mL (6.1 g)`` for a liquid."""
    if line.millilitres is not None and line.stock_mol_l is not None:
        return f"{volume_text(line.millilitres)} of {line.stock_mol_l:g} M stock"
    if line.millilitres is not None:
        return f"{volume_text(line.millilitres)} ({line.grams or 0.0:.4f} g)"
    return f"{line.grams or 0.0:.4f} g"


def _volume_sentence(recipe: Recipe) -> str:
    batches = (f" as {recipe.batches} × {volume_text(recipe.batch_volume_l * 1000)} batches (amounts per batch)"
               if recipe.batches > 1 else "")
    chelators = "".join(f"; {line.conc_mol_l * 1000:.4g} mM {line.name} as chelator (for the metal, not the pH)"
                        for line in recipe.lines if line.role == "chelator")
    buffer = (f"{recipe.buffer_conc_mol_l * 1000:.4g} mM buffer" if recipe.buffer_conc_mol_l > 0 or not chelators
              else "no pH buffer besides the chelator")
    return f"{volume_text(recipe.volume_l * 1000)}{batches}, {buffer}{chelators}."


def _reagent_table(recipe: Recipe) -> Table:
    return Table(("reagent", "role", "final mM", "amount"),
                 tuple((line.name, line.role, f"{line.conc_mol_l * 1000:.4g}", amount_text(line))
                       for line in recipe.lines))


def _figures(recipe: Recipe) -> tuple[str, ...]:
    out = [f"meter pH of {recipe.meter_reads} at {recipe.prep_temperature_c:g} °C (preparation): "
           f"{recipe.meter_ph_at_prep:.3f}{plus_minus(recipe.meter_ph_uncertainty, '.3f')}",
           f"verified pH at {recipe.temperature_c:g} °C (use): {recipe.verified_ph_at_use:.4f}"
           f"{plus_minus(recipe.verified_ph_uncertainty, '.3f')}",
           f"ionic strength {recipe.ionic_strength_mol_l:.4f} mol/L, osmolarity (ideal) "
           f"{recipe.osmolarity_osmol_l * 1000:.1f} mOsm/L",
           f"buffer capacity β {recipe.capacity_mol_l_per_ph * 1000:.2f}"
           f"{plus_minus(recipe.capacity_uncertainty_mol_l_per_ph, '.2f', 1000)} mM per pH, dilution value ΔpH½ "
           f"{recipe.dilution_value_ph:+.3f}, dpH/dT {recipe.dph_dt_per_k:+.4f} per K"]
    if recipe.adjust_meter_ph is not None:
        out.append(f"meter reading at the end of the titrant addition (before the salt and the make-up) at "
                   f"{recipe.prep_temperature_c:g} °C: {recipe.adjust_meter_ph:.3f}")
    if recipe.titrant_ml_uncertainty is not None:
        out.append(f"titrant volume ± {volume_text(recipe.titrant_ml_uncertainty)} (what the constants' "
                   "uncertainty could change it by: titrate to the meter reading, not to the volume)")
    if recipe.verified_ph_uncertainty is not None:
        out.append("± is one standard uncertainty from the published constants' uncertainties and the activity "
                   "model; the meter's own calibration uncertainty comes on top")
    if recipe.cost is not None:
        out.append(f"reagent cost {recipe.cost:.2f} {recipe.currency} for this volume (invented demo prices unless "
                   "a price sheet was given)")
    return tuple(out)


def _title(recipe: Recipe) -> str:
    return f"{recipe.title or recipe.system_id}: pH {recipe.target_ph:.4g} at {recipe.temperature_c:g} °C"


def _closing(recipe: Recipe) -> list[Block]:
    blocks: list[Block] = []
    if recipe.warnings:
        blocks += [Heading("Warnings"), Items(recipe.warnings)]
    return blocks + [Heading("Cautions"), Items(recipe.cautions)]


def recipe_document(recipe: Recipe) -> Document:
    """The recipe template: reagents, steps, verified figures, extras, warnings, cautions."""
    blocks: list[Block] = [Paragraph(f"Route {recipe.route}. {_volume_sentence(recipe)}"), _reagent_table(recipe),
                           Heading("Steps"), Items(recipe.steps, ordered=True),
                           Heading("Figures (re-solved)"), Items(_figures(recipe))]
    if recipe.textbook is not None:
        blocks += [Heading("Textbook vs bench"), Paragraph(recipe.textbook.sentence())]
    if recipe.mixing_table:
        blocks += [Heading("Mixing volumes across pH (stock A + stock B, then make up)"),
                   Table(("pH", "stock A", "stock B"),
                         tuple((f"{p:.2f}", volume_text(a), volume_text(b)) for p, a, b in recipe.mixing_table))]
    return Document(f"{_title(recipe)} — route {recipe.route}", tuple(blocks + _closing(recipe)))


#: The checks of every bench sheet (common practice of a buffer bench).
SHEET_CHECKS = (
    "pH meter calibrated today with two standards that bracket the target, at the preparation temperature",
    "temperature of the solution read beside every pH reading",
    "final volume made up in a volumetric flask or a calibrated vessel",
    "the cautions below read; protective equipment worn",
    "bottle labelled with the label of this recipe",
)


def bench_sheet_document(recipe: Recipe) -> Document:
    """The bench sheet template: the recipe with blanks to fill in and the checks to do."""
    readings: list[tuple[str | None, ...]] = []
    if recipe.adjust_meter_ph is not None:
        readings.append((f"end of titrant addition, {recipe.prep_temperature_c:g} °C",
                         f"{recipe.adjust_meter_ph:.2f}", None, None))
    readings.append((f"made up, {recipe.prep_temperature_c:g} °C ({recipe.meter_reads})",
                     f"{recipe.meter_ph_at_prep:.2f}{plus_minus(recipe.meter_ph_uncertainty, '.2f')}", None, None))
    if abs(recipe.temperature_c - recipe.prep_temperature_c) > 1e-9:
        readings.append((f"at use, {recipe.temperature_c:g} °C (optional)",
                         f"{recipe.verified_ph_at_use:.2f}{plus_minus(recipe.verified_ph_uncertainty, '.2f')}",
                         None, None))
    blocks: list[Block] = [
        Paragraph(f"Route {recipe.route}. {_volume_sentence(recipe)}"),
        Blanks(("operator", "date", "notebook reference", "pH meter and electrode", "calibration standards")),
        Heading("Reagents"),
        Table(("reagent", "role", "amount", "lot number", "balance reading / volume taken"),
              tuple((line.name, line.role, amount_text(line), None, None) for line in recipe.lines)),
        Heading("Steps"), Items(recipe.steps, ordered=True),
        Heading("Readings"),
        Table(("reading", "expected pH", "measured pH", "measured °C"), tuple(readings)),
        Heading("Made"),
        Blanks(("volume made", "stored at", "use by", "signature", "checked by")),
        Heading("Checks"), Items(SHEET_CHECKS, checkboxes=True),
    ]
    return Document(f"Bench sheet — {_title(recipe)}", tuple(blocks + _closing(recipe)))


def hazard_words(recipe: Recipe, catalog: Catalog) -> tuple[str, ...]:
    """The hazard flags of the recipe's reagents, in words, each once."""
    flags = dict.fromkeys(flag for line in recipe.lines for flag in catalog.reagents[line.reagent_id].hazard_flags)
    return tuple(flag.replace("_", " ") for flag in flags)


def _roles(recipe: Recipe, catalog: Catalog) -> dict[str, list[RecipeLine]]:
    """The recipe's lines by what they are (not by the route's wording of the role)."""
    out: dict[str, list[RecipeLine]] = {role: [] for role in ROLE_ORDER}
    for line in recipe.lines:
        out[role_of(catalog.reagents[line.reagent_id], catalog)].append(line)
    return out


def _composition_phrases(recipe: Recipe, catalog: Catalog) -> tuple[str, str, str]:
    """(``50 mM Tris``, ``Tris base titrated with hydrochloric acid; counter-ion chloride``,
    ``100 mM sodium chloride``) of a recipe."""
    roles = _roles(recipe, catalog)
    # A chelator alone (EGTA titrated to a pH, no buffer) is what the solution is made of;
    # beside a buffer it is an additive, listed with the salts.
    forms, titrants = roles["buffer form"] or roles["chelator"], roles["titrant"]
    additives = roles["chelator"] if roles["buffer form"] else []
    systems = ", ".join(
        f"{sum(line.conc_mol_l * catalog.reagents[line.reagent_id].system_units for line in forms if catalog.reagents[line.reagent_id].system_id == s) * 1000:.3g} mM "
        f"{catalog.systems[s].short_name}" for s in recipe.systems
        if any(catalog.reagents[line.reagent_id].system_id == s for line in forms))
    made = " and ".join(line.name for line in forms)
    if titrants:
        made += " titrated with " + " and ".join(line.name for line in titrants)
    ions = dict.fromkeys(ion for line in forms + titrants for ion, _ in catalog.reagents[line.reagent_id].ions
                         if ion not in ("H", "OH"))
    names = [catalog.ions[ion].name if ion in catalog.ions else ion for ion in ions]
    if names:
        made += f"; counter-ion{'s' if len(names) > 1 else ''} {', '.join(names)}"
    salts = " and ".join(f"{line.conc_mol_l * 1000:.3g} mM {line.name}"
                         for line in additives + roles["salt for ionic strength"] + roles["other"])
    return systems or recipe.system_id, made, salts


def label_document(recipe: Recipe, catalog: Catalog | None = None) -> Document:
    """The bottle label template: name, composition, pH at temperature, I, dates, hazard words."""
    catalog = catalog if catalog is not None else load_catalog()
    words = hazard_words(recipe, catalog)
    systems, made, salts = _composition_phrases(recipe, catalog)
    blocks: list[Block] = [
        Paragraph(f"pH {recipe.verified_ph_at_use:.2f} at {recipe.temperature_c:g} °C · I = "
                  f"{recipe.ionic_strength_mol_l * 1000:.0f} mM", strong=True),
        Paragraph(f"{systems}{' + ' + salts if salts else ''} ({made})"),
        Blanks(("made on", "by", "use by")),
        Paragraph("Hazards of the reagents used: " + (", ".join(words) if words else "none flagged in the catalog")),
    ]
    if words:
        blocks.append(Paragraph(SAFETY_NOTICE))
    return Document(recipe.title or recipe.system_id, tuple(blocks))


def methods_sentence(recipe: Recipe, catalog: Catalog | None = None) -> str:
    """One sentence for a paper or notebook: species and counter-ions, concentrations, the
    temperature the pH was set at and the ionic strength."""
    catalog = catalog if catalog is not None else load_catalog()
    systems, made, salts = _composition_phrases(recipe, catalog)
    return (f"The buffer was {systems} ({made}){' with ' + salts if salts else ''}, pH "
            f"{recipe.verified_ph_at_use:.2f} at {recipe.temperature_c:g} °C (set at {recipe.prep_temperature_c:g} °C "
            f"to a meter reading of {recipe.meter_ph_at_prep:.2f} in {recipe.meter_reads}), ionic strength "
            f"{recipe.ionic_strength_mol_l:.3f} M.")


#: Every output by name: the template that builds its document.
OUTPUTS: dict[str, Callable[[Recipe, Catalog], Document]] = {
    "recipe": lambda recipe, catalog: recipe_document(recipe),
    "sheet": lambda recipe, catalog: bench_sheet_document(recipe),
    "label": label_document,
}


def render_recipe(recipe: Recipe, output: str = "recipe", fmt: str = "text", catalog: Catalog | None = None) -> str:
    """``recipe`` as one of :data:`OUTPUTS` (or ``methods``, the sentence) in one of the formats."""
    catalog = catalog if catalog is not None else load_catalog()
    if output == "methods":
        sentence = methods_sentence(recipe, catalog)
        return sentence if fmt in ("text", "markdown") else render(Document("Methods", (Paragraph(sentence),)), fmt)
    try:
        template = OUTPUTS[output]
    except KeyError:
        raise InputError(f"unknown output {output!r}; outputs: {', '.join([*OUTPUTS, 'methods'])}") from None
    return render(template(recipe, catalog), fmt)


def recipe_markdown(recipe: Recipe, catalog: Catalog | None = None) -> str:
    """A recipe as Markdown."""
    return to_markdown(recipe_document(recipe))


def recipe_text(recipe: Recipe, catalog: Catalog | None = None) -> str:
    """A recipe as plain text (the CLI's output)."""
    return to_text(recipe_document(recipe))


def recipe_html(recipe: Recipe, catalog: Catalog | None = None) -> str:
    """A recipe as a printable, self-contained HTML page."""
    return to_html(recipe_document(recipe))


def recipe_csv(recipe: Recipe) -> str:
    """A recipe as CSV (section, item, value …)."""
    return to_csv(recipe_document(recipe))


def standard_markdown(recipe: StandardRecipe, catalog: Catalog | None = None) -> str:
    """A pH standard's recipe and its published pH table beside poise's, as Markdown."""
    catalog = catalog if catalog is not None else load_catalog()
    out = [f"# pH standard {recipe.label}: {recipe.name}", "", f"Per {recipe.water_kg:g} kg of water:", ""]
    out += [f"- {grams:.4f} g of {catalog.reagents[r].name} ({catalog.reagents[r].formula})"
            for r, grams in recipe.grams.items()]
    out += ["", recipe.preparation, "",
            "pH(PS) is the published value; the last column is computed by poise for the same molalities "
            "(Davies activity model), shown to judge its agreement.", "",
            "| °C | pH(PS) | source | computed by poise |", "| --- | --- | --- | --- |"]
    engine = dict(recipe.engine_ph)
    out += [f"| {t:g} | {p:.3f} | {s} | {engine[t]:.3f} |" for t, p, s in recipe.table]
    out += ["", recipe.note, "", "## Cautions", ""] + [f"- {c}" for c in recipe.cautions]
    return "\n".join(out)


