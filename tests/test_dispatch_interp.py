"""The engine's one-number table lookup against NumPy's ``np.interp`` (the reference library).

The engine reads the inverter-charger's efficiency table once or twice a step; it uses its own lookup because
NumPy's general routine dominates a compiled step when called for one number. It must give NumPy's numbers
exactly — at table points, between them, beyond both ends, for NaN — as plain Python and compiled.
"""

from __future__ import annotations

import numba
import numpy as np

from core.model.conversion import inverter_curve
from core.model.dispatch import _interp


@numba.njit
def _compiled_lookup(xs, xp, fp):
    out = np.empty_like(xs)
    for i in range(xs.shape[0]):
        out[i] = _interp(xs[i], xp, fp)
    return out


def _points(xp: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    span = xp[-1] - xp[0]
    return np.concatenate([
        xp,  # every table point
        rng.uniform(xp[0] - 0.2 * span, xp[-1] + 0.2 * span, 5000),  # inside and beyond both ends
        np.nextafter(xp, np.inf), np.nextafter(xp, -np.inf),  # just beside each table point
        [np.nan, -np.inf, np.inf, 0.0],
    ])


def test_lookup_equals_numpy_on_inverter_tables():
    rng = np.random.default_rng(7)
    for efficiency in (0.95, ((0.05, 0.86), (0.1, 0.91), (0.2, 0.935), (0.5, 0.94), (1.0, 0.925))):
        curve = inverter_curve(5000.0, efficiency)
        for xp, fp in ((curve.ac_w, curve.dc_w), (curve.dc_w, curve.ac_w)):  # both directions, as the engine
            xs = _points(xp, rng)
            expected = np.interp(xs, xp, fp)
            plain = np.array([_interp(x, xp, fp) for x in xs])
            np.testing.assert_array_equal(plain, expected)
            np.testing.assert_array_equal(_compiled_lookup(xs, xp, fp), expected)


def test_lookup_equals_numpy_on_uneven_tables():
    rng = np.random.default_rng(8)
    for size in (2, 3, 17, 200):
        xp = np.cumsum(rng.uniform(0.01, 10.0, size))
        fp = rng.normal(0.0, 100.0, size)
        xs = _points(xp, rng)
        np.testing.assert_array_equal(np.array([_interp(x, xp, fp) for x in xs]), np.interp(xs, xp, fp))
        np.testing.assert_array_equal(_compiled_lookup(xs, xp, fp), np.interp(xs, xp, fp))
