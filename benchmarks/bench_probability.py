"""Reach-probability benchmark: cost and accuracy of each estimator on the bundled example site.

    python benchmarks/bench_probability.py [--reference-draws 6400] [--base /tmp/base]

For each scenario of surveys/example-site (3482 cells inside the site, 4 antennas, moisture,
pore-water EC and temperature uncertain), in one run:

1. a reference: plain seeded Monte Carlo with ``--reference-draws`` draws, written out here
   (draw, clip to the accepted ranges and below the porosity, count margin >= 0 from the
   public chain), independent of subsurf.site.probability;
2. CPU time (best of 3) and error against the reference (largest, 99th percentile and
   root-mean-square |p - p_ref| over cells x antennas) of subsurf.site.probability's
   ``auto`` (default), ``linearised`` and ``sampling`` (200 draws) methods;
3. with ``--base TREE``, the CPU time of that tree's own ``reach_probability`` (200 draws) on
   the same survey, in a subprocess with PYTHONPATH=TREE (timing only: its physics may
   differ from this tree's).

The reference's own standard error (at most 0.5/sqrt(N)) sets the floor of the measurable
error.  Not part of the test suite.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent.parent


def load(tree: Path):
    """Survey inputs on the grid, antennas, target, for this package layout or the pre-layer one."""
    try:
        from subsurf.planning.antennas import get_antenna, load_catalogue, make_target
        from subsurf.site import feasibility as fz
        from subsurf.site.grid import build_grid, soil_on_grid
        from subsurf.site.survey import load_survey
    except ImportError:  # the flat layout before the layers (bd22c8f)
        from subsurf.antennas import get_antenna, load_catalogue, make_target
        from subsurf.grid import build_grid, soil_on_grid
        from subsurf.survey import load_survey

        from subsurf import feasibility as fz
    survey = load_survey(tree / "surveys" / "example-site" / "survey.toml")
    cat = load_catalogue()
    ants = [get_antenna(n, cat) for n in survey.antennas]
    t = survey.target
    target = make_target(t.kind, depth_m=t.depth_m, size_m=t.size_m, material=t.material)
    soil = soil_on_grid(survey, build_grid(survey, n_layers=96))
    base = {q: soil[q].values for q in fz.SOIL_FIELDS if q in soil}
    sds = {q: soil[q + "_sd"].values for q in base}
    return survey, fz, ants, target, base, sds


def best_cpu(fn, repeat=3):
    best, out = np.inf, None
    for _ in range(repeat):
        t = time.process_time()
        out = fn()
        best = min(best, time.process_time() - t)
    return best, out


def reference(fz, vals, sds, ants, *, target, depth, texture, model, draws, seed):
    """Plain Monte Carlo (see the module docstring), batches of 200 draws."""
    from subsurf.site.survey import QUANTITIES

    rng = np.random.default_rng(seed)
    freq, perf, gain, _ = fz._antenna_axes(ants, 2)
    ok = np.isfinite(vals["moisture"])
    flat = {k: v[ok] for k, v in vals.items()}
    sd = {k: np.nan_to_num(v[ok]) for k, v in sds.items() if k in flat and np.any(v[ok] > 0)}
    n = ok.sum()
    hits = np.zeros((len(ants), n))
    per = 200
    for _ in range(draws // per):
        d = {}
        for k, v in flat.items():
            x = v[None, :] + (sd[k][None, :] * rng.standard_normal((per, n)) if k in sd else 0.0)
            d[k] = np.clip(np.broadcast_to(x, (per, n)), QUANTITIES[k].low, QUANTITIES[k].high)
        d = fz._clip_moisture(d, texture=texture)
        m = fz.feasibility_chain(freq_hz=freq, performance_db=perf, gain=gain, target=target, target_depth_m=depth,
                                 texture=texture, model=model, margin_only=True, **fz._chain_kwargs(d))["margin_db"]
        hits += np.sum(m >= 0, axis=1)
    return hits / (draws // per * per), ok


def child(out: str) -> None:
    """In the base tree's process: time its reach_probability (200 draws) per scenario."""
    survey, fz, ants, target, base, sds = load(Path(os.environ["PYTHONPATH"]))
    times = {}
    for sc in survey.scenarios:
        vals = fz.apply_scenario(base, sc)
        times[sc.name] = best_cpu(lambda vals=vals: fz.reach_probability(
            vals, sds, ants, target=target, target_depth_m=survey.target.depth_m, draws=200, seed=survey.seed,
            texture=survey.texture, model=survey.soil_model))[0]
    Path(out).write_text(json.dumps(times))


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--reference-draws", type=int, default=6400)
    ap.add_argument("--base", type=Path, help="source tree of an earlier commit to time its estimator")
    ap.add_argument("--child", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        child(args.child)
        return 0
    from subsurf.site import probability as pr

    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f}; "
          f"Python {platform.python_version()}, numpy {np.__version__}")
    base_times = {}
    if args.base:
        out = Path(f"/tmp/bench_probability_base_{os.getpid()}.json")
        env = dict(os.environ, PYTHONPATH=str(args.base.resolve()))
        subprocess.run([sys.executable, __file__, "--child", str(out)], env=env, check=True)
        base_times = json.loads(out.read_text())
        out.unlink()
    survey, fz, ants, target, base, sds = load(HERE)
    depth, texture, model = survey.target.depth_m, survey.texture, survey.soil_model
    for sc in survey.scenarios:
        vals = fz.apply_scenario(base, sc)
        ref, ok = reference(fz, vals, sds, ants, target=target, depth=depth, texture=texture, model=model,
                            draws=args.reference_draws, seed=12345)
        print(f"\nscenario {sc.name}: {ok.sum()} cells x {len(ants)} antennas; reference {args.reference_draws} "
              f"draws (standard error <= {0.5 / np.sqrt(args.reference_draws):.4f})")
        rows = {}
        for method, draws in (("auto", 200), ("linearised", 200), ("sampling", 200)):
            t, r = best_cpu(lambda method=method, draws=draws, vals=vals: pr.reach_probability(
                vals, sds, ants, target=target, target_depth_m=depth, draws=draws, seed=survey.seed,
                texture=texture, model=model, method=method))
            d = np.abs(r.probability[:, ok] - ref)
            rows[method] = t
            print(f"   {method:10s} ({'200 draws where sampled' if method != 'linearised' else 'no sampling'}): "
                  f"CPU {t:.3f} s; |p - p_ref| max {d.max():.3f}, 99th pct {np.quantile(d, 0.99):.3f}, "
                  f"RMS {np.sqrt(np.mean(d**2)):.4f}; sampled {100 * r.sampled_fraction:.1f} % of cells; "
                  f"chain evaluations {r.chain_cells:,}")
        line = f"   cost: sampling-200 / auto = {rows['sampling'] / rows['auto']:.1f}x"
        if sc.name in base_times:
            line += (f"; base tree's 200 draws {base_times[sc.name]:.3f} s CPU, base / auto = "
                     f"{base_times[sc.name] / rows['auto']:.1f}x (target >= 5x)")
        print(line)
    return 0


if __name__ == "__main__":
    sys.exit(main())
