"""Spec options shared by ``poise rank``, ``poise recipe`` and ``poise optimise``.

:func:`add_spec_arguments` adds the options; :func:`spec_from_args` builds a validated
:class:`~selector.spec.BufferSpec` from them (a ``--spec FILE`` first, options on top).
"""

from __future__ import annotations

import argparse

from selector.errors import InputError
from selector.spec import BufferSpec, SpecError, make_spec, read_spec
from selector.units import parse_amount, parse_ionic_strength, parse_volume


def add_spec_arguments(parser: argparse.ArgumentParser, ph_required: bool = False) -> None:
    """The spec's fields as command-line options."""
    group = parser.add_argument_group("spec")
    group.add_argument("--spec", metavar="FILE", help="spec file (.toml or .json); options override it")
    group.add_argument("--ph", help="target pH at the use temperature")
    group.add_argument("--temperature", help="use temperature, °C (default 25)")
    group.add_argument("--prep-temperature", help="temperature at which the pH meter is read, °C (default 25)")
    group.add_argument("--volume", help="volume to make, e.g. 1L, 500mL (default 1L)")
    group.add_argument("--conc", help="total buffer concentration, e.g. 50mM")
    group.add_argument("--capacity", help="minimum buffer capacity β, mM per pH unit")
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


def _float(problems, option, text):
    try:
        return float(text)
    except ValueError:
        problems.append(f"{option}: expected a number, got {text!r}")
        return None


def _ionic(problems, option, text):
    try:
        return parse_ionic_strength(text, what=option)
    except InputError as error:
        problems.append(f"{option}: {error}")
        return None


def spec_from_args(args: argparse.Namespace) -> BufferSpec:
    """A validated spec from the parsed options (every bad option reported at once)."""
    fields = read_spec(args.spec).as_dict() if args.spec else {}
    problems: list[str] = []
    if args.ph is not None:
        fields["ph"] = _float(problems, "--ph", args.ph)
    if args.temperature is not None:
        fields["temperature_c"] = _float(problems, "--temperature", args.temperature)
    if args.prep_temperature is not None:
        fields["prep_temperature_c"] = _float(problems, "--prep-temperature", args.prep_temperature)
    if args.volume is not None:
        try:
            fields["volume_l"] = parse_volume(args.volume, "--volume")
        except InputError as error:
            problems.append(str(error))
    if args.conc is not None:
        try:
            fields["buffer_conc_mol_l"] = parse_amount(args.conc, what="--conc")
        except InputError as error:
            problems.append(str(error))
    if args.capacity is not None:
        value = _float(problems, "--capacity", args.capacity)
        fields["capacity_mol_l_per_ph"] = None if value is None else value / 1000.0
    if args.load:
        loads = []
        for item in args.load:
            kind, _, amount = item.partition(":")
            value = _float(problems, "--load", amount) if amount else None
            if not amount:
                problems.append(f"--load: expected ACID_OR_BASE:mM, e.g. acid:5, got {item!r}")
            loads.append({"kind": kind.strip().lower(), "conc_mol_l": None if value is None else value / 1000.0})
        fields["loads"] = loads
    if args.tolerance is not None:
        fields["tolerance_ph"] = _float(problems, "--tolerance", args.tolerance)
    if args.ionic_strength is not None:
        fields["ionic_strength_mol_l"] = _ionic(problems, "--ionic-strength", args.ionic_strength)
    if args.ionic_strength_max is not None:
        fields["ionic_strength_max_mol_l"] = _ionic(problems, "--ionic-strength-max", args.ionic_strength_max)
    if args.salt is not None:
        fields["salt"] = args.salt
    if args.counter_ion is not None:
        fields["counter_ion"] = args.counter_ion
    if args.metal:
        metals = []
        for item in args.metal:
            metal, _, fraction = item.partition(":")
            if not fraction:
                problems.append(f"--metal: expected ION:MAX_BOUND_FRACTION, e.g. Ca:0.05, got {item!r}")
                continue
            metals.append({"metal": metal.strip().capitalize(),
                           "max_bound_fraction": _float(problems, "--metal", fraction)})
        fields["metals"] = metals
    if args.uv is not None:
        fields["uv_nm"] = _float(problems, "--uv", args.uv)
    if args.exclude:
        fields["exclude"] = list(dict.fromkeys([*fields.get("exclude", []), *args.exclude]))
    if args.allow_hazardous:
        fields["allow_hazardous"] = True
    if args.in_stock is not None:
        fields["in_stock"] = list(args.in_stock)
    if args.plates is not None:
        try:
            fields["plates"] = int(args.plates)
        except ValueError:
            problems.append(f"--plates: expected a whole number, got {args.plates!r}")
    if "ph" not in fields and not problems:
        problems.append("--ph: required (the target pH at the use temperature)")
    if problems:
        raise SpecError(problems)
    return make_spec(**fields)
