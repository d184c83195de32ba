"""CSV tables as rows of typed cells that report problems instead of raising.

:func:`read_table` turns one file of ``catalog/data`` into :class:`Row` objects; a
:class:`Row` reads its cells as text, numbers, choices, lists and sourced numbers, and
reports every bad cell to the shared :class:`~catalog.problems.ProblemLog` as
``file:line: column: expected ..., got ...``.
"""

from __future__ import annotations

import csv
import io
import math
import re
from collections.abc import Collection, Mapping
from importlib.resources.abc import Traversable
from pathlib import Path

from catalog.problems import ProblemLog
from catalog.records import SOURCE_KINDS, UNKEYED_SOURCE_KINDS, Source, Sourced

#: Record ids (systems, reagents) are lowercase slugs.
ID_PATTERN = re.compile(r"^[a-z0-9][a-z0-9_]*$")


class Row:
    """One CSV row with typed getters that report problems instead of raising.

    Parameters
    ----------
    table : str
        File name of the table.
    line : int
        Line of the file the row ends on (1 is the header).
    values : mapping of str to str or None
        The cells by column (None where the row is short).
    problems : ProblemLog
        Receives every problem found in the row.
    """

    def __init__(self, table: str, line: int, values: Mapping[str, str | None], problems: ProblemLog):
        self.table, self.line, self.values, self.problems = table, line, values, problems

    def problem(self, column: str, message: str) -> None:
        """Report ``message`` (``expected ..., got ...``) against ``column`` of this row."""
        self.problems.add(self.table, self.line, column, message)

    def text(self, column: str, required: bool = False) -> str:
        """The stripped cell; an empty required cell is a problem."""
        value = (self.values.get(column) or "").strip()
        if required and not value:
            self.problem(column, "expected a value, got an empty cell")
        return value

    def slug(self, column: str) -> str:
        """A required record id: a lowercase slug of a-z, 0-9 and _."""
        value = self.text(column, required=True)
        if value and not ID_PATTERN.match(value):
            self.problem(column, f"expected a lowercase slug (a-z, 0-9, _), got {value!r}")
        return value

    def unique(self, column: str, value: str, seen: Collection[str], what: str = "id") -> None:
        """Check that a non-empty key has not been seen in an earlier row of the table."""
        if value and value in seen:
            self.problem(column, f"expected a unique {what}, got {value!r} twice")

    def reference(self, column: str, value: str, known: Collection[str], expected: str) -> None:
        """Check that a non-empty id names a record of another table.

        An empty cell is not reported again here: the reader that made it required has
        reported it already.
        """
        if value and value not in known:
            self.problem(column, f"expected {expected}, got {value!r}")

    def number(self, column: str, required: bool = True, minimum: float | None = None,
               maximum: float | None = None, positive: bool = False) -> float | None:
        """The cell as a finite float within the limits, or None (reported unless empty and optional)."""
        raw = self.text(column)
        if not raw:
            if required:
                self.problem(column, "expected a number, got an empty cell")
            return None
        try:
            value = float(raw)
        except ValueError:
            self.problem(column, f"expected a number, got {raw!r}")
            return None
        if not math.isfinite(value):
            self.problem(column, f"expected a finite number, got {raw!r}")
            return None
        if positive and value <= 0:
            self.problem(column, f"expected a number > 0, got {raw!r}")
            return None
        if minimum is not None and value < minimum:
            self.problem(column, f"expected a number >= {minimum:g}, got {raw!r}")
            return None
        if maximum is not None and value > maximum:
            self.problem(column, f"expected a number <= {maximum:g}, got {raw!r}")
            return None
        return value

    def integer(self, column: str, required: bool = True, minimum: int | None = None) -> int | None:
        """The cell as a whole number (a leading ``+`` allowed), or None."""
        raw = self.text(column)
        if not raw:
            if required:
                self.problem(column, "expected a whole number, got an empty cell")
            return None
        try:
            value = int(raw.lstrip("+"))
        except ValueError:
            self.problem(column, f"expected a whole number, got {raw!r}")
            return None
        if minimum is not None and value < minimum:
            self.problem(column, f"expected a whole number >= {minimum}, got {raw!r}")
            return None
        return value

    def boolean(self, column: str) -> bool:
        """``true`` or ``false`` (any case); anything else is a problem and reads as False."""
        raw = self.text(column).lower()
        if raw in ("true", "false"):
            return raw == "true"
        self.problem(column, f"expected true or false, got {raw!r}")
        return False

    def choice(self, column: str, allowed: tuple[str, ...], required: bool = True) -> str:
        """The cell, which must be one of ``allowed`` (or empty when not required)."""
        raw = self.text(column)
        if not raw and not required:
            return ""
        if raw not in allowed:
            self.problem(column, f"expected one of {', '.join(allowed)}, got {raw!r}")
        return raw

    def listing(self, column: str) -> tuple[str, ...]:
        """The ``;``-separated items of the cell, stripped, empty items dropped."""
        return tuple(part.strip() for part in self.text(column).split(";") if part.strip())

    def sourced(self, value_column: str, source_column: str, kind_column: str,
                sources: Mapping[str, Source], required: bool = True, minimum: float | None = None,
                maximum: float | None = None, positive: bool = False) -> Sourced | None:
        """A number with its source key and source kind, checked against the source table."""
        value = self.number(value_column, required=required, minimum=minimum, maximum=maximum,
                            positive=positive)
        if value is None:
            return None
        return Sourced(value, *self.provenance(source_column, kind_column, sources, value_column))

    def provenance(self, source_column: str, kind_column: str, sources: Mapping[str, Source],
                   what: str) -> tuple[str, str]:
        """The (source key, source kind) of ``what``: a known kind, and a known key unless the kind may stand alone."""
        key = self.text(source_column)
        kind = self.text(kind_column)
        if kind not in SOURCE_KINDS:
            self.problem(kind_column, f"expected a source kind for {what} "
                         f"({', '.join(SOURCE_KINDS)}), got {kind!r}")
        if key:
            if key not in sources:
                self.problem(source_column, f"expected a key of sources.csv for {what}, got {key!r}")
        elif kind and kind not in UNKEYED_SOURCE_KINDS:
            self.problem(source_column, f"expected a source key for {what} (only "
                         f"{', '.join(UNKEYED_SOURCE_KINDS)} may stand without one), got an empty cell")
        return key, kind


