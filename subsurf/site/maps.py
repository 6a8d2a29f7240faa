"""Feasibility maps of a survey, in memory: the chain on the survey grid for every antenna and scenario.

:func:`compute_maps` lays the grid of a survey (:mod:`subsurf.site.grid`), puts the soil
inputs on it, evaluates the chain (:func:`subsurf.site.feasibility.evaluate`) and the
reach probability per scenario (:mod:`subsurf.site.probability`), and returns a :class:`FeasibilityMaps`:
one labelled xarray Dataset with every layer (dims scenario, antenna, y, x) plus what the
report, the map outputs and the command need (antennas, target, area fractions, summary
rows).  Nothing here writes files or prints; :mod:`subsurf.io.maps` writes the outputs.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["FeasibilityMaps", "compute_maps", "summary_rows", "area_rows", "monte_carlo_info", "sample_points"]


@dataclass(frozen=True)
class FeasibilityMaps:
    """Every feasibility layer of one survey, with the inputs that made them.

    Attributes
    ----------
    survey : subsurf.site.survey.Survey
    dataset : xarray.Dataset
        Layers (``max_depth``, ``margin_db``, ``velocity``, ..., ``reach_probability``,
        ``reach_probability_se``, ``too_shallow``; dims scenario, antenna, y, x; SI units in CF
        attributes),
        ``recommended_antenna`` (scenario, y, x; flag values), the soil inputs on the grid
        (``soil_<quantity>``, ``distance_to_sample``, ``extrapolated``), ``mask``, the grid
        mapping ``crs``; string coordinates ``scenario`` and ``antenna``; global attributes
        describing the target, grid and Monte Carlo settings.
    grid : xarray.Dataset
        The survey grid (:func:`subsurf.site.grid.build_grid`).
    soil : xarray.Dataset
        Soil inputs on the grid (:func:`subsurf.site.grid.soil_on_grid`).
    antennas : list
        Catalogue antennas, in the order of the ``antenna`` coordinate.
    target : subsurf.detection.budget.Target
    fractions : list of dict
        Per scenario, :func:`subsurf.site.feasibility.area_fractions` of the site.
    zones, zone_fractions : list
        The soil zones' cells (:func:`subsurf.site.zone_stats.zone_cells`) and, per zone and
        scenario, the area fractions over them, from the same arrays as ``fractions``.
    calibration : subsurf.site.calibrated.GridCalibration or None
        The site calibration the maps use (None: the soil model and the catalogue).

    The reach threshold is the survey's (``survey.reach_margin_db``, :attr:`reaches_margin_db`);
    the dataset states it in its ``reaches_margin_db`` attribute.
    """

    survey: object
    dataset: object
    grid: object
    soil: object
    antennas: list
    target: object
    fractions: list = field(default_factory=list)
    calibration: object = None
    zones: list = field(default_factory=list)  # subsurf.site.zone_stats.ZoneCells, one per zone (and the rest)
    zone_fractions: list = field(default_factory=list)  # per zone, per scenario: area_fractions over its cells

    @property
    def rows(self) -> list[dict]:
        """One summary row per scenario and antenna (:func:`summary_rows`)."""
        return summary_rows(self)

    @property
    def reaches_margin_db(self) -> float:
        """The reach threshold (dB) of these maps: the survey's ``[target] reach_margin`` or ``--reach-margin``."""
        return float(self.survey.reach_margin_db)

    @property
    def monte_carlo(self) -> dict:
        return monte_carlo_info(self)


def _antennas_and_target(survey):
    from ..errors import FileInputError, InputError
    from ..planning.antennas import make_target

    antennas = survey.antenna_list()  # the catalogue the survey uses (checked on loading), inline antennas too
    t = survey.target
    try:
        target = make_target(t.kind, depth_m=t.depth_m, size_m=t.size_m if t.kind != "planar" else None,
                             material=t.material)
        if t.is_range:
            from dataclasses import replace

            target = replace(target, depth_top_m=t.depth_top_m, depths_m=t.depths_m)
    except InputError as exc:
        raise FileInputError(survey.path, str(exc), field="target") from None
    return antennas, target


