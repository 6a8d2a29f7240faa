"""``subsurf region``: feasibility maps over a whole region, chunk by chunk (dask).

The input is a regional soil raster (GeoTIFF or NetCDF, read lazily) or a seeded synthetic region
generated per chunk; the output is a CF NetCDF map written tile by tile, so memory is
bounded by the chunk size, not by the region.  Needs the ``scale`` extra (dask,
distributed).
"""

from __future__ import annotations

import time

HELP = "feasibility maps over a regional soil raster (or a synthetic region), chunk by chunk with dask"
EXAMPLE = """subsurf region --synthetic 4000x3000 --target planar --depth 1.5 --out region-map.nc
subsurf region --synthetic 20000x20000 --write-soil region-soil.nc
subsurf region --soil region-soil.nc --target line --depth 1 --size "20 cm" --material metal --out map.nc --chunk 1024
subsurf region --soil soil.tif --soil-var moisture=1 --soil-var pore_water_ec=EC --soil-unit pore_water_ec=mS/m --target planar --depth 2 --out map.nc
subsurf region --soil monthly.nc --soil-var moisture=vwc --soil-time 2024-06-01 --target planar --depth 2 --out map.nc
subsurf region --soil region-soil.nc --target planar --depth 2 --out map.nc --scheduler tcp://scheduler.example.org:8786"""


def add_arguments(parser) -> None:
    g = parser.add_argument_group("soil input (one of)")
    g.add_argument("--soil", metavar="FILE", help="regional soil raster, GeoTIFF (bands) or NetCDF (variables), "
                   "read tile by tile: quantities moisture (required), pore_water_ec, clay, sand, salinity, "
                   "temperature, bulk_density, found by name (variable name, CF standard_name or band "
                   "description) or mapped with --soil-var; units from the file (NetCDF 'units', GeoTIFF band "
                   "unit) or --soil-unit, else SI; CRS from the file or --soil-crs")
    g.add_argument("--soil-var", action="append", metavar="QUANTITY=NAME", default=[],
                   help="which variable (NetCDF) or band (GeoTIFF: number or description) holds QUANTITY, "
                        "e.g. moisture=vwc or pore_water_ec=2 (repeatable)")
    g.add_argument("--soil-unit", action="append", metavar="QUANTITY=UNIT", default=[],
                   help="unit of the stored numbers of QUANTITY, overriding the file's, e.g. moisture=%%, "
                        "pore_water_ec=mS/m (repeatable)")
    tg = g.add_mutually_exclusive_group()
    tg.add_argument("--soil-time", metavar="DATE", help="with a time dimension: use the time step nearest DATE "
                    "(e.g. 2024-06-01)")
    tg.add_argument("--soil-time-aggregate", choices=["mean", "median", "min", "max"],
                    help="with a time dimension: combine the time steps (default with several steps: mean, noted)")
    g.add_argument("--soil-crs", metavar="CRS", help="CRS of --soil (EPSG code or WKT) when the file states none")
    g.add_argument("--soil-gaps", choices=["defaults", "empty"], default="defaults",
                   help="cells with moisture but without another quantity of the file: fill it with the texture "
                        "preset's value (defaults, the default; layer soil_default_used) or leave the cell "
                        "empty; cells without moisture are always empty")
    g.add_argument("--synthetic", metavar="NXxNY", help="generate a seeded synthetic region of NX by NY cells "
                   "(smooth random moisture, pore-water EC and clay; invented data) instead of reading --soil")
    g.add_argument("--seed", type=int, default=0, help="seed of the synthetic region (default 0)")
    g.add_argument("--cell-size", metavar="Q", default="25 m", help="synthetic cell size (default 25 m)")
    g.add_argument("--nodata-fraction", type=float, default=0.02,
                   help="about this fraction of synthetic cells is no data, e.g. open water (default 0.02)")
    g.add_argument("--write-soil", metavar="FILE", help="with --synthetic: write the synthetic soil raster "
                   "(float32 NetCDF, chunk by chunk) to FILE")
    t = parser.add_argument_group("target")
    t.add_argument("--target", choices=["planar", "point", "line"],
                   help="planar interface, point (void, boulder, drum) or line (pipe, cable, duct)")
    t.add_argument("--depth", metavar="Q", help="depth to the top of the target (bare number: m)")
    t.add_argument("--size", metavar="Q", help="diameter of a point or line target (bare number: m)")
    t.add_argument("--material", metavar="NAME", help="target material from configs/materials.toml "
                   "(default: metal for point/line, water_table for planar)")
    t.add_argument("--target-eps", metavar="EPS", help="target relative permittivity instead of --material")
    t.add_argument("--target-sigma", metavar="Q", help="target conductivity with --target-eps (bare number: mS/m)")
    s = parser.add_argument_group("ground and antennas")
    s.add_argument("--texture", default="loam", help="texture preset filling soil facts the raster lacks "
                   "(default loam)")
    s.add_argument("--model", choices=["crim", "peplinski", "topp"], default="crim",
                   help="soil dielectric model (default crim)")
    s.add_argument("--catalogue", metavar="FILE", help="antenna catalogue TOML (default: the bundled "
                   "illustrative configs/antennas.toml)")
    s.add_argument("--antenna", action="append", metavar="NAME", help="only these antennas (repeatable; "
                   "default: every antenna of the catalogue)")
    from ._reach import add_reach_margin_argument

    add_reach_margin_argument(s)
    s.add_argument("--layers", default="velocity,attenuation_db_per_m",
                   help="comma-separated layers besides max_depth and margin_db: velocity, "
                        "attenuation_db_per_m, eps_real, eps_imag, sigma, vertical_resolution, or 'none' "
                        "(default velocity,attenuation_db_per_m)")
    o = parser.add_argument_group("output and computation")
    o.add_argument("--out", metavar="FILE", help="output map (CF NetCDF)")
    o.add_argument("--force", action="store_true", help="overwrite existing outputs")
    o.add_argument("--chunk", type=int, default=512, metavar="SIZE",
                   help="tile edge in cells (default 512); memory per tile grows with SIZE²")
    o.add_argument("--scheduler", metavar="ADDRESS", default="threads",
                   help="'threads' (default: dask's local threaded scheduler), 'local' (a dask.distributed "
                        "cluster of worker processes on this machine), or the address of an existing "
                        "dask.distributed scheduler, e.g. tcp://scheduler.example.org:8786")
    o.add_argument("--workers", type=int, metavar="N", help="threads or local worker processes "
                   "(default: the CPU count)")
    o.add_argument("--batch", type=int, metavar="N", help="tiles computed at once (default: twice the "
                   "parallel slots); bounds memory")
    o.add_argument("--float64", action="store_true", help="store layers as float64 (default float32)")
    o.add_argument("--allow-large", action="store_true", help="run even if the memory or time estimate exceeds "
                   "the limits (75 %% of this machine's memory, 6 h of computing); checked before any work")


