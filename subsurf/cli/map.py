"""``subsurf map``: feasibility maps over a georeferenced survey site.

Reads a survey file (schema in ``surveys/README.md``), lays the grid, puts the soil
inputs on it, evaluates the detection chain for every antenna and scenario, and writes
to an output folder: a CF NetCDF of every layer, GeoTIFFs per layer (with the optional
geo extra), PNG maps comparing antennas and scenarios and a map of the soil inputs, and
the area-fraction summary as CSV, Markdown and JSON.  All outputs are checked for
existence first, and each is written to a temporary name and renamed when complete.
"""

from __future__ import annotations

HELP = "feasibility maps of a survey site: depth reach per antenna and scenario (NetCDF, PNG, CSV)"
EXAMPLE = "subsurf map surveys/example-site/survey.toml --out maps-example"

NETCDF_NAME = "feasibility.nc"
SUMMARY_STEM = "summary"
FIGURES = {"antennas": "map_antennas.png", "scenarios": "map_scenarios.png", "inputs": "map_soil_inputs.png"}
GEOTIFF_LAYERS = ("max_depth", "margin_db", "reach_probability")


def add_arguments(parser) -> None:
    parser.add_argument("survey", metavar="SURVEY.toml", help="survey file (schema: surveys/README.md)")
    parser.add_argument("--out", metavar="DIR", default="subsurf-map",
                        help="output folder (default: subsurf-map)")
    parser.add_argument("--force", action="store_true", help="overwrite existing outputs")
    parser.add_argument("--no-geotiff", action="store_true", help="skip the GeoTIFF layers even if "
                        "rioxarray is installed")


def run(args) -> int:
    from ..io.outputs import CAUTION, print_result

    result = run_map(args.survey, args.out, force=args.force, quiet=args.quiet or args.json,
                     geotiff=not args.no_geotiff)
    payload = {"caution": CAUTION, **result}
    print_result(payload, result["text"], as_json=args.json)
    return 0


def _output_paths(out_dir, survey, *, geotiff: bool):
    from pathlib import Path

    out = Path(out_dir)
    paths = {"netcdf": out / NETCDF_NAME,
             "summary_csv": out / f"{SUMMARY_STEM}.csv",
             "summary_md": out / f"{SUMMARY_STEM}.md",
             "summary_json": out / f"{SUMMARY_STEM}.json"}
    for key, name in FIGURES.items():
        paths[f"png_{key}"] = out / name
    if geotiff:
        for layer in GEOTIFF_LAYERS:
            for s in survey.scenarios:
                for a in survey.antennas:
                    paths[f"tif_{layer}_{s.name}_{a}"] = out / "geotiff" / f"{layer}__{s.name}__{a}.tif"
    return paths


def _have_rioxarray() -> bool:
    try:
        import rioxarray  # noqa: F401
    except ImportError:
        return False
    return True


