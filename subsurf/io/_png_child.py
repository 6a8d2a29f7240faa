"""What runs inside a figure process of :mod:`subsurf.io.png_split`, and the pipe helpers both sides use."""

from __future__ import annotations

import os
import pickle
import sys
import traceback
import warnings
from collections.abc import Callable

__all__ = ["read_all", "read_exact", "send", "warnings_of", "render_and_send", "failure", "die_with_parent",
           "remove_matplotlib_temp_config"]


def read_all(fd: int) -> bytes:
    chunks = []
    while True:
        chunk = os.read(fd, 1 << 20)
        if not chunk:
            return b"".join(chunks)
        chunks.append(chunk)


def send(fd: int, payload: bytes) -> None:
    view = memoryview(payload)
    while view:
        view = view[os.write(fd, view):]


def warnings_of(caught) -> list:
    return [(str(w_.message), w_.category) for w_ in caught]


def render_and_send(jobs, render: Callable, fd: int, early: list) -> int:
    """In a figure process: render ``jobs``, send the PNG bytes (or the failure) down ``fd``; the exit code.

    ``early``: warnings already caught in this process (importing, reading the jobs), sent along.
    """
    code = 0
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            out = {key: render(func(**kwargs)) for key, func, kwargs, _ in jobs}
        payload = pickle.dumps(("ok", out, early + warnings_of(caught)))
    except BaseException as exc:  # noqa: BLE001 - every failure goes back to the parent
        code = 1
        payload = failure(exc)
    try:
        send(fd, payload)
    except OSError:  # the parent has gone
        code = 1
    finally:
        os.close(fd)  # the parent reads to the end of this pipe before the next
    return code


def failure(exc: BaseException) -> bytes:
    text = "".join(traceback.format_exception(exc))
    try:
        payload = pickle.dumps(("error", exc, text))
        pickle.loads(payload)
        return payload
    except Exception:  # noqa: BLE001 - an exception that does not travel: send its text
        return pickle.dumps(("error", None, text))


def read_exact(fd: int, n: int) -> bytes:
    chunks, got = [], 0
    while got < n:
        chunk = os.read(fd, n - got)
        if not chunk:
            break
        chunks.append(chunk)
        got += len(chunk)
    return b"".join(chunks)


def die_with_parent(parent: int) -> None:
    """In a figure process: ignore terminal stops, and end when the process that forked it ends."""
    import signal

    signal.signal(signal.SIGTTOU, signal.SIG_IGN)  # a background group writing to the terminal is not stopped
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's: it stops the group
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, signal.SIGKILL, 0, 0, 0)  # PR_SET_PDEATHSIG (Linux): killed when the parent ends
    except (OSError, AttributeError):  # not Linux: a lost parent shows as a closed pipe instead
        pass
    if os.getppid() != parent:  # the parent ended before the request took effect
        os._exit(1)


def remove_matplotlib_temp_config() -> None:
    """Remove the temporary config folder matplotlib made here (its atexit clean-up never runs: os._exit)."""
    import shutil
    import tempfile

    mpl = sys.modules.get("matplotlib")
    try:
        folder = mpl.get_configdir() if mpl is not None else None
    except Exception:  # noqa: BLE001 - nothing to clean
        return
    if folder and os.path.basename(folder).startswith("matplotlib-") and \
            os.path.dirname(os.path.abspath(folder)) == os.path.abspath(tempfile.gettempdir()):
        shutil.rmtree(folder, ignore_errors=True)
