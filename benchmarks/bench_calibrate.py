"""Speed of `calibrate_profile` on a 2,000-trace × 1,024-sample profile (issue: well under a few seconds).

    python benchmarks/bench_calibrate.py [--traces 2000] [--samples 1024] [--repeat 3]

The profile is the fictional constant-Q synthetic of surveys/calibration/make_example.py
(invented data).  Reports the best of --repeat runs of the whole measurement (envelope,
time zero, noise floor, penetration, decay fit, short-time spectra and Q*), and, in the
same run, the time of one trace-by-trace Python loop over the envelope alone, the part a
straightforward implementation would loop over.
"""

from __future__ import annotations

import argparse
import importlib.util
import platform
import time
from pathlib import Path

import numpy as np


def _example():
    path = Path(__file__).resolve().parents[1] / "surveys" / "calibration" / "make_example.py"
    spec = importlib.util.spec_from_file_location("make_example", path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--traces", type=int, default=2000)
    ap.add_argument("--samples", type=int, default=1024)
    ap.add_argument("--repeat", type=int, default=3)
    a = ap.parse_args()
    from scipy.signal import hilbert

    from subsurf.interpretation.site_calibration import calibrate_profile
    from subsurf.interpretation.trace_profile import TraceProfile

    traces, dt, t0 = _example().synthetic_profile(n_traces=a.traces, n_samples=a.samples)
    prof = TraceProfile(traces, dt, t0)
    print(f"machine: {platform.machine()}, {__import__('os').cpu_count()} cores, Python {platform.python_version()}, "
          f"numpy {np.__version__}")
    best = np.inf
    for _ in range(a.repeat):
        start = time.perf_counter()
        cal = calibrate_profile(prof, centre_freq_hz=250e6, separation_m=0.28, velocity=0.1e9)
        best = min(best, time.perf_counter() - start)
    print(f"calibrate_profile: {a.traces} traces x {a.samples} samples in {best:.3f} s (best of {a.repeat}); "
          f"alpha {cal.attenuation_db_per_m:.3g} dB/m, penetration {cal.penetration_m:.3g} m, "
          f"Q* {cal.q_star.value if cal.q_star else None}")
    start = time.perf_counter()
    for tr in traces:
        np.abs(hilbert(tr - tr.mean(), N=2 * a.samples)) ** 2
    loop = time.perf_counter() - start
    print(f"per-trace envelope loop alone: {loop:.3f} s")


if __name__ == "__main__":
    main()
