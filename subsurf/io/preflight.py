"""Refusals before work: free disk space, memory and time estimates, OS errors in one line.

A command estimates what a run will need from the sizes it knows before computing
(cells × antennas × scenarios × draws, tile size, output layers) and refuses, with one
line naming the numbers and the limit, when the estimate exceeds a stated limit:

* memory: :data:`MEMORY_FRACTION` of the machine's physical memory;
* time: :data:`TIME_LIMIT_S` (six hours) of computation;
* disk: the free space of the destination's file system (:func:`check_free_space`).

``--allow-large`` on the commands lifts the memory and time limits (never the disk
check: a run that cannot fit its outputs would fail at the end anyway).

The per-unit costs below were measured on the development machine (2 cores of an AMD
EPYC virtual machine, shared with other jobs, Python 3.11, numpy 2.4; December 2026)
with :mod:`tracemalloc` and wall-clock timing, rounded up; they are estimates meant to
tell minutes from days and megabytes from terabytes, not benchmarks (see
benchmarks/README.md for those).
"""

from __future__ import annotations

import errno
import os
from dataclasses import dataclass

from ..errors import OutputError, ResourceLimitError

__all__ = [
    "Estimate", "MEMORY_FRACTION", "TIME_LIMIT_S", "ALLOW_FLAG", "check_free_space", "check_estimate",
    "os_error_message", "format_bytes", "format_seconds", "physical_memory_bytes",
    "map_output_bytes", "region_estimate", "layered_depth_estimate",
]

#: share of physical memory a run may plan to use
MEMORY_FRACTION = 0.75
#: longest computation a run may plan without --allow-large (s)
TIME_LIMIT_S = 6 * 3600.0
#: the flag that lifts the memory and time limits
ALLOW_FLAG = "--allow-large"
#: free space kept beyond the estimate (bytes): file-system metadata, temporary names
_DISK_MARGIN = 64 * 1024

# measured costs (see the module docstring)
_MC_DEPTH_BYTES = 64          # layered depth Monte Carlo, per draw × pick × layer (measured 55 B)
_MC_DEPTH_SECONDS = 0.5e-6    # ... per draw × pick × layer (measured 0.25-0.43 µs)
_REGION_BASE_BYTES = 400e6    # region: interpreter, dask, the scheduler (measured 488 MiB with 4 tiles)
_REGION_CELL_BYTES = 256      # ... per cell × antenna of a tile in flight (measured ~215 B)
_REGION_SECONDS = 1 / 2.0e6   # ... per cell × antenna on 2 threads (measured 2.2e6 cell-antennas/s)


@dataclass(frozen=True)
class Estimate:
    """What a run is expected to need: peak memory (bytes), computing time (s), output size (bytes)."""

    what: str
    memory_bytes: float
    seconds: float
    output_bytes: float = 0.0

    def describe(self) -> str:
        """One line: ``about 1.2 GB of memory, 3 min, 250 MB of output``."""
        text = f"about {format_bytes(self.memory_bytes)} of memory and {format_seconds(self.seconds)}"
        return text + (f", {format_bytes(self.output_bytes)} of output" if self.output_bytes else "")


def format_bytes(n: float) -> str:
    """Bytes in decimal units (kB, MB, GB, TB, PB)."""
    n = float(n)
    for unit in ("B", "kB", "MB", "GB", "TB"):
        if abs(n) < 1000:
            return f"{n:.3g} {unit}"
        n /= 1000
    return f"{n:.3g} PB"


def format_seconds(s: float) -> str:
    """A duration in s, min, h or days."""
    s = float(s)
    if s < 90:
        return f"{s:.2g} s"
    if s < 5400:
        return f"{s / 60:.2g} min"
    if s < 2 * 86400:
        return f"{s / 3600:.2g} h"
    return f"{s / 86400:.3g} days"


