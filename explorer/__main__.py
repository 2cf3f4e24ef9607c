"""Start the explorer with its safe server settings, from any folder: ``python -m explorer [SCENARIO] [--port N]``
(or the ``secondroof-explorer`` script).

Streamlit reads ``.streamlit/config.toml`` from the folder it is started in only; started elsewhere it would listen
on every interface and show tracebacks with server paths. So the settings that matter are passed here, on the
command line, whatever the working folder: loopback address, no error details, no usage statistics, the one
upload limit. ``--address`` opens the page to the network deliberately.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from explorer.uploads import MAX_UPLOAD_MB

APP = Path(__file__).resolve().parent / "app.py"

#: The settings every start gets (the repository's .streamlit/config.toml states the same for `streamlit run`).
SAFE_SETTINGS = {
    "server.address": "127.0.0.1",
    "server.headless": "true",
    "server.maxUploadSize": str(MAX_UPLOAD_MB),
    "client.showErrorDetails": "none",
    "client.toolbarMode": "minimal",
    "browser.gatherUsageStats": "false",
    "theme.base": "light",
    "theme.primaryColor": "#0072B2",
}


def streamlit_argv(port: int, address: str | None = None) -> list[str]:
    """The ``streamlit run`` command line with the safe settings (the app's path absolute)."""
    settings = {**SAFE_SETTINGS, "server.port": str(port)}
    if address:
        settings["server.address"] = address
    return ["streamlit", "run", str(APP), *(f"--{key}={value}" for key, value in settings.items())]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m explorer", description=__doc__.split("\n\n")[0])
    parser.add_argument("scenario", nargs="?", help="scenario file to open first (default: the sample sites)")
    parser.add_argument("--port", type=int, default=int(os.environ.get("PORT", "8501")), help="port (8501)")
    parser.add_argument("--address", help="listen on this address instead of 127.0.0.1 (exposes the page)")
    args = parser.parse_args(argv)
    if args.scenario:
        os.environ["SECONDROOF_SCENARIO"] = str(Path(args.scenario).resolve())
    from streamlit.web import cli as stcli

    sys.argv = streamlit_argv(args.port, args.address)
    return stcli.main()


if __name__ == "__main__":
    sys.exit(main())
