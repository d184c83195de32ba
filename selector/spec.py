"""The buffer spec: what the user needs, as one typed, validated, frozen record.

The same :class:`BufferSpec` is used by the CLI, the app, ranking, recipes and the
optimiser.  A :class:`BufferSpec` checks its own fields when it is made (also by
``dataclasses.replace``); :func:`make_spec` reads plain values (numbers as text, lists,
tables, reagent names) into one and raises a single :class:`SpecError` with a message per
bad field, naming each field as the user wrote it: the command-line option or the file key
(see :class:`Written`).  :func:`read_spec` / :func:`parse_spec` read TOML or JSON files,
:func:`spec_to_toml` / :func:`spec_to_json` write them.

Each field has one rule in :data:`FIELD_RULES`; the checks that tie two fields together
are in :data:`CROSS_CHECKS`.  The spec imports no engine: reagent names resolve through
:mod:`selector.names` against the catalog passed in.
"""

from __future__ import annotations

import dataclasses
import json
import math
import tomllib
from dataclasses import dataclass, field
from decimal import Decimal
from functools import partial
from pathlib import Path
from typing import Any, Callable, Mapping

from catalog import FLAG_VOCABULARY, Catalog
from selector.errors import InputError
from selector.names import resolve_reagent
from selector.profiles import CRITERIA, PROFILES, WEIGHT_MAX
from selector.textsafe import ECHO_MAX_CHARS, echo, one_line, summarise
from selector.units import TEMPERATURE_MAX_C, TEMPERATURE_MIN_C, parse_amount, parse_volume

#: Metals a spec may name, with the catalog's spelling.
METALS = ("Ca", "Mg", "Mn", "Cu", "Zn", "Co", "Ni")
COUNTER_IONS = ("Na", "K", "none", "any")
SALTS = ("NaCl", "KCl")
LOAD_KINDS = ("acid", "base")
#: Exclusion flags a spec may name: the catalog's reactive-group flags plus these.
EXTRA_EXCLUSIONS = ("hazardous",)
#: Every flag a spec's ``exclude`` accepts.
EXCLUSION_FLAGS = tuple(FLAG_VOCABULARY) + EXTRA_EXCLUSIONS
#: Default assay concentration of a trace metal whose bound fraction is limited [mol/L]
#: (common practice: a trace level that leaves the buffer's own speciation unchanged).
TRACE_METAL_CONC_MOL_L = 1e-6
#: The written form of one metal limit (``--metal`` and a spec file's text item).
METAL_FORM = "ION:MAX_BOUND_FRACTION[@CONC], e.g. Ca:0.05 or Ca:0.05@2mM"
#: Limits of a spec file the readers accept (common practice for a hand-written settings
#: file: a real spec is well under a kilobyte, three levels deep, numbers of a few digits).
SPEC_MAX_CHARS = 1_000_000
SPEC_MAX_DEPTH = 8
NUMBER_MAX_CHARS = 40
#: Most plates or runs a cost is quoted for (a bound of the tool, far above any real plan).
PLATES_MAX = 1_000_000
#: Most wells on a plate accepted (a bound of the tool, common practice: 1536-well plates).
WELLS_MAX = 1536
#: Largest volume per well accepted [L] (a bound of the tool, common practice: deep-well
#: plates hold a few mL per well; 100 mL is far above any).
WELL_VOLUME_MAX_L = 0.1
#: Longest message about one field [characters].
PROBLEM_MAX_CHARS = 1000


class SpecError(InputError):
    """A spec with bad fields; ``problems`` has one message per field (the first
    :data:`~selector.textsafe.PROBLEMS_SHOWN`, then a count of the rest)."""

    def __init__(self, problems: list[str]):
        self.problems = summarise(problems)
        super().__init__("invalid spec: " + "; ".join(self.problems))


@dataclass(frozen=True)
class Written:
    """How the user wrote one spec field, so that a message names it in their words.

    Attributes
    ----------
    name : str
        The command-line option (``--ionic-strength``), the file key (``ionic_strength_mol_l``)
        or the widget label the value came from.
    per_unit : float
        The user's number is the field's value times this (1000 for mM given for a field in
        mol/L); a number the user wrote is divided by it.
    unit : str
        The unit of the user's number, shown after numbers in messages ("" for none).
    """

    name: str
    per_unit: float = 1.0
    unit: str = ""

    def show(self, value: float) -> str:
        """A field value [field's unit] as the user's number with its unit."""
        return f"{self.to_user(value):g}" + (f" {self.unit}" if self.unit else "")

    def to_field(self, number: float) -> float:
        """The user's number in the field's unit.

        Decimal arithmetic on the shortest text of each number, so that a number typed as
        15 (mM) is exactly the field value 0.015 and :meth:`to_user` gives 15 back.
        """
        if self.per_unit == 1.0:
            return number
        return float(Decimal(repr(number)) / Decimal(repr(self.per_unit)))

    def to_user(self, value: float) -> float:
        """A field value [field's unit] as the user's number (the inverse of :meth:`to_field`)."""
        if self.per_unit == 1.0:
            return value
        return float(Decimal(repr(value)) * Decimal(repr(self.per_unit)))


