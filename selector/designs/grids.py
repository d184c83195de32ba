"""The pH and ionic-strength grids of a design, read from ``FROM:TO[:STEP]`` text.

One reader for the command line and the app, over :func:`selector.units.parse_range` and
:func:`selector.units.range_grid`.
"""

from __future__ import annotations

from selector.errors import InputError
from selector.units import parse_amount, parse_ionic_strength, parse_range, range_grid

#: Most grid points a design takes (a bound on the model's size, common practice).
MAX_GRID_POINTS = 101
#: The pH scale a spec accepts (the spec's own bounds).
PH_MIN, PH_MAX = 0.0, 14.0


def ph_values(text: str | None, step: str = "required", default_step: float | None = None,
              option: str = "--ph") -> list[float]:
    """The pHs of ``FROM:TO:STEP`` (``step`` "required" or "optional"; ``default_step`` [pH]
    when optional and absent; a single value is one pH).

    Raises
    ------
    InputError
        no text, a bad range, a pH outside 0-14, or more than :data:`MAX_GRID_POINTS` pHs.
    """
    if not text:
        raise InputError(f"{option} FROM:TO:STEP is required, e.g. {option} 6.0:8.0:0.5")
    low, high, increment = parse_range(text, float, option, step=step)
    if low < PH_MIN or high > PH_MAX:
        raise InputError(f"{option} {text}: every pH must lie between {PH_MIN:g} and {PH_MAX:g}")
    if increment is None:
        if default_step is None or high == low:
            if high > low:
                raise InputError(f"{option} {text}: give a step, FROM:TO:STEP, e.g. 6.0:8.0:0.5")
            return [low]
        increment = default_step
    count = int((high - low) / increment + 1e-9) + 1
    if count > MAX_GRID_POINTS:
        raise InputError(f"{option} {text} gives {count} pH values; at most {MAX_GRID_POINTS} (use a larger step)")
    return [round(float(p), 10) for p in range_grid(low, high, increment)]


def _positive_values(text: str, parse_one, option: str, example: str) -> list[float]:
    """One value or FROM:TO:STEP of a quantity that must stay above zero (read by ``parse_one``)."""
    low, high, step = parse_range(text, parse_one, option)
    if low <= 0:
        raise InputError(f"{option} {text}: every value must be above 0")
    if step is None:
        if high > low:
            raise InputError(f"{option} {text}: give a step, FROM:TO:STEP, e.g. {example}")
        return [low]
    values = [round(float(v), 12) for v in range_grid(low, high, step)]
    if len(values) > MAX_GRID_POINTS:
        raise InputError(f"{option} {text} gives {len(values)} values; at most {MAX_GRID_POINTS}")
    return values


def ionic_values(text: str | None, option: str = "--ionic-strength") -> list[float]:
    """The ionic strengths [mol/L] of ``FROM:TO:STEP`` or one value (units as
    :func:`selector.units.parse_ionic_strength` reads them).

    Raises
    ------
    InputError
        no text, a bad range, a range without a step, a value at or below zero, too many.
    """
    if not text:
        raise InputError(f"{option} is required, one value or FROM:TO:STEP, e.g. 0.05:0.25:0.1")
    return _positive_values(text, parse_ionic_strength, option, "0.05:0.25:0.1")


def conc_values(text: str, option: str = "--conc") -> list[float]:
    """The buffer concentrations [mol/L] of ``FROM:TO:STEP`` or one value (units as
    :func:`selector.units.parse_amount` reads them).

    Raises
    ------
    InputError
        a bad range, a range without a step, a value at or below zero, too many values.
    """
    return _positive_values(text, parse_amount, option, "20mM:100mM:20mM")
