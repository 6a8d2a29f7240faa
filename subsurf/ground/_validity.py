"""Private helpers shared by the soil modules: one validity warning per call."""

from __future__ import annotations

import warnings

import numpy as np

from ..errors import InputError, ModelRangeWarning, check_finite

__all__ = ["warn_validity", "check_density", "PARTICLE_DENSITY_RANGE", "BULK_DENSITY_RANGE"]

#: Accepted particle (grain) density, kg/m³: organic matter (~1400) to magnetite (~5200),
#: with room either side (from memory).  Values near 2.65 are g/cm³ given by mistake.
PARTICLE_DENSITY_RANGE = (1000.0, 6000.0)
#: Accepted dry bulk density, kg/m³: loose peat (tens of kg/m³) to dense rock; anything
#: below 10 is a g/cm³ value (1.2-2.0 for mineral soils) given by mistake.
BULK_DENSITY_RANGE = (10.0, 3000.0)


def check_density(name: str, value, low: float, high: float) -> np.ndarray:
    """Return ``value`` (kg/m³) as a float array, refusing values outside [low, high].

    Guards against the commonest unit slip of soil descriptions: a density in g/cm³
    (e.g. 1.5) where kg/m³ (1500) is expected.
    """
    arr = check_finite(name, value)
    outside = (arr < low) | (arr > high)
    if np.any(outside):
        bad = arr[outside].ravel()[0]
        hint = f"; in g/cm³ that would be {bad:.6g} g/cm³ = {bad * 1000:.6g} kg/m³" if bad < 10 else ""
        raise InputError(f"{name} must be between {low:g} and {high:g} kg/m³, got {bad:.6g}{hint}")
    return arr


def warn_validity(model: str, checks, *, stacklevel: int = 3) -> bool:
    """Issue at most one :class:`ModelRangeWarning` naming every parameter outside its range.

    Parameters
    ----------
    model : str
        Model name with its reference, e.g. ``"Peplinski et al. (1995)"``.
    checks : iterable of (name, value, low, high, unit)
        Published validity interval of each parameter; ``value`` may be an array.
    stacklevel : int
        Passed to :func:`warnings.warn`; 3 points at the caller of the public function.

    Returns
    -------
    bool
        True when a warning was issued.
    """
    parts = []
    for name, value, low, high, unit in checks:
        arr = np.asarray(value, dtype=float)
        finite = arr[np.isfinite(arr)]
        outside = (finite < low) | (finite > high)
        if finite.size and np.any(outside):
            lo, hi = float(finite[outside].min()), float(finite[outside].max())
            got = f"{lo:.4g}" if lo == hi else f"{lo:.4g} to {hi:.4g}"
            u = f" {unit}" if unit else ""
            parts.append(f"{name} = {got}{u} (valid {low:g} to {high:g}{u})")
    if parts:
        warnings.warn(
            f"{model}: {'; '.join(parts)} is outside the published validity range; "
            "results are extrapolated",
            ModelRangeWarning,
            stacklevel=stacklevel,
        )
        return True
    return False