def compute_maps(survey, *, quiet: bool = True):
    """Grid, soil inputs and every feasibility layer of ``survey`` as one xarray Dataset."""
    import numpy as np
    import xarray as xr

    from ..errors import FileInputError, InputError
    from ..io.progress import steps
    from ..planning.antennas import get_antenna, load_catalogue, make_target
    from ..site import feasibility as fz
    from ..site.grid import build_grid, soil_on_grid
    from ..site.probability import DEFAULT_TOLERANCE, reach_probability

    catalogue = load_catalogue()
    antennas = []
    for name in survey.antennas:
        try:
            antennas.append(get_antenna(name, catalogue))
        except InputError as exc:
            raise FileInputError(survey.path, str(exc), field="antennas.names") from None
    try:
        target = make_target(survey.target.kind, depth_m=survey.target.depth_m,
                             size_m=survey.target.size_m if survey.target.kind != "planar" else None,
                             material=survey.target.material)
    except InputError as exc:
        raise FileInputError(survey.path, str(exc), field="target") from None
    n_ant, n_sc = len(antennas), len(survey.scenarios)
    grid = build_grid(survey, n_layers=n_ant * n_sc * 12)
    soil = soil_on_grid(survey, grid)
    base_values = {q: soil[q].values for q in fz.SOIL_FIELDS if q in soil}
    base_sd = {q: soil[q + "_sd"].values for q in base_values}
    # zone textures and a survey texture fill sand/clay/bulk density through the Soil preset
    layers = {k: [] for k in fz.LAYER_ATTRS}
    rec_all = []
    fractions = []
    sampled = []
    with steps(n_sc, desc="subsurf map", quiet=quiet) as bar:
        for sc in survey.scenarios:
            bar.start(sc.name)
            vals = fz.apply_scenario(base_values, sc)
            out = fz.evaluate(vals, antennas, target=target, target_depth_m=survey.target.depth_m,
                              texture=survey.texture, model=survey.soil_model)
            r = reach_probability(vals, base_sd, antennas, target=target, target_depth_m=survey.target.depth_m,
                                  draws=survey.draws, seed=survey.seed, texture=survey.texture,
                                  model=survey.soil_model)
            p, se = r.probability, r.error
            sampled.append(r.sampled_fraction)
            out["reach_probability"], out["reach_probability_se"] = p, se
            for k in layers:
                layers[k].append(out[k])
            rec = fz.recommend_antenna(out["margin_db"], [a.centre_freq_hz for a in antennas])
            rec = np.where(grid["mask"].values.astype(bool), rec, -2).astype(np.int16)
            rec_all.append(rec)
            fractions.append(fz.area_fractions(out["margin_db"], grid["mask"].values, probability=p))
            bar.advance()
    dims = ("scenario", "antenna", "y", "x")
    ds = xr.Dataset(coords=grid.coords)
    ds["crs"] = grid["crs"]
    ds["mask"] = grid["mask"]
    ds = ds.assign_coords(scenario=("scenario", [s.name for s in survey.scenarios], {"long_name": "scenario"}),
                          antenna=("antenna", [a.name for a in antennas], {"long_name": "antenna"}))
    ds["centre_frequency"] = ("antenna", np.array([a.centre_freq_hz for a in antennas]),
                              {"long_name": "antenna centre frequency", "units": "Hz"})
    ds["system_performance"] = ("antenna", np.array([a.effective_performance_db for a in antennas]),
                                {"long_name": "system performance including stacking", "units": "dB"})
    for k, arrs in layers.items():
        attrs = dict(fz.LAYER_ATTRS[k], grid_mapping="crs", coordinates="lat lon")
        ds[k] = (dims, np.stack(arrs).astype(np.float32), attrs)
    names = " ".join(["outside_site", "none_reaches"] + [a.name.replace(" ", "_") for a in antennas])
    ds["recommended_antenna"] = (("scenario", "y", "x"), np.stack(rec_all), {
        "long_name": "recommended antenna (highest frequency with >= 6 dB margin, else largest margin >= 0)",
        "flag_values": np.arange(-2, n_ant, dtype=np.int16), "flag_meanings": names,
        "grid_mapping": "crs", "coordinates": "lat lon"})
    for q in soil.data_vars:
        ds["soil_" + q if q not in ("distance_to_sample", "extrapolated") else q] = soil[q]
    ds["reach_probability"].attrs["comment"] = (
        "per-cell soil values normal with the measurement and interpolation standard deviations; "
        f"first-order (linearised) probability where its estimated error is <= {DEFAULT_TOLERANCE:g}, "
        f"seeded Monte Carlo elsewhere ({survey.draws} draws, seed {survey.seed}; cells sampled per scenario: "
        + ", ".join(f"{s.name} {100 * f:.1f} %" for s, f in zip(survey.scenarios, sampled))
        + "); estimated error in reach_probability_se")
    ds["reach_probability"].attrs["sampled_fraction"] = np.array(sampled)
    return ds, grid, soil, antennas, target, fractions


