"""The names the command line offers as choices, without importing the code behind them.

``--objective``, ``--sort`` and ``--route`` list their valid values in ``poise --help``;
registering a command must not import the optimiser (Pyomo) or the recipe routes (SciPy),
so the names live here as plain tuples.  The registries stay the single source of truth:
``tests/test_cli_optimise.py`` checks that each tuple equals its registry's names, in
order (:data:`selector.optimise.OBJECTIVES`, :data:`selector.rank.SORTS`,
:data:`selector.recipe.ROUTES`).
"""

from __future__ import annotations

from selector.profiles import CRITERIA, PROFILES

#: Names of :data:`selector.optimise.OBJECTIVES` (``poise optimise --objective``).
OBJECTIVE_NAMES: tuple[str, ...] = ("cost", "ionic-strength", "temperature-drift", "reagents")
#: Names of :data:`selector.rank.SORTS` (``poise rank --sort``).
SORT_NAMES: tuple[str, ...] = ("score", *CRITERIA)
#: Names of :data:`selector.profiles.PROFILES` (``--profile``; a data module, light to import).
PROFILE_NAMES: tuple[str, ...] = tuple(PROFILES)
#: Names of :data:`selector.recipe.ROUTES` (``poise recipe --route``).
ROUTE_NAMES: tuple[str, ...] = ("titrate", "titrate-base", "two-forms", "stocks", "stock10x")
#: Names of :data:`selector.book.EXPORT_FORMATS` (``poise book export --format``).
BOOK_EXPORT_FORMATS: tuple[str, ...] = ("md", "html", "csv", "json")
#: Names of :data:`selector.chemistry.activity.ACTIVITY_MODEL_NAMES` (``poise ph --activity``).
ACTIVITY_NAMES: tuple[str, ...] = ("davies", "bates-guggenheim", "guntelberg", "truesdell-jones")