@dataclass(frozen=True)
class MetalLimit:
    """A metal present in the assay and the largest fraction of it the buffer may bind.

    Attributes
    ----------
    metal : one of :data:`METALS`
    max_bound_fraction : largest fraction of the metal bound by the buffer, 0 < f < 1
    conc_mol_l : total concentration of the metal in the assay [mol/L]
    """

    metal: str
    max_bound_fraction: float
    conc_mol_l: float = TRACE_METAL_CONC_MOL_L


@dataclass(frozen=True)
class Load:
    """Strong acid or base the buffer must absorb [mol/L of final solution].

    Attributes
    ----------
    kind : "acid" or "base"
    conc_mol_l : amount of strong acid or base added per litre of buffer [mol/L]
    """

    kind: str
    conc_mol_l: float


class _Problems:
    """The messages met while reading a spec, each naming the field as the user wrote it."""

    def __init__(self, written: Mapping[str, Written] | None = None):
        self.written = dict(written or {})
        self.messages: list[str] = []

    def way(self, path: str) -> Written:
        """How the field at ``path`` (``"ph"``, ``"loads[0].kind"``) was written."""
        return self.written.get(path) or Written(path)

    def name(self, path: str) -> str:
        return self.way(path).name

    def add(self, path: str, text: str) -> None:
        self.messages.append(one_line(f"{self.name(path)}: {text}", PROBLEM_MAX_CHARS))


@dataclass(frozen=True)
class Bounds:
    """The accepted range of a number field, in the field's unit.

    Attributes
    ----------
    low, high : float or None
        Lowest and highest accepted value (None: no bound).
    low_open, high_open : bool
        Whether the bound itself is refused (``> low`` rather than ``>= low``).
    required : bool
        Whether the field must be given.
    """

    low: float | None = None
    high: float | None = None
    low_open: bool = False
    high_open: bool = False
    required: bool = False

    def problem(self, value: float, way: Written) -> str | None:
        """What is wrong with ``value`` [field's unit], in the user's unit; None if nothing."""
        if self.low is not None and (value <= self.low if self.low_open else value < self.low):
            return f"expected {'>' if self.low_open else '>='} {way.show(self.low)}, got {way.show(value)}"
        if self.high is not None and (value >= self.high if self.high_open else value > self.high):
            return f"expected {'<' if self.high_open else '<='} {way.show(self.high)}, got {way.show(value)}"
        return None


def _number(problems: _Problems, path: str, value: Any, bounds: Bounds) -> float | None:
    """A number field: a number, or text that reads as one, within ``bounds``."""
    if value is None:
        if bounds.required:
            problems.add(path, "required")
        return None
    way = problems.way(path)
    if isinstance(value, bool) or not isinstance(value, (int, float, str)) \
            or (isinstance(value, str) and len(value.strip()) > NUMBER_MAX_CHARS):
        problems.add(path, f"expected a number, got {echo(value)}")
        return None
    try:
        number = float(value)
    except ValueError:
        problems.add(path, f"expected a number, got {echo(value)}")
        return None
    except OverflowError:
        number = math.inf
    if not math.isfinite(number):
        problems.add(path, f"expected a finite number, got {echo(value)}")
        return None
    number = way.to_field(number)
    problem = bounds.problem(number, way)
    if problem:
        problems.add(path, problem)
        return None
    return number


def _choice(problems: _Problems, path: str, value: Any, choices: tuple[str, ...]) -> str | None:
    """A field that takes one of ``choices``."""
    if not isinstance(value, str) or value not in choices:
        problems.add(path, f"expected one of {', '.join(choices)}, got {echo(value)}")
        return None
    return str(value)


def _flag(problems: _Problems, path: str, value: Any) -> bool | None:
    """A true-or-false field."""
    if not isinstance(value, bool):
        problems.add(path, f"expected true or false, got {echo(value)}")
        return None
    return value


def _whole_number(problems: _Problems, path: str, value: Any, maximum: int = PLATES_MAX) -> int | None:
    """A count from 1 to ``maximum`` (None: not given); text of a whole number is read as one."""
    if value is None:
        return None
    given = value
    if isinstance(value, str) and len(value.strip()) <= NUMBER_MAX_CHARS:
        try:
            value = int(value.strip())
        except ValueError:
            pass
    if isinstance(value, bool) or not isinstance(value, int) or value < 1:
        problems.add(path, f"expected a whole number >= 1, got {echo(given)}")
        return None
    if value > maximum:
        problems.add(path, f"expected a whole number <= {maximum}, got {echo(given)}")
        return None
    return value


def _well_volume(problems: _Problems, path: str, value: Any) -> float | None:
    """Volume per well [L]: a number of litres, or text with a volume unit as ``--well-volume``
    takes it (``"200uL"``), up to :data:`WELL_VOLUME_MAX_L`."""
    if isinstance(value, str) and value.strip()[-1:].isalpha() and len(value) <= NUMBER_MAX_CHARS:
        try:
            value = parse_volume(value, "volume per well")
        except InputError as error:
            problems.add(path, str(error))
            return None
    return _number(problems, path, value, Bounds(0.0, WELL_VOLUME_MAX_L, low_open=True))


