"""The output files of ``subsurf map``: CF NetCDF, GeoTIFF layers, PNG maps and the summary tables.

:func:`run_map` loads a survey, computes its maps (:func:`subsurf.site.maps.compute_maps`)
and writes, into one folder: the CF NetCDF of every layer (:func:`subsurf.io.netcdf.write_netcdf`,
the encoder ``subsurf region`` uses too), GeoTIFFs per layer (with the optional geo extra),
PNG maps comparing antennas and scenarios and a map of the soil inputs
(:mod:`subsurf.io.fig_maps`), and the area-fraction summary as CSV, Markdown and JSON.
Every output is checked for existence first, and each is written to a temporary name and
renamed when complete; the command writes the folder as one transaction
(:mod:`subsurf.io.transaction`), with a manifest.
"""

from __future__ import annotations

import contextlib
from pathlib import Path

from ..detection.verdicts import REACHES_MARGIN_DB, reach_definition
from .tables import sidecar_names

__all__ = ["NETCDF_NAME", "summary_columns", "GEOTIFF_LAYERS", "OWN_FILES", "output_paths", "write_map_outputs",
           "run_map", "scenario_tags", "antenna_figure_key"]

NETCDF_NAME = "feasibility.nc"
SUMMARY_STEM = "summary"
#: the site-wide figures; the per-antenna depth maps are one file per scenario, ``map_antennas__<scenario>.png``
FIGURES = {"scenarios": "map_scenarios.png", "inputs": "map_soil_inputs.png"}
ANTENNA_FIGURE = "map_antennas__{tag}.png"
GEOTIFF_LAYERS = ("max_depth", "margin_db", "reach_probability")
#: glob patterns of every file a map folder holds (an earlier output is recognised by them); the GeoTIFFs by
#: their layer names, so a GeoTIFF of the user's own in geotiff/ is never taken for ours
OWN_FILES = (NETCDF_NAME, f"{NETCDF_NAME}.aux.xml", f"{SUMMARY_STEM}.*", "map_*.png",
             *(f"geotiff/{layer}__*__*.tif" for layer in GEOTIFF_LAYERS))

def summary_columns(reaches_db: float = REACHES_MARGIN_DB) -> tuple:
    """Summary columns for the reach threshold ``reaches_db``: row key, header, unit, number format ("s": text)."""
    return (
        ("scenario", "scenario", "", "s"), ("antenna", "antenna", "", "s"),
        ("centre_frequency_mhz", "f_c", "MHz", ".0f"),
        ("reach_pct", f"reaches (>= {reaches_db:g} dB)", "% area", ".0f"),
        ("marginal_or_better_pct", "margin >= 0 dB below blind zone", "% area", ".0f"),
        ("too_shallow_pct", "too shallow", "% area", ".0f"),
        ("expected_reach_pct", "mean P(reach)", "%", ".0f"), ("reach_p90_pct", "P(reach)>=0.9", "% area", ".0f"),
        ("median_max_depth_m", "median max depth", "m", ".2f"), ("recommended_pct", "recommended", "% area", ".0f"),
    )


def thresholds(reaches_db: float = REACHES_MARGIN_DB, source: str = "default") -> dict:
    """The reach threshold and its definition, as every map output states them (the keys ``choose`` uses).

    ``source``: where the threshold came from (``default``, ``[target] reach_margin`` or ``--reach-margin``).
    """
    return {"thresholds": {"reaches_margin_db": float(reaches_db), "marginal_margin_db": 0.0,
                           "reaches_margin_source": source},
            "reach_definition": reach_definition(reaches_db)}


def have_rioxarray() -> bool:
    """True when the GeoTIFF writer's library (rasterio, which the geo extra rioxarray brings) is installed.

    Looked up without importing it: importing rioxarray costs about 0.3-0.4 s of start-up
    (it imports dask.array), and the layers are written with rasterio directly.
    """
    from importlib.util import find_spec

    return find_spec("rasterio") is not None


