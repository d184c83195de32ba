"""Text renderings shared by the command line (and anything else that prints a report)."""

from __future__ import annotations

from catalog import Catalog, load_catalog
from selector.chemistry.properties import SolutionReport
from selector.safety import SAFETY_NOTICE, hazard_cautions


def format_solution_report(report: SolutionReport, catalog: Catalog | None = None) -> str:
    """The readable text of ``poise ph``: amounts, pH, I, β, osmolarity, dpH/dT, ΔpH½, species, warnings."""
    catalog = catalog if catalog is not None else load_catalog()
    lines = [f"Solution at {report.temperature_c:g} °C (activity model: {report.activity_model})"]
    for reagent_id, conc in report.reagents_mol_l.items():
        reagent = catalog.reagents[reagent_id]
        lines.append(f"  {reagent.name:<42} {conc * 1000:10.4g} mM")
    lines += [
        "",
        f"  pH                          {report.ph:8.3f}",
        f"  ionic strength              {report.ionic_strength_mol_l:8.4f} mol/L",
        f"  buffer capacity β           {report.capacity_mol_l_per_ph * 1000:8.2f} mM per pH unit",
        f"  osmolarity (ideal)          {report.osmolarity_osmol_l * 1000:8.1f} mOsm/L",
        f"  dpH/dT                      {report.dph_dt_per_k:+8.4f} per K",
        f"  dilution value ΔpH½ (1:1)   {report.dilution_value_ph:+8.3f}",
        "",
        "  species                     mol/L        activity coeff.",
    ]
    for species_id, conc in report.species_mol_l.items():
        lines.append(f"  {species_id:<26} {conc:11.4e}   {report.species_gamma[species_id]:6.3f}")
    lines.append("")
    if report.warnings:
        lines.append("Warnings:")
        lines += [f"  - {w}" for w in report.warnings]
    else:
        lines.append("Warnings: none")
    cautions = hazard_cautions(report.reagents_mol_l, catalog)
    if cautions:
        lines += ["", "Cautions:"] + [f"  - {c}" for c in cautions] + [f"  {SAFETY_NOTICE}"]
    return "\n".join(lines)
