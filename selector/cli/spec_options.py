"""Spec options shared by ``poise rank``, ``poise recipe`` and ``poise optimise``.

:func:`add_spec_arguments` adds the options; :func:`spec_from_args` builds a validated
:class:`~selector.spec.BufferSpec` from them (a ``--spec FILE`` first, options on top).
"""

from __future__ import annotations

import argparse
from typing import Any, Callable

from selector.errors import InputError
from selector.profiles import CRITERIA, PROFILES
from selector.spec import (
    EXCLUSION_FLAGS,
    BufferSpec,
    SpecError,
    Written,
    make_spec,
    parse_metal_limit,
    read_spec_fields,
)
from selector.units import parse_amount, parse_capacity, parse_ionic_strength, parse_range, parse_volume


def add_spec_arguments(parser: argparse.ArgumentParser) -> None:
    """The spec's fields as command-line options."""
    group = parser.add_argument_group("spec")
    group.add_argument("--spec", metavar="FILE", help="spec file (.toml or .json); options override it")
    group.add_argument("--ph", help="target pH at the use temperature")
    group.add_argument("--temperature", help="use temperature, °C (default 25)")
    group.add_argument("--prep-temperature", help="temperature at which the pH meter is read, °C (default 25)")
    group.add_argument("--volume", help="volume to make, e.g. 1L, 500mL (default 1L)")
    group.add_argument("--conc", help="total buffer concentration, e.g. 50mM (poise rank and compare also take "
                                      "a range, e.g. 20mM:100mM: the lowest meeting capacity and loads)")
    group.add_argument("--capacity", help="minimum buffer capacity β: mM per pH as a number (10) or with a unit (10mM/pH)")
    group.add_argument("--load", action="append", default=[], metavar="ACID_OR_BASE:mM",
                       help="acid or base load the pH must hold under, e.g. acid:5 (repeatable)")
    group.add_argument("--tolerance", help="allowed pH excursion ± under the loads (default 0.05)")
    group.add_argument("--ionic-strength", help="ionic strength target, mol/L (e.g. 0.15) or with a unit (150mM)")
    group.add_argument("--ionic-strength-max", help="ionic strength upper bound, mol/L")
    group.add_argument("--salt", help="salt used to reach the ionic strength: NaCl (default) or KCl")
    group.add_argument("--counter-ion", help="Na, K, none or any (default any)")
    group.add_argument("--metal", action="append", default=[], metavar="ION:MAX_BOUND_FRACTION[@CONC]",
                       help="metal in the assay, the largest fraction the buffer may bind and the metal's "
                            "concentration (default 1µM), e.g. Ca:0.05@2mM; checked exactly (repeatable)")
    group.add_argument("--no-precipitate", action="store_true", default=None,
                       help="reject a mix supersaturated in a solid of a listed metal at its concentration "
                            "(hydroxyapatite, slow forming, warns only)")
    group.add_argument("--uv", metavar="NM", help="UV detection wavelength; systems absorbing there are excluded")
    group.add_argument("--exclude", action="append", default=[], metavar="FLAG",
                       help="exclude systems with this flag (repeatable): " + ", ".join(EXCLUSION_FLAGS))
    group.add_argument("--require", action="append", default=[], metavar="FLAG",
                       help="admit only systems with this flag (repeatable), e.g. volatile_ms for LC-MS")
    group.add_argument("--allow-hazardous", action="store_true", default=None,
                       help="admit hazardous systems (cyanide, fluoride, cacodylate, azide, chlorite)")
    group.add_argument("--in-stock", action="append", default=None, metavar="REAGENT",
                       help="use only these reagents (repeatable)")
    group.add_argument("--plates", help="number of plates or runs to quote the cost for")


#: Options whose text is one spec field: (attribute, field, how the user wrote it).  The spec
#: reads the text as a number or a name and names the option in its messages.
PLAIN_OPTIONS: tuple[tuple[str, str, Written], ...] = (
    ("ph", "ph", Written("--ph")),
    ("temperature", "temperature_c", Written("--temperature", unit="°C")),
    ("prep_temperature", "prep_temperature_c", Written("--prep-temperature", unit="°C")),
    ("tolerance", "tolerance_ph", Written("--tolerance")),
    ("salt", "salt", Written("--salt")),
    ("counter_ion", "counter_ion", Written("--counter-ion")),
    ("uv", "uv_nm", Written("--uv", unit="nm")),
    ("plates", "plates", Written("--plates")),
    ("plate_wells", "wells", Written("--wells")),        # --wells and --well-volume: selector.cli.price_option
)

