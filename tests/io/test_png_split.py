"""The figures drawn by forked figure processes (subsurf.io.png_split): the same bytes as drawn in one
process, failures and warnings reaching the parent, no process left behind.

Forking happens only in a process that runs one command and ends, so every check here runs in a
subprocess (the test process has other threads and must never fork)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]

pytestmark = pytest.mark.skipif(not hasattr(os, "fork"), reason="figures are drawn in a forked child only where "
                                                                "os.fork exists")


def _cpus() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def _run(script: str, *args: str, env: dict | None = None) -> subprocess.CompletedProcess:
    full_env = {k: v for k, v in os.environ.items() if k != "SUBSURF_RENDER_PROCESSES"}
    full_env.update({"PYTHONPATH": str(ROOT), **(env or {})})
    return subprocess.run([sys.executable, "-c", textwrap.dedent(script), *args], capture_output=True, text=True,
                          timeout=300, env=full_env, cwd=ROOT)


MECHANISM = """
    import json, os, sys, time, warnings
    from subsurf.io import png_split
    from subsurf.errors import FileInputError

    png_split.enable()
    case = sys.argv[1]
    PARENT = os.getpid()

    class Opaque(Exception):
        def __init__(self, a, b):  # an exception that cannot be rebuilt from its pickle
            super().__init__(f"{a}-{b}")

    def preload():
        if case == "preload":
            raise ImportError("no figure library in this test")
        if case == "mpl":
            import matplotlib.figure  # noqa: F401 - with an unwritable config folder: a temporary one

    def draw(key, fn=None):
        if case == "error":
            raise FileInputError("survey.toml", f"{key} out of range 0-0.6", row=3, field="moisture")
        if case == "opaque":
            raise Opaque(1, 2)
        if case == "warn":
            warnings.warn(f"{key}: outside the published validity range", UserWarning)
        return f"{key}:{os.getpid()}"

    extra = {"fn": (lambda: None)} if case == "unpicklable" else {}
    jobs = [(f"fig{i}", draw, {"key": f"fig{i}", **extra}, c) for i, c in enumerate((4, 4, 2, 3))]
    out = {"allowed": png_split.fork_allowed(), "parent": PARENT}
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            with png_split.FigureProcesses(preload=preload, render=lambda fig: fig.encode()) as figs:
                out["child"] = figs.pid
                if case in ("leave", "nothing"):
                    time.sleep(0.3)  # the children are running
                    if case == "leave":
                        raise KeyError("left early")
                else:
                    figs.submit(jobs)
                    got = list(figs.pngs())
        if case != "nothing":
            out["keys"] = [k for k, _ in got]
            out["pids"] = {k: int(v.decode().split(":")[1]) for k, v in got}
            out["warnings"] = [str(w.message) for w in caught]
    except Exception as exc:
        out["error"] = [type(exc).__name__, str(exc)]
    try:
        os.waitpid(-1, os.WNOHANG)
        out["children_left"] = True
    except ChildProcessError:
        out["children_left"] = False
    if out.get("child"):
        try:
            os.killpg(out["child"], 0)
            out["group_left"] = True
        except ProcessLookupError:
            out["group_left"] = False
    print(json.dumps(out))
