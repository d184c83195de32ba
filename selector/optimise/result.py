"""The frozen results of the optimiser: plain data only (no Pyomo object leaves selector)."""

from __future__ import annotations

from dataclasses import dataclass, field

from selector.chemistry.complexation import SolidSaturation


@dataclass(frozen=True)
class LoadCheck:
    """Verified pH of the mix with a load added (as HCl or NaOH) at one temperature."""

    kind: str
    conc_mol_l: float
    temperature_c: float
    ph: float
    within_band: bool


@dataclass(frozen=True)
class VerifiedFigures:
    """Figures of a mix from the exact forward engine (not the linear model).

    Attributes
    ----------
    temperature_c : the use temperature [°C]
    ph : pH at the use temperature
    ph_by_temperature : pH at each grid temperature [°C → pH]
    ph_under_loads : pH with each load at each grid temperature
    capacity_mol_l_per_ph : β [mol/L per pH]
    ionic_strength_mol_l, osmolarity_osmol_l, buffer_conc_mol_l : [mol/L], [osmol/L], [mol/L]
    bound_fraction : exact fraction of each limited metal bound by the mix's systems, with the
        metal at its stated concentration, worst over the use and grid temperatures [0-1]
    dph_dt_per_k : dpH/dT at the use temperature [per K]
    dilution_value_ph : pH change on 1:1 dilution with water [pH]
    warnings : the engine's warnings and every band the mix leaves
    ph_uncertainty : standard uncertainty of ``ph`` from the constants and the activity model
        [pH] (:func:`selector.chemistry.uncertainty.propagate_uncertainty`), None where not
        computed or without a figure
    bound_at_c : metal -> the temperature of its worst bound fraction [°C]
    solids : the solids of the listed metals with their saturation index (empty without metals)
    ph_with_metals : pH at the use temperature with the spec's metals at their concentrations
        (None without metals)
    ph_at_preparation : pH at the preparation temperature (None where not asked of
        :func:`selector.optimise.verify.verify_mixes`; NaN where the engine found none)
    """

    temperature_c: float
    ph: float
    ph_by_temperature: dict[float, float]
    ph_under_loads: tuple[LoadCheck, ...]
    capacity_mol_l_per_ph: float
    ionic_strength_mol_l: float
    osmolarity_osmol_l: float
    buffer_conc_mol_l: float
    bound_fraction: dict[str, float]
    dph_dt_per_k: float
    dilution_value_ph: float
    warnings: tuple[str, ...]
    ph_uncertainty: float | None = None
    bound_at_c: dict[str, float] = field(default_factory=dict)
    solids: tuple[SolidSaturation, ...] = ()
    ph_with_metals: float | None = None
    ph_at_preparation: float | None = None

    @property
    def saturation_indices(self) -> dict[str, float]:
        """Solid id -> SI (the key of ``poise ph``), most supersaturated first."""
        return {s.solid_id: s.saturation_index for s in self.solids}

    def as_json(self) -> dict:
        return {
            "temperature_c": self.temperature_c, "ph": self.ph, "ph_uncertainty": self.ph_uncertainty,
            "ph_by_temperature": {f"{t:g}": v for t, v in self.ph_by_temperature.items()},
            "ph_under_loads": [{"kind": c.kind, "conc_mol_l": c.conc_mol_l, "temperature_c": c.temperature_c,
                                "ph": c.ph, "within_band": c.within_band} for c in self.ph_under_loads],
            "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph,
            "ionic_strength_mol_l": self.ionic_strength_mol_l,
            "osmolarity_osmol_l": self.osmolarity_osmol_l, "buffer_conc_mol_l": self.buffer_conc_mol_l,
            "bound_fraction": dict(self.bound_fraction), "dph_dt_per_k": self.dph_dt_per_k,
            "dilution_value_ph": self.dilution_value_ph, "warnings": list(self.warnings),
            **({"metal_bound_fraction": dict(self.bound_fraction), "saturation_indices": self.saturation_indices,
                "ph_with_metals": self.ph_with_metals} if self.bound_fraction else {}),
        }


@dataclass(frozen=True)
class OptimisationResult:
    """The optimal mix of a spec, its verified figures and cost.  Plain data only.

    ``reagents_mol_l`` holds the reagents with a non-zero amount; ``cost_per_l`` and
    ``cost_breakdown_per_l`` are in ``currency``; ``cost_for_volume`` is for
    ``volume_l``; ``cost_per_plate`` is :func:`selector.prices.cost_per_plate` under the spec's
    plate fields (a plate's own wells, else the batch over its plates; None without either).
    ``binding`` names the constraints that hold with equality at the optimum;
    ``sensitivity`` says in words what relaxing them would gain (LP duals, binaries fixed).
    """

    status: str
    objective: str
    reagents_mol_l: dict[str, float]
    systems: tuple[str, ...]
    cost_per_l: float
    currency: str
    volume_l: float
    cost_for_volume: float
    cost_per_plate: float | None
    cost_breakdown_per_l: dict[str, float]
    dominant_reagent: str
    verified: VerifiedFigures
    binding: tuple[str, ...]
    sensitivity: tuple[str, ...]
    activity_rounds: int
    corrected: bool
    assumptions: tuple[str, ...] = ()
    excluded: dict[str, str] = field(default_factory=dict)

    def as_json(self) -> dict:
        return {
            "status": self.status, "objective": self.objective, "reagents": dict(self.reagents_mol_l),
            "systems": list(self.systems), "cost_per_l": self.cost_per_l, "currency": self.currency,
            "volume_l": self.volume_l, "cost_for_volume": self.cost_for_volume,
            "cost_per_plate": self.cost_per_plate, "cost_breakdown_per_l": dict(self.cost_breakdown_per_l),
            "dominant_reagent": self.dominant_reagent, "verified": self.verified.as_json(),
            "binding": list(self.binding), "sensitivity": list(self.sensitivity),
            "activity_rounds": self.activity_rounds, "corrected": self.corrected,
            "assumptions": list(self.assumptions), "conflicts": [],
        }

