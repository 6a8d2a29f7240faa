"""Run ``python -m subsurf`` as forks of one warm interpreter: a real process per run, without the start-up.

A fresh interpreter that imports numpy, scipy, xarray, pyproj and matplotlib spends 0.3-2 s
of CPU before a command even reads its arguments; for a case that checks how a bad input is
refused that is nearly all of its cost, ~200 times over in the bad-input battery.  A warm
runner is one interpreter (this file run as a script) that has made those imports once and
forks a child per run.  The child is a real process: its own working folder, its own
descriptors 1 and 2 (files the caller reads back; descriptor 0 as a subprocess would
inherit it), the signal dispositions of a fresh interpreter, the caller's environment, and
a real exit status read with ``os.wait4``.  It runs ``subsurf/__main__.py`` through
:func:`runpy.run_module` as ``python -m subsurf`` does (``sys.argv`` and ``sys.path[0]``
set the same way) and ends as the interpreter's shutdown does (threads joined, atexit run,
stdout flushed: a failed flush is exit 120 with its note, finalisers run), so an uncaught
exception, an unflushable stdout or a finaliser's complaint shows as it would.  What a child does not
repeat is the interpreter's start-up and those imports: that is why the battery still runs
at least one case per command (and the kill/race tests all their runs) as a genuine
``python -m subsurf`` subprocess.
"""

from __future__ import annotations

import atexit
import json
import os
import select
import signal
import subprocess
import sys
import tempfile
import threading
from pathlib import Path

#: imported once by the warm interpreter (before any fork); each is imported by some subsurf command anyway.
#: Not dask or distributed: they may start threads, and a fork must not copy a half-held lock.
PRELOAD = ("numpy", "scipy.constants", "scipy.special", "scipy.stats", "scipy.interpolate", "scipy.optimize",
           "pydantic", "xarray", "pandas", "pyproj", "shapely", "shapely.geometry", "pint", "tqdm", "jinja2",
           "matplotlib.figure", "matplotlib.backends.backend_agg", "netCDF4")


class WarmRunner:
    """One warm interpreter; :meth:`run` forks it for one ``subsurf`` command line (one run at a time)."""

    def __init__(self, *, env_extra: dict | None = None):
        self._dir = Path(tempfile.mkdtemp(prefix="subsurf-warm-"))
        self.cpu_s = 0.0  #: CPU time (user + system) of the runs so far, for profiling
        req_r, self._req_w = os.pipe()
        self._rep_r, rep_w = os.pipe()
        env = {**os.environ, **(env_extra or {})}
        env.pop("PYTEST_CURRENT_TEST", None)
        self._log = open(self._dir / "runner.log", "w+b")  # noqa: SIM115 - the runner's own stderr, kept open
        self._proc = subprocess.Popen([sys.executable, __file__, str(req_r), str(rep_w)], pass_fds=(req_r, rep_w),
                                      stdout=subprocess.DEVNULL, stderr=self._log, env=env, cwd=self._dir)
        os.close(req_r)
        os.close(rep_w)
        self._rep = os.fdopen(self._rep_r, "rb", buffering=0)
        self._buf = b""
        ready = self._line(timeout=120)
        if ready != "ready":
            raise RuntimeError(f"the warm runner did not start: {self.log()}")

    def log(self) -> str:
        self._log.flush()
        return (self._dir / "runner.log").read_text(errors="replace")

    def _line(self, timeout: float | None) -> str | None:
        """The next reply line, or None after ``timeout`` seconds."""
        while b"\n" not in self._buf:
            ready, _, _ = select.select([self._rep], [], [], timeout)
            if not ready:
                return None
            chunk = os.read(self._rep_r, 4096)
            if not chunk:
                raise RuntimeError(f"the warm runner ended: {self.log()}")
            self._buf += chunk
        line, self._buf = self._buf.split(b"\n", 1)
        return line.decode()

    def run(self, argv, cwd, *, timeout: float = 90) -> subprocess.CompletedProcess:
        """``python -m subsurf <argv>`` in ``cwd`` as a fork; exit code -999 on a timeout (the child is killed)."""
        out, err = self._dir / "stdout", self._dir / "stderr"
        request = {"argv": [str(a) for a in argv], "cwd": str(cwd), "stdout": str(out), "stderr": str(err)}
        os.write(self._req_w, (json.dumps(request) + "\n").encode())
        pid = int(self._line(timeout=30))
        reply = self._line(timeout=timeout)
        timed_out = reply is None
        if timed_out:
            os.kill(pid, signal.SIGKILL)
            reply = self._line(timeout=30)
        code, cpu = reply.split()
        code = -999 if timed_out else int(code)
        self.cpu_s += float(cpu)
        stdout = out.read_text(encoding="utf-8", errors="replace")
        stderr = f"timed out after {timeout} s" if timed_out else err.read_text(encoding="utf-8", errors="replace")
        return subprocess.CompletedProcess([sys.executable, "-m", "subsurf", *request["argv"]], code, stdout, stderr)

    def close(self) -> None:
        os.close(self._req_w)
        try:
            self._proc.wait(timeout=30)
        except subprocess.TimeoutExpired:
            self._proc.kill()
            self._proc.wait()
        self._rep.close()
        self._log.close()
        for p in self._dir.iterdir():
            p.unlink()
        self._dir.rmdir()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


