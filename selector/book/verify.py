"""A saved recipe re-solved with a catalog: the drift of its pH at use and of its meter reading."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from catalog import Catalog, load_catalog
from selector.book.content import catalog_fingerprint, composition_of, figure_text, meter_composition
from selector.book.store import Book, BookEntry, show_recipe, utc_now
from selector.errors import InputError

#: Largest drift of a re-solved pH from the saved one still reported as unchanged [pH]
#: (the tolerance recipes are verified to, :data:`selector.recipe.VERIFY_TOLERANCE_PH`).
VERIFY_DRIFT_TOLERANCE_PH = 0.005

@dataclass(frozen=True)
class Verification:
    """A saved recipe re-solved with a catalog: the saved and the new figures and their drift [pH]."""

    name: str
    version: int
    catalog_changed: bool
    saved_catalog_fingerprint: str
    catalog_fingerprint: str
    target_ph: float | None
    saved_verified_ph_at_use: float | None
    verified_ph_at_use: float | None
    drift_ph_at_use: float | None
    saved_meter_ph_at_prep: float | None
    meter_ph_at_prep: float | None
    drift_meter_ph: float | None
    temperature_c: float
    prep_temperature_c: float
    ionic_strength_mol_l: float | None
    capacity_mol_l_per_ph: float | None
    within_tolerance: bool
    tolerance_ph: float
    problem: str = ""

    def as_json(self) -> dict:
        return dataclasses.asdict(self)

    def text(self) -> str:
        """The readable report of ``poise book verify``."""
        out = [f"{self.name} version {self.version}, re-solved with "
               + ("a changed catalog" if self.catalog_changed else "the same catalog")
               + f" ({self.saved_catalog_fingerprint} -> {self.catalog_fingerprint})"]
        if self.problem:
            return "\n".join(out + [f"  cannot re-solve: {self.problem}"])
        out.append(f"  pH at {self.temperature_c:g} °C (use): saved {figure_text(self.saved_verified_ph_at_use)}, "
                   f"now {self.verified_ph_at_use:.4f} (drift {self.drift_ph_at_use:+.4f})"
                   if self.drift_ph_at_use is not None else
                   f"  pH at {self.temperature_c:g} °C (use): now {figure_text(self.verified_ph_at_use)}")
        if self.meter_ph_at_prep is not None:
            drift = f" (drift {self.drift_meter_ph:+.4f})" if self.drift_meter_ph is not None else ""
            out.append(f"  meter pH at {self.prep_temperature_c:g} °C (preparation): saved "
                       f"{figure_text(self.saved_meter_ph_at_prep)}, now {self.meter_ph_at_prep:.4f}{drift}")
        if self.target_ph is not None and self.verified_ph_at_use is not None:
            out.append(f"  target pH {self.target_ph:g}: now {self.verified_ph_at_use - self.target_ph:+.4f} from it")
        verdict = "within" if self.within_tolerance else "OUTSIDE"
        out.append(f"  {verdict} ± {self.tolerance_ph:g} pH of the saved figures and the target")
        return "\n".join(out)


def _drift(now: float | None, saved: float | None) -> float | None:
    return None if now is None or saved is None else now - saved


def verify_entry(entry: BookEntry, catalog: Catalog | None = None) -> Verification:
    """Re-solve a saved recipe's composition with ``catalog`` (default: today's shipped catalog).

    The stored composition is solved at the use temperature and (what the meter reads) at
    the preparation temperature in one batched call of
    :func:`selector.chemistry.equilibrium.solve_equilibrium`; the drift is new − saved.
    ``within_tolerance``: every drift, and the new pH at use from the target, within
    :data:`VERIFY_DRIFT_TOLERANCE_PH`.  A reagent the catalog no longer has, or a solution
    the engine cannot solve, is reported in ``problem`` (and is not within tolerance).
    """
    from selector.chemistry.equilibrium import solve_equilibrium

    catalog = catalog if catalog is not None else load_catalog()
    figures = entry.figures
    use_c = figures.get("temperature_c", 25.0)
    prep_c = figures.get("prep_temperature_c", use_c)
    composition = composition_of(entry.recipe)
    meter = meter_composition(entry.recipe, composition)
    fingerprint = catalog_fingerprint(catalog)
    failed = Verification(
        name=entry.name, version=entry.version, catalog_changed=fingerprint != entry.catalog_fingerprint,
        saved_catalog_fingerprint=entry.catalog_fingerprint, catalog_fingerprint=fingerprint,
        target_ph=figures.get("target_ph"), saved_verified_ph_at_use=figures.get("verified_ph_at_use"),
        verified_ph_at_use=None, drift_ph_at_use=None, saved_meter_ph_at_prep=figures.get("meter_ph_at_prep"),
        meter_ph_at_prep=None, drift_meter_ph=None, temperature_c=use_c, prep_temperature_c=prep_c,
        ionic_strength_mol_l=None, capacity_mol_l_per_ph=None, within_tolerance=False,
        tolerance_ph=VERIFY_DRIFT_TOLERANCE_PH)
    ids = list(dict.fromkeys([*composition, *meter]))
    missing = [r for r in ids if r not in catalog.reagents]
    if missing:
        return dataclasses.replace(failed, problem=f"reagent(s) no longer in the catalog: {', '.join(missing)}")
    amounts = np.array([[composition.get(r, 0.0) for r in ids], [meter.get(r, 0.0) for r in ids]])
    try:
        eq = solve_equilibrium(ids, amounts, np.array([use_c, prep_c]), catalog=catalog, strict=False)
    except InputError as error:
        return dataclasses.replace(failed, problem=str(error))
    if int(eq.status[0]) != 0 or int(eq.status[1]) != 0:
        return dataclasses.replace(failed, problem=eq.status_message(0 if int(eq.status[0]) != 0 else 1))
    ph_use, ph_prep = float(eq.ph[0]), float(eq.ph[1])
    drift_use = _drift(ph_use, failed.saved_verified_ph_at_use)
    drift_prep = _drift(ph_prep, failed.saved_meter_ph_at_prep)
    gaps = [d for d in (drift_use, drift_prep) if d is not None]
    if failed.target_ph is not None:
        gaps.append(ph_use - failed.target_ph)
    return dataclasses.replace(
        failed, verified_ph_at_use=ph_use, drift_ph_at_use=drift_use,
        meter_ph_at_prep=ph_prep if "meter_ph_at_prep" in figures else None, drift_meter_ph=drift_prep,
        ionic_strength_mol_l=float(eq.ionic_strength_mol_l[0]), capacity_mol_l_per_ph=float(eq.capacity_mol_l_per_ph[0]),
        within_tolerance=all(abs(g) <= VERIFY_DRIFT_TOLERANCE_PH for g in gaps))


def verify_recipe(book: Book, name: str, version: int | None = None, catalog: Catalog | None = None,
                  record: bool = True) -> Verification:
    """:func:`verify_entry` of a saved version (default: the latest); with ``record`` the result is logged in the book."""
    entry = show_recipe(book, name, version)
    result = verify_entry(entry, catalog)
    if record:
        with book.writing() as con:
            con.execute("INSERT INTO verifications (recipe_id, version, verified_at, catalog_fingerprint, "
                        "verified_ph_at_use, drift_ph, within_tolerance) SELECT recipe_id, ?, ?, ?, ?, ?, ? "
                        "FROM recipes WHERE name = ?",
                        (entry.version, utc_now(), result.catalog_fingerprint, result.verified_ph_at_use,
                         result.drift_ph_at_use, int(result.within_tolerance), name))
    return result


def verification_log(book: Book, name: str) -> list[dict]:
    """Every recorded verification of ``name``, oldest first."""
    with book.errors():
        rows = book.connection.execute(
            "SELECT x.version, x.verified_at, x.catalog_fingerprint, x.verified_ph_at_use, x.drift_ph, "
            "x.within_tolerance FROM verifications x JOIN recipes r USING (recipe_id) WHERE r.name = ? "
            "ORDER BY x.rowid", (name,)).fetchall()
    keys = ("version", "verified_at", "catalog_fingerprint", "verified_ph_at_use", "drift_ph", "within_tolerance")
    return [dict(zip(keys, row)) for row in rows]
