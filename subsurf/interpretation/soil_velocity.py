"""Velocity of a described soil, with a Monte Carlo spread from the spread of its inputs.

Physics module: SI units, no files, no printing.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError, check_nonnegative, check_positive, check_seed

__all__ = ["SoilVelocity", "velocity_from_soil"]


@dataclass(frozen=True)
class SoilVelocity:
    """Velocity of a described soil with its spread from the spread of the inputs."""

    velocity: float
    velocity_sd: float
    velocity_p05: float
    velocity_p95: float
    draws: int
    seed: int
    samples: np.ndarray = field(repr=False)


def velocity_from_soil(soil, freq_hz: float, *, sd: dict | None = None, draws: int = 4000,
                       seed: int = 0) -> SoilVelocity:
    """Phase velocity (m/s) of a described soil, with Monte Carlo spread from its inputs.

    Parameters
    ----------
    soil : subsurf.soil.Soil
        The nominal description (any model the soil package offers).
    freq_hz : float
        Centre frequency of the antenna, Hz.
    sd : dict, optional
        Standard deviation of each uncertain input, keyed by the Soil field name
        (e.g. ``{"moisture": 0.03, "temp_c": 3.0}``), in the field's own units.
        Bounded inputs (moisture up to the soil's porosity, fractions, temperature) are
        drawn from the normal truncated to their range, positive ones (conductivities,
        salinity) from a log-normal with the given mean and standard deviation
        (:mod:`subsurf.ground.spread`): every draw is a possible soil and none piles up
        on a bound.
    draws : int, optional
        Number of Monte Carlo draws (≥ 100).
    seed : int, optional
        Seed of ``numpy.random.default_rng``.

    Returns
    -------
    SoilVelocity
        Velocity at the nominal inputs, the standard deviation and 5–95 % range of the
        draws, and the draw count and seed used.

    Notes
    -----
    The soil package gives ε(f) and σ; the velocity is the exact phase velocity ω/β of
    :func:`subsurf.propagation.wave_properties`.
    """
    import dataclasses

    from ..waves.propagation import wave_properties

    f = float(check_positive("freq_hz", freq_hz, unit="Hz"))
    if isinstance(draws, bool) or not isinstance(draws, (int, np.integer)) or draws < 100:
        raise InputError(f"draws must be an integer >= 100 for a meaningful spread, got {draws!r}")
    seed = check_seed(seed)
    eps, sigma = soil.electrical(f)
    v_nom = float(np.asarray(wave_properties(eps, sigma, f).velocity).ravel()[0])
    from ..ground.spread import draw_soil_input

    rng = np.random.default_rng(seed)
    changes = {}
    porosity = getattr(soil, "porosity_value", None)
    for name, s in (sd or {}).items():
        if not hasattr(soil, name):
            raise InputError(f"sd: the soil description has no field {name!r}")
        base = getattr(soil, name)
        if base is None:
            raise InputError(f"sd: field {name!r} is not set in the soil description, so it cannot vary")
        if isinstance(base, str) or np.size(base) != 1:
            raise InputError(f"sd: field {name!r} must be a single number to vary, got {base!r}")
        s = float(check_nonnegative(f"sd[{name!r}]", s))
        # water cannot exceed the pore space (Soil refuses θ > φ)
        upper = porosity if name == "moisture" and "porosity" not in (sd or {}) else None
        changes[name] = draw_soil_input(rng, name, float(np.asarray(base, dtype=float)), s, int(draws),
                                        upper=None if upper is None else float(upper))
    if "moisture" in changes and "porosity" in changes:
        # both vary: a draw's water still fits its own pores
        changes["moisture"] = np.minimum(changes["moisture"], changes["porosity"])
    if changes:
        varied = dataclasses.replace(soil, **changes)
        eps_d, sigma_d = varied.electrical(f)
        v = np.asarray(wave_properties(eps_d, sigma_d, f).velocity, dtype=float).ravel()
    else:
        v = np.full(int(draws), v_nom)
    return SoilVelocity(velocity=v_nom, velocity_sd=float(np.std(v, ddof=1)),
                        velocity_p05=float(np.percentile(v, 5)), velocity_p95=float(np.percentile(v, 95)),
                        draws=int(draws), seed=int(seed), samples=v)