def compute_maps(survey, *, quiet: bool = True, calibration=None) -> FeasibilityMaps:
    """Grid, soil inputs and every feasibility layer of ``survey``.

    Parameters
    ----------
    survey : subsurf.site.survey.Survey
        A loaded survey (:func:`subsurf.site.survey.load_survey`).
    quiet : bool
        No progress bar (one step per scenario, on stderr, only on a terminal).
    calibration : str or Path, optional
        A site calibration file (``subsurf calibrate``) used instead of the survey's
        ``[calibration] file``; either replaces the soil model's α(f), v and the calibrated
        antenna's performance (:mod:`subsurf.site.calibrated`).

    Returns
    -------
    FeasibilityMaps
    """
    import xarray as xr

    from ..detection.verdicts import range_definition, reach_definition
    from ..io.progress import steps
    from . import feasibility as fz
    from .grid import build_grid, soil_on_grid
    from .probability import DEFAULT_TOLERANCE, reach_probability

    antennas, target = _antennas_and_target(survey)
    reaches_db = float(survey.reach_margin_db)
    cal = None
    if calibration is not None or survey.calibration_path is not None:
        from .calibrated import load_grid_calibration

        cal, antennas = load_grid_calibration(calibration if calibration is not None else survey.calibration_path,
                                              survey, antennas,
                                              field_name=None if calibration is not None else "[calibration] file")
    n_ant, n_sc = len(antennas), len(survey.scenarios)
    grid = build_grid(survey, n_layers=n_ant * n_sc * 12)
    soil = soil_on_grid(survey, grid)
    inside = grid["mask"].values.astype(bool)
    base_values = {q: soil[q].values for q in fz.SOIL_FIELDS if q in soil}
    base_sd = {q: soil[q + "_sd"].values for q in base_values}
    if cal is not None:  # the anchor: site medians of the soil inputs as mapped (before scenarios)
        from dataclasses import replace as _replace

        from .calibrated import reference_soil

        cal = _replace(cal, reference=fz._clip_moisture(reference_soil(base_values, inside), texture=survey.texture))
    from .zone_stats import zone_cells

    zones = zone_cells(survey, grid)
    zone_fractions = [[] for _ in zones]
    layers = {k: [] for k in fz.LAYER_ATTRS}
    rec_all, fractions, sampled, shallow_all = [], [], [], []
    freqs = [a.centre_freq_hz for a in antennas]
    with steps(n_sc, desc="subsurf map", quiet=quiet) as bar:
        for sc in survey.scenarios:
            bar.start(sc.name)
            vals = fz.apply_scenario(base_values, sc)
            common = {"target": target, "target_depth_m": survey.target.depth_m, "texture": survey.texture,
                      "model": survey.soil_model, "calibration": cal}
            out = fz.evaluate(vals, antennas, **common)
            r = reach_probability(vals, base_sd, antennas, draws=survey.draws, seed=survey.seed,
                                  reaches_db=reaches_db, centre=out, **common)
            p, se = r.probability, r.error
            sampled.append(r.sampled_fraction)
            out["reach_probability"], out["reach_probability_se"] = p, se
            for k in layers:
                layers[k].append(out[k])
            shallow = np.asarray(out["too_shallow"], bool) & inside
            shallow_all.append(shallow)
            rec = fz.recommend_antenna(out["margin_db"], freqs, too_shallow=shallow, reaches_db=reaches_db)
            rec_all.append(np.where(inside, rec, -2).astype(np.int16))
            fractions.append(fz.area_fractions(out["margin_db"], grid["mask"].values, probability=p,
                                               too_shallow=shallow, reaches_db=reaches_db))
            for z, zf in zip(zones, zone_fractions):  # the same arrays, over each zone's cells
                zf.append(fz.area_fractions(out["margin_db"], z.cells, probability=p, too_shallow=shallow,
                                            reaches_db=reaches_db) if z.count else None)
            bar.advance()
    dims = ("scenario", "antenna", "y", "x")
    # the variables are collected first and added in one merge (not one per variable), in the same order
    ds = xr.Dataset(coords=grid.coords).assign(crs=grid["crs"], mask=grid["mask"])
    ds = ds.assign_coords(scenario=("scenario", [s.name for s in survey.scenarios], {"long_name": "scenario"}),
                          antenna=("antenna", [a.name for a in antennas], {"long_name": "antenna"}))
    data = {"centre_frequency": ("antenna", np.array(freqs), {"long_name": "antenna centre frequency", "units": "Hz"}),
            "system_performance": ("antenna", np.array([a.effective_performance_db for a in antennas]),
                                   {"long_name": "system performance including stacking", "units": "dB"})}
    for k, arrs in layers.items():
        data[k] = (dims, np.stack(arrs).astype(np.float32), dict(fz.LAYER_ATTRS[k], grid_mapping="crs"))
    data["too_shallow"] = (dims, np.stack(shallow_all).astype(np.int8), {
        "long_name": "target inside the antenna's blind zone (its echo arrives within the direct wave; not "
                     "reached whatever the margin)" + (f"; for the depth range {survey.target.depth_text()}: its "
                                                       f"top, {survey.target.depth_top_m:g} m"
                                                       if survey.target.is_range else ""),
        "flag_values": np.array([0, 1], np.int8),
        "flag_meanings": "below_blind_zone in_blind_zone", "grid_mapping": "crs"})
    names = " ".join(["outside_site", "none_even_marginal"] + [a.name.replace(" ", "_") for a in antennas])
    data["recommended_antenna"] = (("scenario", "y", "x"), np.stack(rec_all), {
        "long_name": f"recommended antenna (highest frequency with >= {reaches_db:g} dB margin, else largest "
                     "margin >= 0)",
        "flag_values": np.arange(-2, n_ant, dtype=np.int16), "flag_meanings": names, "grid_mapping": "crs"})
    for q in soil.data_vars:
        data["soil_" + q if q not in ("distance_to_sample", "extrapolated") else q] = soil[q]
    ds = ds.assign(data)
    ds["reach_probability"].attrs["long_name"] = (
        f"probability that the target is reached (margin >= {reaches_db:g} dB outside the blind zone)")
    ds["reach_probability"].attrs["comment"] = (
        "per-cell soil values normal with the measurement and interpolation standard deviations; "
        f"first-order (linearised) probability of margin and blind zone jointly where its estimated error is "
        f"<= {DEFAULT_TOLERANCE:g} or below the draws' standard error, "
        f"seeded Monte Carlo elsewhere ({survey.draws} draws, seed {survey.seed}; cells sampled per scenario: "
        + ", ".join(f"{s.name} {100 * f:.1f} %" for s, f in zip(survey.scenarios, sampled))
        + "); estimated error in reach_probability_se")
    ds["reach_probability"].attrs["sampled_fraction"] = np.array(sampled)
    t = survey.target
    ds.attrs = {
        "target": f"{t.kind} {t.material} {t.size_m:g} m at {t.depth_text()}",
        "target_depth_m": t.depth_m,
        "reaches_margin_db": reaches_db,
        "reaches_margin_source": survey.reach_margin_source,
        "reach_definition": reach_definition(reaches_db),
        **({"target_depth_top_m": t.depth_top_m, "target_depth_bottom_m": t.depth_m,
            "depth_range_definition": range_definition(t.depth_top_m, t.depth_m)} if t.is_range else {}),
        "monte_carlo_draws": survey.draws,
        "monte_carlo_seed": survey.seed,
        "cell_size_m": survey.cell_size_m,
        "grid_crs_source": survey.grid_crs_source,
        "soil_model": survey.soil_model,
        "site_outline_wkt": grid.attrs["site_outline_wkt"],
    }
    if cal is not None:
        ds.attrs["calibration"] = cal.note()
        ds.attrs["calibration_file"] = str(cal.path)
        for k in ("eps_real", "eps_imag", "sigma", "velocity", "attenuation_db_per_m", "max_depth", "margin_db"):
            ds[k].attrs["comment"] = ("from the site calibration " + cal.path.name + " (measured attenuation and "
                                      "velocity anchored at the site-median soil), not the soil model alone"
                                      + ("; sigma is the effective conductivity, eps_imag 0" if k in
                                         ("sigma", "eps_imag") else ""))
    return FeasibilityMaps(survey=survey, dataset=ds, grid=grid, soil=soil, antennas=antennas, target=target,
                           fractions=fractions, calibration=cal, zones=zones, zone_fractions=zone_fractions)


