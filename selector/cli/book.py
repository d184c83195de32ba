"""``poise book``: the recipe book (list, show, diff, verify, export, import, remove), and ``--save NAME``.

The book is the SQLite file of :mod:`selector.book`: ``--book PATH``, else the
``POISE_BOOK`` environment variable, else ``book.sqlite3`` in the user's data folder.
``poise recipe`` and ``poise optimise`` save through :func:`add_save_option` and
:func:`save_if_asked`; what they print is unchanged (the saved version is named on stderr).
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
from pathlib import Path
from typing import Any

from selector.cli.choices import BOOK_EXPORT_FORMATS
from selector.errors import InputError


def _version(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a version number (1, 2, …), got {text!r}") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected a version number of at least 1, got {text!r}")
    return value


def _recipe_name(text: str) -> str:
    from selector.book import NAME_MAX_CHARS

    name = text.strip()
    if not name or len(name) > NAME_MAX_CHARS or not name.isprintable():
        raise argparse.ArgumentTypeError(f"expected a recipe name of 1 to {NAME_MAX_CHARS} printable characters")
    return name


def add_book_argument(parser: argparse.ArgumentParser) -> None:
    """``--book PATH``: the book file (default ``$POISE_BOOK``, else the user's data folder)."""
    parser.add_argument("--book", metavar="PATH",
                        help="recipe book file (default: $POISE_BOOK, else book.sqlite3 in your data folder)")


def add_save_option(parser: argparse.ArgumentParser) -> None:
    """``--save NAME`` (and ``--book PATH``, ``--save-note TEXT``) on a command that makes a recipe."""
    parser.add_argument("--save", metavar="NAME", type=_recipe_name,
                        help="save the recipe in the recipe book under NAME (a new version if NAME exists)")
    parser.add_argument("--save-note", metavar="TEXT", default="", help="a note kept with the saved version")
    add_book_argument(parser)


def save_if_asked(args: argparse.Namespace, recipe_json: Any, spec: Any) -> None:
    """Save ``recipe_json`` (a dict, or a list of recipes: the first is saved) when ``--save NAME`` was given.

    The version written is named on stderr, so the command's output (``--json`` included) is unchanged.
    """
    name = getattr(args, "save", None)
    if name is None:
        return
    from selector.book import open_book, save_recipe

    chosen = recipe_json[0] if isinstance(recipe_json, list) and recipe_json else recipe_json
    with open_book(args.book) as book:
        entry = save_recipe(book, name, chosen, spec, note=args.save_note)
    more = ""
    if isinstance(recipe_json, list) and len(recipe_json) > 1:
        more = (f" (the first of {len(recipe_json)} recipes, route {chosen.get('route', '?')}; "
                "choose one with --route)")
    print(f"poise: saved {entry.name!r} version {entry.version} in {book.path}{more}", file=sys.stderr)


def _list(args: argparse.Namespace) -> int:
    from selector.book import book_exists, book_path, list_recipes, open_book

    if not book_exists(args.book):
        summaries = []
    else:
        with open_book(args.book, create=False) as book:
            summaries = list_recipes(book)
    if args.json:
        print(json.dumps([s.as_json() for s in summaries], indent=2))
        return 0
    if not summaries:
        print(f"no recipes saved in {book_path(args.book)}")
        return 0
    print(f"{'name':<28} {'versions':>8}  {'saved (UTC)':<25} {'target pH':>9} {'pH at use':>9}  note")
    for s in summaries:
        target = "" if s.target_ph is None else f"{s.target_ph:.2f}"
        verified = "" if s.verified_ph_at_use is None else f"{s.verified_ph_at_use:.3f}"
        print(f"{s.name:<28} {s.versions:>8}  {s.latest_created_at:<25} {target:>9} {verified:>9}  {s.note}")
    return 0


def _show(args: argparse.Namespace) -> int:
    from selector.book import export_entry, open_book, show_recipe, verification_log, versions_of

    with open_book(args.book, create=False) as book:
        entry = show_recipe(book, args.name, args.version)
        versions = [e.version for e in versions_of(book, args.name)]
        checks = [c for c in verification_log(book, args.name) if c["version"] == entry.version]
    if args.json:
        print(json.dumps(entry.recipe_json(), indent=2))
        return 0
    print(export_entry(entry, "md"), end="")
    print(f"\nversions: {', '.join(str(v) for v in versions)}")
    if checks:
        last = checks[-1]
        print(f"verified {len(checks)} time{'s' if len(checks) != 1 else ''}; last {last['verified_at']} with catalog "
              f"{last['catalog_fingerprint']}: {'within' if last['within_tolerance'] else 'OUTSIDE'} tolerance")
    return 0


def _diff(args: argparse.Namespace) -> int:
    from selector.book import diff_versions, open_book

    with open_book(args.book, create=False) as book:
        lines = diff_versions(book, args.name, args.a, args.b)
    print(f"{args.name}: version {args.a} -> version {args.b}")
    print("\n".join(f"  {line}" for line in lines) if lines else "  no differences")
    return 0


def _verify(args: argparse.Namespace) -> int:
    from selector.book import open_book, verify_recipe

    with open_book(args.book, create=False) as book:
        result = verify_recipe(book, args.name, args.version)
    print(json.dumps(result.as_json(), indent=2) if args.json else result.text())
    return 0


def write_new_file(path: str, text: str) -> None:
    """Write ``text`` to a new file at ``path`` (never over an existing one; whole or not at all)."""
    target = Path(path)
    if target.exists():
        raise InputError(f"{path} exists; give --output a new file name (poise does not overwrite files)")
    if not target.parent.is_dir():
        raise InputError(f"the folder of --output {path} does not exist")
    try:
        handle, temporary = tempfile.mkstemp(dir=target.parent, prefix=".poise-", suffix=".tmp")
        with os.fdopen(handle, "w", encoding="utf-8", newline="") as out:
            out.write(text)
        os.link(temporary, target)   # fails if the file appeared meanwhile: nothing is overwritten
        os.unlink(temporary)
    except FileExistsError:
        os.unlink(temporary)
        raise InputError(f"{path} exists; give --output a new file name (poise does not overwrite files)") from None
    except OSError as error:
        raise InputError(f"cannot write --output {path}: {error.strerror or error}") from None


def _export(args: argparse.Namespace) -> int:
    from selector.book import export_recipe, open_book

    with open_book(args.book, create=False) as book:
        text = export_recipe(book, args.name, args.format, args.version)
    if args.output:
        write_new_file(args.output, text)
        print(f"poise: wrote {args.output}", file=sys.stderr)
    else:
        print(text, end="")
    return 0


def _import(args: argparse.Namespace) -> int:
    from selector.book import IMPORT_MAX_BYTES, import_recipe, open_book

    try:
        with open(args.file, "rb") as handle:
            data = handle.read(IMPORT_MAX_BYTES + 1)
    except OSError as error:
        raise InputError(f"cannot read {args.file}: {error.strerror or error}") from None
    with open_book(args.book) as book:
        entry = import_recipe(book, data, name=args.name)
    print(f"imported {entry.name!r} as version {entry.version} in {book.path}")
    return 0


def _remove(args: argparse.Namespace) -> int:
    from selector.book import open_book, remove_recipe

    with open_book(args.book, create=False) as book:
        count = remove_recipe(book, args.name)
    print(f"removed {args.name!r} ({count} version{'s' if count != 1 else ''}) from {book.path}")
    return 0


def _sub(actions: Any, name: str, help_text: str, handler: Any, with_name: bool = True) -> argparse.ArgumentParser:
    parser = actions.add_parser(name, help=help_text, description=help_text[:1].upper() + help_text[1:] + ".")
    if with_name:
        parser.add_argument("name", type=_recipe_name, help="the recipe's name in the book")
    add_book_argument(parser)
    parser.set_defaults(handler=handler)
    return parser


def register(commands: Any) -> None:
    """Add the ``book`` command and its sub-commands to the CLI's subparsers."""
    book = commands.add_parser(
        "book", help="the recipe book: saved recipes, their versions, diff, verify, export",
        description="Saved recipes ('poise recipe … --save NAME', 'poise optimise … --save NAME'), "
                    "e.g. 'poise book list', 'poise book verify NAME'.")
    actions = book.add_subparsers(dest="book_command", parser_class=type(book))
    listing = _sub(actions, "list", "list the saved recipes", _list, with_name=False)
    listing.add_argument("--json", action="store_true", help="print JSON")
    show = _sub(actions, "show", "show a saved recipe (default: its latest version)", _show)
    show.add_argument("--version", type=_version, metavar="N", help="version N (default: the latest)")
    show.add_argument("--json", action="store_true", help="print the recipe's JSON (with target_ph)")
    diff = _sub(actions, "diff", "what changed between two versions of a recipe", _diff)
    diff.add_argument("a", type=_version, help="the older version")
    diff.add_argument("b", type=_version, help="the newer version")
    verify = _sub(actions, "verify", "re-solve a saved recipe with today's catalog and report the drift", _verify)
    verify.add_argument("--version", type=_version, metavar="N", help="version N (default: the latest)")
    verify.add_argument("--json", action="store_true", help="print JSON")
    export = _sub(actions, "export", "write a saved recipe as Markdown, HTML, CSV or JSON", _export)
    export.add_argument("--format", required=True, choices=BOOK_EXPORT_FORMATS, help="output format")
    export.add_argument("--version", type=_version, metavar="N", help="version N (default: the latest)")
    export.add_argument("--output", metavar="FILE", help="write to a new FILE instead of stdout")
    imported = _sub(actions, "import", "add a recipe exported with --format json to the book", _import,
                    with_name=False)
    imported.add_argument("file", help="the JSON file of 'poise book export NAME --format json'")
    imported.add_argument("--name", type=_recipe_name, help="save under this name (default: the name in the file)")
    _sub(actions, "remove", "remove a recipe and all its versions", _remove)
    book.set_defaults(handler=lambda args: _no_action(book))


def _no_action(parser: argparse.ArgumentParser) -> int:
    parser.print_help()
    return 0
