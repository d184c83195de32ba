"""The expected pH drift of a recipe left open to air, and the usual precaution.

Alkaline buffers take up CO₂ from air and carbonate buffers exchange it, so a recipe above
:data:`CO2_STATEMENT_ABOVE_PH` or holding carbonate states what the solution would read after
equilibrium with air at the temperature of use (:func:`selector.chemistry.gas_exchange.open_vessel`,
CO₂ 420 ppm of dry air in air saturated with water vapour, unless the user gives another fraction or
a partial pressure) and the precaution.  Equilibrium is the end
point: a stirred open beaker approaches it over hours, a closed bottle's headspace much more slowly.
"""

from __future__ import annotations

import dataclasses
from typing import TYPE_CHECKING, Iterable, Mapping

from catalog import Catalog, load_catalog
from selector.chemistry.gas_exchange import CO2_GAS_ID, DEFAULT_CO2_DRY_AIR_FRACTION, OpenVessel, open_vessel

if TYPE_CHECKING:
    from selector.recipe.compose import Recipe

#: Recipes above this pH state their drift in open air (common practice: alkaline buffers
#: are the ones known to take up CO₂).
CO2_STATEMENT_ABOVE_PH = 8.0
#: The catalog flag of a system known to exchange CO₂ with air (flags.csv).
CO2_FLAG = "co2_uptake"
#: How the computed drift's sentence begins (a drift stated before is found by it and replaced).
DRIFT_SENTENCE_START = "open to air (CO2 "
#: The usual precaution (common practice).
CO2_PRECAUTION = ("keep it closed, prepare it fresh and make it with freshly degassed (boiled and cooled) "
                  "water (common practice)")


def co2_statement_due(composition_mol_l: Mapping[str, float], ph: float, catalog: Catalog) -> bool:
    """True for a composition above pH 8 or one that holds the CO₂ gas's system (carbonate)."""
    gas = catalog.gases.get(CO2_GAS_ID)
    if gas is None:
        return False
    holds_system = any(catalog.reagents[r].system_id == gas.system_id for r in composition_mol_l)
    return holds_system or ph > CO2_STATEMENT_ABOVE_PH


def co2_drift_for(composition_mol_l: Mapping[str, float], ph: float, temperature_c: float, catalog: Catalog,
                  pressure_atm: float | None = None, always: bool = False,
                  dry_air_fraction: float = DEFAULT_CO2_DRY_AIR_FRACTION) -> dict | None:
    """The ``co2_drift`` of a composition [mol/L] at ``temperature_c`` [°C] where due (or ``always``);
    None where not due or where the open equilibrium does not settle.  CO₂ at ``pressure_atm``
    [atm] as given, else ``dry_air_fraction`` of dry air in moist air (420 ppm)."""
    if not (always or co2_statement_due(composition_mol_l, ph, catalog)):
        return None
    figures = open_vessel(composition_mol_l, temperature_c, pressure_atm, catalog=catalog,
                          dry_air_fraction=dry_air_fraction)
    return None if figures.ph_drift is None else co2_drift_json(figures)


def co2_drift_json(figures: OpenVessel) -> dict:
    """The ``co2_drift`` object of a recipe's JSON: partial pressure used [atm] and the fraction of dry
    air it was taken from [ppm, null where the pressure was given], temperature [°C], pH closed and
    open, drift [pH], carbonate before, after and taken up [mol/L], the precaution."""
    return {"pco2_atm": figures.pressure_atm, "co2_ppm_dry_air": figures.ppm_dry_air,
            "temperature_c": figures.temperature_c,
            "ph_closed": figures.ph_closed, "ph_open": figures.ph_open, "ph_drift": figures.ph_drift,
            "carbonate_total_closed_mol_l": figures.total_closed_mol_l,
            "carbonate_total_open_mol_l": figures.total_open_mol_l,
            "carbonate_uptake_mol_l": figures.uptake_mol_l, "precaution": CO2_PRECAUTION}


def co2_level_words(pressure_atm: float, ppm_dry_air: float | None) -> str:
    """The CO₂ of the air in words: '420 ppm of dry air, 4.07e-4 atm' or, for a pressure given as
    such, '4.2e-4 atm'."""
    if ppm_dry_air is None:
        return f"{pressure_atm:.3g} atm"
    return f"{ppm_dry_air:.4g} ppm of dry air, {pressure_atm:.3g} atm"


def co2_drift_sentence(drift: dict) -> str:
    """The drift in words, e.g. 'open to air (CO2 420 ppm of dry air, 4.07e-4 atm) at 25 °C this
    solution drifts from pH 9.00 to 8.52 …'."""
    uptake = drift["carbonate_uptake_mol_l"]
    gas = f"taking up {uptake * 1000:.3g} mM CO2" if uptake >= 0 else f"losing {-uptake * 1000:.3g} mM CO2"
    level = co2_level_words(drift["pco2_atm"], drift.get("co2_ppm_dry_air"))
    return (f"{DRIFT_SENTENCE_START}{level}) at {drift['temperature_c']:g} °C this solution "
            f"drifts from pH {drift['ph_closed']:.2f} to {drift['ph_open']:.2f} ({drift['ph_drift']:+.2f}) at "
            f"equilibrium, {gas}; {drift['precaution']}")


def co2_flag_sentences(system_ids: Iterable[str], catalog: Catalog) -> list[str]:
    """The catalog's CO₂-exchange flag of each system (carbonate, alkaline amines, borate …) in words:
    what a recipe says about CO₂ where no drift is computed."""
    return [f"{catalog.systems[system_id].short_name}: {flag.detail}; keep it closed, make it fresh and check "
            "the pH before use"
            for system_id in system_ids for flag in catalog.flags_of(system_id) if flag.flag == CO2_FLAG]


def one_co2_sentence(warnings: Iterable[str], drift: dict | None, system_ids: Iterable[str],
                     catalog: Catalog) -> tuple[str, ...]:
    """``warnings`` with one CO₂ statement: the computed drift where there is one (the flags' wording and
    any drift stated before removed), else the warnings as they are (the flags' wording)."""
    warnings = tuple(warnings)
    if drift is None:
        return warnings
    flagged = set(co2_flag_sentences(system_ids, catalog))
    kept = tuple(w for w in warnings if w not in flagged and not w.startswith(DRIFT_SENTENCE_START))
    return kept + (co2_drift_sentence(drift),)


def with_co2_drift(recipe: "Recipe", catalog: Catalog | None = None, pressure_atm: float | None = None,
                   always: bool = False, dry_air_fraction: float = DEFAULT_CO2_DRY_AIR_FRACTION) -> "Recipe":
    """``recipe`` with its open-air drift stated (``co2_drift`` and a warning) where due or ``always``.

    The drift is that of the recipe's composition at its temperature of use; a composition the
    open equilibrium cannot settle keeps the recipe unchanged.  A drift stated before (at another
    pressure) is replaced.  CO₂ at ``pressure_atm`` [atm] as given, else ``dry_air_fraction`` of dry
    air in air saturated with water vapour at the recipe's temperature.
    """
    catalog = catalog if catalog is not None else load_catalog()
    drift = co2_drift_for(recipe.composition_mol_l, recipe.verified_ph_at_use, recipe.temperature_c, catalog,
                          pressure_atm, always, dry_air_fraction)
    if drift is None:
        return recipe
    return dataclasses.replace(recipe, co2_drift=drift,
                               warnings=one_co2_sentence(recipe.warnings, drift, recipe.systems, catalog))
