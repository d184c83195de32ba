"""Derived figures of a solution: dpH/dT, dilution value, titration curve, and the report.

The report carries the standard uncertainty of its pH and capacity
(:func:`selector.chemistry.uncertainty.propagate_uncertainty`).

Every function takes a batch (amounts [N, R']) and solves all the perturbed solutions in
one call of the vectorised engine.

References
----------
.. [Buck2002] R. P. Buck et al., "Measurement of pH. Definition, standards, and
   procedures (IUPAC Recommendations 2002)", Pure Appl. Chem. 74 (2002) 2169-2200
   (dilution value ΔpH½: the pH change when a buffer is diluted with an equal volume of
   water).
.. [Bates1973] R. G. Bates, Determination of pH: Theory and Practice, 2nd ed., Wiley
   (1973), ch. 4 (buffer value, dilution value, temperature coefficient).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np

from catalog import load_catalog
from selector.chemistry.complex_equilibrium import MetalFigures, metal_figures
from selector.chemistry.complexation import batch_saturation
from selector.chemistry.equilibrium import amounts_matrix, solve_equilibrium
from selector.chemistry.uncertainty import FigureUncertainty, propagate_uncertainty
from selector.errors import InputError
from selector.names import resolve_reagent
from selector.units import check_temperature, parse_amount

#: Half-width of the temperature step for dpH/dT [K].
DPH_DT_STEP_K = 0.5
#: Constants listed in a report's uncertainty budget (the largest contributions first).
BUDGET_ENTRIES = 3


def _stack(amounts: np.ndarray, times: int) -> np.ndarray:
    return np.concatenate([amounts] * times, axis=0)


def dph_dt(reagent_ids: Sequence[str], amounts_mol_l, temperature_c=25.0, **solve_options) -> np.ndarray:
    """Temperature coefficient dpH/dT of fixed compositions [pH units per K].

    Central difference over ±0.5 K; the composition (mol/L) is held fixed, i.e. the
    thermal expansion of the solution is neglected.
    """
    amounts = amounts_matrix(amounts_mol_l, reagent_ids)
    n = amounts.shape[0]
    low, high = _drift_temperatures(temperature_c, n)
    eq = solve_equilibrium(reagent_ids, _stack(amounts, 2), np.concatenate([low, high]), **solve_options)
    return (eq.ph[n:] - eq.ph[:n]) / (high - low)


def _drift_temperatures(temperature_c, n: int) -> tuple[np.ndarray, np.ndarray]:
    """The two temperatures [°C] of dpH/dT's central difference, each [n] (0-95 °C)."""
    t = np.broadcast_to(check_temperature(temperature_c), (n,))
    return np.clip(t - DPH_DT_STEP_K, 0.0, None), np.clip(t + DPH_DT_STEP_K, None, 95.0)


def property_rows(amounts_mol_l: np.ndarray, temperature_c) -> tuple[np.ndarray, np.ndarray]:
    """The solutions whose pH give dpH/dT and the dilution value of ``amounts_mol_l`` [N, R].

    For a caller that solves them in its own batch (one engine call with its other rows):
    rows [3N, R] and temperatures [3N] — the compositions at T − 0.5 K, at T + 0.5 K, and
    diluted twofold at T.  :func:`properties_from_rows` turns their pH and the pH of the
    compositions at T into the two figures, exactly as :func:`dph_dt` and
    :func:`dilution_value` (factor 2) compute them.
    """
    amounts = np.asarray(amounts_mol_l, dtype=float)
    n = amounts.shape[0]
    low, high = _drift_temperatures(temperature_c, n)
    t = np.broadcast_to(check_temperature(temperature_c), (n,))
    return np.concatenate([amounts, amounts, amounts / 2.0]), np.concatenate([low, high, t])


def properties_from_rows(ph_rows: np.ndarray, ph_at_temperature: np.ndarray,
                         temperature_c) -> tuple[np.ndarray, np.ndarray]:
    """(dpH/dT [pH/K], dilution value ΔpH½ [pH]) of N solutions from the pH of the rows of
    :func:`property_rows` ([3N]) and their pH at ``temperature_c`` ([N])."""
    ph_at_temperature = np.asarray(ph_at_temperature, dtype=float)
    n = ph_at_temperature.shape[0]
    low, high = _drift_temperatures(temperature_c, n)
    return (ph_rows[n:2 * n] - ph_rows[:n]) / (high - low), ph_rows[2 * n:3 * n] - ph_at_temperature


