"""The buffer spec: what the user needs, as one typed, validated, serialisable record.

The same :class:`BufferSpec` is used by the CLI, the app, ranking, recipes and the
optimiser.  :func:`make_spec` checks every field and raises one :class:`SpecError` with a
message per bad field; :func:`read_spec` / :func:`parse_spec` read TOML or JSON files,
:func:`spec_to_toml` / :func:`spec_to_json` write them.
"""

from __future__ import annotations

import dataclasses
import json
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping

from catalog import FLAG_VOCABULARY, load_catalog
from selector.errors import InputError
from selector.units import TEMPERATURE_MAX_C, TEMPERATURE_MIN_C

#: Metals a spec may name, with the catalog's spelling.
METALS = ("Ca", "Mg", "Mn", "Cu", "Zn", "Co", "Ni")
COUNTER_IONS = ("Na", "K", "none", "any")
SALTS = ("NaCl", "KCl")
LOAD_KINDS = ("acid", "base")
#: Exclusion flags a spec may name: the catalog's reactive-group flags plus these.
EXTRA_EXCLUSIONS = ("phosphate", "hazardous")
#: Default assay concentration of a trace metal whose bound fraction is limited [mol/L].
TRACE_METAL_CONC_MOL_L = 1e-6


class SpecError(InputError):
    """A spec with bad fields; ``problems`` has one message per field."""

    def __init__(self, problems: list[str]):
        self.problems = list(problems)
        super().__init__("invalid spec: " + "; ".join(problems))


@dataclass(frozen=True)
class MetalLimit:
    """A metal present in the assay and the largest fraction of it the buffer may bind."""

    metal: str
    max_bound_fraction: float
    conc_mol_l: float = TRACE_METAL_CONC_MOL_L


@dataclass(frozen=True)
class Load:
    """Strong acid or base the buffer must absorb [mol/L of final solution]."""

    kind: str
    conc_mol_l: float


@dataclass(frozen=True)
class BufferSpec:
    """What the buffer must do.  Units are in the names; None means "no requirement".

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
    allow_hazardous : admit hazardous systems (cyanide, fluoride, cacodylate ...)
    in_stock : reagent ids the lab has; None = any catalog reagent
    plates : number of plates or runs the cost is quoted for, beside cost per litre
    temperature_min_c, temperature_max_c : a window over which the pH must stay within
        ± tolerance_ph of the target (e.g. bench 20 °C to incubator 37 °C); None: only at
        the use temperature
    osmolarity_min_osmol_l, osmolarity_max_osmol_l : ideal osmolarity bounds [osmol/L]
    fixed_amounts : reagent id -> mol/L that the mix must contain (e.g. 150 mM NaCl)
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
    allow_hazardous: bool = False
    in_stock: tuple[str, ...] | None = None
    plates: int | None = None
    temperature_min_c: float | None = None
    temperature_max_c: float | None = None
    osmolarity_min_osmol_l: float | None = None
    osmolarity_max_osmol_l: float | None = None
    fixed_amounts: tuple[tuple[str, float], ...] = ()
    notes: str = field(default="", compare=False)

    def as_dict(self) -> dict[str, Any]:
        """Plain types only (lists, dicts, numbers, strings); None fields left out."""
        out: dict[str, Any] = {}
        for f in dataclasses.fields(self):
            value = getattr(self, f.name)
            if value is None or value == () or (f.name == "notes" and not value):
                continue
            if f.name == "loads":
                value = [{"kind": x.kind, "conc_mol_l": x.conc_mol_l} for x in value]
            elif f.name == "metals":
                value = [{"metal": m.metal, "max_bound_fraction": m.max_bound_fraction,
                          "conc_mol_l": m.conc_mol_l} for m in value]
            elif f.name == "fixed_amounts":
                value = dict(value)
            elif isinstance(value, tuple):
                value = list(value)
            out[f.name] = value
        return out


def _number(problems, name, value, low=None, high=None, low_open=False, required=False):
    if value is None:
        if required:
            problems.append(f"{name}: required")
        return None
    if isinstance(value, bool):
        problems.append(f"{name}: expected a number, got {value!r}")
        return None
    if not isinstance(value, (int, float)):
        try:
            value = float(value)
        except (TypeError, ValueError):
            problems.append(f"{name}: expected a number, got {value!r}")
            return None
    value = float(value)
    if not math.isfinite(value):
        problems.append(f"{name}: expected a finite number, got {value!r}")
        return None
    if low is not None and (value <= low if low_open else value < low):
        problems.append(f"{name}: expected {'>' if low_open else '>='} {low:g}, got {value:g}")
        return None
    if high is not None and value > high:
        problems.append(f"{name}: expected <= {high:g}, got {value:g}")
        return None
    return value


def _items(problems, name, value, kind) -> list:
    """A list field's items; a lone string counts as a list of one (``exclude = "x"``)."""
    if value is None:
        return []
    if isinstance(value, str) and kind is str:
        return [value]
    if not isinstance(value, (list, tuple)):
        problems.append(f"{name}: expected a list, got {value!r}")
        return []
    good = []
    for i, item in enumerate(value):
        if kind is dict and not isinstance(item, (Mapping, MetalLimit, Load)):
            problems.append(f"{name}[{i}]: expected a table of fields, got {item!r}")
        elif kind is str and not isinstance(item, str):
            problems.append(f"{name}[{i}]: expected a name, got {item!r}")
        else:
            good.append(item)
    return good


