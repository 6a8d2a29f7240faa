"""The acquisition plan for one antenna in one ground: settings, margin, stacking, notes.

Shared by ``subsurf setup`` and the planning report; numbers in human units (ns, m, h).
"""

from __future__ import annotations

__all__ = ["ROWS_SPEC", "MAX_STACKS", "GRIDS_2D", "GRIDS_3D", "ALL_GRIDS", "acquisition_for_antenna",
           "line_direction_note", "separation_note"]

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
     "2 × footprint semi-axis + target size (Annan & Cosway 1992)"),
    ("line_spacing_3d_practice_m", "line spacing, 3D common practice", "m", ".3g",
     "footprint semi-axis floored to 5 cm, ≥ λ/4 (common practice, not a sampling limit)"),
    ("line_spacing_3d_m", "line spacing, 3D imaging limit", "m", ".3g",
     "≤ λ/4 both ways for full-resolution 3D (Grasmueck et al. 2005)"),
    ("optimum_separation_m", "optimum antenna separation", "m", ".3g", "2d/√(ε'−1) (Annan & Cosway 1992)"),
    ("antenna_separation_m", "this antenna's separation", "m", ".3g", "catalogue: fixed in the housing"),
    ("min_depth_m", "blind zone (min depth)", "m", ".2g", "½√(vτ(2x + vτ)): echo after the direct wave"),
    ("stacks", "stacks", "", "d", "10·log10((1+c)/(1/N+c)) dB, clutter-limited"),
    ("margin_db", "margin at depth", "dB", ".1f", "performance with stacking − two-way loss"),
    ("max_speed_m_per_s", "highest towing speed", "m/s", ".3g", "trace spacing × trace rate / stacks"),
    ("speed_m_per_s", "towing speed used", "m/s", ".3g", "given, or min(limit, 1 m/s)"),
]

#: The rule of the separation row for an antenna whose separation the crew sets.
ADJUSTABLE_SEPARATION_RULE = "catalogue: the usual setting; adjustable"

#: Grids whose survey time a plan shows: 2D detection lines, or both 3D spacings (--grid-3d).
GRIDS_2D = ("2d_detection",)
GRIDS_3D = ("3d_practice", "3d_limit")
ALL_GRIDS = GRIDS_2D + GRIDS_3D