def dilution_value(reagent_ids: Sequence[str], amounts_mol_l, temperature_c=25.0, factor: float = 2.0,
                   **solve_options) -> np.ndarray:
    """pH change on dilution by ``factor`` with pure water: pH(c/factor) − pH(c).

    With factor 2 this is the dilution value ΔpH½ of [Buck2002] and [Bates1973].
    """
    if not factor > 1.0:
        raise InputError(f"dilution factor must be above 1, got {factor!r}")
    amounts = amounts_matrix(amounts_mol_l, reagent_ids)
    n = amounts.shape[0]
    t = np.broadcast_to(check_temperature(temperature_c), (n,))
    eq = solve_equilibrium(reagent_ids, np.concatenate([amounts, amounts / factor]), np.concatenate([t, t]),
                           **solve_options)
    return eq.ph[n:] - eq.ph[:n]


@dataclass(frozen=True)
class TitrationCurve:
    """pH of a sample after each addition of titrant stock.

    Attributes
    ----------
    titrant_id : str
    titrant_stock_mol_l : float
    added_volume_l : [K] titrant volume added to the sample
    sample_volume_l : float
    ph : [K]
    capacity_mol_l_per_ph : [K]
    """

    titrant_id: str
    titrant_stock_mol_l: float
    added_volume_l: np.ndarray
    sample_volume_l: float
    ph: np.ndarray
    capacity_mol_l_per_ph: np.ndarray


def titration_curve(reagent_ids: Sequence[str], amounts_mol_l, titrant_id: str, titrant_stock_mol_l: float,
                    added_volume_l, sample_volume_l: float = 1.0, temperature_c=25.0,
                    **solve_options) -> TitrationCurve:
    """pH of one solution titrated with a stock of ``titrant_id`` (e.g. 1 M NaOH or HCl).

    Each point mixes ``sample_volume_l`` of the solution with a volume of stock, volumes
    taken as additive, and is solved in one batch: the dilution by the titrant is real.
    """
    amounts = amounts_matrix(amounts_mol_l, reagent_ids)[0]
    added = np.atleast_1d(np.asarray(added_volume_l, dtype=float))
    if np.any(~np.isfinite(added)) or np.any(added < 0):
        raise InputError("titrant volumes must be finite and zero or more (L)")
    if not (np.isfinite(titrant_stock_mol_l) and titrant_stock_mol_l > 0):
        raise InputError(f"titrant stock concentration must be above 0 mol/L, got {titrant_stock_mol_l!r}")
    if not (np.isfinite(sample_volume_l) and sample_volume_l > 0):
        raise InputError(f"sample volume must be above 0 L, got {sample_volume_l!r}")
    ids = list(reagent_ids)
    if titrant_id not in ids:
        ids.append(titrant_id)
        amounts = np.append(amounts, 0.0)
    column = ids.index(titrant_id)
    total_volume = sample_volume_l + added
    batch = amounts[None, :] * (sample_volume_l / total_volume)[:, None]
    batch[:, column] += titrant_stock_mol_l * added / total_volume
    eq = solve_equilibrium(ids, batch, temperature_c, **solve_options)
    return TitrationCurve(titrant_id, float(titrant_stock_mol_l), added, float(sample_volume_l),
                          eq.ph, eq.capacity_mol_l_per_ph)


def temperature_profile(reagent_ids: Sequence[str], amounts_mol_l, temperatures_c, **solve_options) -> np.ndarray:
    """pH of one fixed composition at each of ``temperatures_c`` (one batch solve)."""
    amounts = amounts_matrix(amounts_mol_l, reagent_ids)[0]
    t = np.atleast_1d(check_temperature(temperatures_c))
    return solve_equilibrium(reagent_ids, np.tile(amounts, (t.size, 1)), t, **solve_options).ph