#: Fields read and reported in a unit other than the field's own: field -> factor to that unit (the
#: parsed value is handed to the spec in that unit, with a ``Written`` that says so).
DISPLAY_SCALE = {"capacity_mol_l_per_ph": 1000.0}

#: Options with a unit in their text, read by :mod:`selector.units`: (attribute, field,
#: option, parser, unit of the parsed value).
QUANTITY_OPTIONS: tuple[tuple[str, str, str, Callable[..., float], str], ...] = (
    ("volume", "volume_l", "--volume", parse_volume, "L"),
    ("capacity", "capacity_mol_l_per_ph", "--capacity", parse_capacity, "mM per pH"),
    ("ionic_strength", "ionic_strength_mol_l", "--ionic-strength", parse_ionic_strength, "mol/L"),
    ("ionic_strength_max", "ionic_strength_max_mol_l", "--ionic-strength-max", parse_ionic_strength, "mol/L"),
    ("plate_well_volume", "well_volume_l", "--well-volume", parse_volume, "L"),
)


def add_ranking_arguments(parser: argparse.ArgumentParser) -> None:
    """The options of a ranking (``poise rank``, ``poise compare``): profile and weights."""
    group = parser.add_argument_group("ranking")
    group.add_argument("--profile", choices=tuple(PROFILES),
                       help="weighting of the criteria: " + ", ".join(PROFILES) + " (default assay)")
    group.add_argument("--weight", action="append", default=[], metavar="CRITERION=WEIGHT",
                       help="weight of one criterion on top of the profile's, e.g. drift=3 (repeatable); "
                            "criteria: " + ", ".join(CRITERIA))


def _conc(text: str, fields: dict[str, Any], written: dict[str, Written], problems: list[str]) -> None:
    """``--conc 50mM`` (one value) or ``--conc 20mM:100mM`` (a range) into ``fields``."""
    if ":" not in text:      # one value, read exactly as before
        try:
            conc = parse_amount(text, what="--conc")
        except InputError as error:
            problems.append(str(error))
            return
        fields.pop("buffer_conc_min_mol_l", None)
        fields.pop("buffer_conc_max_mol_l", None)
        fields["buffer_conc_mol_l"], written["buffer_conc_mol_l"] = conc, Written("--conc", unit="mol/L")
        return
    try:
        low, high, _ = parse_range(text, lambda part: parse_amount(part, what="--conc"), "--conc", step="forbidden")
    except InputError as error:
        problems.append(str(error))
        return
    fields.pop("buffer_conc_mol_l", None)
    fields["buffer_conc_min_mol_l"], fields["buffer_conc_max_mol_l"] = low, high
    written["buffer_conc_min_mol_l"] = written["buffer_conc_max_mol_l"] = Written("--conc", unit="mol/L")


def _weights(items: list[str], fields: dict[str, Any], written: dict[str, Written], problems: list[str]) -> None:
    """``--weight drift=3`` options on top of the file's weights."""
    weights = dict(fields.get("weights") or {}) if isinstance(fields.get("weights"), dict) else {}
    for item in items:
        name, sign, weight = item.partition("=")
        if not sign or not name.strip() or not weight.strip():
            problems.append(f"--weight: expected CRITERION=WEIGHT, e.g. drift=3, got {item!r}")
            continue
        weights[name.strip()] = weight.strip()
    fields["weights"], written["weights"] = weights, Written("--weight")


def _loads(items: list[str], written: dict[str, Written], problems: list[str]) -> list[dict[str, str]]:
    """``--load acid:5`` options as spec loads (mM read by the spec, each option named in messages)."""
    loads: list[dict[str, str]] = []
    for item in items:
        kind, _, amount = item.partition(":")
        if not amount.strip():
            problems.append(f"--load: expected ACID_OR_BASE:mM, e.g. acid:5, got {item!r}")
            continue
        path = f"loads[{len(loads)}]"
        written[f"{path}.kind"] = Written(f"--load {item}")
        written[f"{path}.conc_mol_l"] = Written(f"--load {item}", 1000.0, "mM")
        loads.append({"kind": kind.strip().lower(), "conc_mol_l": amount})
    return loads