def acquisition_for_antenna(medium, antenna, *, target=None, depth_m=None, surface_loss_db=None, stacks=None,
                            area_m2=None, line_length_m=None, speed_m_per_s=None, imaging=False, layers=(),
                            grids=None, reaches_db=None) -> dict:
    """Acquisition settings (human units) for ``antenna`` in ``medium``, with notes and the rules used.

    ``grids`` names the grids whose survey effort the plan shows (``survey.grids[].planned``
    and the notes that go with them): by default the 2D detection lines, or with ``imaging``
    both 3D spacings (common practice and the λ/4 imaging limit); the JSON always holds all
    three when an area is given.  Every note is printed only where its situation holds: the
    direction of the 2D lines by target kind, the separation by whether the antenna's is
    fixed, the aliasing of the coarser 3D spacing only where a 3D grid is shown, a low
    reflection contrast only where |R| is below the stated limit.

    With a target the full budget decides: the stack count is raised (powers of two) only
    up to the clutter limit (:func:`subsurf.planning.acquisition.clutter_stack_limit`); a
    target that does not reach with the margin even there, or that lies inside the blind
    zone, gets ``reachable = False``, the verdict, no survey time and a note saying why,
    instead of an impossible survey.  ``reaches_db``: the margin a target needs to count as
    reached (default :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`), the one stacking aims at.
    A target with a range of depths of interest (``target.depth_top_m``, ``depth_m`` its bottom) is judged at its bottom for the margin
    and at its top for the blind zone and the footprint (line spacing); when only its top is
    blind ("partly blind") the survey is planned for the part below the blind zone, said so.
    """
    import numpy as np

    from ..detection.verdicts import REACHES, REACHES_MARGIN_DB, verdict
    from ..errors import InputError
    from ..safety import CAUTION
    from ..waves.propagation import wave_properties
    from .acquisition import clutter_stack_limit, plan_acquisition, stacks_for_margin
    from .antennas import antenna_budget_for, target_summary
    from .coverage import TURN_TIME_S

    reaches_db = REACHES_MARGIN_DB if reaches_db is None else float(reaches_db)
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
        top = target.depth_top_m if target.is_range and target.depth_top_m < depth_m else None
        budget = antenna_budget_for(medium.electrical, antenna, target, depth_m=depth_m, stacks=stacks,
                                    surface_loss_db=surface_loss_db, layers=layers, depth_top_m=top)
        margin0 = float(budget["margin_db"])
        too_shallow = bool(budget["too_shallow"])
        limit = clutter_stack_limit(antenna.clutter_limit_db)
        if stacks is not None and stacks > limit:
            notes.append(f"{stacks} stacks is beyond the {limit} that help against this antenna's clutter limit "
                         f"({antenna.clutter_limit_db:g} dB): each doubling past {limit} adds under 1 dB and halves "
                         "the towing speed")
        if stacks is None:
            n = stacks_for_margin(margin0, wanted_db=reaches_db, current_stacks=antenna.stacks,
                                  clutter_limit_db=antenna.clutter_limit_db)
            if n == 0:
                stacks = antenna.stacks
            else:
                stacks = n
                if n > antenna.stacks:
                    notes.append(f"stacking raised from {antenna.stacks} to {stacks} for a {reaches_db:g} dB "
                                 f"margin (clutter limit {antenna.clutter_limit_db:g} dB: at most {limit} stacks help)")
            if stacks != antenna.stacks:
                budget = antenna_budget_for(medium.electrical, antenna, target, depth_m=depth_m, stacks=stacks,
                                            surface_loss_db=surface_loss_db, layers=layers, depth_top_m=top)
        margin = float(budget["margin_db"])
        partly = bool(budget["partly_blind"])
        verdict_word = str(verdict(margin, too_shallow=too_shallow, partly_blind=partly,
                                   reaches_db=reaches_db))
        if partly and margin >= reaches_db:
            notes.insert(0, f"partly blind: this antenna's blind zone reaches {float(budget['min_depth']):.2g} m, so "
                            f"the top of the range ({top:g} m) is not seen; settings are planned for "
                            f"{float(budget['min_depth']):.2g}-{depth_m:g} m: for the top use a higher-frequency "
                            "antenna")
        elif too_shallow and not partly:
            reachable = False
            notes.insert(0, f"too shallow: at {top if top is not None else depth_m:g} m the echo arrives within the "
                            "direct wave; this antenna's "
                            f"blind zone reaches {float(budget['min_depth']):.2g} m (pulse "
                            f"{antenna.pulse_length * 1e9:.3g} ns, separation {antenna.separation_m:g} m); no survey "
                            "planned: use a higher-frequency antenna")
        elif verdict_word != REACHES:
            reachable = False
            notes.insert(0, f"out of reach: margin {margin:.1f} dB at {depth_m:g} m with {stacks} stacks, short of "
                            f"the {reaches_db:g} dB needed, and stacking beyond {limit} adds under 1 dB per "
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
    grids = tuple(grids) if grids is not None else (GRIDS_3D if imaging else GRIDS_2D)
    settings = {
        "depth_m": plan.depth_m,
        "window_ns": plan.window_s * 1e9,
        "sampling_interval_ns": plan.sampling_interval_s * 1e9,
        "samples": plan.samples,
        "samples_power_of_two": plan.samples_power_of_two,
        "trace_spacing_m": plan.trace_spacing_m,
        "line_spacing_2d_m": plan.line_spacing_2d_m,
        "line_spacing_3d_practice_m": plan.line_spacing_3d_practice_m,
        "line_spacing_3d_m": plan.line_spacing_3d_m,
        "optimum_separation_m": plan.optimum_separation_m,
        "antenna_separation_m": plan.antenna_separation_m,
        "min_depth_m": float(budget["min_depth"]),
        "stacks": plan.stacks,
        "margin_db": margin,
        "max_speed_m_per_s": plan.max_speed_m_per_s,
        "speed_m_per_s": plan.speed_m_per_s,
    }
    rules = {k: rule for k, _, _, _, rule in ROWS_SPEC}
    if antenna.separation_adjustable:
        rules["antenna_separation_m"] = ADJUSTABLE_SEPARATION_RULE
    contrast = None
    if target is not None:
        from ..detection.contrast import target_contrast

        contrast = target_contrast(medium.electrical, target, [fc])
        if contrast.low:
            notes.append(contrast.note())
    if plan.nyquist_limited:
        notes.append("sampling interval set by the Nyquist limit of the top of the band")
    sep = separation_note(antenna, plan.depth_m, plan.optimum_separation_m) if reachable else None
    if sep:
        notes.append(sep)
    direction = line_direction_note(target, plan.line_spacing_2d_m) if reachable and target is not None else None
    if direction and "2d_detection" in grids:
        notes.append(direction)
    survey = _survey(plan, grids, turn_time_s=TURN_TIME_S) if plan.surveys else None
    if survey and any(g in grids for g in GRIDS_3D) and plan.line_spacing_3d_practice_m > plan.line_spacing_3d_m:
        notes.append(f"3D grid at the common-practice {plan.line_spacing_3d_practice_m:.3g} m instead of λ/4 "
                     f"({plan.line_spacing_3d_m:.2g} m): reflectors dipping more than "
                     f"{plan.unaliased_dip_practice_deg:.0f}° and the flanks of diffraction hyperbolae (curved, "
                     "small or pointed features) alias across the lines and cannot be migrated into place "
                     "(Grasmueck et al. 2005); level reflectors and features wider than about twice the spacing still map")
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
        "thresholds": {"reaches_margin_db": reaches_db, "marginal_margin_db": 0.0},
        "ground_at_centre": {"freq_mhz": fc / 1e6, "eps_real": float(w.eps_real[0]),
                             "velocity_m_per_ns": float(w.velocity[0]) / 1e9,
                             "wavelength_m": float(w.wavelength[0]),
                             "attenuation_db_per_m": float(w.attenuation_db_per_m[0])},
        "received_freq_mhz": float(budget["received_freq_hz"]) / 1e6,
        "settings": settings,
        "rules": rules,
        "area_m2": area_m2,
        "grid_3d": bool(imaging),
        "survey": survey,
        "contrast": None if contrast is None else contrast.as_json(),
        "notes": notes,
        "caution": CAUTION,
    }