def scenario_tags(names) -> dict[str, str]:
    """Scenario name -> the part of a file name that names it (letters, digits, '-', '.', '_'; unique).

    Accented letters lose their accents ('wét' -> 'wet': Unicode NFKD, combining marks dropped), so
    file names stay ASCII for every file system, zip tool and GIS; other characters (spaces,
    slashes, letters without an ASCII base ...) become '_'.  A tag that two names would share (letter
    case ignored, as on case-insensitive file systems) gets the scenario's position appended, and more
    if that is taken too, so every scenario keeps a file of its own.
    """
    import re
    import unicodedata

    folded = ["".join(c for c in unicodedata.normalize("NFKD", n) if not unicodedata.combining(c)) for n in names]
    raw = [re.sub(r"[^A-Za-z0-9._-]+", "_", n).strip("._") or "scenario" for n in folded]
    keys = [t.lower() for t in raw]
    used = {k for k in keys if keys.count(k) == 1}
    tags = {}
    for i, (n, t) in enumerate(zip(names, raw)):
        if keys.count(t.lower()) > 1:
            t, j = f"{t}_{i + 1}", 1
            while t.lower() in used:
                j += 1
                t = f"{raw[i]}_{i + 1}_{j}"
            used.add(t.lower())
        tags[n] = t
    return tags


def antenna_figure_key(scenario: str) -> str:
    """Output kind of the per-antenna depth map of one scenario (a key of :func:`output_paths`)."""
    return f"png_antennas:{scenario}"


def output_paths(out_dir, survey, *, geotiff: bool) -> dict[str, Path]:
    """Output kind -> path of every file ``subsurf map`` writes for ``survey``."""
    out = Path(out_dir)
    paths = {"netcdf": out / NETCDF_NAME,
             "netcdf_band_names": out / f"{NETCDF_NAME}.aux.xml",  # GDAL/QGIS band names (subsurf.io.gdal_pam)
             "summary_csv": out / f"{SUMMARY_STEM}.csv",
             **{f"summary_{k}": out / n for k, n in sidecar_names(f"{SUMMARY_STEM}.csv", coordinates=False).items()},
             "summary_md": out / f"{SUMMARY_STEM}.md",
             "summary_json": out / f"{SUMMARY_STEM}.json"}
    tags = scenario_tags([s.name for s in survey.scenarios])
    for s in survey.scenarios:  # every scenario mapped, in the survey's order
        paths[antenna_figure_key(s.name)] = out / ANTENNA_FIGURE.format(tag=tags[s.name])
    for key, name in FIGURES.items():
        paths[f"png_{key}"] = out / name
    if geotiff:
        for layer in GEOTIFF_LAYERS:
            for s in survey.scenarios:
                for a in survey.antennas:
                    paths[f"tif_{layer}_{s.name}_{a}"] = out / "geotiff" / f"{layer}__{tags[s.name]}__{a}.tif"
    return paths


def summary_markdown(rows, survey, caution: str, calibration=None) -> str:
    """The summary table as Markdown with the target, grid and Monte Carlo settings and the caution."""
    from .outputs import Column

    cols = [Column(k, h, u, f) for k, h, u, f in summary_columns(survey.reach_margin_db)]
    head = "| " + " | ".join(c.label() for c in cols) + " |"
    sep = "|" + "|".join("---" for _ in cols) + "|"
    body = ["| " + " | ".join(c.render(r[c.key]) for c in cols) + " |" for r in rows]
    t = survey.target
    return "\n".join([
        f"# Feasibility summary: {survey.name}", "",
        f"Target: {t.kind} ({t.material}, {t.size_m:g} m) at {t.depth_text()} depth"
        + (f" (reach judged at {t.depth_m:g} m, blind zone and resolution at {t.depth_top_m:g} m). "
           if t.is_range else ". ") +
        f"Grid: {survey.cell_size_m:g} m cells in {survey.grid_crs.name}. "
        f"Reach probability: first-order where accurate, else Monte Carlo ({survey.draws} draws, "
        f"seed {survey.seed}). Antennas: {survey.catalogue.text(survey.antennas)}.", "",
        *([f"**{calibration.note()}.**", ""] if calibration is not None else []),
        f"Definition: {reach_definition(survey.reach_margin_db)}. Mean P(reach) and P(reach) are the probability of reaching.", "",
        head, sep, *body, "", f"> **Caution.** {caution}", ""])


