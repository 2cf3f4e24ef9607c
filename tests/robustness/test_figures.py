"""The robustness figures: every corpus file and a fixed set of fuzzer examples, through the API and the CLI.

Counted over the run, and printed as the closing line by this folder's conftest.py:

- ``cases``: inputs tried (the 53-file load corpus, the malformed-scenario corpus, and a fixed, seeded set of
  fuzzer examples of every kind: random bytes, TOML-like text, mutated scenarios, load, weather and outage files,
  command lines);
- ``escapes``: exceptions other than ``core.errors.InputError`` out of the loader, the importers or the
  simulation, and CLI runs that ended as an internal error (exit 1);
- ``tracebacks``: CLI runs with a Python traceback on stderr;
- ``files_modified``: files added, removed or changed among the inputs (corpus folders, sample sites and every
  generated input file) — outputs go to their own folder.

Each group's test also asserts its own expectations (the place named in the message, one line on stderr, the
manifest's words), so a regression fails here with the case that shows it.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import importlib.util
import json
import random
import tomllib
from pathlib import Path

import pytest

from core.model.loads import read_load_csv
from core.model.outages import read_outages_csv
from core.model.weather import read_weather_file
from core.scenario import load_scenario
from core.simulate import simulate

from . import fuzzcases as fz
from .common import (
    LOAD_CORPUS,
    SAMPLES,
    SCENARIO_CORPUS,
    attempt,
    files_changed,
    names_place,
    run_cli,
    sanity_problems,
    snapshot,
)

LOAD_MANIFEST = json.loads((LOAD_CORPUS / "manifest.json").read_text(encoding="utf-8"))["files"]
SCENARIO_MANIFEST = json.loads((SCENARIO_CORPUS / "manifest.json").read_text(encoding="utf-8"))["files"]
#: The fuzzer examples are fixed: the same seed gives the same cases on every machine.
FUZZ_SEED = 20260207
FUZZ_PER_KIND = 15


def _corpus_base_text() -> str:
    """The valid scenario the malformed corpus was made from (BASE in its generator)."""
    spec = importlib.util.spec_from_file_location("scenario_corpus", SCENARIO_CORPUS / "make_corpus.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.BASE


class Tally:
    """Counts for the closing line, and the problems that fail the test, with the case that shows each."""

    def __init__(self) -> None:
        self.cases = self.escapes = self.tracebacks = self.files_modified = 0
        self.problems: list[str] = []

    def escape(self, case: str, what: str) -> None:
        self.escapes += 1
        self.problems.append(f"{case}: escape: {what}")

    def cli(self, case: str, run, *, allow_ok: bool = False) -> None:
        """A CLI run on bad input: exit 2 with one line and no traceback (or 0 where the input may be fine)."""
        if run.traceback:
            self.tracebacks += 1
            self.problems.append(f"{case}: traceback on stderr")
        if run.code == 1:
            self.escape(case, f"CLI internal error: {run.stderr.strip()[:200]}")
        elif run.code == 0 and allow_ok:
            return
        elif not run.bad_input_in_one_line():
            self.problems.append(f"{case}: CLI exit {run.code}, stderr {run.stderr!r:.300}")

    def add_to(self, figures: dict) -> None:
        for key in ("cases", "escapes", "tracebacks", "files_modified"):
            figures[key] += getattr(self, key)

    def check(self) -> None:
        assert not self.problems, "\n".join(self.problems[:30])
        assert self.files_modified == 0, f"{self.files_modified} file(s) added, removed or changed among the inputs"


@pytest.fixture
def read_only_snapshots():
    """The folders every group reads from, before the group runs; compared again after it."""
    folders = (LOAD_CORPUS, SCENARIO_CORPUS, SAMPLES)
    return {folder: snapshot(folder) for folder in folders}


def _modified_since(snapshots: dict) -> int:
    return sum(files_changed(before, snapshot(folder)) for folder, before in snapshots.items())


# --------------------------------------------------------------------------------------------- load corpus
def test_load_corpus(robustness_figures, read_only_snapshots, tmp_path):
    """Every file of tests/data/loads through read_load_csv and ``inspect-load``: imported, or InputError
    naming the file and the row or column; the manifest's expected outcome holds for the API."""
    tally = Tally()
    for item in LOAD_MANIFEST:
        name = item["name"]
        path = LOAD_CORPUS / name
        tally.cases += 1
        out = attempt(lambda path=path, item=item: read_load_csv(path, **item["kwargs"]))
        if out.kind == "escape":
            tally.escape(name, repr(out.error))
        elif out.kind == "input_error":
            if item["expect"] != "error":
                tally.problems.append(f"{name}: expected to import, got {out.message}")
            elif not ("row" in out.message or "column" in out.message) or name not in out.message:
                tally.problems.append(f"{name}: the message does not name the row or column: {out.message}")
        elif item["expect"] == "error":
            tally.problems.append(f"{name}: expected an InputError, it imported")
        argv = ["inspect-load", path, "--json"]
        for key in ("timezone", "column"):
            if key in item["kwargs"]:
                argv += [f"--{key}", item["kwargs"][key]]
        run = run_cli(argv)
        # The CLI has no --label, so a file read with label="end" may come out either way there.
        tally.cli(name, run, allow_ok=item["expect"] == "ok" or "label" in item["kwargs"])
        if run.code == 2 and name not in run.stderr:
            tally.problems.append(f"{name}: CLI message does not name the file: {run.stderr.strip()}")
    tally.files_modified += _modified_since(read_only_snapshots)
    tally.add_to(robustness_figures)
    assert tally.cases == len(LOAD_MANIFEST) >= 50
    tally.check()


