"""The batched engine (``dispatch_many``, used by sweeps) against the one-variant engine (``dispatch``).

The one-variant engine is checked against hand-worked cases (tests/test_dispatch.py) and the energy identity
(tests/test_balance.py); the batched engine must give each variant exactly what ``dispatch`` gives on its own,
compiled and as plain Python, into a fresh array or into a reused buffer. Tolerance 1e-9 W as for the
compiled-against-plain check.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from core.model.conversion import inverter_curve
from core.model.dispatch import FLOWS, DispatchInputs, DispatchParams, dispatch, dispatch_many

SOURCE_KEYS = ("dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w", "ac_grid_out_w", "ac_grid_loss_w")


def _params(**changes) -> DispatchParams:
    curve = inverter_curve(4000.0, ((0.05, 0.85), (0.3, 0.94), (1.0, 0.92)))
    base = DispatchParams(
        dt_h=0.25, usable_wh=6_000.0, initial_wh=3_000.0, reserve_wh=1_500.0, floor_wh=400.0,
        charge_max_w=3_000.0, discharge_max_w=3_500.0, roundtrip_efficiency=0.9,
        inverter_ac_w=curve.ac_w, inverter_dc_w=curve.dc_w, charger_rating_w=2_500.0, charger_efficiency=0.93,
        idle_w=25.0, standing_draw_w=30.0, metering_site=True, export_allowed=False, export_limit_w=0.0,
        limiter=False, recharge_reserve_from_grid=True)
    return dataclasses.replace(base, **changes)


def _case(seed: int, variants: int, n: int):
    rng = np.random.default_rng(seed)
    load_b = rng.uniform(0, 2500, n)
    load_g = rng.uniform(0, 900, n)
    up = rng.random(n) > 0.08
    sources = {
        "dc_out_w": rng.uniform(0, 3500, (variants, n)) * (rng.random((variants, n)) < 0.6),
        "ac_backed_out_w": rng.uniform(0, 1200, (variants, n)),
        "ac_grid_out_w": rng.uniform(0, 700, (variants, n)) * (rng.random((variants, n)) < 0.7),
    }
    sources["dc_loss_w"] = sources["dc_out_w"] * 0.03
    sources["ac_backed_loss_w"] = sources["ac_backed_out_w"] * 0.035
    sources["ac_grid_loss_w"] = sources["ac_grid_out_w"] * 0.04
    return load_b, load_g, up, sources


def _one(load_b, load_g, up, sources, i, p, compiled=True):
    inputs = DispatchInputs(load_backed_w=load_b, load_grid_only_w=load_g, grid_up=up,
                            **{k: sources[k][i] for k in SOURCE_KEYS})
    return dispatch(inputs, p, compiled=compiled).flows


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), variants=st.integers(1, 7), metering_site=st.booleans(),
       export_allowed=st.booleans(), limiter=st.booleans())
def test_each_variant_of_the_batch_equals_the_single_engine(seed, variants, metering_site, export_allowed, limiter):
    load_b, load_g, up, sources = _case(seed, variants, 300)
    p = _params(metering_site=metering_site, export_allowed=export_allowed, export_limit_w=400.0 * export_allowed,
                limiter=limiter)
    many = dispatch_many(load_b, load_g, up, sources, p)
    assert many.shape == (variants, len(FLOWS), 300)
    for i in range(variants):
        np.testing.assert_allclose(many[i], _one(load_b, load_g, up, sources, i, p), rtol=0, atol=1e-9)


def test_plain_batch_equals_compiled_batch():
    load_b, load_g, up, sources = _case(11, 4, 500)
    p = _params(export_allowed=True, export_limit_w=300.0, limiter=True)
    fast = dispatch_many(load_b, load_g, up, sources, p, compiled=True)
    slow = dispatch_many(load_b, load_g, up, sources, p, compiled=False)
    np.testing.assert_allclose(fast, slow, rtol=0, atol=1e-9)


def test_a_reused_buffer_is_overwritten_completely():
    # The engine writes every flow of every step, so a buffer full of NaN from before gives the same result as a
    # fresh array — this is what lets a sweep reuse one buffer for all its batches.
    load_b, load_g, up, sources = _case(5, 3, 400)
    p = _params()
    fresh = dispatch_many(load_b, load_g, up, sources, p)
    buffer = np.full((3, len(FLOWS), 400), np.nan)
    out = dispatch_many(load_b, load_g, up, sources, p, out=buffer)
    assert out is buffer
    assert not np.isnan(buffer).any()
    np.testing.assert_array_equal(buffer, fresh)
    # The plain loop honours the buffer too.
    buffer[:] = np.nan
    dispatch_many(load_b, load_g, up, sources, p, out=buffer, compiled=False)
    np.testing.assert_allclose(buffer, fresh, rtol=0, atol=1e-9)


def test_a_buffer_of_the_wrong_shape_is_refused():
    load_b, load_g, up, sources = _case(2, 2, 50)
    with pytest.raises(ValueError, match="shape"):
        dispatch_many(load_b, load_g, up, sources, _params(), out=np.empty((3, len(FLOWS), 50)))


def test_each_variant_may_have_its_own_grid():
    # Many outage years through one batch: variant i with its own grid mask equals the single engine on it.
    load_b, load_g, _, sources = _case(3, 1, 200)
    rng = np.random.default_rng(9)
    ups = rng.random((4, 200)) > 0.3
    p = _params()
    shared = {k: v[0] for k, v in sources.items()}  # one set of sources for every variant
    many = dispatch_many(load_b, load_g, ups, shared, p)
    for i in range(4):
        np.testing.assert_allclose(many[i], _one(load_b, load_g, ups[i], sources, 0, p), rtol=0, atol=1e-9)


def test_the_packed_record_and_the_row_indices_follow_their_lists():
    # The kernel's indices are generated from FLOWS and DispatchParams' fields; packing keeps their order.
    from core.model.dispatch import Flow, Param

    assert [f.name for f in Flow] == list(FLOWS) and [int(f) for f in Flow] == list(range(len(FLOWS)))
    p = _params(idle_w=17.0, limiter=True)
    packed = p.packed()
    assert packed[Param.idle_w] == 17.0 and packed[Param.limiter] == 1.0 and len(packed) == len(Param)