def _text(problems: _Problems, path: str, value: Any) -> str:
    """A free-text field."""
    if value is not None and not isinstance(value, str):
        problems.add(path, f"expected text, got {echo(value)}")
        return ""
    return "" if value is None else value


def _items(problems: _Problems, path: str, value: Any, record: bool) -> list:
    """A list field's items; a lone string counts as a list of one (``exclude = "x"``)."""
    if value is None:
        return []
    if isinstance(value, str) and not record:
        return [value]
    if not isinstance(value, (list, tuple)):
        problems.add(path, f"expected a list, got {echo(value)}")
        return []
    good = []
    for i, item in enumerate(value):
        if record and not isinstance(item, (Mapping, MetalLimit, Load)):
            problems.add(f"{path}[{i}]", f"expected a table of fields, got {echo(item)}")
        elif not record and not isinstance(item, str):
            problems.add(f"{path}[{i}]", f"expected a name, got {echo(item)}")
        else:
            good.append(item)
    return good


def _unknown_text(unknown: list[Any], known: Any) -> str:
    """The problem text of unknown keys: the first named, the others counted."""
    more = f" (and {len(unknown) - 1} more unknown: {', '.join(echo(k) for k in unknown[1:4])}" \
        f"{', …' if len(unknown) > 4 else ''})" if len(unknown) > 1 else ""
    return f"unknown field{more} (fields: {', '.join(sorted(known))})"


def _records(problems: _Problems, path: str, value: Any, kind: type) -> list[tuple[str, dict[str, Any]]]:
    """The items of a list of records as (path of the item, its fields); unknown keys reported."""
    known = {f.name for f in dataclasses.fields(kind)}
    out = []
    for i, item in enumerate(_items(problems, path, value, record=True)):
        item_path = f"{path}[{i}]"
        fields = dataclasses.asdict(item) if isinstance(item, (Load, MetalLimit)) else dict(item)
        unknown = [key for key in fields if key not in known]
        if unknown:
            problems.add(f"{item_path}.{unknown[0]}", _unknown_text(unknown, known))
        out.append((item_path, fields))
    return out


def _loads(problems: _Problems, path: str, value: Any) -> tuple[Load, ...]:
    """Acid or base loads: ``[{kind = "acid", conc_mol_l = 0.002}, ...]``."""
    loads = []
    for item_path, item in _records(problems, path, value, Load):
        kind = item.get("kind")
        if kind not in LOAD_KINDS:
            problems.add(f"{item_path}.kind", f"expected acid or base, got {echo(kind)}")
        amount = _number(problems, f"{item_path}.conc_mol_l", item.get("conc_mol_l"),
                         Bounds(0.0, 2.0, low_open=True, required=True))
        if kind in LOAD_KINDS and amount is not None:
            loads.append(Load(str(kind), amount))
    return tuple(loads)


def parse_metal_limit(text: str) -> dict[str, Any]:
    """``"Ca:0.05@2mM"`` -> ``{"metal": "Ca", "max_bound_fraction": "0.05", "conc": "2mM"}``
    (the fraction and the concentration left as text for the field rules; no ``@``: no
    ``conc``, the trace default :data:`TRACE_METAL_CONC_MOL_L`).

    Raises
    ------
    InputError
        text not of the form :data:`METAL_FORM`.
    """
    head, at, conc = text.partition("@")
    metal, _, fraction = head.partition(":")
    if not metal.strip() or not fraction.strip() or (at and not conc.strip()):
        raise InputError(f"expected {METAL_FORM}, got {echo(text)}")
    out: dict[str, Any] = {"metal": metal.strip().capitalize(), "max_bound_fraction": fraction.strip()}
    if at:
        out["conc"] = conc.strip()
    return out


def _metal_items(problems: _Problems, path: str, value: Any) -> Any:
    """A spec's metals in the record form: text items (``"Ca:0.05@2mM"``) and a table keyed
    by metal (``{Ca = "0.05@2mM"}``, ``{Ca = {max_bound_fraction = 0.05, conc = "2mM"}}``)
    read into tables; ``conc`` (a number in mol/L or text with a unit) into ``conc_mol_l``."""
    if isinstance(value, str):
        value = [value]
    if isinstance(value, Mapping):
        value = [f"{metal}:{item}" if isinstance(item, (str, int, float)) and not isinstance(item, bool)
                 else {"metal": metal, **item} if isinstance(item, Mapping) else item
                 for metal, item in value.items()]
    if not isinstance(value, (list, tuple)):
        return value
    items: list[Any] = []
    for i, item in enumerate(value):
        if isinstance(item, str):
            try:
                item = parse_metal_limit(item)
            except InputError as error:
                problems.add(f"{path}[{i}]", str(error))
                item = None
        if isinstance(item, Mapping) and "conc" in item:
            item = dict(item)
            conc = item.pop("conc")
            if isinstance(conc, str):
                try:
                    conc = parse_amount(conc, what="metal concentration")
                except InputError as error:
                    problems.add(f"{path}[{i}].conc", str(error))
                    item = None
            if item is not None:
                item["conc_mol_l"] = conc
        if item is not None:
            items.append(item)
    return items