def make_spec(**fields) -> BufferSpec:
    """A validated BufferSpec from keyword fields (plain types accepted, e.g. from TOML).

    Raises
    ------
    SpecError
        with one message per bad field, naming the field and what is accepted.
    """
    problems: list[str] = []
    known = {f.name for f in dataclasses.fields(BufferSpec)}
    for name in fields:
        if name not in known:
            problems.append(f"{name}: unknown field (fields: {', '.join(sorted(known))})")
    ph = _number(problems, "ph", fields.get("ph"), 0.0, 14.0, required=True)
    temperature = _number(problems, "temperature_c", fields.get("temperature_c", 25.0),
                          TEMPERATURE_MIN_C, TEMPERATURE_MAX_C)
    prep = _number(problems, "prep_temperature_c", fields.get("prep_temperature_c", 25.0),
                   TEMPERATURE_MIN_C, TEMPERATURE_MAX_C)
    volume = _number(problems, "volume_l", fields.get("volume_l", 1.0), 1e-6, 1e4)
    conc = _number(problems, "buffer_conc_mol_l", fields.get("buffer_conc_mol_l"), 0.0, 5.0, low_open=True)
    capacity = _number(problems, "capacity_mol_l_per_ph", fields.get("capacity_mol_l_per_ph"), 0.0, 5.0,
                       low_open=True)
    tolerance = _number(problems, "tolerance_ph", fields.get("tolerance_ph", 0.05), 0.0, 2.0, low_open=True)
    ionic = _number(problems, "ionic_strength_mol_l", fields.get("ionic_strength_mol_l"), 0.0, 5.0)
    ionic_min = _number(problems, "ionic_strength_min_mol_l", fields.get("ionic_strength_min_mol_l"), 0.0, 5.0)
    ionic_max = _number(problems, "ionic_strength_max_mol_l", fields.get("ionic_strength_max_mol_l"), 0.0, 5.0,
                        low_open=True)
    if ionic_min is not None and ionic_max is not None and ionic_min > ionic_max:
        problems.append(f"ionic_strength_min_mol_l: {ionic_min:g} is above ionic_strength_max_mol_l {ionic_max:g}")
    if ionic is not None and (ionic_min is not None or ionic_max is not None):
        problems.append("ionic_strength_mol_l: give a target or bounds (ionic_strength_min/max_mol_l), not both")
    uv = _number(problems, "uv_nm", fields.get("uv_nm"), 150.0, 800.0)
    # The salt follows a potassium counter-ion unless the user names one.
    salt = fields.get("salt", "KCl" if fields.get("counter_ion") == "K" else "NaCl")
    if salt not in SALTS:
        problems.append(f"salt: expected one of {', '.join(SALTS)}, got {salt!r}")
    counter_ion = fields.get("counter_ion", "any")
    if counter_ion not in COUNTER_IONS:
        problems.append(f"counter_ion: expected one of {', '.join(COUNTER_IONS)}, got {counter_ion!r}")

    loads = []
    for i, item in enumerate(_items(problems, "loads", fields.get("loads"), dict)):
        item = item if isinstance(item, Mapping) else dataclasses.asdict(item)
        kind = item.get("kind")
        if kind not in LOAD_KINDS:
            problems.append(f"loads[{i}].kind: expected acid or base, got {kind!r}")
        amount = _number(problems, f"loads[{i}].conc_mol_l", item.get("conc_mol_l"), 0.0, 2.0, low_open=True,
                         required=True)
        if kind in LOAD_KINDS and amount is not None:
            loads.append(Load(kind, amount))
    metals = []
    for i, item in enumerate(_items(problems, "metals", fields.get("metals"), dict)):
        item = item if isinstance(item, Mapping) else dataclasses.asdict(item)
        metal = item.get("metal")
        if metal not in METALS:
            problems.append(f"metals[{i}].metal: expected one of {', '.join(METALS)}, got {metal!r}")
        fraction = _number(problems, f"metals[{i}].max_bound_fraction", item.get("max_bound_fraction"),
                           0.0, 1.0, low_open=True, required=True)
        if fraction is not None and fraction >= 1.0:
            problems.append(f"metals[{i}].max_bound_fraction: expected a fraction below 1, got {fraction:g}")
            fraction = None
        metal_conc = _number(problems, f"metals[{i}].conc_mol_l", item.get("conc_mol_l", TRACE_METAL_CONC_MOL_L),
                             0.0, 1.0, low_open=True)
        if metal in METALS and fraction is not None and metal_conc is not None:
            metals.append(MetalLimit(metal, fraction, metal_conc))
    allowed_flags = FLAG_VOCABULARY + EXTRA_EXCLUSIONS
    exclude = tuple(_items(problems, "exclude", fields.get("exclude"), str))
    for flag in exclude:
        if flag not in allowed_flags:
            problems.append(f"exclude: unknown flag {flag!r}; flags: {', '.join(allowed_flags)}")
    in_stock = fields.get("in_stock")
    if in_stock is not None:
        in_stock = _items(problems, "in_stock", in_stock, str)
        catalog = load_catalog()
        from selector.chemistry.equilibrium import (
            resolve_reagent,  # one name resolver for the whole tool
        )

        resolved = []
        for name in in_stock:
            try:
                resolved.append(resolve_reagent(name, catalog))
            except InputError as error:
                problems.append(f"in_stock: {error}")
        in_stock = tuple(dict.fromkeys(resolved))
    plates = fields.get("plates")
    if plates is not None and (isinstance(plates, bool) or not isinstance(plates, int) or plates < 1):
        problems.append(f"plates: expected a whole number >= 1, got {plates!r}")
    t_min = _number(problems, "temperature_min_c", fields.get("temperature_min_c"),
                    TEMPERATURE_MIN_C, TEMPERATURE_MAX_C)
    t_max = _number(problems, "temperature_max_c", fields.get("temperature_max_c"),
                    TEMPERATURE_MIN_C, TEMPERATURE_MAX_C)
    if (t_min is None) != (t_max is None):
        problems.append("temperature_min_c/temperature_max_c: give both ends of the window or neither")
    elif t_min is not None and t_min > t_max:
        problems.append(f"temperature_min_c: {t_min:g} is above temperature_max_c {t_max:g}")
    osm_min = _number(problems, "osmolarity_min_osmol_l", fields.get("osmolarity_min_osmol_l"), 0.0, 10.0)
    osm_max = _number(problems, "osmolarity_max_osmol_l", fields.get("osmolarity_max_osmol_l"), 0.0, 10.0,
                      low_open=True)
    if osm_min is not None and osm_max is not None and osm_min > osm_max:
        problems.append(f"osmolarity_min_osmol_l: {osm_min:g} is above osmolarity_max_osmol_l {osm_max:g}")
    fixed_raw = fields.get("fixed_amounts") or {}
    if not isinstance(fixed_raw, Mapping):
        try:
            fixed_raw = dict(fixed_raw)
        except (TypeError, ValueError):
            problems.append(f"fixed_amounts: expected a table of reagent = mol/L, got {fixed_raw!r}")
            fixed_raw = {}
    fixed: list[tuple[str, float]] = []
    if fixed_raw:
        from selector.chemistry.equilibrium import (
            resolve_reagent,  # one name resolver for the whole tool
        )

        for name, value in fixed_raw.items():
            amount = _number(problems, f"fixed_amounts.{name}", value, 0.0, 5.0)
            try:
                reagent_id = resolve_reagent(name, load_catalog())
            except InputError as error:
                problems.append(f"fixed_amounts: {error}")
                continue
            if amount is not None:
                fixed.append((reagent_id, amount))
    allow = fields.get("allow_hazardous", False)
    if not isinstance(allow, bool):
        problems.append(f"allow_hazardous: expected true or false, got {allow!r}")
    if problems:
        raise SpecError(problems)
    return BufferSpec(
        ph=ph, temperature_c=temperature, prep_temperature_c=prep, volume_l=volume,
        buffer_conc_mol_l=conc, capacity_mol_l_per_ph=capacity, loads=tuple(loads),
        tolerance_ph=tolerance, ionic_strength_mol_l=ionic, ionic_strength_min_mol_l=ionic_min,
        ionic_strength_max_mol_l=ionic_max, salt=salt, counter_ion=counter_ion, metals=tuple(metals),
        uv_nm=uv, exclude=exclude, allow_hazardous=allow, in_stock=in_stock, plates=plates,
        temperature_min_c=t_min, temperature_max_c=t_max, osmolarity_min_osmol_l=osm_min,
        osmolarity_max_osmol_l=osm_max, fixed_amounts=tuple(fixed),
        notes=str(fields.get("notes", "")),
    )


