"""The optimiser's model as HiGHS receives it (selector.optimise.highs_link).

No published value here: properties of the hand-over (source of every check value: Pyomo's
own general reader, ``generate_standard_repn``, on the same model; tolerance: exact).  Cases: every row of four models
(the README rank spec with a calcium limit, a temperature window with an acid load, an
ionic-strength target with an osmolarity band, an ionic-strength band; k = 2, at most 4
reagents, each objective) read by the direct reader equals Pyomo's general reader
(coefficients, their variables in order, constant: exactly); and a change made in Pyomo
after the hand-over (a Param written, a variable fixed) reaches the next solve.
"""

from __future__ import annotations

import pyomo.core as pyo
import pytest
from pyomo.repn import generate_standard_repn

from selector import make_spec
from selector.optimise import make_problem
from selector.optimise.highs_link import linear_form

SPECS = [
    dict(ph=7.4, temperature_c=37.0, capacity_mol_l_per_ph=0.010, metals=[{"metal": "Ca", "max_bound_fraction": 0.05}]),
    dict(ph=7.4, temperature_c=37.0, temperature_min_c=20.0, temperature_max_c=37.0, tolerance_ph=0.3,
         capacity_mol_l_per_ph=0.02, loads=[{"kind": "acid", "conc_mol_l": 0.002}]),
    dict(ph=7.2, ionic_strength_mol_l=0.1, buffer_conc_mol_l=0.05, osmolarity_min_osmol_l=0.2,
         osmolarity_max_osmol_l=0.4),
    dict(ph=6.0, ionic_strength_min_mol_l=0.05, ionic_strength_max_mol_l=0.2, capacity_mol_l_per_ph=0.01),
]


@pytest.mark.parametrize("objective", ["cost", "ionic-strength", "temperature-drift", "reagents"])
@pytest.mark.parametrize("spec", SPECS)
def test_direct_reader_equals_pyomos_general_reader(shipped_catalog, spec, objective):
    problem = make_problem(make_spec(**spec), catalog=shipped_catalog, max_systems=2, max_reagents=4,
                           objective=objective)
    m = problem.model
    fixed = [(v, v.value) for v in m.component_data_objects(pyo.Var) if v.fixed]
    for v, _ in fixed:      # as the hand-over reads them: fixed variables are columns
        v.unfix()
    try:
        for con in m.component_data_objects(pyo.Constraint, active=True):
            general = generate_standard_repn(con.body, quadratic=False, compute_values=False)
            coefs, variables, constant = linear_form(con.body)
            assert [id(v) for v in variables] == [id(v) for v in general.linear_vars], con.name
            assert [pyo.value(c) for c in coefs] == [pyo.value(c) for c in general.linear_coefs], con.name
            assert pyo.value(constant) == pyo.value(general.constant), con.name
    finally:
        for v, value in fixed:
            v.fix(value)


def test_a_change_in_pyomo_reaches_the_next_solve(shipped_catalog):
    # Hand the model over, then fix the cheapest mix's first reagent at twice its amount
    # and write a Param: the next solve must see both (the amount held, the model re-solved).
    problem = make_problem(make_spec(**SPECS[0]), catalog=shipped_catalog, max_systems=1)
    assert problem.solver.solve(problem.model) == "optimal"
    x = problem.amounts()
    first = int(next(i for i, v in enumerate(x) if v > 0))
    var = problem.amount_vars[first]
    var.fix(2.0 * float(x[first]))
    try:
        status = problem.solver.solve(problem.model)
        assert status in ("optimal", "infeasible")
        if status == "optimal":
            assert problem.amounts()[first] == pytest.approx(2.0 * float(x[first]), rel=1e-12)
    finally:
        var.unfix()
    problem.recompute(0.2)      # new Params at I = 0.2 mol/L
    assert problem.solver.solve(problem.model) == "optimal"
    assert problem.solver.link is not None
    row = problem.solver.link.row[problem.model.capacity]
    col = problem.solver.link.column[id(problem.amount_vars[first])]
    _, index, value = problem.solver.highs.getRowEntries(row)
    written = dict(zip(index.tolist(), value.tolist()))
    assert written.get(col, 0.0) == pytest.approx(pyo.value(problem.model.b[problem.data.reagent_ids[first]]), rel=1e-15)