def _metals(problems: _Problems, path: str, value: Any) -> tuple[MetalLimit, ...]:
    """Metals, the largest fraction of each the buffer may bind and the metal's concentration:
    a list of tables (``metal``, ``max_bound_fraction``, ``conc_mol_l`` or ``conc``), of texts
    of the form :data:`METAL_FORM`, or a table keyed by metal."""
    metals = []
    for item_path, item in _records(problems, path, _metal_items(problems, path, value), MetalLimit):
        metal = _choice(problems, f"{item_path}.metal", item.get("metal"), METALS)
        fraction = _number(problems, f"{item_path}.max_bound_fraction", item.get("max_bound_fraction"),
                           Bounds(0.0, 1.0, low_open=True, high_open=True, required=True))
        conc = _number(problems, f"{item_path}.conc_mol_l", item.get("conc_mol_l", TRACE_METAL_CONC_MOL_L),
                       Bounds(0.0, 1.0, low_open=True))
        if metal is not None and fraction is not None and conc is not None:
            metals.append(MetalLimit(metal, fraction, conc))
    return tuple(metals)


def _flags(problems: _Problems, path: str, value: Any, allowed: tuple[str, ...]) -> tuple[str, ...]:
    """A list of flag names, each one of ``allowed``: the flags whose systems are excluded
    (``exclude``) or that a system must carry to be admitted (``require``, e.g. ``volatile_ms``)."""
    flags = tuple(_items(problems, path, value, record=False))
    for flag in flags:
        if flag not in allowed:
            problems.add(path, f"unknown flag {echo(flag)}; flags: {', '.join(allowed)}")
    return flags


def _stock(problems: _Problems, path: str, value: Any) -> tuple[str, ...] | None:
    """Reagent names the lab has (resolved to ids by :func:`make_spec`); None: any."""
    if value is None:
        return None
    return tuple(_items(problems, path, value, record=False))


def _fixed_amounts(problems: _Problems, path: str, value: Any) -> tuple[tuple[str, float], ...]:
    """Reagent -> mol/L the mix must contain, as a table or as (reagent, mol/L) pairs."""
    if not value:
        return ()
    if not isinstance(value, Mapping):
        try:
            value = dict(value)
        except (TypeError, ValueError):
            problems.add(path, f"expected a table of reagent = mol/L, got {echo(value)}")
            return ()
    fixed = []
    for name, amount in value.items():
        conc = _number(problems, f"{path}.{name}", amount, Bounds(0.0, 5.0))
        if conc is not None:
            fixed.append((str(name), conc))
    return tuple(fixed)


def _weights(problems: _Problems, path: str, value: Any) -> tuple[tuple[str, float], ...]:
    """Criterion -> weight of the ranking (``{drift = 3, cost = 0.5}``), each name one of
    :data:`selector.profiles.CRITERIA`, each weight from 0 to :data:`~selector.profiles.WEIGHT_MAX`."""
    if not value:
        return ()
    if not isinstance(value, Mapping):
        try:
            value = dict(value)
        except (TypeError, ValueError):
            problems.add(path, f"expected a table of criterion = weight, got {echo(value)}")
            return ()
    weights = []
    for name, weight in value.items():
        if name not in CRITERIA:
            problems.add(path, f"unknown criterion {echo(name)}; criteria: {', '.join(CRITERIA)}")
            continue
        number = _number(problems, f"{path}.{name}", weight, Bounds(0.0, WEIGHT_MAX))
        if number is not None:
            weights.append((str(name), number))
    return tuple(weights)


def _number_rule(low: float | None = None, high: float | None = None, low_open: bool = False,
                 required: bool = False) -> Callable[[_Problems, str, Any], Any]:
    return partial(_number, bounds=Bounds(low, high, low_open=low_open, required=required))


_TEMPERATURE = _number_rule(TEMPERATURE_MIN_C, TEMPERATURE_MAX_C)

#: One rule per field: (problems, path, value as given) -> the field's typed value.  Ranges
#: are the tool's accepted inputs (common practice for laboratory buffers), not chemistry.
FIELD_RULES: dict[str, Callable[[_Problems, str, Any], Any]] = {
    "ph": _number_rule(0.0, 14.0, required=True),
    "temperature_c": _TEMPERATURE,
    "prep_temperature_c": _TEMPERATURE,
    "volume_l": _number_rule(1e-6, 1e4),
    "buffer_conc_mol_l": _number_rule(0.0, 5.0, low_open=True),
    "buffer_conc_min_mol_l": _number_rule(0.0, 5.0, low_open=True),
    "buffer_conc_max_mol_l": _number_rule(0.0, 5.0, low_open=True),
    "capacity_mol_l_per_ph": _number_rule(0.0, 5.0, low_open=True),
    "loads": _loads,
    "tolerance_ph": _number_rule(0.0, 2.0, low_open=True),
    "ionic_strength_mol_l": _number_rule(0.0, 5.0),
    "ionic_strength_min_mol_l": _number_rule(0.0, 5.0),
    "ionic_strength_max_mol_l": _number_rule(0.0, 5.0, low_open=True),
    "salt": partial(_choice, choices=SALTS),
    "counter_ion": partial(_choice, choices=COUNTER_IONS),
    "metals": _metals,
    "uv_nm": _number_rule(150.0, 800.0),
    "exclude": partial(_flags, allowed=EXCLUSION_FLAGS),
    "require": partial(_flags, allowed=tuple(FLAG_VOCABULARY)),
    "allow_hazardous": _flag,
    "no_precipitate": _flag,
    "in_stock": _stock,
    "plates": _whole_number,
    "wells": partial(_whole_number, maximum=WELLS_MAX),
    "well_volume_l": _well_volume,
    "temperature_min_c": _TEMPERATURE,
    "temperature_max_c": _TEMPERATURE,
    "osmolarity_min_osmol_l": _number_rule(0.0, 10.0),
    "osmolarity_max_osmol_l": _number_rule(0.0, 10.0, low_open=True),
    "fixed_amounts": _fixed_amounts,
    "profile": lambda problems, path, value: None if value is None else _choice(problems, path, value,
                                                                                 tuple(PROFILES)),
    "weights": _weights,
    "notes": _text,
}


