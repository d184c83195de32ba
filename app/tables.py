"""The app's tables: no empty cells spelled ``None`` or ``nan``, one unit per quantity in the
column head, and a tooltip for every abbreviation, from one glossary.

:func:`show_table` takes plain rows (dicts); a column with no value at all is left out, a
column with some values missing shows "—" in their place; every column whose head is in
:data:`GLOSSARY` carries its explanation as the column's help.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from typing import Any

import pandas as pd
import streamlit as st

#: Shown in a cell that has no value.
MISSING = "—"

#: Column heads the app uses -> what they mean (the column's tooltip).
GLOSSARY: dict[str, str] = {
    "score": "suitability for the spec from 0 to 1 (1 best): the profile's weighted mean of each criterion's "
             "score",
    "conc, mM": "total concentration of the buffer system in the solution as made",
    "pKa′ at use": "apparent pKa′ of the step nearest the target, at the use temperature and the solution's "
                   "ionic strength",
    "|pH − pKa′|": "how far the target pH sits from that pKa′; buffering is strongest at 0 and falls to about a "
                   "third one pH unit away",
    "β, mM per pH": "buffer capacity: mM of strong base (or acid) that moves the pH by one unit",
    "dpH/dT, pH per K": "how much the pH moves per kelvin (°C) of temperature change",
    "u(pH) ±": "standard uncertainty of the pH from the published constants' uncertainties and the activity "
               "model",
    "ΔpH½": "dilution value: the pH change when the buffer is diluted 1:1 with water",
    "I, mM": "ionic strength, ½ Σ c z² over every ion",
    "why": "what decided this system's place",
    "better": "which way the criterion's value is better; each cell shows the value and its score from 0 to 1 "
              "in brackets",
    "pKa′": "apparent pKa′ of each step at the chosen temperature and ionic strength",
    "useful range": "pKa′ ± 1 of each step: where the buffer holds its pH best",
    "flags": "what the catalog notes about the system: reactive groups, assay interference, biological "
             "activity, LC-MS volatility",
    "UV cut-off, nm": "below this wavelength the buffer absorbs too much for UV detection",
    "log K": "stability constant of the metal–buffer species at the stated temperature and ionic strength",
    "ΔH°, kJ/mol": "enthalpy of the reaction (how the constant moves with temperature)",
    "γ": "activity coefficient",
    "mOsm/L": "osmolarity",
}


def _missing(value: Any) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def readable_frame(rows: Iterable[Mapping[str, Any]]) -> pd.DataFrame:
    """The rows as a table: all-empty columns left out, empty cells of the others as "—"."""
    frame = pd.DataFrame(list(rows))
    for column in list(frame.columns):
        empty = frame[column].map(_missing)
        if empty.all():
            frame = frame.drop(columns=column)
        elif empty.any():
            frame[column] = [MISSING if e else (f"{v:g}" if isinstance(v, float) else str(v))
                             for v, e in zip(frame[column], empty)]
    return frame


def column_help(frame: pd.DataFrame, extra: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """st.column_config for the frame: the glossary's help on each column it explains, and
    ``extra`` column configs on top."""
    config: dict[str, Any] = {c: st.column_config.Column(help=GLOSSARY[c]) for c in frame.columns if c in GLOSSARY}
    for name, column in (extra or {}).items():
        if name in frame.columns:
            config[name] = column
    return config


def show_table(rows: Iterable[Mapping[str, Any]], key: str, extra: Mapping[str, Any] | None = None,
               where=None, **options) -> pd.DataFrame:
    """Draw ``rows`` with :func:`readable_frame` and :func:`column_help` (``where``: a column or
    container, else the page); returns the frame drawn."""
    frame = readable_frame(rows)
    (where or st).dataframe(frame, key=key, hide_index=True, column_config=column_help(frame, extra), **options)
    return frame
