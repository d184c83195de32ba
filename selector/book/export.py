"""A saved recipe as Markdown, HTML, CSV or JSON, and the JSON read back (import).

Every text format is one template over one :class:`Sheet` (the same content, so the
formats cannot drift apart); each keeps the recipe's cautions and ends them with the
safety notice.
"""

from __future__ import annotations

import html
import json
from dataclasses import dataclass
from typing import Any, Mapping

from catalog import Catalog, load_catalog
from selector.book.content import (
    FIGURE_KEYS,
    FIGURE_LABELS,
    PH_KEYS,
    catalog_fingerprint,
    composition_of,
    finite_number,
    recipe_part,
    steps_of,
)
from selector.book.store import (
    ENTRY_FORMAT,
    ENTRY_FORMAT_VERSION,
    NOTE_MAX_CHARS,
    Book,
    BookEntry,
    show_recipe,
    write_version,
)
from selector.errors import BookError
from selector.safety import SAFETY_NOTICE, hazard_cautions
from selector.textsafe import echo, write_csv

#: Largest file ``import_recipe`` reads [bytes] (the app's upload limit).
IMPORT_MAX_BYTES = 5 * 1024 * 1024
#: The export formats of :func:`export_entry`.
EXPORT_FORMATS = ("md", "html", "csv", "json")

@dataclass(frozen=True)
class Sheet:
    """What every export shows, read once from a saved entry; each format is one template over it."""

    title: str
    subtitle: str
    reagents: tuple[tuple[str, str, str, str], ...]   # name, role, final mM, amount
    steps: tuple[str, ...]
    figures: tuple[tuple[str, str], ...]              # label, value with unit
    warnings: tuple[str, ...]
    cautions: tuple[str, ...]                          # ends with the safety notice


def _reagent_rows(recipe_json: Mapping[str, Any], catalog: Catalog) -> tuple[tuple[str, str, str, str], ...]:
    reagents = recipe_part(recipe_json).get("reagents")
    rows = []
    if isinstance(reagents, list):
        for r in reagents:
            if not isinstance(r, Mapping) or "id" not in r:
                continue
            amount = ""
            if finite_number(r.get("grams")) is not None:
                amount = f"{r['grams']:.4f} g"
            elif finite_number(r.get("ml")) is not None:
                stock = f" of {r['stock_mol_l']:g} M" if finite_number(r.get("stock_mol_l")) is not None else ""
                amount = f"{r['ml']:.3f} mL{stock}"
            conc = finite_number(r.get("conc_mol_l"))
            rows.append((str(r.get("name", r["id"])), str(r.get("role", "")),
                         "" if conc is None else f"{conc * 1000:.4g}", amount))
        return tuple(rows)
    for rid, conc in composition_of(recipe_json).items():
        name = catalog.reagents[rid].name if rid in catalog.reagents else rid
        rows.append((name, "", f"{conc * 1000:.4g}", ""))
    return tuple(rows)


def _cautions(recipe_json: Mapping[str, Any], catalog: Catalog) -> tuple[str, ...]:
    """The recipe's cautions (or, when it has none, those of its hazardous reagents), ending with the notice."""
    given = recipe_part(recipe_json).get("cautions")
    cautions = [str(c) for c in given] if isinstance(given, list) else []
    if not cautions:
        cautions = hazard_cautions([r for r in composition_of(recipe_json) if r in catalog.reagents], catalog)
    if SAFETY_NOTICE not in cautions:
        cautions.append(SAFETY_NOTICE)
    return tuple(cautions)