def _ordered(problems: _Problems, values: Mapping[str, Any], low: str, high: str) -> None:
    """A lower-bound field not above its upper-bound field."""
    a, b = values.get(low), values.get(high)
    if a is not None and b is not None and a > b:
        problems.add(low, f"{problems.way(low).show(a)} is above {problems.name(high)} {problems.way(high).show(b)}")


def _ionic_strength_target_or_bounds(problems: _Problems, values: Mapping[str, Any]) -> None:
    """A target ionic strength, or bounds on it, not both; the lower bound not above the upper."""
    _ordered(problems, values, "ionic_strength_min_mol_l", "ionic_strength_max_mol_l")
    bounds = [k for k in ("ionic_strength_min_mol_l", "ionic_strength_max_mol_l") if values.get(k) is not None]
    if values.get("ionic_strength_mol_l") is not None and bounds:
        problems.add("ionic_strength_mol_l",
                     f"give a target or bounds ({', '.join(problems.name(k) for k in bounds)}), not both")


def _conc_range(problems: _Problems, values: Mapping[str, Any]) -> None:
    """A concentration or a range of it (both ends), not both; the range in order."""
    low, high = values.get("buffer_conc_min_mol_l"), values.get("buffer_conc_max_mol_l")
    if (low is None) != (high is None):
        problems.add("buffer_conc_min_mol_l", f"give both ends of the concentration range "
                     f"({problems.name('buffer_conc_min_mol_l')} and {problems.name('buffer_conc_max_mol_l')}) "
                     "or neither")
    if values.get("buffer_conc_mol_l") is not None and (low is not None or high is not None):
        problems.add("buffer_conc_mol_l", "give a concentration or a range of it, not both")
    _ordered(problems, values, "buffer_conc_min_mol_l", "buffer_conc_max_mol_l")


def _temperature_window(problems: _Problems, values: Mapping[str, Any]) -> None:
    """Both ends of the temperature window or neither, in order."""
    low, high = values.get("temperature_min_c"), values.get("temperature_max_c")
    if (low is None) != (high is None):
        problems.add("temperature_min_c", f"give both ends of the window ({problems.name('temperature_min_c')} "
                     f"and {problems.name('temperature_max_c')}) or neither")
    _ordered(problems, values, "temperature_min_c", "temperature_max_c")


def plates_volume_l(values: Mapping[str, Any]) -> float | None:
    """Volume the plates take [L]: plates (default 1) × wells × volume per well; None
    without ``wells`` and ``well_volume_l``."""
    wells, well_volume_l = values.get("wells"), values.get("well_volume_l")
    if wells is None or well_volume_l is None:
        return None
    return (values.get("plates") or 1) * wells * well_volume_l


def _plate(problems: _Problems, values: Mapping[str, Any]) -> None:
    """Wells and volume per well together or neither; with them the volume to make is
    computed (:func:`plates_volume_l`), so a different volume given too is refused."""
    if (values.get("wells") is None) != (values.get("well_volume_l") is None):
        problems.add("wells", f"give {problems.name('wells')} and {problems.name('well_volume_l')} together "
                     "(e.g. 96 wells of 200uL) or neither")
        return
    computed, volume_l = plates_volume_l(values), values.get("volume_l")
    if computed is not None and volume_l is not None and not math.isclose(volume_l, computed, rel_tol=1e-9):
        problems.add("volume_l", f"give {problems.name('volume_l')} or {problems.name('wells')} with "
                     f"{problems.name('well_volume_l')} (the volume is then computed: {computed:g} L), not both")


#: Checks that tie fields together: (the fields they read, the check).  A check runs when
#: none of its fields has a problem of its own.
CROSS_CHECKS: tuple[tuple[tuple[str, ...], Callable[[_Problems, Mapping[str, Any]], None]], ...] = (
    (("ionic_strength_mol_l", "ionic_strength_min_mol_l", "ionic_strength_max_mol_l"),
     _ionic_strength_target_or_bounds),
    (("temperature_min_c", "temperature_max_c"), _temperature_window),
    (("buffer_conc_mol_l", "buffer_conc_min_mol_l", "buffer_conc_max_mol_l"), _conc_range),
    (("osmolarity_min_osmol_l", "osmolarity_max_osmol_l"),
     partial(_ordered, low="osmolarity_min_osmol_l", high="osmolarity_max_osmol_l")),
    (("wells", "well_volume_l", "volume_l", "plates"), _plate),
)


