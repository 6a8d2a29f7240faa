"""Render a command's PNG figures on two CPU cores: some in a forked child, the rest here.

Drawing the figures is most of what `subsurf map` does after the computation (four PNGs of the
bundled example: about 1.3 s of CPU against 0.35 s for the NetCDF, GeoTIFF and summaries), and it
runs on one core of a machine that has two or more.  :class:`SplitRenderer` forks the process once
the maps are computed and the figure code is imported; the child renders its share of the figures
to PNG bytes, sends them back through a pipe and ends, while this process writes the other outputs
and renders the rest.  The figures are the same whichever process draws them: the child is a copy
of this process (same data, same fonts, same matplotlib state), and a test compares the bytes of
both ways.

Files are written only by this process, inside the command's output transaction: the child never
opens an output, so a failure anywhere still leaves no half-written output, and an error in the
child reaches this process as the same exception (or, if it cannot be sent, as a RuntimeError
with the child's traceback).  Warnings the child raises are re-issued here.

Forking is done only where it is safe and useful, otherwise everything is drawn here as before:

* only in a process that runs one command and ends (the console command, :func:`enable`); never in
  a notebook, the tests' own process, or a user's script that calls `subsurf.cli.main`;
* only with ``os.fork`` (not on Windows), at least two CPUs available to this process, and no other
  Python thread running (a fork copies no thread, and a lock another thread held would stay
  held in the child);
* not when ``SUBSURF_RENDER_PROCESSES=1`` is set.

The child's memory is the parent's pages, shared until written (copy-on-write); what it adds is
the figures' own (measured in benchmarks/README.md).
"""

from __future__ import annotations

import os
import pickle
import sys
import threading
import traceback
import warnings
from collections.abc import Callable

__all__ = ["enable", "fork_allowed", "SplitRenderer", "ENV_PROCESSES"]

#: Environment variable: ``1`` draws every figure in this process (no fork).
ENV_PROCESSES = "SUBSURF_RENDER_PROCESSES"

_ENABLED = False


def enable() -> None:
    """This process runs one command and ends: figures may be drawn in a forked child."""
    global _ENABLED
    _ENABLED = True


def _cpus() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def fork_allowed() -> bool:
    """Whether :class:`SplitRenderer` will fork (see the module docstring for the conditions)."""
    return (_ENABLED and hasattr(os, "fork") and os.environ.get(ENV_PROCESSES, "").strip() != "1"
            and _cpus() >= 2 and threading.active_count() == 1)


def _split(jobs: list[tuple[str, Callable, float]], head_start: float) -> tuple[list, list]:
    """Share jobs (key, make, cost) between the child and this process, largest first, to the less loaded.

    This process also writes the other outputs: ``head_start`` is that work in the same units.
    """
    child, here = [], []
    load_child, load_here = 0.0, head_start
    for job in sorted(jobs, key=lambda j: -j[2]):
        if load_child <= load_here:
            child.append(job)
            load_child += job[2]
        else:
            here.append(job)
            load_here += job[2]
    order = {key: i for i, (key, _, _) in enumerate(jobs)}
    return sorted(child, key=lambda j: order[j[0]]), sorted(here, key=lambda j: order[j[0]])


def _read_all(fd: int) -> bytes:
    chunks = []
    while True:
        chunk = os.read(fd, 1 << 20)
        if not chunk:
            return b"".join(chunks)
        chunks.append(chunk)


class SplitRenderer:
    """Figures to render as PNG bytes, some in a forked child (see the module docstring).

    Parameters
    ----------
    jobs : list of (key, make, cost)
        ``make()`` returns a Figure; ``cost`` is its relative drawing cost (e.g. its panels).
    render : callable
        Figure -> PNG bytes (:func:`subsurf.io.figstyle.png_bytes`).
    head_start : float
        The other work this process does meanwhile, in units of ``cost``.

    Use as a context manager: on entry the child is started (when :func:`fork_allowed`); write the
    other outputs; then :meth:`pngs` yields ``(key, bytes)`` of every job in the order given, this
    process's share drawn as it goes.  Leaving the block early stops the child.
    """

    def __init__(self, jobs, render: Callable, *, head_start: float = 0.0):
        self.jobs = list(jobs)
        self.render = render
        self.head_start = head_start
        self.pid = None
        self.fd = None
        self.forked = False

    def __enter__(self):
        if len(self.jobs) >= 2 and fork_allowed():
            child, _ = _split(self.jobs, self.head_start)
            self._start(child)
        return self

    def _start(self, child_jobs) -> None:
        r, w = os.pipe()
        sys.stdout.flush()
        sys.stderr.flush()
        pid = os.fork()
        if pid == 0:  # the child: render, send, end without running this process's exit handlers
            code = 0
            try:
                os.close(r)
                with warnings.catch_warnings(record=True) as caught:
                    warnings.simplefilter("always")
                    out = {key: self.render(make()) for key, make, _ in child_jobs}
                payload = pickle.dumps(("ok", out, [(str(w_.message), w_.category) for w_ in caught]))
            except BaseException as exc:  # noqa: BLE001 - every failure goes back to the parent
                code = 1
                text = "".join(traceback.format_exception(exc))
                try:
                    payload = pickle.dumps(("error", exc, text))
                    pickle.loads(payload)
                except Exception:  # noqa: BLE001 - an exception that does not travel: send its text
                    payload = pickle.dumps(("error", None, text))
            try:
                view = memoryview(payload)
                while view:
                    view = view[os.write(w, view):]
            finally:
                os._exit(code)
        os.close(w)
        self.pid, self.fd, self.forked = pid, r, True
        self.child_keys = {key for key, _, _ in child_jobs}

    def _collect(self) -> dict[str, bytes]:
        data = _read_all(self.fd)
        os.close(self.fd)
        self.fd = None
        _, status = os.waitpid(self.pid, 0)
        self.pid = None
        try:
            message = pickle.loads(data)
        except Exception:  # noqa: BLE001 - nothing readable came back
            raise RuntimeError(f"the figure process ended without its figures (status {status})") from None
        if message[0] == "error":
            _, exc, text = message
            if exc is not None:
                raise exc
            raise RuntimeError(f"drawing a figure failed in the figure process:\n{text}")
        _, out, caught = message
        for text, category in caught:
            warnings.warn(text, category, stacklevel=2)
        return out

    def pngs(self):
        """Yield (key, PNG bytes) of every job in the order given."""
        if not self.forked:
            for key, make, _ in self.jobs:
                yield key, self.render(make())
            return
        mine = {}
        for key, make, _ in self.jobs:
            if key not in self.child_keys:
                mine[key] = self.render(make())
        theirs = self._collect()
        for key, _, _ in self.jobs:
            yield key, (theirs[key] if key in self.child_keys else mine[key])

    def __exit__(self, *exc):
        if self.pid is not None:  # left early: stop the child
            import signal

            try:
                os.kill(self.pid, signal.SIGKILL)
                os.waitpid(self.pid, 0)
            except OSError:
                pass
            self.pid = None
        if self.fd is not None:
            os.close(self.fd)
            self.fd = None
        return False
