"""Remedies: the smallest change of one spec option that makes an infeasible system feasible.

For a system that cannot meet the spec, each option the spec sets and that can be moved
(:data:`ADJUSTABLE`: the buffer concentration, the capacity floor, the pH tolerance, the
ionic-strength cap; each metal's bound fraction; each end of the temperature window) is
tried alone, all else equal:

0. where the infeasible solve's nearest mix reaches a value of the limit the option sets
   (:attr:`selector.errors.InfeasibleSpecError.nearest`: the concentration, the capacity, the
   ionic strength over the cap), that value rounded to 2 (else 3) significant figures on the
   feasible side, if it lies where the search below could end too (:func:`_within_reach`)
   and a re-solve verifies it; otherwise:
1. the option at its most relaxed (no concentration, the smallest capacity floor the
   bisection tries, no cap, the largest tolerance or bound fraction the spec accepts, the
   window shrunk to the use temperature) — if the system is still
   infeasible this option cannot help;
2. otherwise bisection between the spec's value (infeasible) and the relaxed one
   (feasible), on a log scale for the concentration and the ionic-strength cap, :data:`BISECTION_STEPS` steps;
3. the boundary found is rounded to a readable value (2, then 3 significant figures,
   towards the feasible side) and the rounded spec re-solved.

Every feasibility test is a full re-solve of that system with the exact check (the
``check`` callable of :func:`find_remedy`, the ranking itself), so the remedy returned is
verified.  Among the options that work the smallest relative change |v − v₀| / v₀ wins
(|v − v₀| / window span for the window's ends; common practice: the least surprise to
the user).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from typing import Any

from selector.optimise import assumed_capacity
from selector.spec import TRACE_METAL_CONC_MOL_L, BufferSpec, SpecError

__all__ = ["ADJUSTABLE", "BISECTION_STEPS", "Adjustable", "Remedy", "find_remedy"]

#: Bisection steps per option (common practice: 2⁻⁵ of the interval, then rounding).
BISECTION_STEPS = 5
#: Factors of the spec's concentration scanned outward for a feasible one (common practice:
#: a factor of 2, then of 10, each way).
SCAN_FACTORS = (0.5, 2.0, 0.1, 10.0, 0.01)
#: Largest tolerance [pH] and bound fraction a remedy proposes (the spec's own limits).
TOLERANCE_MAX_PH = 2.0
BOUND_FRACTION_MAX = 0.999
IONIC_STRENGTH_CAP_MAX_MOL_L = 5.0
#: Highest buffer concentration the spec accepts [mol/L].
CONC_MAX_MOL_L = 5.0


@dataclass(frozen=True)
class Remedy:
    """One option changed: as the user types it and in the spec's field.

    Attributes
    ----------
    option : the command-line option (``--conc``)
    value : the new value as typed (``72mM``, ``Ca:0.08``)
    text : a sentence for the user
    field : the spec field changed (``buffer_conc_mol_l``, ``metals``)
    field_value : its new value in the field's unit (the metals list for a metal)
    relative_change : |v − v₀| / v₀
    """

    option: str
    value: str
    text: str
    field: str
    field_value: Any
    relative_change: float

    def as_json(self) -> dict:
        value = [{"metal": m.metal, "max_bound_fraction": m.max_bound_fraction, "conc_mol_l": m.conc_mol_l}
                 for m in self.field_value] if self.field == "metals" else self.field_value
        return {"option": self.option, "value": self.value, "text": self.text, "field": self.field,
                "field_value": value, "relative_change": self.relative_change}

    def apply(self, spec: BufferSpec) -> BufferSpec:
        """``spec`` with this change."""
        changes: dict[str, Any] = {self.field: self.field_value}
        return replace(spec, **changes)


@dataclass(frozen=True)
class Adjustable:
    """A spec option a remedy may move.

    ``current`` reads its value from a spec (None: the spec does not set it, nothing to
    move); ``relaxed`` its most relaxed setting (None: leave the field out); ``with_value``
    the spec with a value; ``typed`` the value as the user types it; ``log`` bisects on a
    log scale (the concentration: scanned outward when leaving it out does not help);
    ``geometric`` bisects on a log scale too, without the scan (the ionic-strength cap, whose
    relaxed 5 mol/L lies orders of magnitude above a cap of a few mM).
    """

    option: str
    field: str
    current: Callable[[BufferSpec], float | None]
    relaxed: float | None
    typed: Callable[[float], str]
    log: bool = False
    key: str = ""
    upper: float = math.inf
    scale: float | None = None      # the relative change is |v − v₀| / scale (None: |v₀|)
    geometric: bool = False

    def with_value(self, spec: BufferSpec, value: float | None) -> BufferSpec:
        if self.field == "metals":
            assert value is not None, "a metal's bound fraction is always set"
            return replace(spec, metals=tuple(replace(m, max_bound_fraction=value) if m.metal == self.key else m
                                              for m in spec.metals))
        changes: dict[str, Any] = {self.field: value}
        return replace(spec, **changes)

    def field_value(self, spec: BufferSpec, value: float) -> Any:
        return self.with_value(spec, value).metals if self.field == "metals" else value


def _metal_fraction(metal: str) -> Callable[[BufferSpec], float | None]:
    def read(spec: BufferSpec) -> float | None:
        return next((m.max_bound_fraction for m in spec.metals if m.metal == metal), None)
    return read


def _metal_typed(metal: str, conc_mol_l: float = TRACE_METAL_CONC_MOL_L) -> Callable[[float], str]:
    """``Ca:0.07``, with the metal's concentration where the spec states one (``Ca:0.07@2mM``)."""
    at = "" if conc_mol_l == TRACE_METAL_CONC_MOL_L else f"@{conc_mol_l * 1000:g}mM"

    def typed(value: float) -> str:
        return f"{metal}:{value:g}{at}"
    return typed


