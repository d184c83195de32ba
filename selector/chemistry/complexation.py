"""Metal–ligand stability constants at the conditions of use.

A catalog log K refers to the ionic strength and temperature of its source (I = 0 and 25 °C
for the evaluated compilations, I ≈ 0.1 mol/L for most primary potentiometric work).  The
engine needs the conditional constant — a quotient of concentrations — at the solution's
ionic strength and temperature.  :func:`log_k_at_conditions` is the one place that moves a
constant between conditions; :func:`binding_constants` applies it to the catalog's rows and
states the spread of the published values.

References
----------
.. [Davies1962] C. W. Davies, Ion Association, Butterworths, London (1962), p. 41 (the
   default activity model of :mod:`selector.chemistry.activity`).
.. [GKL2002] R. N. Goldberg, N. Kishore, R. M. Lennen, J. Phys. Chem. Ref. Data 31 (2002)
   231-370, eq. (9) (the integrated van 't Hoff equation; here with ΔCp° = 0).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from catalog import Catalog
from catalog.records import MetalBinding
from selector.chemistry.activity import activity_model
from selector.chemistry.solids import saturation_indices
from selector.chemistry.thermo import pka_at_temperature
from selector.chemistry.water import debye_huckel_a

#: Conditions the spread of published values is compared at: I = 0, 25 °C.
REFERENCE_IONIC_STRENGTH_MOL_L = 0.0
REFERENCE_TEMPERATURE_C = 25.0


def charge_square_change(metal_charge, ligand_charge, ligand_count):
    """Δz² = z_M² + n z_L² − (z_M + n z_L)² of M + n L ⇌ ML_n (integers, broadcast)."""
    z_m = np.asarray(metal_charge, dtype=float)
    z_l = np.asarray(ligand_charge, dtype=float)
    n = np.asarray(ligand_count, dtype=float)
    return z_m**2 + n * z_l**2 - (z_m + n * z_l) ** 2


def log_k_at_conditions(log_k, ref_ionic_strength_mol_l, ref_temperature_c, dh_kj_mol, metal_charge,
                        ligand_charge, ligand_count, ionic_strength_mol_l, temperature_c,
                        activity: str = "davies"):
    """Conditional log K′ of M + n L ⇌ ML_n at (I, T) from a published log K at (I_ref, T_ref).

    Parameters
    ----------
    log_k : array_like
        Published log10 K (concentration quotient at ``ref_ionic_strength_mol_l``; the
        thermodynamic constant where that is 0).
    ref_ionic_strength_mol_l, ref_temperature_c : array_like
        Ionic strength [mol/L] and temperature [°C] the published value refers to.
    dh_kj_mol : array_like
        Reaction enthalpy ΔrH° [kJ/mol]; NaN where none is published (no temperature
        correction is then made).
    metal_charge, ligand_charge, ligand_count : array_like of int
        z_M, z_L and n of the reaction.
    ionic_strength_mol_l, temperature_c : array_like
        Conditions of use [mol/L], [°C]; every argument broadcasts against the others.
    activity : str
        Activity model, a name of :data:`selector.chemistry.activity.ACTIVITY_MODELS`.

    Returns
    -------
    numpy.ndarray
        log10 K′ = log10([ML_n]/([M][L]^n)) at the conditions of use.

    Notes
    -----
    With log10 γ_z = z² g(I, A(T)) (every model of :mod:`selector.chemistry.activity`) the
    concentration quotient is K′ = K° γ_M γ_L^n / γ_ML, so

    .. math:: \\log K' = \\log K^\\circ + Δz^2\\, g(I, A(T)),\\quad Δz^2 = z_M^2 + n z_L^2 − (z_M + n z_L)^2

    The published value is first moved to I = 0 at its own temperature (subtracting
    Δz² g(I_ref, A(T_ref))), then to the temperature of use by the integrated van 't Hoff
    equation with constant ΔrH° ([GKL2002] eq. 9 with ΔCp° = 0):

    .. math:: \\log K^\\circ(T) = \\log K^\\circ(T_{ref}) − \\frac{Δ_rH^\\circ}{R \\ln 10}\\left(\\frac1T − \\frac1{T_{ref}}\\right)

    Examples
    --------
    CuHPO₄: log K° 4.06 (I = 0, 25 °C; llnl.dat) at I = 0.1 mol/L with the Davies equation
    [Davies1962]: Δz² = 4 + 4 − 0 = 8, g = −0.5108 (0.3162/1.3162 − 0.03) = −0.1074, so
    log K′ = 4.06 − 0.859 = 3.20, the value quoted for I ≈ 0.1 (bal2010):

    >>> round(float(log_k_at_conditions(4.06, 0.0, 25.0, np.nan, 2, -2, 1, 0.1, 25.0)), 2)
    3.2
    """
    gamma_unit = activity_model(activity)
    change = charge_square_change(metal_charge, ligand_charge, ligand_count)
    ref_t = np.asarray(ref_temperature_c, dtype=float)
    use_t = np.asarray(temperature_c, dtype=float)
    ref_g = gamma_unit(np.maximum(np.asarray(ref_ionic_strength_mol_l, dtype=float), 0.0), debye_huckel_a(ref_t))
    use_g = gamma_unit(np.maximum(np.asarray(ionic_strength_mol_l, dtype=float), 0.0), debye_huckel_a(use_t))
    dh = np.nan_to_num(np.asarray(dh_kj_mol, dtype=float), nan=0.0)
    # pka_at_temperature(0, ΔH, 0, T) = ΔH/(R ln10) (1/T − 1/θ): the van 't Hoff shift of a pK;
    # a formation constant moves the other way.
    shift = pka_at_temperature(0.0, dh, 0.0, use_t) - pka_at_temperature(0.0, dh, 0.0, ref_t)
    return np.asarray(log_k, dtype=float) - change * ref_g - shift + change * use_g


def binding_log_k(bindings, ionic_strength_mol_l, temperature_c, activity: str = "davies"):
    """log K′ of catalog binding rows at (I, T): [G, B] for G points and B numeric rows.

    Parameters
    ----------
    bindings : sequence of catalog.MetalBinding
        Rows with a log K.
    ionic_strength_mol_l, temperature_c : array_like, shape [G] or scalar
        Conditions of use [mol/L], [°C].
    """
    log_k = np.array([b.log_k.value for b in bindings], dtype=float)
    ref_i = np.array([b.ionic_strength_mol_l for b in bindings], dtype=float)
    ref_t = np.array([b.temperature_c for b in bindings], dtype=float)
    dh = np.array([np.nan if b.dh_kj_mol is None else b.dh_kj_mol for b in bindings], dtype=float)
    z_m = np.array([b.metal_charge for b in bindings], dtype=float)
    z_l = np.array([b.ligand_species_charge for b in bindings], dtype=float)
    n = np.array([b.ligand_count for b in bindings], dtype=float)
    i_use = np.atleast_1d(np.asarray(ionic_strength_mol_l, dtype=float))[:, None]
    t_use = np.atleast_1d(np.asarray(temperature_c, dtype=float))[:, None]
    return log_k_at_conditions(log_k, ref_i, ref_t, dh, z_m, z_l, n, i_use, t_use, activity)


@dataclass(frozen=True)
class BindingConstant:
    """The log K in force for one complex, with the spread of its published values.

    Attributes
    ----------
    binding : catalog.MetalBinding
        The selected row.
    log_k0_25c : float
        Its value moved to I = 0 and 25 °C.
    values_log_k0_25c : tuple of (source key, log K at I = 0 and 25 °C)
        Every published value kept in the choice (rejected ones left out).
    spread_log_k : float or None
        Largest |other value − selected value| at I = 0 and 25 °C; None where one value
        only is published.  poise reports it as the constant's uncertainty.
    """

    binding: MetalBinding
    log_k0_25c: float
    values_log_k0_25c: tuple[tuple[str, float], ...]
    spread_log_k: float | None


def binding_constants_of(catalog: Catalog, system_ids, metal: str,
                         activity: str = "davies") -> dict[str, tuple[BindingConstant, ...]]:
    """The selected log K of every complex of ``metal`` with each of ``system_ids``, with its spread.

    One pass over the catalog's rows and one vectorised correction of all their values to
    I = 0 and 25 °C; systems without a constant map to an empty tuple.
    """
    wanted = set(system_ids)
    rows = [m for m in catalog.metal_binding
            if m.metal == metal and m.log_k is not None and m.system_id in wanted]
    out: dict[str, list[BindingConstant]] = {system_id: [] for system_id in system_ids}
    if not rows:
        return {system_id: () for system_id in system_ids}
    at_reference = binding_log_k(rows, REFERENCE_IONIC_STRENGTH_MOL_L, REFERENCE_TEMPERATURE_C, activity)[0]
    groups: dict[tuple, list[int]] = {}
    for index, row in enumerate(rows):
        groups.setdefault(row.complex_key, []).append(index)
    for members in groups.values():
        chosen = next((i for i in members if rows[i].selected), None)
        if chosen is None:
            continue
        kept = [i for i in members if not rows[i].rejected or i == chosen]
        mine = float(at_reference[chosen])
        spread = float(np.max(np.abs(at_reference[kept] - mine))) if len(kept) > 1 else None
        values = tuple((rows[i].source or rows[i].source_kind, float(at_reference[i])) for i in kept)
        out[rows[chosen].system_id].append(BindingConstant(rows[chosen], mine, values, spread))
    return {system_id: tuple(constants) for system_id, constants in out.items()}


def binding_constants(catalog: Catalog, system_id: str, metal: str,
                      activity: str = "davies") -> tuple[BindingConstant, ...]:
    """The selected log K of every complex of ``metal`` with ``system_id``, with its spread."""
    return binding_constants_of(catalog, (system_id,), metal, activity)[system_id]


def bound_by_ligands(metals, ligand_mask) -> np.ndarray:
    """Fraction of each metal's total held in complexes with the marked ligands, over a batch.

    .. math:: f_{nM} = \\frac{\\sum_c \\nu_{cM}\\,[c]_n\\,\\mathbb{1}[c \\text{ holds a marked ligand of } n]}{T_{nM}}

    Parameters
    ----------
    metals : selector.chemistry.speciation.MetalSpeciation
        The metals of a solved batch of N solutions (M metals, C complexes, S systems).
    ligand_mask : bool array [N, S]
        The systems of each solution whose complexes count as bound (the buffer's systems,
        not a metal salt's counter-ion); hydroxo complexes and complexes of unmarked
        systems count as not bound.

    Returns
    -------
    [N, M] fraction bound (0 where a metal is absent)
    """
    mask = np.asarray(ligand_mask, dtype=bool)
    holds = (metals.complex_ligand_count > 0)                       # [C, S]
    counts = (mask.astype(float) @ holds.T.astype(float)) > 0       # [N, C]: complex c has a marked ligand in n
    held = (metals.complex_mol_l * counts) @ metals.complex_metal_count   # [N, M]
    totals = metals.totals_mol_l
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(totals > 0, held / np.where(totals > 0, totals, 1.0), 0.0)


@dataclass(frozen=True)
class SolidSaturation:
    """A solid of a listed metal in a verified solution: its saturation index SI = log IAP −
    log Ksp(T) at the larger of two temperatures' (use, preparation; SI > 0: supersaturated),
    that temperature [°C], and whether it forms slowly (a caution, never a rejection)."""

    solid_id: str
    name: str
    saturation_index: float
    temperature_c: float
    forms_slowly: bool


def saturation_of_metals(eq, rows, n: int, metals: set[str], catalog: Catalog) -> list[tuple[SolidSaturation, ...]]:
    """Per solution: each catalog solid holding one of ``metals``, at the larger SI of two rows.

    ``rows`` are 2n row indices of the solved batch ``eq``: the n solutions at one temperature,
    then the same n at another (use, preparation).  One call of
    :func:`batch_saturation` for all of them; a solid with an
    ion absent is left out; most supersaturated first.
    """
    rows = np.asarray(rows, dtype=int)
    indices = batch_saturation(eq, catalog, rows)
    out: list[list[SolidSaturation]] = [[] for _ in range(n)]
    temps = np.asarray(eq.speciation.temperature_c)[rows].reshape(2, n)
    for solid_id, values in indices.items():
        solid = catalog.solids[solid_id]
        if not any(token in metals for token, _ in solid.components):
            continue
        pair = values.reshape(2, n)
        worst = np.argmax(np.where(np.isnan(pair), np.inf, pair), axis=0)
        for k in range(n):
            if np.isfinite(pair[worst[k], k]):
                out[k].append(SolidSaturation(solid_id, solid.name, round(float(pair[worst[k], k]), 4),
                                              float(temps[worst[k], k]), solid.forms_slowly))
    return [tuple(sorted(items, key=lambda s: -s.saturation_index)) for items in out]


def precipitation_notes(solids) -> list[str]:
    """A warning per supersaturated solid (SI > 0) of :class:`SolidSaturation` records, with how
    far and where ("brushite … SI +0.40 at 37 °C: supersaturated, may precipitate"); a
    slow-forming solid (hydroxyapatite) says so and is never excluded."""
    return [f"{s.name} SI {s.saturation_index:+.2f} at {s.temperature_c:g} °C: supersaturated, may precipitate"
            + (" (forms slowly: a caution for stored solutions; no_precipitate does not exclude it)"
               if s.forms_slowly else "") for s in solids if s.saturation_index > 0]


def precipitation_misses(solids) -> list[str]:
    """The supersaturated solids a ``no_precipitate`` spec rejects (slow-forming ones aside)."""
    return [f"{s.name} SI {s.saturation_index:+.2f} at {s.temperature_c:g} °C: supersaturated (no_precipitate)"
            for s in solids if s.saturation_index > 0 and not s.forms_slowly]


#: A free metal ion's species id: its symbol followed by its charge as plus signs (``Ca++``).
_FREE_METAL = re.compile(r"^([A-Z][a-z]?)\++$")


def batch_saturation(eq, catalog, rows) -> dict[str, np.ndarray]:
    """Saturation index of every catalog solid over the solutions ``rows`` of a solved batch, in
    one call of :func:`selector.chemistry.solids.saturation_indices` (activities = the
    engine's concentration × activity coefficient; the free metal ion ``Ca++`` is the token
    ``Ca``).  A solid with an ion absent from a row has SI −inf there; a batch without
    metals gives {}."""
    rows = np.asarray(rows, dtype=int)
    if getattr(eq.speciation, "metals", None) is None or rows.size == 0:
        return {}
    conc, gamma = eq.species_mol_l[rows], eq.species_gamma[rows]
    log_activity: dict[str, np.ndarray] = {}
    with np.errstate(divide="ignore", invalid="ignore"):
        for j, species_id in enumerate(eq.species_ids):
            present = (conc[:, j] > 0) & (gamma[:, j] > 0)
            if not present.any():
                continue
            free = _FREE_METAL.match(species_id)
            log_activity[free.group(1) if free else species_id] = np.where(
                present, np.log10(np.where(present, conc[:, j] * gamma[:, j], 1.0)), -np.inf)
    return saturation_indices(catalog.solids, log_activity, eq.ph[rows], eq.speciation.temperature_c[rows])
