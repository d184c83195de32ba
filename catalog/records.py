"""Frozen, typed records of the poise catalog.

The records are built once by :func:`catalog.load_catalog` from the CSV tables in
``catalog/data`` and never change afterwards.  Units are in the field names.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

#: Kinds of provenance a number in the catalog may have.
SOURCE_KINDS = (
    "measured-review",
    "measured",
    "handbook",
    "estimated",
    "computed",
    "from-memory",
    "common-practice",
    "demo",
)

#: Kinds that may stand without a key into the source table.
UNKEYED_SOURCE_KINDS = ("from-memory", "common-practice", "demo")

#: Flags that describe reactive groups and interferences of a buffer system.
FLAG_VOCABULARY = (
    "primary_amine",
    "cis_diol_binding",
    "ca_mg_precipitation",
    "photo_peroxide",
    "volatile_ms",
    "freezing_ph_shift",
    "co2_uptake",
    "biological_activity",
    "protein_assay_interference",
    "metal_chelator",
    "chelating_agent",
    "redox_active",
    "unstable",
    "phosphate",
)

HAZARD_FLAG_VOCABULARY = (
    "corrosive",
    "toxic",
    "acutely_toxic",
    "oxidiser",
    "reprotoxic",
    "irritant",
    "flammable",
    "toxic_gas_with_acid",
    "environmental",
    "controlled",
)

QUALITATIVE_BINDING = ("none", "negligible", "weak", "moderate", "strong", "precipitates")


@dataclass(frozen=True)
class Sourced:
    """A number with its provenance: ``source`` is a key of the source table or ''."""

    value: float
    source: str
    source_kind: str


#: Quantities of a dissociation step, each with one or more published values (step_values.csv).
STEP_QUANTITIES = ("pka_25c", "dh_kj_mol", "dcp_j_k_mol")


@dataclass(frozen=True)
class PublishedValue:
    """One published value of a step's quantity, as a row of ``step_values.csv`` gives it.

    ``uncertainty`` is the source's stated uncertainty (same unit as the value) or None;
    ``chosen`` marks a deliberate choice against the selection policy, ``why`` says why;
    ``rejected`` marks a value judged wrong (``why`` says why): listed, never used, not counted
    in the spread.
    """

    value: float
    uncertainty: float | None
    source: str
    source_kind: str
    method: str
    conditions: str
    chosen: bool
    why: str
    note: str
    rejected: bool = False


@dataclass(frozen=True)
class Selected(Sourced):
    """The value the engine uses, chosen among every published value of a quantity.

    It is a :class:`Sourced` (``value``, ``source``, ``source_kind`` of the chosen value) that
    also carries every published value (``values``, the chosen one at ``chosen_index``), the
    uncertainty of the chosen value and the rule that gave it (``stated``, ``spread`` or
    ``default``), and the reason for the choice (see :mod:`catalog.selection`).
    """

    uncertainty: float
    uncertainty_rule: str
    reason: str
    values: tuple[PublishedValue, ...]
    chosen_index: int

    @property
    def alternatives(self) -> tuple[PublishedValue, ...]:
        """Every published value but the chosen one, in table order."""
        return tuple(v for k, v in enumerate(self.values) if k != self.chosen_index)


@dataclass(frozen=True)
class Source:
    key: str
    citation: str
    doi_or_isbn: str


@dataclass(frozen=True)
class Step:
    """One dissociation step H(n-j+1)A -> H(n-j)A + H+ of a system (j = ``step``).

    pKa (25 °C, I = 0), ΔH° [kJ/mol] and ΔCp° [J/(K mol)] are each the value chosen among
    the published ones (:class:`Selected`, a :class:`Sourced` with the alternatives).
    """

    system_id: str
    step: int
    pka_25c: Selected
    dh_kj_mol: Selected
    dcp_j_k_mol: Selected
    t_min_c: float
    t_max_c: float
    note: str



def short_system_name(name: str) -> str:
    """A system's name up to any bracket (``Tris`` for ``Tris (tris(hydroxymethyl)aminomethane)``):
    the one way text names a system; :attr:`System.short_name` is this of ``System.name``."""
    return name.split(" (")[0]

@dataclass(frozen=True)
class System:
    """An acid-base family.  Species j (0 = most protonated) has charge z0 - j."""

    system_id: str
    name: str
    aliases: tuple[str, ...]
    charge_most_protonated: int
    hazardous: bool
    hazard_note: str
    notes: str
    steps: tuple[Step, ...] = field(default=())

    @property
    def n_steps(self) -> int:
        return len(self.steps)

    @property
    def short_name(self) -> str:
        """The name up to any bracket (``Tris`` for ``Tris (tris(hydroxymethyl)aminomethane)``):
        the one way text output names a system (JSON keeps ``system_id``)."""
        return short_system_name(self.name)

    def species_charge(self, j: int) -> int:
        """Charge of species j (j protons lost from the most protonated form)."""
        return self.charge_most_protonated - j


@dataclass(frozen=True)
class Ion:
    """A strong ion (fully dissociated counter-ion, or H+/OH- of a strong acid/base)."""

    ion_id: str
    name: str
    charge: int


@dataclass(frozen=True)
class Reagent:
    """Something a lab buys and weighs.

    ``protons_removed`` counts protons taken from ``system_units`` units of the most
    protonated form of the system; it follows from charge neutrality of the formula.
    """

    reagent_id: str
    name: str
    formula: str
    aliases: tuple[str, ...]
    system_id: str | None
    system_units: int
    ions: tuple[tuple[str, int], ...]
    hydrate_water: int
    molar_mass_g_mol: float
    physical_form: str
    solubility_g_l_25c: Sourced | None
    purity_fraction: float
    purity_source_kind: str
    demo_price_per_kg: Sourced | None
    hazard_flags: tuple[str, ...]
    cautions: str
    protons_removed: int = 0
    density_g_ml: Sourced | None = None

    @property
    def liquid_density_g_ml(self) -> float | None:
        """Density of the liquid as bought near 20 °C [g/mL] (``density_g_ml`` of
        ``reagents.csv``, with its source), or None for a solid or a liquid without one: the
        one accessor through which volumes of a product become masses (recipes, price sheets)."""
        if self.physical_form != "liquid" or self.density_g_ml is None:
            return None
        return self.density_g_ml.value


#: Values of the ``chosen`` column of ``metal_binding.csv``: ``yes`` overrides the selection
#: policy, ``no`` keeps a published value on record but out of the choice and the spread.
CHOSEN_OVERRIDES = ("yes", "no")

#: The selection policy for several published values of one constant: the best source kind
#: wins (critically evaluated compilation > primary measurement > handbook > computed or
#: estimated > recalled > rule of thumb); among equals, the first row listed.
SOURCE_KIND_PREFERENCE = {
    "measured-review": 0, "measured": 1, "handbook": 2, "computed": 3, "estimated": 3,
    "from-memory": 4, "common-practice": 5, "demo": 6,
}


@dataclass(frozen=True)
class MetalBinding:
    """A metal-binding statement: a log K of a complex, or a qualitative word.

    A numeric row is the constant of M^(metal_charge) + n L ⇌ M L_n (n = ``ligand_count``,
    L the ligand species of charge ``ligand_species_charge``) as one source gives it, at
    ``ionic_strength_mol_l`` [mol/L] and ``temperature_c`` [°C], with the reaction enthalpy
    ``dh_kj_mol`` [kJ/mol] where that source gives one.  Several sources may give the same
    complex: ``selected`` marks the one in force (policy or override), ``why`` says why an
    override was made, ``rejected`` marks a value kept on record only.  A qualitative row is
    always ``selected``.
    """

    system_id: str
    metal: str
    ligand_species_charge: int
    log_k: Sourced | None
    ionic_strength_mol_l: float | None
    temperature_c: float | None
    qualitative: str
    source: str
    source_kind: str
    note: str
    metal_charge: int = 2
    ligand_count: int = 1
    dh_kj_mol: float | None = None
    selected: bool = True
    rejected: bool = False
    why: str = ""

    @property
    def complex_key(self) -> tuple[str, str, int, int, int]:
        """The complex a numeric row describes: (system, metal, metal charge, ligand charge, n)."""
        return (self.system_id, self.metal, self.metal_charge, self.ligand_species_charge, self.ligand_count)


@dataclass(frozen=True)
class Complex:
    """A complex as a species of the equilibrium: ``metal_count`` M + ``ligand_count`` L +
    ``protons`` H⁺ ⇌ complex, L the fully deprotonated form of ``system_id`` (none for a
    hydroxo complex, whose ``protons`` are negative: M + H₂O ⇌ MOH + H⁺).

    ``log_beta`` is log10 of the formation constant at 25 °C and I = 0; ``dh_kj_mol`` the
    formation enthalpy [kJ/mol] where the source gives one (None: no temperature correction);
    ``uncertainty`` the stated uncertainty of log β where the source gives one.
    ``ion_pair`` marks a weak ion pair (kind ``ion_pair`` in the table), a species only when
    ion pairs are asked for.
    """

    complex_id: str
    metal: str
    metal_count: int
    system_id: str
    ligand_count: int
    protons: int
    log_beta: Sourced
    dh_kj_mol: float | None
    uncertainty: float | None
    conditions: str
    note: str
    ion_pair: bool = False


@dataclass(frozen=True)
class ComplexValue:
    """Another published value of a complex's log β (and ΔH) (``complex_values.csv``); ``rejected``
    marks a value judged wrong (``why`` says why): listed, never used, not counted in the spread."""

    complex_id: str
    log_beta: Sourced
    dh_kj_mol: float | None
    reference: str
    chosen: bool
    why: str
    note: str
    rejected: bool = False


@dataclass(frozen=True)
class IonSize:
    """Ion-size activity parameters of one species (``ion_size.csv``): å [Å] and b [kg/mol]."""

    species: str
    formula: str
    charge: int
    ion_size_angstrom: Sourced
    b_kg_mol: float
    reference: str
    note: str


@dataclass(frozen=True)
class UvCutoff:
    system_id: str
    uv_cutoff_nm: Sourced
    conc_mol_l: float | None
    note: str


@dataclass(frozen=True)
class Polymerisation:
    """A system whose monomeric species (the only ones the engine models) give way to polymeric
    species above a total concentration."""

    system_id: str
    above_mol_l: Sourced
    species: str
    note: str


@dataclass(frozen=True)
class Solid:
    """A precipitate's dissolution reaction and solubility product.

    ``components`` are (token, count): a cation id of ions.csv, ``H`` (the proton; negative
    when taken up) or ``SYSTEM(CHARGE)`` (a buffer species); log10 K at 25 °C and I = 0 is
    ``log_k_25c``; ``dh_kj_mol`` [kJ/mol] is None where the source publishes none.
    ``forms_slowly`` marks a solid that is often supersaturated for hours to days.
    """

    solid_id: str
    name: str
    formula: str
    components: tuple[tuple[str, int], ...]
    log_k_25c: Sourced
    dh_kj_mol: float | None
    reference: str
    forms_slowly: bool
    note: str


@dataclass(frozen=True)
class Gas:
    """A gas that dissolves as the neutral, most protonated species of a buffer system (Henry's law).

    gas = species(aq): ``log_k_25c`` is log10 (m / p) [m in mol/kg, p in atm] at 25 °C and
    I = 0; ``dh_kj_mol`` [kJ/mol] is the source's ΔH° (None where it gives none);
    ``analytic`` holds the source's log K(T) coefficients A1..A6 of
    log K = A1 + A2 T + A3/T + A4 log10 T + A5/T² + A6 T² (T in K), empty where it gives none.
    ``system_id`` is None for the solvent's own vapour (H₂O(g): log K = log10 (a_w / p)).
    """

    gas_id: str
    name: str
    formula: str
    system_id: str | None
    log_k_25c: Sourced
    dh_kj_mol: float | None
    analytic: tuple[float, ...]
    reference: str
    note: str


@dataclass(frozen=True)
class Flag:
    system_id: str
    flag: str
    detail: str
    source: str
    source_kind: str


@dataclass(frozen=True)
class PhStandard:
    """A pH standard buffer: components as molalities and its pH(PS) across temperature."""

    standard_id: str
    name: str
    components_mol_kg: tuple[tuple[str, float], ...]
    values: tuple[tuple[float, Sourced], ...]
    preparation: str
    note: str


@dataclass(frozen=True)
class Catalog:
    """The whole catalog: every record, keyed by id, plus the name index."""

    sources: dict[str, Source]
    systems: dict[str, System]
    ions: dict[str, Ion]
    reagents: dict[str, Reagent]
    metal_binding: tuple[MetalBinding, ...]
    uv_cutoffs: dict[str, UvCutoff]
    flags: tuple[Flag, ...]
    reagent_names: dict[str, str]
    system_names: dict[str, str]
    ph_standards: dict[str, PhStandard] = field(default_factory=dict)
    polymerisation: dict[str, Polymerisation] = field(default_factory=dict)
    solids: dict[str, Solid] = field(default_factory=dict)
    complexes: tuple[Complex, ...] = ()
    ion_sizes: dict[str, IonSize] = field(default_factory=dict)
    complex_values: tuple[ComplexValue, ...] = ()
    gases: dict[str, Gas] = field(default_factory=dict)

    def flags_of(self, system_id: str) -> tuple[Flag, ...]:
        return tuple(f for f in self.flags if f.system_id == system_id)

    @cached_property
    def _binding_by_system(self) -> dict[str, tuple[MetalBinding, ...]]:
        """The binding rows grouped by system id, built once (the records are frozen)."""
        grouped: dict[str, list[MetalBinding]] = {}
        for m in self.metal_binding:
            grouped.setdefault(m.system_id, []).append(m)
        return {system_id: tuple(rows) for system_id, rows in grouped.items()}

    def metal_binding_of(self, system_id: str, selected_only: bool = False) -> tuple[MetalBinding, ...]:
        """Binding rows of a system; with ``selected_only`` the rows in force (one value per complex)."""
        rows = self._binding_by_system.get(system_id, ())
        return rows if not selected_only else tuple(m for m in rows if m.selected)

    def binding_values_of(self, binding: MetalBinding) -> tuple[MetalBinding, ...]:
        """Every published value of the complex ``binding`` describes (its alternatives included)."""
        if binding.log_k is None:
            return (binding,)
        return tuple(m for m in self.metal_binding
                     if m.log_k is not None and m.complex_key == binding.complex_key)
