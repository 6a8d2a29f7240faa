"""The acquisition plan for one antenna in one ground: settings, margin, stacking, notes.

Shared by ``subsurf setup`` and the planning report; numbers in human units (ns, m, h).
"""

from __future__ import annotations

__all__ = ["ROWS_SPEC", "acquisition_for_antenna"]

#: key, label, unit, format, rule of each row of the plan
ROWS_SPEC = [
    # key, label, unit, format, rule
    ("depth_m", "depth of interest", "m", ".3g", "given, or the maximum detectable depth of the target"),
    ("window_ns", "time window", "ns", ".4g", "1.3 × two-way time (common practice, Annan 2009)"),
    ("sampling_interval_ns", "sampling interval", "ns", ".3g",
     "≤ 1/(6 f_c) and Nyquist of the band top (Annan 2009)"),
    ("samples", "samples per trace", "", "d", "window / interval + 1"),
    ("samples_power_of_two", "record length (2^n)", "", "d", "next power of two"),
    ("trace_spacing_m", "trace spacing", "m", ".3g", "≤ λ/4 in the ground (Annan 2009)"),
    ("line_spacing_2d_m", "line spacing, 2D detection", "m", ".3g",
     "2 × footprint semi-axis + target size (lines across the pipe direction)"),
    ("line_spacing_3d_m", "line spacing, 3D imaging", "m", ".3g", "≤ λ/4 (Grasmueck et al. 2005)"),
    ("optimum_separation_m", "optimum antenna separation", "m", ".3g", "2d/√(ε'−1) (Annan & Cosway 1992)"),
    ("antenna_separation_m", "this antenna's separation", "m", ".3g", "catalogue"),
    ("stacks", "stacks", "", "d", "10·log10(N) dB gain"),
    ("margin_db", "margin at depth", "dB", ".1f", "performance with stacking − two-way loss"),
    ("max_speed_m_per_s", "highest towing speed", "m/s", ".3g", "trace spacing × trace rate / stacks"),
    ("speed_m_per_s", "towing speed used", "m/s", ".3g", "given, or min(limit, 1 m/s)"),
    ("survey_time_h", "survey time", "h", ".3g", "lines × length / speed + 10 s per turn"),
]


def acquisition_for_antenna(medium, antenna, *, target=None, depth_m=None, surface_loss_db=None, stacks=None, area_m2=None,
            line_length_m=None, speed_m_per_s=None, imaging=False) -> dict:
    """Acquisition settings (human units) for ``antenna`` in ``medium``, with notes and the rules used."""
    import numpy as np

    from ..detection.budget import (
        REACHES_MARGIN_DB,
        band_spectrum,
        margin_db,
        max_depth,
        resolution_at_depth,
    )
    from ..errors import InputError
    from ..safety import CAUTION
    from ..waves.propagation import wave_properties
    from .acquisition import plan_acquisition, stacks_for_margin

    fc = antenna.centre_freq_hz
    eps, sig = medium.electrical(np.array([fc]))
    w = wave_properties(eps, sig, np.array([fc]))
    notes = []
    if depth_m is None:
        if target is None:
            raise InputError("give a --depth of interest, or a target (--target ...) whose maximum depth is used")
        depth_m = float(max_depth(eps, sig, fc, antenna.effective_performance_db, target=target,
                                  gain=antenna.gain, surface_loss_db=surface_loss_db)[0])
        if depth_m <= 0:
            raise InputError(f"antenna {antenna.name} cannot detect this target at any depth in this ground")
        target = target.at_depth(depth_m)
        notes.append(f"depth of interest = maximum detectable depth of the target with {antenna.name}")
    margin = None
    if target is not None:
        def margin_for(n):
            a = antenna.with_stacks(int(n))
            return float(margin_db(depth_m, eps, sig, fc, a.effective_performance_db, target=target,
                                   gain=a.gain, surface_loss_db=surface_loss_db)[0])
        if stacks is None:
            margin0 = margin_for(antenna.stacks)
            extra = int(stacks_for_margin(margin0, wanted_db=REACHES_MARGIN_DB))
            if extra == 0:
                notes.append(f"even 1024× more stacking would not give a {REACHES_MARGIN_DB:g} dB margin")
                stacks = antenna.stacks
            else:
                stacks = antenna.stacks * extra
                if extra > 1:
                    notes.append(f"stacking raised from {antenna.stacks} to {stacks} for a "
                                 f"{REACHES_MARGIN_DB:g} dB margin")
        margin = margin_for(stacks)
    if stacks is None:
        stacks = antenna.stacks
    if stacks < 1:
        raise InputError(f"--stacks must be >= 1, got {stacks}")
    f, amp = band_spectrum(fc, antenna.bandwidth_hz)
    eb, sb = medium.electrical(f)
    res = resolution_at_depth(eb, sb, f, amp, depth_m)
    plan = plan_acquisition(
        centre_freq_hz=fc, band_top_hz=antenna.band_top_hz, velocity=float(w.velocity[0]),
        wavelength_m=float(w.wavelength[0]), eps_real=float(w.eps_real[0]), depth_m=depth_m,
        footprint_radius_m=float(res.footprint_radius_m),
        target_size_m=float(target.size_m or 0.0) if target is not None else 0.0,
        antenna_separation_m=antenna.separation_m, trace_rate_hz=antenna.trace_rate_hz, stacks=stacks,
        speed_m_per_s=speed_m_per_s, area_m2=area_m2, imaging=imaging, line_length_m=line_length_m)
    settings = {
        "depth_m": plan.depth_m,
        "window_ns": plan.window_s * 1e9,
        "sampling_interval_ns": plan.sampling_interval_s * 1e9,
        "samples": plan.samples,
        "samples_power_of_two": plan.samples_power_of_two,
        "trace_spacing_m": plan.trace_spacing_m,
        "line_spacing_2d_m": plan.line_spacing_2d_m,
        "line_spacing_3d_m": plan.line_spacing_3d_m,
        "optimum_separation_m": plan.optimum_separation_m,
        "antenna_separation_m": plan.antenna_separation_m,
        "stacks": plan.stacks,
        "margin_db": margin,
        "max_speed_m_per_s": plan.max_speed_m_per_s,
        "speed_m_per_s": plan.speed_m_per_s,
        "survey_time_h": None if plan.survey_time_s is None else plan.survey_time_s / 3600.0,
    }
    if plan.nyquist_limited:
        notes.append("sampling interval set by the Nyquist limit of the top of the band")
    ratio = plan.antenna_separation_m / plan.optimum_separation_m
    if ratio < 0.5 or ratio > 2.0:
        notes.append(f"this antenna's fixed separation ({plan.antenna_separation_m:.3g} m) differs from the "
                     f"optimum for {plan.depth_m:.3g} m ({plan.optimum_separation_m:.3g} m) by more than ×2")
    from .antennas import target_summary

    return {
        "antenna": antenna.name,
        "illustrative": antenna.illustrative,
        "ground": medium.label,
        "facts": medium.facts,
        "target": None if target is None else target_summary(target),
        "ground_at_centre": {"freq_mhz": fc / 1e6, "eps_real": float(w.eps_real[0]),
                             "velocity_m_per_ns": float(w.velocity[0]) / 1e9,
                             "wavelength_m": float(w.wavelength[0]),
                             "attenuation_db_per_m": float(w.attenuation_db_per_m[0])},
        "settings": settings,
        "rules": {k: rule for k, _, _, _, rule in ROWS_SPEC},
        "area_m2": area_m2,
        "grid_3d": bool(imaging),
        "notes": notes,
        "caution": CAUTION,
    }
