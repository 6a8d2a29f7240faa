"""The acquisition plan for one antenna in one ground: settings, margin, stacking, notes.

Shared by ``subsurf setup`` and the planning report; numbers in human units (ns, m, h).
"""

from __future__ import annotations

__all__ = ["ROWS_SPEC", "MAX_STACKS", "acquisition_for_antenna"]

#: Most traces a plan may stack (2^16).  Our limit, stated: stacking beats random noise, not
#: clutter, so past clutter_stack_limit (64 at a 15 dB clutter limit) a doubling adds under 1 dB,
#: and 65536 stacks already slow a 250 MHz antenna to ~0.2 mm/s; beyond, the plan is nonsense
#: (--stacks 99999999999999999999 planned a towing speed of 1.4e-19 m/s).
MAX_STACKS = 2**16

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
    ("min_depth_m", "blind zone (min depth)", "m", ".2g", "½√(vτ(2x + vτ)): echo after the direct wave"),
    ("stacks", "stacks", "", "d", "10·log10((1+c)/(1/N+c)) dB, clutter-limited"),
    ("margin_db", "margin at depth", "dB", ".1f", "performance with stacking − two-way loss"),
    ("max_speed_m_per_s", "highest towing speed", "m/s", ".3g", "trace spacing × trace rate / stacks"),
    ("speed_m_per_s", "towing speed used", "m/s", ".3g", "given, or min(limit, 1 m/s)"),
    ("survey_time_h", "survey time", "h", ".3g", "lines × length / speed + 10 s per turn"),
]


