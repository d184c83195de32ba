"""Names of the ranking's criteria and the profiles that weight them (data only, no engine).

The spec (:mod:`selector.spec`) checks a profile name and user weights against these
tables without importing the engine; :mod:`selector.criteria` measures and scores each
criterion named here.  A profile is a named weighting of the criteria: the suitability
score of a system is the weighted mean of its criterion scores (each 0-1) over the
criteria that apply to the spec (:func:`selector.criteria.weighted_score`).

Weights are common practice, written from what each kind of user asks of a buffer first:

- ``assay`` (default): the pH must hold where the assay runs — near the pKa' (distance,
  capacity per mM), little temperature drift and the metals the assay needs left free;
  then side reactions, biological activity, the constants' uncertainty; cost last.
- ``purchasing``: cost alone, so the cheapest suitable (feasible: it meets every
  requirement of the spec) system comes first.
- ``chromatography``: UV transparency at the detection wavelength, volatility (LC-MS) and
  low ionic strength first, then the pH near the pKa'.
"""

from __future__ import annotations

#: Every criterion, in the order rows show them (``--sort`` and ``--weight`` names).
CRITERIA: tuple[str, ...] = (
    "distance", "capacity", "drift", "temperature_shift", "ionic_strength", "metal_bound", "uv_margin",
    "reactivity", "interference", "biological", "volatility", "cost", "uncertainty",
)

#: Profile name -> criterion -> weight (common practice; see the module text).  Criteria
#: left out weigh 0.
PROFILES: dict[str, dict[str, float]] = {
    "assay": {"distance": 3.0, "drift": 3.0, "metal_bound": 3.0, "capacity": 1.0, "temperature_shift": 1.0,
              "reactivity": 1.0, "biological": 1.0, "interference": 0.5, "ionic_strength": 0.5,
              "uncertainty": 1.0, "cost": 0.5},
    "purchasing": {"cost": 1.0},
    "chromatography": {"uv_margin": 3.0, "volatility": 3.0, "ionic_strength": 2.0, "distance": 1.0,
                       "capacity": 1.0, "uncertainty": 0.5, "cost": 0.5},
}
#: The profile a spec without one uses.
DEFAULT_PROFILE = "assay"
#: Largest weight a user may give one criterion (a bound of the tool).
WEIGHT_MAX = 1000.0


def profile_weights(profile: str | None, weights: tuple[tuple[str, float], ...] = ()) -> dict[str, float]:
    """The weights of ``profile`` (default :data:`DEFAULT_PROFILE`) with the user's on top.

    Examples
    --------
    >>> profile_weights("purchasing", (("drift", 2.0),))
    {'cost': 1.0, 'drift': 2.0}
    """
    out = dict(PROFILES[profile or DEFAULT_PROFILE])
    out.update(dict(weights))
    return out
