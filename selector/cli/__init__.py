"""The ``poise`` command line: one module per command, each a thin layer over selector.

Each command parses its arguments, calls one selector function and prints.  Every domain
error goes through :func:`selector.cli.errors.user_errors`: one line on stderr and exit
code 2 (``--debug`` shows the traceback).  Heavy libraries are imported by the command
that needs them, when it runs.
"""

from __future__ import annotations

import os
import sys
from typing import Sequence

from selector.cli import app as cli_app
from selector.cli import book as cli_book
from selector.cli import buy as cli_buy
from selector.cli import catalog as cli_catalog
from selector.cli import compare as cli_compare
from selector.cli import demo as cli_demo
from selector.cli import metal as cli_metal
from selector.cli import optimise as cli_optimise
from selector.cli import ph as cli_ph
from selector.cli import plate as cli_plate
from selector.cli import rank as cli_rank
from selector.cli import recipe as cli_recipe
from selector.cli import series as cli_series
from selector.cli import span as cli_span
from selector.cli.errors import EXIT_USER_ERROR, ArgumentParser, UsageError, user_errors

__all__ = ["EXIT_USER_ERROR", "UsageError", "build_parser", "main", "user_errors"]


def build_parser() -> ArgumentParser:
    """The ``poise`` parser with every command registered."""
    parser = ArgumentParser(prog="poise", description="Choose and design laboratory buffer solutions.")
    parser.add_argument("--debug", action="store_true", help="show tracebacks of errors")
    parser.add_argument("--version", action="version", version=f"poise {_version()}")
    commands = parser.add_subparsers(dest="command", parser_class=ArgumentParser)
    # Workflow order: what is there, what a solution does, which system, side by side, how to make it,
    # the cheapest mix, the larger designs, keeping it, what to order.
    for module in (cli_catalog, cli_ph, cli_rank, cli_compare, cli_recipe, cli_optimise, cli_series, cli_span,
                   cli_plate, cli_metal, cli_book, cli_buy, cli_demo, cli_app):
        module.register(commands)
    return parser


def _version() -> str:
    """The installed distribution's version (the source tree's when not installed)."""
    from importlib.metadata import PackageNotFoundError, version
    try:
        return version("poise")
    except PackageNotFoundError:
        return "unknown (not installed)"


def main(argv: Sequence[str] | None = None) -> int:
    """Run ``poise ARGV``; return the exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in argv
    try:
        with user_errors(debug):
            parser = build_parser()
            args = parser.parse_args(argv)
            if not getattr(args, "handler", None):
                parser.print_help()
                return 0
            return args.handler(args)
    except BrokenPipeError:
        # The reader of our output went away (e.g. `poise demo | head`): stop quietly.
        sys.stderr = open(os.devnull, "w")
        return 0


if __name__ == "__main__":
    raise SystemExit(main())