def _metals(items: list[str], written: dict[str, Written], problems: list[str]) -> list[dict[str, str]]:
    """``--metal Ca:0.05@2mM`` options as spec metal limits (:func:`selector.spec.parse_metal_limit`)."""
    metals: list[dict[str, str]] = []
    for item in items:
        try:
            limit = parse_metal_limit(item)
        except InputError as error:
            problems.append(f"--metal: {error}")
            continue
        path = f"metals[{len(metals)}]"
        for key in ("metal", "max_bound_fraction", "conc", "conc_mol_l"):
            written[f"{path}.{key}"] = Written(f"--metal {item}")
        metals.append(limit)
    return metals


def _merged_exclusions(from_file: Any, options: list[str]) -> Any:
    """The file's flag list (``exclude`` or ``require``: a list or one name) with the options'
    added; anything else is left for the spec to report."""
    if isinstance(from_file, str):
        from_file = [from_file]
    if from_file is not None and not isinstance(from_file, list):
        return from_file
    return list(dict.fromkeys([*(from_file or []), *options]))


def _single_options(args: argparse.Namespace, fields: dict[str, Any], written: dict[str, Written],
                    problems: list[str]) -> None:
    """The options that set one field each, into ``fields`` (texts with a unit read here)."""
    for attribute, name, way in PLAIN_OPTIONS:
        if getattr(args, attribute, None) is not None:
            fields[name], written[name] = getattr(args, attribute), way
    for attribute, name, option, parse, unit in QUANTITY_OPTIONS:
        text = getattr(args, attribute, None)
        if text is not None:
            written[name] = Written(option, DISPLAY_SCALE.get(name, 1.0), unit)
            try:
                fields[name] = parse(text, what=option) * DISPLAY_SCALE.get(name, 1.0)   # in the unit the spec is told
            except InputError as error:
                problems.append(str(error))


def spec_from_args(args: argparse.Namespace, ranking: bool = False) -> BufferSpec:
    """A validated spec from the parsed options, on top of ``--spec FILE`` if given.

    Every bad option and file key is reported at once in one :class:`SpecError`; messages
    name the option (``--ionic-strength``) or the file key (``ionic_strength_mol_l``).
    ``ranking``: the command ranks (``--profile``, ``--weight`` and a concentration range
    are read); other commands refuse a concentration range in one line.
    """
    fields = read_spec_fields(args.spec) if args.spec else {}
    written: dict[str, Written] = {}
    problems: list[str] = []
    _single_options(args, fields, written, problems)
    if args.conc is not None:
        _conc(args.conc, fields, written, problems)
    if ranking and getattr(args, "profile", None) is not None:
        fields["profile"], written["profile"] = args.profile, Written("--profile")
    if ranking and getattr(args, "weight", None):
        _weights(args.weight, fields, written, problems)
    if not ranking and (fields.get("buffer_conc_min_mol_l") is not None
                        or fields.get("buffer_conc_max_mol_l") is not None):
        problems.append("--conc: a concentration range (FROM:TO, or buffer_conc_min_mol_l/buffer_conc_max_mol_l "
                        "in a spec file) is accepted by poise rank and poise compare; give one value here, "
                        "e.g. 50mM")
    if args.load:
        fields["loads"] = _loads(args.load, written, problems)
    if args.metal:
        fields["metals"] = _metals(args.metal, written, problems)
    if args.exclude:
        fields["exclude"] = _merged_exclusions(fields.get("exclude"), args.exclude)
        written["exclude"] = Written("--exclude")
    if args.require:
        fields["require"] = _merged_exclusions(fields.get("require"), args.require)
        written["require"] = Written("--require")
    if args.allow_hazardous:
        fields["allow_hazardous"] = True
    if getattr(args, "no_precipitate", None):
        fields["no_precipitate"], written["no_precipitate"] = True, Written("--no-precipitate")
    if args.in_stock is not None:
        fields["in_stock"], written["in_stock"] = list(args.in_stock), Written("--in-stock")
    if "ph" not in fields:
        written["ph"] = Written("--ph")
    try:
        spec = make_spec(fields, written=written)
    except SpecError as error:
        raise SpecError(problems + error.problems) from None
    if problems:
        raise SpecError(problems)
    return spec