def sheet_of(entry: BookEntry, catalog: Catalog | None = None) -> Sheet:
    """The printable content of a saved version."""
    catalog = catalog if catalog is not None else load_catalog()
    part = recipe_part(entry.recipe)
    figures = []
    for key in FIGURE_KEYS:
        if key in entry.figures:
            label, unit = FIGURE_LABELS[key]
            value = entry.figures[key]
            text = f"{value:.4f}" if key in PH_KEYS else f"{value:.6g}"
            if key == "cost" and isinstance(entry.recipe.get("currency"), str):
                unit = f" {entry.recipe['currency']}"
            figures.append((label, text + unit))
    verified = entry.recipe.get("verified")
    warnings = part.get("warnings") or (verified.get("warnings") if isinstance(verified, Mapping) else None)
    warnings = warnings if isinstance(warnings, list) else []
    subtitle = (f"version {entry.version}, saved {entry.created_at}; catalog {entry.catalog_fingerprint}"
                + (f"; note: {entry.note}" if entry.note else ""))
    target = entry.figures.get("target_ph")
    title = entry.name + (f": pH {target:g}" if target is not None else "") + (
        f" at {entry.figures['temperature_c']:g} °C" if "temperature_c" in entry.figures else "")
    return Sheet(title, subtitle, _reagent_rows(entry.recipe, catalog), tuple(steps_of(entry.recipe)),
                 tuple(figures), tuple(str(w) for w in warnings), _cautions(entry.recipe, catalog))


def sheet_markdown(sheet: Sheet) -> str:
    """The Markdown template."""
    out = [f"# {sheet.title}", "", sheet.subtitle, "", "| reagent | role | final mM | amount |",
           "| --- | --- | --- | --- |"]
    out += [f"| {' | '.join(cell.replace('|', '/') for cell in row)} |" for row in sheet.reagents]
    if sheet.steps:
        out += ["", "## Steps", ""] + [f"{i}. {s}" for i, s in enumerate(sheet.steps, 1)]
    out += ["", "## Figures (as saved)", ""] + [f"- {label}: {value}" for label, value in sheet.figures]
    if sheet.warnings:
        out += ["", "## Warnings", ""] + [f"- {w}" for w in sheet.warnings]
    out += ["", "## Cautions", ""] + [f"- {c}" for c in sheet.cautions]
    return "\n".join(out) + "\n"


def sheet_html(sheet: Sheet) -> str:
    """The HTML template: a self-contained page with print styles."""
    esc = html.escape
    rows = "".join("<tr>" + "".join(f"<td>{esc(cell)}</td>" for cell in row) + "</tr>" for row in sheet.reagents)
    steps = "".join(f"<li>{esc(s)}</li>" for s in sheet.steps)
    figures = "".join(f"<li>{esc(label)}: {esc(value)}</li>" for label, value in sheet.figures)
    warnings = "".join(f"<li>{esc(w)}</li>" for w in sheet.warnings)
    cautions = "".join(f"<li>{esc(c)}</li>" for c in sheet.cautions)
    return f"""<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>{esc(sheet.title)}</title>
<style>body{{font-family:sans-serif;max-width:46em;margin:2em auto}}table{{border-collapse:collapse}}
td,th{{border:1px solid #999;padding:.3em .6em}}@media print{{body{{margin:0}}}}</style></head><body>
<h1>{esc(sheet.title)}</h1>
<p>{esc(sheet.subtitle)}</p>
<table><tr><th>reagent</th><th>role</th><th>final mM</th><th>amount</th></tr>{rows}</table>
{f"<h2>Steps</h2><ol>{steps}</ol>" if steps else ""}
<h2>Figures (as saved)</h2><ul>{figures}</ul>
{f"<h2>Warnings</h2><ul>{warnings}</ul>" if warnings else ""}
<h2>Cautions</h2><ul>{cautions}</ul>
</body></html>
"""


def sheet_csv(sheet: Sheet) -> str:
    """The CSV template: one row per item, ``section, item, value, detail`` (cautions included)."""
    rows: list[list[str]] = [["recipe", sheet.title, "", sheet.subtitle]]
    rows += [["reagent", name, amount, f"{role}; final {mm} mM" if role else f"final {mm} mM"]
             for name, role, mm, amount in sheet.reagents]
    rows += [["step", str(i), "", s] for i, s in enumerate(sheet.steps, 1)]
    rows += [["figure", label, value, ""] for label, value in sheet.figures]
    rows += [["warning", "", "", w] for w in sheet.warnings]
    rows += [["caution", "", "", c] for c in sheet.cautions]
    return write_csv(["section", "item", "value", "detail"], rows, line_end="\r\n")