"""


def _mechanism(case: str, env: dict | None = None) -> dict:
    proc = _run(MECHANISM, case, env=env)
    assert proc.returncode == 0, proc.stderr[-2000:]
    return json.loads(proc.stdout.strip().splitlines()[-1])


TWO_CPUS = pytest.mark.skipif(_cpus() < 2, reason="the figure processes are used only with two or more CPUs")


@TWO_CPUS
def test_jobs_are_shared_by_two_figure_processes_and_come_back_in_order():
    out = _mechanism("ok")
    assert out["allowed"] is True and out["child"]
    assert out["keys"] == ["fig0", "fig1", "fig2", "fig3"]
    pids = out["pids"]
    assert out["parent"] not in pids.values()
    # largest first to the less loaded (costs 4, 4, 2, 3): 4 + 3 in one process, 4 + 2 in the other
    assert pids["fig0"] == pids["fig3"] != pids["fig1"] == pids["fig2"]
    assert out["children_left"] is False and out["group_left"] is False


@TWO_CPUS
def test_a_failure_in_a_figure_process_is_raised_here_with_its_message():
    out = _mechanism("error")
    # the same class and one-line message as in one process (FileInputError pickles with its message)
    assert out["error"] == ["FileInputError", "survey.toml, row 3, field 'moisture': fig0 out of range 0-0.6"] or \
        out["error"] == ["FileInputError", "survey.toml, row 3, field 'moisture': fig1 out of range 0-0.6"]
    assert out["children_left"] is False and out["group_left"] is False
    opaque = _mechanism("opaque")
    assert opaque["error"][0] == "RuntimeError"
    assert "Opaque" in opaque["error"][1] and "1-2" in opaque["error"][1]  # the child's traceback, as text



@TWO_CPUS
def test_a_figure_process_that_cannot_import_the_figure_code_leaves_the_figures_to_this_process():
    out = _mechanism("preload")
    assert "error" not in out and out["child"]
    assert set(out["pids"].values()) == {out["parent"]}
    assert out["children_left"] is False and out["group_left"] is False


@TWO_CPUS
def test_no_temporary_matplotlib_folder_is_left_behind(tmp_path):
    tmp = tmp_path / "tmp"
    tmp.mkdir()
    out = _mechanism("mpl", env={"TMPDIR": str(tmp), "MPLCONFIGDIR": "/proc/no-such-folder"})
    assert "error" not in out and out["parent"] not in out["pids"].values()
    assert list(tmp.iterdir()) == []  # matplotlib's temporary config folder went with the figure process


@TWO_CPUS
def test_figure_processes_end_with_a_killed_parent_and_do_not_hold_its_output_lock(tmp_path):
    """SIGKILL of the command while the figures are drawn: they stop, and the next run is not refused."""
    out_dir = tmp_path / "out"
    proc = _run(f"""
        import os, signal, sys, time
        from subsurf.io import png_split
        from subsurf.io.transaction import OutputTransaction

        def slow(key):
            time.sleep(30)
            return key

        png_split.enable()
        txn = OutputTransaction("map")
        txn.folder({str(out_dir)!r})
        with txn, png_split.FigureProcesses(preload=lambda: None, render=lambda fig: fig.encode()) as figs:
            figs.submit([(f"fig{{i}}", slow, {{"key": f"fig{{i}}"}}, 1.0) for i in range(2)])
            print(figs.pid, flush=True)
            time.sleep(0.5)  # both are drawing
            os.kill(os.getpid(), signal.SIGKILL)
    """)
    assert proc.returncode == -9, proc.stderr[-2000:]
    group = int(proc.stdout.split()[0])
    import time

    for _ in range(50):  # they end with their parent (not after their 30 s of drawing)
        try:
            os.killpg(group, 0)
        except ProcessLookupError:
            break
        time.sleep(0.1)
    else:
        pytest.fail("the figure processes outlived the killed command")
    again = _run(f"""
        from subsurf.io.transaction import OutputTransaction
        txn = OutputTransaction("map")
        txn.folder({str(out_dir)!r})
        with txn:
            pass
        print("ok")
    """)
    assert again.returncode == 0 and again.stdout.strip() == "ok", again.stderr[-2000:]


@TWO_CPUS
def test_warnings_of_the_figure_processes_are_issued_here():
    out = _mechanism("warn")
    assert sorted(out["warnings"]) == [f"fig{i}: outside the published validity range" for i in range(4)]


@TWO_CPUS
def test_leaving_early_or_submitting_nothing_stops_both_figure_processes():
    for case in ("leave", "nothing"):
        out = _mechanism(case)
        assert out["child"], case
        assert out.get("error") == (["KeyError", "'left early'"] if case == "leave" else None), case
        assert out["children_left"] is False and out["group_left"] is False, case


@TWO_CPUS
def test_jobs_that_cannot_be_sent_are_drawn_here():
    out = _mechanism("unpicklable")
    assert out["child"] and "error" not in out
    assert set(out["pids"].values()) == {out["parent"]}
    assert out["children_left"] is False and out["group_left"] is False


def test_no_fork_when_switched_off_or_not_a_one_command_process():
    off = _mechanism("ok", env={"SUBSURF_RENDER_PROCESSES": "1"})
    assert off["allowed"] is False and off["child"] is None and set(off["pids"].values()) == {off["parent"]}
    proc = _run("""
        import threading, time
        from subsurf.io import png_split
        print(png_split.fork_allowed())           # not enabled: never
        png_split.enable()
        stop = threading.Event()
        t = threading.Thread(target=stop.wait); t.start()
        print(png_split.fork_allowed())           # another thread runs: never
        stop.set(); t.join()
    """)
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert proc.stdout.split() == ["False", "False"]


@TWO_CPUS
def test_console_map_draws_in_two_processes_the_same_pngs_as_one(tmp_path):
    """The console command (figures shared with a child) against run_map in one process: byte-identical PNGs."""
    from example_site import coarse_copy

    from subsurf.io.maps import run_map

    survey = coarse_copy(tmp_path)
    record = tmp_path / "forked.json"
    proc = _run(f"""
        import json, sys
        from subsurf.io import png_split
        submit = png_split.FigureProcesses.submit
        def recorded(self, jobs):
            submit(self, jobs)
            with open({str(record)!r}, "w") as f:
                json.dump({{"forked": self.forked, "jobs": [k for k, _, _, _ in self.jobs]}}, f)
        png_split.FigureProcesses.submit = recorded
        sys.argv = ["subsurf", *sys.argv[1:]]
        from subsurf.cli import entry
        entry()
    """, "map", str(survey), "--out", str(tmp_path / "console"), "--quiet", "--no-geotiff")
    assert proc.returncode == 0, proc.stderr[-2000:]
    sent = json.loads(record.read_text())
    assert sent["forked"] and len(sent["jobs"]) == 4  # every figure was sent to the figure processes
    run_map(survey, tmp_path / "inproc", quiet=True, geotiff=False)
    pngs = sorted(p.name for p in (tmp_path / "console").glob("*.png"))
    assert len(pngs) == 4 and pngs == sorted(p.name for p in (tmp_path / "inproc").glob("*.png"))
    for name in pngs:
        assert (tmp_path / "console" / name).read_bytes() == (tmp_path / "inproc" / name).read_bytes(), name


def test_a_forked_child_lets_go_of_the_output_lock_the_parent_keeps(tmp_path):
    proc = _run(f"""
        import fcntl, os
        from subsurf.io._staging import HELD_LOCKS
        from subsurf.io.transaction import OutputTransaction
        txn = OutputTransaction("map")
        txn.folder({str(tmp_path / "out")!r})
        with txn:
            fds = sorted(HELD_LOCKS)
            pid = os.fork()
            if pid == 0:
                closed = 0
                for fd in fds:
                    try:
                        os.fstat(fd)
                    except OSError:
                        closed += 1
                os._exit(0 if fds and closed == len(fds) else 1)
            _, status = os.waitpid(pid, 0)
            lock = [p for p in os.listdir({str(tmp_path)!r}) if p.startswith(".subsurf-staging")]
            probe = os.open(os.path.join({str(tmp_path)!r}, lock[0], "lock"), os.O_RDWR)
            try:
                fcntl.flock(probe, fcntl.LOCK_EX | fcntl.LOCK_NB)
                held = False
            except BlockingIOError:
                held = True
            print(os.waitstatus_to_exitcode(status), held)
    """)
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert proc.stdout.split() == ["0", "True"]  # closed in the child, still held by the parent