# --------------------------------------------------------------------------------------------- scenario corpus
def test_scenario_corpus_is_large_enough():
    assert len(SCENARIO_MANIFEST) >= 20
    assert all((SCENARIO_CORPUS / item["name"]).is_file() for item in SCENARIO_MANIFEST)
    assert len({item["name"] for item in SCENARIO_MANIFEST}) == len(SCENARIO_MANIFEST)


def test_scenario_corpus(robustness_figures, read_only_snapshots, tmp_path):
    """Every malformed scenario: load_scenario (confined where the manifest says so) and, where the mistake is
    in a data file, the simulation raise InputError naming the manifest's place; ``simulate --steps-csv`` exits
    2 with that place in one line and writes nothing."""
    tally = Tally()
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    for item in SCENARIO_MANIFEST:
        name, where = item["name"], item["where"]
        path = SCENARIO_CORPUS / name
        tally.cases += 1
        confine = SCENARIO_CORPUS if item["confine"] else None
        stage = {"reached": "load"}

        def run(path=path, confine=confine, stage=stage):
            sc = load_scenario(path, confine_to=confine)
            stage["reached"] = "simulate"
            simulate(sc)

        out = attempt(run)
        if out.kind == "escape":
            tally.escape(name, repr(out.error))
        elif out.kind == "ok":
            tally.problems.append(f"{name}: no error")
        else:
            message = out.message
            if stage["reached"] != item["stage"]:
                tally.problems.append(f"{name}: failed at {stage['reached']}, expected at {item['stage']}")
            if where not in message or not all(word in message for word in item["contains"]):
                tally.problems.append(f"{name}: expected {where!r} and {item['contains']} in: {message}")
            if item["stage"] == "load" and name not in message:
                tally.problems.append(f"{name}: the message does not name the file: {message}")
        steps = out_dir / f"{name}.steps.csv"
        run_ = run_cli(["simulate", path, "--json", "--steps-csv", steps])
        tally.cli(name, run_)
        if not item["confine"] and where not in run_.stderr:
            tally.problems.append(f"{name}: CLI message lacks {where!r}: {run_.stderr.strip()}")
        if not item["confine"] and name not in run_.stderr and "/data/" not in run_.stderr:
            tally.problems.append(f"{name}: CLI message names no file: {run_.stderr.strip()}")
    tally.files_modified += _modified_since(read_only_snapshots) + len(list(out_dir.iterdir()))
    tally.add_to(robustness_figures)
    tally.check()


