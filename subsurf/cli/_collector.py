"""No cyclic garbage collection while a console command imports; none of what it imported afterwards.

Before `subsurf map` computes anything it imports about 1,500 modules (xarray, pandas, scipy, the
GDAL, netCDF and PROJ bindings) and reads the survey: several hundred thousand objects that live
until the process ends.  Python's cyclic collector runs while they are created and, each time their
number has grown by a quarter, walks all of them (a full collection, 30-50 ms here) and finds almost
no garbage: 0.15-0.2 s of the command's CPU on the bundled example (measured with ``gc.callbacks``).
What little there is (about 800 objects, 0.4 MB, left over from imports) is frozen with the rest.

:func:`imports_first` switches the collector off for the block in which the command imports and
reads its inputs; :func:`imports_done` then moves every object alive into the collector's permanent
generation (``gc.freeze``, which later collections skip) and switches it on again, so the
computation's own garbage is collected as usual.  Freezing before a fork is also what the Python
documentation recommends for sharing memory with forked children (:mod:`subsurf.io.png_split`):
their collections no longer write to the parent's objects.

Only the console command, a process that runs one command and ends (:func:`subsurf.cli.entry`),
enables it (:func:`enable`): frozen objects are never freed, which costs nothing in a process about
to end but would keep a notebook's or the test process's garbage for good.
"""

from __future__ import annotations

import contextlib
import gc

__all__ = ["enable", "imports_first", "imports_done"]

_ENABLED = False
_PAUSED = False  # inside imports_first, before imports_done


def enable() -> None:
    """This process runs one command and ends: :func:`imports_first` may pause the collector."""
    global _ENABLED
    _ENABLED = True


@contextlib.contextmanager
def imports_first():
    """The block a command runs in: no collection until :func:`imports_done` (console only, see the module notes)."""
    global _PAUSED
    paused = _ENABLED and gc.isenabled()
    if paused:
        gc.disable()
        _PAUSED = True
    try:
        yield
    finally:
        if paused:
            _PAUSED = False
            gc.enable()


def imports_done() -> None:
    """Freeze what is alive (the imported modules and the inputs) and collect again from here on."""
    global _PAUSED
    if _PAUSED:
        _PAUSED = False
        gc.freeze()
        gc.enable()
