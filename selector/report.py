"""Text renderings shared by the command line (and anything else that prints a report)."""

from __future__ import annotations

import re
from typing import Any, Mapping

from catalog import Catalog, load_catalog
from selector.chemistry.properties import SolutionReport
from selector.digits import uncertainty_digits
from selector.safety import SAFETY_NOTICE, hazard_cautions


def format_solution_report(report: SolutionReport, catalog: Catalog | None = None) -> str:
    """The readable text of ``poise ph``: amounts, pH, I, β, osmolarity, dpH/dT, ΔpH½, species, warnings."""
    catalog = catalog if catalog is not None else load_catalog()
    lines = [f"Solution at {report.temperature_c:g} °C (activity model: {report.activity_model})"]
    for reagent_id, conc in report.reagents_mol_l.items():
        reagent = catalog.reagents[reagent_id]
        lines.append(f"  {reagent.name:<42} {conc * 1000:10.4g} mM")
    if report.status != "converged" or report.ph is None:
        lines += ["", f"  no equilibrium reported (status: {report.status.replace('_', ' ')})", ""]
    else:
        lines += _figure_lines(report)
    if report.warnings:
        lines.append("Warnings:")
        lines += [f"  - {w}" for w in report.warnings]
    else:
        lines.append("Warnings: none")
    cautions = hazard_cautions(report.reagents_mol_l, catalog)
    if cautions:
        lines += ["", "Cautions:"] + [f"  - {c}" for c in cautions] + [f"  {SAFETY_NOTICE}"]
    return "\n".join(lines)


def _number(value: float | None, spec: str, scale: float = 1.0) -> str:
    """``value * scale`` formatted with ``spec``, or a dash right-aligned in its width."""
    width = int(spec.lstrip("+").split(".")[0])
    return format(value * scale, spec) if value is not None else "—".rjust(width)


def plus_minus(value: float | None, spec: str, scale: float = 1.0) -> str:
    """`` ± 0.012`` for a standard uncertainty, or nothing where there is none; a fixed-point ``spec``
    (``.2f``) gets the decimals that show a ± below its precision (``± 0.0002``, not ``± 0.00``)."""
    if value is None:
        return ""
    fixed = re.fullmatch(r"\.(\d+)f", spec)
    shown = uncertainty_digits(value * scale, int(fixed.group(1))) if fixed else format(value * scale, spec)
    return f" ± {shown}"


def _uncertainty_lines(report: SolutionReport) -> list[str]:
    """How the pH uncertainty is made up: constants, activity model, the constants that weigh most."""
    budget = report.uncertainty_budget
    if not budget:
        return []
    lines = [f"  (± is one standard uncertainty: step constants {budget['ph_from_constants']:.3f} pH and activity "
             f"model {budget['ph_from_activity_model']:.3f} pH ({report.activity_model} against "
             f"{budget['alternative_activity_model']}), combined in quadrature)"]
    largest = [c for c in budget["largest_constants"] if abs(c["ph_shift"]) >= 0.0005]
    if largest:
        lines.append("  weighing most: " + ", ".join(f"{c['constant']} ± {c['uncertainty']:.3g} "
                                                     f"({c['ph_shift']:+.3f} pH)" for c in largest))
    return lines


def _figure_lines(report: SolutionReport) -> list[str]:
    """The figures and the species table of a converged solution."""
    lines = [
        "",
        f"  pH                          {_number(report.ph, '8.3f')}{plus_minus(report.ph_uncertainty, '.3f')}",
        f"  ionic strength              {_number(report.ionic_strength_mol_l, '8.4f')} mol/L",
        f"  buffer capacity β           {_number(report.capacity_mol_l_per_ph, '8.2f', 1000)}"
        f"{plus_minus(report.capacity_uncertainty_mol_l_per_ph, '.2f', 1000)} mM per pH unit",
        f"  osmolarity (ideal)          {_number(report.osmolarity_osmol_l, '8.1f', 1000)} mOsm/L",
        f"  dpH/dT                      {_number(report.dph_dt_per_k, '+8.4f')} per K",
        f"  dilution value ΔpH½ (1:1)   {_number(report.dilution_value_ph, '+8.3f')}",
        *_uncertainty_lines(report),
        *_metal_lines(report),
        "",
        "  species                     mol/L        activity coeff.",
    ]
    for species_id, conc in report.species_mol_l.items():
        lines.append(f"  {species_id:<26} {_number(conc, '11.4e')}   {_number(report.species_gamma[species_id], '6.3f')}")
    lines.append("")
    return lines


def _metal_lines(report: SolutionReport) -> list[str]:
    """Per metal: total, free concentration, pM (−log10 of the free concentration in mol/L)
    and where the bound part sits, by ligand."""
    metals = report.metals
    if metals is None:
        return []
    lines = ["", "  metal   total mM     free mol/L     pM     bound, by ligand"]
    for symbol, total in metals.total_mol_l.items():
        shares = sorted(metals.bound_fraction[symbol].items(), key=lambda item: -item[1])
        words = ", ".join(f"{ligand} {share * 100:.3g} %" for ligand, share in shares if share >= 5e-5) or "none"
        u_p_free = (report.metal_p_free_uncertainty or {}).get(symbol)
        lines.append(f"  {symbol:<6} {total * 1000:9.4g}   {metals.free_mol_l[symbol]:11.4e}   "
                     f"p{symbol} {metals.p_free[symbol]:5.2f}{plus_minus(u_p_free, '.2f')}   {words}")
    if report.saturation_indices:
        lines += ["", "  saturation index (SI > 0: supersaturated, the solid may form)"]
        lines += [f"  {solid:<26} {si:+8.2f}" for solid, si in report.saturation_indices.items()]
    return lines


def format_cost_lines(summary: Mapping[str, Any], catalog: Catalog | None = None) -> list[str]:
    """Lines naming the price book and the origin of each reagent's price (demo prices in
    one line) and, with plate options, the plate's volume and cost (from
    :func:`selector.prices.cost_summary`)."""
    from selector.prices import DEMO_LABEL, DEMO_ORIGIN

    catalog = catalog if catalog is not None else load_catalog()
    lines = []
    if summary.get("plate_volume_l") is not None and summary.get("cost_per_plate") is not None:
        lines.append(f"Per plate ({summary['plate_volume_l'] * 1000:g} mL): {summary['cost_per_plate']:.4g} "
                     f"{summary['currency']}")
    origins = summary["price_origins"]
    demo = [r for r, origin in origins.items() if origin == DEMO_ORIGIN]
    if origins and len(demo) == len(origins):
        lines.append(f"Prices: {DEMO_ORIGIN} for every reagent"
                     + ("" if summary["price_book"] == DEMO_LABEL else f" (price book: {summary['price_book']})"))
    else:
        lines.append(f"Prices: {summary['price_book']}")
    if len(demo) < len(origins):
        lines += [f"  {catalog.reagents[r].name}: {origin}" for r, origin in origins.items() if origin != DEMO_ORIGIN]
        if demo:
            lines.append(f"  {', '.join(catalog.reagents[r].name for r in demo)}: {DEMO_ORIGIN}")
    return lines
