"""Units at the edge: the only parser of the amounts, volumes, masses, ionic strengths and
temperatures a user types.

Molar units follow the SI/IUPAC symbols and are case-sensitive: ``M`` is mol/L and
``mM``, ``uM``/``µM``, ``nM`` its fractions.  A lower-case ``m`` is the chemist's symbol for
**molal** (mol/kg of water), so ``0.1m`` or ``50mm`` is refused with a message naming the
molar spelling rather than being read as a concentration it is not (IUPAC Green Book,
3rd ed. 2007, §2.10: molality b, unit mol/kg; the symbol "m" for it is deprecated but
common).  Mass and volume units (g/L, mg/mL, mL, L …) are read in any case.
"""

from __future__ import annotations

import math
import re
from typing import NamedTuple

import numpy as np

from selector.errors import InputError
from selector.textsafe import echo

#: Temperatures the engine accepts [°C]: liquid water at 0.1 MPa within the water fits.
TEMPERATURE_MIN_C, TEMPERATURE_MAX_C = 0.0, 95.0

#: Molar units (case-sensitive) -> factor to mol/L.
MOLAR_UNITS: dict[str, float] = {
    "M": 1.0, "mol/L": 1.0, "mol/l": 1.0,
    "mM": 1e-3, "mmol/L": 1e-3, "mmol/l": 1e-3,
    "uM": 1e-6, "µM": 1e-6, "μM": 1e-6, "umol/L": 1e-6, "µmol/L": 1e-6, "umol/l": 1e-6, "µmol/l": 1e-6,
    "nM": 1e-9, "nmol/L": 1e-9, "nmol/l": 1e-9,
}
#: Mass-concentration units (any case) -> factor to g/L; they need the reagent's molar mass.
MASS_CONC_UNITS: dict[str, float] = {"g/l": 1.0, "mg/ml": 1.0, "mg/l": 1e-3}
UNIT_HELP = "M, mM, uM (µM), nM, mol/L, mmol/L, g/L, mg/mL, mg/L"
MOLAR_UNIT_HELP = "M, mM, uM, nM, mol/L, mmol/L"

VOLUME_UNITS = {"l": 1.0, "ml": 1e-3, "ul": 1e-6, "µl": 1e-6, "μl": 1e-6}
VOLUME_HELP = "L, mL, uL"
MASS_UNITS = {"kg": 1000.0, "g": 1.0, "mg": 1e-3}
MASS_HELP = "kg, g, mg"

#: Lower-case molal spellings a user may type for a molar unit -> the molar unit meant.
_MOLAL_SPELLINGS = {"m": "M", "mm": "mM", "um": "uM", "µm": "µM", "μm": "µM", "nm": "nM"}

#: Letters that look like the micro sign but are not it: a unit written with one is refused
#: (lower-casing the Greek capital Mu would otherwise turn ``5ΜL`` into 5 µL).
_MICRO_LOOKALIKES = {"\u039c": "Greek capital letter Mu", "\u041c": "Cyrillic capital letter Em"}

_QUANTITY_PATTERN = re.compile(
    r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?nan|[-+]?inf)\s*(\S*)\s*$", re.IGNORECASE)


def split_quantity(text: str, what: str, units_help: str, example: str = "25mM") -> tuple[float, str]:
    """``"25 mM"`` -> (25.0, "mM"): a finite, non-negative number and its unit text (may be empty).

    InputError names ``what``, the accepted units and an ``example`` of the quantity asked for
    (``420ppm`` for a pressure, ``1L`` for a volume …) for garbled, non-finite or negative input.
    """
    match = _QUANTITY_PATTERN.match(text if isinstance(text, str) else "")
    if not match:
        raise InputError(f"cannot read {what} {echo(text)}: expected a number and a unit, e.g. {example} "
                         f"(units: {units_help})")
    lookalike = next((name for char, name in _MICRO_LOOKALIKES.items() if char in match.group(2)), None)
    if lookalike:
        raise InputError(f"{what} {echo(text)}: the unit holds the {lookalike}, not the micro sign; write "
                         f"u or µ for micro (units: {units_help})")
    value = float(match.group(1))
    if not math.isfinite(value):
        raise InputError(f"{what} {echo(text)} is not a finite number; give e.g. {example}")
    if value < 0:
        raise InputError(f"{what} {echo(text)} is negative; amounts must be zero or more")
    return value, match.group(2)


