"""Draw a command's PNG figures in two forked figure processes while this process computes and writes.

Drawing the four figures of the bundled example takes about 1.3 s of CPU and importing matplotlib
another 0.4 s, against 0.35 s for the NetCDF, GeoTIFFs and summaries, and all of it ran on one core
of a machine that has two or more.  :class:`FigureProcesses` is entered before the maps are
computed: it forks a figure process, which imports the figure code while this process computes.
The figure jobs are then sent over (a module-level function and its pickled data, through an
unlinked temporary file, so this process never waits on a pipe); the figure process forks a
second one with matplotlib already imported, both draw their share of the figures (largest first
to the less loaded) to PNG bytes and send them back through a pipe each, while this process writes
the other outputs.  This process never imports matplotlib.  The figures are the same whichever
process draws them (same code, same data, same fonts); a test compares the bytes both ways.

Files are written only by this process, inside the command's output transaction: a figure
process never opens an output, so a failure anywhere still leaves no half-written output.  An
error in a figure process reaches this process as the same exception (or, if it cannot be sent,
as a RuntimeError with its traceback); its warnings are re-issued here.  Leaving the block early
(an error in the computation, Ctrl-C) kills both figure processes, which form one process group.
Jobs that cannot be pickled are drawn here instead.

Figure processes are forked only where it is safe and useful; otherwise every figure is drawn
here, one after the other:

* only in a process that runs one command and ends (the console command, :func:`enable`); never in
  a notebook, the tests' own process, or a user's script that calls `subsurf.cli.main`;
* only with ``os.fork`` (not on Windows), at least two CPUs available to this process, and no other
  Python thread running (a fork copies no thread, and a lock another thread held would stay
  held in the child);
* not when ``SUBSURF_RENDER_PROCESSES=1`` is set.

Memory: a figure process starts as this process's pages, shared until written; each adds its own
(matplotlib and the figures, about 35 MiB private on the example; figures in benchmarks/README.md).
"""

from __future__ import annotations

import gc
import os
import pickle
import sys
import threading
import warnings
from collections.abc import Callable

from ._png_child import (
    die_with_parent,
    read_all,
    read_exact,
    remove_matplotlib_temp_config,
    render_and_send,
    send,
    warnings_of,
)

__all__ = ["enable", "fork_allowed", "FigureProcesses", "ENV_PROCESSES"]

#: Environment variable: ``1`` draws every figure in this process (no fork).
ENV_PROCESSES = "SUBSURF_RENDER_PROCESSES"

_ENABLED = False


def enable() -> None:
    """This process runs one command and ends: figures may be drawn by forked figure processes."""
    global _ENABLED
    _ENABLED = True


def _cpus() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def fork_allowed() -> bool:
    """Whether :class:`FigureProcesses` will fork (see the module docstring for the conditions)."""
    return (_ENABLED and hasattr(os, "fork") and os.environ.get(ENV_PROCESSES, "").strip() != "1"
            and _cpus() >= 2 and threading.active_count() == 1)


def _split(jobs: list, head_start: float) -> tuple[list, list]:
    """Share jobs (key, ..., cost) between two processes, largest first to the less loaded; keep their order.

    ``head_start``: work the second process has already, in the units of ``cost``.
    """
    first, second = [], []
    load_first, load_second = 0.0, head_start
    for job in sorted(jobs, key=lambda j: -j[-1]):
        if load_first <= load_second:
            first.append(job)
            load_first += job[-1]
        else:
            second.append(job)
            load_second += job[-1]
    order = {job[0]: i for i, job in enumerate(jobs)}
    return sorted(first, key=lambda j: order[j[0]]), sorted(second, key=lambda j: order[j[0]])


#: Jobs whose pickled data exceed this many bytes are drawn here: a figure process would hold a
#: second copy of the data (a regional-size grid), which costs more memory than the core saves time.
MAX_JOB_BYTES = 256 * 2**20


