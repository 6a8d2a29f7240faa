"""End-to-end benchmark: `subsurf map` and `subsurf demo` (and start-up) of this tree against a
previous commit, side by side in one run.

    git worktree add /tmp/base bd22c8f          # the release before the speed work
    python benchmarks/bench_e2e.py --base /tmp/base [--runs 5]

Each command runs as a whole process, alternately from this tree and from the base tree
(A B A B ..., after one warm-up of each), with ``PYTHONPATH`` pointing at the tree's
package, the same Python and the same installed libraries.  Per run the operating system's
accounting of that one finished process is read with ``os.wait4``: user + system CPU,
wall time and peak resident memory (ru_maxrss).  Printed: medians and the median of the
pairwise ratios A/B (pairs taken in turn, so a drift of the shared machine's speed
cancels).  Outputs go to temporary folders.  Not part of the test suite.
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent.parent


def run_once(tree: Path, args: list[str], cwd: str) -> dict:
    env = dict(os.environ, PYTHONPATH=str(tree), MPLBACKEND="Agg")
    t = time.perf_counter()
    proc = subprocess.Popen([sys.executable, *args], cwd=cwd, env=env, stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE)
    _, status, ru = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t
    proc.returncode = os.waitstatus_to_exitcode(status)
    err = proc.stderr.read().decode(errors="replace") if proc.stderr else ""
    if proc.returncode != 0:
        raise SystemExit(f"{tree}: {' '.join(args)} failed ({proc.returncode}): {err[-500:]}")
    return {"cpu": ru.ru_utime + ru.ru_stime, "wall": wall, "rss": ru.ru_maxrss / 1024}


def compare(name: str, a_tree: Path, b_tree: Path, make_args, runs: int) -> dict:
    with tempfile.TemporaryDirectory() as tmp:
        res = {"A": [], "B": []}
        for i in range(runs + 1):
            for key, tree in (("A", a_tree), ("B", b_tree)):
                r = run_once(tree, make_args(tree, Path(tmp) / f"{key}{i}"), tmp)
                if i:  # the first round is the warm-up
                    res[key].append(r)
    out = {}
    for fig in ("cpu", "wall", "rss"):
        a = [r[fig] for r in res["A"]]
        b = [r[fig] for r in res["B"]]
        out[fig] = (statistics.median(a), statistics.median(b),
                    statistics.median([x / y for x, y in zip(a, b)]), min(a), max(a), min(b), max(b))
    print(f"{name}:")
    for fig, unit in (("wall", "s"), ("cpu", "s"), ("rss", "MiB")):
        ma, mb, ratio, a0, a1, b0, b1 = out[fig]
        label = {"wall": "wall", "cpu": "CPU ", "rss": "peak RSS"}[fig]
        print(f"   {label:8s} this {ma:8.2f} {unit:3s} ({a0:.2f}-{a1:.2f})   base {mb:8.2f} {unit:3s} "
              f"({b0:.2f}-{b1:.2f})   this/base {ratio:.2f}")
    return out


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--base", required=True, type=Path, help="source tree of the commit to compare with")
    ap.add_argument("--runs", type=int, default=5, help="counted runs of each command (default 5)")
    ap.add_argument("--only", choices=["startup", "map", "demo"], action="append",
                    help="run only these comparisons (repeatable)")
    args = ap.parse_args()
    base = args.base.resolve()
    only = set(args.only or ["startup", "map", "demo"])
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, load average "
          f"{os.getloadavg()[0]:.1f}; Python {platform.python_version()}")
    print(f"this tree: {HERE} (git {_rev(HERE)}); base: {base} (git {_rev(base)}); "
          f"{args.runs} counted runs each, alternating, after one warm-up")

    def survey(tree):
        return str(tree / "surveys" / "example-site" / "survey.toml")

    if "startup" in only:
        numpy_cpu = []
        with tempfile.TemporaryDirectory() as tmp:
            for i in range(args.runs + 1):
                r = run_once(HERE, ["-c", "import numpy"], tmp)
                if i:
                    numpy_cpu.append(r["cpu"])
        ref = statistics.median(numpy_cpu)
        print(f"python -c 'import numpy': CPU {ref:.3f} s (median)")
        for name, cmd in (("subsurf --help", ["-m", "subsurf", "--help"]),
                          ("subsurf medium --eps 9 --sigma 0.01", ["-m", "subsurf", "medium", "--eps", "9",
                                                                   "--sigma", "0.01"])):
            out = compare(name, HERE, base, lambda tree, out, cmd=cmd: cmd, args.runs)
            print(f"   CPU / import numpy: this {out['cpu'][0] / ref:.2f}, base {out['cpu'][1] / ref:.2f} "
                  "(target <= 2)")
    if "map" in only:
        compare("subsurf map (bundled example, 4 antennas x 2 scenarios, 200 draws)", HERE, base,
                lambda tree, out: ["-m", "subsurf", "map", survey(tree), "--out", str(out), "--quiet"],
                args.runs)
    if "demo" in only:
        compare("subsurf demo", HERE, base,
                lambda tree, out: ["-m", "subsurf", "demo", "--out", str(out), "--quiet"], args.runs)
    return 0


def _rev(tree: Path) -> str:
    try:
        return subprocess.run(["git", "-C", str(tree), "rev-parse", "--short", "HEAD"], capture_output=True,
                              text=True, check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return "?"


if __name__ == "__main__":
    sys.exit(main())
