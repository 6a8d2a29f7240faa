"""``subsurf map``: feasibility maps over a georeferenced survey site.

Parses the arguments, calls :func:`subsurf.io.maps.run_map` (the maps are computed by
:func:`subsurf.site.maps.compute_maps` and written by :mod:`subsurf.io.maps`) and prints
the area-fraction summary.  The outputs and their layout are described there.
"""

from __future__ import annotations

HELP = "feasibility maps of a survey site: depth reach per antenna and scenario (NetCDF, PNG, CSV)"
EXAMPLE = "subsurf map surveys/example-site/survey.toml --out maps-example"


CATALOGUE_HELP = ("antenna catalogue TOML (layout of configs/antennas.toml) replacing the survey's [antennas] "
                  "catalogue (or the bundled illustrative one); antennas the survey defines in [antennas.define.NAME] "
                  "are kept, and every name in [antennas] names must be in one of the two")


def add_arguments(parser) -> None:
    parser.add_argument("survey", metavar="SURVEY.toml", help="survey file (schema: surveys/README.md)")
    parser.add_argument("--out", metavar="DIR", default="subsurf-map",
                        help="output folder (default: subsurf-map)")
    parser.add_argument("--force", action="store_true", help="overwrite existing outputs")
    parser.add_argument("--catalogue", metavar="FILE", help=CATALOGUE_HELP)
    parser.add_argument("--no-geotiff", action="store_true", help="skip the GeoTIFF layers even if "
                        "rioxarray is installed")
    parser.add_argument("--calibration", metavar="JSON", help="site calibration written by 'subsurf calibrate' "
                        "(instead of the survey's [calibration] file): the measured attenuation, Q*, velocity and "
                        "effective performance replace the soil model's and the catalogue's, anchored at the "
                        "site-median soil")
    from ._reach import add_reach_margin_argument

    add_reach_margin_argument(parser, survey=True)


def summary_text(result: dict, out_dir) -> str:
    """The readable summary of a :func:`subsurf.io.maps.run_map` result."""
    from pathlib import Path

    from ..detection.verdicts import range_definition
    from ..io.maps import summary_columns
    from ..io.outputs import Column, format_table

    th = result["thresholds"]
    cols = [Column(k, h, u, f if f != "s" else "") for k, h, u, f in summary_columns(th["reaches_margin_db"])]
    t, g, mc = result["target"], result["grid"], result["monte_carlo"]
    where = f"at {t['depth_m']:g} m" if "depth_top_m" not in t else (
        f"over {t['depth_top_m']:g}-{t['depth_bottom_m']:g} m (reach judged at {t['depth_bottom_m']:g} m, "
        f"blind zone at {t['depth_top_m']:g} m: a cell blind at the top does not count)")
    table = format_table(result["summary"], cols, title=f"{result['site']}: area where each antenna reaches the "
                         f"{t['kind']} target {where}")
    cal = [result["calibration"]["note"] + ".", ""] if result.get("calibration") else []
    return "\n".join([
        *cal, table, "",
        f"Definition: {result['reach_definition']}"
        + ("." if th["reaches_margin_source"] == "default" else f" ({th['reaches_margin_source']})."),
        *([f"Depth range: {range_definition(t['depth_top_m'], t['depth_bottom_m'])}."] if "depth_top_m" in t else []),
        f"Reach probability: first-order where accurate, Monte Carlo ({mc['draws']} draws, seed "
        f"{mc['seed']}) on " + ", ".join(f"{100 * f:.1f} % ({name})" for name, f in mc["sampled_fraction"].items())
        + f" of the cells; estimated error <= {mc['max_estimated_error']:.3f}.",
        f"Antennas: {result['inputs']['catalogue']['text']}.",
        f"Grid: {g['nx']} x {g['ny']} cells of {g['cell_size_m']:g} m in {g['crs_name']} "
        f"({g['crs_source']}); {g['cells_inside']} inside the site.",
        f"Wrote {len(result['paths'])} files to {Path(out_dir)}/ (NetCDF, "
        f"{'GeoTIFF, ' if result['geotiff'] else ''}PNG, CSV/Markdown/JSON summary).", "",
        "Caution: " + result["caution"]])


def run(args) -> int:
    from ._collector import imports_first

    with imports_first():  # console only: no garbage collection while importing, until preflight
        return _run(args)


def _run(args) -> int:
    from ..io.gdal_pam import GDAL_SIDECARS
    from ..io.maps import OWN_FILES, run_map
    from ..io.outputs import CAUTION, collect_warnings, print_notes, print_result
    from ..io.preflight import map_output_bytes
    from ..io.transaction import OutputTransaction
    from ._collector import imports_done
    from ._numpy_only import declare_numpy_only
    from ._reach import reach_margin_from_args

    declare_numpy_only()  # numpy arrays only: xarray need not import dask and pint to check (console only)
    reach_margin = reach_margin_from_args(args)
    txn = OutputTransaction("map", force=args.force)
    staged = txn.folder(args.out, own=OWN_FILES, sidecars=GDAL_SIDECARS)  # GDAL's statistics files are ours

    def preflight(survey, geotiff):  # free space for the outputs, before any computation
        from ..site.grid import build_grid

        grid = build_grid(survey)
        txn.require_space(map_output_bytes(cells=grid.sizes["x"] * grid.sizes["y"], antennas=len(survey.antennas),
                                           scenarios=len(survey.scenarios), geotiff=geotiff))
        imports_done()  # the modules and the survey stay till the end: later collections skip them

    # input notes (ignored columns, partial rasters, kriging ...) and model warnings become note: lines
    with collect_warnings() as notes, txn:  # the folder is staged, then moved into place whole with its manifest
        result = run_map(args.survey, staged, force=True, quiet=args.quiet or args.json,
                         geotiff=not args.no_geotiff, preflight=preflight, calibration=args.calibration,
                         catalogue=args.catalogue, reach_margin_db=reach_margin)
    result = txn.public(result)
    text = summary_text(result, args.out)
    payload = {"caution": CAUTION, **{k: result[k] for k in ("paths", "thresholds", "reach_definition", "summary",
                                                             "inputs", "monte_carlo", "calibration")},
               "text": text, "warnings": notes}
    print_result(payload, text, as_json=args.json)
    print_notes(list(txn.notes) + notes, quiet=args.quiet or args.json)
    return 0
