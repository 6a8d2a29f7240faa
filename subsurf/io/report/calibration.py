"""The report's site calibration: predicted versus observed, and how much the plan changed.

:func:`calibrated_plan` reads the calibration (:mod:`subsurf.site.calibrated`), ranks the
antennas in the calibrated ground with the measured performance (as ``choose
--calibration`` does), and sets the soil model's predictions of the measured quantities
beside the observations: the model at the site-median soil with its 5–95 % range from the
soil-input spread (seeded draws, as the depth chart's), the observations with their
standard errors.  Nothing here writes HTML.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["calibrated_plan"]

_SPREAD_FIELDS = ("moisture", "pore_water_ec25", "pore_water_salinity_psu", "temp_c")


def _model_draws(soil, sd: dict, freq_hz: float, *, draws: int, seed: int):
    """(α dB/m, v m/s) of seeded draws of the soil inputs at ``freq_hz`` (bounded distributions)."""
    import dataclasses

    from ...ground.spread import draw_soil_input
    from ...waves.propagation import wave_properties

    rng = np.random.default_rng(seed)
    changes = {}
    for name in _SPREAD_FIELDS:
        s, base = sd.get(name, 0.0), getattr(soil, name, None)
        if not s or base is None:
            continue
        upper = 0.995 * float(soil.porosity_value) if name == "moisture" and soil.porosity_value is not None else None
        changes[name] = draw_soil_input(rng, name, float(base), float(s), int(draws), upper=upper)
    varied = dataclasses.replace(soil, **changes) if changes else soil
    eps, sig = varied.electrical(freq_hz)
    w = wave_properties(eps, sig, freq_hz)
    banded = dataclasses.replace(soil, **{k: v[:, None] for k, v in changes.items()}) if changes else soil
    return (np.atleast_1d(np.asarray(w.attenuation_db_per_m, float)), np.atleast_1d(np.asarray(w.velocity, float)),
            banded)


def _range(x) -> tuple[float, float]:
    return float(np.percentile(x, 5)), float(np.percentile(x, 95))


def calibrated_plan(path, survey, site, antennas, target, *, model_rows, from_flag: bool) -> dict:
    """Everything the report needs of a site calibration.

    Parameters
    ----------
    path : Path
        The calibration file.
    survey, site : the survey and its site-median soil (:func:`.soil.site_soil`).
    antennas : list of Antenna
        The survey's antennas with their catalogue figures.
    target : Target
    model_rows : list of dict
        :func:`subsurf.planning.antennas.rank_antennas` with the soil model and the catalogue.
    from_flag : bool
        The file came from ``--calibration`` (else from the survey's ``[calibration] file``).

    Returns
    -------
    dict
        ``ground`` (the calibrated ground), ``antennas`` (measured performance for the
        calibrated one), ``rows`` (the calibrated ranking), ``comparison`` (quantity,
        model, model 5–95 %, observed, observed se, unit, note), ``changes`` (per antenna:
        max depth and margin before/after, verdicts), ``recommended_before``, ``note``,
        ``file``, ``antenna``.
    """
    from ...detection import Target
    from ...interpretation.calibrated_ground import model_predictions
    from ...planning.antennas import antenna_budget_for, load_catalogue, rank_antennas, recommend
    from ...site.calibrated import load_grid_calibration

    gcal, used = load_grid_calibration(path, survey, antennas, field_name=None if from_flag else "[calibration] file")
    rec = gcal.record
    ground = gcal.ground
    rows = rank_antennas(ground.electrical, used, target, reaches_db=survey.reach_margin_db)

    name = rec["antenna"]["name"]
    ant = (survey.catalogue.antennas if survey.catalogue is not None else load_catalogue(survey.catalogue_path))[name]
    perf_rec = rec["effective_performance"]
    stacks, refl = int(perf_rec["stacks"]), float(perf_rec["reference_reflection"])
    cat_perf = ant.with_stacks(stacks).effective_performance_db
    fc = ant.centre_freq_hz
    pred = model_predictions(site.soil.electrical, centre_freq_hz=fc, performance_db=cat_perf, gain=ant.gain,
                             reference_reflection=refl)
    a_draw, v_draw, banded = _model_draws(site.soil, site.sd, fc, draws=survey.draws, seed=survey.seed)
    # the model's penetration in the band budget the effective performance is fitted in (calibrate)
    ref_target = Target("planar", reflection=refl, depth_m=float(rec["penetration"]["depth_m"]))
    a_st = ant.with_stacks(stacks)
    pred["penetration_m"] = float(np.asarray(antenna_budget_for(site.soil.electrical, a_st, ref_target,
                                                                depth_m=ref_target.depth_m)["max_depth"]))
    pen_draw = np.atleast_1d(np.asarray(antenna_budget_for(banded.electrical, a_st, ref_target,
                                                           depth_m=ref_target.depth_m)["max_depth"], float))

    # the observation at the band centre: α_ref + π(f_c − f_ref)/(Q*·v) (Np/m), its se in quadrature
    att, q = rec["attenuation"], rec["q_star"]
    v_obs, v_se = rec["velocity"]["m_per_ns"] * 1e9, (rec["velocity"].get("se_m_per_ns") or 0.0) * 1e9
    a_fc = float(ground.attenuation_at(fc))
    a_se = att.get("se_db_per_m") or 0.0
    if q.get("value") is not None and q.get("se"):
        df = fc - att["reference_freq_mhz"] * 1e6
        a_se = math.hypot(a_se, 20 / math.log(10) * math.pi * df / (q["value"] ** 2 * v_obs) * q["se"])
    comparison = [
        {"quantity": f"velocity at {fc / 1e6:.4g} MHz", "model": pred["velocity_m_per_ns"],
         "model_range": tuple(x * 1e-9 for x in _range(v_draw)), "observed": v_obs * 1e-9,
         "observed_se": v_se * 1e-9, "unit": "m/ns", "how": rec["velocity"].get("source", "")},
        {"quantity": f"attenuation at {fc / 1e6:.4g} MHz", "model": pred["attenuation_db_per_m"],
         "model_range": _range(a_draw), "observed": a_fc, "observed_se": a_se, "unit": "dB/m",
         "how": f"measured at {att['reference_freq_mhz']:.4g} MHz"
                + (", carried to the centre along the Q* slope" if q.get("value") is not None else "")},
        {"quantity": "Q*", "model": pred["q_equivalent"], "model_range": None, "observed": q.get("value"),
         "observed_se": q.get("se"), "unit": "", "how": "spectral-centroid downshift (Quan & Harris 1997)"},
        {"quantity": f"penetration (planar |R| = {refl:g})", "model": pred["penetration_m"],
         "model_range": _range(pen_draw), "observed": rec["penetration"]["depth_m"],
         "observed_se": rec["penetration"].get("se_m"), "unit": "m",
         "how": f"model with the catalogue performance, {stacks} stacks"},
        {"quantity": f"system performance, {stacks} stacks", "model": cat_perf, "model_range": None,
         "observed": perf_rec.get("db"), "observed_se": perf_rec.get("se_db"), "unit": "dB",
         "how": "catalogue figure vs the effective figure that reproduces the observed penetration"},
    ]
    before = {r["name"]: r for r in model_rows}
    changes = [{"antenna": r["name"], "max_depth_before_m": before[r["name"]]["max_depth_m"],
                "max_depth_after_m": r["max_depth_m"], "margin_before_db": before[r["name"]]["margin_db"],
                "margin_after_db": r["margin_db"], "verdict_before": before[r["name"]]["verdict"],
                "verdict_after": r["verdict"]} for r in rows]
    rec_before, _ = recommend(model_rows, reaches_db=survey.reach_margin_db)
    return {"ground": ground, "antennas": used, "rows": rows, "comparison": comparison, "changes": changes,
            "recommended_before": rec_before, "note": gcal.note(), "file": str(gcal.path), "antenna": name,
            "describe": gcal.describe(), "model_draws": int(a_draw.size), "seed": survey.seed}
