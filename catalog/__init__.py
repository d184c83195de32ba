"""The poise catalog: sourced tables of buffer systems, reagents, compatibility and sources.

``load_catalog()`` is the only door into the data; it validates every table once and
returns frozen records (:mod:`catalog.records`).  The readers of the single tables live in
:mod:`catalog.tables`, the typed cells in :mod:`catalog.rows`, the name folding and
indexes in :mod:`catalog.names`, and the error tree's root with :class:`CatalogError` in
:mod:`catalog.problems`.
"""

from catalog.loader import load_catalog, read_catalog
from catalog.names import normalize_name
from catalog.problems import CatalogError, PoiseError
from catalog.records import (
    FLAG_VOCABULARY,
    SOURCE_KINDS,
    Catalog,
    Reagent,
    Step,
    System,
)

__all__ = [
    "Catalog",
    "FLAG_VOCABULARY",
    "SOURCE_KINDS",
    "CatalogError",
    "PoiseError",
    "Reagent",
    "Step",
    "System",
    "load_catalog",
    "normalize_name",
    "read_catalog",
]