def _need_dask():
    from ..errors import InputError

    try:
        import dask  # noqa: F401
        import dask.array  # noqa: F401
    except ImportError:
        raise InputError("subsurf region needs the optional scale extra: pip install 'subsurf[scale]'") from None


COLUMNS_SPEC = [
    ("antenna", "antenna", "", ""),
    ("centre_frequency_mhz", "f", "MHz", ".4g"),
    ("reach_pct", "reaches", "% of cells", ".1f"),
    ("marginal_or_better_pct", "margin >= 0 dB below blind zone", "% of cells", ".1f"),
    ("too_shallow_pct", "too shallow", "% of cells", ".1f"),
    ("mean_max_depth_m", "mean max depth", "m", ".3g"),
    ("recommended_pct", "recommended", "% of cells", ".1f"),
]


def _check_flags(args) -> None:
    """Refuse impossible flag values before any work, naming the flag."""
    from ..errors import InputError

    if (args.soil is None) == (args.synthetic is None):
        raise InputError("give the soil as exactly one of --soil FILE (.tif or .nc) or --synthetic NXxNY")
    soil_flags = [f for f, v in (("--soil-var", args.soil_var), ("--soil-unit", args.soil_unit),
                                 ("--soil-time", args.soil_time), ("--soil-time-aggregate", args.soil_time_aggregate),
                                 ("--soil-crs", args.soil_crs)) if v]
    if soil_flags and args.soil is None:
        raise InputError(f"{soil_flags[0]} describes the --soil raster; it has no meaning with --synthetic")
    if args.write_soil and not args.synthetic:
        raise InputError("--write-soil writes a synthetic region; use it with --synthetic")
    if not args.out and not args.write_soil:
        raise InputError("nothing to write: give --out MAP.nc (and/or --write-soil with --synthetic)")
    if args.chunk < 16:
        raise InputError(f"--chunk must be at least 16 cells, got {args.chunk}")
    if args.seed < 0:
        raise InputError(f"--seed must be an integer >= 0 (random generator seed), got {args.seed}")
    for flag, value in (("--workers", args.workers), ("--batch", args.batch)):
        if value is not None and value < 1:
            raise InputError(f"{flag} must be an integer >= 1, got {value}")
    if not 0 <= args.nodata_fraction <= 0.5:
        raise InputError(f"--nodata-fraction must be between 0 and 0.5, got {args.nodata_fraction:g}")
    if args.out and (args.target is None or args.depth is None):
        raise InputError("a map needs the target: --target planar|point|line and --depth")


