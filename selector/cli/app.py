"""``poise app``: start the Streamlit front end on localhost."""

from __future__ import annotations

import subprocess
import sys
from importlib import resources


def register(commands) -> None:
    parser = commands.add_parser("app", help="start the web front end on localhost",
                                 description="Start the Streamlit front end on http://localhost:PORT.")
    parser.add_argument("--port", type=int, default=8501, help="port on localhost (default 8501)")
    parser.add_argument("--demo", action="store_true", help="open with the built-in demo scenario loaded")
    parser.set_defaults(handler=command_app)


def command_app(args) -> int:
    main_script = str(resources.files("app") / "main.py")
    command = [sys.executable, "-m", "streamlit", "run", main_script, "--server.address", "localhost",
               "--server.port", str(args.port), "--server.headless", "true",
               "--browser.gatherUsageStats", "false", "--client.toolbarMode", "minimal",
               "--client.showErrorDetails", "type"]
    if args.demo:
        command += ["--", "--demo"]
    print(f"poise app: http://localhost:{args.port}  (Ctrl+C stops it)", flush=True)
    try:
        return subprocess.call(command)
    except KeyboardInterrupt:
        return 0
