"""What every subcommand shares: exit codes, the parser that reports usage errors as bad input, the progress bar
and the panel layout given on the command line."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable

from core.errors import InputError

EXIT_OK, EXIT_INTERNAL, EXIT_BAD_INPUT = 0, 1, 2


class Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as bad input (exit 2, one line) instead of printing usage."""

    def error(self, message: str):  # noqa: D401 - argparse's signature
        raise InputError(message, where="command line", hint=f"see '{self.prog} --help'")


def stderr_progress(label: str) -> Callable[[float, str], None]:
    """A progress bar on stderr (tqdm) for long work; callers pass it only when stderr is a terminal."""
    import shutil

    from tqdm import tqdm

    # a pseudo-terminal that reports no size would get an empty bar, or none at all (tqdm hides bars below the
    # last row)
    size = shutil.get_terminal_size((80, 24))
    bar = tqdm(total=100, desc=f"{label}: {'starting':<28}", file=sys.stderr, leave=True,
               ncols=size.columns, nrows=size.lines,
               bar_format="{desc} {percentage:3.0f}%|{bar}|")

    def report(fraction: float, what: str) -> None:
        bar.n = round(min(max(fraction, 0.0), 1.0) * 100)
        bar.set_description_str(f"{label}: {what[:28]:<28}", refresh=False)
        bar.refresh()
        if fraction >= 1.0:
            bar.close()
    return report



def layout_from_args(sc, args):
    from core.analyses.options import Layout, layout_of

    base = layout_of(sc)
    count = base.count if args.count is None else args.count
    tilt = base.tilt_deg if args.tilt is None else args.tilt
    azimuth = base.azimuth_deg if args.azimuth is None else args.azimuth
    if count < 0:
        raise InputError(f"--count {count} is negative", where="command line", hint="give a panel count of 0 or more")
    if not 0.0 <= tilt <= 90.0:
        raise InputError(f"--tilt {tilt:g} is outside 0…90", where="command line", hint="degrees from horizontal")
    if not 0.0 <= azimuth <= 360.0:
        raise InputError(f"--azimuth {azimuth:g} is outside 0…360", where="command line",
                         hint="degrees clockwise from north: 180 = south, 270 = west")
    return Layout(int(count), float(tilt), float(azimuth))


def one_line(text: str) -> str:
    """Messages quote file contents and library errors; newlines in them would break the one-line promise."""
    return " ".join(str(text).split())
