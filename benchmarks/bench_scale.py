"""Regional-map benchmark: chain throughput, its ratio to a per-cell loop and to a bare-numpy floor,
and chunked runs at 1x, 4x, 16x and 64x a base size (peak memory and time), all in one run.

    python benchmarks/bench_scale.py [--base 512] [--chunk 256] [--loop-cells 40] [--factors 1 4 16 64]
                                     [--from-file] [--from-geotiff] [--skip-chain]

Not part of the test suite.  Every size of the chunked runs is measured in a fresh
subprocess (peak resident memory: the process's own VmHWM), writing a real CF NetCDF map
with the threaded scheduler, from a synthetic region generated chunk by chunk, and with
``--from-file`` again from the same region first written as a NetCDF soil raster (in its own
process) and read tile by tile as ``subsurf region --soil`` reads it, and with ``--from-geotiff``
from the same region as a tiled, DEFLATE-compressed 3-band GeoTIFF written by rasterio.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import subprocess
import sys
import tempfile
import time

import numpy as np

QUANTITIES = ("moisture", "pore_water_ec", "clay")
DEPTH = 1.5


def machine() -> str:
    cpu = "unknown CPU"
    try:
        with open("/proc/cpuinfo") as fh:
            for line in fh:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    mem = os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") / 2**30
    import dask

    return (f"{cpu}, {os.cpu_count()} cores, {mem:.0f} GiB; Python {platform.python_version()}, "
            f"numpy {np.__version__}, dask {dask.__version__}")


def setup(n_side: int):
    from subsurf.planning.antennas import load_catalogue, make_target
    from subsurf.site import regional as scale
    from subsurf.site.synthetic import synthetic_region

    antennas = scale.chain_antennas(list(load_catalogue().values()), band_resolution=False)
    target = make_target("planar", depth_m=DEPTH, material="water_table")
    soil = synthetic_region(n_side, n_side, seed=1).compute()
    values = {q: soil[q].values for q in QUANTITIES}
    return antennas, target, values


def best_cpu_time(fn, repeat: int) -> tuple[float, object]:
    best, out = np.inf, None
    for _ in range(repeat):
        t = time.process_time()
        out = fn()
        best = min(best, time.process_time() - t)
    return best, out


def chain_rate(antennas, target, values):
    from subsurf.site.feasibility import evaluate

    def run():
        return evaluate(values, antennas, target=target, target_depth_m=DEPTH, texture="loam")

    return best_cpu_time(run, 3)


def loop_rate(antennas, target, values, n_cells: int, chain_out):
    """Per cell: a scalar Soil; per antenna its (eps, sigma) and the loss terms once (subsurf.detection.
    loss_terms), then brentq on the plain scalar L(d) - P written with math (bench_map's function; no
    project validation inside the iterations).

    Returns the loop's CPU time, that of its brentq part alone, and the largest relative depth difference.
    """
    from bench_map import plain_loss_minus_performance
    from scipy.optimize import brentq

    from subsurf.detection.budget import loss_terms
    from subsurf.detection.evaluate import soil_loss_terms
    from subsurf.ground import Soil
    from subsurf.site.feasibility import _clip_moisture

    rng = np.random.default_rng(7)
    flat = {k: v.ravel() for k, v in _clip_moisture(values, texture="loam").items()}
    idx = rng.choice(flat["moisture"].size, n_cells, replace=False)
    t = time.process_time()
    t_solve = 0.0
    depths = np.empty((len(antennas), n_cells))
    for j, i in enumerate(idx):
        soil = Soil(moisture=float(flat["moisture"][i]), pore_water_ec25=float(flat["pore_water_ec"][i]),
                    clay=float(flat["clay"][i]), texture="loam")
        for k, a in enumerate(antennas):
            fb = np.array([a.centre_freq_hz])  # the regional chain runs at the centre frequency (no band)
            eps, sigma = soil.electrical(fb)
            extra, surface = soil_loss_terms(soil, fb, eps)  # stones and rough surface, as the chain has them
            f = plain_loss_minus_performance(loss_terms(eps, sigma, fb, target, gain=a.gain,
                                                        extra_attenuation_np_per_m=extra,
                                                        surface_power_factor=surface), a.performance_db)
            ts = time.process_time()
            depths[k, j] = brentq(f, 1e-6, 1e4, xtol=1e-12, rtol=1e-12) if f(1e-6) < 0 else 0.0
            t_solve += time.process_time() - ts
    dt = time.process_time() - t
    ref = chain_out["max_depth"].reshape(len(antennas), -1)[:, idx]
    diff = float(np.max(np.abs(depths - ref) / np.maximum(ref, 1e-12)))
    return dt, t_solve, diff


def floor_time(antennas, chain_out):
    """One bare numpy pass: attenuation alpha (Np/m) from given eps' and sigma, same cells and antennas."""
    from scipy.constants import epsilon_0, mu_0

    eps_r = np.ascontiguousarray(chain_out["eps_real"])
    sigma = np.ascontiguousarray(chain_out["sigma"])
    omega = 2 * np.pi * np.array([a.centre_freq_hz for a in antennas]).reshape(-1, 1, 1)

    def run():
        tan = sigma / (omega * epsilon_0 * eps_r)
        return omega * np.sqrt(0.5 * mu_0 * epsilon_0 * eps_r * (np.sqrt(1.0 + tan * tan) - 1.0))

    return best_cpu_time(run, 5)[0]