def summary_rows(maps: FeasibilityMaps) -> list[dict]:
    """Area fractions per scenario and antenna, in percent of the cells inside the site.

    Keys: ``scenario``, ``antenna``, ``centre_frequency_mhz``, ``reach_pct`` (area where it
    reaches: margin ≥ the survey's reach threshold, :attr:`FeasibilityMaps.reaches_margin_db`,
    outside the blind zone), ``marginal_or_better_pct`` (margin ≥ 0 dB outside the blind zone),
    ``too_shallow_pct`` (target inside the blind zone, whatever the margin), ``expected_reach_pct``
    (mean probability of reaching), ``reach_p90_pct`` (probability ≥ 0.9), ``median_max_depth_m``,
    ``max_depth_min_m`` / ``max_depth_max_m`` (its range over the site),
    ``median_vertical_resolution_m`` (at the target, λ/4 at the received frequency) and ``recommended_pct``
    (area where the antenna is the recommended one).
    """
    ds = maps.dataset
    return area_rows(maps, ds["mask"].values.astype(bool), maps.fractions)


def area_rows(maps: FeasibilityMaps, inside, fractions) -> list[dict]:
    """:func:`summary_rows` over the cells ``inside`` (bool, y × x) with their ``fractions`` per scenario.

    ``fractions``: per scenario, :func:`subsurf.site.areas.area_fractions` over the same cells
    (the site's are ``maps.fractions``, a zone's :attr:`FeasibilityMaps.zone_fractions`).
    """
    ds = maps.dataset
    n_inside = max(int(inside.sum()), 1)
    rows = []
    for si, sc in enumerate(maps.survey.scenarios):
        rec = ds["recommended_antenna"].values[si]
        fr = fractions[si]
        for ai, a in enumerate(maps.antennas):
            md = ds["max_depth"].values[si, ai][inside]
            rows.append({
                "scenario": sc.name, "antenna": a.name, "centre_frequency_mhz": a.centre_freq_hz / 1e6,
                "reach_pct": 100 * float(fr["reach"][ai]),
                "marginal_or_better_pct": 100 * float(fr["marginal_or_better"][ai]),
                "too_shallow_pct": 100 * float(fr["too_shallow"][ai]),
                "expected_reach_pct": 100 * float(fr["expected_reach"][ai]),
                "reach_p90_pct": 100 * float(fr["reach_p90"][ai]),
                "median_max_depth_m": float(np.median(md)),
                "median_vertical_resolution_m": float(np.median(ds["vertical_resolution"].values[si, ai][inside]))
                if md.size else float("nan"),
                "max_depth_min_m": float(np.min(md)) if md.size else float("nan"),
                "max_depth_max_m": float(np.max(md)) if md.size else float("nan"),
                "recommended_pct": 100 * float(np.count_nonzero(rec[inside] == ai)) / n_inside,
            })
    return rows


