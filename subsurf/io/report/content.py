"""What the planning report shows, gathered as a plain dictionary in SI units.

:func:`collect` reads the survey, summarises its soil (:mod:`.soil`), and calls the library
for each part: the ground's radar properties over frequency (:mod:`subsurf.waves`), the
antenna ranking and reach curves (:mod:`subsurf.planning`, :mod:`subsurf.detection`), the
acquisition settings (:mod:`subsurf.planning.plan`), the time-to-depth chart with its
seeded Monte Carlo band, and the feasibility maps' figures and summary (from
:func:`subsurf.io.maps.run_map`).  Nothing here re-derives physics or writes HTML.
"""

from __future__ import annotations

import datetime as _dt
import math
from pathlib import Path

import numpy as np

from .soil import SiteSoil, site_soil
from .texts import MAP_CAPTIONS

__all__ = ["REPORT_FREQS_HZ", "collect", "velocity_draws", "depth_chart", "maps_section", "map_decision",
           "ground_table", "site_geometry"]

#: Frequencies (Hz) of the ground-property and reach curves: 10 MHz to 3 GHz.
REPORT_FREQS_HZ = np.geomspace(10e6, 3e9, 121)

#: Quantities of the survey schema whose spread feeds the depth chart (Soil field names).
_SPREAD_FIELDS = ("moisture", "pore_water_ec25", "pore_water_salinity_psu", "temp_c")


def _ground_over_frequency(soil, freqs_hz):
    from ...waves.propagation import wave_properties

    eps, sigma = soil.electrical(freqs_hz)
    w = wave_properties(eps, sigma, freqs_hz)
    return {
        "freq_hz": np.asarray(freqs_hz, float),
        "eps_real": np.asarray(w.eps_real, float),
        "eps_imag": np.asarray(w.eps_imag, float),
        "sigma_eff": np.asarray(w.effective_conductivity, float),
        "velocity": np.asarray(w.velocity, float),
        "attenuation_db_per_m": np.asarray(w.attenuation_db_per_m, float),
        "loss_tangent": np.asarray(w.loss_tangent, float),
        "wavelength": np.asarray(w.wavelength, float),
        "skin_depth": np.asarray(w.skin_depth, float),
    }


def velocity_draws(soil, sd: dict, freq_hz: float, *, draws: int, seed: int):
    """Nominal phase velocity and seeded Monte Carlo draws from the soil-input spread.

    Each input in ``sd`` (Soil field names among moisture, pore-water EC/salinity and
    temperature) is drawn independently with a distribution that respects its bounds
    (:mod:`subsurf.ground.spread`): moisture from the normal truncated to
    [0, 0.995 × porosity] (a soil cannot hold more water than its pores), temperature
    truncated to liquid water, conductivities and salinity log-normal with the stated
    mean and standard deviation.  Texture
    fractions are not varied: independent draws of sand and clay can be impossible
    (sand + clay > 1), and their effect on velocity is small beside moisture's.
    """
    import dataclasses

    from ...ground.spread import draw_soil_input
    from ...waves.propagation import wave_properties

    rng = np.random.default_rng(seed)
    eps, sig = soil.electrical(freq_hz)
    v_nom = float(np.asarray(wave_properties(eps, sig, freq_hz).velocity).ravel()[0])
    changes = {}
    for name in _SPREAD_FIELDS:
        s = sd.get(name, 0.0)
        base = getattr(soil, name, None)
        if not s or base is None:
            continue
        upper = None
        if name == "moisture" and soil.porosity_value is not None:
            upper = 0.995 * float(soil.porosity_value)
        changes[name] = draw_soil_input(rng, name, float(base), float(s), int(draws), upper=upper)
    if not changes:
        return v_nom, np.full(int(draws), v_nom), []
    varied = dataclasses.replace(soil, **changes)
    eps_d, sig_d = varied.electrical(freq_hz)
    v = np.asarray(wave_properties(eps_d, sig_d, freq_hz).velocity, dtype=float).ravel()
    return v_nom, v, sorted(changes)


