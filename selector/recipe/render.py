"""Recipes as a person reads them: Markdown (also the CLI's text), CSV lines, an HTML card.

Every function takes a finished record (:class:`~selector.recipe.compose.Recipe` or
:class:`~selector.recipe.standards.StandardRecipe`) and returns text; nothing is computed here.
"""

from __future__ import annotations

import html
from typing import Sequence

from catalog import Catalog, load_catalog
from selector.recipe.compose import Recipe, RecipeLine, volume_text
from selector.recipe.standards import StandardRecipe
from selector.report import plus_minus
from selector.textsafe import write_csv


def _amount_text(line: RecipeLine) -> str:
    """``12.1140 g`` for a solid, ``25 mL of 1 M stock`` for a stock."""
    if line.millilitres is not None:
        return f"{volume_text(line.millilitres)} of {line.stock_mol_l:g} M stock"
    return f"{line.grams:.4f} g"


def recipe_markdown(recipe: Recipe, catalog: Catalog | None = None, cost_lines: Sequence[str] = ()) -> str:
    """A recipe as Markdown (also the readable text of ``poise recipe``); ``cost_lines`` (price
    origins, plates) follow the reagent cost."""
    catalog = catalog if catalog is not None else load_catalog()
    system = catalog.systems[recipe.system_id]
    out = [f"# {system.name}: pH {recipe.target_ph:g} at {recipe.temperature_c:g} °C — route {recipe.route}",
           "",
           f"{recipe.volume_l * 1000:g} mL, {recipe.buffer_conc_mol_l * 1000:.4g} mM buffer.",
           "", "| reagent | role | final mM | amount |", "| --- | --- | --- | --- |"]
    out += [f"| {line.name} | {line.role} | {line.conc_mol_l * 1000:.4g} | {_amount_text(line)} |"
            for line in recipe.lines]
    out += ["", "## Steps", ""] + [f"{i}. {s}" for i, s in enumerate(recipe.steps, 1)]
    out += ["", "## Figures (re-solved)", "",
            f"- meter pH of {recipe.meter_reads} at {recipe.prep_temperature_c:g} °C (preparation): "
            f"**{recipe.meter_ph_at_prep:.3f}{plus_minus(recipe.meter_ph_uncertainty, '.3f')}**",
            f"- verified pH at {recipe.temperature_c:g} °C (use): {recipe.verified_ph_at_use:.4f}"
            f"{plus_minus(recipe.verified_ph_uncertainty, '.3f')}",
            f"- ionic strength {recipe.ionic_strength_mol_l:.4f} mol/L, osmolarity (ideal) "
            f"{recipe.osmolarity_osmol_l * 1000:.1f} mOsm/L",
            f"- buffer capacity β {recipe.capacity_mol_l_per_ph * 1000:.2f}"
            f"{plus_minus(recipe.capacity_uncertainty_mol_l_per_ph, '.2f', 1000)} mM per pH, dilution value ΔpH½ "
            f"{recipe.dilution_value_ph:+.3f}, dpH/dT {recipe.dph_dt_per_k:+.4f} per K"]
    if recipe.titrant_ml_uncertainty is not None:
        out.append(f"- titrant volume ± {volume_text(recipe.titrant_ml_uncertainty)} (what the constants' "
                   "uncertainty could change it by: titrate to the meter reading, not to the volume)")
    if recipe.verified_ph_uncertainty is not None:
        out.append("- ± is one standard uncertainty from the published constants' uncertainties and the activity "
                   "model; the meter's own calibration uncertainty comes on top")
    if recipe.cost is not None:
        out.append(f"- reagent cost {recipe.cost:.2f} {recipe.currency} for this volume")
    out += [f"- {line.strip()}" for line in cost_lines]
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


def standard_markdown(recipe: StandardRecipe, catalog: Catalog | None = None) -> str:
    """A pH standard's recipe and its published pH table beside poise's, as Markdown."""
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
    columns = ["reagent_id", "name", "role", "final_mM", "grams", "ml", "stock_mol_l", f"cost_{recipe.currency}"]
    rows = [[line.reagent_id, line.name, line.role, f"{line.conc_mol_l * 1000:.6g}",
             "" if line.grams is None else f"{line.grams:.4f}",
             "" if line.millilitres is None else f"{line.millilitres:.3f}",
             "" if line.stock_mol_l is None else f"{line.stock_mol_l:g}",
             "" if line.cost is None else f"{line.cost:.4f}"] for line in recipe.lines]
    return write_csv(columns, rows, line_end="\r\n")


def recipe_html(recipe: Recipe, catalog: Catalog | None = None) -> str:
    """A printable, self-contained HTML recipe card."""
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
<p class="meter">Meter ({esc(recipe.meter_reads)}) at {recipe.prep_temperature_c:g} °C: pH {recipe.meter_ph_at_prep:.2f}{plus_minus(recipe.meter_ph_uncertainty, '.2f')}</p>
<p>Verified pH at {recipe.temperature_c:g} °C: {recipe.verified_ph_at_use:.3f}{plus_minus(recipe.verified_ph_uncertainty, '.3f')} · I = {recipe.ionic_strength_mol_l:.4f} mol/L
· β = {recipe.capacity_mol_l_per_ph * 1000:.2f} mM/pH · ΔpH½ = {recipe.dilution_value_ph:+.3f}</p>
{f"<h2>Warnings</h2><ul>{warnings}</ul>" if warnings else ""}
<h2>Cautions</h2><ul>{cautions}</ul>
</body></html>
"""
