"""Text that leaves poise: echoed user text made safe to print, long problem lists
summarised, and the one CSV writer every export uses.

* :func:`echo` — text from a file, a key or an option, as it may appear inside a message:
  control characters (newlines, terminal escape codes, bidirectional overrides) shown as
  escapes, and long text shortened.  :func:`one_line` applies the same to a whole message.
* :func:`summarise` — a list of problems capped at a few, with a count of the rest.
* :func:`write_csv` — CSV text whose cells cannot be read as a spreadsheet formula: a cell
  that starts with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return gets a single quote
  in front (common practice for CSV exports meant for spreadsheets), except a cell that is a
  plain number (``-0.5`` stays a number).
"""

from __future__ import annotations

import csv
import io
import re
import unicodedata
from typing import Any, Iterable, Mapping, Sequence

#: Longest echo of one piece of user text [characters] (common practice: enough to
#: recognise a name or a value, short enough to keep a message on one line).
ECHO_MAX_CHARS = 80
#: Longest whole message on one line [characters].
MESSAGE_MAX_CHARS = 4000
#: Problems listed one by one before the rest are counted.
PROBLEMS_SHOWN = 20

#: First characters that make a spreadsheet read a cell as a formula.
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
#: A line break and the list marker after it, in a message of several lines.
_LINE_BREAK = re.compile(r":?[ \t]*\r?\n[ \t]*(?:- )?")
_PLAIN_NUMBER = re.compile(r"^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$")


def _unprintable(char: str) -> bool:
    """Control, format (bidi overrides, zero-width), surrogate, private, unassigned, or a
    line or paragraph separator."""
    category = unicodedata.category(char)
    return category[0] == "C" or category in ("Zl", "Zp")


def _escaped(char: str) -> str:
    code = ord(char)
    if char == "\n":
        return "\\n"
    if char == "\r":
        return "\\r"
    if char == "\t":
        return "\\t"
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}" if code < 0x10000 else f"\\U{code:08x}"


def _printable(text: str) -> str:
    """``text`` with every control character escaped (``\\n``, ``\\x1b``)."""
    if text.isprintable():   # the common case, checked in C
        return text
    return "".join(_escaped(c) if _unprintable(c) else c for c in text)


def one_line(text: str, limit: int = MESSAGE_MAX_CHARS) -> str:
    """``text`` on one printable line: line breaks (with a list marker after them) joined
    by ``; ``, other control characters escaped, shortened to ``limit``.

    Examples
    --------
    >>> one_line("conflicts:\\n  - pH\\n  - cost")
    'conflicts: pH; cost'
    >>> one_line("bad\\x1b[31m key")
    'bad\\\\x1b[31m key'
    """
    text = str(text).strip()
    if "\n" in text:
        text = _LINE_BREAK.sub(lambda m: ": " if m.group(0).startswith(":") else "; ", text)
    text = _printable(text)
    if len(text) > limit:
        text = text[:limit - 1] + "…"
    return text


def echo(value: Any, limit: int = ECHO_MAX_CHARS) -> str:
    """A piece of user text quoted for a message: ``'Tris'``; escapes and shortening as
    :func:`one_line` (``repr`` for anything that is not text).

    Examples
    --------
    >>> echo("Tris")
    "'Tris'"
    >>> echo("x" * 200)[-14:]
    "xxx… (200 ch)'"
    >>> echo("a\\nb")
    "'a\\\\nb'"
    """
    if not isinstance(value, str):
        text = _printable(repr(value))
        return text if len(text) <= limit else text[:limit - 1] + "…"
    shown = _printable(value)
    if len(shown) > limit:
        shown = shown[:limit - 1] + f"… ({len(value)} ch)"
    return "'" + shown.replace("'", "\\'") + "'"


def summarise(problems: Sequence[str], shown: int = PROBLEMS_SHOWN, what: str = "problems") -> list[str]:
    """The first ``shown`` problems, then one line counting the rest.

    Examples
    --------
    >>> summarise(["a", "b", "c"], shown=2)
    ['a', 'b', '… and 1 more problems']
    """
    problems = list(problems)
    if len(problems) <= shown:
        return problems
    return problems[:shown] + [f"… and {len(problems) - shown} more {what}"]


def csv_cell(value: Any) -> Any:
    """A cell a spreadsheet reads as text, never as a formula (numbers left as they are).

    Examples
    --------
    >>> csv_cell("=1+2"), csv_cell("-0.5"), csv_cell(-0.5), csv_cell("@SUM(A1)")
    ("'=1+2", '-0.5', -0.5, "'@SUM(A1)")
    """
    if isinstance(value, str) and value.startswith(FORMULA_STARTS) and not _PLAIN_NUMBER.match(value):
        return "'" + value
    return value


def write_csv(columns: Sequence[str], rows: Iterable[Mapping[str, Any] | Sequence[Any]],
              line_end: str = "\n") -> str:
    """CSV text of a header row ``columns`` and ``rows`` — mappings by column name, or
    sequences in column order — with every cell through :func:`csv_cell`.  Missing and
    None cells are empty; ``line_end`` ends each line."""
    buffer = io.StringIO()
    # Both CR and LF in the terminator, so that a cell holding either is quoted; each record
    # then ends in ``line_end``.
    writer = csv.writer(buffer, lineterminator="\r\n")
    lines = []
    for cells in ([csv_cell(c) for c in columns],
                  *(["" if c is None else csv_cell(c)
                     for c in ([row.get(c) for c in columns] if isinstance(row, Mapping) else list(row))]
                    for row in rows)):
        buffer.seek(0)
        buffer.truncate()
        writer.writerow(cells)
        lines.append(buffer.getvalue()[:-2] + line_end)
    return "".join(lines)
