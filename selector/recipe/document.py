"""A small document model and its four renderers: text, Markdown, HTML (printable), CSV.

Each output of a recipe (the recipe, the bench sheet, the bottle label) is ONE template, a
function that returns a :class:`Document` (a title and a list of blocks); the renderers
here turn any document into each format, so the formats cannot drift apart.  Blanks are
fields a person fills in by hand (lot number, balance reading, operator …): a line in text
and Markdown, an empty ruled cell in HTML, an empty cell in CSV.  Nothing is computed here.
"""

from __future__ import annotations

import html
from dataclasses import dataclass
from typing import Callable, Union

from selector.errors import InputError
from selector.textsafe import write_csv

#: What a blank looks like in text and Markdown.
BLANK_LINE = "________________"


@dataclass(frozen=True)
class Heading:
    text: str


@dataclass(frozen=True)
class Paragraph:
    text: str
    strong: bool = False


@dataclass(frozen=True)
class Table:
    """A table; a cell that is None is a blank to fill in."""

    columns: tuple[str, ...]
    rows: tuple[tuple[str | None, ...], ...]


@dataclass(frozen=True)
class Items:
    items: tuple[str, ...]
    ordered: bool = False
    checkboxes: bool = False


@dataclass(frozen=True)
class Blanks:
    """Labelled fields to fill in by hand."""

    labels: tuple[str, ...]


Block = Union[Heading, Paragraph, Table, Items, Blanks]


@dataclass(frozen=True)
class Document:
    title: str
    blocks: tuple[Block, ...]


def _md_cell(cell: str | None) -> str:
    return BLANK_LINE if cell is None else cell.replace("|", "\\|")


def _markdown_block(block: Block) -> list[str]:
    if isinstance(block, Heading):
        return ["", f"## {block.text}", ""]
    if isinstance(block, Paragraph):
        return [f"**{block.text}**" if block.strong else block.text, ""]
    if isinstance(block, Table):
        return [f"| {' | '.join(block.columns)} |", f"|{' --- |' * len(block.columns)}",
                *(f"| {' | '.join(_md_cell(c) for c in row)} |" for row in block.rows), ""]
    if isinstance(block, Items):
        marks = [f"{k}." if block.ordered else "-" for k in range(1, len(block.items) + 1)]
        box = "[ ] " if block.checkboxes else ""
        return [f"{mark} {box}{item}" for mark, item in zip(marks, block.items)] + [""]
    return [f"- {label}: {BLANK_LINE}" for label in block.labels] + [""]


def to_markdown(document: Document) -> str:
    """The document as Markdown."""
    lines = [f"# {document.title}", ""]
    for block in document.blocks:
        lines += _markdown_block(block)
    while lines and lines[-1] == "":
        lines.pop()
    return "\n".join(line for k, line in enumerate(lines) if not (line == "" and k and lines[k - 1] == ""))


def to_text(document: Document) -> str:
    """The document as plain text (the Markdown without its marks)."""
    out = []
    for line in to_markdown(document).splitlines():
        if line.startswith("# "):
            line = f"{line[2:]}\n{'=' * len(line[2:])}"
        elif line.startswith("## "):
            line = line[3:]
            line = f"{line}\n{'-' * len(line)}"
        elif line.startswith("|"):
            if set(line) <= set("|- "):
                continue
            line = "  ".join(c.strip() for c in line.strip("|").split(" | "))
        out.append(line.replace("**", ""))
    return "\n".join(out)


#: The print styles of every HTML output: A4/Letter friendly, blanks as ruled cells, no
#: page break inside a table row or a list item.
HTML_STYLE = """body{font-family:sans-serif;max-width:48em;margin:2em auto;line-height:1.35}
table{border-collapse:collapse;width:100%;margin:.4em 0 1em}td,th{border:1px solid #777;padding:.3em .5em;text-align:left}
td.blank{min-width:8em;height:1.6em}table.blanks th{width:30%}.strong{font-size:1.3em;font-weight:bold}
ul.checks{list-style:none;padding-left:.5em}ul.checks li:before{content:"\\2610\\00a0"}
@media print{body{margin:0;max-width:none;font-size:11pt}@page{margin:15mm}tr,li{break-inside:avoid}
.noprint{display:none}}"""


def _html_block(block: Block) -> str:
    esc = html.escape
    if isinstance(block, Heading):
        return f"<h2>{esc(block.text)}</h2>"
    if isinstance(block, Paragraph):
        cls = ' class="strong"' if block.strong else ""
        return f"<p{cls}>{esc(block.text)}</p>"
    if isinstance(block, Table):
        head = "".join(f"<th>{esc(c)}</th>" for c in block.columns)
        body = "".join("<tr>" + "".join('<td class="blank"></td>' if c is None else f"<td>{esc(c)}</td>" for c in row)
                       + "</tr>" for row in block.rows)
        return f"<table><tr>{head}</tr>{body}</table>"
    if isinstance(block, Items):
        tag = "ol" if block.ordered else "ul"
        cls = ' class="checks"' if block.checkboxes else ""
        return f"<{tag}{cls}>" + "".join(f"<li>{esc(i)}</li>" for i in block.items) + f"</{tag}>"
    rows = "".join(f'<tr><th>{esc(label)}</th><td class="blank"></td></tr>' for label in block.labels)
    return f'<table class="blanks">{rows}</table>'


def to_html(document: Document) -> str:
    """The document as a self-contained HTML page with print styles."""
    body = "\n".join(_html_block(block) for block in document.blocks)
    return (f'<!doctype html>\n<html lang="en"><head><meta charset="utf-8"><title>{html.escape(document.title)}'
            f"</title>\n<style>{HTML_STYLE}</style></head><body>\n<h1>{html.escape(document.title)}</h1>\n"
            f"{body}\n</body></html>\n")


def to_csv(document: Document) -> str:
    """The document as CSV: one row per line of text, table row or blank, with its section.

    Columns ``section, item, value, detail, more``: a table's own header comes first as a
    row of its section; a blank is its label with an empty value.
    """
    rows: list[list[str | None]] = []
    section = "summary"
    for block in document.blocks:
        if isinstance(block, Heading):
            section = block.text
        elif isinstance(block, Paragraph):
            rows.append([section, block.text])
        elif isinstance(block, Table):
            rows.append([section, *block.columns])
            rows += [[section, *("" if c is None else c for c in row)] for row in block.rows]
        elif isinstance(block, Items):
            rows += [[section, item] for item in block.items]
        else:
            rows += [[section, label, ""] for label in block.labels]
    width = max((len(r) for r in rows), default=2)
    columns = ["section", "item", "value", "detail", "more", "extra"][:max(width, 2)]
    columns += [f"column_{k}" for k in range(len(columns), width)]
    return write_csv(columns, [r + [None] * (width - len(r)) for r in rows], line_end="\r\n")


#: Every renderer by format name.
FORMATS: dict[str, Callable[[Document], str]] = {"text": to_text, "markdown": to_markdown, "html": to_html,
                                                 "csv": to_csv}


def render(document: Document, fmt: str) -> str:
    """``document`` in the format ``fmt`` (one of :data:`FORMATS`)."""
    try:
        renderer = FORMATS[fmt]
    except KeyError:
        raise InputError(f"unknown format {fmt!r}; formats: {', '.join(FORMATS)}") from None
    return renderer(document)
