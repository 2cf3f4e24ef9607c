"""The what-if controls (sidebar): read into one :class:`explorer.state.Controls`."""

from __future__ import annotations

import streamlit as st

from core.present.formats import compass
from core.scenario import Scenario
from explorer import state

_KEYS = {
    "option": "c_option", "count": "c_count", "tilt_deg": "c_tilt", "azimuth_deg": "c_azimuth",
    "module": "c_module", "microinverter": "c_micro", "battery_kwh": "c_battery", "reserve_pct": "c_reserve",
    "standing_draw_w": "c_standing", "export_allowed": "c_export", "export_limit_w": "c_export_limit",
    "limiter": "c_limiter", "outages": "c_outages", "outages_per_year": "c_outages_n",
    "outage_mean_hours": "c_outages_h", "controller": "c_controller", "modules_per_string": "c_per",
    "restring": "c_restring",
}
#: Slider values must have the type of the slider's bounds.
_WIDGET_TYPES = {"c_count": int, "c_tilt": lambda v: int(round(v)), "c_azimuth": lambda v: int(round(v)) % 360,
                 "c_reserve": lambda v: int(round(v)), "c_battery": lambda v: round(float(v), 1),
                 "c_standing": float, "c_export_limit": float, "c_outages_n": float, "c_outages_h": float,
                 "c_per": int}
def reset(sc: Scenario, option_hint: str | None = None) -> None:
    """Set every control to the scenario's own values (a new scenario was chosen)."""
    c = state.controls_from_scenario(sc, option_hint)
    for key in ("day_month", "sweep_result"):  # views that belong to the previous scenario
        st.session_state.pop(key, None)
    for field, key in _KEYS.items():
        value = getattr(c, field)
        if value is None:
            st.session_state.pop(key, None)
        else:
            st.session_state[key] = _WIDGET_TYPES.get(key, lambda v: v)(value)


def render(sc: Scenario) -> state.Controls:
    """Draw the controls for ``sc`` and return their values."""
    d = state.controls_from_scenario(sc)
    ss = st.session_state
    st.header("What if…")
    allowed = state.option_choices(sc)
    e = sc.expansion
    layout = (d.controller, d.modules_per_string, d.restring)  # the file's, unless the DC option's controls say else
    if e is None or not allowed:
        st.info("The scenario has no usable [expansion] section: only the existing system is shown. Add one with "
                "a module, a count, an orientation and a microinverter or a controller.")
        option, count, tilt, azimuth, module, micro = d.option, 0, d.tilt_deg, d.azimuth_deg, d.module, d.microinverter
    else:
        st.subheader("New panels")
        if ss.get("c_option") not in allowed:
            ss["c_option"] = allowed[0]
        option = st.radio("Coupling", allowed, format_func=state.OPTION_CHOICE_LABELS.get, key="c_option",
                          help="AC-coupled: on microinverters, on the backed-up side of the inverter-charger (they "
                          "keep running in an outage) or on the grid side (they stop in an outage). DC-coupled: on "
                          f"the charge controller {e.controller!r} (shared with any arrays already on it).")
        count = st.slider("Panels added", 0, state.panel_count_max(sc), key="c_count")
        tilt = st.slider("Tilt (°)", 0, 90, key="c_tilt", help="0° = flat, 90° = vertical")
        azimuth = st.slider("Azimuth (°)", 0, 359, key="c_azimuth",
                            help="the direction the panels face: 90° = east, 180° = south, 270° = west")
        st.caption(f"Facing {compass(azimuth)}, tilted {tilt}°.")
        modules = list(sc.modules)
        if ss.get("c_module") not in modules:
            ss["c_module"] = d.module
        module = st.selectbox("Module", modules, key="c_module",
                              format_func=lambda m: f"{m} ({sc.modules[m].pmax_w:,.0f} W STC)")
        micro = d.microinverter
        if option in ("ac_backed_up", "ac_grid") and sc.microinverters:
            micros = list(sc.microinverters)
            if ss.get("c_micro") not in micros:
                ss["c_micro"] = d.microinverter if d.microinverter in micros else micros[0]
            micro = st.selectbox("Microinverter", micros, key="c_micro",
                                 format_func=lambda m: f"{m} ({sc.microinverters[m].ac_rating_w:,.0f} W AC)")
        elif ss.get("c_micro") in sc.microinverters:
            micro = ss["c_micro"]
        if option == "dc":
            layout = string_layout(sc, module, int(count))

    battery_kwh = reserve = None
    if sc.battery is not None:
        st.subheader("Battery")
        b = sc.battery
        top = float(max(20.0, round(3 * b.usable_kwh)))
        battery_kwh = st.slider("Usable capacity (kWh)", 0.0, top, step=0.1, key="c_battery", format="%.1f")
        reserve = st.slider("Outage reserve (% SOC)", int(b.floor_pct), 100, key="c_reserve",
                            help=f"SOC kept back while the grid is up, for outages. In an outage the battery may go "
                            f"down to the floor of {b.floor_pct:.0f} %.")

    st.subheader("Grid connection")
    standing = st.number_input("Standing draw (W)", 0.0, 2000.0, step=5.0, key="c_standing", format="%.0f",
                               help="the small grid import the controller keeps to avoid accidental export")
    export_allowed = st.radio("Export", [False, True], key="c_export", horizontal=True,
                              format_func=lambda x: "allowed up to a limit" if x else "zero export") is True
    limit = ss.get("c_export_limit", d.export_limit_w)
    if export_allowed:
        if (limit or 0.0) < 1.0:  # coming from zero export: start from a small limit rather than 0 W
            ss["c_export_limit"] = 500.0
        limit = st.number_input("Export limit (W)", 1.0, 1e6, step=50.0, key="c_export_limit", format="%.0f",
                                help="the most the site may send into the grid")
    limiter = st.checkbox("Export limiter curtails the microinverters", key="c_limiter",
                          help="Ticked: a limiter curtails AC-coupled output that would leave the site beyond what "
                          "is allowed. Unticked: nothing stops it, and it is counted as uncontrolled export.")

    st.subheader("Grid outages")
    modes = state.outage_modes(sc)
    if ss.get("c_outages") not in modes:
        ss["c_outages"] = d.outages
    outages = st.radio("Outages", modes, format_func=state.OUTAGE_LABELS.get, key="c_outages",
                       label_visibility="collapsed")
    per_year, mean_h = d.outages_per_year, d.outage_mean_hours
    if outages == "random":
        per_year = st.slider("Outages per year", 0.0, 24.0, step=0.5, key="c_outages_n", format="%.1f")
        mean_h = st.slider("Mean length (h)", 0.5, 48.0, step=0.5, key="c_outages_h", format="%.1f")

    return state.Controls(
        option=option, count=int(count), tilt_deg=float(tilt), azimuth_deg=float(azimuth), module=module,
        microinverter=micro, battery_kwh=None if battery_kwh is None else float(battery_kwh),
        reserve_pct=None if reserve is None else float(reserve), standing_draw_w=float(standing),
        export_allowed=export_allowed, export_limit_w=float(limit or 0.0), limiter=bool(limiter), outages=outages,
        outages_per_year=float(per_year), outage_mean_hours=float(mean_h), controller=layout[0],
        modules_per_string=layout[1], restring=layout[2])


