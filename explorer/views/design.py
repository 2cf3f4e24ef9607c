"""Best layouts: the design search's ranked valid designs, the cost-against-energy picture, and a way to try one
with the what-if controls."""

from __future__ import annotations

import streamlit as st

from core.analyses.design import search
from core.analyses.design.report import design_frame
from core.present import design_charts
from explorer import caching, charts

#: The what-if controls' session keys (explorer.views.controls) that a loaded design sets.
_COUPLING = {"backed_up": "ac_backed_up", "grid": "ac_grid"}


def controls_for(design, spec, sc=None) -> dict | None:
    """Session values that put a one-part design into the what-if controls, or None when they cannot show it
    (:func:`why_not_loadable` says why). ``sc``: the scenario searched (its [expansion] may fix the face)."""
    if why_not_loadable(design, spec, sc) is not None:
        return None
    (p,) = design.candidate.parts
    face = spec.face(p.face)
    values = {"c_count": int(p.modules), "c_tilt": int(round(face.tilt_deg)),
              "c_azimuth": int(round(face.azimuth_deg)) % 360, "c_module": spec.module}
    if p.coupling == "ac":
        return {**values, "c_option": _COUPLING[p.side], "c_micro": p.microinverter,
                "c_limiter": p.export_control == "limiter"}
    # DC: re-strung with an existing array, in parallel with one (on its controller), or on a controller of its own
    return {**values, "c_option": "dc", "c_restring": p.restrung, "c_controller": p.controller,
            "c_per": int(p.modules_per_string)}


def why_not_loadable(design, spec, sc=None) -> str | None:
    """Why the what-if controls cannot show a design (None when they can): they hold one way of connecting the new
    panels at a time, and the expansion's face, when the file names one, fixes where they go."""
    parts = design.candidate.parts
    if len(parts) != 1:
        return ("it has a DC part and an AC part, and the what-if controls hold one way of connecting the new panels "
                "at a time")
    (p,) = parts
    e = sc.expansion if sc is not None else None
    face = e.face if e is not None else None
    if face is not None and p.face != face:
        return f"its panels go on {p.face}, while the scenario's [expansion] puts them on {face}"
    if p.coupling == "dc" and p.controller is None:
        return "it names no controller"
    return None


def _load(values: dict) -> None:
    # Runs as a callback, before the page is drawn again, so the sidebar's widgets may still be set.
    st.session_state.update(values)


def best_lines(result) -> list[str]:
    """The reasons for the best designs, each design told once: the best of a kind that is also the best overall
    is named in one short line instead of the same paragraph again."""
    best = result.best.get("overall")
    lines = [result.reasons["overall"]]
    for kind, words in (("dc", "DC-coupled"), ("ac", "AC-coupled")):
        mine = result.best.get(kind)
        if best is not None and mine is not None and mine.id == best.id:
            lines.append(f"The best {words} design is the best design above ({best.id}).")
        else:
            lines.append(result.reasons[kind])
    return lines


def report_summary(sc) -> dict | None:
    """The last search's summary for the HTML report, when it was run on this scenario (else None)."""
    from core.analyses.design.report import search_summary

    stored = st.session_state.get("design_result")
    if not stored or stored["result"].scenario.name != sc.name:
        return None
    return search_summary(stored["result"])


def search_key(sc) -> str:
    """What a search depends on: the site and every section the designs are built from."""
    return caching.site_key(sc) + repr((sc.faces, sc.design, sc.expansion, sc.arrays, sc.battery, sc.grid,
                                        sc.tariff, sc.controllers, sc.microinverters, sc.modules))


def current_search(sc):
    """The stored search when it was run on exactly these settings (else None): what the Options tab reuses."""
    stored = st.session_state.get("design_result")
    return stored["result"] if stored and stored["key"] == search_key(sc) else None