_SHARED: WarmRunner | None = None
_SHARED_LOCK = threading.Lock()


def run_warm(args, *, cwd=None, timeout: float = 120) -> subprocess.CompletedProcess:
    """``python -m subsurf <args>`` as a fork of this test process's one shared warm runner (started on first use,
    closed at exit); for the many CLI tests whose point is the command's output, not the interpreter's start-up."""
    global _SHARED
    with _SHARED_LOCK:
        if _SHARED is None:
            _SHARED = WarmRunner()
            atexit.register(_SHARED.close)
        return _SHARED.run([str(a) for a in args], cwd or os.getcwd(), timeout=timeout)


def _serve(req_fd: int, rep_fd: int) -> list[str] | None:
    """The warm interpreter's loop; returns only in a forked child (its argv), after setting the child up."""
    import importlib

    for name in PRELOAD:
        importlib.import_module(name)
    import pkgutil

    import subsurf

    for m in pkgutil.walk_packages(subsurf.__path__, "subsurf."):
        if not m.name.endswith("__main__"):
            importlib.import_module(m.name)
    import gc

    gc.freeze()  # the warm heap stays out of every child's collections: no copy-on-write of the whole heap
    requests = os.fdopen(req_fd, "rb", buffering=0)
    os.write(rep_fd, b"ready\n")
    buf = b""
    while True:
        while b"\n" not in buf:
            chunk = os.read(req_fd, 65536)
            if not chunk:
                return None  # the caller closed: done
            buf += chunk
        line, buf = buf.split(b"\n", 1)
        req = json.loads(line)
        sys.stdout.flush()
        sys.stderr.flush()
        pid = os.fork()
        if pid == 0:
            requests.close()
            os.close(rep_fd)
            for fd, path in ((1, req["stdout"]), (2, req["stderr"])):
                new = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
                os.dup2(new, fd)
                os.close(new)
            os.chdir(req["cwd"])
            sys.path[0] = os.getcwd()  # as 'python -m' puts the working folder first
            return req["argv"]
        os.write(rep_fd, f"{pid}\n".encode())
        _, status, usage = os.wait4(pid, 0)
        os.write(rep_fd, f"{os.waitstatus_to_exitcode(status)} {usage.ru_utime + usage.ru_stime:.3f}\n".encode())


def _become_subsurf(argv: list[str]) -> None:
    """In the forked child: run ``subsurf/__main__.py`` as ``python -m subsurf <argv>`` would, then exit as it would."""
    import atexit
    import gc
    import runpy
    import threading

    sys.argv = ["-m", *argv]  # runpy puts the module's file in argv[0], as 'python -m' does
    try:
        runpy.run_module("subsurf", run_name="__main__", alter_sys=True)
        code = 0
    except SystemExit as exc:
        code = exc.code if isinstance(exc.code, int) else 0 if exc.code is None else 1
        if not isinstance(exc.code, int | None):
            print(exc.code, file=sys.stderr)
    except BaseException:  # noqa: BLE001 - an uncaught exception: the traceback on stderr, exit 1
        sys.excepthook(*sys.exc_info())
        code = 1
    # the interpreter's own shutdown, in its order: wait for threads, atexit, flush (a failed stdout flush is
    # exit 120 with an 'Exception ignored' note), then collect what the run made (finalisers may write)
    threading._shutdown()
    atexit._run_exitfuncs()
    try:
        sys.stdout.flush()
    except Exception as exc:  # noqa: BLE001 - reported as the interpreter reports it
        sys.unraisablehook(type("UnraisableHookArgs", (), {"exc_type": type(exc), "exc_value": exc,
                                                          "exc_traceback": exc.__traceback__, "err_msg": None,
                                                          "object": sys.stdout})())
        code = 120
    gc.collect()
    try:
        sys.stderr.flush()
    except Exception:  # noqa: BLE001, S110 - nothing left to report to
        pass
    os._exit(code)


if __name__ == "__main__":
    argv = _serve(int(sys.argv[1]), int(sys.argv[2]))
    if argv is not None:
        _become_subsurf(argv)