def decode_table(raw: bytes, table: str, problems: ProblemLog) -> str:
    """The text of a UTF-8 table with universal newlines; each line holding a non-UTF-8 byte is a problem.

    Bytes that are not UTF-8 are reported with their line and read as U+FFFD, so the
    rest of the table is still checked.
    """
    try:
        raw.decode("utf-8")
    except UnicodeDecodeError:
        for line, data in enumerate(raw.split(b"\n"), start=1):
            try:
                data.decode("utf-8")
            except UnicodeDecodeError as error:
                problems.add(table, line, "-", f"expected UTF-8 text, got the byte 0x{data[error.start]:02x} "
                             f"at byte {error.start + 1} of the line")
    with io.TextIOWrapper(io.BytesIO(raw), encoding="utf-8", errors="replace") as stream:
        return stream.read()


def read_table(path: Path | Traversable, columns: tuple[str, ...], problems: ProblemLog,
               required: bool = True) -> list[Row] | None:
    """Read one CSV table into rows, or None when it is missing or lacks a column.

    Parameters
    ----------
    path : Path or Traversable
        The CSV file (UTF-8, header row first).
    columns : tuple of str
        Columns the table must have (others are allowed).
    problems : ProblemLog
        Receives a missing required table, a missing column, a byte that is not UTF-8,
        a row with more cells than the header, and a row the CSV reader cannot read
        (such as a cell longer than ``csv.field_size_limit()`` characters).
    required : bool
        Whether a missing file is a problem (the compatibility tables may be absent).
    """
    table = path.name
    if not path.is_file():
        if required:
            problems.add(table, None, "-", "expected this table in the catalog, it is missing")
        return None
    reader = csv.DictReader(io.StringIO(decode_table(path.read_bytes(), table, problems)))
    try:
        header = tuple(reader.fieldnames or ())
    except csv.Error as error:
        problems.add(table, 1, "-", _unreadable(error))
        return None
    missing = [c for c in columns if c not in header]
    if missing:
        problems.add(table, 1, ",".join(missing), f"expected columns {', '.join(columns)}, got {', '.join(header)}")
        return None
    rows: list[Row] = []
    while True:
        first_line = reader.line_num + 1
        try:
            values = next(reader)
        except StopIteration:
            return rows
        except csv.Error as error:
            problems.add(table, first_line, "-", _unreadable(error))
            continue
        if None in values:
            problems.add(table, reader.line_num, "-", f"expected {len(header)} cells, got more")
        rows.append(Row(table, reader.line_num, values, problems))


def _unreadable(error: csv.Error) -> str:
    return (f"expected a CSV row with cells of at most {csv.field_size_limit()} characters, "
            f"got a row the CSV reader refuses ({error})")
