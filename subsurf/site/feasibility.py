"""Survey feasibility: the soil → propagation → detection chain evaluated over a grid.

Everything here works element-wise on numpy arrays (and so on xarray DataArrays via
``xarray.apply_ufunc``, including dask-chunked ones): the per-cell chain is one pure
function, :func:`feasibility_chain`, whose inputs broadcast together — soil fields of
any shape against antenna parameters on a leading axis.  There are no per-cell Python
loops.  :func:`evaluate` runs the chain for every antenna and scenario of a survey on
the grid from :mod:`subsurf.grid`; :func:`reach_probability` estimates, per cell, the
probability that the target depth is reachable from the input uncertainties
(:mod:`subsurf.site.probability`); :func:`area_fractions` summarises.  No file I/O here.

The physics is not re-derived: soil → (ε, σ) is :class:`subsurf.soil.Soil`, wave
properties are :func:`subsurf.propagation.wave_properties`, the loss budget, maximum
depth, margin and resolution are from :mod:`subsurf.detection`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError, SubsurfError

__all__ = [
    "AntennaParameters",
    "SOIL_FIELDS",
    "feasibility_chain",
    "apply_scenario",
    "evaluate",
    "recommend_antenna",
    "reach_probability",
    "area_fractions",
    "LAYER_ATTRS",
]

#: survey quantity name -> :class:`subsurf.soil.Soil` field name
SOIL_FIELDS = {
    "moisture": "moisture",
    "pore_water_ec": "pore_water_ec25",
    "salinity": "pore_water_salinity_psu",
    "clay": "clay",
    "sand": "sand",
    "temperature": "temp_c",
    "bulk_density": "bulk_density",
}

#: CF attributes of the output layers (standard names only where CF defines one).
LAYER_ATTRS = {
    "eps_real": {"long_name": "real part of the relative permittivity of the ground", "units": "1"},
    "eps_imag": {"long_name": "imaginary part (loss) of the relative dielectric permittivity, eps = eps' - j eps''",
                 "units": "1"},
    "sigma": {"long_name": "DC electrical conductivity of the ground", "units": "S m-1"},
    "velocity": {"long_name": "radar wave phase velocity in the ground", "units": "m s-1"},
    "attenuation_db_per_m": {"long_name": "radar wave attenuation in the ground", "units": "dB m-1"},
    "max_depth": {"long_name": "maximum detectable depth of the target", "units": "m"},
    "margin_db": {"long_name": "detection margin at the target depth (performance minus two-way loss)",
                  "units": "dB"},
    "vertical_resolution": {"long_name": "vertical resolution (quarter wavelength in the ground at the antenna "
                                         "centre frequency)",
                            "units": "m"},
    "reach_probability": {"long_name": "probability that the target depth is reachable", "units": "1"},
    "reach_probability_se": {"long_name": "estimated error of the reach probability (Monte Carlo standard error "
                                          "where sampled, linearisation error bound elsewhere)", "units": "1"},
}


@dataclass(frozen=True)
class AntennaParameters:
    """What the chain needs of an antenna (a catalogue Antenna provides the same names)."""

    name: str
    centre_freq_hz: float
    performance_db: float
    gain: float = 1.0
    bandwidth_hz: float | None = None


def _soil_porosity_limit(texture, bulk_density):
    """Porosity 1 − ρ_b/ρ_s implied by the bulk density or texture (None when unknown)."""
    from ..ground.models import DEFAULT_PARTICLE_DENSITY
    from ..ground.presets import texture_preset

    preset = texture_preset(texture) if texture else {}
    rs = preset.get("particle_density", DEFAULT_PARTICLE_DENSITY)
    rb = bulk_density if bulk_density is not None else preset.get("bulk_density")
    return None if rb is None else 1.0 - np.asarray(rb, dtype=float) / rs


def feasibility_chain(moisture, *, freq_hz, performance_db, target, target_depth_m, gain=1.0,
                      bandwidth_hz=None, sand=None, clay=None, bulk_density=None, temp_c=20.0,
                      pore_water_ec25=None, pore_water_salinity_psu=None, texture=None,
                      model="crim", band_points: int = 97, surface_loss_db=None, margin_only: bool = False):
    """Per-cell chain: soil facts → ε, σ, velocity, attenuation, maximum depth, margin, resolution.

    Parameters
    ----------
    moisture : array_like
        Volumetric water content (m³/m³).  NaN marks a cell without data (outputs NaN).
    freq_hz, performance_db, gain : array_like
        Antenna centre frequency (Hz), system performance (dB) and one-way gain in the
        ground; broadcast against the soil fields (e.g. shape (n_antennas, 1) against
        fields of shape (n_cells,)).
    target : subsurf.detection.Target
        Kind, size and material of the target.
    target_depth_m : float
        Depth of the target's top (m).
    bandwidth_hz : array_like, optional
        Antenna bandwidth; when given the vertical resolution uses the centroid of the
        spectrum received from the target depth, otherwise the centre frequency.
    sand, clay, bulk_density, temp_c, pore_water_ec25, pore_water_salinity_psu : array_like, optional
        Soil fields in SI as for :class:`subsurf.soil.Soil` (fractions, kg/m³, °C, S/m, PSU).
    texture : str, optional
        Texture preset filling the soil fields not given.
    model : {"crim", "peplinski", "topp"}
        Soil dielectric model.
    margin_only : bool
        Return only ``margin_db`` (what the Monte Carlo needs; about half the work).

    Returns
    -------
    dict of ndarray
        ``eps_real``, ``eps_imag``, ``sigma`` (S/m), ``velocity`` (m/s),
        ``attenuation_db_per_m``, ``max_depth`` (m), ``margin_db`` and
        ``vertical_resolution`` (m), each broadcast over all inputs.

    Notes
    -----
    ε(f), σ from :meth:`subsurf.soil.Soil.electrical`; γ = α + jβ, v = ω/β as in
    :func:`subsurf.propagation.wave_properties` (the same helper, computed once per block); L(d) = K₀ + 10·p·log10 d + 2·8.686·α·d
    and the depth where L = P from :func:`subsurf.detection.max_depth` (Lambert W);
    margin = P − L(d_target); vertical resolution λ_R/4 (Widess 1973).
    """
    from ..detection import budget as detection
    from ..ground import Soil
    from ..waves.propagation import NP_TO_DB

    fields = {"moisture": moisture, "sand": sand, "clay": clay, "bulk_density": bulk_density,
              "temp_c": temp_c, "pore_water_ec25": pore_water_ec25,
              "pore_water_salinity_psu": pore_water_salinity_psu}
    arrays = {k: np.asarray(v, dtype=float) for k, v in fields.items() if v is not None}
    shape = np.broadcast_shapes(*(a.shape for a in arrays.values()))
    valid = np.ones(shape, bool)
    for a in arrays.values():
        valid &= np.isfinite(a)
    if not np.any(valid):
        nan = np.full(np.broadcast_shapes(shape, np.shape(freq_hz), np.shape(performance_db)), np.nan)
        return {k: nan.copy() for k in LAYER_ATTRS if k not in ("reach_probability", "reach_probability_se")}
    # fill gaps with a valid placeholder so the vectorised chain runs, then blank them
    filled = {}
    for k, a in arrays.items():
        b = np.broadcast_to(a, shape)
        filled[k] = np.where(valid, b, b[valid].ravel()[0]) if not np.all(valid) else a
    soil = Soil(texture=texture, model=model, **filled)
    eps, sigma = soil.electrical(freq_hz)
    if margin_only:
        # ε, σ from the Soil just validated: not re-checked (as the full path below)
        margin = detection._grid_margin(target_depth_m, eps, sigma, freq_hz, performance_db, target=target,
                                        gain=gain, surface_loss_db=surface_loss_db)
        return {"margin_db": np.where(np.broadcast_to(valid, np.shape(margin)), margin, np.nan)}
    # ε, σ come from the Soil just validated: the loss budget skips re-checking them (one α, β evaluation
    # serves velocity, attenuation, both reflection coefficients, the maximum depth and the margin)
    dmax, margin, alpha, beta = detection._grid_depth_and_margin(
        target_depth_m, eps, sigma, freq_hz, performance_db, target=target, gain=gain,
        surface_loss_db=surface_loss_db)
    omega = 2.0 * np.pi * np.asarray(freq_hz, dtype=float)
    if bandwidth_hz is None:
        vres = detection.vertical_resolution(2.0 * np.pi / beta)
    else:
        fc = np.asarray(freq_hz, dtype=float)
        bw = np.asarray(bandwidth_hz, dtype=float)
        # one band per antenna: fc, bw of shape (n_ant, 1...) -> spectra on a trailing axis
        fcs, bws = np.broadcast_arrays(fc, bw)
        vres = np.empty(np.broadcast_shapes(fcs.shape, np.shape(eps)))
        band_soil = Soil(texture=texture, model=model, **{k: np.asarray(v)[..., None] for k, v in filled.items()})
        for idx in np.ndindex(fcs.shape[:1] if fcs.ndim else ()):  # loop over antennas only
            f, amp = detection.band_spectrum(float(fcs[idx].ravel()[0]), float(bws[idx].ravel()[0]),
                                             n=band_points)
            e_b, s_b = band_soil.electrical(f)
            res = detection.resolution_at_depth(e_b, s_b, f, amp, target_depth_m)
            vres[idx] = np.broadcast_to(res.vertical_m, vres[idx].shape)
    out = {
        "eps_real": eps.real, "eps_imag": -eps.imag, "sigma": sigma, "velocity": omega / beta,
        "attenuation_db_per_m": alpha * NP_TO_DB, "max_depth": dmax, "margin_db": margin,
        "vertical_resolution": vres,
    }
    full = np.broadcast_shapes(*(np.shape(v) for v in out.values()))
    if np.all(valid):  # no gaps to blank: skip the masking pass (same values)
        return {k: v if np.shape(v) == full else np.array(np.broadcast_to(v, full)) for k, v in out.items()}
    vmask = np.broadcast_to(valid, full)
    return {k: np.where(vmask, np.broadcast_to(v, full), np.nan) for k, v in out.items()}


def apply_scenario(values: dict, scenario) -> dict:
    """Soil fields modified by a scenario: ``set`` replaces, then ``scale`` multiplies, then ``offset`` adds.

    The result is clipped to each quantity's accepted range (moisture stays within 0–0.7).
    """
    from .survey import QUANTITIES

    out = dict(values)
    for key, v in scenario.set.items():
        ref = next(iter(values.values()))
        out[key] = np.where(np.isfinite(ref), v, np.nan)
    for key, f in scenario.scale.items():
        if key not in out:
            raise InputError(f"scenario {scenario.name!r} scales {key}, which no input gives")
        out[key] = out[key] * f
    for key, d in scenario.offset.items():
        if key not in out:
            raise InputError(f"scenario {scenario.name!r} offsets {key}, which no input gives")
        out[key] = out[key] + d
    for key in list(out):
        q = QUANTITIES[key]
        out[key] = np.clip(out[key], q.low, q.high)
    return out


def _chain_kwargs(values: dict) -> dict:
    return {SOIL_FIELDS[k]: v for k, v in values.items()}


def _antenna_axes(antennas, ndim: int):
    shape = (-1,) + (1,) * ndim
    freq = np.array([a.centre_freq_hz for a in antennas], dtype=float).reshape(shape)
    perf = np.array([getattr(a, "effective_performance_db", a.performance_db) for a in antennas],
                    dtype=float).reshape(shape)
    gain = np.array([getattr(a, "gain", 1.0) or 1.0 for a in antennas], dtype=float).reshape(shape)
    bws = [getattr(a, "bandwidth_hz", None) for a in antennas]
    bw = None if any(b is None for b in bws) else np.array(bws, dtype=float).reshape(shape)
    return freq, perf, gain, bw


def _clip_moisture(values: dict, *, texture, margin: float = 0.995):
    phi = _soil_porosity_limit(texture, values.get("bulk_density"))
    if phi is not None and "moisture" in values:
        values = dict(values)
        values["moisture"] = np.minimum(values["moisture"], margin * phi)
    return values


def evaluate(values: dict, antennas, *, target, target_depth_m, texture=None, model="crim"):
    """The chain for every antenna at every cell.

    Moisture above the porosity (e.g. from a wet scenario) is clipped to saturation.

    Parameters
    ----------
    values : dict of str -> ndarray
        Soil quantities (survey names, SI) of one common shape, NaN outside the site.
    antennas : sequence of objects with ``centre_freq_hz``, ``performance_db``, ``gain``, ``bandwidth_hz``
    target : subsurf.detection.Target
    target_depth_m : float

    Returns
    -------
    dict of ndarray
        Layers of :func:`feasibility_chain` with a leading antenna axis.
    """
    ndim = np.ndim(next(iter(values.values())))
    freq, perf, gain, _ = _antenna_axes(antennas, ndim)
    values = _clip_moisture(values, texture=texture)
    try:
        # Maps use lambda/4 at the centre frequency (bandwidth_hz=None): the received-band centroid of
        # detection.resolution_at_depth needs a fine frequency grid in lossy ground and costs ~100x more.
        return feasibility_chain(freq_hz=freq, performance_db=perf, gain=gain, bandwidth_hz=None, target=target,
                                 target_depth_m=target_depth_m, texture=texture, model=model,
                                 **_chain_kwargs(values))
    except SubsurfError as exc:
        raise InputError(f"soil inputs on the grid are not physically possible: {exc}") from None


def recommend_antenna(margin_db, freq_hz, *, reaches_db=None):
    """Index of the recommended antenna per cell (−1 where none reaches the target).

    Parameters
    ----------
    margin_db : ndarray, shape (n_antennas, ...)
    freq_hz : sequence of float, length n_antennas

    Notes
    -----
    Among antennas with a margin of at least ``reaches_db`` (default
    :data:`subsurf.detection.REACHES_MARGIN_DB`) the highest centre frequency (finest
    resolution) is chosen; where none has that headroom, the antenna with the largest
    non-negative margin; where every margin is negative, −1.
    """
    from ..detection.budget import REACHES_MARGIN_DB

    reaches = REACHES_MARGIN_DB if reaches_db is None else reaches_db
    m = np.asarray(margin_db, dtype=float)
    f = np.asarray(freq_hz, dtype=float).reshape((-1,) + (1,) * (m.ndim - 1))
    good = m >= reaches
    score_f = np.where(good, f, -np.inf)
    best_f = np.argmax(score_f, axis=0)
    any_good = np.any(good, axis=0)
    mm = np.where(np.isfinite(m), m, -np.inf)
    best_m = np.argmax(mm, axis=0)
    any_ok = np.max(mm, axis=0) >= 0
    return np.where(any_good, best_f, np.where(any_ok, best_m, -1)).astype(np.int16)


def reach_probability(values: dict, sds: dict, antennas, *, target, target_depth_m, draws: int, seed: int,
                      texture=None, model="crim", method="auto"):
    """Per-cell probability that each antenna reaches the target depth (margin ≥ 0), and its error.

    The estimate of :func:`subsurf.site.probability.reach_probability` (first-order where
    it is accurate to 0.01, seeded Monte Carlo with ``draws`` draws where clipping or
    nonlinearity matter; draws keyed per tile of cells, so results do not depend on how the
    work is cut).

    Returns
    -------
    p, err : ndarray, shape (n_antennas, *cells)
        Probability and its estimated error (the Monte Carlo standard error √(p(1−p)/N)
        where sampled).
    """
    from .probability import reach_probability as _estimate

    r = _estimate(values, sds, antennas, target=target, target_depth_m=target_depth_m, draws=draws, seed=seed,
                  texture=texture, model=model, method=method)
    return r.probability, r.error


def area_fractions(margin_db, mask, *, probability=None, reaches_db=None):
    """Fractions of the site area where each antenna reaches the target.

    Returns
    -------
    dict of ndarray, each of shape (n_antennas,)
        ``reach`` (margin ≥ 0), ``reach_with_headroom`` (margin ≥ reaches_db) and, when
        ``probability`` is given, ``expected_reach`` (mean probability over the site) and
        ``reach_p90`` (probability ≥ 0.9).
    """
    from ..detection.budget import REACHES_MARGIN_DB

    reaches = REACHES_MARGIN_DB if reaches_db is None else reaches_db
    m = np.asarray(margin_db, dtype=float)
    inside = np.broadcast_to(np.asarray(mask, bool), m.shape[1:])
    n_in = max(int(inside.sum()), 1)
    out = {
        "reach": np.array([np.count_nonzero((mi >= 0) & inside) / n_in for mi in m]),
        "reach_with_headroom": np.array([np.count_nonzero((mi >= reaches) & inside) / n_in for mi in m]),
    }
    if probability is not None:
        p = np.asarray(probability, float)
        out["expected_reach"] = np.array([np.nanmean(np.where(inside, pi, np.nan)) for pi in p])
        out["reach_p90"] = np.array([np.count_nonzero((pi >= 0.9) & inside) / n_in for pi in p])
    return out
