"""The malformed/awkward load-file corpus (tests/data/loads, made by make_corpus.py there).

Each file must either import cleanly — with a quality warning naming the row or column where the file was
repaired — or raise InputError naming the file and the row or column; never any other exception. The
expected outcome, message text and true energy of each file are in manifest.json, written by the generator
from the invented profile it used (so the energies are known by construction, not read back from the code).
Nothing may be written next to the user's file.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import pytest

from core.errors import InputError
from core.model.loads import read_load_csv

CORPUS = Path(__file__).parent / "data" / "loads"
MANIFEST = json.loads((CORPUS / "manifest.json").read_text())["files"]


def snapshot(folder: Path) -> dict[str, tuple[int, int, str]]:
    """Name -> (size, mtime_ns, sha256) of every entry in ``folder``."""
    out = {}
    for entry in sorted(folder.iterdir()):
        stat = entry.stat()
        digest = hashlib.sha256(entry.read_bytes()).hexdigest() if entry.is_file() else ""
        out[entry.name] = (stat.st_size, stat.st_mtime_ns, digest)
    return out


def test_corpus_is_large_enough():
    # The brief asks for at least 25 malformed or awkward files.
    assert len(MANIFEST) >= 25
    assert all((CORPUS / item["name"]).is_file() for item in MANIFEST)
    assert sum(item["expect"] == "error" for item in MANIFEST) >= 10


@pytest.mark.parametrize("item", MANIFEST, ids=[item["name"] for item in MANIFEST])
def test_corpus_file(item):
    path = CORPUS / item["name"]
    before = snapshot(CORPUS)
    try:
        measured = read_load_csv(path, **item["kwargs"])
    except InputError as exc:
        message = str(exc)
        assert item["expect"] == "error", f"unexpected InputError: {message}"
        assert item["name"] in message
        assert "row" in message or "column" in message, message
        for text in item["contains"]:
            assert text in message, f"{text!r} not in {message!r}"
    else:
        assert item["expect"] == "ok", f"expected an InputError, imported: {measured.quality.warnings}"
        quality = measured.quality
        joined = "\n".join(quality.warnings)
        for text in item["contains"]:
            assert text in joined, f"{text!r} not in warnings:\n{joined}"
        if item["contains"]:
            assert "row" in joined or "column" in joined
        if item["clean"]:
            assert quality.rows_rejected == 0, quality.warnings
        if item["energy_kwh"] is not None:
            assert quality.energy_kwh == pytest.approx(item["energy_kwh"], rel=item["rel_tol"])
        power = measured.power_w
        assert str(power.index.tz) == "UTC"
        assert power.index.is_monotonic_increasing
        assert (power.index.to_series().diff().dropna() == power.index[1] - power.index[0]).all()
    assert snapshot(CORPUS) == before, "the importer changed or created files next to the input"