class FigureProcesses:
    """Figures rendered as PNG bytes by two forked processes while this one computes and writes.

    Parameters
    ----------
    preload : callable
        Imports the figure code; the first figure process runs it as soon as it starts (while this
        process computes the maps).
    render : callable
        Figure -> PNG bytes (:func:`subsurf.io.figstyle.png_bytes`).
    fork : bool
        False: everything is drawn in this process (as when :func:`fork_allowed` is false).

    Use as a context manager, entered before the computation: the first figure process is forked on
    entry and imports the figure code.  Once the data are ready, :meth:`submit` the jobs ``(key,
    func, kwargs, cost)``: ``func`` is a module-level function (sent by name) that returns a Figure
    from ``kwargs`` (pickled into an unlinked temporary file); ``cost`` its relative drawing cost.
    The figure process shares the jobs with a second one, forked from it with the figure code
    imported, and both render.  Meanwhile this process writes the other outputs; then :meth:`pngs`
    yields ``(key, bytes)`` in the order submitted.  Whatever cannot go to the figure processes (a
    fork or a pipe refused, jobs that do not pickle or exceed :data:`MAX_JOB_BYTES`, a figure process
    that cannot import the figure code) is drawn here, as without them.  Leaving the block early, or
    submitting nothing, stops both figure processes.
    """

    def __init__(self, *, preload: Callable, render: Callable, fork: bool = True):
        self.preload, self.render = preload, render
        self.fork = fork
        self.pid = None
        self.forked = False
        self.jobs: list = []
        self._fds: list[int] = []
        self._job_w = None
        self._data = None

    def __enter__(self):
        if self.fork and fork_allowed():
            try:
                self._start()
            except OSError:  # no fork or no pipe here (a process limit, no descriptors): draw here
                self._stop()
        return self

    def _start(self) -> None:
        import tempfile

        self._data = tempfile.TemporaryFile(prefix="subsurf-figures-")  # unlinked: nothing is left behind
        fds = []
        try:
            for _ in range(3):
                fds.extend(os.pipe())
        except OSError:
            for fd in fds:
                os.close(fd)
            raise
        job_r, job_w, r1, w1, r2, w2 = fds
        self._fds, self._job_w = [r1, r2], job_w
        sys.stdout.flush()
        sys.stderr.flush()
        gc.freeze()  # as the Python documentation advises before a fork: the children's collections leave these alone
        parent = os.getpid()
        try:
            pid = os.fork()
        except OSError:
            for fd in (job_r, w1, w2):
                os.close(fd)
            raise
        if pid == 0:
            code = 1
            try:
                os.setpgid(0, 0)  # its own group: stopping it stops the second figure process too
                die_with_parent(parent)
                for fd in (job_w, r1, r2):
                    os.close(fd)
                code = self._child(job_r, w1, w2)
            finally:
                os._exit(code)
        try:
            os.setpgid(pid, pid)  # as the child does: whichever runs first, the group exists before a stop
        except OSError:
            pass
        for fd in (job_r, w1, w2):
            os.close(fd)
        self.pid, self.forked = pid, True

    def _child(self, job_r: int, w1: int, w2: int) -> int:
        """The first figure process: import, wait for the jobs, share them with a second one, render, send."""
        mpl_before = "matplotlib" in sys.modules
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            try:
                gc.disable()  # importing builds long-lived objects only: collect none, then freeze them
                self.preload()
                gc.freeze()
                gc.enable()
                header = read_exact(job_r, 8)
                if len(header) < 8:  # nothing submitted: the parent stopped
                    return 0
                with open(os.dup(self._data.fileno()), "rb") as f:  # a file object of this process's own
                    f.seek(0)
                    jobs = pickle.load(f)
            except BaseException as exc:  # noqa: BLE001 - the parent draws everything instead
                try:
                    send(w1, pickle.dumps(("decline", type(exc).__name__, warnings_of(caught))))
                except OSError:
                    pass
                return 1
            finally:
                os.close(job_r)
        early = warnings_of(caught)
        me = os.getpid()
        try:
            mine, theirs = _split(jobs, 0.0)
            gpid = os.fork() if theirs and threading.active_count() == 1 else None
        except OSError:  # no second process: this one draws everything
            gpid = None
        if gpid == 0:
            code = 1
            try:
                die_with_parent(me)
                os.close(w1)
                code = render_and_send(theirs, self.render, w2, [])
            finally:
                os._exit(code)
        os.close(w2)
        code = render_and_send(mine if gpid else jobs, self.render, w1, early)
        if gpid:
            _, status = os.waitpid(gpid, 0)
            code = code or (0 if status == 0 else 1)
        if not mpl_before:
            remove_matplotlib_temp_config()
        return code

    def submit(self, jobs) -> None:
        """Hand over the jobs ``(key, func, kwargs, cost)`` (see the class docstring)."""
        self.jobs = list(jobs)
        if not self.forked:
            return
        try:
            pickle.dump(self.jobs, self._data, protocol=pickle.HIGHEST_PROTOCOL)
            self._data.flush()
            if self._data.tell() > MAX_JOB_BYTES:
                raise OverflowError("the figure data are too large to copy to a figure process")
            send(self._job_w, self._data.tell().to_bytes(8, "little"))
        except (OSError, OverflowError, pickle.PicklingError, TypeError, AttributeError):  # drawn here instead
            self._stop()
        finally:
            if self._job_w is not None:
                os.close(self._job_w)
                self._job_w = None

    def _collect(self) -> dict[str, bytes] | None:
        """The figure processes' PNGs; None when they declined the jobs (then they are drawn here)."""
        out: dict[str, bytes] = {}
        caught: list = []
        failure = declined = None
        for fd in self._fds:
            data = read_all(fd)
            if not data:
                continue
            try:
                message = pickle.loads(data)
            except Exception:  # noqa: BLE001 - nothing readable came back
                continue
            if message[0] == "error" and failure is None:
                failure = message
            elif message[0] == "decline":
                declined = message
            elif message[0] == "ok":
                out.update(message[1])
                caught.extend(message[2])
        self._close_fds()
        _, status = os.waitpid(self.pid, 0)
        self.pid = None
        if declined is not None:
            for text, category in declined[2]:
                warnings.warn(text, category, stacklevel=3)
            return None
        if failure is not None:
            _, exc, text = failure
            if exc is None:
                raise RuntimeError(f"drawing a figure failed in a figure process:\n{text}")
            exc.add_note(f"(raised in a figure process)\n{text}")
            raise exc
        missing = [key for key, _, _, _ in self.jobs if key not in out]
        if missing:
            raise RuntimeError(f"the figure processes ended without the figures {', '.join(missing)} "
                               f"(exit code {os.waitstatus_to_exitcode(status)})")
        for text, category in caught:
            warnings.warn(text, category, stacklevel=3)
        return out

    def pngs(self):
        """Yield (key, PNG bytes) of every submitted job, in the order submitted."""
        theirs = self._collect() if self.forked else None
        self.forked = self.forked and theirs is not None
        for key, func, kwargs, _ in self.jobs:
            yield key, (theirs[key] if theirs is not None else self.render(func(**kwargs)))

    def _close_fds(self) -> None:
        for fd in self._fds:
            os.close(fd)
        self._fds = []

    def _stop(self) -> None:
        """Stop both figure processes (one process group) and draw here instead."""
        import signal

        if self.pid is not None:
            try:
                os.killpg(self.pid, signal.SIGKILL)
            except OSError:
                try:
                    os.kill(self.pid, signal.SIGKILL)
                except OSError:
                    pass
            try:
                os.waitpid(self.pid, 0)
            except ChildProcessError:
                pass
            self.pid = None
        self._close_fds()
        if self._job_w is not None:
            os.close(self._job_w)
            self._job_w = None
        self.forked = False

    def __exit__(self, *exc):
        self._stop()
        if self._data is not None:
            self._data.close()
            self._data = None
        return False
