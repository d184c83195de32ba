"""Bench recipes: a verified composition turned into steps for a volume.

For one buffer system and a spec, :func:`make_recipes` builds each preparation route that
applies (the registry :data:`ROUTE_REGISTRY`; names in :data:`ROUTES`):

- ``titrate``   weigh one form and bring it to pH with strong base (or acid), whichever
  needs less titrant;
- ``titrate-base`` weigh the base form (Tris base) and bring it down with strong acid;
- ``two-forms`` weigh an acid form and its conjugate salt, no titration;
- ``stocks``    mix two equimolar stock solutions (with a table of volumes across pH);
- ``stock10x``  make a 10× stock at the pH that lands the 1× dilution on target.

Every composition is found with the exact engine (1-D root finds on the amounts) and
re-solved before it is returned: the verified pH at the use temperature must be within
:data:`VERIFY_TOLERANCE_PH` of target or no recipe is returned.  The pH the meter must read
is the same composition solved at the preparation temperature.

Any verified composition (a mix of several systems, the optimiser's answer) reaches the
bench through :func:`bench_recipe`; :func:`mix_recipe` titrates systems at given totals.
Every output (recipe, bench sheet, bottle label) is one template rendered to text,
Markdown, HTML or CSV (:func:`render_recipe`).

Modules: :mod:`~selector.recipe.bench`, :mod:`~selector.recipe.mix`,
:mod:`~selector.recipe.document`, :mod:`~selector.recipe.solve` (exact compositions along a line),
:mod:`~selector.recipe.compose` (records, bench lines, the verified recipe),
:mod:`~selector.recipe.sizing` (the buffer concentration), :mod:`~selector.recipe.routes`
(the routes, their registry and :func:`make_recipes`), :mod:`~selector.recipe.standards`
(pH standards) and :mod:`~selector.recipe.render` (Markdown, CSV, HTML).
"""

from __future__ import annotations

from selector.chemistry.equilibrium import composition_ph
from selector.recipe.bench import MAX_BATCH_L, bench_recipe, composition_recipe
from selector.recipe.compose import (
    TITRANT_STOCK_MOL_L,
    VERIFY_TOLERANCE_PH,
    Recipe,
    RecipeLine,
    TextbookGap,
)
from selector.recipe.document import FORMATS, Document
from selector.recipe.mix import STARTS, mix_recipe, titrate_systems
from selector.recipe.render import (
    OUTPUTS,
    bench_sheet_document,
    label_document,
    methods_sentence,
    recipe_csv,
    recipe_document,
    recipe_html,
    recipe_markdown,
    recipe_text,
    render_recipe,
    standard_markdown,
)
from selector.recipe.routes import (
    ROUTE_REGISTRY,
    ROUTES,
    Route,
    make_recipes,
    route_named,
)
from selector.recipe.sizing import buffer_concentration
from selector.recipe.standards import StandardRecipe, list_standards, standard_recipe

__all__ = [
    "FORMATS",
    "MAX_BATCH_L",
    "OUTPUTS",
    "STARTS",
    "Document",
    "bench_recipe",
    "bench_sheet_document",
    "composition_recipe",
    "label_document",
    "methods_sentence",
    "mix_recipe",
    "recipe_document",
    "recipe_text",
    "render_recipe",
    "titrate_systems",
    "ROUTES",
    "ROUTE_REGISTRY",
    "TITRANT_STOCK_MOL_L",
    "VERIFY_TOLERANCE_PH",
    "Recipe",
    "RecipeLine",
    "Route",
    "StandardRecipe",
    "TextbookGap",
    "buffer_concentration",
    "composition_ph",
    "list_standards",
    "make_recipes",
    "recipe_csv",
    "recipe_html",
    "recipe_markdown",
    "route_named",
    "standard_markdown",
    "standard_recipe",
]
