"""The catalog as numpy arrays for the engine.

:func:`engine_tables` turns the frozen catalog records into padded arrays (one row per
system, one column per dissociation step) and a reagent matrix, once per catalog.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace

import numpy as np

from catalog import Catalog, load_catalog
from catalog.records import Complex, IonSize, MetalBinding
from selector.chemistry.complexation import binding_log_k

#: Source kinds of a number not read in a source.
RECALLED_KINDS = ("from-memory", "common-practice")

#: Ions that are equilibrium unknowns, not fixed strong ions, in the charge balance.
WATER_IONS = ("H", "OH")


@dataclass(frozen=True)
class SystemArrays:
    """Parameters of a set of S systems, steps padded to J = ``max_steps`` with NaN.

    Attributes
    ----------
    system_ids : tuple of str, length S
    charge_most_protonated : int array [S]
    n_steps : int array [S]
    pka_25c, dh_kj_mol, dcp_j_k_mol, t_min_c, t_max_c : float arrays [S, J]
    """

    system_ids: tuple[str, ...]
    charge_most_protonated: np.ndarray
    n_steps: np.ndarray
    pka_25c: np.ndarray
    dh_kj_mol: np.ndarray
    dcp_j_k_mol: np.ndarray
    t_min_c: np.ndarray
    t_max_c: np.ndarray

    @property
    def max_steps(self) -> int:
        return self.pka_25c.shape[1]

    def subset(self, indices) -> "SystemArrays":
        """The arrays of the systems at ``indices``, padding trimmed to their largest n."""
        indices = np.asarray(indices, dtype=int)
        n_steps = self.n_steps[indices]
        width = max(int(n_steps.max()) if indices.size else 1, 1)
        return SystemArrays(
            system_ids=tuple(self.system_ids[i] for i in indices),
            charge_most_protonated=self.charge_most_protonated[indices],
            n_steps=n_steps,
            pka_25c=self.pka_25c[indices, :width],
            dh_kj_mol=self.dh_kj_mol[indices, :width],
            dcp_j_k_mol=self.dcp_j_k_mol[indices, :width],
            t_min_c=self.t_min_c[indices, :width],
            t_max_c=self.t_max_c[indices, :width],
        )


@dataclass(frozen=True)
class ComplexArrays:
    """The complexes among a set of metals and S systems, as arrays (C complexes, M metals).

    Attributes
    ----------
    complex_ids : tuple of str, length C
    metal_ids : tuple of str, length M
    metal_charge : float array [M]
    metal_count : float array [C, M]   metal ions per complex
    ligand_count : float array [C, S]  deprotonated system units per complex
    protons : float array [C]          H⁺ bound beyond the reference species (negative: OH⁻ bound)
    log_beta_25c : float array [C]     log10 β at 25 °C, I = 0, from the reference species
    dh_kj_mol : float array [C]        formation enthalpy [kJ/mol], 0 where none is published
    ligand_protons : float array [C]   protons each ligand carries in the reference species:
        0 for the rows of ``complexes.csv`` (the fully deprotonated form), n − j for a
        ``metal_binding.csv`` row that binds species j of an n-step system
    recalled : bool array [C]          the constant is recalled (``from-memory``) or a rule of
        thumb (``common-practice``), not read in a source
    """

    complex_ids: tuple[str, ...]
    metal_ids: tuple[str, ...]
    metal_charge: np.ndarray
    metal_count: np.ndarray
    ligand_count: np.ndarray
    protons: np.ndarray
    log_beta_25c: np.ndarray
    dh_kj_mol: np.ndarray
    ligand_protons: np.ndarray
    recalled: np.ndarray
    ion_sizes: Mapping[str, IonSize] = field(default_factory=dict)


def complex_arrays(catalog: Catalog, metal_ids, system_ids, ion_pairs: bool = False,
                   ion_sizes: bool = False) -> ComplexArrays:
    """The complexes of ``metal_ids`` with the systems ``system_ids`` (and their hydroxo
    complexes): the rows of ``complexes.csv``, then the selected numeric ``metal_binding.csv``
    rows of a metal-system pair that ``complexes.csv`` does not cover (moved to I = 0 and 25 °C
    by :func:`selector.chemistry.complexation.binding_log_k`, bound to the ligand species they
    name); ion pairs of ``kind = ion_pair`` only if ``ion_pairs``; the catalog's ion-size
    parameters (``ion_size.csv``) if ``ion_sizes`` (a per-species activity model)."""
    metal_ids = tuple(metal_ids)
    system_ids = tuple(system_ids)
    rows = [c for c in catalog.complexes if c.metal in metal_ids and (not c.system_id or c.system_id in system_ids)
            and (ion_pairs or not c.ion_pair)]
    if ion_sizes:
        rows = model_ion_pairs(catalog, rows)
    covered = {(c.metal, c.system_id) for c in catalog.complexes}
    bindings = [m for m in catalog.metal_binding
                if m.selected and m.log_k is not None and m.metal in metal_ids and m.system_id in system_ids
                and (m.metal, m.system_id) not in covered and catalog.ions[m.metal].charge == m.metal_charge
                and 0 <= catalog.systems[m.system_id].charge_most_protonated - m.ligand_species_charge
                <= catalog.systems[m.system_id].n_steps]
    count = len(rows) + len(bindings)
    metal_count = np.zeros((count, len(metal_ids)))
    ligand_count = np.zeros((count, len(system_ids)))
    for i, c in enumerate(rows):
        metal_count[i, metal_ids.index(c.metal)] = c.metal_count
        if c.system_id:
            ligand_count[i, system_ids.index(c.system_id)] = c.ligand_count
    ligand_protons = np.zeros(count)
    for i, m in enumerate(bindings, start=len(rows)):
        system = catalog.systems[m.system_id]
        metal_count[i, metal_ids.index(m.metal)] = 1
        ligand_count[i, system_ids.index(m.system_id)] = m.ligand_count
        ligand_protons[i] = system.n_steps - (system.charge_most_protonated - m.ligand_species_charge)
    binding_beta = binding_log_k(bindings, 0.0, 25.0)[0] if bindings else np.zeros(0)
    return ComplexArrays(
        complex_ids=tuple(c.complex_id for c in rows) + tuple(binding_species_id(m) for m in bindings),
        metal_ids=metal_ids,
        metal_charge=np.array([catalog.ions[m].charge for m in metal_ids], dtype=float),
        metal_count=metal_count, ligand_count=ligand_count,
        protons=np.array([c.protons for c in rows] + [0] * len(bindings), dtype=float),
        log_beta_25c=np.concatenate([[c.log_beta.value for c in rows], binding_beta]).astype(float),
        dh_kj_mol=np.array([c.dh_kj_mol if c.dh_kj_mol is not None else 0.0 for c in rows]
                           + [m.dh_kj_mol if m.dh_kj_mol is not None else 0.0 for m in bindings], dtype=float),
        ligand_protons=ligand_protons,
        recalled=np.array([c.log_beta.source_kind in RECALLED_KINDS for c in rows]
                          + [m.source_kind in RECALLED_KINDS for m in bindings], dtype=bool),
        ion_sizes=catalog.ion_sizes if ion_sizes else {},
    )


def model_ion_pairs(catalog: Catalog, rows: list[Complex]) -> list[Complex]:
    """Under the ion-size activity model, the ion pairs of the database its parameters come from.

    The ion-size parameters of ``ion_size.csv`` were fitted together with that database's own
    ion pairs (its Na⁺ b against halite solubility, with NaHCO3 and without NaCO3⁻ in
    phreeqc.dat), so the pairs must come from the same set: an ``ion_pair`` row takes that
    source's value from ``complex_values.csv`` and is left out where the source has none
    (phreeqc.dat carries no NaCO3⁻ and no citrate pairs).  Complexes of kind ``complex`` are
    unchanged.
    """
    sources = {size.ion_size_angstrom.source for size in catalog.ion_sizes.values()}
    values = {v.complex_id: v for v in catalog.complex_values if v.log_beta.source in sources}
    kept = []
    for c in rows:
        if not c.ion_pair:
            kept.append(c)
        elif c.complex_id in values:
            v = values[c.complex_id]
            kept.append(replace(c, log_beta=v.log_beta, dh_kj_mol=v.dh_kj_mol, uncertainty=None))
    return kept


def binding_species_id(binding: MetalBinding) -> str:
    """Species id of a ``metal_binding.csv`` complex: ``Cu-tris(+2)``, ``Ca-acetate(+1)``."""
    charge = binding.metal_charge + binding.ligand_count * binding.ligand_species_charge
    ligands = binding.system_id if binding.ligand_count == 1 else f"{binding.system_id}{binding.ligand_count}"
    return f"{binding.metal}-{ligands}({charge:+d})" if charge else f"{binding.metal}-{ligands}(0)"


def complexing_ions(catalog: Catalog, ion_ids, system_ids, ion_pairs: bool = False) -> tuple[str, ...]:
    """The ions of ``ion_ids`` that form a complex with a system of ``system_ids`` (or a
    hydroxo complex): the ions that must be components of the equilibrium."""
    by_system = _complex_formers(catalog)[ion_pairs]
    formers = set(by_system.get("", ()))
    for system_id in system_ids:
        formers.update(by_system.get(system_id, ()))
    return tuple(i for i in ion_ids if i in formers)


_FORMERS_CACHE: dict[int, tuple[Catalog, dict[bool, dict[str, frozenset[str]]]]] = {}


def _complex_formers(catalog: Catalog) -> dict[bool, dict[str, frozenset[str]]]:
    """System id ('' for hydroxo complexes) → metals with a complex of it, without and with
    ion pairs; built once per catalog (every solve asks)."""
    cached = _FORMERS_CACHE.get(id(catalog))
    if cached is not None and cached[0] is catalog:
        return cached[1]
    out: dict[bool, dict[str, frozenset[str]]] = {}
    for pairs in (False, True):
        grouped: dict[str, set[str]] = {}
        for c in catalog.complexes:
            if pairs or not c.ion_pair:
                grouped.setdefault(c.system_id, set()).add(c.metal)
        for m in catalog.metal_binding:
            if m.selected and m.log_k is not None and catalog.ions.get(m.metal) is not None \
                    and catalog.ions[m.metal].charge == m.metal_charge:
                grouped.setdefault(m.system_id, set()).add(m.metal)
        out[pairs] = {key: frozenset(value) for key, value in grouped.items()}
    _FORMERS_CACHE[id(catalog)] = (catalog, out)
    return out


@dataclass(frozen=True)
class EngineTables:
    """Everything the engine needs from the catalog, as arrays.

    Attributes
    ----------
    systems : SystemArrays over all S catalog systems
    reagent_ids : tuple of str, length R
    system_units : float array [R, S]   units of each system per formula unit
    strong_ion_ids : tuple of str, length K (H and OH excluded)
    strong_ion_charge : float array [K]
    strong_ion_counts : float array [R, K] ions of each kind per formula unit
    molar_mass_g_mol : float array [R]
    """

    systems: SystemArrays
    reagent_ids: tuple[str, ...]
    system_units: np.ndarray
    strong_ion_ids: tuple[str, ...]
    strong_ion_charge: np.ndarray
    strong_ion_counts: np.ndarray
    molar_mass_g_mol: np.ndarray

    def reagent_index(self, reagent_id: str) -> int:
        return self.reagent_ids.index(reagent_id)

    def system_index(self, system_id: str) -> int:
        return self.systems.system_ids.index(system_id)


_TABLES_CACHE: dict[int, tuple[Catalog, EngineTables]] = {}


def engine_tables(catalog: Catalog | None = None) -> EngineTables:
    """The engine arrays of ``catalog`` (default: the shipped catalog), built once."""
    catalog = catalog if catalog is not None else load_catalog()
    cached = _TABLES_CACHE.get(id(catalog))
    if cached is not None and cached[0] is catalog:
        return cached[1]
    tables = _build_tables(catalog)
    _TABLES_CACHE[id(catalog)] = (catalog, tables)
    return tables


def _build_tables(catalog: Catalog) -> EngineTables:
    systems = list(catalog.systems.values())
    width = max((s.n_steps for s in systems), default=1)
    shape = (len(systems), width)
    pka, dh, dcp, t_min, t_max = (np.full(shape, np.nan) for _ in range(5))
    for i, system in enumerate(systems):
        for j, step in enumerate(system.steps):
            pka[i, j] = step.pka_25c.value
            dh[i, j] = step.dh_kj_mol.value
            dcp[i, j] = step.dcp_j_k_mol.value
            t_min[i, j] = step.t_min_c
            t_max[i, j] = step.t_max_c
    system_arrays = SystemArrays(
        system_ids=tuple(s.system_id for s in systems),
        charge_most_protonated=np.array([s.charge_most_protonated for s in systems], dtype=int),
        n_steps=np.array([s.n_steps for s in systems], dtype=int),
        pka_25c=pka, dh_kj_mol=dh, dcp_j_k_mol=dcp, t_min_c=t_min, t_max_c=t_max,
    )
    reagents = list(catalog.reagents.values())
    system_position = {s.system_id: i for i, s in enumerate(systems)}
    ion_ids = tuple(i for i in catalog.ions if i not in WATER_IONS)
    ion_position = {ion_id: k for k, ion_id in enumerate(ion_ids)}
    units = np.zeros((len(reagents), len(systems)))
    counts = np.zeros((len(reagents), len(ion_ids)))
    for r, reagent in enumerate(reagents):
        if reagent.system_id is not None:
            units[r, system_position[reagent.system_id]] = reagent.system_units
        for ion_id, n in reagent.ions:
            if ion_id in ion_position:
                counts[r, ion_position[ion_id]] += n
    return EngineTables(
        systems=system_arrays,
        reagent_ids=tuple(r.reagent_id for r in reagents),
        system_units=units,
        strong_ion_ids=ion_ids,
        strong_ion_charge=np.array([catalog.ions[i].charge for i in ion_ids], dtype=float),
        strong_ion_counts=counts,
        molar_mass_g_mol=np.array([r.molar_mass_g_mol for r in reagents]),
    )
