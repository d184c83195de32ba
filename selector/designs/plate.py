"""A plate of wells, every combination of pH × ionic strength (or × buffer concentration),
pipetted from a few stocks.

Layout: wells are filled row by row from A1 (A1, A2, … A12, B1 …), the pH changing
fastest, then the ionic strength (or concentration).  The stocks come from one pH series
(:func:`selector.designs.series.solve_series`) with members at the plate's lowest and
highest ionic strength (or concentration): their lowest, middle and highest pH (every
member where those cannot be mixed into every well) without their salt, concentrated
(:func:`selector.designs.stocks.stock_factor`),
one or two salt stocks, and water.  The volume of each stock in every well is one MILP over
the whole plate (:func:`selector.designs.stocks.mix_from_stocks`): every pipetted volume is
zero or at least the minimum pipette volume; each well is then re-solved from its rounded
volumes by the exact engine (pH within :data:`PH_TOL`, I within :data:`IONIC_TOL_RELATIVE`).
"""

from __future__ import annotations

import dataclasses
import string
import time
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from catalog import Catalog, load_catalog
from selector.admissible import SALT_REAGENT, titrant_ids
from selector.designs.bench import Roles
from selector.designs.common import refuse_metal_options, system_notes
from selector.designs.stocks import StockRecipe, mix_members, stock_recipes
from selector.errors import InputError, SolverError
from selector.prices import PriceBook, demo_price_book
from selector.spec import BufferSpec
from selector.textsafe import write_csv

#: Largest distance of a verified well pH from its target [pH] (issue 17).
PH_TOL = 0.01
#: Largest relative distance of a verified well I from its target (issue 17: 2 %).
IONIC_TOL_RELATIVE = 0.02
#: Fraction of each tolerance the mixing model may use (the rest is margin for rounding the
#: volumes and for the activity coefficients of an I off its target; a design choice).
MODEL_BAND_FRACTION = 0.5
#: Plate formats: wells -> (rows, columns) (the SBS/ANSI microplate formats, common practice).
PLATE_FORMATS = {96: (8, 12), 384: (16, 24)}
#: Pipetted volumes are rounded to this [µL] (a design choice; liquid handlers resolve 0.1 µL).
RESOLUTION_UL = 0.01
#: Columns of the worklist CSV (issue 17).
WORKLIST_COLUMNS = ("source", "destination well", "volume_ul")


@dataclass(frozen=True)
class Well:
    """One well: its name, targets, volumes of each stock [µL] and the exact figures."""

    well: str
    target_ph: float
    target_ionic_strength_mol_l: float
    volumes_ul: dict[str, float]
    composition_mol_l: dict[str, float]
    verified_ph: float
    verified_ionic_strength_mol_l: float
    target_conc_mol_l: float

    def as_json(self) -> dict:
        return {"well": self.well, "target_ph": self.target_ph,
                "target_ionic_strength_mol_l": self.target_ionic_strength_mol_l,
                "target_conc_mol_l": self.target_conc_mol_l,
                "volumes_ul": dict(self.volumes_ul), "composition_mol_l": dict(self.composition_mol_l),
                "verified_ph": self.verified_ph, "verified_ionic_strength_mol_l": self.verified_ionic_strength_mol_l}


@dataclass(frozen=True)
class PlateResult:
    """A verified plate: wells in layout order, the stocks with volumes and recipes."""

    plate: int
    layout: str
    well_volume_ul: float
    min_pipette_ul: float
    dead_volume_ul: float
    wells: tuple[Well, ...]
    stocks: tuple[StockRecipe, ...]
    systems: tuple[str, ...]
    temperature_c: float
    transfers: int
    solve_seconds: float
    max_ph_error: float
    max_ionic_error_relative: float
    notes: tuple[str, ...] = ()

    def worklist_rows(self) -> list[tuple[str, str, float]]:
        """(source, destination well, volume [µL]): stock by stock, wells in layout order."""
        return [(s.stock.name, w.well, w.volumes_ul[s.stock.name]) for s in self.stocks for w in self.wells
                if w.volumes_ul.get(s.stock.name, 0.0) > 0]

    def worklist_csv(self) -> str:
        """The worklist as CSV text (:func:`selector.textsafe.write_csv`)."""
        return write_csv(WORKLIST_COLUMNS, self.worklist_rows())

    def as_json(self) -> dict:
        return {"plate": self.plate, "layout": self.layout, "well_volume_ul": self.well_volume_ul,
                "min_pipette_ul": self.min_pipette_ul, "dead_volume_ul": self.dead_volume_ul,
                "temperature_c": self.temperature_c, "systems": list(self.systems), "notes": list(self.notes),
                "stocks": [s.as_json() for s in self.stocks], "wells": [w.as_json() for w in self.wells],
                "transfers": self.transfers, "max_ph_error": self.max_ph_error,
                "max_ionic_error_relative": self.max_ionic_error_relative}


