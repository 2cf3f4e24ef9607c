"""Strings and modules from I-V curves (core.model.iv) against pvlib's single-diode functions."""

from pathlib import Path

import numpy as np
import pandas as pd
import pvlib
import pytest

from core.model import iv, shading

TMY3 = Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"
# An invented 60-cell datasheet in the usual range (demo values, not a real product).
SHEET = dict(voc_v=40.6, isc_a=10.2, vmp_v=33.4, imp_a=9.6, alpha_isc_pct_per_c=0.05, beta_voc_pct_per_c=-0.29)


@pytest.fixture(scope="module")
def model():
    return iv.fit_module(cells_in_series=60, **SHEET)


def test_fit_reproduces_datasheet(model):
    # De Soto et al. (2006) via pvlib: the fitted curve passes through Voc, Isc and the maximum power point at STC.
    il, i0, rs, rsh, nvth = iv.operating_params(model, 1000.0, 25.0)
    mpp = pvlib.pvsystem.max_power_point(il, i0, rs, rsh, nvth)
    assert float(mpp["p_mp"]) == pytest.approx(SHEET["vmp_v"] * SHEET["imp_a"], rel=1e-3)
    assert iv.estimate_cells_in_series(40.6) == 60 and iv.estimate_cells_in_series(49.5) == 72


def test_unshaded_string_is_n_times_pvlib_max_power_point(model):
    # Reference: pvlib.pvsystem.max_power_point of the same parameters, times the modules in series.
    n, diodes = 8, 3
    for g, t in ((1000.0, 25.0), (600.0, 45.0), (200.0, 10.0)):
        il, i0, rs, rsh, nvth = iv.operating_params(model, g, t)
        ref = float(pvlib.pvsystem.max_power_point(il, i0, rs, rsh, nvth)["p_mp"])
        got = iv.pattern_power_w(model, np.full((1, n * diodes), g), t, diodes=diodes)[0]
        assert got == pytest.approx(n * ref, rel=2e-4)


def test_one_substring_shaded_global_and_local(model):
    # One of the 3N substrings in beam shadow (diffuse only): a scanning tracker bypasses it and keeps about
    # (N - 1/3)/N of the power (bypass diode losses aside, e.g. Bishop 1988); a tracker that climbs from open circuit
    # stops on the first hill, where the whole string runs at the shaded substring's current: the classic drop.
    n, diodes = 8, 3
    g = np.full((1, n * diodes), 1000.0)
    plain = iv.pattern_power_w(model, g, 25.0, diodes=diodes)[0]
    g[0, 4] = 100.0
    glob = iv.pattern_power_w(model, g, 25.0, diodes=diodes, tracker="global")[0]
    local = iv.pattern_power_w(model, g, 25.0, diodes=diodes, tracker="local")[0]
    assert glob / plain == pytest.approx((n - 1 / 3) / n, abs=0.01)
    assert glob / plain < (n - 1 / 3) / n  # the bypass diode's own drop costs a little
    assert local / plain < 0.5 * glob / plain


def test_window_edge_on_a_short_string(model):
    # Two modules, one substring bypassed: the global point's voltage drops to about 5/6 of the string's Vmp; a
    # controller whose window starts above it must work at the window's edge and gets less (but not nothing).
    g = np.full((1, 6), 1000.0)
    g[0, 0] = 100.0
    free = iv.pattern_power_w(model, g, 25.0, diodes=3)[0]
    edge = iv.pattern_power_w(model, g, 25.0, diodes=3, v_min=60.0)[0]
    assert 0.0 < edge < 0.9 * free


def test_row_shading_portrait_loses_more_than_landscape_like_martinez(model):
    # Martínez-Moreno, Muñoz & Lorenzo (2010) via pvlib.shading.direct_martinez, over a year of NREL's TMY3 for
    # Greensboro NC (pvlib's data folder): a second rack row at 2.6 m pitch, 25° south. With a shadow across the
    # bottom cells of all its bypass blocks, a portrait row loses more than a landscape one, where the lowest
    # block goes first. Our per-substring I-V model must give the same order and annual losses close to theirs.
    data, meta = pvlib.iotools.read_tmy3(TMY3, map_variables=True)
    sun = pvlib.solarposition.get_solarposition(data.index - pd.Timedelta(minutes=30), meta["latitude"],
                                                meta["longitude"], altitude=meta["altitude"])
    poa = pvlib.irradiance.get_total_irradiance(25.0, 180.0, sun["apparent_zenith"].to_numpy(),
                                                sun["azimuth"].to_numpy(), data["dni"].to_numpy(), data["ghi"].to_numpy(),
                                                data["dhi"].to_numpy())
    glob, direct = np.nan_to_num(poa["poa_global"]), np.nan_to_num(poa["poa_direct"])
    up = glob > 0
    zen, az, glob, direct = sun["apparent_zenith"].to_numpy()[up], sun["azimuth"].to_numpy()[up], glob[up], direct[up]
    losses = {}
    for portrait in (True, False):
        lay = shading.FaceLayout(tilt_deg=25.0, azimuth_deg=180.0, rows=2, columns=1, length_m=1.7, width_m=1.0,
                                 portrait=portrait, bypass_diodes=3, blocks=10,
                                 row_pitch_m=2.6 if portrait else 2.6 / 1.7)  # the same ground cover ratio
        beam = shading.substring_beam_factor(shading.row_block_shade(zen, az, lay))[:, 1, :]  # the back row
        ratio = iv.shaded_ratio(model, (glob - direct)[:, None] + direct[:, None] * beam, glob,
                                np.full(len(glob), 25.0), diodes=3)
        sf = shading.row_shaded_fraction(zen, az, lay)
        blocks = np.where(sf > 0, 3, 0) if portrait else np.ceil(3 * sf)
        with np.errstate(invalid="ignore", divide="ignore"):
            martinez = np.nan_to_num(pvlib.shading.direct_martinez(glob, direct, sf, blocks, 3))
        losses[portrait] = (1 - (ratio * glob).sum() / glob.sum(), (martinez * glob).sum() / glob.sum())
    (ours_p, mart_p), (ours_l, mart_l) = losses[True], losses[False]
    assert ours_p > ours_l and mart_p > mart_l
    assert ours_p == pytest.approx(mart_p, abs=0.015) and ours_l == pytest.approx(mart_l, abs=0.015)


def test_uniform_steps_need_no_curve(model):
    ratio = iv.shaded_ratio(model, np.full((3, 6), 500.0), np.full(3, 500.0), np.full(3, 30.0), diodes=3)
    assert ratio.tolist() == [1.0, 1.0, 1.0]
