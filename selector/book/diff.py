"""What changed between two saved versions of a recipe, in words."""

from __future__ import annotations

import difflib
import json
from typing import Any, Mapping

from selector.book.content import (
    FIGURE_KEYS,
    FIGURE_LABELS,
    composition_of,
    figure_text,
    finite_number,
    recipe_part,
    steps_of,
)
from selector.book.store import Book, BookEntry, show_recipe

#: Two figures closer than this (relative) are the same in a diff.
DIFF_RELATIVE_TOLERANCE = 1e-9

def _same(a: Any, b: Any) -> bool:
    na, nb = finite_number(a), finite_number(b)
    if na is not None and nb is not None:
        return abs(na - nb) <= DIFF_RELATIVE_TOLERANCE * max(abs(na), abs(nb), 1e-300)
    return a == b


def _amounts(recipe_json: Mapping[str, Any]) -> dict[str, str]:
    """Reagent id -> how much of it, as text (``7.9594 g``, ``13.319 mL of 1 M``, ``50 mM``)."""
    reagents = recipe_part(recipe_json).get("reagents")
    if isinstance(reagents, list):
        out = {}
        for r in reagents:
            if not isinstance(r, Mapping) or "id" not in r:
                continue
            parts = [f"{float(r['conc_mol_l']) * 1000:.6g} mM"] if finite_number(r.get("conc_mol_l")) is not None else []
            if finite_number(r.get("grams")) is not None:
                parts.append(f"{r['grams']:.4f} g")
            if finite_number(r.get("ml")) is not None:
                stock = f" of {r['stock_mol_l']:g} M" if finite_number(r.get("stock_mol_l")) is not None else ""
                parts.append(f"{r['ml']:.3f} mL{stock}")
            out[str(r["id"])] = ", ".join(parts)
        return out
    return {k: f"{v * 1000:.6g} mM" for k, v in composition_of(recipe_json).items()}


def diff_entries(a: BookEntry, b: BookEntry) -> list[str]:
    """What changed from version ``a`` to version ``b``, one line per change (empty: nothing)."""
    lines = []
    amounts_a, amounts_b = _amounts(a.recipe), _amounts(b.recipe)
    for rid in dict.fromkeys([*amounts_a, *amounts_b]):
        if rid not in amounts_b:
            lines.append(f"reagent removed: {rid} ({amounts_a[rid]})")
        elif rid not in amounts_a:
            lines.append(f"reagent added: {rid} ({amounts_b[rid]})")
        elif amounts_a[rid] != amounts_b[rid]:
            lines.append(f"reagent {rid}: {amounts_a[rid]} -> {amounts_b[rid]}")
    for key in dict.fromkeys([*a.figures, *b.figures]):
        va, vb = a.figures.get(key), b.figures.get(key)
        if not _same(va, vb):
            label, unit = FIGURE_LABELS.get(key, (key, ""))
            lines.append(f"{label}: {figure_text(va)} -> {figure_text(vb)}{unit}")
    for key in dict.fromkeys([*a.spec, *b.spec]):
        va, vb = a.spec.get(key), b.spec.get(key)
        if key not in FIGURE_KEYS and key != "ph" and not _same(va, vb):
            lines.append(f"spec {key}: {json.dumps(va)} -> {json.dumps(vb)}")
    steps_a, steps_b = steps_of(a.recipe), steps_of(b.recipe)
    if steps_a != steps_b:
        lines += [f"step {line[:1]} {line[2:]}" for line in difflib.ndiff(steps_a, steps_b) if line[:1] in "+-"]
    if a.catalog_fingerprint != b.catalog_fingerprint:
        lines.append(f"catalog: {a.catalog_fingerprint} -> {b.catalog_fingerprint} (the catalog changed between them)")
    if a.note != b.note:
        lines.append(f"note: {json.dumps(a.note)} -> {json.dumps(b.note)}")
    return lines


def diff_versions(book: Book, name: str, version_a: int, version_b: int) -> list[str]:
    """:func:`diff_entries` of two saved versions of ``name``."""
    return diff_entries(show_recipe(book, name, version_a), show_recipe(book, name, version_b))
