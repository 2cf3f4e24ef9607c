"""One clear message instead of a traceback: every section of the page runs inside :func:`section`."""

from __future__ import annotations

import contextlib
import logging

import streamlit as st

from core.errors import InputError

log = logging.getLogger("secondroof.explorer")


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
        st.error(f"{name}: {exc}")
    except Exception as exc:  # noqa: BLE001 - never a traceback on the page
        log.exception("internal error in %s", name)
        st.error(f"{name}: internal error ({type(exc).__name__}: {exc}). The rest of the page still works; "
                 "please report this with the scenario that caused it.")