def _pairs(flag: str, items) -> dict:
    """``QUANTITY=VALUE`` flags as a dict, refusing malformed or repeated ones."""
    from ..errors import InputError
    from ..site.schema import QUANTITIES

    out = {}
    for item in items:
        q, sep, value = item.partition("=")
        q, value = q.strip(), value.strip()
        if not sep or not q or not value:
            raise InputError(f"{flag} {item!r}: expected QUANTITY=VALUE, e.g. {flag} moisture=vwc")
        if q not in QUANTITIES:
            raise InputError(f"{flag} {item!r}: {q!r} is not a soil quantity; allowed: {', '.join(QUANTITIES)}")
        if q in out:
            raise InputError(f"{flag} gives {q} twice ({out[q]!r} and {value!r})")
        out[q] = value
    return out


def _open_soil(args):
    from ..site import regional

    crs = None
    if args.soil_crs:
        from pyproj import CRS
        from pyproj.exceptions import CRSError

        from ..errors import InputError
        from ..site.crs import horizontal_crs_problem

        try:
            crs = CRS.from_user_input(args.soil_crs)
        except CRSError:
            raise InputError(f"--soil-crs: unknown CRS {args.soil_crs[:60]!r}; give an EPSG code such as "
                             "EPSG:32633 or WKT") from None
        problem = horizontal_crs_problem(crs, args.soil_crs)
        if problem:
            raise InputError(f"--soil-crs: {problem}")
    return regional.open_region(args.soil, chunk=args.chunk, variables=_pairs("--soil-var", args.soil_var),
                                units=_pairs("--soil-unit", args.soil_unit), time=args.soil_time,
                                time_aggregate=args.soil_time_aggregate, crs=crs)


def _estimate(args, nx: int, ny: int, n_antennas: int, n_layers: int):
    """Memory, time and output size of this run, refused beyond the limits unless --allow-large."""
    import os

    from ..io.preflight import check_estimate, physical_memory_bytes, region_estimate
    from ..site.synthetic import FIELDS

    slots = args.workers or os.cpu_count() or 1
    est = region_estimate(cells=nx * ny, antennas=n_antennas, layers=n_layers, chunk=args.chunk,
                          tiles_in_flight=args.batch or 2 * slots, map_out=bool(args.out),
                          soil_quantities=len(FIELDS) if args.write_soil else 0)
    big_tiles = est.memory_bytes > 0.75 * physical_memory_bytes()
    return check_estimate(est, allow=args.allow_large,
                          hint="use a smaller --chunk or --batch" if big_tiles else "map a smaller region")