@dataclass(frozen=True)
class SolutionReport:
    """Everything poise says about one solution (the figures of ``poise ph``).

    Attributes are plain Python values so the report serialises directly.  ``status`` is
    ``"converged"``, ``"beyond_model"`` or ``"failed"``; a solution that is not converged has
    no figures (None, ``null`` in JSON) and says why in ``warnings``; a figure derived from
    neighbouring solutions (dpH/dT, ΔpH½) is None when one of those is not converged.
    ``ph_uncertainty`` [pH] and ``capacity_uncertainty_mol_l_per_ph`` are standard
    uncertainties (constants and activity model combined, see
    :mod:`selector.chemistry.uncertainty`); ``uncertainty_budget`` their parts;
    ``metal_p_free_uncertainty`` the standard uncertainty of each metal's pM (complexes' log β,
    the step constants and the activity model).
    """

    reagents_mol_l: dict[str, float]
    temperature_c: float
    ph: float | None
    ionic_strength_mol_l: float | None
    capacity_mol_l_per_ph: float | None
    osmolarity_osmol_l: float | None
    dph_dt_per_k: float | None
    dilution_value_ph: float | None
    species_mol_l: dict[str, float | None]
    species_gamma: dict[str, float | None]
    warnings: list[str]
    activity_model: str
    status: str = "converged"
    ph_uncertainty: float | None = None
    capacity_uncertainty_mol_l_per_ph: float | None = None
    uncertainty_budget: dict | None = None
    metals: MetalFigures | None = None
    saturation_indices: dict[str, float] | None = None
    metal_p_free_uncertainty: dict[str, float | None] | None = None

    def as_json(self) -> dict:
        """The report as the JSON object printed by ``poise ph --json`` (no NaN or Infinity:
        figures that do not exist are null)."""
        return {
            "status": self.status,
            "pH": self.ph,
            "ph_uncertainty": self.ph_uncertainty,
            "temperature_c": self.temperature_c,
            "ionic_strength_mol_l": self.ionic_strength_mol_l,
            "capacity_mol_l_per_ph": self.capacity_mol_l_per_ph,
            "capacity_uncertainty_mol_l_per_ph": self.capacity_uncertainty_mol_l_per_ph,
            "uncertainty_budget": self.uncertainty_budget,
            "osmolarity_osmol_l": self.osmolarity_osmol_l,
            "dph_dt_per_k": self.dph_dt_per_k,
            "dilution_value_ph": self.dilution_value_ph,
            "reagents_mol_l": self.reagents_mol_l,
            "species": self.species_mol_l,
            "activity_coefficients": self.species_gamma,
            "activity_model": self.activity_model,
            "warnings": self.warnings,
            **(self.metals_json() if self.metals is not None else {}),
        }

    def metals_json(self) -> dict:
        """The metal keys of the JSON report (only for a solution with metals as components)."""
        assert self.metals is not None
        return {"free_metal_mol_l": self.metals.free_mol_l, "metal_species": self.metals.species_mol_l,
                "metal_total_mol_l": self.metals.total_mol_l, "metal_p_free": self.metals.p_free,
                "metal_p_free_uncertainty": self.metal_p_free_uncertainty or {},
                "metal_bound_fraction": self.metals.bound_fraction,
                "saturation_indices": self.saturation_indices or {}}


def figure_or_none(value) -> float | None:
    """A float, or None where the engine has no finite figure (a solution not converged)."""
    value = float(value)
    return value if np.isfinite(value) else None


def uncertainty_budget(uncertainty: FigureUncertainty, index: int = 0) -> dict | None:
    """The parts of solution ``index``'s pH and β uncertainties as plain values (None without a figure).

    ``ph_from_constants`` and ``ph_from_activity_model`` [pH] combine in quadrature to the pH
    uncertainty, the ``capacity_*`` parts [mol/L per pH] to β's; ``largest_constants`` lists
    the :data:`BUDGET_ENTRIES` constants that move the pH most (those that move it at all), with
    their signed shift.
    """
    if figure_or_none(uncertainty.ph[index]) is None:
        return None
    moving = [e for e in uncertainty.effects if float(e.ph_shift[index]) != 0.0]
    ranked = sorted(moving, key=lambda e: -abs(float(e.ph_shift[index])))[:BUDGET_ENTRIES]
    return {
        "ph_from_constants": float(uncertainty.ph_from_constants[index]),
        "ph_from_activity_model": float(uncertainty.ph_from_activity_model[index]),
        "capacity_from_constants_mol_l_per_ph": figure_or_none(uncertainty.capacity_from_constants_mol_l_per_ph[index]),
        "capacity_from_activity_model_mol_l_per_ph": figure_or_none(
            uncertainty.capacity_from_activity_model_mol_l_per_ph[index]),
        "alternative_activity_model": uncertainty.alternative_model,
        "largest_constants": [{"constant": e.label, "uncertainty": e.uncertainty, "source_kind": e.source_kind,
                               "ph_shift": float(e.ph_shift[index])} for e in ranked],
    }


