"""Domain errors of poise.  Each message says what was wrong and what would be accepted.

The CLI and the app turn any :class:`PoiseError` into one line for the user.
"""

from __future__ import annotations

from catalog.problems import CatalogError, PoiseError

# PoiseError, the root of the tree, and CatalogError(PoiseError, ValueError) are defined in
# catalog.problems because catalog imports nothing of ours; they are re-exported here so
# that every domain error is found in this module.


class InputError(PoiseError, ValueError):
    """A value given by the user cannot be used (unknown reagent, bad amount, bad unit ...)."""


class UnknownNameError(InputError):
    """A reagent or system name that the catalog does not know; carries close matches."""

    def __init__(self, kind: str, name: str, suggestions: list[str]):
        self.kind, self.name, self.suggestions = kind, name, list(suggestions)
        hint = f"; did you mean {', '.join(suggestions)}?" if suggestions else ""
        super().__init__(f"unknown {kind} {name!r}{hint} ('poise catalog --search TEXT' lists names)")


class InfeasibleSpecError(PoiseError):
    """No composition meets the spec; ``conflicts`` names the constraints that clash;
    ``nearest`` gives, for a violated limit a spec field sets, the nearest mix's value of it
    ({field name: value in the field's unit}), where a remedy's search can start."""

    def __init__(self, message: str, conflicts: list[str] | None = None,
                 nearest: dict[str, float] | None = None):
        self.conflicts = list(conflicts or [])
        self.nearest = dict(nearest or {})
        super().__init__(message)


class PhOutOfReachError(InfeasibleSpecError):
    """The target pH lies outside the span of a recipe route's line of compositions."""


class BookError(InputError):
    """A recipe book problem the user can fix: unknown name or version, a file that is not a
    book or is from a newer poise, a locked or unwritable file, a bad import file."""


class SolverError(PoiseError):
    """A numerical solver did not finish with a trustworthy answer."""


__all__ = [
    "BookError",
    "CatalogError",
    "InfeasibleSpecError",
    "InputError",
    "PhOutOfReachError",
    "PoiseError",
    "SolverError",
    "UnknownNameError",
]
