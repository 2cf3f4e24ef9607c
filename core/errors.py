"""The project's own error types: every bad input surfaces as one of these, never as a traceback."""

from __future__ import annotations


class InputError(Exception):
    """Bad user input.

    The message names the file, the place in it (a key path such as ``arrays[1].tilt_deg``, a row or a
    column), what is wrong and how to fix it.
    """

    def __init__(self, message: str, *, file: str | None = None, where: str | None = None,
                 hint: str | None = None) -> None:
        self.message = message
        self.file = None if file is None else str(file)
        self.where = where
        self.hint = hint
        super().__init__(str(self))

    def __str__(self) -> str:
        place = ": ".join(p for p in (self.file, self.where) if p)
        text = f"{place}: {self.message}" if place else self.message
        return f"{text} ({self.hint})" if self.hint else text