def _celsius(value: float) -> str:
    return f"{value:g} °C"


def _window_ends(spec: BufferSpec) -> list[Adjustable]:
    """The two ends of the temperature window, each moved toward the use temperature (its most
    relaxed setting: the window shrunk to the use temperature, or to its nearer end when the
    use temperature lies outside); the relative change is counted on the window's span."""
    low, high = spec.temperature_min_c, spec.temperature_max_c
    if low is None or high is None or high <= low:
        return []
    inside = min(max(spec.temperature_c, low), high)
    return [Adjustable("temperature_min_c", "temperature_min_c", lambda s: s.temperature_min_c, inside, _celsius,
                       scale=high - low),
            Adjustable("temperature_max_c", "temperature_max_c", lambda s: s.temperature_max_c, inside, _celsius,
                       scale=high - low)]


def _adjustables(spec: BufferSpec) -> list[Adjustable]:
    """The options ``spec`` sets that a remedy may move (:data:`ADJUSTABLE`, one per metal and
    the window's ends)."""
    hold = bool(spec.loads) or spec.temperature_min_c is not None
    out = [a for a in ADJUSTABLE if a.current(spec) is not None and (a.field != "tolerance_ph" or hold)]
    out += [Adjustable(f"--metal {m.metal}", "metals", _metal_fraction(m.metal), BOUND_FRACTION_MAX,
                       _metal_typed(m.metal, m.conc_mol_l), key=m.metal) for m in spec.metals]
    return out + _window_ends(spec)


#: The options with one number each a remedy may move (metals are added per spec).
ADJUSTABLE: tuple[Adjustable, ...] = (
    Adjustable("--conc", "buffer_conc_mol_l", lambda s: s.buffer_conc_mol_l, None,
               lambda v: f"{v * 1000:g}mM", log=True, upper=CONC_MAX_MOL_L),
    Adjustable("--capacity", "capacity_mol_l_per_ph", lambda s: s.capacity_mol_l_per_ph, None,
               lambda v: f"{v * 1000:g}"),
    Adjustable("--tolerance", "tolerance_ph", lambda s: s.tolerance_ph, TOLERANCE_MAX_PH, lambda v: f"{v:g}"),
    Adjustable("--ionic-strength-max", "ionic_strength_max_mol_l", lambda s: s.ionic_strength_max_mol_l,
               IONIC_STRENGTH_CAP_MAX_MOL_L,
               lambda v: f"{v:g}", geometric=True),
)

