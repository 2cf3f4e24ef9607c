"""Files: a user's inputs are never modified and nothing is written next to them; outputs are written atomically
(a temporary file in the same folder, then a rename) and only over ordinary files; paths inside a scenario stay
inside the folder the user chose when it is confined (``../`` climbs, absolute paths, symbolic links out).

Every test works on a copy of a sample site in a temporary folder, so a failure can never damage the repository.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from core import files
from core.errors import InputError
from core.files import write_atomic
from core.scenario import load_scenario, save_scenario

from .common import copy_site, run_cli, snapshot

INPUT_NAMES = ("scenario.toml", "723170TYA.CSV", "load_backed_up.csv", "load_grid_only.csv")


@pytest.fixture(scope="module")
def site(tmp_path_factory) -> Path:
    """A private copy of Maple Hollow (scenario, TMY3 weather, two load files)."""
    return copy_site("maple_hollow", tmp_path_factory.mktemp("site"))


@pytest.fixture(scope="module")
def simulated_once(site, tmp_path_factory):
    """One ``simulate --steps-csv`` into a separate folder, with snapshots of the site before and after."""
    out = tmp_path_factory.mktemp("out")
    before = snapshot(site)
    run = run_cli(["simulate", site / "scenario.toml", "--steps-csv", out / "steps.csv"])
    return run, before, snapshot(site), out


def test_simulate_with_steps_csv_leaves_the_inputs_alone(simulated_once):
    run, before, after, out = simulated_once
    assert run.code == 0, run.stderr
    assert after == before  # same names, sizes and SHA-256 of every file in the site folder
    assert sorted(p.name for p in out.iterdir()) == ["steps.csv"]  # no temporary file left behind
    lines = (out / "steps.csv").read_text(encoding="utf-8").splitlines()
    # A full year at the load's own 15-minute step (the default step).
    assert lines[0].startswith("interval_start,") and len(lines) == 4 * 8760 + 1


@pytest.mark.parametrize("target", INPUT_NAMES)
def test_steps_csv_never_overwrites_an_input(site, target):
    before = snapshot(site)
    run = run_cli(["simulate", site / "scenario.toml", "--steps-csv", site / target])
    assert run.bad_input_in_one_line() and "refusing to write over an input file" in run.stderr
    assert snapshot(site) == before


def test_steps_csv_refuses_an_input_reached_another_way(site, tmp_path):
    """The same input through '..', through a symbolic link, and through a link in another folder."""
    before = snapshot(site)
    (tmp_path / "link.csv").symlink_to(site / "load_backed_up.csv")
    for target in (site / ".." / site.name / "load_backed_up.csv", tmp_path / "link.csv"):
        run = run_cli(["simulate", site / "scenario.toml", "--steps-csv", target])
        assert run.bad_input_in_one_line(), run.stderr
    assert snapshot(site) == before
    assert (tmp_path / "link.csv").is_symlink()


def test_steps_csv_next_to_the_inputs_adds_only_that_file(site, tmp_path):
    # Writing into the inputs' folder is allowed when the user names the file; nothing else may appear.
    work = copy_site("maple_hollow", tmp_path)
    before = snapshot(work)
    run = run_cli(["simulate", work / "scenario.toml", "--steps-csv", work / "my_steps.csv"])
    assert run.code == 0, run.stderr
    after = snapshot(work)
    assert set(after) - set(before) == {"my_steps.csv"}
    assert {k: v for k, v in after.items() if k != "my_steps.csv"} == before


@pytest.mark.parametrize("kind", ["folder", "fifo", "symlink", "missing_folder"])
def test_steps_csv_only_replaces_ordinary_files(site, tmp_path, kind):
    target = tmp_path / "out.csv"
    if kind == "folder":
        target.mkdir()
    elif kind == "fifo":
        os.mkfifo(target)
    elif kind == "symlink":
        (tmp_path / "elsewhere.csv").write_text("keep me")
        target.symlink_to(tmp_path / "elsewhere.csv")
    else:
        target = tmp_path / "no_such_folder" / "out.csv"
    before = snapshot(tmp_path)
    run = run_cli(["simulate", site / "scenario.toml", "--steps-csv", target])
    assert run.bad_input_in_one_line(), run.stderr
    assert snapshot(tmp_path) == before


# --------------------------------------------------------------------------------------------- atomic writes
def test_write_atomic_keeps_the_old_file_when_the_write_fails(tmp_path, monkeypatch):
    path = tmp_path / "report.csv"
    path.write_bytes(b"old contents")

    def broken_replace(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(files.os, "replace", broken_replace)
    with pytest.raises(OSError):
        write_atomic(path, b"new contents")
    assert path.read_bytes() == b"old contents"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.csv"]  # the temporary file is gone


def test_write_atomic_goes_through_a_temporary_file_in_the_same_folder(tmp_path, monkeypatch):
    seen = []
    real_replace = os.replace

    def spy(src, dst):
        seen.append((Path(src), Path(dst)))
        assert Path(dst).read_bytes() == b"old"  # the target is untouched until the rename
        real_replace(src, dst)

    path = tmp_path / "scenario.toml"
    path.write_bytes(b"old")
    monkeypatch.setattr(files.os, "replace", spy)
    write_atomic(path, b"new")
    [(src, dst)] = seen
    assert src.parent == dst.parent == tmp_path and src.name.startswith(".scenario.toml.")
    assert path.read_bytes() == b"new" and not src.exists()


@pytest.mark.parametrize("kind", ["folder", "fifo", "symlink"])
def test_write_atomic_refuses_what_is_not_an_ordinary_file(tmp_path, kind):
    target = tmp_path / "x"
    if kind == "folder":
        target.mkdir()
    elif kind == "fifo":
        os.mkfifo(target)
    else:
        (tmp_path / "real").write_bytes(b"real")
        target.symlink_to(tmp_path / "real")
    with pytest.raises(InputError, match="not a regular file"):
        write_atomic(target, b"data")
    assert (tmp_path / "real").read_bytes() == b"real" if kind == "symlink" else True


def test_save_scenario_is_atomic_and_leaves_the_data_files_alone(site, tmp_path, monkeypatch):
    sc = load_scenario(site / "scenario.toml")
    before = snapshot(site)
    saved = save_scenario(sc, tmp_path / "copy.toml")
    assert load_scenario(saved) == sc
    monkeypatch.setattr(files.os, "replace", lambda src, dst: (_ for _ in ()).throw(OSError(5, "I/O error")))
    with pytest.raises(OSError):
        save_scenario(sc.replace(name="changed"), saved)
    assert load_scenario(saved) == sc  # the earlier save is intact
    assert sorted(p.name for p in tmp_path.iterdir()) == ["copy.toml"]
    assert snapshot(site) == before


# --------------------------------------------------------------------------------------------- confinement
def _confined(folder: Path, edit: tuple[str, str]):
    text = (folder / "scenario.toml").read_text(encoding="utf-8").replace(*edit)
    path = folder / "uploaded.toml"
    path.write_text(text, encoding="utf-8")
    try:
        return load_scenario(path, confine_to=folder)
    finally:
        path.unlink()


@pytest.mark.parametrize(("edit", "key"), [
    (('path = "723170TYA.CSV"', 'path = "../723170TYA.CSV"'), "weather.path"),
    (('path = "load_backed_up.csv"', 'path = "sub/../../../load_backed_up.csv"'), "load.path"),
    (('grid_only_path = "load_grid_only.csv"', 'grid_only_path = "/etc/hostname"'), "load.grid_only_path"),
    (("[grid]\n", '[grid]\noutages_path = "//tmp/outages.csv"\n'), "grid.outages_path"),
    (('path = "723170TYA.CSV"', 'path = "~/723170TYA.CSV"'), None),  # no home expansion: a name inside, not found
])
def test_confined_scenarios_cannot_reach_outside_their_folder(site, edit, key):
    if key is None:
        sc = _confined(site, edit)
        assert Path(sc.weather.path).is_relative_to(site.resolve())
        return
    with pytest.raises(InputError) as err:
        _confined(site, edit)
    message = str(err.value)
    assert "uploaded.toml" in message and key in message and "outside" in message


def test_a_symbolic_link_out_of_the_folder_is_refused_and_one_inside_is_fine(tmp_path):
    site = copy_site("maple_hollow", tmp_path / "upload")
    outside = tmp_path / "secret.csv"
    outside.write_text("time,power_w\n")
    (site / "escape.csv").symlink_to(outside)
    (site / "alias.csv").symlink_to(site / "load_backed_up.csv")
    (site / "loop.csv").symlink_to(site / "loop.csv")
    with pytest.raises(InputError, match="load.path.*outside"):
        _confined(site, ('path = "load_backed_up.csv"', 'path = "escape.csv"'))
    sc = _confined(site, ('path = "load_backed_up.csv"', 'path = "alias.csv"'))
    assert Path(sc.load.path) == (site / "load_backed_up.csv").resolve()
    with pytest.raises(InputError) as err:
        _confined(site, ('path = "load_backed_up.csv"', 'path = "loop.csv"'))
    assert "load.path" in str(err.value)
    with pytest.raises(InputError, match="NUL"):
        _confined(site, ('path = "load_backed_up.csv"', 'path = "load\\u0000.csv"'))


def test_a_confined_folder_that_is_itself_a_link_still_works(tmp_path):
    real = copy_site("maple_hollow", tmp_path / "real")
    (tmp_path / "chosen").symlink_to(real, target_is_directory=True)
    chosen = tmp_path / "chosen"
    sc = load_scenario(chosen / "scenario.toml", confine_to=chosen)
    assert Path(sc.load.path).exists()