def summary_table_columns(reaches_db: float = REACHES_MARGIN_DB):
    """The summary CSV's columns (:class:`~subsurf.io.tables.TableColumn`: names, titles, units, 4 significant
    digits), in :func:`summary_columns` order."""
    from .tables import TableColumn

    units = {"% area": "%", "%": "%"}  # the CSVW unit; what the percentage is of stays in the title
    return [TableColumn(k, f"{h} ({u})" if u else h, units.get(u, u), datatype="string" if f == "s" else "number",
                        fmt="" if f == "s" else ".4g") for k, h, u, f in summary_columns(reaches_db)]


def summary_csv_files(rows, csv_path, survey, calibration=None) -> dict[Path, str]:
    """Path -> text of the summary CSV (caution column on every row) and its CSVW/.csvt sidecars."""
    from .tables import table_files

    return table_files(csv_path, rows, summary_table_columns(survey.reach_margin_db),
                       title=f"subsurf map: area each antenna reaches, per scenario ({survey.name})",
                       notes=[f"target: {survey.target.kind} at {survey.target.depth_text()} depth"
                              + (f" (reach judged at {survey.target.depth_m:g} m, blind zone at "
                                 f"{survey.target.depth_top_m:g} m)" if survey.target.is_range else ""),
                              f"definition: {reach_definition(survey.reach_margin_db)}",
                              f"grid: {survey.cell_size_m:g} m cells in {survey.grid_crs.name}",
                              *([calibration.note()] if calibration is not None else [])])


def _netcdf_attrs(survey, calibration=None) -> dict:
    from .. import __version__
    from .outputs import CAUTION

    return {
        "title": f"GPR survey feasibility maps: {survey.name}",
        "institution": "generated by subsurf",
        "source": f"subsurf {__version__} map, survey file {survey.path.name}",
        "history": f"created by subsurf {__version__} (subsurf map)",
        "references": "surveys/README.md (survey schema); README section 'Feasibility maps'",
        "comment": CAUTION,
        "caution": CAUTION,
        "antenna_catalogue": survey.catalogue.text(survey.antennas),
        "reaches_margin_db": float(survey.reach_margin_db),
        "reach_definition": reach_definition(survey.reach_margin_db),
        **({"calibration": calibration.note(), "calibration_file": str(calibration.path)}
           if calibration is not None else {}),
    }


def calibration_caption(calibration) -> str:
    """The line every figure of a calibrated map carries (wrapped to the figure width)."""
    import textwrap

    return textwrap.fill(calibration.note() + ".", width=150)


def _geotiff_transform(x, y, cell_m: float):
    """Affine geotransform (upper-left corner, cell size; rows in the order of ``y``) of cell centres x, y."""
    from affine import Affine

    dx = float(x[1] - x[0]) if len(x) > 1 else cell_m
    dy = float(y[1] - y[0]) if len(y) > 1 else -cell_m
    return Affine(dx, 0.0, float(x[0]) - dx / 2, 0.0, dy, float(y[0]) - dy / 2)


