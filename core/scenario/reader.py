"""Builds the schema's dataclasses from TOML tables, with errors that name the file and the key path.

Unknown keys are an error naming the key and the nearest valid one; numbers are checked against the
range in their field's metadata.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import types
import typing
from pathlib import Path
from typing import Any, Literal

from core.errors import InputError


class Reader:
    """Builds dataclasses from TOML tables, with errors that name the file and the key path."""

    def __init__(self, file: str | None) -> None:
        self.file = file

    def fail(self, where: str, message: str, hint: str | None = None) -> typing.NoReturn:
        raise InputError(message, file=self.file, where=where, hint=hint)

    def build(self, cls: type, table: Any, where: str) -> Any:
        if not isinstance(table, dict):
            header = f"[[{where[:where.rindex('[')]}]]" if where.endswith("]") else f"[{where}]"  # arrays[0]
            self.fail(where, f"expected a table, found {type(table).__name__}",
                      f"write it as {header} followed by key = value lines")
        hints = typing.get_type_hints(cls)
        fields = {f.name: f for f in dataclasses.fields(cls) if f.init and f.name not in ("base_dir", "confine_to")}
        for key in table:
            if key not in fields:
                near = difflib.get_close_matches(key, list(fields), n=1, cutoff=0.5)
                hint = f"did you mean {near[0]!r}?" if near else f"valid keys: {', '.join(fields)}"
                self.fail(f"{where}.{key}" if where else key, "unknown key", hint)
        values = {}
        for name, f in fields.items():
            path = f"{where}.{name}" if where else name
            if name in table:
                values[name] = self.value(hints[name], table[name], path, f.metadata)
            elif f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING:
                self.fail(path, "required key is missing", f"add {name} = … to [{where or 'top level'}]")
        return cls(**values)

    def value(self, tp: Any, raw: Any, where: str, meta: Any) -> Any:
        origin = typing.get_origin(tp)
        args = typing.get_args(tp)
        if origin in (typing.Union, types.UnionType):
            options = [a for a in args if a is not type(None)]
            if len(options) == 1:
                return self.value(options[0], raw, where, meta)
            errors: list[InputError] = []
            for option in options:  # e.g. a number or a curve
                try:
                    return self.value(option, raw, where, meta)
                except InputError as exc:
                    # The message of the option the value is shaped like: a bad number is reported as a number
                    # (out of range), not as "expected a list" from the curve it was never meant to be.
                    shaped_like = (typing.get_origin(option) is tuple) == isinstance(raw, list)
                    errors.insert(0, exc) if shaped_like else errors.append(exc)
            raise errors[0]
        if origin is Literal:
            if raw not in args:
                near = difflib.get_close_matches(str(raw), [str(a) for a in args], n=1, cutoff=0.3)
                hint = f"did you mean {near[0]!r}?" if near else None
                self.fail(where, f"{raw!r} is not one of {', '.join(repr(a) for a in args)}", hint)
            return raw
        if origin is tuple:
            if not isinstance(raw, list):
                self.fail(where, f"expected a list, found {raw!r}")
            if len(args) == 2 and args[1] is Ellipsis:
                count = meta.get("count") if meta else None
                if count is not None and len(raw) != count:
                    self.fail(where, f"expected {count} values (one per month, January first), found {len(raw)}")
                missing = meta.get("missing") if meta else None
                return tuple(None if missing is not None and item == missing
                             else self.value(args[0], item, f"{where}[{i}]", meta) for i, item in enumerate(raw))
            if len(raw) != len(args):
                self.fail(where, f"expected {len(args)} values, found {len(raw)}")
            return tuple(self.value(a, item, f"{where}[{i}]", {}) for i, (a, item) in enumerate(zip(args, raw, strict=True)))
        if origin is dict:
            if not isinstance(raw, dict):
                self.fail(where, "expected a table of named entries", f"write [{where}.NAME] sections")
            # Named sections ([modules.NAME]) or plain named values (measured.pv = {"south" = "pv1_kwh"}).
            return {name: self.value(args[1], sub, f"{where}.{name}", {}) for name, sub in raw.items()}
        if isinstance(tp, type) and dataclasses.is_dataclass(tp):
            return self.build(tp, raw, where)
        if tp is bool:
            if not isinstance(raw, bool):
                self.fail(where, f"expected true or false, found {raw!r}")
            return raw
        if tp is str:
            if not isinstance(raw, str):
                self.fail(where, f"expected text in quotes, found {raw!r}")
            return raw
        if tp is int or tp is float:
            if isinstance(raw, bool) or not isinstance(raw, int | float):
                unit = meta.get("unit") if meta else ""
                self.fail(where, f"expected a number{' in ' + unit if unit else ''}, found {raw!r}",
                          "units are part of the key name; write the bare number")
            if tp is int and (not float(raw).is_integer()):
                self.fail(where, f"expected a whole number, found {raw!r}")
            if not math.isfinite(raw):
                self.fail(where, f"{raw!r} is not a finite number")
            self.check_range(raw, where, meta)
            return int(raw) if tp is int else float(raw)
        if tp is Path:
            return Path(raw)
        raise TypeError(f"schema type {tp!r} is not handled")  # a programming error, not bad input

    def check_range(self, x: float, where: str, meta: Any) -> None:
        if not meta:
            return
        lo, hi = meta.get("lo"), meta.get("hi")
        if lo is not None and (x < lo or (meta.get("lo_open") and x == lo)):
            self.fail(where, f"{x!r} is {'not above' if meta.get('lo_open') else 'below'} the lowest sensible value {lo}",
                      "check the unit in the key name")
        if hi is not None and x > hi:
            self.fail(where, f"{x!r} is above the highest sensible value {hi}", "check the unit in the key name")
