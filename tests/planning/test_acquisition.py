"""Acquisition rules against their published forms (subsurf.acquisition)."""

import math

import numpy as np
import pytest
from scipy import constants

from subsurf.errors import InputError
from subsurf.planning import acquisition as Q


def test_time_window_thirty_percent_rule():
    """W = 1.3 × 2d/v (common practice, Annan 2009): 5 m at 0.1 m/ns gives 130 ns."""
    assert Q.time_window(5.0, 0.1e9) == pytest.approx(130e-9)


def test_sampling_six_per_period():
    """Δt = 1/(6 f_c) (common practice, Annan 2009): 100 MHz gives 1.667 ns."""
    assert float(Q.sampling_interval(100e6, 150e6)) == pytest.approx(1 / 6e8)


def test_sampling_nyquist_of_band_top_governs_wide_band():
    """A band reaching above 3 f_c makes the Nyquist interval 1/(2 f_top) the binding limit."""
    assert float(Q.sampling_interval(100e6, 400e6)) == pytest.approx(1 / 8e8)


def test_samples_cover_window():
    """Samples × interval covers the window (samples − 1 intervals ≥ W)."""
    n = int(Q.samples_per_trace(130e-9, 1.6e-9))
    assert (n - 1) * 1.6e-9 >= 130e-9 > (n - 2) * 1.6e-9


def test_trace_spacing_lossless_form():
    """λ/4 equals c/(4 f √ε') in the lossless limit (Annan 2009): 250 MHz, ε' = 9 → 0.0999 m."""
    lam = constants.c / (250e6 * 3.0)
    assert float(Q.trace_spacing(lam)) == pytest.approx(constants.c / (4 * 250e6 * 3.0))


def test_annan_separation_rule():
    """S = 2d/√(ε'−1) (Annan & Cosway 1992): d = 3 m, ε' = 10 gives 2 m."""
    assert float(Q.optimum_separation(3.0, 10.0)) == pytest.approx(2.0)


def test_stacks_for_margin_powers_of_two():
    """Without clutter (60 dB ceiling) a 3 dB shortfall needs 2 stacks, 7 dB needs 8 (10·log10 N, Annan 2009)."""
    got = [Q.stacks_for_margin(m, wanted_db=6.0, clutter_limit_db=60.0) for m in (3.0, -1.0, 10.0)]
    assert got == [2, 8, 1]


def test_stacking_never_beyond_clutter_limit():
    """Stacking stops where a doubling adds < 1 dB: 64 stacks for a 15 dB clutter ceiling; beyond it, 0 (out of reach).

    Hand calculation: G(N) = 10·log10((1 + c)/(1/N + c)), c = 10^-1.5 = 0.0316: G(64) − G(32) = 1.24 dB,
    G(128) − G(64) = 0.78 dB.
    """
    assert Q.clutter_stack_limit(15.0) == 64
    for shortfall in np.linspace(0.0, 30.0, 61):
        n = Q.stacks_for_margin(6.0 - shortfall, wanted_db=6.0, clutter_limit_db=15.0)
        assert n <= 64
    assert Q.stacks_for_margin(6.0 - 14.0, wanted_db=6.0, clutter_limit_db=15.0) == 0  # 14 dB > G(64) = 13.3 dB


def test_max_speed():
    """v = Δx·R/N: 0.05 m, 200 traces/s, 4 stacks → 2.5 m/s."""
    assert float(Q.max_speed(0.05, 200.0, 4)) == pytest.approx(2.5)


def test_survey_time_square_area():
    """100 m × 100 m at 1 m spacing and 1 m/s: 101 lines of 100 m plus 100 turns of 10 s."""
    assert Q.survey_time(1e4, 1.0, 1.0) == pytest.approx(101 * 100 + 100 * 10)


def test_speed_above_trace_rate_limit_refused():
    """Asking to tow faster than the trace rate allows is a one-line InputError."""
    with pytest.raises(InputError, match="trace rate"):
        Q.plan_acquisition(centre_freq_hz=250e6, band_top_hz=375e6, velocity=1e8, wavelength_m=0.4, eps_real=9,
                           depth_m=1.0, footprint_radius_m=0.5, trace_rate_hz=10.0, speed_m_per_s=5.0)


def test_nonpositive_depth_refused():
    """A depth ≤ 0 names the parameter."""
    with pytest.raises(InputError, match="depth_m"):
        Q.time_window(0.0, 1e8)


def test_line_spacing_3d_equals_trace_spacing():
    """3D imaging spacing is λ/4 both ways (Grasmueck et al. 2005)."""
    assert float(Q.line_spacing_3d(0.4)) == float(Q.trace_spacing(0.4)) == pytest.approx(0.1)


def test_line_spacing_2d_covers_target():
    """2D spacing 2A + D: a target midway between lines lies inside one footprint (geometry)."""
    a, size = 0.6, 0.3
    s = float(Q.line_spacing_2d(a, size))
    assert s / 2 - size / 2 <= a + 1e-12 and math.isclose(s, 1.5)