def run(args) -> int:
    import sys

    _need_dask()
    from ..errors import InputError
    from ..io.outputs import CAUTION, collect_warnings, print_notes, print_result
    from ..io.regional import map_region, write_soil
    from ..io.transaction import OutputTransaction
    from ..planning.antennas import get_antenna
    from ..planning.catalogue import resolve_catalogue
    from ..site import regional, synthetic
    from ..units import parse_quantity
    from ._reach import reach_margin_from_args
    from .choose import parse_depth, target_from_args

    _check_flags(args)
    layers = [s.strip() for s in args.layers.split(",") if s.strip() and s.strip() != "none"]
    reaches_db = reach_margin_from_args(args)
    antennas, depth, target, choice = [], None, None, None
    if args.out:  # everything the map needs is read before anything is written
        from ._depths import parse_depths

        if parse_depths(args.depth).is_range:
            from ..errors import InputError

            raise InputError(f"--depth: region maps one depth, got the range or list {args.depth!r}; give one depth "
                             "(e.g. the bottom of the range), or map the range with a survey file and 'subsurf map'")
        depth = parse_depth(args.depth)
        target = target_from_args(args, depth_m=depth)
        choice = resolve_catalogue(file=args.catalogue, source="--catalogue")  # as choose reads it
        catalogue = choice.antennas
        antennas = [get_antenna(n, catalogue) for n in args.antenna] if args.antenna else list(catalogue.values())
    txn = OutputTransaction("region", force=args.force)
    staged_map = txn.file(args.out) if args.out else None
    if args.out:  # GDAL/QGIS band names beside the map (subsurf.io.gdal_pam)
        from ..io.gdal_pam import aux_xml_path

        staged_names = txn.file(aux_xml_path(args.out))
    staged_soil = txn.file(args.write_soil) if args.write_soil else None
    with txn, collect_warnings() as notes:  # both files appear at the end, or neither
        if args.synthetic:
            nx, ny = synthetic.parse_size(args.synthetic)
            cell = parse_quantity(args.cell_size, "length", default_unit="m", name="--cell-size")
            if not cell > 0:
                raise InputError(f"--cell-size must be > 0 m, got {args.cell_size!r}")
            est = _estimate(args, nx, ny, len(antennas), len(layers))
            soil = None
        else:
            soil = _open_soil(args)
            ny, nx = soil.sizes["y"], soil.sizes["x"]
            est = _estimate(args, nx, ny, len(antennas), len(layers))
        txn.require_space(est.output_bytes)
        if est.seconds > 60 and not (args.quiet or args.json):
            print(f"subsurf region: {est.what}: {est.describe()} (estimate)", file=sys.stderr, flush=True)
        if soil is None:
            soil = synthetic.synthetic_region(nx, ny, seed=args.seed, cell_size_m=cell, chunk=args.chunk,
                                              nodata_fraction=args.nodata_fraction)
            source = f"synthetic region {nx}x{ny} cells of {cell:g} m, seed {args.seed} (invented data)"
        else:
            source = str(args.soil)
        fill = None
        if args.soil is not None and args.soil_gaps == "defaults":
            fill = regional.gap_fill_values(args.texture, [q for q in soil.data_vars if q != "crs"])
        payload = {"soil": source, "cells": nx * ny, "shape": {"y": ny, "x": nx}, "chunk": args.chunk,
                   "estimate": {"memory_bytes": est.memory_bytes, "duration_s": est.seconds,
                                "output_bytes": est.output_bytes}, "outputs": {}}
        t0 = time.perf_counter()
        if args.write_soil:
            write_soil(soil, staged_soil, force=True)
            payload["outputs"]["soil"] = str(args.write_soil)
            payload["soil_write_duration_s"] = time.perf_counter() - t0
        if args.out:
            payload.update(map_region(soil, antennas, staged_map, target=target, target_depth_m=depth,
                                      texture=args.texture, model=args.model, layers=layers,
                                      scheduler=args.scheduler, workers=args.workers, batch=args.batch,
                                      float64=args.float64, force=True, quiet=args.quiet or args.json,
                                      expected_seconds=est.seconds, fill_gaps=fill, reaches_db=reaches_db,
                                      band_names_path=staged_names))
            payload["outputs"]["map"] = str(args.out)
            payload["catalogue"] = choice.describe([a.name for a in antennas])
    if args.soil is not None:
        from ..site.schema import QUANTITIES

        payload["soil_inputs"] = {"format": soil.attrs["format"], "quantities": soil.attrs["inputs"],
                                  "unused": soil.attrs["unused"],
                                  "crs": _crs_label(soil), "crs_source": soil.attrs["crs_source"],
                                  "gaps": args.soil_gaps,
                                  "fill_values": {q: {"value": v, "unit": QUANTITIES[q].si_unit}
                                                  for q, v in (fill or {}).items()}}
    payload["warnings"] = notes
    payload["caution"] = CAUTION
    print_notes(txn.notes, quiet=args.quiet or args.json)
    print_result(payload, summary_text(payload, args), as_json=args.json)
    print_notes(notes, quiet=args.quiet or args.json)
    return 0


