"""Spec options shared by ``poise rank``, ``poise recipe`` and ``poise optimise``.

:func:`add_spec_arguments` adds the options; :func:`spec_from_args` builds a validated
:class:`~selector.spec.BufferSpec` from them (a ``--spec FILE`` first, options on top).
"""

from __future__ import annotations

import argparse
from typing import Any, Callable

from selector.errors import InputError
from selector.spec import BufferSpec, SpecError, Written, make_spec, read_spec_fields
from selector.units import parse_amount, parse_capacity, parse_ionic_strength, parse_volume


def add_spec_arguments(parser: argparse.ArgumentParser) -> None:
    """The spec's fields as command-line options."""
    group = parser.add_argument_group("spec")
    group.add_argument("--spec", metavar="FILE", help="spec file (.toml or .json); options override it")
    group.add_argument("--ph", help="target pH at the use temperature")
    group.add_argument("--temperature", help="use temperature, °C (default 25)")
    group.add_argument("--prep-temperature", help="temperature at which the pH meter is read, °C (default 25)")
    group.add_argument("--volume", help="volume to make, e.g. 1L, 500mL (default 1L)")
    group.add_argument("--conc", help="total buffer concentration, e.g. 50mM")
    group.add_argument("--capacity", help="minimum buffer capacity β: mM per pH as a number (10) or with a unit (10mM/pH)")
    group.add_argument("--load", action="append", default=[], metavar="ACID_OR_BASE:mM",
                       help="acid or base load the pH must hold under, e.g. acid:5 (repeatable)")
    group.add_argument("--tolerance", help="allowed pH excursion ± under the loads (default 0.05)")
    group.add_argument("--ionic-strength", help="ionic strength target, mol/L (e.g. 0.15) or with a unit (150mM)")
    group.add_argument("--ionic-strength-max", help="ionic strength upper bound, mol/L")
    group.add_argument("--salt", help="salt used to reach the ionic strength: NaCl (default) or KCl")
    group.add_argument("--counter-ion", help="Na, K, none or any (default any)")
    group.add_argument("--metal", action="append", default=[], metavar="ION:MAX_BOUND_FRACTION",
                       help="metal in the assay and the largest fraction the buffer may bind, e.g. Ca:0.05")
    group.add_argument("--uv", metavar="NM", help="UV detection wavelength; systems absorbing there are excluded")
    group.add_argument("--exclude", action="append", default=[], metavar="FLAG",
                       help="exclude systems with this flag (primary_amine, cis_diol_binding, phosphate, ...)")
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
)

#: Options with a unit in their text, read by :mod:`selector.units`: (attribute, field,
#: option, parser, unit of the parsed value).
QUANTITY_OPTIONS: tuple[tuple[str, str, str, Callable[..., float], str], ...] = (
    ("volume", "volume_l", "--volume", parse_volume, "L"),
    ("conc", "buffer_conc_mol_l", "--conc", parse_amount, "mol/L"),
    ("capacity", "capacity_mol_l_per_ph", "--capacity", parse_capacity, "mol/L per pH"),
    ("ionic_strength", "ionic_strength_mol_l", "--ionic-strength", parse_ionic_strength, "mol/L"),
    ("ionic_strength_max", "ionic_strength_max_mol_l", "--ionic-strength-max", parse_ionic_strength, "mol/L"),
)


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
    """``--metal Ca:0.05`` options as spec metal limits."""
    metals: list[dict[str, str]] = []
    for item in items:
        metal, _, fraction = item.partition(":")
        if not fraction.strip():
            problems.append(f"--metal: expected ION:MAX_BOUND_FRACTION, e.g. Ca:0.05, got {item!r}")
            continue
        path = f"metals[{len(metals)}]"
        for key in ("metal", "max_bound_fraction"):
            written[f"{path}.{key}"] = Written(f"--metal {item}")
        metals.append({"metal": metal.strip().capitalize(), "max_bound_fraction": fraction})
    return metals


def _merged_exclusions(from_file: Any, options: list[str]) -> Any:
    """The file's exclusions (a list or one name) with the options' added; anything else is
    left for the spec to report."""
    if isinstance(from_file, str):
        from_file = [from_file]
    if from_file is not None and not isinstance(from_file, list):
        return from_file
    return list(dict.fromkeys([*(from_file or []), *options]))


def _single_options(args: argparse.Namespace, fields: dict[str, Any], written: dict[str, Written],
                    problems: list[str]) -> None:
    """The options that set one field each, into ``fields`` (texts with a unit read here)."""
    for attribute, name, way in PLAIN_OPTIONS:
        if getattr(args, attribute) is not None:
            fields[name], written[name] = getattr(args, attribute), way
    for attribute, name, option, parse, unit in QUANTITY_OPTIONS:
        text = getattr(args, attribute)
        if text is not None:
            written[name] = Written(option, unit=unit)
            try:
                fields[name] = parse(text, what=option)
            except InputError as error:
                problems.append(str(error))


def spec_from_args(args: argparse.Namespace) -> BufferSpec:
    """A validated spec from the parsed options, on top of ``--spec FILE`` if given.

    Every bad option and file key is reported at once in one :class:`SpecError`; messages
    name the option (``--ionic-strength``) or the file key (``ionic_strength_mol_l``).
    """
    fields = read_spec_fields(args.spec) if args.spec else {}
    written: dict[str, Written] = {}
    problems: list[str] = []
    _single_options(args, fields, written, problems)
    if args.load:
        fields["loads"] = _loads(args.load, written, problems)
    if args.metal:
        fields["metals"] = _metals(args.metal, written, problems)
    if args.exclude:
        fields["exclude"] = _merged_exclusions(fields.get("exclude"), args.exclude)
        written["exclude"] = Written("--exclude")
    if args.allow_hazardous:
        fields["allow_hazardous"] = True
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
