"""Reach-probability benchmark: cost and accuracy of each estimator on the bundled example site.

    python benchmarks/bench_probability.py [--reference-draws 6400] [--step 1] [--base /tmp/base]

For each scenario of surveys/example-site (3482 cells inside the site, 4 antennas, moisture,
pore-water EC and temperature uncertain), in one run:

1. a reference: plain seeded Monte Carlo with ``--reference-draws`` draws, written out here
   (truncated normals and log-normals drawn with scipy.stats, counting margin >= the 6 dB
   reach threshold below the blind zone from the public chain), independent of
   subsurf.site.probability;
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
    """Plain Monte Carlo of the map's definition of reaching (see the module docstring), batches of 200 draws.

    Each uncertain quantity per cell from the distribution the map states: pore-water EC and salinity
    log-normal with the given mean and sd (scipy.stats.lognorm, σ_ln² = ln(1 + sd²/mean²)), the others
    normal truncated to the accepted range (scipy.stats.truncnorm), moisture also below 0.995 of the
    porosity; reached where margin >= the reach threshold and the target is below the blind zone, from
    the public chain with the antennas' band, separation and pulse length.
    """
    from scipy.stats import lognorm, truncnorm

    from subsurf.detection.verdicts import REACHES_MARGIN_DB
    from subsurf.site.survey import QUANTITIES

    rng = np.random.default_rng(seed)
    ant = fz._antenna_chain_kwargs(ants, 2)
    ok = np.isfinite(vals["moisture"])
    flat = {k: v[ok] for k, v in vals.items()}
    sd = {k: np.nan_to_num(v[ok]) for k, v in sds.items() if k in flat}
    n = ok.sum()
    hi_m = fz._clip_moisture({"moisture": np.full(n, 1.0)}, texture=texture)["moisture"]  # 0.995 x porosity
    hits = np.zeros((len(ants), n))
    per = 200
    for _ in range(draws // per):
        d = {}
        for k, v in flat.items():
            lo, hi = QUANTITIES[k].low, np.full(n, QUANTITIES[k].high)
            if k == "moisture":
                hi = np.minimum(hi, hi_m)
            s = sd.get(k, np.zeros(n))
            x = np.broadcast_to(v[None, :], (per, n)).copy()
            on = s > 0
            if k in ("pore_water_ec", "salinity") and np.any(on):
                s_ln = np.sqrt(np.log1p((s[on] / v[on]) ** 2))
                x[:, on] = lognorm.rvs(s_ln, scale=v[on] * np.exp(-s_ln**2 / 2), size=(per, on.sum()),
                                       random_state=rng)
            elif np.any(on):
                a, b = (lo - v[on]) / s[on], (hi[on] - v[on]) / s[on]
                x[:, on] = truncnorm.rvs(a, b, loc=v[on], scale=s[on], size=(per, on.sum()), random_state=rng)
            d[k] = np.clip(x, lo, hi)
        out = fz.feasibility_chain(**ant, target=target, target_depth_m=depth, texture=texture, model=model,
                                   margin_only=True, **fz._chain_kwargs(d))
        hits += np.sum((out["margin_db"] >= REACHES_MARGIN_DB) & ~out["too_shallow"], axis=1)
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
    ap.add_argument("--step", type=int, default=1, help="every STEP-th cell of the site only (default 1: all)")
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
        if args.step > 1:  # every step-th cell of the site, the others without data
            keep = np.zeros(vals["moisture"].size, bool)
            keep[np.flatnonzero(np.isfinite(vals["moisture"]).ravel())[::args.step]] = True
            vals = {k: np.where(keep.reshape(v.shape), v, np.nan) for k, v in vals.items()}
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
            ref_se = np.sqrt(np.maximum(ref * (1 - ref), 1 / args.reference_draws) / args.reference_draws)
            covered = np.mean(d <= 2 * r.error[:, ok] + 3 * ref_se)
            rows[method] = t
            print(f"   {method:10s} ({'200 draws where sampled' if method != 'linearised' else 'no sampling'}): "
                  f"CPU {t:.3f} s; |p - p_ref| max {d.max():.3f}, 99th pct {np.quantile(d, 0.99):.3f}, "
                  f"RMS {np.sqrt(np.mean(d**2)):.4f}; sampled {100 * r.sampled_fraction:.1f} % of cells; "
                  f"chain evaluations {r.chain_cells:,}; |p - p_ref| <= 2 x reported error + 3 x reference se "
                  f"in {100 * covered:.1f} %")
        line = f"   cost: sampling-200 / auto = {rows['sampling'] / rows['auto']:.1f}x"
        if sc.name in base_times:
            line += (f"; base tree's 200 draws {base_times[sc.name]:.3f} s CPU, base / auto = "
                     f"{base_times[sc.name] / rows['auto']:.1f}x (target >= 5x)")
        print(line)
    return 0


if __name__ == "__main__":
    sys.exit(main())