def parse_spec(text: str, fmt: str = "toml") -> BufferSpec:
    """A spec from TOML or JSON text (``fmt`` "toml" or "json")."""
    try:
        data = tomllib.loads(text) if fmt == "toml" else json.loads(text)
    except (tomllib.TOMLDecodeError, json.JSONDecodeError) as error:
        raise SpecError([f"file: cannot read it as {fmt.upper()}: {error}"]) from None
    if not isinstance(data, dict):
        raise SpecError([f"file: expected a table of spec fields, got {type(data).__name__}"])
    return make_spec(**data)


def read_spec(path: str | Path) -> BufferSpec:
    """A spec from a .toml or .json file."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"spec file {str(path)!r} not found")
    fmt = "json" if path.suffix.lower() == ".json" else "toml"
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise SpecError([f"file: {path.name} is not UTF-8 text; save it as UTF-8 TOML or JSON"]) from None
    return parse_spec(text, fmt)


def spec_to_json(spec: BufferSpec) -> str:
    return json.dumps(spec.as_dict(), indent=2)


def _toml_value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, list):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{k} = {_toml_value(v)}" for k, v in value.items()) + " }"
    raise TypeError(f"cannot write {value!r} as TOML")


def spec_to_toml(spec: BufferSpec) -> str:
    """The spec as TOML text that :func:`parse_spec` reads back to an equal spec."""
    return "".join(f"{key} = {_toml_value(value)}\n" for key, value in spec.as_dict().items())


def write_spec(spec: BufferSpec, path: str | Path) -> None:
    path = Path(path)
    text = spec_to_json(spec) if path.suffix.lower() == ".json" else spec_to_toml(spec)
    path.write_text(text, encoding="utf-8")
