"""Outputs of ``subsurf region``: the regional map and the synthetic soil raster, written tile by tile.

Both files go through the one CF encoder (:func:`subsurf.io.netcdf.write_netcdf`), the
same that writes ``subsurf map``'s NetCDF: antenna names as a label variable, no fill
values on coordinates, grid mapping and units on every layer.  The layers are dask-backed
(:func:`subsurf.site.regional.feasibility_region`), so the encoder computes a batch of
tiles at a time on the active scheduler and memory stays bounded by the chunk size.
:func:`map_region` runs a whole regional job and returns its summary (percentages of the
cells with soil data) for the command to print.
"""

from __future__ import annotations

import time

__all__ = ["write_region", "write_soil", "map_region"]


def write_region(result, path, *, force: bool = False, batch: int = 4, dtype: str = "float32",
                 complevel: int = 1, progress=None, caution: str | None = None, band_names_path=None):
    """Compute ``result`` (from :func:`subsurf.site.regional.feasibility_region`) tile by tile and write it.

    Parameters
    ----------
    result : xarray.Dataset
        Dask- (or numpy-) backed output of :func:`~subsurf.site.regional.feasibility_region`.
    path : path-like
        Output NetCDF; written under a temporary name and renamed when complete.
    force : bool
        Overwrite an existing output.
    batch : int
        Tiles computed at once by the active scheduler (memory ≈ batch × tile working set).
    dtype : {"float32", "float64"}
        Storage type of the layers (the chain itself runs in float64).
    complevel : int
        zlib level (0: no compression).
    progress : callable, optional
        Called with (tiles done, tiles total) after each batch.
    caution : str, optional
        Safety text stored as a global attribute.
    band_names_path : path-like, optional
        Where to write the GDAL band-name sidecar (:mod:`subsurf.io.gdal_pam`).

    Returns
    -------
    subsurf.site.regional.RegionSummary
        Reach fractions, mean depth and recommendation counts over the cells with data.
    """
    from ..detection.verdicts import REACHES_MARGIN_DB
    from ..errors import InputError
    from ..site.regional import DEFAULT_USED_FILL, REC_FILL, SHALLOW_FILL, RegionSummary
    from .netcdf import write_netcdf

    if dtype not in ("float32", "float64"):
        raise InputError(f"dtype must be float32 or float64, got {dtype!r}")
    if not hasattr(result["recommended_antenna"].data, "to_delayed"):  # numpy-backed: one tile
        result = result.chunk({"y": result.sizes["y"], "x": result.sizes["x"]})
    result = result.copy()
    result["recommended_antenna"].encoding["_FillValue"] = REC_FILL
    if "too_shallow" in result:
        result["too_shallow"].encoding["_FillValue"] = SHALLOW_FILL
    reaches_db = float(result.attrs.get("reaches_margin_db", REACHES_MARGIN_DB))
    filled = []
    if "soil_default_used" in result:
        result["soil_default_used"].encoding["_FillValue"] = DEFAULT_USED_FILL
        filled = [m.removesuffix("_default") for m in result["soil_default_used"].attrs["flag_meanings"].split()]
    summary = RegionSummary(antennas=[str(a) for a in result["antenna"].values], filled_names=filled)

    def on_tile(blocks):
        summary.add(blocks["max_depth"], blocks["margin_db"], blocks["recommended_antenna"],
                    reaches_db=reaches_db, used=blocks.get("soil_default_used"),
                    too_shallow=blocks.get("too_shallow"))

    attrs = {"title": "subsurf regional GPR feasibility map", "source": "subsurf.io.regional.write_region"}
    if caution:
        attrs["caution"] = caution
    write_netcdf(result, path, force=force, attrs=attrs, dtype=dtype, complevel=complevel, batch=batch,
                 progress=progress, on_tile=on_tile)
    if band_names_path is not None:
        from .gdal_pam import band_names_xml
        from .outputs import atomic_write_text

        atomic_write_text(band_names_path, band_names_xml(result), force=force)
    return summary


def write_soil(soil, path, *, force: bool = False, batch: int = 4) -> None:
    """Write a (dask-backed) soil raster, e.g. a synthetic region, as float32 CF NetCDF chunk by chunk."""
    import dask

    from .netcdf import write_netcdf

    with dask.config.set(scheduler="threads"):
        write_netcdf(soil, path, force=force, dtype="float32", complevel=1, batch=batch)


def _tile_lines(started: float):
    """A progress callback printing a line per tenth of the tiles with the time left (stderr, no terminal)."""
    import sys

    from .preflight import format_seconds

    shown = [0]

    def progress(done, total):
        tenth = 10 * done // max(total, 1)
        if tenth > shown[0] and done < total:
            shown[0] = tenth
            left = (time.perf_counter() - started) * (total - done) / max(done, 1)
            print(f"subsurf region: {done} of {total} tiles ({100 * done // total} %), about "
                  f"{format_seconds(left)} left", file=sys.stderr, flush=True)

    return progress