def _summary_rows(survey, antennas, ds, fractions):
    import numpy as np

    rows = []
    inside = ds["mask"].values.astype(bool)
    for si, sc in enumerate(survey.scenarios):
        rec = ds["recommended_antenna"].values[si]
        for ai, a in enumerate(antennas):
            md = ds["max_depth"].values[si, ai][inside]
            rows.append({
                "scenario": sc.name, "antenna": a.name, "centre_frequency_mhz": a.centre_freq_hz / 1e6,
                "reach_pct": 100 * float(fractions[si]["reach"][ai]),
                "reach_headroom_pct": 100 * float(fractions[si]["reach_with_headroom"][ai]),
                "expected_reach_pct": 100 * float(fractions[si]["expected_reach"][ai]),
                "reach_p90_pct": 100 * float(fractions[si]["reach_p90"][ai]),
                "median_max_depth_m": float(np.median(md)),
                "recommended_pct": 100 * float(np.count_nonzero(rec[inside] == ai)) / max(inside.sum(), 1),
            })
    return rows


_COLUMNS = (
    ("scenario", "scenario", "", "s"), ("antenna", "antenna", "", "s"),
    ("centre_frequency_mhz", "f_c", "MHz", ".0f"), ("reach_pct", "reaches", "% area", ".0f"),
    ("reach_headroom_pct", "reaches +6 dB", "% area", ".0f"),
    ("expected_reach_pct", "mean P(reach)", "%", ".0f"), ("reach_p90_pct", "P(reach)>=0.9", "% area", ".0f"),
    ("median_max_depth_m", "median max depth", "m", ".2f"), ("recommended_pct", "recommended", "% area", ".0f"),
)


def _markdown(rows, survey, caution: str) -> str:
    from ..io.outputs import Column

    cols = [Column(k, h, u, f) for k, h, u, f in _COLUMNS]
    head = "| " + " | ".join(c.label() for c in cols) + " |"
    sep = "|" + "|".join("---" for _ in cols) + "|"
    body = ["| " + " | ".join(c.render(r[c.key]) for c in cols) + " |" for r in rows]
    t = survey.target
    return "\n".join([
        f"# Feasibility summary: {survey.name}", "",
        f"Target: {t.kind} ({t.material}, {t.size_m:g} m) at {t.depth_m:g} m depth. "
        f"Grid: {survey.cell_size_m:g} m cells in {survey.grid_crs.name}. "
        f"Reach probability: first-order where accurate, else Monte Carlo ({survey.draws} draws, "
        f"seed {survey.seed}).", "",
        head, sep, *body, "", f"> **Caution.** {caution}", ""])


def _cf_labels(ds):
    """``ds`` with the scenario and antenna names as CF label variables (CF-1.8 section 6.1).

    A CF coordinate variable (named as its dimension) must be numeric and monotonic, so
    the string names go into auxiliary ``scenario_name`` / ``antenna_name`` variables that
    each layer lists in its ``coordinates`` attribute.
    """
    labels = {"scenario": "scenario_name", "antenna": "antenna_name"}
    nc = ds.rename_vars(labels)
    for name in list(nc.data_vars) + ["lon", "lat"]:
        extra = [labels[d] for d in nc[name].dims if d in labels]
        if extra:
            have = nc[name].attrs.get("coordinates", "")
            nc[name].attrs["coordinates"] = " ".join(filter(None, [have, *extra]))
    return nc


