"""The root of every poise error, the catalog's error, and the collector of load problems.

``catalog`` sits at the bottom of the layers and imports nothing of ours, so the root of
the error tree, :class:`PoiseError`, is defined here; :mod:`selector.errors` re-exports it
beside every other domain error.

The loader never stops at the first bad cell: every table reader reports into one
:class:`ProblemLog`, and the loader raises one :class:`CatalogError` listing them all.
"""

from __future__ import annotations


class PoiseError(Exception):
    """Base of every error poise reports to a user (one line, what was wrong and what is accepted)."""


class CatalogError(PoiseError, ValueError):
    """The catalog tables break a rule; the message lists every problem found.

    Parameters
    ----------
    problems : list of str
        One entry per problem, as ``file:line: column: expected ..., got ...``.
    """

    def __init__(self, problems: list[str]):
        self.problems = list(problems)
        head = f"the catalog has {len(problems)} problem(s):"
        super().__init__("\n  ".join([head, *problems]))


class ProblemLog:
    """Every problem found while reading the catalog, in the order found."""

    def __init__(self) -> None:
        self.items: list[str] = []

    def add(self, table: str, line: int | None, column: str, message: str) -> None:
        """Record one problem as ``table:line: column: message`` (``table: column: ...`` without a line).

        Parameters
        ----------
        table : str
            File name of the table, e.g. ``"steps.csv"``.
        line : int or None
            Line of the file (1 is the header); None for a problem of the whole table.
        column : str
            The column at fault, or ``"-"`` for the whole row or file.
        message : str
            ``expected ..., got ...``.
        """
        where = f"{table}:{line}" if line is not None else table
        self.items.append(f"{where}: {column}: {message}")

    def raise_if_any(self) -> None:
        """Raise one :class:`CatalogError` listing every problem recorded, if there is any."""
        if self.items:
            raise CatalogError(self.items)
