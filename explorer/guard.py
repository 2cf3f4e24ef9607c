"""One clear message instead of a traceback: every section of the page runs inside :func:`section`."""

from __future__ import annotations

import contextlib
import logging
import re

import streamlit as st

from core.errors import InputError

log = logging.getLogger("secondroof.explorer")


def private(text: str) -> str:
    """The message with the session's upload folder taken out: people know their files by name."""
    folder = st.session_state.get("upload_folder")
    if folder is not None:
        root = re.escape(str(folder.path))
        text = re.sub(root + r"/(?:scenario|data)/[0-9a-f]{16}/", "", text)
        text = re.sub(root, "the upload folder", text)
    return text


def harden() -> None:
    """The app's own guard, whatever the server was started with (another folder's ``.streamlit/config.toml``, or
    none): error details never reach the page. Sections show their own messages; this covers the rest."""
    st.set_option("client.showErrorDetails", "none")


class Stop(Exception):
    """Raised inside a section to end it quietly after a message has been shown."""


@contextlib.contextmanager
def section(name: str):
    """Run a part of the page; bad input shows one ``st.error`` line, an internal error a short report.

    The rest of the page keeps working either way.
    """
    try:
        yield
    except Stop:
        pass
    except InputError as exc:
        st.error(f"{name}: {private(str(exc))}")
    except Exception:  # noqa: BLE001 - never a traceback on the page
        log.exception("internal error in %s", name)
        # Details stay in the server's log: the page shows no internals (issue: error details hidden).
        st.error(f"{name}: something went wrong inside secondroof. The rest of the page still works; "
                 "please report this with the scenario that caused it (details are in the server's log).")