def run_map(survey_path, out_dir, *, force: bool = False, quiet: bool = False, geotiff: bool = True) -> dict:
    """Compute and write every output of ``subsurf map`` for one survey.

    Parameters
    ----------
    survey_path : str or Path
        Survey TOML file.
    out_dir : str or Path
        Output folder (created if needed).
    force : bool
        Overwrite existing outputs.
    quiet : bool
        No progress bar.
    geotiff : bool
        Also write GeoTIFF layers when rioxarray (geo extra) is installed.

    Returns
    -------
    dict
        ``paths`` (output kind -> path written), ``summary`` (one row per scenario and
        antenna), ``inputs`` (the survey description), ``monte_carlo``, ``text`` (the
        readable table) and ``caution``.
    """
    import csv
    import io
    import json
    from pathlib import Path

    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    import numpy as np
    import shapely

    from .. import __version__
    from ..io import fig_maps as mapplot
    from ..io.outputs import CAUTION, Column, atomic_path, check_outputs_free, format_table, to_jsonable
    from ..site.grid import transform_points
    from ..site.survey import load_survey

    survey = load_survey(survey_path)
    geotiff = geotiff and _have_rioxarray()
    paths = _output_paths(out_dir, survey, geotiff=geotiff)
    check_outputs_free(paths.values(), force=force)

    ds, grid, soil, antennas, target, fractions = compute_maps(survey, quiet=quiet)
    rows = _summary_rows(survey, antennas, ds, fractions)
    ds.attrs.update({
        "Conventions": "CF-1.8",
        "title": f"GPR survey feasibility maps: {survey.name}",
        "institution": "generated by subsurf",
        "source": f"subsurf {__version__} map, survey file {survey.path.name}",
        "history": f"created by subsurf {__version__} (subsurf map)",
        "references": "surveys/README.md (survey schema); README section 'Feasibility maps'",
        "comment": CAUTION,
        "caution": CAUTION,
        "target": f"{survey.target.kind} {survey.target.material} {survey.target.size_m:g} m at "
                  f"{survey.target.depth_m:g} m",
        "target_depth_m": survey.target.depth_m,
        "monte_carlo_draws": survey.draws,
        "monte_carlo_seed": survey.seed,
        "cell_size_m": survey.cell_size_m,
        "grid_crs_source": survey.grid_crs_source,
        "soil_model": survey.soil_model,
        "site_outline_wkt": grid.attrs["site_outline_wkt"],
    })

    written = {}
    nc = _cf_labels(ds)
    with atomic_path(paths["netcdf"], force=force) as tmp:
        enc = {v: {"zlib": True, "complevel": 4} for v in nc.data_vars if nc[v].ndim >= 2}
        enc.update({c: {"_FillValue": None} for c in ("x", "y", "lon", "lat")})  # CF 2.5.1: no missing coordinates
        enc.update({c: {"dtype": "S1"} for c in ("scenario_name", "antenna_name")})  # char arrays (CF 2.2)
        nc.to_netcdf(tmp, format="NETCDF4", engine="netcdf4", encoding=enc)
    written["netcdf"] = paths["netcdf"]

    # tables
    cols = [Column(k, h, u, f if f != "s" else "") for k, h, u, f in _COLUMNS]
    text_table = format_table(rows, cols, title=f"{survey.name}: area where each antenna reaches the "
                              f"{survey.target.kind} target at {survey.target.depth_m:g} m")
    buf = io.StringIO()
    writer = csv.DictWriter(buf, fieldnames=list(rows[0]) + ["caution"])
    writer.writeheader()
    for r in rows:
        writer.writerow({**{k: (f"{v:.4g}" if isinstance(v, float) else v) for k, v in r.items()}, "caution": CAUTION})
    for key, content in (("summary_csv", buf.getvalue()), ("summary_md", _markdown(rows, survey, CAUTION))):
        with atomic_path(paths[key], force=force) as tmp:
            Path(tmp).write_text(content, encoding="utf-8")
        written[key] = paths[key]
    sampled = [float(f) for f in ds["reach_probability"].attrs.get("sampled_fraction", [])]
    mc = {"draws": survey.draws, "seed": survey.seed,
          "max_standard_error": float(0.5 / np.sqrt(survey.draws)),
          "max_estimated_error": float(np.nanmax(ds["reach_probability_se"].values)),
          "sampled_fraction": dict(zip([s.name for s in survey.scenarios], sampled)),
          "method": "per-cell normal soil quantities (measurement and interpolation sd); first-order "
                    "(linearised) probability where its estimated error is <= 0.01, else Monte Carlo draws "
                    "keyed per tile of 256 cells, common random numbers across antennas"}
    summary_json = {"caution": CAUTION, "inputs": survey.describe(), "summary": rows, "monte_carlo": mc,
                    "grid": {"nx": int(grid.sizes["x"]), "ny": int(grid.sizes["y"]),
                             "cells_inside": int(grid["mask"].values.sum())}}
    with atomic_path(paths["summary_json"], force=force) as tmp:
        Path(tmp).write_text(json.dumps(to_jsonable(summary_json), indent=2, allow_nan=False), encoding="utf-8")
    written["summary_json"] = paths["summary_json"]

    # figures
    outline = shapely.from_wkt(grid.attrs["site_outline_wkt"])
    sx, sy = [], []
    for s in survey.samples:
        gx, gy = transform_points(s.x, s.y, s.crs, survey.grid_crs)
        sx.append(gx)
        sy.append(gy)
    samples = (np.concatenate(sx), np.concatenate(sy)) if sx else (np.array([]), np.array([]))
    crs_name = survey.grid_crs.name
    figs = {
        "antennas": mapplot.antenna_figure(grid, ds, scenario=survey.scenarios[0].name,
                                           target_depth_m=survey.target.depth_m, outline=outline,
                                           samples=samples, crs_name=crs_name),
        "scenarios": mapplot.scenario_figure(grid, ds, target_depth_m=survey.target.depth_m, outline=outline,
                                             samples=samples, crs_name=crs_name),
        "inputs": mapplot.inputs_figure(grid, soil, outline=outline, samples=samples, crs_name=crs_name),
    }
    for key, fig in figs.items():
        with atomic_path(paths[f"png_{key}"], force=force) as tmp:
            fig.savefig(tmp, dpi=110, format="png")
        plt.close(fig)
        written[f"png_{key}"] = paths[f"png_{key}"]

    if geotiff:
        import rioxarray  # noqa: F401

        for layer in GEOTIFF_LAYERS:
            for s in survey.scenarios:
                for a in antennas:
                    key = f"tif_{layer}_{s.name}_{a.name}"
                    da = ds[layer].sel(scenario=s.name, antenna=a.name).drop_vars(
                        ["scenario", "antenna", "lon", "lat"]).astype("float32")
                    da.attrs = {k: v for k, v in da.attrs.items() if k in ("long_name", "units")}
                    da = da.rio.write_crs(survey.grid_crs.to_wkt()).rio.write_nodata(np.nan)
                    with atomic_path(paths[key], force=force) as tmp:
                        da.rio.to_raster(tmp, driver="GTiff")
                    written[key] = paths[key]

    lines = [text_table, "",
             f"Reach probability: first-order where accurate, Monte Carlo ({survey.draws} draws, seed "
             f"{survey.seed}) on " + ", ".join(f"{100 * f:.1f} %" for f in sampled) + " of the cells; estimated "
             f"error <= {mc['max_estimated_error']:.3f}.",
             f"Grid: {grid.sizes['x']} x {grid.sizes['y']} cells of {survey.cell_size_m:g} m in {crs_name} "
             f"({survey.grid_crs_source}); {int(grid['mask'].values.sum())} inside the site.",
             f"Wrote {len(written)} files to {Path(out_dir)}/ (NetCDF, "
             f"{'GeoTIFF, ' if geotiff else ''}PNG, CSV/Markdown/JSON summary).", "",
             "Caution: " + CAUTION]
    return {"paths": {k: str(v) for k, v in written.items()}, "summary": rows, "inputs": survey.describe(),
            "monte_carlo": mc, "text": "\n".join(lines), "caution": CAUTION}