#: check(spec, system_id) -> (feasible, the buffer concentration of its mix [mol/L] or None)
Check = Callable[[BufferSpec, str], tuple[bool, float | None]]


def _rounded(value: float, up: bool, figures: int) -> float:
    """``value`` rounded to ``figures`` significant figures, up or down (away from the
    infeasible side).

    Examples
    --------
    >>> _rounded(0.07213, True, 2), _rounded(0.07213, False, 2)
    (0.073, 0.072)
    """
    if value == 0:
        return value
    scale = 10.0 ** (math.floor(math.log10(abs(value))) - figures + 1)
    step = math.ceil if up else math.floor
    return float(f"{step(round(value / scale, 9)) * scale:.{figures}g}")


def _feasible(check: Check, a: Adjustable, spec: BufferSpec, value: float | None,
              system_id: str) -> tuple[bool, float | None]:
    """Whether ``system_id`` is feasible with option ``a`` at ``value`` (a value the spec
    refuses is not a remedy)."""
    try:
        changed = a.with_value(spec, value)
    except SpecError:
        return False, None
    return check(changed, system_id)


def _scan(a: Adjustable, spec: BufferSpec, system_id: str, check: Check,
          start: float) -> tuple[float, float] | None:
    """(the first feasible value of :data:`SCAN_FACTORS` × ``start`` within the spec's range,
    the nearest infeasible value on its side), or None."""
    bad = {True: start, False: start}       # side (above start?) -> nearest infeasible
    for factor in SCAN_FACTORS:
        value = start * factor
        if value > a.upper:
            continue
        if _feasible(check, a, spec, value, system_id)[0]:
            return value, bad[factor > 1]
        bad[factor > 1] = value
    return None


def _within_reach(a: Adjustable, start: float, value: float) -> bool:
    """Whether ``value`` lies where the search itself could end: a log-scale option (the
    concentration) within :data:`SCAN_FACTORS` of the spec's value (0.01 to 10 times); a floor
    with no relaxed value (the capacity) at or above the smallest the bisection tries,
    ``start`` / 2^:data:`BISECTION_STEPS`; any value for the others.  A nearest mix that meets a
    limit only with next to no buffer (a metal bound below its limit at 99 nM, a capacity of
    7 µM per pH against 25 mM per pH asked) is no remedy, as the search would not offer it either.

    Examples
    --------
    >>> conc, capacity = ADJUSTABLE[0], ADJUSTABLE[1]
    >>> _within_reach(conc, 0.05, 0.0055), _within_reach(conc, 0.05, 9.9e-8), _within_reach(conc, 0.05, 0.6)
    (True, False, False)
    >>> _within_reach(capacity, 0.025, 0.0027), _within_reach(capacity, 0.025, 7.4e-6)
    (True, False)
    """
    if a.log:
        return min(SCAN_FACTORS) * start <= value <= max(SCAN_FACTORS) * start
    if a.relaxed is None:
        return value >= start / 2 ** BISECTION_STEPS
    return True


def _default_floor(a: Adjustable, spec: BufferSpec) -> bool:
    """Whether leaving floor ``a`` out of ``spec`` assumes a default floor rather than none: the
    capacity of a spec with no concentration, no concentration range and no load
    (:func:`selector.optimise.assumed_capacity`; a range is solved at its low end without one)."""
    if a.relaxed is not None or a.log or spec.buffer_conc_min_mol_l is not None:
        return False
    return assumed_capacity(a.with_value(spec, None)) is not None


