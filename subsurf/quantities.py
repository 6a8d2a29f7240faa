"""pint Quantities at the public Python API: converted to SI, or refused, never misread.

The physics works on plain SI floats and arrays.  A user in a notebook may pass
``pint`` Quantities (``Q_(250, "MHz")``); numpy would silently strip their units (250 read
as Hz), which is the worst kind of wrong answer.  :func:`accepts_quantities` wraps a
public function so that each Quantity argument is converted to the SI unit that parameter
expects, and a Quantity of the wrong dimensionality, or one given where the function
takes no units, is refused with one line naming the parameter.

Plain numbers and arrays pass through untouched (one type check per argument), and pint
is never imported unless a Quantity is actually passed.
"""

from __future__ import annotations

import functools
import inspect

from .errors import InputError

__all__ = ["accepts_quantities", "is_quantity", "to_si_magnitude"]

#: What each SI unit is called in messages.
_KIND = {"Hz": "a frequency", "S/m": "a conductivity", "m": "a length", "s": "a time",
         "m/s": "a velocity", "degC": "a temperature", "kg/m**3": "a density",
         "dimensionless": "a dimensionless number", "m**2": "an area", "W": "a power"}


def is_quantity(value) -> bool:
    """True for a pint Quantity (or a numpy array wrapped in one), without importing pint."""
    cls = type(value)
    return cls.__module__.split(".")[0] == "pint" and hasattr(value, "units") and hasattr(value, "to")


def to_si_magnitude(value, unit: str, *, name: str):
    """Magnitude of the Quantity ``value`` in ``unit`` (a float or a numpy array)."""
    try:
        converted = value.to(unit)
    except Exception as exc:  # pint.DimensionalityError and friends
        kind = _KIND.get(unit, f"a quantity in {unit}")
        raise InputError(f"{name} must be {kind} ({unit}); got {value!s} "
                         f"({type(exc).__name__})") from None
    return converted.magnitude


def accepts_quantities(**units: str | None):
    """Decorate a public function so its Quantity arguments are converted to SI.

    Parameters
    ----------
    **units
        Parameter name -> SI unit it is converted to (``"Hz"``, ``"S/m"``, ``"m"``, ``"s"``,
        ``"m/s"``, ``"degC"``, ``"kg/m**3"``, ``"dimensionless"``).  ``None`` (or a parameter
        not named) means the parameter takes no Quantity: passing one is an error.

    Notes
    -----
    Fractions (moisture, porosity, sand, clay) are ``"dimensionless"``: ``Q_(20, "percent")``
    becomes 0.2.  Temperatures are converted with their offset (``Q_(293.15, "K")`` → 20 °C).
    """

    def decorate(func):
        signature = inspect.signature(func)

        @functools.wraps(func)
        def wrapper(*args, **kwargs):
            if not any(is_quantity(a) for a in args) and not any(is_quantity(v) for v in kwargs.values()):
                return func(*args, **kwargs)
            bound = signature.bind(*args, **kwargs)
            for name, value in bound.arguments.items():
                if not is_quantity(value):
                    continue
                unit = units.get(name)
                if unit is None:
                    raise InputError(f"{func.__name__}: {name} takes a plain number, not a quantity "
                                     f"with units ({value!s})")
                bound.arguments[name] = to_si_magnitude(value, unit, name=name)
            return func(*bound.args, **bound.kwargs)

        wrapper.__si_units__ = dict(units)
        return wrapper

    return decorate