def _write_geotiffs(maps, paths, *, force: bool, written: dict) -> None:
    """One Cloud-Optimised GeoTIFF per layer, scenario and antenna (:func:`subsurf.io.geotiff.write_layer`).

    float32, DEFLATE, tiled, overviews when larger than a tile, NaN no-data, band
    description and unit from the layer's ``long_name``/``units``, the caution in the
    metadata; rows north first (as GIS software expects) whatever the grid's y order.
    """
    from rasterio.crs import CRS

    from .geotiff import write_layer

    ds, survey = maps.dataset, maps.survey
    x, y = ds["x"].values, ds["y"].values
    flip = len(y) > 1 and y[1] > y[0]  # south first in the dataset: write north first
    transform = _geotiff_transform(x, y[::-1] if flip else y, float(maps.grid.attrs["cell_size_m"]))
    crs = CRS.from_wkt(survey.grid_crs.to_wkt())
    for layer in GEOTIFF_LAYERS:
        var = ds[layer].transpose("scenario", "antenna", "y", "x")
        attrs = {k: str(v) for k, v in var.attrs.items() if k in ("long_name", "units")}
        attrs.update({k: str(ds.attrs[k]) for k in ("target", "target_depth_m", "target_depth_top_m",
                                                    "target_depth_bottom_m", "depth_range_definition")
                      if k in ds.attrs})
        for s in survey.scenarios:
            for a in maps.antennas:
                key = f"tif_{layer}_{s.name}_{a.name}"
                band = var.sel(scenario=s.name, antenna=a.name).values
                write_layer(paths[key], band[::-1] if flip else band, transform=transform, crs=crs,
                            description=attrs.get("long_name", layer), unit=attrs.get("units", ""),
                            tags={**attrs, "layer": layer, "scenario": s.name, "antenna": a.name,
                                  "reaches_margin_db": f"{maps.reaches_margin_db:g}"},
                            force=force)
                written[key] = paths[key]


def write_map_outputs(maps, out_dir, *, force: bool = False, geotiff: bool = True, figures=None) -> dict[str, Path]:
    """Write every output of ``subsurf map`` for computed ``maps``; return output kind -> path written.

    ``figures``: the :class:`.png_split.FigureProcesses` started before the computation (by
    :func:`run_map`); without it every figure is drawn in this process.
    """
    from . import figstyle
    from .map_figures import figure_jobs
    from .outputs import atomic_write_bytes, check_outputs_free
    from .png_split import FigureProcesses

    survey = maps.survey
    geotiff = geotiff and have_rioxarray()
    paths = output_paths(out_dir, survey, geotiff=geotiff)
    check_outputs_free(paths.values(), force=force)
    written: dict[str, Path] = {}
    with contextlib.ExitStack() as stack:
        if figures is None:
            figures = stack.enter_context(FigureProcesses(preload=figstyle.preload, render=figstyle.png_bytes,
                                                          fork=False))
        figures.submit(figure_jobs(maps))
        _write_data_outputs(maps, paths, written, force=force, geotiff=geotiff)
        for key, png in figures.pngs():
            written[key] = atomic_write_bytes(paths[key], png, force=force)
    # listed as before the figures were drawn beside the other outputs: the PNGs before the GeoTIFFs
    return {**{k: p for k, p in written.items() if not k.startswith("tif_")},
            **{k: p for k, p in written.items() if k.startswith("tif_")}}


def _write_data_outputs(maps, paths, written, *, force: bool, geotiff: bool) -> None:
    """The NetCDF, its band names, the summaries and the GeoTIFFs."""
    import json

    from .gdal_pam import band_names_xml
    from .netcdf import write_netcdf
    from .outputs import CAUTION, atomic_write_text, to_jsonable

    survey, rows = maps.survey, maps.rows
    write_netcdf(maps.dataset, paths["netcdf"], force=force, attrs=_netcdf_attrs(survey, maps.calibration))
    written["netcdf"] = paths["netcdf"]
    written["netcdf_band_names"] = atomic_write_text(paths["netcdf_band_names"], band_names_xml(maps.dataset),
                                                     force=force)
    by_path = {p: k for k, p in paths.items()}
    for path, content in summary_csv_files(rows, paths["summary_csv"], survey, maps.calibration).items():
        written[by_path[path]] = atomic_write_text(path, content, force=force)
    written["summary_md"] = atomic_write_text(
        paths["summary_md"], summary_markdown(rows, survey, CAUTION, maps.calibration), force=force)
    grid = maps.grid
    summary_json = {"caution": CAUTION, "inputs": survey.describe(),
                    **thresholds(maps.reaches_margin_db, survey.reach_margin_source), "summary": rows,
                    "monte_carlo": maps.monte_carlo,
                    "grid": {"nx": int(grid.sizes["x"]), "ny": int(grid.sizes["y"]),
                             "cells_inside": int(grid["mask"].values.sum())},
                    "calibration": None if maps.calibration is None else maps.calibration.describe()}
    written["summary_json"] = atomic_write_text(
        paths["summary_json"], json.dumps(to_jsonable(summary_json), indent=2, allow_nan=False), force=force)
    if geotiff:
        _write_geotiffs(maps, paths, force=force, written=written)


