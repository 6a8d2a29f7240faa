"""Line spacings, aliasing and survey effort against their published forms (subsurf.planning.coverage)."""

import math

import numpy as np
import pytest
from scipy import constants

from subsurf.detection.resolution import footprint_radius
from subsurf.errors import InputError
from subsurf.planning import coverage as C


def _lossless_wavelength(freq_hz, eps_real):
    """λ = c/(f√ε') in a lossless ground (c from scipy.constants)."""
    return constants.c / (freq_hz * math.sqrt(eps_real))


def test_imaging_limit_is_quarter_wavelength_both_ways():
    """3D imaging limit: λ/4 crossline, the same as along the line (Grasmueck et al. 2005, Geophysics 70(1) K12)."""
    lam = _lossless_wavelength(500e6, 9.0)  # 0.2 m
    assert float(C.line_spacing_3d(lam)) == pytest.approx(0.05, rel=1e-3)


@pytest.mark.parametrize("depth_m", [0.5, 0.6, 0.8, 1.0])
def test_practice_spacing_is_the_archaeological_grid_at_500_mhz(depth_m):
    """500 MHz over a shallow site in ε' 9: lines 0.2–0.4 m apart, the grids common in archaeological practice.

    Common practice (from memory): Conyers (2013), Ground-Penetrating Radar for Archaeology, 0.25–0.5 m
    transects at 400–500 MHz; EAC guidelines (Schmidt et al. 2015) ask for traverses at most 0.5 m apart.
    Our rule never exceeds that 0.5 m and is at most one 5 cm step finer than the 0.25 m grid (0.2 m for a
    0.5 m target).  The footprint is Annan & Cosway's A = λ/4 + d/√(ε'−1), evaluated here by hand.
    """
    lam = _lossless_wavelength(500e6, 9.0)
    a_hand = lam / 4 + depth_m / math.sqrt(9.0 - 1.0)
    assert float(footprint_radius(lam, depth_m, 9.0)) == pytest.approx(a_hand, rel=1e-12)
    s = float(C.line_spacing_3d_practice(a_hand, lam))
    assert 0.25 - C.PRACTICE_STEP_M <= s <= 0.5
    assert s <= a_hand < s + C.PRACTICE_STEP_M  # floored to the 5 cm tape step
    assert s / float(C.line_spacing_3d(lam)) >= 3  # several times λ/4: hence the aliasing note


def test_practice_spacing_floors_and_never_goes_below_the_limit():
    """Floor to 5 cm (1 cm under 10 cm) and never finer than λ/4 (a spacing below the limit would be wasted)."""
    assert float(C.line_spacing_3d_practice(0.262, 0.2)) == pytest.approx(0.25)
    assert float(C.line_spacing_3d_practice(0.087, 0.1)) == pytest.approx(0.08)  # 1 cm step
    assert float(C.line_spacing_3d_practice(0.03, 0.2)) == pytest.approx(0.05)  # λ/4 wins


def _two_way_time_to_dipping_plane(x_m, depth_m, dip_rad, velocity):
    """Zero-offset two-way time: twice the perpendicular distance from (x, 0) to the plane, over v (geometry)."""
    # the plane passes through (0, depth) with direction (cos θ, sin θ); distance = |cross product|
    p = np.stack([x_m, np.zeros_like(x_m)], axis=-1) - np.array([0.0, depth_m])
    u = np.array([math.cos(dip_rad), math.sin(dip_rad)])
    dist = np.abs(p[..., 0] * u[1] - p[..., 1] * u[0])
    return 2 * dist / velocity


@pytest.mark.parametrize("spacing_m", [0.1, 0.25, 0.5])
def test_unaliased_dip_puts_half_a_cycle_between_lines(spacing_m):
    """At the returned dip the zero-offset phase steps exactly π between lines: spatial Nyquist (Yilmaz 2001)."""
    v, f = 0.1e9, 500e6
    lam = v / f
    theta = math.radians(float(C.unaliased_dip_deg(spacing_m, lam)))
    t = _two_way_time_to_dipping_plane(np.array([1.0, 1.0 + spacing_m]), 2.0, theta, v)
    dphi = 2 * math.pi * f * abs(t[1] - t[0])
    assert dphi == pytest.approx(math.pi, rel=1e-9)
    steeper = _two_way_time_to_dipping_plane(np.array([1.0, 1.0 + spacing_m]), 2.0, theta * 1.1, v)
    assert 2 * math.pi * f * abs(steeper[1] - steeper[0]) > math.pi  # aliased beyond it


def test_every_dip_is_imaged_at_the_quarter_wavelength():
    """s ≤ λ/4 samples every dip up to 90° (Grasmueck et al. 2005)."""
    assert float(C.unaliased_dip_deg(0.05, 0.2)) == pytest.approx(90.0)
    assert float(C.unaliased_dip_deg(0.02, 0.2)) == pytest.approx(90.0)


def test_survey_lines_and_time_for_a_40_by_30_grid():
    """40 m × 30 m, lines 40 m long, 0.25 m apart: 30/0.25 + 1 = 121 lines, 4.84 km, 4840 s + 120 turns × 10 s."""
    e = C.survey_effort("3d_practice", 1200.0, 0.25, 1.0, line_length_m=40.0)
    assert (e.lines, e.line_length_m) == (121, 40.0)
    assert e.total_length_m == pytest.approx(4840.0)
    assert e.time_s == pytest.approx(4840.0 + 120 * 10.0)


def test_survey_effort_refuses_an_unknown_grid():
    """A grid name outside the three is a one-line InputError naming them."""
    with pytest.raises(InputError, match="2d_detection"):
        C.survey_effort("3d_sparse", 100.0, 1.0, 1.0)