def default_salt(counter_ion: str | None) -> str:
    """The salt that tops up the ionic strength when the user names none: KCl with a
    potassium counter-ion, NaCl otherwise (common practice: one cation in the buffer)."""
    return "KCl" if counter_ion == "K" else "NaCl"


def _read_fields(problems: _Problems, given: Mapping[str, Any]) -> dict[str, Any]:
    """Each given field through its rule (unknown fields reported); cross checks after."""
    values: dict[str, Any] = {}
    bad = set()
    unknown = [name for name in given if name not in FIELD_RULES]
    if unknown:
        problems.add(str(unknown[0])[:ECHO_MAX_CHARS], _unknown_text(unknown, FIELD_RULES))
    for name, value in given.items():
        rule = FIELD_RULES.get(name)
        if rule is None:
            continue
        count = len(problems.messages)
        values[name] = rule(problems, name, value)
        if len(problems.messages) > count:
            bad.add(name)
    if "ph" not in given:
        problems.add("ph", "required (the target pH at the use temperature)")
    for names, check in CROSS_CHECKS:
        if bad.isdisjoint(names):
            check(problems, values)
    return values


@dataclass(frozen=True)
class BufferSpec:
    """What the buffer must do.  Units are in the names; None means "no requirement".

    The record checks its fields when made and raises :class:`SpecError` (fields named as
    here); :func:`make_spec` reads plain values and names fields as the user wrote them.

    Attributes
    ----------
    ph : target pH at the use temperature
    temperature_c : use temperature [°C]
    prep_temperature_c : temperature at which the pH meter is read [°C]
    volume_l : volume to make [L]
    buffer_conc_mol_l : total buffer concentration (system total) [mol/L]
    capacity_mol_l_per_ph : minimum buffer capacity β [mol/L per pH]
    loads : acid/base loads the pH must survive within ± tolerance_ph
    tolerance_ph : allowed pH excursion under the loads and over the temperature window
    ionic_strength_mol_l : ionic-strength target, topped up with ``salt`` [mol/L]
    ionic_strength_min_mol_l, ionic_strength_max_mol_l : ionic-strength bounds [mol/L]
    salt : "NaCl" or "KCl", used to reach the ionic strength (default KCl with counter-ion K)
    counter_ion : "Na", "K", "none" (free acid/base forms only) or "any"
    metals : metals present and the fraction of each the buffer may bind
    uv_nm : detection wavelength; systems absorbing there are excluded [nm]
    exclude : flags whose systems are excluded (catalog flags, "phosphate", "hazardous")
    require : catalog flags a system must carry to be admitted (``volatile_ms``: LC-MS compatible)
    allow_hazardous : admit hazardous systems (cyanide, fluoride, cacodylate ...)
    no_precipitate : reject a mix supersaturated (SI > 0, at the use and preparation
        temperatures) in a solid of a listed metal at its concentration; a slow-forming
        solid (hydroxyapatite) warns only
    in_stock : reagent ids the lab has; None = any catalog reagent
    plates : number of plates or runs the cost is quoted for, beside cost per litre
        (1 when ``wells`` are given without it)
    wells, well_volume_l : wells per plate and buffer volume per well [L]; with them the
        volume to make is plates × wells × well_volume_l (:func:`plates_volume_l`)
    temperature_min_c, temperature_max_c : a window over which the pH must stay within
        ± tolerance_ph of the target (e.g. bench 20 °C to incubator 37 °C); None: only at
        the use temperature [°C]
    osmolarity_min_osmol_l, osmolarity_max_osmol_l : ideal osmolarity bounds [osmol/L]
    fixed_amounts : reagent id -> mol/L that the mix must contain (e.g. 150 mM NaCl)
    buffer_conc_min_mol_l, buffer_conc_max_mol_l : a range of the total buffer concentration
        instead of one value: the ranking takes the lowest in it that meets the capacity and
        loads [mol/L]
    profile : weighting of the ranking's criteria (:data:`selector.profiles.PROFILES`;
        None: ``assay``)
    weights : criterion -> weight, on top of the profile's
    notes : free text kept with the spec (not compared)
    """

    ph: float
    temperature_c: float = 25.0
    prep_temperature_c: float = 25.0
    volume_l: float = 1.0
    buffer_conc_mol_l: float | None = None
    capacity_mol_l_per_ph: float | None = None
    loads: tuple[Load, ...] = ()
    tolerance_ph: float = 0.05
    ionic_strength_mol_l: float | None = None
    ionic_strength_min_mol_l: float | None = None
    ionic_strength_max_mol_l: float | None = None
    salt: str = "NaCl"
    counter_ion: str = "any"
    metals: tuple[MetalLimit, ...] = ()
    uv_nm: float | None = None
    exclude: tuple[str, ...] = ()
    require: tuple[str, ...] = ()
    allow_hazardous: bool = False
    no_precipitate: bool = False
    in_stock: tuple[str, ...] | None = None
    plates: int | None = None
    wells: int | None = None
    well_volume_l: float | None = None
    temperature_min_c: float | None = None
    temperature_max_c: float | None = None
    osmolarity_min_osmol_l: float | None = None
    osmolarity_max_osmol_l: float | None = None
    fixed_amounts: tuple[tuple[str, float], ...] = ()
    buffer_conc_min_mol_l: float | None = None
    buffer_conc_max_mol_l: float | None = None
    profile: str | None = None
    weights: tuple[tuple[str, float], ...] = ()
    notes: str = field(default="", compare=False)

    def __post_init__(self) -> None:
        problems = _Problems()
        values = _read_fields(problems, {f.name: getattr(self, f.name) for f in dataclasses.fields(self)})
        if problems.messages:
            raise SpecError(problems.messages)
        for name, value in values.items():   # the typed form: numbers as float, lists as tuples
            object.__setattr__(self, name, value)

    def as_dict(self) -> dict[str, Any]:
        """Plain types only (lists, dicts, numbers, strings); None fields left out."""
        out: dict[str, Any] = {}
        for f in dataclasses.fields(self):
            value = getattr(self, f.name)
            if value is None or value == () or (f.name in ("notes", "no_precipitate") and not value):
                continue
            if f.name == "loads":
                value = [{"kind": x.kind, "conc_mol_l": x.conc_mol_l} for x in value]
            elif f.name == "metals":
                value = [{"metal": m.metal, "max_bound_fraction": m.max_bound_fraction,
                          "conc_mol_l": m.conc_mol_l} for m in value]
            elif f.name in ("fixed_amounts", "weights"):
                value = dict(value)
            elif isinstance(value, tuple):
                value = list(value)
            out[f.name] = value
        return out