def _tile_bar(quiet: bool, *, long_run: bool = False):
    """(progress callback, close) drawing a tqdm bar of tiles on a terminal, or doing nothing.

    A long run (``long_run``) without a terminal prints a line per tenth of the tiles instead.
    """
    from .progress import progress_enabled

    if not progress_enabled(quiet=quiet):
        return (_tile_lines(time.perf_counter()) if long_run and not quiet else None), lambda: None
    from tqdm import tqdm

    bar = tqdm(total=1, desc="tiles", leave=False, unit="tile")

    def progress(done, total):
        bar.total = total
        bar.n = done
        bar.refresh()

    return progress, bar.close


def map_region(soil, antennas, out, *, target, target_depth_m: float, texture: str, model: str, layers,
               scheduler: str | None = "threads", workers: int | None = None, batch: int | None = None,
               float64: bool = False, force: bool = False, quiet: bool = False,
               expected_seconds: float = 0.0, fill_gaps: dict | None = None,
               reaches_db: float | None = None, band_names_path=None) -> dict:
    """Evaluate and write the regional map of ``soil`` to ``out``; return what the command reports.

    Progress: a bar of tiles on a terminal; without one, a line per tenth of the tiles with
    the time left when the run is expected to take over a minute (``expected_seconds``).

    Returns
    -------
    dict
        ``target`` (its summary), ``scheduler``, ``tiles``, ``batch``, ``cells_with_data``,
        ``map_duration_s``, ``cells_per_second``, ``thresholds``, ``rows`` (per antenna:
        ``centre_frequency_mhz``, ``reach_pct`` margin ≥ the reach threshold (``reaches``),
        ``marginal_or_better_pct`` margin ≥ 0 dB, ``too_shallow_pct`` target inside the blind zone,
        ``mean_max_depth_m``, ``recommended_pct``) and
        ``no_antenna_marginal_or_better_pct``, percentages of the cells with soil data (the keys
        ``subsurf map`` uses for the same quantities); ``coverage``: ``cells_with_data_pct`` of all
        cells, and per quantity filled with its default (``fill_gaps``) ``default_used_pct`` of
        the cells with data.  ``reaches_db``: the reach threshold (default
        :data:`subsurf.detection.verdicts.REACHES_MARGIN_DB`); "reaches" counts cells below the blind zone.
    """
    from ..detection.verdicts import REACHES_MARGIN_DB, reach_definition
    from ..planning.antennas import target_summary
    from ..site import regional
    from .outputs import CAUTION

    reaches_db = REACHES_MARGIN_DB if reaches_db is None else float(reaches_db)
    result = regional.feasibility_region(soil, antennas, target=target, target_depth_m=target_depth_m,
                                         texture=texture, model=model, layers=layers, fill_gaps=fill_gaps,
                                         reaches_db=reaches_db)
    progress, close = _tile_bar(quiet, long_run=expected_seconds > 60)
    t1 = time.perf_counter()
    try:
        with regional.scheduler(scheduler, workers=workers) as sched:
            batch = batch or 2 * sched["slots"]
            summary = write_region(result, out, force=force, batch=batch,
                                   dtype="float64" if float64 else "float32", progress=progress, caution=CAUTION,
                                   band_names_path=band_names_path)
    finally:
        close()
    seconds = time.perf_counter() - t1
    freqs = {a.name: a.centre_freq_hz for a in antennas}
    rows = [{"antenna": r["antenna"], "centre_frequency_mhz": freqs[r["antenna"]] / 1e6,
             "reach_pct": 100 * r["reach_with_headroom_fraction"],  # the one "reaches" (verdicts)
             "marginal_or_better_pct": 100 * r["reach_fraction"],
             "too_shallow_pct": 100 * r["too_shallow_fraction"],
             "mean_max_depth_m": r["mean_max_depth_m"],
             "recommended_pct": 100 * r["recommended_fraction"]} for r in summary.rows()]
    none = summary.recommended[0] / max(summary.cells_with_data, 1)
    return {
        "target": target_summary(target), "texture": texture, "soil_model": model,
        "scheduler": sched["scheduler"], "tiles": summary.tiles, "batch": batch,
        "cells_with_data": summary.cells_with_data, "map_duration_s": seconds,
        "cells_per_second": summary.cells / seconds if seconds > 0 else None,
        "thresholds": {"reaches_margin_db": reaches_db, "marginal_margin_db": 0.0},
        "reach_definition": reach_definition(reaches_db),
        "rows": rows, "no_antenna_marginal_or_better_pct": 100 * none,
        "coverage": {"cells_with_data_pct": 100 * summary.cells_with_data / max(summary.cells, 1),
                     "default_used_pct": {q: 100 * f for q, f in summary.filled_fractions().items()}},
    }