def _molar_factor(unit: str, text: str, what: str, units_help: str) -> float | None:
    """mol/L per unit for a molar unit; None for another unit; InputError for a molal one."""
    if unit in MOLAR_UNITS:
        return MOLAR_UNITS[unit]
    if unit in _MOLAL_SPELLINGS:
        molar = _MOLAL_SPELLINGS[unit]
        raise InputError(f"{what} {echo(text)}: lower-case '{unit}' means molal (mol/kg of water), which poise "
                         f"does not take; for a molar concentration write {molar} "
                         f"(e.g. {text.strip()[:-len(unit)].strip()}{molar}); units: {units_help}")
    return None


def parse_assignments(tokens) -> dict[str, str]:
    """``["KH2PO4=25mM", "NaCl=0.1M"]`` -> {"KH2PO4": "25mM", "NaCl": "0.1M"} (order kept).

    The amounts stay text (read later with the reagent's molar mass by :func:`parse_amount`).
    A token without ``=``, a name without an amount, or a name given twice raise InputError.
    """
    amounts: dict[str, str] = {}
    for token in tokens:
        name, sep, amount = token.partition("=")
        name, amount = name.strip(), amount.strip()
        if not sep or not name:
            raise InputError(f"cannot read {echo(token)}: give each reagent as NAME=AMOUNT, e.g. KH2PO4=25mM")
        if not amount:
            raise InputError(f"{echo(name)} has no amount: give it as {name}=AMOUNT, e.g. {name}=25mM")
        if name in amounts:
            raise InputError(f"{echo(name)} is given twice; give each reagent once")
        amounts[name] = amount
    return amounts


def parse_amount(text: str, molar_mass_g_mol: float | None = None, what: str = "amount") -> float:
    """An amount such as ``25mM``, ``0.1 M``, ``5 g/L`` as mol/L.

    Mass units (g/L, mg/mL, mg/L) need ``molar_mass_g_mol`` [g/mol].  Zero is accepted;
    negative, NaN, infinite or garbled amounts, unknown units and molal spellings raise
    InputError.

    Examples
    --------
    >>> parse_amount("25mM")
    0.025
    >>> round(parse_amount("5.844 g/L", molar_mass_g_mol=58.44), 12)
    0.1
    """
    value, unit = split_quantity(text, what, UNIT_HELP)
    if not unit:
        raise InputError(f"{what} {echo(text)} has no unit; add one of: {UNIT_HELP}")
    factor = _molar_factor(unit.replace("μ", "µ"), text, what, UNIT_HELP)
    if factor is not None:
        return value * factor
    mass_factor = MASS_CONC_UNITS.get(unit.lower())
    if mass_factor is None:
        raise InputError(f"unknown unit {echo(unit)} in {what} {echo(text)}; use one of: {UNIT_HELP}")
    if not molar_mass_g_mol:
        raise InputError(f"{what} {echo(text)} is a mass concentration; it needs a reagent with a molar mass")
    return value * mass_factor / molar_mass_g_mol


def parse_ionic_strength(text: str, what: str = "ionic strength") -> float:
    """``"0.15"`` (a bare number is mol/L) or ``"150mM"`` -> 0.15 mol/L; InputError otherwise."""
    value, unit = split_quantity(text, what, f"mol/L as a number (0.15) or with a unit (150mM; {MOLAR_UNIT_HELP})",
                                 "150mM")
    if not unit:
        return value
    factor = _molar_factor(unit.replace("μ", "µ"), text, what, MOLAR_UNIT_HELP)
    if factor is None:
        raise InputError(f"cannot read {what} {echo(text)}: give mol/L as a number (0.15) or with a unit "
                         f"(150mM; {MOLAR_UNIT_HELP})")
    return value * factor


def parse_volume(text: str, what: str = "volume") -> float:
    """A volume such as ``1L``, ``500 mL`` in litres; zero, negative or garbled -> InputError."""
    value, unit = split_quantity(text, what, VOLUME_HELP, "500mL")
    if not unit:
        raise InputError(f"{what} {echo(text)} has no unit; add one of: {VOLUME_HELP}")
    factor = VOLUME_UNITS.get(unit.lower())
    if factor is None:
        raise InputError(f"unknown unit {echo(unit)} in {what} {echo(text)}; use one of: {VOLUME_HELP}")
    if value == 0:
        raise InputError(f"{what} {echo(text)} is zero; give a positive volume")
    return value * factor