def depth_chart(soil, sd: dict, freq_hz: float, offset_m: float, twt_max_s: float, *, draws: int,
                 seed: int, measured: tuple | None = None) -> dict:
    """Central depth and 5–95 % band against two-way time, from the soil-input spread, or with
    ``measured`` = (v, se) in m/s from seeded normal draws of a measured velocity (se ≪ v)."""
    from ...waves.propagation import depth_from_time

    n = max(int(draws), 400)
    if measured is None:
        v_nom, v_draws, varied = velocity_draws(soil, sd, freq_hz, draws=n, seed=seed)
    else:
        v_nom = float(measured[0])
        v_draws = np.clip(np.random.default_rng(seed).normal(v_nom, float(measured[1]), n), 1e-3 * v_nom, None)
        varied = ["measured velocity (site calibration)"]
    # times from the arrival of the direct ground wave of the slowest draw (v·t ≥ x is
    # needed for a real depth with antenna separation x) to the end of the window
    t_start = offset_m / float(v_draws.min()) if offset_m > 0 else 0.0
    t = np.linspace(t_start, twt_max_s, 161)
    d_all = depth_from_time(t[None, :], v_draws[:, None], offset_m=offset_m)
    lo, hi = np.percentile(d_all, [5.0, 95.0], axis=0)
    central = depth_from_time(t, v_nom, offset_m=offset_m)
    step_ns = _nice_step(twt_max_s * 1e9 / 20.0)
    t_tab = np.arange(step_ns, twt_max_s * 1e9 + 1e-9, step_ns) * 1e-9
    t_tab = t_tab[t_tab >= t_start]
    d_tab = depth_from_time(t_tab[None, :], v_draws[:, None], offset_m=offset_m)
    tab_lo, tab_hi = np.percentile(d_tab, [5.0, 95.0], axis=0)
    return {
        "velocity": v_nom, "velocity_sd": float(np.std(v_draws, ddof=1)),
        "velocity_p05": float(np.percentile(v_draws, 5)), "velocity_p95": float(np.percentile(v_draws, 95)),
        "draws": n, "seed": int(seed), "varied": varied,
        "offset_m": offset_m, "freq_hz": freq_hz,
        "twt_s": t, "depth_m": central, "depth_p05_m": lo, "depth_p95_m": hi,
        "table": [{"twt_ns": float(tt * 1e9), "depth_m": float(depth_from_time(tt, v_nom, offset_m=offset_m)),
                   "depth_p05_m": float(a), "depth_p95_m": float(b)}
                  for tt, a, b in zip(t_tab, tab_lo, tab_hi)],
    }


def _nice_step(x: float) -> float:
    """A 1-2-5 rounded step not smaller than ``x``."""
    if x <= 0:
        return 1.0
    mag = 10.0 ** math.floor(math.log10(x))
    for m in (1.0, 2.0, 5.0, 10.0):
        if m * mag >= x:
            return m * mag
    return 10.0 * mag  # pragma: no cover


def _acquisition(antenna, site: SiteSoil, target, *, area_m2: float | None, ground=None, reaches_db=None) -> dict:
    """Acquisition settings for ``antenna`` at the target depth, from ``subsurf setup``'s computation
    (in the calibrated ``ground`` when given, as ``setup --calibration``)."""
    from ...ground.medium import Medium
    from ...planning.plan import ALL_GRIDS, ROWS_SPEC, acquisition_for_antenna

    medium = ground if ground is not None else Medium(label="site median soil", facts=dict(site.mapping),
                                                      soil=site.soil)
    # the report is the site's planning document: the survey time of every grid (2D lines, 3D common
    # practice, 3D λ/4 limit), with the notes that go with each
    result = acquisition_for_antenna(medium, antenna, target=target, depth_m=target.depth_m, area_m2=area_m2,
                                     grids=ALL_GRIDS, reaches_db=reaches_db)
    rows = []
    for key, label, unit, fmt, _ in ROWS_SPEC:
        value = result["settings"].get(key)
        if value is None:
            continue
        rows.append({"key": key, "label": label, "value": value, "unit": unit, "fmt": fmt,
                     "rule": result["rules"][key]})
    return {"rows": rows, "notes": result["notes"], "window_s": result["settings"]["window_ns"] * 1e-9,
            "area_m2": area_m2, "survey": result["survey"], "contrast": result["contrast"]}


def _site_area_m2(survey) -> float:
    """Area of the site outline in the projected grid CRS (m²)."""
    import shapely

    from ...site.grid import transform_points

    def project(geom):
        coords = shapely.get_coordinates(geom)
        x, y = transform_points(coords[:, 0], coords[:, 1], survey.outline_crs, survey.grid_crs)
        return shapely.set_coordinates(geom, np.column_stack([x, y]))

    return float(project(survey.outline).area)


