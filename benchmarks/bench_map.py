"""Map throughput (cells x antennas per second) against a per-cell scalar loop.

Run:  python benchmarks/bench_map.py [--cells 40000] [--loop-cells 150]

The vectorised path is subsurf.feasibility.evaluate (the whole chain: soil -> eps,
sigma -> wave properties -> maximum depth, margin, resolution) on a random soil grid.
The reference is the straightforward loop a first version would write: for every cell
and antenna, build a scalar Soil, get (eps, sigma) at the antenna's band frequencies, build
the band loss terms and solve L(d) = P for the maximum depth with scipy.optimize.brentq.  The loop runs on a subset of cells and its rate is
extrapolated (it is linear in the number of cells).  Both sides are checked to agree.
"""

from __future__ import annotations

import argparse
import os
import platform
import time

import numpy as np
from scipy.optimize import brentq

import subsurf.detection as detection
from subsurf.ground import Soil
from subsurf.planning.antennas import get_antenna, make_target
from subsurf.site.feasibility import evaluate

ANTENNAS = ["lowband-100", "midband-250", "midband-500", "highband-1000"]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--cells", type=int, default=40_000)
    ap.add_argument("--loop-cells", type=int, default=150)
    args = ap.parse_args()
    rng = np.random.default_rng(1)
    n = args.cells
    side = int(np.sqrt(n))
    shape = (side, n // side)
    vals = {"moisture": rng.uniform(0.06, 0.3, shape), "pore_water_ec": rng.uniform(0.005, 0.08, shape),
            "temperature": rng.uniform(5, 20, shape)}
    ants = [get_antenna(a) for a in ANTENNAS]
    target = make_target("line", depth_m=1.2, size_m=0.15, material="metal")
    t0 = time.perf_counter()
    out = evaluate(vals, ants, target=target, target_depth_m=1.2, texture="loamy_sand")
    t_vec = time.perf_counter() - t0
    ncell = shape[0] * shape[1]
    rate_vec = ncell * len(ants) / t_vec

    flat = {k: v.ravel() for k, v in vals.items()}
    idx = rng.choice(ncell, args.loop_cells, replace=False)
    t0 = time.perf_counter()
    worst = 0.0
    for i in idx:
        soil = Soil(moisture=float(flat["moisture"][i]), pore_water_ec25=float(flat["pore_water_ec"][i]),
                    temp_c=float(flat["temperature"][i]), texture="loamy_sand")
        for k, a in enumerate(ants):
            fb, wb = detection.band_nodes(a.centre_freq_hz, a.bandwidth_hz)
            eps, sig = soil.electrical(fb)
            terms = detection.loss_terms(eps, sig, fb, target, weights=wb, separation_m=a.separation_m)

            def f(d, terms=terms, a=a):
                return float(detection.two_way_loss_db(d, terms=terms)) - a.effective_performance_db

            d = brentq(f, 1e-4, 200.0, xtol=1e-9) if f(1e-4) < 0 else 0.0
            worst = max(worst, abs(d - out["max_depth"][k].ravel()[i]) / max(d, 1e-9))
    t_loop = time.perf_counter() - t0
    rate_loop = len(idx) * len(ants) / t_loop
    print(f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
          f"Python {platform.python_version()}, numpy {np.__version__}")
    print(f"vectorised chain: {ncell} cells x {len(ants)} antennas in {t_vec:.2f} s = {rate_vec:,.0f} cell-antennas/s")
    print(f"per-cell loop + brentq: {len(idx)} cells x {len(ants)} antennas in {t_loop:.2f} s "
          f"= {rate_loop:,.0f} cell-antennas/s")
    print(f"speed-up: {rate_vec / rate_loop:,.0f}x   (largest relative depth difference {worst:.1e})")


if __name__ == "__main__":
    main()
