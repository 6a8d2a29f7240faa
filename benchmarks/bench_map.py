"""Map throughput (cells x antennas per second) against a per-cell scalar loop.

Run:  python benchmarks/bench_map.py [--cells 40000] [--loop-cells 150]

The vectorised path is subsurf.feasibility.evaluate (the whole chain: soil -> eps,
sigma -> wave properties -> maximum depth, margin, resolution) on a random soil grid.
The reference is the loop a careful practitioner would write: for every cell a scalar Soil;
per antenna its (eps, sigma) at the band frequencies and the band loss terms (K0_i, alpha_i,
weights w_i, spreading p, geometry) once, from the project (subsurf.detection.loss_terms);
then scipy.optimize.brentq on the plain scalar function written with math,

    L(d) - P = 10 p log10 r - 10 log10 sum_i w_i 10^(-K0_i/10) exp(-4 alpha_i r) - P,
    r = sqrt((d + s)^2 + h^2),

with no project validation inside the root finder's iterations.  The loop runs on a subset
of cells and its rate is extrapolated (it is linear in the number of cells); the time of
its root-finding part alone is printed too.  Both sides are checked to agree.
"""

from __future__ import annotations

import argparse
import math
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


def plain_loss_minus_performance(terms, performance_db):
    """L(d) - P of one cell and antenna as a plain scalar function of d (math only, log-sum-exp)."""
    k0 = [float(x) for x in np.ravel(terms.k0_db)]
    alpha = [float(x) for x in np.ravel(terms.alpha)]
    logw = [math.log(float(w)) if w > 0 else -math.inf for w in np.ravel(terms.weights)]
    p = float(terms.p)
    h = float(np.ravel(terms.half_separation_m)[0])
    s = float(np.ravel(terms.shift_m)[0])
    perf = float(performance_db)
    c = math.log(10.0) / 10.0

    def f(d):
        r = math.sqrt((d + s) ** 2 + h * h)
        e = [lw - k * c - 4.0 * a * r for lw, k, a in zip(logw, k0, alpha)]
        m = max(e)
        lse = m + math.log(sum(math.exp(x - m) for x in e)) if m > -math.inf else -math.inf
        return 10.0 * p * math.log10(r) - lse / c - perf

    return f


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
    t_solve = 0.0
    worst = 0.0
    for i in idx:
        soil = Soil(moisture=float(flat["moisture"][i]), pore_water_ec25=float(flat["pore_water_ec"][i]),
                    temp_c=float(flat["temperature"][i]), texture="loamy_sand")
        for k, a in enumerate(ants):
            fb, wb = detection.band_nodes(a.centre_freq_hz, a.bandwidth_hz)
            eps, sig = soil.electrical(fb)
            extra, surface = detection.soil_loss_terms(soil, fb, eps)
            terms = detection.loss_terms(eps, sig, fb, target, weights=wb, separation_m=a.separation_m,
                                         extra_attenuation_np_per_m=extra, surface_power_factor=surface)

            f = plain_loss_minus_performance(terms, a.effective_performance_db)
            ts = time.perf_counter()
            d = brentq(f, 1e-4, 200.0, xtol=1e-9) if f(1e-4) < 0 else 0.0
            t_solve += time.perf_counter() - ts
            worst = max(worst, abs(d - out["max_depth"][k].ravel()[i]) / max(d, 1e-9))
    t_loop = time.perf_counter() - t0
    rate_loop = len(idx) * len(ants) / t_loop
    print(f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
          f"Python {platform.python_version()}, numpy {np.__version__}")
    print(f"vectorised chain: {ncell} cells x {len(ants)} antennas in {t_vec:.2f} s = {rate_vec:,.0f} cell-antennas/s")
    print(f"per-cell loop (scalar Soil, band loss terms once, plain brentq): {len(idx)} cells x {len(ants)} "
          f"antennas in {t_loop:.2f} s = {rate_loop:,.0f} cell-antennas/s; of which brentq "
          f"{1e6 * t_solve / (len(idx) * len(ants)):.0f} us per solve")
    print(f"speed-up: {rate_vec / rate_loop:,.0f}x over the whole loop; "
          f"{rate_vec * t_solve / (len(idx) * len(ants)):,.0f}x over its brentq part alone "
          f"(largest relative depth difference {worst:.1e})")


if __name__ == "__main__":
    main()
