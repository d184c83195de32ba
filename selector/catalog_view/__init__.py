"""The catalog as a person reads it: the system table, one system in full, a name search.

Three pure functions over the loaded catalog, each returning frozen records of plain
values (no printing; :mod:`selector.cli.catalog` formats them):

- :func:`system_table`: every system with the apparent pKa of each step at a chosen
  temperature and ionic strength, its useful pH range, flags, hazard and UV cut-off;
- :func:`system_detail`: one system whole, every value with its source key, source kind
  and full citation, the reagents that carry it, metal binding, UV cut-off and flags;
- :func:`search_catalog`: systems and reagents whose id, name, formula or alias matches a
  text (case-insensitive; exact, substring, all-words and close matches).

One module per concern: :mod:`~selector.catalog_view.records` (the frozen records),
:mod:`~selector.catalog_view.table`, :mod:`~selector.catalog_view.detail` and
:mod:`~selector.catalog_view.search`; the public names are re-exported here.
"""

from selector.catalog_view.detail import find_system, system_detail
from selector.catalog_view.records import (
    MATCH_ORDER,
    UNCERTAINTY_RULE_MEANING,
    UNKEYED_MEANING,
    ComplexConstantRow,
    Conditions,
    FlagRow,
    MetalBindingRow,
    PublishedValueView,
    ReagentSummary,
    SearchHit,
    SelectedValue,
    SourcedValue,
    StepAtConditions,
    StepDetail,
    SystemDetail,
    SystemRow,
    SystemTable,
    UvRow,
    merge_ranges,
)
from selector.catalog_view.search import CLOSE_MATCH_RATIO, search_catalog
from selector.catalog_view.table import (
    MAX_IONIC_STRENGTH_MOL_L,
    check_ionic_strength,
    steps_at_conditions,
    system_table,
    view_conditions,
)

__all__ = [
    "CLOSE_MATCH_RATIO", "MATCH_ORDER", "MAX_IONIC_STRENGTH_MOL_L", "UNCERTAINTY_RULE_MEANING", "UNKEYED_MEANING",
    "ComplexConstantRow", "Conditions", "FlagRow", "MetalBindingRow", "PublishedValueView", "ReagentSummary", "SearchHit",
    "SelectedValue", "SourcedValue", "StepAtConditions", "StepDetail", "SystemDetail", "SystemRow", "SystemTable",
    "UvRow", "check_ionic_strength", "find_system", "merge_ranges", "search_catalog", "steps_at_conditions",
    "system_detail", "system_table", "view_conditions",
]
