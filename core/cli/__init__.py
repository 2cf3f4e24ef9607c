"""The command line: ``python -m core SUBCOMMAND …`` (also installed as ``secondroof``).

Exit codes: 0 ok, 2 bad input (one line on stderr naming the place), 1 internal error.

The subcommands live in :mod:`core.cli.year` (one scenario's year) and :mod:`core.cli.options` (weighing the
expansion); :mod:`core.cli.parser` declares them; :func:`main` runs one and turns every failure into an exit code.
"""

from __future__ import annotations

import sys
from collections.abc import Sequence

from core.cli.common import EXIT_BAD_INPUT, EXIT_INTERNAL, EXIT_OK, one_line, stderr_progress
from core.cli.options import format_comparison
from core.cli.parser import build_parser
from core.cli.year import format_year_table
from core.cli_io import (
    DEVICE_ERRNOS,
    Terminated,
    catch_termination,
    quiet_stdout,
    restore_handlers,
)
from core.errors import InputError

__all__ = ["EXIT_BAD_INPUT", "EXIT_INTERNAL", "EXIT_OK", "build_parser", "format_comparison", "format_year_table",
           "main", "stderr_progress"]


def main(argv: Sequence[str] | None = None) -> int:
    """Run one subcommand (``argv`` as on the command line, default ``sys.argv[1:]``); return its exit code."""
    args = None
    previous = catch_termination()
    try:
        if sys.stdout is None:  # started with stdout closed: nothing could be shown, so nothing is done
            if sys.stderr is not None:
                print("error: standard output is closed; nothing can be printed (run the command with an output "
                      "or redirect it to a file)", file=sys.stderr)
            return EXIT_BAD_INPUT
        args = build_parser().parse_args(argv)
        code = args.func(args)
        sys.stdout.flush()  # a full device is found here, not at exit where it would go unreported
        return code
    except InputError as exc:
        scenario = getattr(args, "scenario", None)
        if exc.file is None and scenario and exc.where and exc.where != "command line":
            # A key of the scenario found wrong while simulating (e.g. a monthly figure the sky cannot give).
            exc = InputError(exc.message, file=scenario, where=exc.where, hint=exc.hint)
        print(one_line(f"error: {exc}"), file=sys.stderr)
        return EXIT_BAD_INPUT
    except (KeyboardInterrupt, Terminated):
        print("interrupted", file=sys.stderr)
        return EXIT_INTERNAL
    except BrokenPipeError:
        return EXIT_OK
    except OSError as exc:
        if exc.errno not in DEVICE_ERRNOS:
            print(one_line(f"internal error: {type(exc).__name__}: {exc} (please report this with the input that "
                            "caused it)"), file=sys.stderr)
            return EXIT_INTERNAL
        print(one_line(f"error: cannot write the output: {exc.strerror or exc} (the output device or disk; free "
                        "some space or write elsewhere)"), file=sys.stderr)
        quiet_stdout()
        return EXIT_BAD_INPUT
    except Exception as exc:  # an internal error: say so in one line, never a traceback
        print(one_line(f"internal error: {type(exc).__name__}: {exc} (please report this with the input that "
                        "caused it)"), file=sys.stderr)
        return EXIT_INTERNAL
    finally:
        restore_handlers(previous)


if __name__ == "__main__":
    sys.exit(main())
