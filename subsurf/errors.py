"""The project's own errors and warnings, and the small checks that raise them.

Every invalid input to a public function raises a subclass of :class:`SubsurfError`
(itself a ``ValueError``) whose message names the parameter, its value and the
allowed range.  Leaving a model's published validity range is a
:class:`ModelRangeWarning`, issued once per call with ``stacklevel`` pointing at
the caller.
"""

from __future__ import annotations

import warnings

import numpy as np

__all__ = [
    "SubsurfError",
    "InputError",
    "ModelRangeError",
    "FileInputError",
    "OutputExistsError",
    "OutputBusyError",
    "OutputError",
    "ResourceLimitError",
    "ModelRangeWarning",
    "LowLossApproximationWarning",
    "check_finite",
    "check_positive",
    "check_nonnegative",
    "check_range",
    "warn_outside",
    "check_seed",
    "check_broadcast",
]


class SubsurfError(ValueError):
    """Base of every error subsurf raises on purpose."""


class InputError(SubsurfError):
    """A parameter value is impossible or of the wrong kind."""


class ModelRangeError(SubsurfError):
    """A model was asked for something physically outside what it can represent."""


class FileInputError(SubsurfError):
    """A file's content is invalid; the message names the file, row and field."""

    def __init__(self, path, message: str, *, row: int | None = None, field: str | None = None):
        where = str(path)
        if row is not None:
            where += f", row {row}"
        if field is not None:
            where += f", field '{field}'"
        super().__init__(f"{where}: {message}")
        self.path = str(path)
        self.row = row
        self.field = field

    def __reduce__(self):  # pickled (e.g. from a figure process) with its message as composed
        return (_rebuild_file_input_error, (type(self), str(self), self.path, self.row, self.field))


def _rebuild_file_input_error(cls, text: str, path: str, row, field):
    exc = cls.__new__(cls)
    SubsurfError.__init__(exc, text)
    exc.path, exc.row, exc.field = path, row, field
    return exc


class OutputExistsError(SubsurfError):
    """An output exists and overwriting it was not asked for."""


class OutputBusyError(OutputExistsError):
    """Another subsurf run is writing the same output right now."""


class OutputError(SubsurfError):
    """An output cannot be written (missing folder, read-only, no space ...); the message names the path."""


class ResourceLimitError(InputError):
    """A run would need more memory, time or disk than the stated limits; refused before any work."""


class ModelRangeWarning(UserWarning):
    """A model is used outside its published validity range."""


class LowLossApproximationWarning(UserWarning):
    """A low-loss approximation is used where the loss tangent is not small."""


def _describe(value) -> str:
    arr = np.asarray(value)
    if arr.ndim == 0:
        v = arr.item()
        return f"{v:.6g}" if isinstance(v, (int, float, complex)) else repr(v)
    flat = arr.ravel()
    if np.iscomplexobj(flat):
        return f"array of {arr.size} values"
    bad = flat[~np.isfinite(flat)] if np.issubdtype(flat.dtype, np.floating) else flat
    sample = bad[:1] if bad.size else flat[:1]
    return f"array of {arr.size} values (e.g. {sample[0]:.6g})"


def _as_float(name: str, value) -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be numeric, got {value!r}") from None
    return arr


def check_finite(name: str, value) -> np.ndarray:
    """Return ``value`` as a float array, raising if any element is NaN or infinite."""
    arr = _as_float(name, value)
    if not np.all(np.isfinite(arr)):
        bad = arr[~np.isfinite(arr)].ravel()[0]
        raise InputError(f"{name} must be finite, got {float(bad)!r}")
    return arr


def check_positive(name: str, value, *, unit: str = "") -> np.ndarray:
    """Return ``value`` as a float array, raising unless every element is > 0 and finite."""
    arr = check_finite(name, value)
    if np.any(arr <= 0):
        bad = arr[arr <= 0].ravel()[0]
        raise InputError(f"{name} must be > 0{(' ' + unit) if unit else ''}, got {bad:.6g}")
    return arr


def check_nonnegative(name: str, value, *, unit: str = "") -> np.ndarray:
    """Return ``value`` as a float array, raising unless every element is >= 0 and finite."""
    arr = check_finite(name, value)
    if np.any(arr < 0):
        bad = arr[arr < 0].ravel()[0]
        raise InputError(f"{name} must be >= 0{(' ' + unit) if unit else ''}, got {bad:.6g}")
    return arr


def check_range(name: str, value, low: float, high: float, *, unit: str = "",
                error: type[SubsurfError] = InputError, hint: str = "") -> np.ndarray:
    """Return ``value`` as a float array, raising unless ``low <= value <= high`` everywhere."""
    arr = check_finite(name, value)
    outside = (arr < low) | (arr > high)
    if np.any(outside):
        bad = arr[outside].ravel()[0]
        u = f" {unit}" if unit else ""
        msg = f"{name} must be between {low:g} and {high:g}{u}, got {bad:.6g}"
        if hint:
            msg += f"; {hint}"
        raise error(msg)
    return arr


def warn_outside(model: str, name: str, value, low: float, high: float, *, unit: str = "",
                 stacklevel: int = 3) -> bool:
    """Warn once (one warning for the whole array) if any ``value`` lies outside [low, high].

    Returns True when a warning was issued.
    """
    arr = np.asarray(value, dtype=float)
    finite = arr[np.isfinite(arr)]
    outside = (finite < low) | (finite > high)
    if finite.size and np.any(outside):
        u = f" {unit}" if unit else ""
        n = int(np.count_nonzero(outside))
        lo, hi = float(finite.min()), float(finite.max())
        rng = f"{lo:.4g}" if lo == hi else f"{lo:.4g} to {hi:.4g}"
        warnings.warn(
            f"{model}: {name} = {rng}{u} is outside the published validity range "
            f"{low:g} to {high:g}{u} ({n} of {finite.size} values); results are extrapolated",
            ModelRangeWarning,
            stacklevel=stacklevel,
        )
        return True
    return False


def check_seed(seed, name: str = "seed") -> int:
    """Return ``seed`` as an int, raising unless it is an integer >= 0 (numpy's rule for seeds)."""
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise InputError(f"{name} must be an integer >= 0 (random generator seed), got {seed!r}")
    return int(seed)


def check_broadcast(**named) -> tuple:
    """Broadcast shape of the named inputs, raising InputError naming every shape if they do not broadcast."""
    shapes = {k: np.shape(v) for k, v in named.items() if v is not None}
    try:
        return np.broadcast_shapes(*shapes.values())
    except ValueError:
        listed = ", ".join(f"{k} {v}" for k, v in shapes.items())
        raise InputError(f"inputs must broadcast together (numpy rules), got shapes {listed}; "
                         "e.g. use freq[:, None] against arrays of shape (n,)") from None