def physical_memory_bytes() -> float:
    """Physical memory of this machine (bytes); 8 GiB if the OS does not say."""
    try:
        return float(os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE"))
    except (ValueError, OSError, AttributeError):  # pragma: no cover - not POSIX
        return 8.0 * 2**30


def check_estimate(est: Estimate, *, allow: bool = False, hint: str = "") -> Estimate:
    """Raise :class:`ResourceLimitError` if ``est`` exceeds the memory or time limit (unless ``allow``)."""
    if allow:
        return est
    mem_limit = MEMORY_FRACTION * physical_memory_bytes()
    problems = []
    if est.memory_bytes > mem_limit:
        problems.append(f"{format_bytes(est.memory_bytes)} of memory (limit {format_bytes(mem_limit)}, "
                        f"{MEMORY_FRACTION:.0%} of this machine's)")
    if est.seconds > TIME_LIMIT_S:
        problems.append(f"{format_seconds(est.seconds)} of computing (limit {format_seconds(TIME_LIMIT_S)})")
    if problems:
        raise ResourceLimitError(f"{est.what} would need about {' and '.join(problems)}; refused before any "
                                 f"work{'; ' + hint if hint else ''} (or pass {ALLOW_FLAG} to run it anyway)")
    return est


def check_free_space(folder, needed_bytes: float, *, what: str = "the outputs", label: str | None = None) -> None:
    """Raise :class:`OutputError` if ``folder``'s file system has less room than ``needed_bytes``.

    The message starts with ``label`` (e.g. the outputs as the user named them), else ``folder``.
    """
    if not needed_bytes or needed_bytes <= 0:
        return
    try:
        st = os.statvfs(folder)
    except OSError:
        return  # not knowable here: the write itself will say
    free = st.f_bavail * st.f_frsize
    if needed_bytes * 1.05 + _DISK_MARGIN > free:
        raise OutputError(f"{label or folder}: {what} need about {format_bytes(needed_bytes)} but only "
                          f"{format_bytes(free)} is free on that file system; free some space or choose "
                          "another folder")


_PLAIN = {errno.EACCES: "permission denied", errno.EPERM: "operation not permitted",
          errno.EROFS: "read-only file system", errno.ENOSPC: "no space left on device",
          errno.EDQUOT: "disk quota exceeded", errno.EISDIR: "is a folder, not a file",
          errno.ENOTDIR: "a part of the path is not a folder", errno.ENOENT: "no such file or folder",
          errno.ENAMETOOLONG: "file name too long", errno.EFBIG: "file too large for the file system",
          errno.ELOOP: "too many symbolic links", errno.EIO: "input/output error (disk or device)",
          errno.EEXIST: "already exists", errno.EXDEV: "crosses file systems", errno.EBUSY: "busy"}


def os_error_message(exc: OSError) -> str:
    """The reason of an OS error in plain words (``read-only file system``), without the path."""
    if exc.errno in _PLAIN:
        return _PLAIN[exc.errno]
    text = exc.strerror or str(exc) or type(exc).__name__
    return text[:1].lower() + text[1:]


def map_output_bytes(*, cells: int, antennas: int, scenarios: int, geotiff: bool) -> float:
    """Expected size of a ``subsurf map`` folder (bytes).

    Measured on the example survey (4452 cells, 4 antennas, 2 scenarios): the zlib-compressed
    NetCDF 924 kB (26 B per cell × antenna × scenario), GeoTIFF layers 4.2 B per cell and
    layer (3 layers per antenna and scenario), PNG figures and tables about 0.5 MB; rounded up.
    """
    n = cells * antennas * scenarios
    return n * (32 + (3 * 4.5 if geotiff else 0)) + 0.6e6


def region_estimate(*, cells: int, antennas: int, layers: int, chunk: int, tiles_in_flight: int,
                    soil_quantities: int = 0, map_out: bool = True) -> Estimate:
    """Estimate of ``subsurf region``: tiles in flight for memory, every cell × antenna for time.

    Costs measured with benchmarks/bench_scale.py (2 threads, chunk 256, 6 antennas): about 2.2e6
    cell-antennas per second end to end and a peak of 488 MiB with 4 tiles in flight.
    """
    tile = min(chunk * chunk, cells)
    memory = _REGION_BASE_BYTES + tiles_in_flight * tile * max(antennas, 1) * _REGION_CELL_BYTES
    seconds = cells * antennas * _REGION_SECONDS if map_out else cells * soil_quantities * 2e-8
    # float32 values uncompressed: an upper bound (measured with zlib level 1: 69 B per cell for 6 antennas and
    # 2 extra layers against 96 B here; the synthetic soil 9 B per cell against 12 B)
    # (+ 1 B per cell and antenna: the int8 too_shallow layer)
    out = 4.0 * cells * ((2 + layers) * antennas * map_out + soil_quantities) + cells * antennas * map_out
    what = f"subsurf region of {cells:,} cells" + (f" x {antennas} antennas" if map_out else "")
    return Estimate(f"{what} (tiles of {chunk}x{chunk} cells, {tiles_in_flight} at once)", memory, seconds, out)


def layered_depth_estimate(*, draws: int, picks: int, layers: int) -> Estimate:
    """Estimate of the layered depth Monte Carlo: arrays of draws × picks × layers."""
    n = float(draws) * picks * layers
    return Estimate(f"the layered-depth Monte Carlo ({draws:,} draws x {picks:,} times x {layers} layers)",
                    n * _MC_DEPTH_BYTES, n * _MC_DEPTH_SECONDS)