def well_names(count: int, plate: int) -> list[str]:
    """The first ``count`` wells of a ``plate``-well plate, row by row (A1, A2, … B1 …)."""
    rows, columns = PLATE_FORMATS[plate]
    if count > rows * columns:
        raise InputError(f"{count} conditions do not fit a {plate}-well plate; use --plate 384 or fewer steps")
    return [f"{string.ascii_uppercase[i // columns]}{i % columns + 1}" for i in range(count)]


def _check(plate: int, well_volume_ul: float, min_pipette_ul: float, dead_volume_ul: float) -> None:
    if plate not in PLATE_FORMATS:
        raise InputError(f"plate {plate!r}: expected one of {', '.join(map(str, PLATE_FORMATS))}")
    if not well_volume_ul > 0 or min_pipette_ul < 0 or dead_volume_ul < 0:
        raise InputError("well volume must be positive, minimum pipette and dead volume zero or more")
    if min_pipette_ul > well_volume_ul:
        raise InputError(f"the minimum pipette volume {min_pipette_ul:g} µL exceeds the well volume "
                         f"{well_volume_ul:g} µL")


@dataclass(frozen=True)
class PlateTargets:
    """Per-well targets [N] and the series members the stocks come from."""

    ph: np.ndarray
    ionic_mol_l: np.ndarray
    conc_mol_l: np.ndarray
    salt_needed_mol_l: np.ndarray   # estimate, for the salt stock's concentration
    members: tuple                  # SeriesMember, pH fastest, lowest then highest of the second axis
    labels: tuple[str, ...]
    blocks: int
    systems: tuple[str, ...]


def plate_targets(spec: BufferSpec, ph_values: list[float], ionic_values: list[float],
                  conc_values: list[float] | None, salt_id: str, prices: PriceBook, catalog: Catalog,
                  max_systems: int) -> PlateTargets:
    """Wells (pH fastest, then the second axis) and the members at the second axis' two ends.

    The members at the lowest and highest I (or buffer concentration) bracket every well's
    acid/base ratio, so their buffers, mixed, reach every well.
    """
    from selector.designs.series import solve_series

    by_conc = conc_values is not None and len(conc_values) > 1
    second = conc_values if by_conc and conc_values is not None else ionic_values
    n_ph, n_second = len(ph_values), len(second)
    ends = sorted({min(second), max(second)})
    at = dataclasses.replace(spec, ph=ph_values[0], ionic_strength_mol_l=min(ionic_values),
                             buffer_conc_mol_l=conc_values[0] if conc_values else spec.buffer_conc_mol_l)
    member_ionic = [ionic_values[0]] * (n_ph * len(ends)) if by_conc else np.repeat(ends, n_ph).tolist()
    member_conc = np.repeat(ends, n_ph).tolist() if by_conc else None
    series = solve_series(at, ph_values * len(ends), prices, catalog, max_systems=max_systems, plan=False,
                          ionic_values=member_ionic, conc_values=member_conc)
    members = series.members
    low_salt = np.tile([m.composition_mol_l.get(salt_id, 0.0) for m in members[:n_ph]], n_second)
    high_salt = np.tile([m.composition_mol_l.get(salt_id, 0.0) for m in members[-n_ph:]], n_second)
    axis = np.repeat(second, n_ph)
    if by_conc:
        ionic = np.full(axis.shape, ionic_values[0])
        conc = axis
        span = ends[-1] - ends[0]
        salt = low_salt + (high_salt - low_salt) * ((axis - ends[0]) / span if span > 0 else 0.0)
        labels = tuple(f"pH {m.target_ph:g} {m.buffer_conc_mol_l * 1000:.3g} mM" for m in members)
    else:
        ionic = axis
        conc = np.tile([m.buffer_conc_mol_l for m in members[:n_ph]], n_second)
        # a 1:1 salt adds its concentration to I: each step of I above the lowest is that much more salt
        salt = low_salt + (axis - ends[0])
        labels = tuple(f"pH {m.target_ph:g} I {m.ionic_strength_mol_l * 1000:.0f} mM" for m in members)
    return PlateTargets(np.tile(ph_values, n_second), ionic, conc, salt, tuple(members), labels, len(ends),
                        series.systems)


