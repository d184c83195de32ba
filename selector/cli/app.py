"""``poise app``: start the Streamlit front end on localhost."""

from __future__ import annotations

import argparse
import importlib.util
import signal
import subprocess
import sys
import tomllib
from importlib import resources

from selector.cli.errors import UsageError

#: Ports ``poise app`` may listen on (TCP ports 1-65535; 0 would pick one at random).
PORT_MIN, PORT_MAX = 1, 65535
#: Seconds the Streamlit child has to stop after SIGTERM before it is killed.
STOP_TIMEOUT_S = 10.0


def port_number(text: str) -> int:
    """A TCP port from its text, 1-65535; argparse reports anything else in one line."""
    try:
        port = int(text.strip()) if len(text.strip()) <= 6 else -1
    except ValueError:
        port = -1
    if not PORT_MIN <= port <= PORT_MAX:
        raise argparse.ArgumentTypeError(f"expected a whole number from {PORT_MIN} to {PORT_MAX}, got {text[:20]!r}")
    return port


def register(commands) -> None:
    parser = commands.add_parser("app", help="start the web front end on localhost",
                                 description="Start the Streamlit front end on http://localhost:PORT.")
    parser.add_argument("--port", type=port_number, default=8501, help="port on localhost, 1-65535 (default 8501)")
    parser.add_argument("--demo", action="store_true", help="open with the built-in demo scenario loaded")
    parser.set_defaults(handler=command_app)


def _stop(child: subprocess.Popen) -> None:
    """Ask the child to stop (SIGTERM), kill it if it has not after :data:`STOP_TIMEOUT_S`."""
    if child.poll() is None:
        child.terminate()
        try:
            child.wait(STOP_TIMEOUT_S)
        except subprocess.TimeoutExpired:
            child.kill()
            child.wait()


def streamlit_flags() -> list[str]:
    """The app's Streamlit settings (``app/streamlit_config.toml``, their one place) as
    ``--section.key value`` flags of ``streamlit run``."""
    settings = tomllib.loads((resources.files("app") / "streamlit_config.toml").read_text(encoding="utf-8"))
    flags = []
    for section, values in settings.items():
        for key, value in values.items():
            text = str(value).lower() if isinstance(value, bool) else str(value)
            flags += [f"--{section}.{key}", text]
    return flags


def command_app(args) -> int:
    if importlib.util.find_spec("streamlit") is None:
        raise UsageError("the web front end needs its extra packages: install them with "
                         ".venv/bin/pip install '.[app]' (the command line works without them)")
    main_script = str(resources.files("app") / "main.py")
    command = [sys.executable, "-m", "streamlit", "run", main_script, "--server.address", "localhost",
               "--server.port", str(args.port), *streamlit_flags()]
    if args.demo:
        command += ["--", "--demo"]
    print(f"poise app: http://localhost:{args.port}  (Ctrl+C stops it)", flush=True)
    child = subprocess.Popen(command)

    def on_terminate(signum, frame):
        raise SystemExit(0)

    previous = signal.signal(signal.SIGTERM, on_terminate)
    try:
        return child.wait()
    except (KeyboardInterrupt, SystemExit):
        return 0
    finally:
        _stop(child)
        signal.signal(signal.SIGTERM, previous)
