"""``gases.csv``: gases that dissolve as a buffer system's neutral species (Henry's law).

Each row is gas = species(aq) as its source writes it: log10 K = log10 (m / p) at 25 °C and
I = 0 (m in mol/kg, p in atm), ΔH° where published, and the source's analytic log K(T)
(A1..A6 of log K = A1 + A2 T + A3/T + A4 log10 T + A5/T² + A6 T², T in K; the form of
PHREEQC's ``-analytical_expression``, Parkhurst & Appelo 2013).  The dissolved species is the
system's most protonated form and must be neutral: exchanging it with the gas changes the
system's total and no strong ion (CO₂ and carbonate).  One gas stands without a system: the
solvent's own vapour (formula ``H2O``, H₂O(l) = H₂O(g) written as its source writes it, log K =
log10(a_w / p)), whose pressure turns a gas's fraction in dry air into its partial pressure in
moist air.  Where an analytic expression is given it must return the row's log K at 25 °C (to
0.005), so a mistyped coefficient is caught.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping

import numpy as np

from catalog.records import Gas, Source, System
from catalog.rows import Row

TABLE = "gases.csv"
COLUMNS = ("gas_id", "name", "formula", "system_id", "log_k_25c", "dh_kj_mol", "analytic", "source",
           "source_kind", "reference", "note")

#: The formula of the one gas that stands without a system: the solvent's vapour.
WATER_VAPOUR_FORMULA = "H2O"
#: Number of coefficients of an analytic log K(T) expression.
ANALYTIC_TERMS = 6
#: Largest difference allowed between the analytic expression at 25 °C and ``log_k_25c``.
ANALYTIC_CHECK_LOG_K = 0.005


def analytic_log_k(coefficients: tuple[float, ...], temperature_k):
    """log K = A1 + A2 T + A3/T + A4 log10 T + A5/T² + A6 T² at ``temperature_k`` [K] (scalar or array).

    The form of PHREEQC's ``-analytical_expression`` (Parkhurst & Appelo 2013).
    """
    a1, a2, a3, a4, a5, a6 = coefficients
    t = np.asarray(temperature_k, dtype=float)
    return a1 + a2 * t + a3 / t + a4 * np.log10(t) + a5 / t**2 + a6 * t**2


def _analytic(row: Row, log_k_25c: float | None) -> tuple[float, ...]:
    items = row.listing("analytic")
    if not items:
        return ()
    try:
        coefficients = tuple(float(item) for item in items)
    except ValueError:
        row.problem("analytic", f"expected {ANALYTIC_TERMS} numbers separated by ';', got {row.text('analytic')!r}")
        return ()
    if len(coefficients) != ANALYTIC_TERMS or not all(math.isfinite(c) for c in coefficients):
        row.problem("analytic", f"expected {ANALYTIC_TERMS} finite numbers separated by ';', "
                    f"got {row.text('analytic')!r}")
        return ()
    at_25c = float(analytic_log_k(coefficients, 298.15))
    if log_k_25c is not None and abs(at_25c - log_k_25c) > ANALYTIC_CHECK_LOG_K:
        row.problem("analytic", f"expected the expression to give log_k_25c ({log_k_25c:g}) at 298.15 K, "
                    f"got {at_25c:.4f}")
    return coefficients


def _system_of(row: Row, system_id: str | None, formula: str, systems: Mapping[str, System]) -> System | None:
    """The system a gas dissolves into (its most protonated form neutral); None for water vapour."""
    if system_id is None:
        if formula != WATER_VAPOUR_FORMULA:
            row.problem("system_id", f"expected a system of systems.csv (only water vapour, formula "
                        f"{WATER_VAPOUR_FORMULA}, stands without one), got an empty cell")
        return None
    row.reference("system_id", system_id, systems, "a system of systems.csv")
    system = systems.get(system_id)
    if system is not None and system.charge_most_protonated != 0:
        row.problem("system_id", f"expected a system whose most protonated form is neutral, got {system_id!r} "
                    f"(charge {system.charge_most_protonated:+d})")
    return system


def gases_from_rows(rows: Iterable[Row], systems: Mapping[str, System],
                    sources: Mapping[str, Source]) -> dict[str, Gas]:
    """Gases by id: a system whose most protonated form is neutral (none for water vapour), a sourced
    log K, ΔH° and log K(T)."""
    gases: dict[str, Gas] = {}
    for row in rows:
        gas_id = row.slug("gas_id")
        row.unique("gas_id", gas_id, gases)
        formula = row.text("formula", required=True)
        system_id = row.text("system_id") or None
        system = _system_of(row, system_id, formula, systems)
        log_k = row.sourced("log_k_25c", "source", "source_kind", sources, minimum=-10.0, maximum=10.0)
        dh = row.number("dh_kj_mol", required=False, minimum=-200.0, maximum=200.0)
        analytic = _analytic(row, None if log_k is None else log_k.value)
        if gas_id and log_k is not None and (system is not None or system_id is None):
            gases[gas_id] = Gas(gas_id, row.text("name", required=True), formula, system_id, log_k, dh, analytic,
                                row.text("reference", required=True), row.text("note"))
    return gases
