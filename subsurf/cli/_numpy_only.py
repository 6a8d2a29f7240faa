"""Tell xarray, in a command that holds only numpy arrays, not to import the array libraries it probes for.

Before xarray wraps data it asks whether the data are a dask, pint, cupy or sparse array, and to
ask it imports each of those libraries that is installed (``xarray.namedarray.pycompat.array_type``;
the answer is cached per process).  On a machine with the ``scale`` and test extras that is dask.array
and pint (which brings uncertainties and babel): 0.4-0.5 s of a `subsurf map` run that uses none
of them, since every array of `map`, `demo` and `report` is a numpy array (units are converted to
plain floats at the edges, :mod:`subsurf.units`; no file is opened with chunks).

:func:`declare_numpy_only` fills xarray's per-process cache with the answer "not available" for
each of those libraries that this process has not imported yet, built by xarray's own
``DuckArrayModule`` from a module name that cannot exist, so the entries have whatever form the
installed xarray gives them.  It is an xarray internal: if it is missing or different, nothing is
changed and xarray probes as usual.  The cache lives as long as the process, so only the console
command, a process that runs one command and ends (:func:`subsurf.cli.entry`), enables it
(:func:`enable`); `subsurf.cli.main` called from Python (a notebook, the tests, a user's script
that goes on to use dask) never changes xarray.  `region` (dask arrays) never calls it.

xarray also asks, of every array it indexes, whether it is a dask collection, and to ask it imports
``dask.base`` (and with it most of dask: 0.07 s) whenever dask is installed
(``xarray.namedarray.utils.is_dask_collection``).  No object can be a dask collection in a process
that has not imported dask, so :func:`declare_numpy_only` puts a check of ``sys.modules`` in front of
that function where xarray's array checks call it (``xarray.core.utils`` keeps its own reference, used
on dask code paths only); once dask is imported the question goes to dask as before.
"""

from __future__ import annotations

import sys

__all__ = ["enable", "declare_numpy_only"]

_ENABLED = False

#: The libraries xarray probes for duck arrays (``array_type``) that a numpy-only command never holds.
PROBED = ("dask", "pint", "cupy", "sparse", "cubed")


def enable() -> None:
    """This process runs one command and ends: :func:`declare_numpy_only` may change xarray's cache."""
    global _ENABLED
    _ENABLED = True


def declare_numpy_only() -> tuple[str, ...]:
    """Mark the probed array libraries not yet imported as unavailable to xarray; return those marked.

    Does nothing (returns ``()``) unless :func:`enable` was called.
    """
    if not _ENABLED:
        return ()
    try:
        from xarray.namedarray import pycompat

        cache = pycompat._cached_duck_array_modules
        absent = pycompat.DuckArrayModule("subsurf-no-such-module")  # xarray's own "not installed" answer
    except Exception:  # an xarray without this cache: it probes as usual
        return ()
    if not isinstance(cache, dict) or getattr(absent, "available", True) or getattr(absent, "type", None) != ():
        return ()
    marked = tuple(m for m in PROBED if m not in cache and m not in sys.modules)
    for m in marked:
        cache[m] = absent
    _ask_dask_only_once_imported()
    return marked


def _ask_dask_only_once_imported() -> None:
    """``xarray.namedarray.utils.is_dask_collection``, answered False while dask is not imported."""
    try:
        from xarray.namedarray import utils
    except ImportError:  # pragma: no cover - an xarray without it asks as usual
        return
    ask = getattr(utils, "is_dask_collection", None)
    if ask is None or getattr(ask, "_subsurf_guard", False):
        return

    def is_dask_collection(x):
        return "dask" in sys.modules and ask(x)

    is_dask_collection._subsurf_guard = True
    utils.is_dask_collection = is_dask_collection