def _peak_rss_mib(usage) -> float:
    """This process's peak resident memory (MiB): VmHWM of /proc/self/status on Linux.

    Not ``getrusage``'s ru_maxrss: Linux carries that high-water mark across fork and exec, so
    a child started from this benchmark's parent (which holds the 512² in-memory chain, about
    480 MiB) would report the parent's memory at the fork instead of its own.
    """
    try:
        with open("/proc/self/status") as fh:
            for line in fh:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024
    except OSError:
        pass
    return usage.ru_maxrss / 1024  # KiB -> MiB on Linux


def write_soil_file(n_side: int, chunk: int, path: str) -> None:
    """The synthetic region as a float32 CF NetCDF soil raster (chunked as the region is read), or, for a
    ``.tif`` path, as a tiled DEFLATE GeoTIFF written by rasterio window by window (bands described by name)."""
    from subsurf.io.regional import write_soil
    from subsurf.site.synthetic import synthetic_region

    soil = synthetic_region(n_side, n_side, seed=1, chunk=chunk)
    if not path.endswith(".tif"):
        write_soil(soil, path, force=True)
        return
    import rasterio
    from rasterio.transform import from_origin
    from rasterio.windows import Window

    x, y = soil["x"].values, soil["y"].values
    cell = float(x[1] - x[0])
    block = max(16, chunk // 16 * 16)
    with rasterio.open(path, "w", driver="GTiff", width=n_side, height=n_side, count=len(QUANTITIES),
                       dtype="float32", crs=soil["crs"].attrs["crs_wkt"], nodata=float("nan"),
                       transform=from_origin(x[0] - cell / 2, y[0] + cell / 2, cell, cell), tiled=True,
                       blockxsize=block, blockysize=block, compress="deflate", BIGTIFF="IF_SAFER") as dst:
        dst.units = tuple(soil[q].attrs["units"] for q in QUANTITIES)
        for i, q in enumerate(QUANTITIES, 1):
            dst.set_band_description(i, q)
            for r0 in range(0, n_side, chunk):
                for c0 in range(0, n_side, chunk):
                    win = Window(c0, r0, min(chunk, n_side - c0), min(chunk, n_side - r0))
                    tile = soil[q][r0:r0 + win.height, c0:c0 + win.width].values.astype("float32")
                    dst.write(tile, i, window=win)


def child(n_side: int, chunk: int, out: str, soil_path: str | None = None) -> None:
    """One chunked run in this (fresh) process; prints JSON.  With ``soil_path`` the soil is read from
    that NetCDF raster (``subsurf.site.regional.open_region``, as ``subsurf region --soil`` does)."""
    from subsurf.io.regional import write_region
    from subsurf.planning.antennas import load_catalogue, make_target
    from subsurf.site import regional as scale
    from subsurf.site.synthetic import synthetic_region

    antennas = list(load_catalogue().values())
    target = make_target("planar", depth_m=DEPTH, material="water_table")
    warm_soil = None
    if soil_path:
        warm_soil = soil_path + (".warm.tif" if soil_path.endswith(".tif") else ".warm.nc")
        write_soil_file(32, 32, warm_soil)

    def run(side, path):
        if soil_path:
            soil = scale.open_region(warm_soil if side == 32 else soil_path, chunk=chunk)
        else:
            soil = synthetic_region(side, side, seed=1, chunk=chunk)
        result = scale.feasibility_region(soil, antennas, target=target, target_depth_m=DEPTH, texture="loam")
        with scale.scheduler("threads") as sched:
            return write_region(result, path, force=True, batch=2 * sched["slots"])

    run(32, out)  # warm-up: imports and configuration files, not part of the timing
    r0 = resource.getrusage(resource.RUSAGE_SELF)
    t = time.perf_counter()
    summary = run(n_side, out)
    dt = time.perf_counter() - t
    r1 = resource.getrusage(resource.RUSAGE_SELF)
    cpu = (r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime)
    rss = _peak_rss_mib(r1)
    print(json.dumps({"cells": n_side * n_side, "seconds": dt, "cpu_seconds": cpu, "peak_rss_mib": rss,
                      "tiles": summary.tiles}))


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--base", type=int, default=512, help="side of the base region in cells (default 512)")
    ap.add_argument("--chunk", type=int, default=256, help="tile edge for the chunked runs (default 256)")
    ap.add_argument("--loop-cells", type=int, default=40, help="cells in the per-cell loop subsample")
    ap.add_argument("--factors", type=int, nargs="+", default=[1, 4, 16, 64],
                    help="sizes of the chunked runs, in multiples of the base area (default 1 4 16 64)")
    ap.add_argument("--from-file", action="store_true",
                    help="chunked runs also read the soil from a NetCDF raster (written first, in its own process)")
    ap.add_argument("--from-geotiff", action="store_true",
                    help="chunked runs also read the soil from a GeoTIFF (rasterio, tiled, DEFLATE) of the same region")
    ap.add_argument("--skip-chain", action="store_true", help="only the chunked runs (parts 4 and 5)")
    ap.add_argument("--child", nargs="+", metavar="ARG", help=argparse.SUPPRESS)
    ap.add_argument("--write-soil", nargs=3, metavar=("SIDE", "CHUNK", "OUT"), help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        child(int(args.child[0]), int(args.child[1]), args.child[2], *args.child[3:])
        return 0
    if args.write_soil:
        write_soil_file(int(args.write_soil[0]), int(args.write_soil[1]), args.write_soil[2])
        return 0

    print(f"machine: {machine()}; load average {os.getloadavg()[0]:.1f}")
    if not args.skip_chain:
        chain_parts(args)
    chunked_runs(args, from_file=False)
    if args.from_file:
        chunked_runs(args, from_file=True)
    if args.from_geotiff:
        chunked_runs(args, from_file=True, suffix=".tif")
    return 0


def chain_parts(args) -> None:
    antennas, target, values = setup(args.base)
    n = values["moisture"].size
    na = len(antennas)
    t_chain, out = chain_rate(antennas, target, values)
    rate = n / t_chain
    print(f"1. full chain (soil -> eps, sigma -> attenuation -> max depth and margin, {na} antennas), "
          f"one thread, in memory: {n:,} cells in {t_chain:.3f} s CPU = {rate:,.0f} cells/s "
          f"({rate * na:,.0f} cell-antennas/s)")
    t_loop, t_solve, diff = loop_rate(antennas, target, values, args.loop_cells, out)
    loop = args.loop_cells / t_loop
    print(f"2. per-cell loop (scalar Soil, loss terms once, plain brentq): {args.loop_cells} cells x {na} antennas "
          f"in {t_loop:.2f} s = {loop:,.1f} cells/s; chain / loop = {rate / loop:,.0f}x (target >= 1000x); "
          f"brentq alone {1e6 * t_solve / (args.loop_cells * na):.0f} us per solve, chain / brentq part = "
          f"{rate * t_solve / args.loop_cells:,.0f}x; largest relative depth difference {diff:.1e}")
    t_floor = floor_time(antennas, out)
    print(f"3. floor (bare numpy attenuation from eps', sigma; same {n:,} cells x {na} antennas): "
          f"{t_floor:.3f} s; chain / floor = {t_chain / t_floor:.1f}x (target <= 4x)")


def chunked_runs(args, *, from_file: bool, suffix: str = ".nc") -> None:
    part = ("6. from GeoTIFF" if suffix == ".tif" else "5. from file") if from_file else "4. chunked"
    runs = []
    with tempfile.TemporaryDirectory() as tmp:
        for factor in args.factors:
            side = int(round(args.base * factor ** 0.5))
            extra = []
            if from_file:
                soil = os.path.join(tmp, f"soil{factor}{suffix}")
                subprocess.run([sys.executable, __file__, "--write-soil", str(side), str(args.chunk), soil],
                               capture_output=True, text=True, check=True)
                extra = [soil]
            r = subprocess.run([sys.executable, __file__, "--child", str(side), str(args.chunk),
                                os.path.join(tmp, f"map{factor}.nc"), *extra], capture_output=True, text=True,
                               check=True)
            if from_file:
                os.remove(extra[0])
            res = json.loads(r.stdout.strip().splitlines()[-1])
            res["factor"] = factor
            runs.append(res)
            print(f"{part} {factor:>2}x: {side}x{side} = {res['cells']:,} cells, {res['tiles']} tiles of "
                  f"{args.chunk}, {res['seconds']:.1f} s wall ({res['cells'] / res['seconds']:,.0f} cells/s), "
                  f"{res['cpu_seconds']:.1f} s CPU, "
                  f"peak RSS {res['peak_rss_mib']:.0f} MiB")
    base = runs[0]
    mem = max(r["peak_rss_mib"] for r in runs) / base["peak_rss_mib"]
    growth = [(r["seconds"] / base["seconds"]) / (r["cells"] / base["cells"]) for r in runs[1:]]
    growth_cpu = [(r["cpu_seconds"] / base["cpu_seconds"]) / (r["cells"] / base["cells"]) for r in runs[1:]]
    print("   peak memory relative to 1x: " + ", ".join(f"{r['factor']}x: {r['peak_rss_mib'] / base['peak_rss_mib']:.3f}"
                                                         for r in runs[1:])
          + f" (largest / 1x = {mem:.3f}; target: 16x within 1.10)")
    print("   time per cell relative to 1x: " + ", ".join(f"{r['factor']}x: {g:.2f}" for r, g in
                                                         zip(runs[1:], growth)) + " wall; "
          + ", ".join(f"{r['factor']}x: {g:.2f}" for r, g in zip(runs[1:], growth_cpu)) + " CPU (target <= 1.10)")


if __name__ == "__main__":
    sys.exit(main())
