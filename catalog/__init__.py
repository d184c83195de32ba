"""The poise catalog: sourced tables of buffer systems, reagents, compatibility and sources.

``load_catalog()`` is the only door into the data; it validates every table once and
returns frozen records (:mod:`catalog.records`).
"""

from catalog.loader import CatalogError, load_catalog, normalize_name, read_catalog
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
    "Reagent",
    "Step",
    "System",
    "load_catalog",
    "normalize_name",
    "read_catalog",
]
