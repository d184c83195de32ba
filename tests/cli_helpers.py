"""Running the poise command line inside a test."""

from selector.cli import main


def run(capsys, *argv):
    """Run ``poise ARGV...``; return (exit code, stdout, stderr)."""
    try:
        code = main(list(argv))
    except SystemExit as stop:
        code = stop.code
    out, err = capsys.readouterr()
    return code, out, err
