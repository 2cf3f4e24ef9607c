"""The project's own documents: the scenario reference agrees with the schema, and nothing cites a file
outside the repository."""

from __future__ import annotations

import importlib.util
import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _reference_module():
    spec = importlib.util.spec_from_file_location("make_scenario_reference", ROOT / "docs" / "make_scenario_reference.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_every_schema_key_has_a_meaning_and_every_meaning_a_key():
    problems = _reference_module().problems()
    assert problems == [], "\n".join(problems)


def test_design_document_carries_the_current_scenario_reference():
    ref = _reference_module()
    text = ref.DESIGN.read_text(encoding="utf-8")
    assert text == ref.written(text), "docs/design.md is stale: run python docs/make_scenario_reference.py"


def test_reference_lists_every_field_with_its_default():
    # Independent of the generator's own bookkeeping: every field of every section dataclass appears as a row.
    import dataclasses

    ref = _reference_module()
    text = ref.DESIGN.read_text(encoding="utf-8")
    for header, cls, _ in ref.SECTIONS:
        block = text.split(f"`{header}`" if header.startswith("[") else header, 1)[1].split("####", 1)[0]
        for f in dataclasses.fields(cls):
            if f.init and f.name not in ref.NOT_KEYS:
                assert re.search(rf"^\| `{f.name}` \|", block, re.MULTILINE), f"{header} {f.name}"


def test_nothing_cites_a_file_outside_the_repository():
    # The names are assembled here so that this file does not match its own search.
    outside = [name + ".md" for name in ("DESIGN", "REFERENCES")] + ["../" + "shared", "/work/" + "wt"]
    places = [ROOT / "README.md", ROOT / "DEVELOPERS.md", *[p for d in ("core", "explorer", "tests", "docs",
                                                                      "sample_sites")
                                                            for p in (ROOT / d).rglob("*")
                                                            if p.suffix in (".py", ".md", ".toml")]]
    found = [f"{p.relative_to(ROOT)}: {word}" for p in places for word in outside
             if word in p.read_text(encoding="utf-8", errors="replace")]
    assert found == []