def parse_fraction(text: str, what: str = "purity") -> float:
    """A fraction written as a percentage (``98%``) or a bare number (``0.98``), in (0, 1].

    Examples
    --------
    >>> parse_fraction("98%"), parse_fraction("0.5")
    (0.98, 0.5)
    """
    value, unit = split_quantity(text, what, "% or a fraction", "98%")
    if unit not in ("", "%"):
        raise InputError(f"cannot read {what} {echo(text)}: give a percentage (98%) or a fraction (0.98)")
    fraction = value / 100.0 if unit == "%" else value
    if not 0.0 < fraction <= 1.0:
        raise InputError(f"{what} {echo(text)} is not above 0 and at most 100 %; give e.g. 98%")
    return fraction


def parse_mass(text: str, what: str = "mass") -> float:
    """A mass such as ``500 g``, ``1kg`` in grams; zero, negative or garbled -> InputError."""
    value, unit = split_quantity(text, what, MASS_HELP, "500g")
    if not unit:
        raise InputError(f"{what} {echo(text)} has no unit; add one of: {MASS_HELP}")
    factor = MASS_UNITS.get(unit.lower())
    if factor is None:
        hint = " (volumes need a density the catalog does not hold: give the pack by mass)" \
            if unit.lower() in VOLUME_UNITS else ""
        raise InputError(f"unknown unit {echo(unit)} in {what} {echo(text)}; use one of: {MASS_HELP}{hint}")
    if value == 0:
        raise InputError(f"{what} {echo(text)} is zero; give a positive mass")
    return value * factor


def check_temperature(temperature_c) -> np.ndarray:
    """The temperature(s) [°C] as an array, or InputError outside 0-95 °C or not a number."""
    if type(temperature_c) in (float, int) and TEMPERATURE_MIN_C <= temperature_c <= TEMPERATURE_MAX_C:
        return np.asarray(float(temperature_c))   # one plain number in range: no array checks
    try:
        t = np.asarray(temperature_c, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"temperature {echo(temperature_c)} is not a number; give °C between "
                         f"{TEMPERATURE_MIN_C:g} and {TEMPERATURE_MAX_C:g}") from None
    bad = ~np.isfinite(t) | (t < TEMPERATURE_MIN_C) | (t > TEMPERATURE_MAX_C)
    if np.any(bad):
        first = t.reshape(-1)[np.argmax(bad.reshape(-1))]
        raise InputError(f"temperature {first:g} °C is out of range; poise works from "
                         f"{TEMPERATURE_MIN_C:g} to {TEMPERATURE_MAX_C:g} °C (liquid water)")
    return t


def parse_range(text: str, parse_one, what: str, *, step: str = "optional") -> tuple[float, float, float | None]:
    """``"6.0:8.0:0.5"`` or ``"20mM:100mM"`` -> (low, high, step or None).

    Each part is read by ``parse_one`` (e.g. :func:`parse_amount`, :func:`parse_ionic_strength`
    or ``float`` for pH), so a range takes exactly the units its single value takes; the step is
    read the same way.  ``step`` is ``"required"``, ``"optional"`` or ``"forbidden"``.  A single
    value without ``:`` is returned as (value, value, None) unless a step is required.  Low above
    high, a zero or negative step, or a wrong number of parts raise InputError naming ``what``.

    Examples
    --------
    >>> parse_range("6:8:0.5", float, "pH range", step="required")
    (6.0, 8.0, 0.5)
    >>> parse_range("20mM:100mM", parse_amount, "concentration")
    (0.02, 0.1, None)
    """
    form = {"required": "FROM:TO:STEP", "optional": "FROM:TO (or FROM:TO:STEP)", "forbidden": "FROM:TO"}[step]
    parts = text.split(":") if isinstance(text, str) else []
    allowed = {"required": (3,), "optional": (1, 2, 3), "forbidden": (1, 2)}[step]
    if len(parts) not in allowed:
        raise InputError(f"cannot read {what} {echo(text)}: expected {form}, e.g. 6.0:8.0:0.5")

    def read(part: str) -> float:
        try:
            return float(parse_one(part.strip()))
        except ValueError:
            raise InputError(f"cannot read {what} {echo(text)}: {echo(part)} is not a number; "
                             f"expected {form}") from None

    values = [read(part) for part in parts]
    if not all(math.isfinite(v) for v in values):
        raise InputError(f"{what} {echo(text)} holds a value that is not a finite number; expected {form}")
    low, high = values[0], values[1] if len(values) > 1 else values[0]
    if low > high:
        raise InputError(f"{what} {echo(text)} runs from high to low; write the lower end first ({form})")
    increment = values[2] if len(values) == 3 else None
    if increment is not None and increment <= 0:
        raise InputError(f"{what} {echo(text)}: the step must be positive ({form})")
    return low, high, increment


