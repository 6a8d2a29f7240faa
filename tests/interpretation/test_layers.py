"""Checks of subsurf.layers: time zero, depth uncertainty, layered time-depth."""

import numpy as np
import pytest
from scipy import constants, optimize
from uncertainties import ufloat, umath

from subsurf.errors import InputError
from subsurf.interpretation.layers import (
    LayeredEarth,
    apply_time_zero,
    depth_with_uncertainty,
    layered_depth_first_order,
    layered_depth_from_time,
    layered_depth_monte_carlo,
    layered_time_from_depth,
    time_zero_from_direct_wave,
)
from subsurf.waves.propagation import depth_from_time


def test_first_order_depth_matches_uncertainties():
    """Homogeneous depth and its linearised sd agree with the uncertainties package."""
    v, t, tz = ufloat(0.095e9, 0.003e9), ufloat(24e-9, 0.3e-9), ufloat(2e-9, 0.25e-9)
    d = umath.sqrt((v * (t - tz) / 2) ** 2 - 0.07**2)
    est = depth_with_uncertainty(24e-9, 0.095e9, offset_m=0.14, time_zero_s=2e-9, velocity_se=0.003e9,
                                 twt_sd_s=0.3e-9, time_zero_sd_s=0.25e-9)
    assert float(est.depth) == pytest.approx(d.n, rel=1e-12)
    assert float(est.depth_sd) == pytest.approx(d.s, rel=1e-9)


def test_direct_air_wave_time_zero():
    """The direct air wave arrives x/c after time zero."""
    assert float(time_zero_from_direct_wave(5e-9, 0.6)) == pytest.approx(5e-9 - 0.6 / constants.c)


def test_direct_ground_wave_time_zero():
    """The direct ground wave arrives x/v after time zero."""
    assert float(time_zero_from_direct_wave(12e-9, 0.6, wave="ground", ground_velocity=0.1e9)) == \
        pytest.approx(6e-9)


def test_time_before_time_zero_refused():
    """A pick earlier than time zero is refused, naming the value."""
    with pytest.raises(InputError, match="before time zero"):
        apply_time_zero([5e-9, 1e-9], 2e-9)


def test_single_layer_equals_homogeneous():
    """A one-layer earth gives the homogeneous depth, with separation too."""
    e = LayeredEarth.from_thicknesses([0.1e9], [])
    t = np.array([8e-9, 20e-9, 40e-9])
    np.testing.assert_allclose(layered_depth_from_time(t, e, offset_m=0.5), depth_from_time(t, 0.1e9, 0.5),
                               rtol=1e-9)


def test_zero_offset_layers_sum_interval_times():
    """Zero offset: depth in the second layer = h1 + v2·(t − 2h1/v1)/2."""
    e = LayeredEarth.from_interfaces([0.12e9, 0.08e9], [0.6])
    t = 2 * 0.6 / 0.12e9 + 10e-9
    assert float(layered_depth_from_time(t, e)) == pytest.approx(0.6 + 0.08e9 * 10e-9 / 2, rel=1e-12)


def test_offset_ray_obeys_fermat():
    """With separation, layered time equals the least-time path over the interface crossing point."""
    v1, v2, h1, d, x = 0.12e9, 0.07e9, 0.5, 1.4, 1.0
    e = LayeredEarth.from_thicknesses([v1, v2], [h1])

    def half_time(a):  # crossing the interface at horizontal distance a from the source
        return np.hypot(a, h1) / v1 + np.hypot(x / 2 - a, d - h1) / v2
    best = optimize.minimize_scalar(half_time, bounds=(0, x / 2), method="bounded", options={"xatol": 1e-12})
    assert float(layered_time_from_depth(d, e, offset_m=x)) == pytest.approx(2 * best.fun, rel=1e-9)


def test_layered_round_trip():
    """Depth → time → depth returns the depth (with separation)."""
    e = LayeredEarth.from_thicknesses([0.12e9, 0.08e9, 0.06e9], [0.5, 1.0])
    d = np.array([0.2, 0.9, 2.1])
    t = layered_time_from_depth(d, e, offset_m=0.4)
    np.testing.assert_allclose(layered_depth_from_time(t, e, offset_m=0.4), d, rtol=1e-9)


def test_monte_carlo_agrees_with_first_order():
    """For small uncertainties the MC sd agrees with the linearised sd within 6 %."""
    e = LayeredEarth.from_thicknesses([0.12e9, 0.08e9], [0.6], velocity_se=[0.003e9, 0.002e9],
                                      thickness_se=[0.02])
    t = np.array([20e-9, 40e-9])
    fo = layered_depth_first_order(t, e, twt_sd_s=0.3e-9, time_zero_sd_s=0.2e-9)
    mc = layered_depth_monte_carlo(t, e, twt_sd_s=0.3e-9, time_zero_sd_s=0.2e-9, draws=8000, seed=11)
    np.testing.assert_allclose(mc.depth_sd, fo.depth_sd, rtol=0.06)
    assert mc.draws == 8000 and mc.seed == 11


def test_monte_carlo_is_reproducible():
    """The same seed gives the same spread."""
    e = LayeredEarth.from_thicknesses([0.1e9, 0.08e9], [0.6], velocity_se=0.003e9)
    a = layered_depth_monte_carlo(30e-9, e, draws=500, seed=4)
    b = layered_depth_monte_carlo(30e-9, e, draws=500, seed=4)
    assert a.depth_sd[0] == b.depth_sd[0]


@pytest.mark.parametrize("kw, match", [({"seed": -1}, "seed must be"), ({"seed": 1.5}, "seed must be"),
                                       ({"draws": 10}, "draws must be"), ({"draws": "many"}, "draws must be")])
def test_monte_carlo_bad_draws_or_seed_refused(kw, match):
    """Bad draw counts and seeds raise InputError naming them (not numpy's ValueError)."""
    e = LayeredEarth.from_thicknesses([0.1e9, 0.08e9], [0.6], velocity_se=0.003e9)
    with pytest.raises(InputError, match=match):
        layered_depth_monte_carlo(30e-9, e, **kw)


def test_separation_too_large_refused():
    """A time shorter than the direct path between the antennas has no real depth."""
    e = LayeredEarth.from_thicknesses([0.1e9, 0.08e9], [0.6])
    with pytest.raises(InputError, match="too large"):
        layered_depth_from_time(3e-9, e, offset_m=1.0)


def test_thickness_count_checked():
    """n velocities need n − 1 thicknesses."""
    with pytest.raises(InputError, match="needs 1 thicknesses"):
        LayeredEarth.from_thicknesses([0.1e9, 0.08e9], [0.5, 0.6])
