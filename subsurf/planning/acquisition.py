"""Acquisition settings: time window, sampling, trace and line spacing, separation, speed, survey time.

Each rule is a small broadcasting function with its published source (or "common
practice" where the rule is the field's habit rather than a paper's result);
:func:`plan_acquisition` combines them for one antenna, one ground and one depth of
interest.  Line spacings and the survey effort live in :mod:`.coverage` (re-exported
here).  SI units throughout; this module reads no files.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import constants

from ..detection.verdicts import REACHES_MARGIN_DB
from ..errors import InputError, check_positive
from .coverage import (
    TURN_TIME_S,
    SurveyEffort,
    line_spacing_2d,
    line_spacing_3d,
    line_spacing_3d_practice,
    survey_effort,
    survey_time,
    unaliased_dip_deg,
)

__all__ = [
    "WINDOW_MARGIN",
    "SAMPLES_PER_PERIOD",
    "time_window",
    "sampling_interval",
    "samples_per_trace",
    "trace_spacing",
    "optimum_separation",
    "line_spacing_2d",
    "line_spacing_3d",
    "line_spacing_3d_practice",
    "MIN_DOUBLING_GAIN_DB",
    "clutter_stack_limit",
    "stacks_for_margin",
    "max_speed",
    "survey_time",
    "SurveyEffort",
    "unaliased_dip_deg",
    "AcquisitionPlan",
    "plan_acquisition",
]

#: Extra fraction of the two-way time added to the window (common practice: 30 %).
WINDOW_MARGIN = 0.3
#: Samples per period of the centre frequency (common practice: at least six).
SAMPLES_PER_PERIOD = 6.0
#: A walking pace (m/s) used as the default towing speed when the trace rate allows more.
WALKING_SPEED = 1.0

_C = constants.c


def time_window(depth_m, velocity, *, margin: float = WINDOW_MARGIN):
    """Recording time window (s): W = (1 + margin)·2d/v.

    The 30 % margin covers velocity uncertainty and depth variation.

    References
    ----------
    Annan, A. P. (2009). Electromagnetic principles of ground penetrating radar. In
    Jol, H. M. (ed.), *Ground Penetrating Radar: Theory and Applications*, Elsevier
    (W = 1.3 × 2d/v).
    """
    d = check_positive("depth_m", depth_m, unit="m")
    v = check_positive("velocity", velocity, unit="m/s")
    if margin < 0:
        raise InputError(f"margin must be >= 0, got {margin:g}")
    return (1.0 + margin) * 2.0 * d / v


def sampling_interval(centre_freq_hz, band_top_hz=None, *, samples_per_period: float = SAMPLES_PER_PERIOD):
    """Largest sampling interval (s): min(1/(N·f_c), 1/(2·f_top)).

    At least ``samples_per_period`` samples per period of the centre frequency (six is
    common practice), and never coarser than the Nyquist interval of the top of the band.

    References
    ----------
    Annan, A. P. (2009), op. cit. (Δt ≤ 1/(6 f_c)); Nyquist, H. (1928). Certain topics in
    telegraph transmission theory. Trans. AIEE 47, 617–644.
    """
    fc = check_positive("centre_freq_hz", centre_freq_hz, unit="Hz")
    if samples_per_period < 2:
        raise InputError(f"samples_per_period must be >= 2 (Nyquist), got {samples_per_period:g}")
    dt = 1.0 / (samples_per_period * fc)
    if band_top_hz is not None:
        ftop = check_positive("band_top_hz", band_top_hz, unit="Hz")
        dt = np.minimum(dt, 1.0 / (2.0 * ftop))
    return dt


def samples_per_trace(window_s, interval_s):
    """Samples needed to cover the window: ⌈W/Δt⌉ + 1 (integer array)."""
    w = check_positive("window_s", window_s, unit="s")
    dt = check_positive("interval_s", interval_s, unit="s")
    return (np.ceil(w / dt - 1e-9) + 1).astype(int)


def trace_spacing(wavelength_m):
    """Largest trace spacing (m): a quarter of the wavelength in the ground, Δx ≤ λ/4.

    In the lossless limit λ/4 = c/(4 f √ε'), the form usually quoted.  Spatial Nyquist
    sampling of the steepest dips the antenna records.

    References
    ----------
    Annan, A. P. (2009), op. cit.; Grasmueck, M., Weger, R. & Horstmeyer, H. (2005).
    Full-resolution 3D GPR imaging. Geophysics 70(1), K12–K19. doi:10.1190/1.1852780
    """
    return 0.25 * check_positive("wavelength_m", wavelength_m, unit="m")


def optimum_separation(depth_m, eps_real):
    """Transmitter–receiver separation (m) that best illuminates a target at ``depth_m``: S = 2d/√(ε'−1).

    References
    ----------
    Annan, A. P. & Cosway, S. W. (1992). Ground penetrating radar survey design. Proc.
    SAGEEP 1992, 329–351; Annan (2009), op. cit.
    """
    d = check_positive("depth_m", depth_m, unit="m")
    er = check_positive("eps_real", eps_real)
    if np.any(er <= 1.0):
        raise InputError("optimum separation needs ε' > 1 (S = 2d/√(ε'−1))")
    return 2.0 * d / np.sqrt(er - 1.0)


#: Stacking stops where one more doubling adds less than this (dB): beyond it the clutter
#: floor, not noise, limits the signal (our rule, stated; see clutter_stack_limit).
MIN_DOUBLING_GAIN_DB = 1.0


def clutter_stack_limit(clutter_limit_db, *, min_doubling_gain_db: float = MIN_DOUBLING_GAIN_DB) -> int:
    """Largest useful stack count: the last power of two whose doubling still added ≥ ``min_doubling_gain_db``.

    With the clutter-limited gain G(N) = 10·log10((1 + c)/(1/N + c)), c = 10^(−C/10)
    (:func:`subsurf.planning.antennas.clutter_limited_stacking_gain_db`); C = 15 dB gives 64.
    """
    from .antennas import clutter_limited_stacking_gain_db as gain

    n = 1
    while n < 2**20 and gain(2 * n, clutter_limit_db) - gain(n, clutter_limit_db) >= min_doubling_gain_db:
        n *= 2
    return n


def stacks_for_margin(margin_db, *, wanted_db: float = REACHES_MARGIN_DB, current_stacks: int = 1,
                      clutter_limit_db: float = 15.0):
    """Stack count N (a power of two, ≥ ``current_stacks``) that lifts a margin to ``wanted_db``, or 0.

    ``wanted_db`` is the reach threshold (default
    :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`): stacking aims at "reaches".

    ``margin_db`` is the margin with ``current_stacks``.  The gain of going from N₀ to N is
    G(N) − G(N₀) with the clutter-limited G; N never exceeds :func:`clutter_stack_limit`
    (stacking beats random noise, not clutter; Annan 2009).  Returns ``current_stacks``
    where the margin already suffices and 0 where no useful stack count would.
    """
    from .antennas import clutter_limited_stacking_gain_db as gain

    m = float(margin_db)
    n0 = int(current_stacks)
    if m >= wanted_db:
        return n0
    limit = max(clutter_stack_limit(clutter_limit_db), n0)
    n = 1
    while n < n0:
        n *= 2
    while n <= limit:
        if m + gain(n, clutter_limit_db) - gain(n0, clutter_limit_db) >= wanted_db:
            return n
        n *= 2
    return 0


def max_speed(trace_spacing_m, trace_rate_hz, stacks=1):
    """Highest towing speed (m/s) at which every stacked trace is recorded: v = Δx·R/N."""
    dx = check_positive("trace_spacing_m", trace_spacing_m, unit="m")
    r = check_positive("trace_rate_hz", trace_rate_hz, unit="Hz")
    n = check_positive("stacks", stacks)
    return dx * r / n


@dataclass(frozen=True)
class AcquisitionPlan:
    """Settings for one antenna, ground and depth of interest (SI units)."""

    depth_m: float
    velocity_m_per_s: float
    wavelength_m: float
    window_s: float
    sampling_interval_s: float
    samples: int
    samples_power_of_two: int
    nyquist_limited: bool
    trace_spacing_m: float
    line_spacing_2d_m: float
    line_spacing_3d_m: float
    line_spacing_3d_practice_m: float
    unaliased_dip_practice_deg: float
    optimum_separation_m: float
    antenna_separation_m: float
    stacks: int
    max_speed_m_per_s: float
    speed_m_per_s: float
    area_m2: float | None
    line_spacing_used_m: float | None
    survey_time_s: float | None
    #: every grid kind over ``area_m2`` (2D detection, 3D common practice, 3D λ/4 limit); empty without an area
    surveys: tuple[SurveyEffort, ...] = ()


def plan_acquisition(*, centre_freq_hz: float, band_top_hz: float, velocity: float, wavelength_m: float,
                     eps_real: float, depth_m: float, footprint_radius_m: float, target_size_m: float = 0.0,
                     antenna_separation_m: float = 0.0, trace_rate_hz: float, stacks: int = 1,
                     speed_m_per_s: float | None = None, area_m2: float | None = None,
                     imaging: bool = False, line_length_m: float | None = None,
                     turn_time_s: float = TURN_TIME_S) -> AcquisitionPlan:
    """All settings for one antenna at one depth of interest.

    ``velocity`` and ``wavelength_m`` are the ground's at the centre frequency;
    ``footprint_radius_m`` the footprint semi-axis at ``depth_m``.  The towing speed is
    ``speed_m_per_s`` if given (it must not exceed the trace-rate limit), otherwise the
    smaller of the limit and a walking pace (1 m/s).  ``imaging`` selects the 3D line
    spacing at the λ/4 imaging limit for ``survey_time_s``; otherwise the 2D detection
    spacing.  ``surveys`` holds the lines, length and time of all three grids
    (:mod:`subsurf.planning.coverage`) whenever an area is given.
    """
    window = float(time_window(depth_m, velocity))
    dt_rule = 1.0 / (SAMPLES_PER_PERIOD * centre_freq_hz)
    dt = float(sampling_interval(centre_freq_hz, band_top_hz))
    n = int(samples_per_trace(window, dt))
    dx = float(trace_spacing(wavelength_m))
    ls2 = float(line_spacing_2d(footprint_radius_m, target_size_m))
    ls3 = float(line_spacing_3d(wavelength_m))
    ls3p = float(line_spacing_3d_practice(footprint_radius_m, wavelength_m))
    vmax = float(max_speed(dx, trace_rate_hz, stacks))
    if speed_m_per_s is None:
        speed = min(vmax, WALKING_SPEED)
    else:
        speed = float(check_positive("speed", speed_m_per_s, unit="m/s"))
        if speed > vmax * (1 + 1e-9):
            raise InputError(f"speed {speed:.3g} m/s is above the {vmax:.3g} m/s the trace rate allows "
                             f"({trace_rate_hz:g} traces/s, {stacks} stacks, {dx:.3g} m spacing); "
                             "slow down or stack less")
    spacing_used = ls3 if imaging else ls2
    t_survey = None
    surveys = ()
    if area_m2 is not None:
        t_survey = float(survey_time(area_m2, spacing_used, speed, line_length_m=line_length_m,
                                     turn_time_s=turn_time_s))
        surveys = tuple(survey_effort(kind, area_m2, spacing, speed, line_length_m=line_length_m,
                                      turn_time_s=turn_time_s)
                        for kind, spacing in (("2d_detection", ls2), ("3d_practice", ls3p), ("3d_limit", ls3)))
    return AcquisitionPlan(
        depth_m=float(depth_m), velocity_m_per_s=float(velocity), wavelength_m=float(wavelength_m),
        window_s=window, sampling_interval_s=dt, samples=n,
        samples_power_of_two=int(2 ** math.ceil(math.log2(n))), nyquist_limited=dt < dt_rule * (1 - 1e-12),
        trace_spacing_m=dx, line_spacing_2d_m=ls2, line_spacing_3d_m=ls3, line_spacing_3d_practice_m=ls3p,
        unaliased_dip_practice_deg=float(unaliased_dip_deg(ls3p, wavelength_m)),
        optimum_separation_m=float(optimum_separation(depth_m, eps_real)),
        antenna_separation_m=float(antenna_separation_m), stacks=int(stacks), max_speed_m_per_s=vmax,
        speed_m_per_s=speed, area_m2=area_m2, line_spacing_used_m=spacing_used if area_m2 else None,
        survey_time_s=t_survey, surveys=surveys,
    )