def _resolve_names(problems: _Problems, values: dict[str, Any], catalog: Catalog | None) -> None:
    """Reagent names of ``in_stock`` and ``fixed_amounts`` -> catalog ids, in place."""
    if values.get("in_stock") is not None:
        resolved = []
        for name in values["in_stock"]:
            try:
                resolved.append(resolve_reagent(name, catalog))
            except InputError as error:
                problems.add("in_stock", str(error))
        values["in_stock"] = tuple(dict.fromkeys(resolved))
    if values.get("fixed_amounts"):
        fixed = []
        for name, conc in values["fixed_amounts"]:
            try:
                fixed.append((resolve_reagent(name, catalog), conc))
            except InputError as error:
                problems.add("fixed_amounts", str(error))
        values["fixed_amounts"] = tuple(fixed)


def make_spec(fields: Mapping[str, Any] | None = None, /, *, written: Mapping[str, Written] | None = None,
              catalog: Catalog | None = None, **keyword_fields: Any) -> BufferSpec:
    """A validated BufferSpec from plain values (numbers or their text, lists, tables, names).

    Parameters
    ----------
    fields : mapping, optional
        Field name -> value as read from a file, a form or the command line; keyword
        arguments add to it (``make_spec(ph=7.4, temperature_c=37)``).
    written : mapping, optional
        Field path (``"ph"``, ``"loads[0].conc_mol_l"``, ``"metals[1].metal"``) -> how the
        user wrote it (:class:`Written`): the name messages use and the unit of the number
        given.  Fields not in it are named by their key, as in a spec file.
    catalog : Catalog, optional
        The catalog the reagent names of ``in_stock`` and ``fixed_amounts`` resolve
        against (default: the shipped catalog, through :mod:`selector.names`).

    Raises
    ------
    SpecError
        with one message per bad field, naming the field as the user wrote it and what is
        accepted.

    Examples
    --------
    >>> make_spec(ph=7.4, capacity_mol_l_per_ph="0.01").capacity_mol_l_per_ph
    0.01
    >>> make_spec({"ph": "7.4", "capacity_mol_l_per_ph": "6000"},
    ...           written={"capacity_mol_l_per_ph": Written("--capacity", 1000.0, "mM per pH")})
    Traceback (most recent call last):
    ...
    selector.spec.SpecError: invalid spec: --capacity: expected <= 5000 mM per pH, got 6000 mM per pH
    """
    given = {**(fields or {}), **keyword_fields}
    problems = _Problems(written)
    values = _read_fields(problems, given)
    if "salt" not in given:
        values["salt"] = default_salt(values.get("counter_ion"))
    if plates_volume_l(values) is not None and not problems.messages:
        values["plates"] = values.get("plates") or 1
        values.setdefault("volume_l", plates_volume_l(values))
    _resolve_names(problems, values, catalog)
    if problems.messages:
        raise SpecError(problems.messages)
    return BufferSpec(**values)


def _number_literal(text: str, kind: type) -> Any:
    """A JSON number literal, refused when longer than :data:`NUMBER_MAX_CHARS`."""
    if len(text) > NUMBER_MAX_CHARS:
        raise SpecError([f"file: a number of {len(text)} characters; numbers have at most {NUMBER_MAX_CHARS}"])
    return kind(text)