def run_search(sc):
    """Run the search with a progress bar, store it for both tabs and the report, and return it."""
    bar = st.progress(0.0, text="Preparing the search…")

    def progress(fraction: float, message: str) -> None:
        bar.progress(min(max(fraction, 0.0), 1.0), text=f"Search: {message}")

    result = search(sc, site=caching.site_data(sc), cache=caching.orientation_cache(sc), progress=progress)
    bar.empty()
    st.session_state["design_result"] = {"key": search_key(sc), "result": result}
    return result


def render(m) -> None:
    """The view of the page model ``m``: the search runs on the scenario of the controls, on a button."""
    sc = m.scenario
    if sc.design is None and sc.expansion is None:
        st.info("Add [[faces]] and a [design] section (or an [expansion]) to the scenario to search its designs.")
        return
    key = search_key(sc)
    left, right = st.columns([4, 1.3], vertical_alignment="bottom")
    left.markdown("Every arrangement of the new modules that the roof faces and the candidate controllers and "
                  "microinverters allow: re-strung with the existing modules, on a controller of their own, on "
                  "microinverters, or both. Designs that fail a check are left out; the rest are simulated for the "
                  "year and ranked by NPV.")
    run = right.button("Search the designs", type="primary", key="design_run")
    stored = st.session_state.get("design_result")
    if run:
        run_search(sc)
        stored = st.session_state["design_result"]
    if not stored or stored["result"].scenario.name != sc.name:
        st.info("Press *Search the designs* to try every arrangement (a few seconds).")
        return
    if stored["key"] != key:
        st.warning("The settings changed since this search: press *Search the designs* to update it.")
    result = stored["result"]
    cur = result.scenario.tariff.currency
    st.markdown("\n".join(f"- {line}" for line in best_lines(result)))
    with_invalid = st.toggle("Show the invalid designs too, with the rule each one fails", key="design_invalid")
    frame = design_frame(result, include_invalid=with_invalid)
    st.caption(f"{len(result.designs)} designs tried, {len(result.valid)} valid.")
    table = frame.drop(columns=["valid"] if not with_invalid else []).rename(columns={
        "rank": "Rank", "id": "Design", "kind": "Kind", "new_modules": "New modules", "design": "What",
        "cost": f"Cost ({cur})", "npv": f"NPV ({cur})", "payback_years": "Simple payback (years)",
        "self_consumed_added_kwh": "Added self-consumed (kWh/yr)", "curtailed_added_kwh": "Added curtailed (kWh/yr)",
        "valid": "Valid", "on_front": "On the best front", "why_invalid": "Why not valid"})
    # the figures before the long description, so that they are not behind the table's scroll bar
    table = table[[c for c in table.columns if c != "What"] + ["What"]]
    # whole units with thousands separators: rounded here, shown in the reader's number format
    whole = [f"Cost ({cur})", f"NPV ({cur})", "Added self-consumed (kWh/yr)", "Added curtailed (kWh/yr)"]
    table[whole] = table[whole].round(0)
    st.dataframe(table, hide_index=True, width="stretch", column_config={
        **{c: st.column_config.NumberColumn(format="localized") for c in whole},
        "Simple payback (years)": st.column_config.NumberColumn(format="%.1f")})
    if result.valid:
        charts.draw(design_charts.design_scatter(design_frame(result), cur))
        ids = [d.id for d in result.valid]
        chosen = st.selectbox("Try a design with the what-if controls", ids, key="design_pick",
                              format_func=lambda i: f"{i}: {result.get(i).candidate.words()}")
        design = result.get(chosen)
        values = controls_for(design, result.spec, result.scenario)
        if values is None:
            st.caption("The what-if controls cannot show this design: "
                       f"{why_not_loadable(design, result.spec, result.scenario)}. "
                       "Download it as a scenario file and open that instead.")
        else:
            st.button("Load into the what-if controls", key="design_load", on_click=_load, args=(values,))
        from explorer.state import scenario_download

        st.download_button("Download this design as a scenario file", scenario_download(design.scenario, ""),
                           file_name=f"design_{chosen}.toml", mime="application/toml", key="design_download")
