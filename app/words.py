"""The app's words for what selector's messages say in command-line terms, in one place.

selector's messages name what the user typed at the command line (``--capacity``,
``'poise catalog --search TEXT'``); in the app the same message must name the field or
page the user sees.  :func:`in_app_words` rewrites a message: first the whole phrases
that only make sense at a prompt (:data:`PHRASES`), then every remaining option by the
spec panel's label or the page's own field (:data:`OPTIONS`).  Every message the app shows
from selector goes through it (errors, reasons, remedies, notes, warnings).
"""

from __future__ import annotations

import re

from app.spec_panel import LABELS
from selector.admissible import FLAG_WORDS

#: Whole phrases of command-line advice -> what to do in the app (checked first, in order).
PHRASES: tuple[tuple[str, str], ...] = (
    ("('poise catalog --search TEXT' lists names)", "(the Catalog page's search lists names)"),
    ("look it up with 'poise catalog --search'", "look it up with the Catalog page's search"),
    ("e.g. --search phosphate", "e.g. phosphate"),
    ("allow_hazardous / --allow-hazardous", f"'{LABELS['spec_allow_hazardous']}' in the spec panel"),
    ("save a recipe with --save NAME first", "save a recipe to the book from the Recipe or Cheapest mix page first"),
    ("give another file with --book PATH or POISE_BOOK", "give another book file"),
    ("(e.g. --save tris-7.4)", "(e.g. tris-7.4)"),
    ("'poise book list' lists them", "the Recipe book page lists them"),
    ("the JSON of 'poise book export NAME --format json'", "a recipe downloaded as JSON (for import) from the "
                                                           "Recipe book page"),
    ("'poise book export NAME --format json'", "a recipe downloaded as JSON (for import)"),
    ("for 'poise optimise'", "for the Cheapest mix page"),
    ("e.g. --mix \"tris=30mM hepes=20mM\"", "e.g. tris=30mM hepes=20mM"),
    ("use --plate 384 or fewer steps", "choose the 384-well plate or fewer steps"),
)

#: Command-line options -> the field the app shows for them (longest names are matched whole).
OPTIONS: dict[str, str] = {
    "--ph": f"'{LABELS['spec_ph']}'",
    "--temperature": f"'{LABELS['spec_temperature']}'",
    "--prep-temperature": f"'{LABELS['spec_prep_temperature']}'",
    "--volume": f"'{LABELS['spec_volume']}'",
    "--conc": "the total buffer concentration",
    "--capacity": "the minimum capacity β (mM per pH)",
    "--tolerance": "the allowed pH excursion",
    "--ionic-strength": "the ionic strength",
    "--ionic-strength-min": "the lowest ionic strength",
    "--ionic-strength-max": "the highest ionic strength",
    "--salt": f"'{LABELS['spec_salt']}'",
    "--counter-ion": f"'{LABELS['spec_counter_ion']}'",
    "--metal": "the largest fraction of a metal the buffer may bind (metal:fraction)",
    "--uv": f"'{LABELS['spec_uv']}'",
    "--exclude": f"'{LABELS['spec_exclude']}' in the spec panel",
    "--require": f"'{LABELS['spec_require']}' in the spec panel",
    "--allow-hazardous": f"'{LABELS['spec_allow_hazardous']}' in the spec panel",
    "--in-stock": f"'{LABELS['spec_in_stock']}'",
    "--plates": f"'{LABELS['spec_plates']}'",
    "--max-systems": "'at most this many systems'",
    "--max-reagents": "'at most this many reagents'",
    "--search": "the Catalog page's search",
    "--save": "the save form",
    "--book": "the book file",
    "--mix": "'systems and their concentrations'",
    "--plate": "the plate size",
    "--well-volume": "'well volume'",
    "--min-pipette": "'minimum pipette'",
    "--dead-volume": "'dead volume per stock'",
    "--need": "the needs",
    "--load": "the acid/base challenge",
    "temperature_min_c": "the temperature window's lower end",
    "temperature_max_c": "the temperature window's upper end",
}

_OPTION = re.compile(r"(?<![\w-])--[a-z][a-z-]*[a-z]|\btemperature_(?:min|max)_c\b")
#: ``--exclude photo_peroxide`` / ``--require volatile_ms``: a flag named after its option.
_FLAG_OPTION = re.compile(r"(?<![\w-])--(exclude|require) ([a-z][a-z_]*)")
#: ``--metal Ca`` (a remedy's option for one metal).
_METAL = re.compile(r"(?<![\w-])--metal ([A-Z][a-z]?[0-9]?)\b")


def _option_words(match: re.Match[str]) -> str:
    name = match.group(0)
    return OPTIONS.get(name, f"'{name.lstrip('-').replace('-', ' ')}'")


def in_app_words(text: str) -> str:
    """``text`` with its command-line advice and option names in the app's words.

    Examples
    --------
    >>> in_app_words("lower --capacity from 10 to 8: then tris meets the spec")
    'lower the minimum capacity β (mM per pH) from 10 to 8: then tris meets the spec'
    """
    for phrase, words in PHRASES:
        text = text.replace(phrase, words)
    text = _FLAG_OPTION.sub(lambda m: f"'{flag_words(m.group(2))}' under "
                            f"'{LABELS['spec_' + m.group(1)]}' in the spec panel", text)
    text = _METAL.sub(r"the largest fraction of \1 the buffer may bind", text)
    return _OPTION.sub(_option_words, text)


def flag_words(flag: str) -> str:
    """A catalog flag in words (``photo_peroxide`` -> ``photo peroxide``; ``volatile_ms`` ->
    ``volatile for LC-MS``), as the ranking's reasons say it."""
    return FLAG_WORDS.get(flag, flag.replace("_", " "))