def _crs_label(soil) -> str:
    from pyproj import CRS

    crs = CRS.from_wkt(soil["crs"].attrs["crs_wkt"])
    code = crs.to_epsg(min_confidence=70)
    return f"EPSG:{code} ({crs.name})" if code else crs.name


def _input_lines(payload: dict, args) -> list[str]:
    """What was read from --soil, how time and units were handled, and what the gaps became."""
    from ..site.schema import QUANTITIES

    info = payload["soil_inputs"]
    lines = [f"CRS: {info['crs']} (from {info['crs_source']})"]
    for q in info["quantities"]:
        lines.append(f"  {q['quantity']}: {q['read_from']}, units {q['units']}" + (f", {q['time']}" if q["time"] else ""))
    if info["unused"]:
        lines.append(f"  not used (name no soil quantity; map with --soil-var QUANTITY=...): {', '.join(info['unused'])}")
    absent = [q for q in QUANTITIES if q not in {r["quantity"] for r in info["quantities"]}]
    if absent:
        lines.append(f"  not in the file (texture preset {args.texture} or model defaults everywhere): {', '.join(absent)}")
    if args.out:
        cov = payload["coverage"]
        text = (f"Coverage: {cov['cells_with_data_pct']:.1f} % of the cells have moisture; the rest are empty "
                "(no data) in the map")
        if info["gaps"] == "defaults" and cov["default_used_pct"]:
            filled = ", ".join(f"{q} {p:.1f} %" for q, p in cov["default_used_pct"].items())
            text += f"; filled with defaults where the file lacks them (layer soil_default_used): {filled} of those cells"
        elif info["gaps"] == "empty":
            text += "; cells lacking any other quantity of the file are empty too (--soil-gaps empty)"
        lines.append(text)
    return lines


def summary_text(payload: dict, args) -> str:
    """The readable lines printed after a regional run."""
    from ..io.outputs import CAUTION, Column, format_table

    nx, ny = payload["shape"]["x"], payload["shape"]["y"]
    lines = [f"Soil: {payload['soil']}; {nx} x {ny} = {nx * ny:,} cells, chunk {args.chunk}"]
    if "soil_inputs" in payload:
        lines += _input_lines(payload, args)
    if args.write_soil:
        lines.append(f"Wrote synthetic soil raster {args.write_soil} ({payload['soil_write_duration_s']:.1f} s)")
    if args.out:
        t = payload["target"]
        what = f"{t['kind']} target, {t['material']}" + (f", {t['size_m']:g} m across" if t["size_m"] else "")
        lines.append(f"Target: {what}, at {t['depth_m']:g} m; ground: {args.model} model, texture {args.texture}")
        lines.append(f"Computed on {payload['scheduler']}: {payload['tiles']} tiles in "
                     f"{payload['map_duration_s']:.1f} s ({payload['cells_per_second']:,.0f} cells/s)")
        lines.append(format_table(payload["rows"], [Column(*c) for c in COLUMNS_SPEC]))
        lines.append(f"Percentages of the {payload['cells_with_data']:,} cells with soil data; "
                     f"{payload['reach_definition']}; 'margin >= 0 dB' also counts marginal cells (below the blind "
                     f"zone); no antenna with margin >= 0 dB: {payload['no_antenna_marginal_or_better_pct']:.1f} %.")
        lines.append(f"Antennas: {payload['catalogue']['text']}.")
        from pathlib import Path

        named = Path(f"{args.out}.aux.xml").is_file()
        lines.append(f"Wrote {args.out}" + (f" (band names for GDAL/QGIS in {Path(args.out).name}.aux.xml)"
                                             if named else ""))
    lines.append(f"Caution: {CAUTION}")
    return "\n".join(lines)