def collect(survey_path, *, map_result: dict | None = None, bar=None, calibration=None, catalogue=None,
            reach_margin_db=None) -> dict:
    """Gather everything the report shows, as a dictionary (SI units).

    Parameters
    ----------
    survey_path : str or Path
        The survey TOML file.
    map_result : dict, optional
        What :func:`subsurf.feasibility.run_map` returned for this survey (its figures and
        scenario summary); without it the report has no map section.
    bar : subsurf.progress.Steps, optional
        Progress bar advanced once per stage.
    calibration : str or Path, optional
        Site calibration file instead of the survey's ``[calibration] file``: the ranking,
        reach curves, settings and depth chart then use the measured ground and performance
        (:mod:`.calibration`), with the model's predictions beside the observations.
    catalogue : str or Path, optional
        Antenna catalogue replacing the survey's (``--catalogue``).
    reach_margin_db : float, optional
        Reach threshold (dB) replacing the survey's ``[target] reach_margin`` (``--reach-margin``);
        the maps in ``map_result`` must have been computed with the same one.
    """
    from ...detection.budget import max_depth
    from ...planning.antennas import make_target, rank_antennas, recommend
    from ...safety import CAUTION_LINES
    from ...site.survey import load_survey
    from ..outputs import collect_warnings

    def step(label):
        if bar is not None:
            bar.advance(label)

    with collect_warnings() as notes:
        survey = load_survey(survey_path, catalogue=catalogue, reach_margin_db=reach_margin_db)
        reaches_db = survey.reach_margin_db
        site = site_soil(survey)
        step("ground properties")
        ground = _ground_over_frequency(site.soil, REPORT_FREQS_HZ)

        antennas = survey.antenna_list()
        t = survey.target
        target = make_target(t.kind, depth_m=t.depth_m, size_m=None if t.kind == "planar" else t.size_m,
                             material=t.material)
        if t.is_range:  # margin at the bottom, blind zone and resolution at the top (detection.verdicts)
            from dataclasses import replace

            target = replace(target, depth_top_m=t.depth_top_m, depths_m=t.depths_m)
        rows = rank_antennas(site.soil.electrical, antennas, target, reaches_db=reaches_db)
        electrical, cal = site.soil.electrical, None
        if calibration is not None or survey.calibration_path is not None:
            from .calibration import calibrated_plan

            cal = calibrated_plan(calibration if calibration is not None else survey.calibration_path, survey, site,
                                  antennas, target, model_rows=rows, from_flag=calibration is not None)
            rows, antennas, electrical = cal["rows"], cal["antennas"], cal["ground"].electrical
        median_name, median_reason = recommend(rows, reaches_db=reaches_db, target=target)
        decision = map_decision(map_result, [s.name for s in survey.scenarios], reaches_db=reaches_db)
        if decision is not None:  # the headline from the maps' area statistics, every scenario
            rec_name, reason = decision.bring, decision.headline
        else:
            rec_name, reason = median_name, f"from the site-median soil (no feasibility maps): {median_reason}"
        for r in rows:
            r["recommended"] = r["name"] == rec_name
        step("maximum depth")
        eps_f, sig_f = electrical(REPORT_FREQS_HZ)
        perf = sorted({round(a.effective_performance_db, 1) for a in antennas})
        gains = [a.gain for a in antennas if a.gain is not None]  # None: the in-ground coupling model
        g_med = float(np.median(gains)) if gains else None
        levels = [perf[0]] if len(perf) == 1 else [perf[-1], perf[0]]
        g_text = f"gain {10 * math.log10(g_med):.0f} dBi" if g_med else "in-ground coupling gain"
        curves = [(f"system performance {p:g} dB, {g_text}",
                   np.asarray(max_depth(eps_f, sig_f, REPORT_FREQS_HZ, p, target=target, gain=g_med), float))
                  for p in levels]

        rec_ant = next((a for a in antennas if a.name == rec_name), None)
        chart_ant = rec_ant or max(antennas, key=lambda a: next(r["margin_db"] for r in rows if r["name"] == a.name))
        acq = _acquisition(chart_ant, site, target, area_m2=_site_area_m2(survey),
                           ground=None if cal is None else cal["ground"], reaches_db=reaches_db)
        step("depth chart")
        window_s = acq["window_s"]
        measured = None if cal is None else (cal["ground"].velocity, cal["describe"]["velocity_se_m_per_ns"] * 1e9)
        chart = depth_chart(site.soil, site.sd, chart_ant.centre_freq_hz, chart_ant.separation_m, window_s,
                             draws=survey.draws, seed=survey.seed, measured=measured)
        step("maps")
        maps = maps_section(map_result)

    return {
        "title": f"GPR planning report — {survey.name}",
        "generated": _dt.datetime.now().astimezone().strftime("%Y-%m-%d %H:%M %Z"),
        "survey": survey.describe(),
        "survey_obj": survey,
        "site_soil": site,
        "ground": ground,
        "ground_table_freqs_hz": sorted({a.centre_freq_hz for a in antennas}),
        "target": t.json(),
        "ranking": rows,
        "recommended": rec_name,
        "reason": reason,
        "decision": decision,
        "zones": list((map_result or {}).get("zones") or []) if decision is not None else [],
        "reaches_margin_db": reaches_db,
        "reaches_margin_source": survey.reach_margin_source,
        "site_median_recommendation": {"antenna": median_name, "reason": median_reason},
        "chart_antenna": chart_ant.name,
        "antennas_illustrative": any(a.illustrative for a in antennas),
        "max_depth_curves": curves,
        "acquisition": acq,
        "depth_chart": chart,
        "maps": maps,
        "calibration": None if cal is None else {k: v for k, v in cal.items() if k not in ("ground", "antennas")},
        "warnings": list(notes),
        "caution": list(CAUTION_LINES),
    }