def monte_carlo_info(maps: FeasibilityMaps) -> dict:
    """How the reach probability was estimated: draws, seed, error bounds, share of cells sampled per scenario."""
    survey, ds = maps.survey, maps.dataset
    sampled = [float(f) for f in ds["reach_probability"].attrs.get("sampled_fraction", [])]
    return {"draws": survey.draws, "seed": survey.seed,
            "max_standard_error": float(0.5 / np.sqrt(survey.draws)),
            "max_estimated_error": float(np.nanmax(ds["reach_probability_se"].values)),
            "sampled_fraction": dict(zip([s.name for s in survey.scenarios], sampled)),
            "method": "per-cell normal soil quantities (measurement and interpolation sd); first-order "
                      "(linearised) probability of margin and blind zone jointly where its estimated error is "
                      "<= 0.01 or below the draws' standard error, else Monte Carlo draws "
                      "keyed per tile of 256 cells, common random numbers across antennas"}


def sample_points(survey) -> tuple[np.ndarray, np.ndarray]:
    """Every soil sample position in the survey's grid CRS (easting, northing arrays, m)."""
    from .grid import transform_points

    sx, sy = [], []
    for s in survey.samples:
        gx, gy = transform_points(s.x, s.y, s.crs, survey.grid_crs)
        sx.append(gx)
        sy.append(gy)
    return (np.concatenate(sx), np.concatenate(sy)) if sx else (np.array([]), np.array([]))
