"""What the command line needs around its commands: importer warnings on stderr, termination signals that unwind
like Ctrl-C (so a partly written output is removed), and telling the user's full disk from our own faults."""

from __future__ import annotations

import errno
import os
import signal
import sys
import threading


def _one_line(text: str) -> str:
    return " ".join(str(text).split())


def report_warnings(warnings) -> list[str]:
    """Print every importer warning on stderr, one line each, and return them for the JSON output."""
    found = [str(w) for w in warnings]
    for text in found:
        print(_one_line(f"warning: {text}"), file=sys.stderr)
    return found


def site_warnings(comparison) -> tuple[str, ...]:
    """The site's importer warnings of a comparison (every option shares one site)."""
    for option in comparison.options.values():
        return option.simulation.site.warnings
    return ()


class Terminated(BaseException):
    """SIGTERM or SIGHUP arrived: unwind like Ctrl-C, so that a partly written output is removed."""


def _terminate(signum, _frame):
    raise Terminated(signum)


def catch_termination() -> dict:
    """Turn SIGTERM and SIGHUP into :class:`Terminated` (main thread only); returns the handlers to restore."""
    if threading.current_thread() is not threading.main_thread():
        return {}
    previous = {}
    for name in ("SIGTERM", "SIGHUP"):
        number = getattr(signal, name, None)
        if number is not None:
            previous[number] = signal.signal(number, _terminate)
    return previous


#: Errors of the user's own output device (a full disk, a quota, a dead terminal): bad input, not our fault.
DEVICE_ERRNOS = {errno.ENOSPC, errno.EDQUOT, errno.EIO, errno.EROFS, errno.EFBIG}


def quiet_stdout() -> None:
    """After a failed write to stdout, point it at /dev/null so that the interpreter's exit flush cannot fail
    again (and print its own message)."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError, AttributeError):
        pass


def restore_handlers(previous: dict) -> None:
    """Put back the signal handlers :func:`catch_termination` replaced."""
    for number, handler in previous.items():
        signal.signal(number, handler)