def _shape_problem(data: Any, depth: int = 0) -> str | None:
    """What makes parsed spec data unusable: nesting deeper than :data:`SPEC_MAX_DEPTH` or a
    whole number beyond ±10^:data:`NUMBER_MAX_CHARS`; None if nothing."""
    stack = [(data, depth)]
    while stack:
        value, level = stack.pop()
        if level > SPEC_MAX_DEPTH:
            return f"tables and lists nested deeper than {SPEC_MAX_DEPTH} levels; a spec needs 3"
        if isinstance(value, int) and not isinstance(value, bool) and abs(value) >= 10 ** NUMBER_MAX_CHARS:
            return f"a whole number of more than {NUMBER_MAX_CHARS} digits"
        if isinstance(value, Mapping):
            stack.extend((v, level + 1) for v in value.values())
        elif isinstance(value, list):
            stack.extend((v, level + 1) for v in value)
    return None


def parse_spec_fields(text: str, fmt: str = "toml") -> dict[str, Any]:
    """The fields of a spec in TOML or JSON text (``fmt`` "toml" or "json"), not yet checked.

    The text is refused (:class:`SpecError`, one line) when it is longer than
    :data:`SPEC_MAX_CHARS`, nests deeper than :data:`SPEC_MAX_DEPTH` or holds a number
    literal longer than :data:`NUMBER_MAX_CHARS`.
    """
    name = fmt.upper()
    if len(text) > SPEC_MAX_CHARS:
        raise SpecError([f"file: {len(text)} characters; a {name} spec has at most {SPEC_MAX_CHARS}"])
    try:
        if fmt == "toml":
            data = tomllib.loads(text)
        else:
            data = json.loads(text, parse_int=partial(_number_literal, kind=int),
                              parse_float=partial(_number_literal, kind=float))
    except SpecError:
        raise
    except (tomllib.TOMLDecodeError, json.JSONDecodeError) as error:
        raise SpecError([f"file: cannot read it as {name}: {error}"]) from None
    except RecursionError:
        raise SpecError([f"file: tables and lists nested too deeply to read as {name}; a spec needs 3 levels"]) \
            from None
    except ValueError as error:   # an integer literal beyond Python's conversion limit (TOML)
        raise SpecError([f"file: cannot read it as {name}: {str(error).split(':')[0]}"]) from None
    if not isinstance(data, dict):
        raise SpecError([f"file: expected a table of spec fields, got {type(data).__name__}"])
    problem = _shape_problem(data)
    if problem:
        raise SpecError([f"file: {problem}"])
    return data


def parse_spec(text: str, fmt: str = "toml", catalog: Catalog | None = None) -> BufferSpec:
    """A spec from TOML or JSON text (``fmt`` "toml" or "json"); messages name the file keys."""
    return make_spec(parse_spec_fields(text, fmt), catalog=catalog)


def read_spec_fields(path: str | Path) -> dict[str, Any]:
    """The fields of a .toml or .json spec file, not yet checked (see :func:`make_spec`)."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"spec file {echo(str(path))} not found")
    if path.stat().st_size > 4 * SPEC_MAX_CHARS:
        raise SpecError([f"file: {path.name} is {path.stat().st_size} bytes; a spec has at most {SPEC_MAX_CHARS} "
                         "characters"])
    fmt = "json" if path.suffix.lower() == ".json" else "toml"
    return parse_spec_bytes(path.read_bytes(), path.name, fmt)


def parse_spec_bytes(data: bytes, label: str, fmt: str = "toml") -> dict[str, Any]:
    """The fields of a spec from the bytes of a file (read from disk or uploaded), not yet
    checked: UTF-8 (a byte-order mark allowed), within the limits of :func:`parse_spec_fields`."""
    if len(data) > 4 * SPEC_MAX_CHARS:
        raise SpecError([f"file: {echo(label)} is {len(data)} bytes; a spec has at most {SPEC_MAX_CHARS} characters"])
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise SpecError([f"file: {echo(label)} is not UTF-8 text; save it as UTF-8 TOML or JSON"]) from None
    return parse_spec_fields(text, fmt)


def read_spec(path: str | Path, catalog: Catalog | None = None) -> BufferSpec:
    """A spec from a .toml or .json file; messages name the file keys."""
    return make_spec(read_spec_fields(path), catalog=catalog)


def spec_to_json(spec: BufferSpec) -> str:
    """The spec as JSON text that :func:`parse_spec` reads back to an equal spec."""
    return json.dumps(spec.as_dict(), indent=2)


def _toml_key(key: Any) -> str:
    """A TOML key: bare when it may be (letters, digits, ``_``, ``-``), quoted otherwise."""
    text = str(key)
    return text if text and all(c.isascii() and (c.isalnum() or c in "_-") for c in text) else json.dumps(text)


def _toml_value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, list):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{_toml_key(k)} = {_toml_value(v)}" for k, v in value.items()) + " }"
    raise TypeError(f"cannot write {value!r} as TOML")


def spec_to_toml(spec: BufferSpec) -> str:
    """The spec as TOML text that :func:`parse_spec` reads back to an equal spec."""
    return "".join(f"{key} = {_toml_value(value)}\n" for key, value in spec.as_dict().items())


def write_spec(spec: BufferSpec, path: str | Path) -> None:
    """Write the spec to ``path``: JSON for a .json name, TOML otherwise."""
    path = Path(path)
    text = spec_to_json(spec) if path.suffix.lower() == ".json" else spec_to_toml(spec)
    path.write_text(text, encoding="utf-8")
