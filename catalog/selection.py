"""The selection policy: which of a constant's published values the catalog uses, and its uncertainty.

A step's pKa (25 °C, I = 0), ΔH° and ΔCp° may each have several published values
(``step_values.csv``, one row per value).  One is chosen:

1. a value marked ``chosen`` in the table (a deliberate choice against the policy; its
   ``why`` says why) wins;
2. otherwise the value whose source kind ranks first in :data:`SELECTION_ORDER`: a
   critically evaluated compilation (``measured-review``) before a primary measurement
   (``measured``), a handbook, a computed or estimated value, a recalled value
   (``from-memory``) and a rule of thumb (``common-practice``); among equally ranked values
   the one listed first in the table.

The uncertainty of the chosen value is, in this order (``uncertainty_rule``):

- ``stated``: the uncertainty its source states;
- ``spread``: the largest difference between it and another *read* value of the same
  quantity (a source kind other than ``from-memory`` or ``common-practice``), values marked
  ``rejected`` (judged wrong, the reason in ``why``) left out;
- ``default``: :data:`DEFAULT_UNCERTAINTY` (common practice) when it stands alone, or when
  every other read value agrees with it exactly.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from catalog.records import PublishedValue, Selected, Step

#: Source kinds in the order the policy prefers them; kinds in one group rank equal.
SELECTION_ORDER: tuple[tuple[str, ...], ...] = (
    ("measured-review",),
    ("measured",),
    ("handbook",),
    ("computed", "estimated"),
    ("from-memory",),
    ("common-practice",),
)

#: Source kinds a step value may have (a demo value never describes a real acid).
STEP_VALUE_KINDS = tuple(kind for group in SELECTION_ORDER for kind in group)

#: Kinds that are not read in a source; their values do not count towards the spread.
UNREAD_KINDS = ("from-memory", "common-practice")

#: Uncertainty of a value that stands alone and states none (common practice):
#: 0.05 in pKa, 3 kJ/mol in ΔH°, 100 J/(K mol) in ΔCp°.
DEFAULT_UNCERTAINTY = {"pka_25c": 0.05, "dh_kj_mol": 3.0, "dcp_j_k_mol": 100.0}

#: Standard uncertainty of a complex's log β whose source states none (common practice:
#: critically evaluated formation constants are commonly quoted to about ±0.1 log unit).
DEFAULT_LOG_BETA_UNCERTAINTY = 0.1

POLICY_WORDS = ("critically evaluated compilation > primary measurement > handbook > computed or "
                "estimated > from memory > common practice")


def policy_rank(source_kind: str) -> int:
    """Rank of a source kind in :data:`SELECTION_ORDER` (0 is preferred); unknown kinds rank last."""
    for rank, group in enumerate(SELECTION_ORDER):
        if source_kind in group:
            return rank
    return len(SELECTION_ORDER)


def chosen_index(values: Sequence[PublishedValue]) -> int:
    """Index of the value the policy chooses: the one marked ``chosen``, else the best-ranked, first
    listed among those not marked ``rejected``."""
    for index, value in enumerate(values):
        if value.chosen:
            return index
    candidates = [k for k, v in enumerate(values) if not v.rejected] or list(range(len(values)))
    return min(candidates, key=lambda k: (policy_rank(values[k].source_kind), k))


def uncertainty_of(quantity: str, values: Sequence[PublishedValue], index: int) -> tuple[float, str]:
    """(uncertainty, rule) of ``values[index]``: ``stated``, else ``spread`` of the other read values, else ``default``."""
    chosen = values[index]
    if chosen.uncertainty is not None:
        return chosen.uncertainty, "stated"
    others = [abs(v.value - chosen.value) for k, v in enumerate(values)
              if k != index and v.source_kind not in UNREAD_KINDS and not v.rejected]
    if others and max(others) > 0:
        return max(others), "spread"
    return DEFAULT_UNCERTAINTY[quantity], "default"


def log_beta_uncertainty(stated: float | None) -> tuple[float, str]:
    """(uncertainty, rule) of a complex's log β: ``stated`` by its source, else ``default``
    (:data:`DEFAULT_LOG_BETA_UNCERTAINTY`, common practice)."""
    if stated is not None:
        return stated, "stated"
    return DEFAULT_LOG_BETA_UNCERTAINTY, "default"


def _reason(values: Sequence[PublishedValue], index: int) -> str:
    chosen = values[index]
    if chosen.chosen:
        return f"chosen against the policy: {chosen.why}"
    rank = policy_rank(chosen.source_kind)
    if len(values) == 1:
        return "the only value"
    ties = [v for v in values if policy_rank(v.source_kind) == rank and v.value != chosen.value]
    reason = f"{chosen.source_kind} ranks first by the selection policy"
    if ties:
        reason += "; listed first among the values of equal rank"
    return reason


def select(quantity: str, values: Sequence[PublishedValue]) -> Selected:
    """The chosen value of one quantity, with every published value, its uncertainty and the reason.

    Parameters
    ----------
    quantity : str
        ``pka_25c``, ``dh_kj_mol`` or ``dcp_j_k_mol`` (the key of :data:`DEFAULT_UNCERTAINTY`).
    values : sequence of PublishedValue
        Every published value, in table order (at least one).

    Examples
    --------
    >>> from catalog.records import PublishedValue
    >>> a = PublishedValue(7.20, None, "", "from-memory", "recalled", "", False, "", "")
    >>> b = PublishedValue(7.198, None, "minteq4", "measured-review", "compilation", "", False, "", "")
    >>> c = PublishedValue(7.21, None, "llnl", "handbook", "database", "", False, "", "")
    >>> s = select("pka_25c", [a, b, c])
    >>> s.value, s.source, round(s.uncertainty, 3), s.uncertainty_rule
    (7.198, 'minteq4', 0.012, 'spread')
    """
    index = chosen_index(values)
    chosen = values[index]
    uncertainty, rule = uncertainty_of(quantity, values, index)
    return Selected(chosen.value, chosen.source, chosen.source_kind, uncertainty, rule,
                    _reason(values, index), tuple(values), index)


def read_share(steps: Iterable[Step]) -> tuple[int, int]:
    """(how many are read in a named source, how many) of the pKa and ΔH° values the steps use.

    Read means a source kind other than those of :data:`UNREAD_KINDS` (a recalled value or a
    rule of thumb).  ΔCp° is left out: it moves pKa(T) only far from 25 °C.
    """
    used = [q for step in steps for q in (step.pka_25c, step.dh_kj_mol)]
    return sum(q.source_kind not in UNREAD_KINDS for q in used), len(used)
