"""Private helpers shared by the soil modules: one validity warning per call."""

from __future__ import annotations

import warnings

import numpy as np

from ..errors import ModelRangeWarning

__all__ = ["warn_validity"]


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
