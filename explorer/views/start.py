"""Start: pick a sample site or load your own scenario file (with the data files it names)."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import streamlit as st

from core.errors import InputError
from core.scenario import Scenario, load_scenario
from explorer import state, uploads
from explorer.guard import private

SCENARIO_TYPES = ["toml", "csv", "epw", "tm2", "txt"]


@dataclass(frozen=True)
class Source:
    scenario: Scenario
    identity: str  # changes when another scenario is chosen: the controls then reset to its values
    option_hint: str | None = None


def _stamp(paths) -> tuple:
    """Names, sizes and modification times: a changed file on disk is read again."""
    out = []
    for p in sorted(paths):
        try:
            s = p.stat()
            out.append((str(p), s.st_size, s.st_mtime_ns))
        except OSError:
            out.append((str(p), None, None))
    return tuple(out)


@st.cache_data(max_entries=4, show_spinner=False)
def _sample_sites(root: str, stamp: tuple) -> dict[str, Path]:
    return state.sample_sites(Path(root))


@st.cache_resource(max_entries=16, show_spinner=False)
def _load(path: str, stamp: tuple) -> Scenario:
    return load_scenario(path)


def _sample_choices(root: Path, env_path: str | None) -> tuple[dict[str, Path], str | None]:
    sites = _sample_sites(str(root), _stamp(Path(root).glob("*/scenario.toml")))
    default = None
    if env_path:
        wanted = Path(env_path).resolve()
        for name, path in sites.items():
            if path.resolve() == wanted:
                default = name
        if default is None and wanted.is_file():
            default = f"{wanted.parent.name} (from SECONDROOF_SCENARIO)"
            sites = {default: wanted, **sites}
    return sites, default


def render(root: Path, env_path: str | None, upload_folder: Path) -> Source | None:
    """The start controls (in the sidebar); returns the chosen scenario, or None with a message shown."""
    st.header("Site")
    mode = st.radio("Scenario", ["Sample site", "My own scenario file"], key="start_mode", horizontal=True,
                    label_visibility="collapsed")
    if mode == "Sample site":
        sites, default = _sample_choices(root, env_path)
        if not sites:
            st.error(f"No sample sites found under {root}: each needs a folder with a scenario.toml.")
            return None
        names = list(sites)
        name = st.selectbox("Sample site", names, index=names.index(default) if default in names else 0,
                            key="sample_site", help="every folder under sample_sites/ that holds a scenario.toml")
        path = sites[name]
        try:
            sc = _load(str(path), _stamp([path]))
        except InputError as exc:
            st.error(str(exc))
            return None
        return Source(sc, identity=f"sample:{path.resolve()}")

    files = st.file_uploader(
        "Scenario file (.toml) and the data files it names", type=SCENARIO_TYPES, accept_multiple_files=True,
        key="own_files", help="Upload them together: paths in the scenario are looked up among these files only. "
        f"Up to {uploads.LIMIT_TEXT} per file.")
    if not files:
        st.info("Upload a scenario file (.toml) together with its weather and load files, "
                "or choose a sample site.")
        return None
    contents = [(f.name, f.getvalue()) for f in files]
    folder = state.content_folder(upload_folder / "scenario", *(n.encode() + b"\0" + d for n, d in contents))
    try:
        for name, data in contents:
            state.save_upload(folder, name, data)
    except InputError as exc:
        st.error(private(str(exc)))
        return None
    tomls = [f.name for f in files if f.name.lower().endswith(".toml")]
    if not tomls:
        st.info("Add the scenario file itself (.toml) to the upload.")
        return None
    name = tomls[0] if len(tomls) == 1 else st.selectbox("Scenario file", tomls, key="own_toml")
    try:
        sc, hint = state.read_upload_scenario(folder, name)
    except InputError as exc:
        st.error(private(str(exc)))
        return None
    return Source(sc, identity=f"upload:{name}:{folder.name}", option_hint=hint)