def acquisition_for_antenna(medium, antenna, *, target=None, depth_m=None, surface_loss_db=None, stacks=None,
                            area_m2=None, line_length_m=None, speed_m_per_s=None, imaging=False, layers=()) -> dict:
    """Acquisition settings (human units) for ``antenna`` in ``medium``, with notes and the rules used.

    With a target the full budget decides: the stack count is raised (powers of two) only
    up to the clutter limit (:func:`subsurf.planning.acquisition.clutter_stack_limit`); a
    target that does not reach with the margin even there, or that lies inside the blind
    zone, gets ``reachable = False``, the verdict, no survey time and a note saying why,
    instead of an impossible survey.
    """
    import numpy as np

    from ..detection.verdicts import REACHES, REACHES_MARGIN_DB, verdict
    from ..errors import InputError
    from ..safety import CAUTION
    from ..waves.propagation import wave_properties
    from .acquisition import clutter_stack_limit, plan_acquisition, stacks_for_margin
    from .antennas import antenna_budget_for, target_summary

    fc = antenna.centre_freq_hz
    eps, sig = medium.electrical(np.array([fc]))
    w = wave_properties(eps, sig, np.array([fc]))
    notes = []
    reachable = True
    verdict_word = None
    if stacks is not None and not 1 <= stacks <= MAX_STACKS:
        raise InputError(f"--stacks must be an integer between 1 and {MAX_STACKS} (beyond the clutter limit "
                         f"stacking adds under 1 dB per doubling), got {stacks}")
    if depth_m is None:
        if target is None:
            raise InputError("give a --depth of interest, or a target (--target ...) whose maximum depth is used")
        probe = antenna_budget_for(medium.electrical, antenna, target, depth_m=1.0, stacks=stacks,
                                   surface_loss_db=surface_loss_db, layers=layers)
        depth_m = float(probe["max_depth"])
        if depth_m <= max(float(probe["min_depth"]), probe["terms"].layer_thickness_m):
            raise InputError(f"antenna {antenna.name} cannot detect this target at any depth below its blind zone "
                             f"({float(probe['min_depth']):.2g} m) in this ground")
        target = target.at_depth(depth_m)
        notes.append(f"depth of interest = maximum detectable depth of the target with {antenna.name}")
    margin = None
    budget = None
    if target is not None:
        budget = antenna_budget_for(medium.electrical, antenna, target, depth_m=depth_m, stacks=stacks,
                                    surface_loss_db=surface_loss_db, layers=layers)
        margin0 = float(budget["margin_db"])
        too_shallow = bool(budget["too_shallow"])
        limit = clutter_stack_limit(antenna.clutter_limit_db)
        if stacks is not None and stacks > limit:
            notes.append(f"{stacks} stacks is beyond the {limit} that help against this antenna's clutter limit "
                         f"({antenna.clutter_limit_db:g} dB): each doubling past {limit} adds under 1 dB and halves "
                         "the towing speed")
        if stacks is None:
            n = stacks_for_margin(margin0, wanted_db=REACHES_MARGIN_DB, current_stacks=antenna.stacks,
                                  clutter_limit_db=antenna.clutter_limit_db)
            if n == 0:
                stacks = antenna.stacks
            else:
                stacks = n
                if n > antenna.stacks:
                    notes.append(f"stacking raised from {antenna.stacks} to {stacks} for a {REACHES_MARGIN_DB:g} dB "
                                 f"margin (clutter limit {antenna.clutter_limit_db:g} dB: at most {limit} stacks help)")
            if stacks != antenna.stacks:
                budget = antenna_budget_for(medium.electrical, antenna, target, depth_m=depth_m, stacks=stacks,
                                            surface_loss_db=surface_loss_db, layers=layers)
        margin = float(budget["margin_db"])
        verdict_word = str(verdict(margin, too_shallow=too_shallow))
        if too_shallow:
            reachable = False
            notes.insert(0, f"too shallow: at {depth_m:g} m the echo arrives within the direct wave; this antenna's "
                            f"blind zone reaches {float(budget['min_depth']):.2g} m (pulse "
                            f"{antenna.pulse_length * 1e9:.3g} ns, separation {antenna.separation_m:g} m); no survey "
                            "planned: use a higher-frequency antenna")
        elif verdict_word != REACHES:
            reachable = False
            notes.insert(0, f"out of reach: margin {margin:.1f} dB at {depth_m:g} m with {stacks} stacks, short of "
                            f"the {REACHES_MARGIN_DB:g} dB needed, and stacking beyond {limit} adds under 1 dB per "
                            f"doubling (clutter limit {antenna.clutter_limit_db:g} dB); maximum depth "
                            f"{float(budget['max_depth']):.3g} m; no survey planned: use a lower-frequency antenna "
                            "or accept a shallower target")
    if stacks is None:
        stacks = antenna.stacks
    if budget is None:
        from ..detection.targets import Target

        budget = antenna_budget_for(medium.electrical, antenna, Target("planar", reflection=1.0), depth_m=depth_m,
                                    stacks=stacks, surface_loss_db=surface_loss_db, layers=layers)
    plan = plan_acquisition(
        centre_freq_hz=fc, band_top_hz=antenna.band_top_hz, velocity=float(w.velocity[0]),
        wavelength_m=float(w.wavelength[0]), eps_real=float(w.eps_real[0]), depth_m=depth_m,
        footprint_radius_m=float(budget["footprint_radius"]),
        target_size_m=float(target.size_m or 0.0) if target is not None else 0.0,
        antenna_separation_m=antenna.separation_m, trace_rate_hz=antenna.trace_rate_hz, stacks=stacks,
        speed_m_per_s=speed_m_per_s, area_m2=area_m2 if reachable else None, imaging=imaging,
        line_length_m=line_length_m)
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
        "min_depth_m": float(budget["min_depth"]),
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
    if bool(budget["near_field"]):
        from ..detection.blindzone import NEAR_FIELD_WAVELENGTHS

        notes.append(f"near field: {plan.depth_m:.3g} m is within {NEAR_FIELD_WAVELENGTHS:g} wavelength "
                     f"({float(budget['wavelength_m']):.2g} m) of the antenna; the far-field budget departs from a "
                     "full-wave solution by more than 2 dB there")
    return {
        "antenna": antenna.name,
        "illustrative": antenna.illustrative,
        "ground": medium.label,
        "facts": medium.facts,
        "target": None if target is None else target_summary(target),
        "verdict": verdict_word,
        "reachable": reachable,
        "ground_at_centre": {"freq_mhz": fc / 1e6, "eps_real": float(w.eps_real[0]),
                             "velocity_m_per_ns": float(w.velocity[0]) / 1e9,
                             "wavelength_m": float(w.wavelength[0]),
                             "attenuation_db_per_m": float(w.attenuation_db_per_m[0])},
        "received_freq_mhz": float(budget["received_freq_hz"]) / 1e6,
        "settings": settings,
        "rules": {k: rule for k, _, _, _, rule in ROWS_SPEC},
        "area_m2": area_m2,
        "grid_3d": bool(imaging),
        "notes": notes,
        "caution": CAUTION,
    }
