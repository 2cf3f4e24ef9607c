"""Reading and writing scenario files: TOML text to a validated :class:`Scenario` and back."""

from __future__ import annotations

import dataclasses
import os
import re
import tomllib
from pathlib import Path
from typing import Any

from core.errors import InputError
from core.files import MAX_SCENARIO_BYTES, read_input_bytes
from core.scenario.crosschecks import cross_check, with_face_orientations
from core.scenario.reader import Reader
from core.scenario.schema import PATH_KEYS, SCHEMA, Scenario


def parse_scenario(text: str, *, file: str | None = None, base_dir: Path | None = None,
                   confine_to: Path | None = None) -> Scenario:
    """Parse and validate scenario TOML text."""
    r = Reader(file)
    try:
        table = tomllib.loads(text)
    except RecursionError:  # brackets nested thousands deep: no scenario is like that
        r.fail("line 1", "not valid TOML: tables or lists nested too deeply to read",
               "a scenario needs only a few levels of [sections] and lists")
    except tomllib.TOMLDecodeError as exc:
        # tomllib says "(at line 3, column 9)" or "(at end of document)" in its text; make that the place.
        found = re.search(r"\s*\(at (line \d+, column \d+|end of document)\)", str(exc))
        where = f"line {text.count(chr(10)) + 1} (the end of the file)" if found is None or \
            found[1] == "end of document" else found[1]
        reason = str(exc) if found is None else str(exc).replace(found[0], "")
        r.fail(where, f"not valid TOML: {reason}", "check quotes, brackets and '=' signs on that line")
    schema = table.pop("schema", SCHEMA)
    if schema != SCHEMA:
        r.fail("schema", f"schema {schema!r} is not supported", f"this version reads schema = {SCHEMA}")
    for key in ("arrays", "faces"):
        if key in table and not isinstance(table[key], list):
            r.fail(key, f"expected [[{key}]] entries")
    try:
        sc = r.build(Scenario, table, "")
    except RecursionError:
        r.fail("line 1", "tables or lists are nested too deeply", "a scenario needs only a few levels")
    sc = dataclasses.replace(sc, base_dir=Path(base_dir or ".").resolve(), confine_to=confine_to)
    cross_check(sc, r)
    sc = with_face_orientations(sc)
    try:
        return _absolute_paths(sc)
    except InputError as exc:  # name the scenario file in path errors too
        r.fail(exc.where or "", exc.message, exc.hint)


def _absolute_paths(sc: Scenario) -> Scenario:
    """Store every file path resolved (and confinement-checked), so equal scenarios compare equal
    wherever their files were saved."""
    sections: dict[str, dict[str, str]] = {}
    for section, key in PATH_KEYS:
        value = getattr(getattr(sc, section), key, None)  # optional sections ([measured]) may be absent
        if value is not None:
            resolved = str(sc.resolve(value, f"{section}.{key}"))
            sections.setdefault(section, {})[key] = resolved
    for section, changes in sections.items():
        sc = dataclasses.replace(sc, **{section: dataclasses.replace(getattr(sc, section), **changes)})
    return sc


def load_scenario(path: str | os.PathLike, *, confine_to: Path | None = None) -> Scenario:
    """Read a scenario file; relative paths in it are resolved from its folder."""
    path = Path(path)
    raw = read_input_bytes(path, kind="scenario file", max_bytes=MAX_SCENARIO_BYTES)
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError("the scenario file is not UTF-8 text", file=str(path),
                         where=f"byte {exc.start}", hint="save it as UTF-8") from exc
    return parse_scenario(text, file=str(path), base_dir=path.parent.resolve(), confine_to=confine_to)


def scenario_to_dict(sc: Scenario, *, relative_to: Path | None = None) -> dict:
    """A TOML-ready table (None dropped). Paths are rewritten relative to ``relative_to`` when given."""
    def plain(obj: Any, missing: float | None = None) -> Any:
        if dataclasses.is_dataclass(obj):
            return {f.name: plain(getattr(obj, f.name), f.metadata.get("missing")) for f in dataclasses.fields(obj)
                    if f.compare and getattr(obj, f.name) is not None}
        if isinstance(obj, dict):
            return {k: plain(v) for k, v in obj.items()}
        if isinstance(obj, tuple | list):
            return [missing if v is None else plain(v) for v in obj]
        return obj

    out = plain(sc)
    out = {"schema": out.pop("schema"), "name": out.pop("name"), **out}
    if relative_to is not None:
        for section, key in PATH_KEYS:
            if section in out and key in out[section]:
                target = (sc.base_dir / out[section][key]).resolve()
                out[section][key] = Path(os.path.relpath(target, Path(relative_to).resolve())).as_posix()
    return out


def scenario_to_toml(sc: Scenario, *, relative_to: Path | None = None) -> str:
    import tomli_w

    return tomli_w.dumps(scenario_to_dict(sc, relative_to=relative_to))


def save_scenario(sc: Scenario, path: str | os.PathLike) -> Path:
    """Write the scenario atomically (temporary file, then rename); it loads back equal."""
    from core.files import write_atomic

    path = Path(path)
    write_atomic(path, scenario_to_toml(sc, relative_to=path.parent).encode("utf-8"))
    return path
