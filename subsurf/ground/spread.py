"""Random draws of uncertain soil inputs that respect each quantity's physical bounds.

A normal draw clipped at a bound piles probability onto the bound itself: a moisture of
0.10 ± 0.06 clipped at 0 puts 5 % of the draws at exactly bone-dry soil, and the Monte
Carlo velocity band then reaches the velocity of oven-dry sand.  The draws here are built
so that every value is physically possible and none sits on a bound by construction:

* **bounded quantities** (volumetric moisture between 0 and the pore space, fractions
  between 0 and 1, liquid-water temperature between 0 and 100 °C): the normal with the
  stated mean and standard deviation *truncated* to the range (scipy.stats.truncnorm),
  i.e. redrawn rather than clipped.  Its mean and spread move towards the middle of the
  range only when the stated spread reaches a bound;
* **positive quantities** (conductivities, salinity): a log-normal with exactly the
  stated mean m and standard deviation s (σ_ln² = ln(1 + s²/m²), μ_ln = ln m − σ_ln²/2).
  Conductivities of soils and pore waters are commonly described as log-normal (common
  practice); a log-normal is positive by construction and right-skewed as they are.

Physics module: SI units, no files, no printing.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError

__all__ = ["POSITIVE_FIELDS", "BOUNDED_FIELDS", "bounded_normal", "positive_lognormal", "draw_soil_input"]

#: Soil fields drawn from a log-normal (strictly positive, right-skewed).
POSITIVE_FIELDS = frozenset({"pore_water_ec25", "pore_water_salinity_psu", "pore_water_tds",
                             "bulk_density", "particle_density", "clay_cec", "stone_size",
                             "surface_roughness"})

#: Bounded soil fields and their (low, high) ranges in the field's SI units; moisture's upper
#: bound is the soil's pore space when it is known.
BOUNDED_FIELDS = {"moisture": (0.0, 1.0), "sand": (0.0, 1.0), "clay": (0.0, 1.0),
                  "porosity": (0.0, 1.0), "stone_fraction": (0.0, 1.0), "temp_c": (0.0, 100.0)}


def bounded_normal(rng: np.random.Generator, mean: float, sd: float, size: int, *,
                   low: float | None = None, high: float | None = None) -> np.ndarray:
    """Draws of a normal(mean, sd) truncated to [low, high] (None: unbounded on that side)."""
    from scipy.stats import truncnorm

    mean, sd = float(mean), float(sd)
    if sd < 0 or not np.isfinite(sd):
        raise InputError(f"standard deviation must be a finite number >= 0, got {sd!r}")
    lo = -np.inf if low is None else float(low)
    hi = np.inf if high is None else float(high)
    if not lo <= mean <= hi:
        raise InputError(f"mean {mean!r} lies outside its range [{lo}, {hi}]")
    if sd == 0:
        return np.full(int(size), mean)
    a, b = (lo - mean) / sd, (hi - mean) / sd
    out = truncnorm.rvs(a, b, loc=mean, scale=sd, size=int(size), random_state=rng)
    return np.clip(out, lo, hi)   # only rounding at the last bit can leave the range


def positive_lognormal(rng: np.random.Generator, mean: float, sd: float, size: int) -> np.ndarray:
    """Draws of a log-normal with the given arithmetic mean (> 0) and standard deviation."""
    mean, sd = float(mean), float(sd)
    if sd < 0 or not np.isfinite(sd):
        raise InputError(f"standard deviation must be a finite number >= 0, got {sd!r}")
    if sd == 0:
        return np.full(int(size), mean)
    if mean <= 0:
        raise InputError(f"a positive quantity with a spread needs a mean > 0, got {mean!r}")
    s2 = np.log1p((sd / mean) ** 2)
    return rng.lognormal(np.log(mean) - s2 / 2.0, np.sqrt(s2), int(size))


def draw_soil_input(rng: np.random.Generator, name: str, mean: float, sd: float, size: int, *,
                    upper: float | None = None) -> np.ndarray:
    """Draws of the soil input ``name`` with the distribution its kind calls for.

    ``upper`` tightens a bounded quantity's upper bound (the pore space for moisture).
    Fields that are neither bounded nor positive by kind are drawn from a plain normal.
    """
    if name in POSITIVE_FIELDS:
        return positive_lognormal(rng, mean, sd, size)
    if name in BOUNDED_FIELDS:
        lo, hi = BOUNDED_FIELDS[name]
        if upper is not None:
            hi = min(hi, float(upper))
        return bounded_normal(rng, min(max(mean, lo), hi), sd, size, low=lo, high=hi)
    return bounded_normal(rng, mean, sd, size)
