"""End-to-end benchmark: `subsurf map` and `subsurf demo` (and start-up) of this tree against a
previous commit, side by side in one run.

    git worktree add /tmp/base bd22c8f          # the release before the speed work
    python benchmarks/bench_e2e.py --base /tmp/base [--runs 5] [--tree-memory]

Each command runs as a whole process, alternately from this tree and from the base tree
(A B A B ..., after one warm-up of each), with ``PYTHONPATH`` pointing at the tree's
package, the same Python and the same installed libraries.  Per run the operating system's
accounting of that one finished process is read with ``os.wait4``: user + system CPU (its
own and that of the child processes it waited for, e.g. the figure processes of
:mod:`subsurf.io.png_split`), wall time and peak resident memory (ru_maxrss: the largest of the
process and its waited-for children, not their sum).  ``--tree-memory`` adds, in extra untimed
runs, the peak of the summed PSS of the whole process tree.  Printed: medians and the median of the
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


#: extra environment of the base runs (``--base-env``), e.g. this same tree with its figures in one process
BASE_ENV: dict[str, str] = {}


def _env(tree: Path, base: bool) -> dict:
    env = dict(os.environ, PYTHONPATH=str(tree), MPLBACKEND="Agg")
    env.pop("SUBSURF_RENDER_PROCESSES", None)
    return {**env, **BASE_ENV} if base else env


def run_once(tree: Path, args: list[str], cwd: str, *, base: bool = False) -> dict:
    env = _env(tree, base)
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


def _tree(pid: int) -> list[int]:
    """pid and every descendant (Linux /proc)."""
    out, todo = [], [pid]
    while todo:
        p = todo.pop()
        out.append(p)
        try:
            for task in os.listdir(f"/proc/{p}/task"):
                with open(f"/proc/{p}/task/{task}/children") as f:
                    todo.extend(int(c) for c in f.read().split())
        except OSError:
            pass
    return out


def _pss_mib(pid: int) -> float:
    try:
        with open(f"/proc/{pid}/smaps_rollup") as f:
            for line in f:
                if line.startswith("Pss:"):
                    return int(line.split()[1]) / 1024
    except OSError:
        pass
    return 0.0


def tree_memory_once(tree: Path, args: list[str], cwd: str, every_s: float = 0.02, *,
                     base: bool = False) -> tuple[float, int]:
    """Peak over time of the summed proportional set size (PSS) of the command and its descendants.

    PSS shares each page among the processes that map it, so pages a forked process still shares
    with its parent count once in the sum.  Sampled every ``every_s`` (not in the timed runs: reading
    the page tables costs CPU); returns (peak MiB, most processes seen at once).
    """
    proc = subprocess.Popen([sys.executable, *args], cwd=cwd, env=_env(tree, base), stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL)
    peak, most = 0.0, 1
    while proc.poll() is None:
        pids = _tree(proc.pid)
        peak = max(peak, sum(_pss_mib(p) for p in pids))
        most = max(most, len(pids))
        time.sleep(every_s)
    if proc.returncode != 0:
        raise SystemExit(f"{tree}: {' '.join(args)} failed ({proc.returncode})")
    return peak, most


def compare_tree_memory(name: str, a_tree: Path, b_tree: Path, make_args, runs: int) -> None:
    res = {"A": [], "B": []}
    with tempfile.TemporaryDirectory() as tmp:
        for i in range(runs):
            for key, tree in (("A", a_tree), ("B", b_tree)):
                res[key].append(tree_memory_once(tree, make_args(tree, Path(tmp) / f"m{key}{i}"), tmp, base=key == "B"))
    a = statistics.median(r[0] for r in res["A"])
    b = statistics.median(r[0] for r in res["B"])
    print(f"{name}: peak summed PSS of the process tree (sampled every 20 ms, {runs} runs each)")
    print(f"   this {a:8.2f} MiB ({max(r[1] for r in res['A'])} processes at most)   base {b:8.2f} MiB "
          f"({max(r[1] for r in res['B'])} at most)   this/base {a / b:.2f}")


def compare(name: str, a_tree: Path, b_tree: Path, make_args, runs: int) -> dict:
    with tempfile.TemporaryDirectory() as tmp:
        res = {"A": [], "B": []}
        for i in range(runs + 1):
            for key, tree in (("A", a_tree), ("B", b_tree)):
                r = run_once(tree, make_args(tree, Path(tmp) / f"{key}{i}"), tmp, base=key == "B")
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
    ap.add_argument("--tree-memory", action="store_true",
                    help="also measure the peak summed PSS of each command's process tree, in extra untimed "
                         "runs (Linux)")
    ap.add_argument("--base-env", action="append", default=[], metavar="KEY=VALUE",
                    help="environment of the base runs only (repeatable); with --base . it compares two settings "
                         "of this tree, e.g. SUBSURF_RENDER_PROCESSES=1 (figures drawn in one process)")
    ap.add_argument("--busy", type=int, default=0, metavar="N",
                    help="keep N other processes spinning on the CPU during the runs (another user's job)")
    args = ap.parse_args()
    base = args.base.resolve()
    for item in args.base_env:
        key, _, value = item.partition("=")
        BASE_ENV[key] = value
    busy = [subprocess.Popen([sys.executable, "-c", "while True: pass"]) for _ in range(args.busy)]
    try:
        return _measure(args, base)
    finally:
        for p in busy:
            p.kill()
            p.wait()


def _measure(args, base: Path) -> int:
    only = set(args.only or ["startup", "map", "demo"])
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, load average "
          f"{os.getloadavg()[0]:.1f}; Python {platform.python_version()}")
    print(f"this tree: {HERE} (git {_rev(HERE)}); base: {base} (git {_rev(base)})"
          + (f" with {' '.join(args.base_env)}" if args.base_env else "")
          + f"; {args.runs} counted runs each, alternating, after one warm-up"
          + (f"; {args.busy} busy process(es) beside them" if args.busy else ""))

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
    commands = {"map": ("subsurf map (bundled example, 4 antennas x 2 scenarios, 200 draws)",
                        lambda tree, out: ["-m", "subsurf", "map", survey(tree), "--out", str(out), "--quiet"]),
                "demo": ("subsurf demo", lambda tree, out: ["-m", "subsurf", "demo", "--out", str(out), "--quiet"])}
    for key, (name, make_args) in commands.items():
        if key in only:
            compare(name, HERE, base, make_args, args.runs)
            if args.tree_memory:
                compare_tree_memory(name, HERE, base, make_args, args.runs)
    return 0


def _rev(tree: Path) -> str:
    try:
        return subprocess.run(["git", "-C", str(tree), "rev-parse", "--short", "HEAD"], capture_output=True,
                              text=True, check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return "?"


if __name__ == "__main__":
    sys.exit(main())