def _search(a: Adjustable, spec: BufferSpec, system_id: str, check: Check,
            beaten_above: float = math.inf, nearest: float | None = None) -> tuple[float, float] | None:
    """(new value, relative change) of the nearest feasible value of one option, or None.

    ``nearest`` is the value the infeasible solve's nearest mix reaches for this option's
    limit (its best capacity, the concentration it gets to, its ionic strength): where that
    limit alone holds the system back, the option set there, rounded to 2 (else 3)
    significant figures on the far side from the spec's value, is the remedy; it is tried
    first and taken once a re-solve verifies it, if it lies where the search itself could end
    (:func:`_within_reach`).  Otherwise a scan and bisection search.
    The search stops (None) as soon as the change cannot come out at or below
    ``beaten_above`` (the smallest change another option already needs): the value found
    lies beyond every infeasible value tried, rounding moves it further, so the relative
    change of the infeasible end of the bracket is a lower bound of the result.
    """
    start = a.current(spec)
    assert start is not None
    scale = a.scale if a.scale is not None else abs(start)

    def beaten(value: float) -> bool:
        return scale > 0 and abs(value - start) / scale > beaten_above

    if nearest is not None and nearest != start:
        for figures in (2, 3):
            value = _rounded(nearest, nearest > start, figures)
            if 0 < value <= a.upper and _within_reach(a, start, value) and not beaten(value) \
                    and _feasible(check, a, spec, value, system_id)[0]:
                return value, abs(value - start) / scale

    # A floor left out may still be assumed (the default capacity, _default_floor): the smallest
    # floor the bisection reaches stands for "no floor" (feasibility only grows as the floor falls).
    gate = start / 2 ** BISECTION_STEPS if _default_floor(a, spec) else a.relaxed
    ok, conc = _feasible(check, a, spec, gate, system_id)
    good: float | None = a.relaxed if a.relaxed is not None else (conc if a.log else 0.0)
    bad = start
    if a.log and not ok:    # no concentration at all changes the problem (a default capacity): scan
        scanned = _scan(a, spec, system_id, check, start)
        if scanned is None:
            return None
        good, bad = scanned
    elif not ok or good is None:
        return None
    for _ in range(BISECTION_STEPS):
        if beaten(bad):
            return None
        middle = math.sqrt(bad * good) if (a.log or a.geometric) and good > 0 and bad > 0 else 0.5 * (bad + good)
        if _feasible(check, a, spec, middle, system_id)[0]:
            good = middle
        else:
            bad = middle
    if beaten(bad):
        return None
    if good <= 0:     # "no floor at all" works: the smallest readable floor above nothing
        return None
    found = good
    for figures in (2, 3):
        nice = _rounded(good, good > start, figures)
        if (nice - start) * (good - start) > 0 and _feasible(check, a, spec, nice, system_id)[0]:
            found = nice
            break
    return found, abs(found - start) / scale


def find_remedy(system_id: str, spec: BufferSpec, check: Check, name: str | None = None,
                nearest: Mapping[str, float] | None = None) -> tuple[Remedy | None, str | None]:
    """The smallest verified change of one option that makes ``system_id`` feasible.

    Parameters
    ----------
    system_id : an infeasible system of ``spec``
    spec : the spec
    check : re-solves one system for a changed spec: (feasible, its mix's buffer
        concentration [mol/L] or None)
    name : how the remedy's sentence names the system (its short name,
        :attr:`catalog.records.System.short_name`); default ``system_id``
    nearest : {spec field: the value the infeasible solve's nearest mix reaches for the limit
        that field sets} (:attr:`selector.errors.InfeasibleSpecError.nearest`); each option's
        search starts there

    Returns
    -------
    (Remedy, None) or (None, the reason no single change works)
    """
    adjustables = _adjustables(spec)
    if not adjustables:
        return None, "the spec sets no option a single change could move (concentration, capacity, " \
                     "tolerance, ionic-strength cap, metal fraction, temperature window)"
    found: list[tuple[float, Adjustable, float]] = []
    for a in adjustables:
        # An option whose change must exceed one already found cannot win: its search stops early.
        hit = _search(a, spec, system_id, check, min((f[0] for f in found), default=math.inf),
                      (nearest or {}).get(a.field))
        if hit is not None:
            found.append((hit[1], a, hit[0]))
    if not found:
        return None, "no single change of " + ", ".join(a.option for a in adjustables) + " makes it feasible"
    change, a, value = min(found, key=lambda t: t[0])
    start = a.current(spec)
    assert start is not None
    was = a.typed(start)
    verb = "raise" if value > start else "lower"
    text = f"{verb} {a.option.split()[0]} from {was} to {a.typed(value)}: then {name or system_id} meets the spec " \
           f"(verified by re-solving)"
    return Remedy(a.option.split()[0], a.typed(value), text, a.field, a.field_value(spec, value), change), None
