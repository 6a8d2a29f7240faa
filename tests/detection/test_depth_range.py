"""A range of depths of interest: margin at the bottom, blind zone and resolution at the top.

Checked against closed forms written here (the radar range equation, the blind-zone geometry and
the quarter-wavelength resolution), not against the budget at another call.
"""

import numpy as np
import pytest
from scipy import constants

import subsurf.detection as D
from subsurf.detection.verdicts import PARTLY_BLIND, REACHES, TOO_SHALLOW, reaches, verdict
from subsurf.errors import InputError

EPS, SIG, GAIN, PERF, R = 9.0, 0.004, 2.0, 90.0, 0.5


def _gamma(eps, sig, f):
    """γ = √(jωμ₀(σ + jωε₀ε)) (DESIGN.md's convention), from scipy.constants."""
    omega = 2 * np.pi * f
    return np.sqrt(1j * omega * constants.mu_0 * (sig + 1j * omega * constants.epsilon_0 * eps))


def _one_node_budget(top, bottom, *, f=250e6, pulse=4e-9):
    fn = np.array([f])
    return D.antenna_budget(np.full(1, EPS + 0j), np.full(1, SIG), fn, np.ones(1),
                            D.Target("planar", reflection=R, depth_m=bottom, depth_top_m=top),
                            depth_m=bottom, depth_top_m=top, performance_db=PERF, pulse_length_s=pulse, gain=GAIN)


def test_margin_at_bottom_is_the_radar_equation_at_that_depth():
    """Margin of 0.5-1.5 m = P − L(1.5 m), L the planar radar range equation written here.

    Planar (image-source) spreading 1/(2d)²: P_r/P_t = G²λ²|R|²/((4π)²(2d)²)·e^(−4αd)
    (DESIGN.md's max_detectable_depth; Annan 2009, ch. 1).  One frequency, fixed gain, no separation.
    """
    g = _gamma(EPS, SIG, 250e6)
    lam, alpha = 2 * np.pi / g.imag, g.real
    d = 1.5
    ratio = GAIN**2 * lam**2 * R**2 / ((4 * np.pi) ** 2 * (2 * d) ** 2) * np.exp(-4 * alpha * d)
    b = _one_node_budget(0.5, 1.5)
    assert float(b["margin_db"]) == pytest.approx(PERF + 10 * np.log10(ratio), abs=1e-9)
    # and the margin at the top of the range is the same equation at 0.5 m
    ratio_top = GAIN**2 * lam**2 * R**2 / ((4 * np.pi) ** 2 * (2 * 0.5) ** 2) * np.exp(-4 * alpha * 0.5)
    assert float(b["margin_top_db"]) == pytest.approx(PERF + 10 * np.log10(ratio_top), abs=1e-9)


def test_single_depth_is_unchanged_by_the_range_code():
    """A range and a single depth at its bottom give the same margin and maximum depth (same ground)."""
    rng, one = _one_node_budget(0.5, 1.5), _one_node_budget(None, 1.5)
    assert float(rng["margin_db"]) == float(one["margin_db"])
    assert float(rng["max_depth"]) == float(one["max_depth"])
    assert not bool(one["partly_blind"]) and "margin_top_db" not in one


def test_vertical_resolution_at_top_is_quarter_wavelength_of_the_top_echo():
    """Vertical resolution = λ/4 of the spectrum received from the TOP of the range (Rayleigh quarter-wavelength
    criterion, Widess 1973, Geophysics 38, doi:10.1190/1.1440403), λ from the received centroid computed here.

    Lossy ground (constant loss tangent 0.1, so α ∝ f) over a band: the received spectrum wᵢ·λᵢ²·e^(−4αᵢd)
    (planar, fixed gain and |R|; the 1/(2d)² spreading is common to all frequencies) shifts down with
    depth, so top and bottom differ.
    """
    f, w = D.band_nodes(400e6, 400e6)
    eps, sig = 9.0 - 0.9j, 0.0
    g = _gamma(eps, sig, f)
    alpha, vel = g.real, 2 * np.pi * f / g.imag
    lam_nodes = vel / f

    def quarter(d):
        e = w * lam_nodes**2 * np.exp(-4 * alpha * d)
        fr, vr = np.sum(e * f) / np.sum(e), np.sum(e * vel) / np.sum(e)
        return vr / fr / 4

    t = D.Target("planar", reflection=R, depth_m=1.5, depth_top_m=0.5)
    b = D.antenna_budget(np.full(f.shape, eps), np.full(f.shape, sig), f, w, t, depth_m=1.5, depth_top_m=0.5,
                         performance_db=PERF, pulse_length_s=2e-9, gain=GAIN)
    assert float(b["vertical_resolution"]) == pytest.approx(quarter(0.5), rel=1e-9)
    assert float(b["vertical_resolution_bottom"]) == pytest.approx(quarter(1.5), rel=1e-9)
    assert quarter(1.5) > 1.1 * quarter(0.5)  # the two depths really differ here


def test_blind_zone_judged_at_the_top():
    """Blind zone d_min = vτ/2 (no separation; hand geometry, echo after the pulse): a range whose top is above it
    and bottom below it is partly blind, never 'reaches'; wholly above it, too shallow."""
    v = constants.c / np.sqrt(EPS)  # lossless-limit phase velocity; the 4 mS/m ground differs by < 0.1 %
    pulse = 12e-9
    dmin = v * pulse / 2  # ≈ 0.60 m
    b = _one_node_budget(0.5, 1.5, pulse=pulse)
    assert float(b["min_depth"]) == pytest.approx(dmin, rel=2e-3)
    assert bool(b["too_shallow"]) and bool(b["partly_blind"])
    word = verdict(b["margin_db"], too_shallow=b["too_shallow"], partly_blind=b["partly_blind"])
    assert float(b["margin_db"]) >= 6 and word == PARTLY_BLIND
    assert not reaches(b["margin_db"], too_shallow=b["too_shallow"])
    below = _one_node_budget(0.7, 1.5, pulse=pulse)
    assert verdict(below["margin_db"], too_shallow=below["too_shallow"], partly_blind=below["partly_blind"]) == REACHES
    above = _one_node_budget(0.2, 0.5, pulse=pulse)
    assert verdict(above["margin_db"], too_shallow=above["too_shallow"],
                   partly_blind=above["partly_blind"]) == TOO_SHALLOW


def test_inverted_or_zero_width_target_range_refused():
    """Target(depth_top_m >= depth_m) is refused, naming both depths."""
    with pytest.raises(InputError, match="shallower"):
        D.Target("planar", reflection=0.5, depth_m=0.5, depth_top_m=1.5)
    with pytest.raises(InputError, match="shallower"):
        D.Target("planar", reflection=0.5, depth_m=1.0, depth_top_m=1.0)
    with pytest.raises(InputError, match="top of the depth range"):
        D.antenna_budget(np.full(1, EPS + 0j), np.full(1, SIG), np.array([250e6]), np.ones(1),
                         D.Target("planar", reflection=R), depth_m=1.5, depth_top_m=2.0, performance_db=PERF,
                         pulse_length_s=4e-9, gain=GAIN)
