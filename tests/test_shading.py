"""Face shading (core.model.shading) against geometry and pvlib."""

import numpy as np
import pvlib
import pytest

from core.model import shading
from core.scenario.schema import Obstacle


def _layout(**kw):
    base = dict(tilt_deg=0.0, azimuth_deg=180.0, rows=1, columns=1, length_m=2.0, width_m=1.0, portrait=True,
                bypass_diodes=3, blocks=10)
    base.update(kw)
    return shading.FaceLayout(**base)


def test_wall_shadow_length_matches_trigonometry():
    # A wall of height h casts a shadow h / tan(elevation) long on level ground (plane trigonometry).
    lay = _layout()  # one horizontal module, 2 m north-south, centre 1 m north of its south edge
    wall = Obstacle(name="wall", azimuth_deg=180.0, distance_m=2.0, height_m=1.0, width_m=10.0, depth_m=0.2)
    elevation = 30.0
    shade = shading.obstacle_block_shade(np.array([90.0 - elevation]), np.array([180.0]), lay, [wall])
    reach_m = -0.9 + 1.0 / np.tan(np.radians(elevation))  # wall's north side at y = -0.9; module from y = 0 to 2
    assert shade.mean() == pytest.approx(reach_m / 2.0, abs=1e-9)
    # The lowest block row of every substring is dark, the top one lit: all three substrings are hit (portrait).
    assert np.all(shade[0, 0, :, 0] == 1.0) and np.all(shade[0, 0, :, -1] == 0.0)


def test_no_obstacle_no_shade_and_sun_behind_the_face():
    lay = _layout(tilt_deg=30.0, columns=4)
    zen, az = np.array([40.0, 60.0, 120.0]), np.array([180.0, 100.0, 0.0])
    assert not shading.obstacle_block_shade(zen, az, lay, []).any()
    chimney = Obstacle(name="chimney", azimuth_deg=0.0, distance_m=3.0, height_m=4.0, width_m=1.0, depth_m=1.0)
    # The chimney stands north (behind a south face); the sun in the south never casts its shadow on the face.
    assert not shading.obstacle_block_shade(np.array([40.0]), np.array([180.0]), lay, [chimney]).any()


def test_horizon_blocks_beam_below_profile():
    profile = [(90.0, 10.0), (270.0, 30.0)]
    # Linear in azimuth between the points: 20 degrees at due south.
    assert shading.horizon_elevation_deg(profile, 180.0) == pytest.approx(20.0)
    vis = shading.beam_visible(np.array([75.0, 65.0, 95.0]), np.array([180.0, 180.0, 180.0]), profile)
    assert vis.tolist() == [False, True, False]


def test_sky_factor_of_level_plane_under_uniform_horizon():
    # Isotropic sky seen by a level plane above a uniform horizon of elevation h: the cosine-weighted solid angle
    # of the sky cap gives cos(h)^2 of the open sky (integral of sin(e) cos(e) de from h to 90 degrees).
    az = np.arange(1.0, 360.0, 2.0)
    for h in (10.0, 20.0, 35.0):
        f = shading.sky_view_factors(0.0, 180.0, np.full(az.shape, h), az)
        assert f["sky"] == pytest.approx(np.cos(np.radians(h)) ** 2, rel=5e-3)
    flat = shading.sky_view_factors(35.0, 180.0, np.zeros(az.shape), az)
    assert flat == {"sky": 1.0, "band": 1.0}


def test_row_shadow_matches_pvlib_and_portrait_reaches_all_substrings():
    lay_p = _layout(tilt_deg=20.0, rows=2, columns=1, row_pitch_m=2.5)
    lay_l = _layout(tilt_deg=20.0, rows=2, columns=1, row_pitch_m=1.8, portrait=False)
    zen, az = np.array([75.0]), np.array([180.0])
    sf = pvlib.shading.shaded_fraction1d(zen, az, axis_azimuth=90.0, shaded_row_rotation=20.0,
                                         collector_width=2.0, pitch=2.5)
    p = shading.row_block_shade(zen, az, lay_p)
    assert 0.0 < sf[0] < 1.0
    assert not p[0, 0].any()  # the front row is open
    # Portrait: the shadow is the lower sf of the slant side, i.e. sf of each substring (all three hit).
    assert p[0, 1].mean(axis=-1) == pytest.approx(np.full(3, sf[0]), abs=1e-12)
    land = shading.row_block_shade(zen, az, lay_l)
    frac_l = pvlib.shading.shaded_fraction1d(zen, az, axis_azimuth=90.0, shaded_row_rotation=20.0,
                                             collector_width=1.0, pitch=1.8)[0]
    assert 0.0 < frac_l < 1.0 / 3.0
    # Landscape: only the lowest band's substring is touched while the shadow is under a third of the slant.
    beam = shading.substring_beam_factor(land)[0, 1]
    assert beam[1:].tolist() == [1.0, 1.0] and beam[0] < 1.0
    assert land[0, 1, 0].mean() == pytest.approx(min(1.0, 3 * frac_l), abs=1e-12)
