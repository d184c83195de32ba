"""The curves of a side-by-side comparison: pH against temperature, β against pH, cost.

For each compared (feasible) system's verified mix:

- **pH against temperature** over the spec's window, widened to take in the preparation
  and use temperatures (:func:`selector.curves.temperature_axis_c`,
  :func:`selector.chemistry.properties.temperature_profile`, one batch per mix);
- **β against pH** at the mix's buffer concentration over the system's pKa′ ± 2
  (:func:`selector.curves.capacity_curve`: the buffer forms titrated with the spec's strong
  acid and base, the salt of the mix kept), with every pKa′ marked;
- **cost** per litre of the mix (from the ranking's row).

Pure numbers for a picture; the app draws them.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from catalog import Catalog
from selector.admissible import LOAD_REAGENT, titrant_ids
from selector.chemistry.properties import temperature_profile
from selector.curves import PkaMark, capacity_curve, temperature_axis_c
from selector.spec import BufferSpec

__all__ = ["ComparisonCurves", "comparison_curves", "spec_temperatures_c"]


@dataclass(frozen=True)
class ComparisonCurves:
    """The curves of one system's mix.

    Attributes
    ----------
    system_id, system_name : the system
    temperatures_c, ph_at_temperature : the pH at each temperature [°C], [pH]
    ph, capacity_mol_l_per_ph : β against pH at the mix's buffer concentration [pH], [mol/L per pH]
    pka : the system's pKa′ at the spec's temperature and the mix's ionic strength, on the β axis
    cost_per_l : [currency/L]
    """

    system_id: str
    system_name: str
    temperatures_c: tuple[float, ...]
    ph_at_temperature: tuple[float, ...]
    ph: tuple[float, ...]
    capacity_mol_l_per_ph: tuple[float, ...]
    pka: tuple[PkaMark, ...]
    cost_per_l: float


def spec_temperatures_c(spec: BufferSpec):
    """The temperature axis [°C] of a spec's pictures: use, preparation and window temperatures
    (:func:`selector.curves.temperature_axis_c`)."""
    window = None
    if spec.temperature_min_c is not None and spec.temperature_max_c is not None:
        window = (spec.temperature_min_c, spec.temperature_max_c)
    return temperature_axis_c(spec.temperature_c, spec.prep_temperature_c, window)


def comparison_curves(rows: Sequence, spec: BufferSpec, catalog: Catalog) -> list[ComparisonCurves]:
    """The curves of each feasible row (a :class:`selector.rank.RankedSystem`) for ``spec``.

    Parameters
    ----------
    rows : ranked rows; those without a verified mix are left out
    spec : the spec they were ranked for
    catalog : the catalog used throughout
    """
    temperatures = spec_temperatures_c(spec)
    acid_id, base_id = titrant_ids(spec.counter_ion)
    out = []
    for r in rows:
        if not r.feasible or not r.reagents_mol_l or r.cost_per_l is None:
            continue
        ids = list(r.reagents_mol_l)
        ph_t = temperature_profile(ids, [r.reagents_mol_l[i] for i in ids], temperatures, catalog=catalog,
                                   strict=False)
        beta = capacity_curve(dict(r.reagents_mol_l), spec.temperature_c, catalog, target_ph=spec.ph,
                              ionic_strength_mol_l=r.ionic_strength_mol_l, acid_id=acid_id,
                              base_id=base_id or LOAD_REAGENT["base"])
        out.append(ComparisonCurves(r.system_id, catalog.systems[r.system_id].name,
                                    tuple(float(t) for t in temperatures), tuple(float(p) for p in ph_t),
                                    beta.ph, beta.capacity_mol_l_per_ph, beta.pka, float(r.cost_per_l)))
    return out