def describe_solution(amounts: Mapping[str, str | float], temperature_c=25.0, activity: str = "davies",
                      catalog=None, ion_pairs: bool = False) -> SolutionReport:
    """Equilibrium and derived figures of one solution given as reagent name -> amount.

    Amounts are strings with a unit (``"25mM"``, ``"5 g/L"``) or numbers in mol/L.  Names
    are resolved through the catalog's aliases; two names of the same reagent (``Tris`` and
    ``THAM``) are summed.  A composition beyond the model gives a report with status
    ``"beyond_model"`` and no figures rather than an error.  ``ion_pairs`` also takes the
    Na⁺/K⁺ ion pairs as species (see :func:`selector.chemistry.equilibrium.solve_equilibrium`).
    """
    catalog = catalog if catalog is not None else load_catalog()
    if not amounts:
        raise InputError("no reagents given; name at least one, e.g. KH2PO4=25mM")
    temperature = float(check_temperature(temperature_c))
    resolved: dict[str, float] = {}
    for name, amount in amounts.items():
        reagent_id = resolve_reagent(name, catalog)
        reagent = catalog.reagents[reagent_id]
        if isinstance(amount, str):
            conc = parse_amount(amount, reagent.molar_mass_g_mol, what=f"amount of {name}")
        else:
            conc = float(amount)
            if not np.isfinite(conc) or conc < 0:
                raise InputError(f"amount of {name} is {amount!r}; give a finite amount of zero or more")
        resolved[reagent_id] = resolved.get(reagent_id, 0.0) + conc
    ids = list(resolved)
    values = np.array([resolved[i] for i in ids])
    options = dict(catalog=catalog, activity=activity, strict=False, ion_pairs=ion_pairs)
    eq = solve_equilibrium(ids, values, temperature, **options)
    slope = dph_dt(ids, values, temperature, **options)
    dilution = dilution_value(ids, values, temperature, **options)
    warnings = [eq.status_message(0)] if eq.status[0] else eq.warnings_for(0, catalog)
    uncertainty = propagate_uncertainty(eq, catalog, activity)
    saturation = solution_saturation(eq, catalog, 0)
    warnings += [f"supersaturated in {catalog.solids[solid].name} (SI {si:+.2f}) at {temperature:g} °C: it may "
                 f"precipitate" + (" (it forms slowly: a caution for stored solutions)"
                                   if catalog.solids[solid].forms_slowly else "")
                 for solid, si in (saturation or {}).items() if si > 0]
    return SolutionReport(
        reagents_mol_l=resolved,
        temperature_c=temperature,
        ph=figure_or_none(eq.ph[0]),
        ionic_strength_mol_l=figure_or_none(eq.ionic_strength_mol_l[0]),
        capacity_mol_l_per_ph=figure_or_none(eq.capacity_mol_l_per_ph[0]),
        osmolarity_osmol_l=figure_or_none(eq.osmolarity_osmol_l[0]),
        dph_dt_per_k=figure_or_none(slope[0]),
        dilution_value_ph=figure_or_none(dilution[0]),
        species_mol_l={sid: figure_or_none(c) for sid, c in zip(eq.species_ids, eq.species_mol_l[0])},
        species_gamma={sid: figure_or_none(g) for sid, g in zip(eq.species_ids, eq.species_gamma[0])},
        warnings=warnings,
        activity_model=activity,
        status=eq.status_name(0),
        ph_uncertainty=figure_or_none(uncertainty.ph[0]),
        capacity_uncertainty_mol_l_per_ph=figure_or_none(uncertainty.capacity_mol_l_per_ph[0]),
        uncertainty_budget=uncertainty_budget(uncertainty, 0),
        metals=metal_figures(eq.speciation, 0),
        saturation_indices=saturation,
        metal_p_free_uncertainty=_p_free_uncertainty(uncertainty, eq.speciation, 0),
    )


def _p_free_uncertainty(uncertainty: FigureUncertainty, speciation, index: int) -> dict[str, float | None] | None:
    """u(pM) of each metal present in solution ``index`` (None without metals)."""
    metals = speciation.metals
    if metals is None or not uncertainty.metal_ids:
        return None
    return {symbol: figure_or_none(uncertainty.p_free_metal[index, m])
            for m, symbol in enumerate(uncertainty.metal_ids) if metals.totals_mol_l[index, m] > 0}


def solution_saturation(eq, catalog, index: int) -> dict[str, float] | None:
    """Saturation index of every catalog solid whose ions are all in solution ``index`` of a
    solved batch (:func:`batch_saturation`); None when no metal is present or the solution is
    not converged.  SI > 0: supersaturated (the solid may form)."""
    if eq.status[index] or getattr(eq.speciation, "metals", None) is None:
        return None
    indices = batch_saturation(eq, catalog, np.array([index]))
    return {solid_id: round(float(si[0]), 4) for solid_id, si in sorted(indices.items(), key=lambda kv: -kv[1][0])
            if np.isfinite(si[0])}