def solve_plate(spec: BufferSpec, ph_values: Sequence[float], ionic_values_mol_l: Sequence[float],
                well_volume_ul: float, plate: int = 96, min_pipette_ul: float = 1.0, dead_volume_ul: float = 20.0,
                prices: PriceBook | None = None, catalog: Catalog | None = None,
                max_systems: int = 2, conc_values_mol_l: Sequence[float] | None = None) -> PlateResult:
    """Every pH × ionic strength (or × buffer concentration) on a plate, from a few stocks, verified.

    Parameters
    ----------
    spec : BufferSpec
        Temperature [°C], buffer concentration [mol/L] (or capacity), reagent filters; its
        ``ph`` and ionic strength are ignored.
    ph_values, ionic_values_mol_l : the plate's pH and ionic strengths [mol/L]
    well_volume_ul, min_pipette_ul, dead_volume_ul : [µL] (dead volume per stock)
    plate : 96 or 384
    max_systems : at most this many buffer systems
    conc_values_mol_l : buffer concentrations [mol/L]; several make them the second axis
        (the ionic strength then one value)

    Raises
    ------
    InputError
        too many conditions for the plate, a bad volume, two ranges besides the pH.
    InfeasibleSpecError
        no series at the ends of the second axis, or no volumes meet the minimum pipette
        rule (in words).
    SolverError
        a well misses its pH by more than 0.01 or its I by more than 2 %.
    """
    started = time.perf_counter()
    catalog = catalog if catalog is not None else load_catalog()
    prices = prices if prices is not None else demo_price_book(catalog)
    _check(plate, well_volume_ul, min_pipette_ul, dead_volume_ul)
    ph_values, ionic_values = [float(p) for p in ph_values], [float(i) for i in ionic_values_mol_l]
    concs = None if conc_values_mol_l is None else [float(c) for c in conc_values_mol_l]
    if concs is not None and len(concs) > 1 and len(ionic_values) > 1:
        raise InputError("a plate varies the ionic strength or the buffer concentration beside the pH, not both")
    refuse_metal_options(spec, "plate")
    if spec.ionic_strength_min_mol_l is not None or spec.ionic_strength_max_mol_l is not None:
        raise InputError("a plate sets each well's ionic strength: --ionic-strength-max and ionic-strength "
                         "bounds do not apply; give --ionic-strength (one value or FROM:TO:STEP)")
    second = len(concs) if concs is not None and len(concs) > 1 else len(ionic_values)
    names = well_names(len(ph_values) * second, plate)
    salt_id = SALT_REAGENT[spec.salt]
    roles = Roles(tuple(r for r in titrant_ids(spec.counter_ion) if r), salt_id)
    targets = plate_targets(spec, ph_values, ionic_values, concs, salt_id, prices, catalog, max_systems)
    ph, ionic = targets.ph, targets.ionic_mol_l
    stocks, mixing = mix_members([m.composition_mol_l for m in targets.members], targets.labels,
                                 targets.salt_needed_mol_l, ph, ionic, targets.conc_mol_l, well_volume_ul,
                                 min_pipette_ul, RESOLUTION_UL, salt_id, spec.temperature_c, catalog,
                                 blocks=targets.blocks, ph_band=MODEL_BAND_FRACTION * PH_TOL,
                                 ionic_band_relative=MODEL_BAND_FRACTION * IONIC_TOL_RELATIVE)
    ph_error = np.abs(mixing.verified_ph - ph)
    i_error = np.abs(mixing.verified_ionic_mol_l - ionic) / ionic
    bad = [f"{names[w]}: pH {mixing.verified_ph[w]:.4f} (target {ph[w]:g}), I {mixing.verified_ionic_mol_l[w]:.4f}"
           for w in range(len(names)) if ph_error[w] > PH_TOL or i_error[w] > IONIC_TOL_RELATIVE]
    small = (mixing.volumes > 0) & (mixing.volumes < min_pipette_ul - 1e-9)
    bad += [f"{names[w]}: a volume below {min_pipette_ul:g} µL" for w in np.flatnonzero(small.any(axis=1))]
    if bad:
        raise SolverError("wells miss their targets after rounding the volumes: " + "; ".join(bad[:5]))
    used = mixing.volumes.sum(axis=0) > 0
    kept = [s for s, u in zip(stocks, used) if u]
    volumes = mixing.volumes[:, used]
    made = dataclasses.replace(spec, ph=ph_values[0])
    recipes = stock_recipes(kept, volumes.sum(axis=0) / 1000.0, dead_volume_ul / 1000.0, made, roles, catalog, prices)
    wells = tuple(Well(names[w], float(ph[w]), float(ionic[w]),
                       {s.name: round(float(v), 6) for s, v in zip(kept, volumes[w]) if v > 0},
                       {r: float(c) for r, c in zip(mixing.reagent_ids, mixing.compositions[w]) if c > 0},
                       float(mixing.verified_ph[w]), float(mixing.verified_ionic_mol_l[w]),
                       float(targets.conc_mol_l[w]))
                  for w in range(len(names)))
    rows, columns = PLATE_FORMATS[plate]
    axis = "buffer concentration" if concs is not None and len(concs) > 1 else "ionic strength"
    layout = (f"{plate}-well plate ({rows} rows × {columns} columns), filled row by row from A1, pH changing "
              f"fastest, then {axis}")
    return PlateResult(plate, layout, well_volume_ul, min_pipette_ul, dead_volume_ul, wells, recipes, targets.systems,
                       spec.temperature_c, int(np.count_nonzero(volumes)), time.perf_counter() - started,
                       float(ph_error.max()), float(i_error.max()), system_notes(targets.systems, catalog))