def run_map(survey_path, out_dir, *, force: bool = False, quiet: bool = False, geotiff: bool = True,
            preflight=None, calibration=None, catalogue=None, reach_margin_db=None) -> dict:
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
    preflight : callable, optional
        Called as ``preflight(survey, geotiff)`` once the survey is read, before any
        computation (e.g. to check free space for the outputs).
    calibration : str or Path, optional
        Site calibration file, instead of the survey's ``[calibration] file``.
    catalogue : str or Path, optional
        Antenna catalogue file replacing the survey's ``[antennas] catalogue`` (``--catalogue``);
        the survey's inline antennas are kept.
    reach_margin_db : float, optional
        Reach threshold (dB) replacing the survey's ``[target] reach_margin`` (``--reach-margin``).

    Returns
    -------
    dict
        ``paths`` (output kind -> path written), ``summary`` (one row per scenario and
        antenna), ``inputs`` (the survey description), ``monte_carlo``, ``grid`` (nx, ny,
        cells inside, CRS name and source, cell size), ``geotiff`` (whether GeoTIFFs were
        written), ``calibration`` (what the calibration is and does; None without one), ``zones``
        (per soil zone, :func:`subsurf.site.zone_stats.zone_summaries`; empty without zones) and
        ``caution``.
    """
    from ..site.maps import compute_maps
    from ..site.survey import load_survey
    from ..site.zone_stats import zone_summaries
    from .outputs import CAUTION, check_outputs_free

    survey = load_survey(survey_path, catalogue=catalogue, reach_margin_db=reach_margin_db)
    geotiff = geotiff and have_rioxarray()
    check_outputs_free(output_paths(out_dir, survey, geotiff=geotiff).values(), force=force)
    if preflight is not None:
        preflight(survey, geotiff)
    from . import figstyle
    from .png_split import FigureProcesses

    # the figure processes start now and import matplotlib while the maps are computed
    with FigureProcesses(preload=figstyle.preload, render=figstyle.png_bytes) as figures:
        maps = compute_maps(survey, quiet=quiet, calibration=calibration)
        written = write_map_outputs(maps, out_dir, force=force, geotiff=geotiff, figures=figures)
    grid = maps.grid
    return {"paths": {k: str(v) for k, v in written.items()},
            **thresholds(maps.reaches_margin_db, survey.reach_margin_source), "summary": maps.rows,
            "inputs": survey.describe(),
            "monte_carlo": maps.monte_carlo, "caution": CAUTION, "geotiff": geotiff,
            "grid": {"nx": int(grid.sizes["x"]), "ny": int(grid.sizes["y"]),
                     "cells_inside": int(grid["mask"].values.sum()), "crs_name": survey.grid_crs.name,
                     "crs_source": survey.grid_crs_source, "cell_size_m": survey.cell_size_m},
            "site": survey.name, "target": {k: v for k, v in survey.target.json().items()
                                            if k not in ("size_m", "material")},
            "zones": zone_summaries(maps),
            "calibration": None if maps.calibration is None else maps.calibration.describe()}
