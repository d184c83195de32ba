"""How much buffer a recipe makes: the spec's concentration, or the one the ranking finds."""

from __future__ import annotations

from catalog import Catalog, load_catalog
from selector.errors import InfeasibleSpecError, InputError
from selector.prices import PriceBook
from selector.spec import BufferSpec


def buffer_concentration(system_id: str, spec: BufferSpec, catalog: Catalog | None = None,
                         prices: PriceBook | None = None) -> float:
    """Total buffer concentration [mol/L]: the spec's, or the one the ranking finds.

    Without a concentration, the spec's capacity, loads, ionic strength and metal limits
    size the buffer: the cheapest verified mix of this system alone
    (:func:`selector.rank.cheapest_mix_of`, the same model as the ranking and optimiser).

    Raises
    ------
    InputError
        if the spec gives neither a concentration, a capacity nor a load.
    InfeasibleSpecError
        if this system alone cannot meet the spec.
    """
    catalog = catalog if catalog is not None else load_catalog()
    if spec.buffer_conc_mol_l is not None:
        return spec.buffer_conc_mol_l
    if spec.capacity_mol_l_per_ph is None and not spec.loads:
        raise InputError("give a buffer concentration (--conc, e.g. 50mM), a capacity (--capacity, mM per pH) "
                         "or a load (--load acid:5)")
    from selector.rank import cheapest_mix_of  # the optimiser (Pyomo) loads only when a recipe is sized by it

    row = cheapest_mix_of(system_id, spec, prices, catalog)
    if not row.feasible or row.conc_mol_l is None:
        raise InfeasibleSpecError(f"{catalog.systems[system_id].short_name} cannot meet the spec: {row.reason}", [row.reason])
    return row.conc_mol_l
