"""Public maximum-depth function against a bare numpy attenuation pass over the same cells, in one run.

    python benchmarks/bench_maxdepth.py [--cells 1000000] [--repeat 7]

Not part of the test suite.  ``subsurf.propagation.max_detectable_depth`` (validation, α and λ,
the planar loss terms, the Lambert W solve) is timed against the floor a user would compare it
with: one numpy pass computing only α = Re √(jωμ₀(σ + jωε₀ε')) with numpy's complex square
root, written here, over the same cells (random ε' 3-30, σ 1e-4-0.1 S/m, one frequency).
CPU time, best of ``--repeat``, the two measured alternately; the script also prints the
depth the old path (full ``wave_properties``) gives and the largest relative difference.
Issue 16's goal: max-depth / floor ≤ 3.
"""

from __future__ import annotations

import argparse
import os
import platform
import time

import numpy as np
from scipy import constants

EPS0, MU0 = constants.epsilon_0, constants.mu_0


def bare_alpha(eps, sigma, freq_hz):
    """The floor: α from the complex square root of the lossy-medium γ², nothing else."""
    omega = 2.0 * np.pi * freq_hz
    return np.sqrt(1j * omega * MU0 * (sigma + 1j * omega * EPS0 * eps)).real


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=int, default=1_000_000)
    ap.add_argument("--repeat", type=int, default=7)
    ap.add_argument("--freq", type=float, default=250e6)
    ap.add_argument("--performance", type=float, default=150.0)
    args = ap.parse_args()

    from subsurf.detection import solver
    from subsurf.propagation import max_detectable_depth, wave_properties

    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()}, "
          f"numpy {np.__version__}; load average {os.getloadavg()[0]:.1f}")
    rng = np.random.default_rng(16)
    eps = rng.uniform(3.0, 30.0, args.cells)
    sig = 10.0 ** rng.uniform(-4.0, -1.0, args.cells)
    f, perf = args.freq, args.performance

    def run_public():
        return max_detectable_depth(eps, sig, f, perf, reflection=0.5, gain=1.5)

    def run_floor():
        return bare_alpha(eps, sig, f)

    def run_old():  # the path before: the whole WaveProperties, then the same terms and solver
        w = wave_properties(eps, sig, f)
        k0 = -10.0 * np.log10(1.5**2 * w.wavelength**2 * 0.5**2 / ((4 * np.pi) ** 2 * 4.0))
        return solver.depth_from_loss_terms(k0, 2.0, w.alpha, perf)

    best = {"public": np.inf, "floor": np.inf, "old": np.inf}
    fns = {"public": run_public, "floor": run_floor, "old": run_old}
    for fn in fns.values():  # warm-up
        fn()
    for _ in range(args.repeat):
        for name, fn in fns.items():
            t0 = time.process_time()
            fn()
            best[name] = min(best[name], time.process_time() - t0)

    d_new, d_old = run_public(), run_old()
    a_floor = run_floor()
    a_lib = wave_properties(eps, sig, f).alpha
    rel = float(np.max(np.abs(d_new - d_old) / d_old))
    print(f"cells: {args.cells:,} (eps' 3-30, sigma 1e-4-0.1 S/m, {f / 1e6:.0f} MHz); CPU time, best of "
          f"{args.repeat}")
    print(f"floor (bare numpy complex-sqrt alpha):       {best['floor'] * 1e3:8.1f} ms")
    print(f"max_detectable_depth (public):               {best['public'] * 1e3:8.1f} ms   "
          f"/ floor = {best['public'] / best['floor']:.2f}x (target <= 3x)")
    print(f"old path (full wave_properties + solver):    {best['old'] * 1e3:8.1f} ms   "
          f"/ floor = {best['old'] / best['floor']:.2f}x; old / public = {best['old'] / best['public']:.2f}x")
    print(f"largest relative depth difference public vs old path: {rel:.1e}; "
          f"alpha vs floor's alpha: {float(np.max(np.abs(a_lib - a_floor) / a_floor)):.1e}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
