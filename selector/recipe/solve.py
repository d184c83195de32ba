"""Exact compositions for recipes: one free amount along a line of compositions.

A route fixes every amount but one (the titrant, or the split between two forms): the
compositions are ``base + a·direction`` for a scalar ``a``, and the pH is monotone in
``a``.  :func:`find_amount` finds the ``a`` whose exact pH (the engine of
:mod:`selector.chemistry.equilibrium`, Davies activity, I self-consistent) is the target;
:func:`solve_composition` adds the salt that brings the ionic strength to a target.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from catalog import Catalog
from selector.chemistry.equilibrium import solve_equilibrium
from selector.errors import InfeasibleSpecError, PhOutOfReachError
from selector.spec import BufferSpec

#: Points per batch of the vectorised root find (three batches narrow the bracket 32³-fold).
GRID_POINTS = 33
#: Batches of the root find before the last linear interpolation.
GRID_ROUNDS = 4
#: Rounds of the salt update towards an ionic-strength target.
SALT_ROUNDS = 8
#: Ionic strength within which the target counts as met [mol/L].
IONIC_STRENGTH_TOLERANCE_MOL_L = 1e-9


@dataclass(frozen=True)
class AmountLine:
    """Compositions base + a·direction over reagent ids [mol/L], for a scalar free amount a."""

    ids: tuple[str, ...]
    base: np.ndarray
    direction: np.ndarray

    def at(self, a) -> np.ndarray:
        """Compositions [len(a), len(ids)] at the amounts ``a`` [mol/L]."""
        return self.base[None, :] + np.atleast_1d(a)[:, None] * self.direction[None, :]

    def composition(self, a: float) -> dict[str, float]:
        """The composition at ``a`` as reagent id -> mol/L."""
        return {r: float(c) for r, c in zip(self.ids, self.at(a)[0])}


def find_amount(line: AmountLine, target_ph: float, temperature_c: float, low: float, high: float,
                catalog: Catalog, what: str) -> float:
    """The amount a in [low, high] with pH(base + a·direction) = target, pH monotone in a.

    Each round solves a grid of compositions in one call of the engine and keeps the
    interval where pH crosses the target; the last round interpolates linearly.

    Parameters
    ----------
    line : AmountLine
        The compositions base + a·direction [mol/L].
    target_ph : float
        The pH to reach.
    temperature_c : float
        Temperature of the solve [°C].
    low, high : float
        The bracket of the free amount a [mol/L].
    catalog : Catalog
        The catalog the ids refer to.
    what : str
        What is being made, for the error message.

    Returns
    -------
    float
        The free amount a [mol/L].

    Raises
    ------
    PhOutOfReachError
        if the pH at ``low`` and ``high`` lie on the same side of the target.
    """
    grid = np.linspace(low, high, GRID_POINTS)
    estimate = low
    for _ in range(GRID_ROUNDS):
        ph = solve_equilibrium(line.ids, line.at(grid), temperature_c, catalog=catalog).ph
        gap = ph - target_ph
        if gap[0] * gap[-1] > 0:
            reach = sorted([float(ph[0]), float(ph[-1])])
            raise PhOutOfReachError(f"{what}: pH {target_ph:g} is out of reach; this route spans "
                                    f"pH {reach[0]:.2f} to {reach[1]:.2f} at {temperature_c:g} °C",
                                    [f"pH: reachable {reach[0]:.2f}-{reach[1]:.2f}"])
        crossings = np.flatnonzero(np.sign(gap[:-1]) * np.sign(gap[1:]) <= 0)
        k = int(crossings[0])
        a0, a1, g0, g1 = grid[k], grid[k + 1], gap[k], gap[k + 1]
        estimate = a0 if g1 == g0 else a0 - g0 * (a1 - a0) / (g1 - g0)
        if a1 - a0 < 1e-13 * max(1.0, abs(high)):
            return float(estimate)
        grid = np.linspace(a0, a1, GRID_POINTS)
    return float(estimate)


def _with_salt(line: AmountLine, salt_id: str) -> AmountLine:
    """The line with the salt as one more reagent at zero amount (unchanged if present)."""
    if salt_id in line.ids:
        return line
    return AmountLine((*line.ids, salt_id), np.append(line.base, 0.0), np.append(line.direction, 0.0))


def solve_composition(line: AmountLine, spec: BufferSpec, low: float, high: float, salt_id: str,
                      catalog: Catalog, what: str) -> dict[str, float]:
    """Root-find the free amount; with an ionic-strength target, iterate the salt beside it.

    I is nearly linear in the salt, so s ← s + (I_target − I) converges in a few rounds.

    Parameters
    ----------
    line : AmountLine
        The compositions base + a·direction [mol/L], without or with the salt.
    spec : BufferSpec
        Target pH, use temperature [°C] and ionic-strength target [mol/L] (or None).
    low, high : float
        The bracket of the free amount [mol/L].
    salt_id : str
        The salt that tops the ionic strength up.
    catalog : Catalog
        The catalog the ids refer to.
    what : str
        What is being made, for the error message.

    Returns
    -------
    dict of str to float
        The composition, reagent id -> mol/L.

    Raises
    ------
    PhOutOfReachError
        if the line does not reach the target pH.
    InfeasibleSpecError
        if the buffer alone gives more ionic strength than the target.
    """
    target_ionic = spec.ionic_strength_mol_l
    if target_ionic is not None:
        line = _with_salt(line, salt_id)
    amount = find_amount(line, spec.ph, spec.temperature_c, low, high, catalog, what)
    if target_ionic is None:
        return line.composition(amount)
    column = line.ids.index(salt_id)
    for _ in range(SALT_ROUNDS):
        eq = solve_equilibrium(line.ids, line.at(amount)[0], spec.temperature_c, catalog=catalog)
        missing = target_ionic - float(eq.ionic_strength_mol_l[0])
        if abs(missing) < IONIC_STRENGTH_TOLERANCE_MOL_L:
            break
        if line.base[column] + missing < -1e-12:
            ionic = float(eq.ionic_strength_mol_l[0]) - line.base[column]
            raise InfeasibleSpecError(
                f"ionic strength: the buffer alone gives {ionic:.4f} mol/L, above the target "
                f"{target_ionic:g} mol/L; lower the concentration or raise the target",
                [f"ionic strength: buffer alone {ionic:.4f} mol/L"])
        base = line.base.copy()
        base[column] = max(base[column] + missing, 0.0)
        line = AmountLine(line.ids, base, line.direction)
        amount = find_amount(line, spec.ph, spec.temperature_c, low, high, catalog, what)
    return line.composition(amount)