#: One template per text format.
SHEET_TEMPLATES = {"md": sheet_markdown, "html": sheet_html, "csv": sheet_csv}


def export_entry(entry: BookEntry, fmt: str, catalog: Catalog | None = None) -> str:
    """A saved version as ``md``, ``html``, ``csv`` (:class:`Sheet` templates) or ``json``.

    The JSON is the entry document (:meth:`BookEntry.document`) with ``cautions``: the
    recipe's cautions ending with the safety notice, as every other format shows them.
    """
    if fmt == "json":
        catalog = catalog if catalog is not None else load_catalog()
        document = dict(entry.document(), cautions=list(_cautions(entry.recipe, catalog)))
        return json.dumps(document, indent=2) + "\n"
    if fmt not in SHEET_TEMPLATES:
        raise BookError(f"unknown export format {echo(fmt)}; expected one of {', '.join(EXPORT_FORMATS)}")
    return SHEET_TEMPLATES[fmt](sheet_of(entry, catalog))


def export_recipe(book: Book, name: str, fmt: str, version: int | None = None,
                  catalog: Catalog | None = None) -> str:
    """:func:`export_entry` of a saved version of ``name`` (default: the latest)."""
    if fmt not in EXPORT_FORMATS:
        raise BookError(f"unknown export format {echo(fmt)}; expected one of {', '.join(EXPORT_FORMATS)}")
    return export_entry(show_recipe(book, name, version), fmt, catalog)


def parse_entry(data: bytes) -> dict:
    """An exported entry (``export --format json``) from its bytes, checked.

    Raises
    ------
    BookError
        for a file too large, not UTF-8 JSON, or not an entry (with what is expected).
    """
    if len(data) > IMPORT_MAX_BYTES:
        raise BookError(f"the import file has {len(data)} bytes; at most {IMPORT_MAX_BYTES} are read")
    try:
        document = json.loads(data.decode("utf-8"))
    except (UnicodeDecodeError, ValueError) as error:
        raise BookError(f"the import file is not UTF-8 JSON ({error}); expected the JSON of "
                        "'poise book export NAME --format json'") from None
    if not isinstance(document, dict) or document.get("format") != ENTRY_FORMAT:
        raise BookError(f"the import file is not a poise book entry (no \"format\": \"{ENTRY_FORMAT}\"); "
                        "expected the JSON of 'poise book export NAME --format json'")
    if document.get("format_version") != ENTRY_FORMAT_VERSION:
        raise BookError(f"the import file is entry format {echo(document.get('format_version'))}; "
                        f"this poise reads format {ENTRY_FORMAT_VERSION}")
    for key, kind in (("name", str), ("recipe", dict), ("spec", dict)):
        if not isinstance(document.get(key), kind):
            raise BookError(f"the import file's {key!r} must be a JSON {'text' if kind is str else 'object'}")
    if not composition_of(document["recipe"]):
        raise BookError("the import file's recipe has no composition (composition_mol_l or reagents)")
    return document


def import_recipe(book: Book, data: bytes, name: str | None = None, catalog: Catalog | None = None) -> BookEntry:
    """Add an exported entry to the book as the next version of its name (or of ``name``).

    The recipe, spec and note are kept; the catalog fingerprint is the one it was saved with
    (so :func:`verify_recipe` shows whether this catalog differs), the note says it was imported.
    """
    document = parse_entry(data)
    target = name if name is not None else document["name"]
    note = str(document.get("note") or "")
    origin = f"imported from version {document.get('version')} saved {document.get('created_at')}"
    fingerprint = document.get("catalog_fingerprint")
    if not isinstance(fingerprint, str) or not fingerprint or len(fingerprint) > 64:
        fingerprint = catalog_fingerprint(catalog if catalog is not None else load_catalog())
    return write_version(book, target, document["recipe"], document["spec"], fingerprint,
                          (f"{note} ({origin})" if note else origin)[:NOTE_MAX_CHARS])