def map_decision(map_result: dict | None, scenarios: list[str], *, reaches_db: float):
    """The :class:`subsurf.site.decision.Decision` from the map's summary rows (None without maps)."""
    if not map_result or not map_result.get("summary"):
        return None
    from ...errors import SubsurfError
    from ...site.decision import decide

    mapped = (map_result.get("thresholds") or {}).get("reaches_margin_db", reaches_db)
    if mapped != reaches_db:  # a programming error, not the user's: the maps and the page must agree
        raise SubsurfError(f"the maps were computed with a reach threshold of {mapped:g} dB, the report with "
                           f"{reaches_db:g} dB")
    return decide(list(map_result["summary"]), scenarios=scenarios, reaches_db=reaches_db)


def maps_section(map_result: dict | None) -> dict | None:
    """Figures (read from the files ``subsurf map`` wrote) and its scenario × antenna summary."""
    if not map_result:
        return None
    figs = []
    described = {s["name"]: s.get("description", "") for s in (map_result.get("inputs") or {}).get("scenarios", [])}
    for key, path in map_result.get("paths", {}).items():
        path = Path(path)
        if not (key.startswith("png_") and path.is_file()):
            continue
        if key.startswith("png_antennas:"):  # one depth map per scenario, each captioned with its scenario
            name = key.split(":", 1)[1]
            what = f"'{name}'" + (f" ({described[name]})" if described.get(name) else "")
            caption = MAP_CAPTIONS["png_antennas"].format(scenario=what)
        else:
            caption = MAP_CAPTIONS.get(key, path.stem.replace("_", " "))
        figs.append({"caption": caption, "png": path.read_bytes(), "file": path.name})
    return {"figures": figs, "summary": list(map_result.get("summary", [])),
            "files": (sorted(str(Path(p).relative_to(Path(map_result["out_dir"]))) if map_result.get("out_dir")
                             else Path(p).name for p in map_result.get("paths", {}).values())
                      if map_result.get("kept", True) else []),
            "monte_carlo": map_result.get("monte_carlo", {})}


def ground_table(soil, freqs_hz):
    """Wave properties of the site soil at the table frequencies (the antennas' and round values)."""
    from ...waves.propagation import wave_properties

    f = np.asarray(sorted(set(freqs_hz) | {25e6, 50e6, 100e6, 250e6, 500e6, 1e9, 2e9}))
    eps, sig = soil.electrical(f)
    return f, wave_properties(eps, sig, f)


def site_geometry(survey):
    """Site outline rings, soil-zone rings and sample positions in the grid CRS (m), for the site figure."""
    from ...site.grid import transform_points

    def ring_xy(geom):
        geoms = getattr(geom, "geoms", [geom])
        out = []
        for g in geoms:
            xy = np.asarray(g.exterior.coords, float)
            x, y = transform_points(xy[:, 0], xy[:, 1], survey.outline_crs, survey.grid_crs)
            out.append(np.column_stack([x, y]))
        return out

    rings = ring_xy(survey.outline)
    zones = []
    for zs in survey.zones:
        for name, g in zip(zs.names, zs.geometries):
            for r in ring_xy(g) if zs.crs == survey.outline_crs else []:
                zones.append((name, r))
            if zs.crs != survey.outline_crs:
                geoms = getattr(g, "geoms", [g])
                for gg in geoms:
                    xy = np.asarray(gg.exterior.coords, float)
                    x, y = transform_points(xy[:, 0], xy[:, 1], zs.crs, survey.grid_crs)
                    zones.append((name, np.column_stack([x, y])))
    samples = []
    for s in survey.samples:
        x, y = transform_points(s.x, s.y, s.crs, survey.grid_crs)
        samples.append((f"samples: {Path(s.path).name}", x, y))
    return rings, zones, samples