def _survey(plan, grids, *, turn_time_s: float) -> dict:
    """The survey effort of every grid (human units), ``planned`` marking the ones the plan shows."""
    from .acquisition import unaliased_dip_deg
    from .coverage import GRID_LABELS

    rows = []
    for e in plan.surveys:
        rows.append({"grid": e.grid, "label": GRID_LABELS[e.grid], "planned": e.grid in grids,
                     "line_spacing_m": e.line_spacing_m, "lines": e.lines, "total_line_km": e.total_length_m / 1e3,
                     "survey_time_h": e.time_s / 3600.0,
                     "unaliased_dip_deg": None if e.grid == "2d_detection" else float(
                         unaliased_dip_deg(e.line_spacing_m, plan.wavelength_m))})
    e0 = plan.surveys[0]
    return {"area_m2": plan.area_m2, "line_length_m": e0.line_length_m, "speed_m_per_s": plan.speed_m_per_s,
            "turn_time_s": turn_time_s, "grids": rows}


def line_direction_note(target, spacing_m: float) -> str | None:
    """Which way the 2D detection lines run, by target kind (None without a target)."""
    if target is None:
        return None
    if target.kind == "line":
        if target.orientation == "unknown":
            return ("2D lines: the pipe direction is unknown, so lay a second set at right angles to the first; "
                    "one set then crosses the pipe at 45° or more (the budget takes the weaker of the two returns)")
        dipoles = "parallel" if target.orientation == "parallel" else "perpendicular"
        return (f"2D lines: run them across the expected pipe direction, at right angles, with the antenna "
                f"dipoles {dipoles} to the pipe as the budget assumes; the {spacing_m:.3g} m spacing is how "
                "closely the route is traced")
    if target.kind == "planar":
        return ("2D lines: any direction over a level interface; over a dipping one run them down the dip "
                "(across the strike), so that the profiles show its true dip")
    return (f"2D lines: any direction; a {target.size_m:g} m target midway between two lines {spacing_m:.3g} m "
            "apart is still inside one line's footprint")


def separation_note(antenna, depth_m: float, optimum_m: float) -> str | None:
    """A note where the antenna's separation is far (×2) from the optimum; wording by fixed/adjustable."""
    ratio = antenna.separation_m / optimum_m
    if 0.5 <= ratio <= 2.0:
        return None
    if antenna.separation_adjustable:
        return (f"separation is adjustable on {antenna.name}: set it near {optimum_m:.3g} m for {depth_m:.3g} m "
                f"(2d/√(ε'−1), Annan & Cosway 1992) instead of the usual {antenna.separation_m:.3g} m; the "
                f"budget and blind zone here use {antenna.separation_m:.3g} m")
    return (f"this antenna's fixed separation ({antenna.separation_m:.3g} m) differs from the optimum for "
            f"{depth_m:.3g} m ({optimum_m:.3g} m) by more than ×2; it cannot be set on this antenna, and the "
            "budget uses it as it is")