def range_grid(low: float, high: float, step: float) -> np.ndarray:
    """Grid low, low+step, … up to high inclusive (high is kept when the step lands on it to
    1e-9 of a step; otherwise the last point is the last one below high)."""
    count = int(math.floor((high - low) / step + 1e-9)) + 1
    return low + step * np.arange(count)


#: Buffer-capacity units (case-sensitive molar part, any spelling of "per pH") -> factor to mol/L per pH.
CAPACITY_UNITS: dict[str, float] = {"M/pH": 1.0, "mol/L/pH": 1.0, "mM/pH": 1e-3, "mmol/L/pH": 1e-3,
                                    "uM/pH": 1e-6, "µM/pH": 1e-6}
CAPACITY_HELP = "mM per pH as a number (10) or with a unit (10mM/pH, 0.01M/pH, mmol/L/pH)"


def parse_capacity(text: str, what: str = "buffer capacity") -> float:
    """A buffer capacity β as mol/L per pH: a bare number is mM per pH (the unit labs quote).

    Examples
    --------
    >>> parse_capacity("10")
    0.01
    >>> parse_capacity("10mM/pH")
    0.01
    >>> parse_capacity("0.02 M/pH")
    0.02
    """
    value, unit = split_quantity(text, what, CAPACITY_HELP, "10mM/pH")
    if not unit:
        return value * 1e-3
    spelled = unit.replace("μ", "µ").replace(" ", "")
    for per in ("perpH", "per pH", "/ pH"):
        spelled = spelled.replace(per, "/pH")
    factor = CAPACITY_UNITS.get(spelled)
    if factor is None:
        raise InputError(f"unknown unit {echo(unit)} in {what} {echo(text)}; give {CAPACITY_HELP}")
    return value * factor


#: Partial-pressure units (any case) -> factor to atm.  1 atm = 101325 Pa and 1 bar = 1e5 Pa
#: (definitions).
PRESSURE_UNITS: dict[str, float] = {"atm": 1.0, "uatm": 1e-6, "µatm": 1e-6, "pa": 1.0 / 101325.0,
                                    "kpa": 1000.0 / 101325.0, "bar": 1e5 / 101325.0, "mbar": 100.0 / 101325.0}
#: Units of a gas given as its mole fraction of DRY air (how CO₂ in air is quoted) -> factor to a
#: fraction; the engine takes the partial pressure in moist air from it.
#: One part per million as a fraction (definition).
PPM = 1e-6
DRY_AIR_FRACTION_UNITS: dict[str, float] = {"ppm": PPM}
PRESSURE_HELP = "ppm (of dry air), or a partial pressure in atm, uatm, Pa, kPa, bar, mbar; e.g. 420ppm, 0.00042atm, 42Pa"


class GasAmount(NamedTuple):
    """A gas as the user gave it: a mole fraction of dry air, or a partial pressure [atm]."""

    value: float
    is_dry_air_fraction: bool


def parse_gas_amount(text: str, what: str = "partial pressure") -> GasAmount:
    """A gas such as ``420ppm`` (fraction of dry air) or ``0.00042atm``, ``42Pa`` (partial pressure,
    in atm); InputError otherwise.

    Examples
    --------
    >>> parse_gas_amount("420ppm").is_dry_air_fraction, round(parse_gas_amount("420ppm").value, 9)
    (True, 0.00042)
    >>> round(parse_gas_amount("42.5Pa").value, 9)
    0.000419442
    """
    value, unit = split_quantity(text, what, PRESSURE_HELP, "420ppm")
    if not unit:
        raise InputError(f"{what} {echo(text)} has no unit; use one of: {PRESSURE_HELP}")
    spelled = unit.replace("μ", "µ").lower()
    if spelled in DRY_AIR_FRACTION_UNITS:
        return GasAmount(value * DRY_AIR_FRACTION_UNITS[spelled], True)
    factor = PRESSURE_UNITS.get(spelled)
    if factor is None:
        raise InputError(f"unknown unit {echo(unit)} in {what} {echo(text)}; use one of: {PRESSURE_HELP}")
    return GasAmount(value * factor, False)
