"""The command line's one error funnel: every domain error becomes one line and exit code 2."""

from __future__ import annotations

import argparse
import contextlib
import sys
import traceback

from selector.errors import InputError, PoiseError
from selector.textsafe import one_line

#: Exit code for anything the user can fix (bad input, infeasible spec, catalog problem).
EXIT_USER_ERROR = 2


class UsageError(InputError):
    """A command-line argument that cannot be used."""


class ArgumentParser(argparse.ArgumentParser):
    """argparse that raises :class:`UsageError` instead of printing usage and exiting, so errors are one line."""

    def error(self, message):
        command = self.prog.split(" ", 1)[1] if " " in self.prog else ""
        raise UsageError(f"{message} (see 'poise {command + ' ' if command else ''}--help')")


@contextlib.contextmanager
def user_errors(debug: bool):
    """Turn every :class:`PoiseError` into ``poise: error: MESSAGE`` on stderr and exit code 2.

    The message is one printable line (control characters from echoed file contents shown
    as escapes, at most :data:`~selector.textsafe.MESSAGE_MAX_CHARS`).  ``debug`` prints the
    traceback first.
    """
    try:
        yield
    except PoiseError as error:
        if debug:
            traceback.print_exc()
        print(f"poise: error: {one_line(str(error))}", file=sys.stderr)
        raise SystemExit(EXIT_USER_ERROR) from None