def _strings_changed(existing: int, top: int) -> None:
    # A callback, run before the page is drawn again: strings × modules per string sets the panels added.
    ss = st.session_state
    total = int(ss["c_per"]) * int(ss["c_strings"])
    ss["c_count"] = int(min(max(total - existing, 0), top))


def _wiring_changed(sc: Scenario) -> None:
    # A callback: re-stringing starts from the array's own length, strings of their own from the file's.
    ss = st.session_state
    name = ss.get("c_restring")
    old = next((a for a in sc.arrays if a.name == name), None)
    per = old.modules_per_string if old is not None else state.controls_from_scenario(sc).modules_per_string
    if per:
        ss["c_per"] = int(per)


def string_layout(sc: Scenario, module: str, count: int) -> tuple[str | None, int | None, str | None]:
    """The DC-coupled option's string layout: re-string an existing array or not, the controller, modules per
    string and strings (strings × modules per string sets the panels added); returns (controller, modules per
    string, array re-strung)."""
    from core.analyses.design.strings import describe
    from core.analyses.options import dc_layout_note, dc_string_layout

    ss = st.session_state
    st.markdown("**String layout**")
    choices = (None, *state.restring_choices(sc, module))
    if ss.get("c_restring") not in choices:
        ss["c_restring"] = None

    def what(name: str | None) -> str:
        if name is None:
            return "Strings of their own"
        return f"Re-string '{name}' ({state.existing_modules(sc, name)})"

    restring = st.selectbox("Wiring", choices, format_func=what, key="c_restring", on_change=_wiring_changed,
                            args=(sc,),
                            help="Re-string: the existing array's modules and the new ones re-wired together as "
                                 "equal strings on that array's controller and face (the tilt and azimuth above do "
                                 "not apply). Otherwise the new modules form strings of their own on the controller "
                                 "chosen below, in parallel with any strings already on it.")
    existing = state.existing_modules(sc, restring)
    if restring is None:
        names = list(sc.controllers)
        if ss.get("c_controller") not in names:
            ss["c_controller"] = state.controls_from_scenario(sc).controller or names[0]
        controller = st.selectbox("Controller", names, key="c_controller", format_func=lambda n: (
            f"{n} ({sc.controllers[n].max_pv_voltage_v:,.0f} V, {sc.controllers[n].max_input_current_a:,.0f} A)"))
    else:
        old = next(a for a in sc.arrays if a.name == restring)
        controller = old.controller
        st.caption(f"On {controller} and the face of '{restring}' ({old.tilt_deg:.0f}° tilt, {old.azimuth_deg:.0f}° "
                   "azimuth): the tilt and azimuth above do not apply.")
    if not isinstance(ss.get("c_per"), int) or not 1 <= ss["c_per"] <= 100:
        ss["c_per"] = int(state.controls_from_scenario(sc).modules_per_string or max(count + existing, 1))
    total = count + existing
    top = state.panel_count_max(sc)
    per_col, strings_col = st.columns(2)
    per = per_col.number_input("In series", 1, 100, step=1, key="c_per",
                               help="modules per string: the string's voltage grows with it")
    ss["c_strings"] = max(dc_string_layout(total, int(per))[1], 1) if total > 0 else 1
    strings_col.number_input("Strings", 1, 100, step=1, key="c_strings", on_change=_strings_changed,
                             args=(existing, top), help="strings in parallel: sets the panels added to "
                             "strings × in series" + (f", less the {existing} existing modules" if existing else ""))
    if total > 0:
        p, n = dc_string_layout(total, int(per))
        note = dc_layout_note(total, int(per))
        if note:
            st.caption(note)
        elif restring:
            st.caption(f"All {total} modules ({existing} existing, {count} new) as {describe(p, n)}.")
    return controller, int(per), restring
