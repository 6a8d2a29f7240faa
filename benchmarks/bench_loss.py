"""Cost of the loss physics in the map chain: soil -> (eps, sigma) and the whole chain, interface term on vs off.

Run:  python benchmarks/bench_loss.py

1. Soil -> (ε, σ) for 40,000 cells x 4 centre frequencies (the soil part of the map chain,
   the part the loss work changed), best of 25.  To compare with an older checkout, run the
   same script with that checkout first on PYTHONPATH (the script only uses Soil there).
2. feasibility.evaluate (the bench_map.py set-up) with the bound-water / clay-water interface
   term on and off, alternating in one process, best of 3; ratio on/off.
"""

from __future__ import annotations

import time

import numpy as np

from subsurf.ground import Soil


def soil_part(shape=(200, 200), repeats=25):
    rng = np.random.default_rng(1)
    m, ec, t = rng.uniform(0.06, 0.3, shape), rng.uniform(0.005, 0.08, shape), rng.uniform(5, 20, shape)
    f = np.array([100e6, 250e6, 500e6, 1000e6]).reshape(-1, 1, 1)
    best = np.inf
    for _ in range(repeats):
        t0 = time.perf_counter()
        Soil(moisture=m, pore_water_ec25=ec, temp_c=t, texture="loamy_sand").electrical(f)
        best = min(best, time.perf_counter() - t0)
    n = shape[0] * shape[1] * f.size
    print(f"1. soil -> (eps, sigma): {n:,} cell-antennas in {best * 1e3:.1f} ms (best of {repeats}) "
          f"= {n / best:,.0f} cell-antennas/s")


def chain_on_off(shape=(200, 200), repeats=3):
    try:
        import subsurf.ground.losses as losses
        import subsurf.ground.models as models
    except ImportError:  # an older checkout without the loss physics
        return
    from subsurf.planning.antennas import get_antenna, make_target
    from subsurf.site.feasibility import evaluate

    original = losses.resolve_loss_facts

    def without_interface(soil, preset, r):
        original(soil, preset, r)
        r["interface_chi"] = None

    rng = np.random.default_rng(1)
    vals = {"moisture": rng.uniform(0.06, 0.3, shape), "pore_water_ec": rng.uniform(0.005, 0.08, shape),
            "temperature": rng.uniform(5, 20, shape)}
    ants = [get_antenna(a) for a in ["lowband-100", "midband-250", "midband-500", "highband-1000"]]
    target = make_target("line", depth_m=1.2, size_m=0.15, material="metal")
    times = {"on": [], "off": []}
    for _ in range(repeats):
        for mode in ("on", "off"):
            models.resolve_loss_facts = original if mode == "on" else without_interface
            t0 = time.perf_counter()
            evaluate(vals, ants, target=target, target_depth_m=1.2, texture="loamy_sand")
            times[mode].append(time.perf_counter() - t0)
    models.resolve_loss_facts = original
    on, off = min(times["on"]), min(times["off"])
    print(f"2. map chain, {shape[0] * shape[1]:,} cells x 4 antennas: interface term on {on:.2f} s, "
          f"off {off:.2f} s (best of {repeats}); on/off = {on / off:.3f}")


if __name__ == "__main__":
    soil_part()
    chain_on_off()
