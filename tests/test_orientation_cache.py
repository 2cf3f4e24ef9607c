"""The orientation cache gives what the PV chain gives when called directly, and computes each orientation once.

The cache keeps Marion's diffuse incidence-angle factors once per tilt (they do not depend on the azimuth) and
hands them to the chain; the result must be the chain's own, and the factors pvlib's
``pvlib.iam.marion_diffuse`` (Marion, Solar Energy 147 (2017) 344-348).
"""

from __future__ import annotations

import numpy as np
import pvlib
from expansion_cases import hand_scenario, synthetic_site

from core.analyses.options import Layout, with_option
from core.model import pv
from core.simulate import OrientationCache


def test_factors_are_pvlibs_marion_integrals():
    for tilt in (0.0, 20.0, 55.0, 90.0):
        raw = pvlib.iam.marion_diffuse("physical", tilt)
        got = pv.diffuse_iam_factors("physical", tilt)
        for key in ("sky", "horizon", "ground"):
            assert got[key] == float(np.nan_to_num(raw[key], nan=0.0)), (tilt, key)
    assert pv.diffuse_iam_factors("none", 30.0) == {"sky": 1.0, "horizon": 1.0, "ground": 1.0}


def test_cached_output_equals_the_chain_called_directly():
    sc = hand_scenario()
    site = synthetic_site(days=2)
    cache = OrientationCache()
    m = sc.modules["m400"]
    for azimuth in (120.0, 180.0, 250.0):  # one tilt: the factors are computed once and reused
        array = with_option(sc, "ac_backed_up", Layout(3, 25.0, azimuth)).arrays[-1]
        cached = cache.module_output(site, sc, array)
        direct = pv.module_output(
            site.weather.data, site.geometry, tilt_deg=25.0, azimuth_deg=azimuth, mount=array.mount,
            losses_pct=array.losses_pct, pmax_w=m.pmax_w, vmp_v=m.vmp_v, imp_a=m.imp_a, voc_v=m.voc_v,
            isc_a=m.isc_a, gamma_pmax_pct_per_c=m.gamma_pmax_pct_per_c, beta_voc_pct_per_c=m.beta_voc_pct_per_c,
            alpha_isc_pct_per_c=m.alpha_isc_pct_per_c)
        np.testing.assert_array_equal(cached.p_dc_w, direct.p_dc_w)
        np.testing.assert_array_equal(cached.vmp_v, direct.vmp_v)
        assert cached.p_dc_w.max() > 0.0
    assert len(cache) == 3
    # the same orientation again is not computed again
    again = with_option(sc, "dc", Layout(5, 25.0, 180.0)).arrays[-1]
    cache.module_output(site, sc, again)
    assert len(cache) == 3