# --------------------------------------------------------------------------------------------- fixed fuzz examples
def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_fixed_fuzzer_examples(robustness_figures, read_only_snapshots, tmp_path):
    """A seeded set of the fuzzers' examples, FUZZ_PER_KIND of each kind, through the API and the CLI."""
    rng = random.Random(FUZZ_SEED)
    tally = Tally()
    inputs, outputs = tmp_path / "inputs", tmp_path / "outputs"
    inputs.mkdir()
    outputs.mkdir()
    written: dict[Path, str] = {}

    def new_input(name: str, data: bytes) -> Path:
        path = inputs / name
        path.write_bytes(data)
        written[path] = _digest(path)
        return path

    base_text = _corpus_base_text()
    base_table = tomllib.loads(base_text)
    bad_scenario = new_input("bad.toml", b"[site\nlatitude = nan\n")
    bad_load = new_input("bad_load.csv", b"time,power_w\n2024-01-01 00:00,abc\n")

    def scenario_case(label: str, path: Path, *, mutation: fz.Mutation | None = None) -> None:
        out = attempt(lambda: load_scenario(path, confine_to=inputs))
        if out.kind == "escape":
            tally.escape(label, repr(out.error))
            return
        if out.kind == "input_error":
            if not names_place(out.error, path.name):
                tally.problems.append(f"{label}: the message names no place: {out.message}")
            elif mutation is not None and mutation.op in ("nan", "inf", "-inf", "wrong_type", "out_of_range") \
                    and not mutation.named_in(out.message):
                tally.problems.append(f"{label}: {mutation} not named in: {out.message}")
            tally.cli(label, run_cli(["simulate", path]))
            return
        if mutation is not None and mutation.op in ("nan", "inf", "-inf", "wrong_type"):
            tally.problems.append(f"{label}: {mutation} was accepted")
        # A valid variant: the whole chain must run, or stop at a data mistake with one line.
        run = run_cli(["simulate", path, "--json", "--steps-csv", outputs / f"{path.stem}.csv"])
        tally.cli(label, run, allow_ok=True)
        if run.code == 0:
            tally.problems.extend(f"{label}: {p}" for p in sanity_problems(json.loads(run.stdout)))

    for k in range(FUZZ_PER_KIND):
        tally.cases += 1
        scenario_case(f"bytes {k}", new_input(f"bytes_{k}.toml", fz.random_bytes(rng)))
        tally.cases += 1
        scenario_case(f"toml-like {k}", new_input(f"toml_{k}.toml", fz.toml_like_text(rng).encode("utf-8")))
        tally.cases += 1
        text, mutation = fz.mutated_scenario_text(rng, base_table)
        scenario_case(f"mutated {k} ({mutation.op} {mutation.path})",
                      new_input(f"mutated_{k}.toml", text.encode("utf-8")), mutation=mutation)

        tally.cases += 1
        load = new_input(f"load_{k}.csv", fz.load_csv_bytes(rng))
        zone = rng.choice([None, "Europe/Berlin", "America/New_York"])
        out = attempt(lambda load=load, zone=zone: read_load_csv(load, timezone=zone))
        if out.kind == "escape":
            tally.escape(f"load {k}", repr(out.error))
        elif out.kind == "input_error" and not names_place(out.error, load.name):
            tally.problems.append(f"load {k}: the message names no place: {out.message}")
        tally.cli(f"load {k}", run_cli(["inspect-load", load] + (["--timezone", zone] if zone else [])),
                  allow_ok=True)

        tally.cases += 1
        weather = new_input(f"weather_{k}.csv", fz.weather_csv_bytes(rng))
        out = attempt(lambda weather=weather: read_weather_file(weather, fmt="csv", tz="Etc/GMT+5", latitude=40.0,
                                                                longitude=-75.0))
        if out.kind == "escape":
            tally.escape(f"weather {k}", repr(out.error))
        elif out.kind == "input_error" and not names_place(out.error, weather.name):
            tally.problems.append(f"weather {k}: the message names no place: {out.message}")
        elif out.kind == "ok":  # a readable year: the whole chain must take it
            scenario = new_input(f"weather_{k}.toml", base_text.replace(
                'source = "monthly"', f'source = "file"\npath = "{weather.name}"\nformat = "csv"').encode())
            scenario_case(f"weather {k} simulated", scenario)

        tally.cases += 1
        outages = new_input(f"outages_{k}.csv", fz.outages_csv_bytes(rng))
        out = attempt(lambda outages=outages: read_outages_csv(outages, dt.UTC))
        if out.kind == "escape":
            tally.escape(f"outages {k}", repr(out.error))
        elif out.kind == "input_error" and not names_place(out.error, outages.name):
            tally.problems.append(f"outages {k}: the message names no place: {out.message}")

        tally.cases += 1
        argv = fz.cli_argv(rng, {"bad_scenario": bad_scenario, "bad_load": bad_load, "load": load,
                                 "weather": weather}, outputs)
        tally.cli(f"argv {argv!r:.120}", run_cli(argv), allow_ok=True)

    tally.files_modified += sum(_digest(p) != digest for p, digest in written.items())
    tally.files_modified += len(set(inputs.iterdir()) - set(written))  # nothing written next to the inputs
    tally.files_modified += _modified_since(read_only_snapshots)
    tally.add_to(robustness_figures)
    tally.check()
