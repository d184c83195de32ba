"""Name search over systems and reagents: exact, substring, all-words and close matches."""

from __future__ import annotations

import difflib

from catalog import Catalog, load_catalog, normalize_name
from selector.catalog_view.records import MATCH_ORDER, SearchHit
from selector.errors import InputError

#: Ratio of difflib.SequenceMatcher above which a name counts as a close match.
CLOSE_MATCH_RATIO = 0.75


def _best_match(query: str, words: tuple[str, ...], names) -> tuple[int, str] | None:
    """(rank in MATCH_ORDER, the name) of the best-matching name, or None."""
    best = None
    for name in names:
        key = normalize_name(name)
        if not key:
            continue
        ratio = difflib.SequenceMatcher(None, query, key).ratio()
        if key == query:
            rank = 0
        elif query in key:
            rank = 1
        elif len(words) > 1 and all(w in name.casefold() for w in words):
            rank = 2
        elif ratio >= CLOSE_MATCH_RATIO:
            rank = 3
        else:
            continue
        # Among names of equal rank the most similar wins; on a tie, the one written
        # differently from its folded form (HEPES before hepes) reads better.
        score = (rank, -ratio, name == key)
        if best is None or score < best[0]:
            best = (score, name)
    return None if best is None else (best[0][0], best[1])


def search_catalog(text: str, catalog: Catalog | None = None) -> tuple[SearchHit, ...]:
    """Systems and reagents whose id, name, formula or an alias matches ``text``.

    Matching folds case, spaces, hyphens and hydrate dots (:func:`catalog.normalize_name`).
    A record matches *exactly*, as a *substring*, by containing all the *words* of the text,
    or *closely* (difflib ratio ≥ 0.75); hits come in that order, systems before reagents.

    Raises
    ------
    InputError for an empty text.
    """
    catalog = catalog if catalog is not None else load_catalog()
    query = normalize_name(text or "")
    if not query:
        raise InputError("nothing to search for; give some text, e.g. --search phosphate")
    words = tuple((text or "").casefold().split())
    hits = []
    for system in catalog.systems.values():
        best = _best_match(query, words, (system.system_id, system.name, *system.aliases))
        if best is not None:
            hits.append((best[0], 0, SearchHit("system", system.system_id, system.name, system.system_id,
                                               best[1], MATCH_ORDER[best[0]])))
    for reagent in catalog.reagents.values():
        best = _best_match(query, words, (reagent.reagent_id, reagent.name, reagent.formula, *reagent.aliases))
        if best is not None:
            hits.append((best[0], 1, SearchHit("reagent", reagent.reagent_id, reagent.name, reagent.system_id,
                                               best[1], MATCH_ORDER[best[0]])))
    hits.sort(key=lambda item: (item[0], item[1], item[2].record_id))
    return tuple(hit for _, _, hit in hits)
