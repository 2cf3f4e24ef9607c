"""Upload folders: one per browser session, removed when the session closes, and the one upload limit.

Streamlit gives a script no "session closed" event. Each session's folder carries the session's id in its name,
and every new session sweeps away the folders of sessions the server no longer knows (closed, and past the short
window in which a dropped connection may come back). Folders left at server exit go with the process.
"""

from __future__ import annotations

import re
import shutil
import tempfile
import weakref
from collections.abc import Callable
from pathlib import Path

#: The one upload limit, in MB as Streamlit counts them (MiB, 2**20 bytes): the browser refuses larger files
#: before sending them (``server.maxUploadSize``, set from this by ``python -m explorer``), and the page refuses
#: the same. A year of one-minute readings in CSV is about 20 MB.
MAX_UPLOAD_MB = 40
MAX_UPLOAD_BYTES = MAX_UPLOAD_MB * 2**20
#: How the limit is stated on the page, everywhere.
LIMIT_TEXT = f"{MAX_UPLOAD_MB} MB"

PREFIX = "secondroof-upload-"
_NAME = re.compile(re.escape(PREFIX) + r"(?P<session>[0-9A-Za-z-]+?)--")


class SessionFolder:
    """A temporary folder for one browser session's uploads, removed when the session closes (see the module
    docstring) or, at the latest, when the server process ends."""

    def __init__(self, session_id: str | None = None, root: str | None = None) -> None:
        tag = re.sub(r"[^0-9A-Za-z-]", "", session_id or "") or "unknown"
        self.session_id = tag
        self.path = Path(tempfile.mkdtemp(prefix=f"{PREFIX}{tag}--", dir=root))
        self._cleanup = weakref.finalize(self, shutil.rmtree, str(self.path), True)


def sweep_closed(is_open: Callable[[str], bool], root: str | None = None) -> list[Path]:
    """Remove the upload folders under ``root`` (the system's temporary folder) whose session ``is_open`` says is
    closed; return what was removed. Folders of other programs and of unknown sessions are left alone."""
    removed = []
    for path in Path(root or tempfile.gettempdir()).glob(f"{PREFIX}*"):
        found = _NAME.match(path.name)
        if not found or not path.is_dir() or path.is_symlink():
            continue
        session = found["session"]
        if session != "unknown" and not is_open(session):
            shutil.rmtree(path, ignore_errors=True)
            removed.append(path)
    return removed


def current_session_id() -> str | None:
    """The running session's id, or None outside a Streamlit server (tests, bare mode)."""
    try:
        from streamlit.runtime.scriptrunner import get_script_run_ctx

        ctx = get_script_run_ctx()
        return None if ctx is None else ctx.session_id
    except Exception:  # noqa: BLE001 - no runtime, no id
        return None


def server_knows(session_id: str) -> bool:
    """True while the Streamlit server still holds the session (connected, or disconnected but able to come
    back); True also when there is no server to ask, so that nothing is removed by mistake."""
    try:
        from streamlit.runtime import Runtime

        if not Runtime.exists():
            return True
        return Runtime.instance()._session_mgr.get_session_info(session_id) is not None
    except Exception:  # noqa: BLE001 - an internal API that may change: keep the folders rather than guess
        return True


def session_folder(state) -> Path:
    """This session's upload folder (made on first use, when the folders of closed sessions are swept)."""
    if "upload_folder" not in state:
        sweep_closed(server_knows)
        state["upload_folder"] = SessionFolder(current_session_id())
    return state["upload_folder"].path
