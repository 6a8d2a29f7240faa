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
    gain: float | None = None  # None: the in-ground coupling model (subsurf.detection.coupling)
    bandwidth_hz: float | None = None
    separation_m: float = 0.0
    pulse_length_s: float | None = None  # None: 1.5 periods of the centre frequency


def _soil_porosity_limit(texture, bulk_density):
    """Porosity 1 − ρ_b/ρ_s implied by the bulk density or texture (None when unknown)."""
    from ..ground.models import DEFAULT_PARTICLE_DENSITY
    from ..ground.presets import texture_preset

    preset = texture_preset(texture) if texture else {}
    rs = preset.get("particle_density", DEFAULT_PARTICLE_DENSITY)
    rb = bulk_density if bulk_density is not None else preset.get("bulk_density")
    return None if rb is None else 1.0 - np.asarray(rb, dtype=float) / rs


def feasibility_chain(moisture, *, freq_hz, performance_db, target, target_depth_m, gain=None,
                      bandwidth_hz=None, separation_m=0.0, pulse_length_s=None, sand=None, clay=None,
                      bulk_density=None, temp_c=20.0, pore_water_ec25=None, pore_water_salinity_psu=None,
                      texture=None, model="crim", surface_loss_db=None, margin_only=False, calibration=None):
    """Per-cell chain: soil facts → ε, σ, velocity, attenuation, maximum depth, margin, resolution.

    Parameters
    ----------
    moisture : array_like
        Volumetric water content (m³/m³).  NaN marks a cell without data (outputs NaN).
    freq_hz, performance_db : array_like
        Antenna centre frequency (Hz) and system performance with stacking (dB); broadcast
        against the soil fields (e.g. shape (n_antennas, 1) against fields of shape (n_cells,)).
    gain : array_like or None
        Fixed one-way gain in the ground (linear; NaN entries and None use the coupling
        model of :mod:`subsurf.detection.coupling`).
    separation_m, pulse_length_s : array_like
        Transmitter–receiver separation (m) and pulse length (s; None: 1.5/f_c) per antenna.
    target : subsurf.detection.Target
        Kind, size and material of the target.
    target_depth_m : float
        Depth of the target's top (m); for a range of depths of interest (``target.depth_top_m``
        set), its bottom: the margin is judged here, the blind zone and resolution at the top.
    bandwidth_hz : array_like, optional
        Antenna bandwidth (Hz): the budget is integrated over the band at the antenna's fixed
        frequencies (:func:`subsurf.detection.band.band_nodes`), as ``choose`` does; None
        evaluates it at the centre frequency only.
    sand, clay, bulk_density, temp_c, pore_water_ec25, pore_water_salinity_psu : array_like, optional
        Soil fields in SI as for :class:`subsurf.soil.Soil` (fractions, kg/m³, °C, S/m, PSU).
    texture : str, optional
        Texture preset filling the soil fields not given.
    model : {"crim", "peplinski", "topp"}
        Soil dielectric model.
    margin_only : bool
        Return only ``margin_db`` (what the Monte Carlo needs; about half the work).
    calibration : subsurf.site.calibrated.GridCalibration, optional
        Site calibration: the measured α(f), v replace the model's (:mod:`subsurf.site.calibrated`).

    Returns
    -------
    dict of ndarray
        ``eps_real``, ``eps_imag``, ``sigma`` (S/m), ``velocity`` (m/s),
        ``attenuation_db_per_m`` (at the centre frequency), ``max_depth`` (m), ``margin_db``,
        ``min_depth`` (m, blind zone), ``too_shallow`` (bool), ``received_freq`` (Hz),
        ``vertical_resolution`` (m, λ/4 at the received frequency) and ``blind_zone_slack_m`` (target
        depth, or the top of a range, minus the blind-zone depth, m), broadcast over all inputs.
        ``margin_only``: ``margin_db``, ``too_shallow`` and ``blind_zone_slack_m``.

    Notes
    -----
    ε(f), σ from :meth:`subsurf.soil.Soil.electrical` at the centre and band frequencies;
    the budget, depth, blind zone and resolution from
    :func:`subsurf.detection.evaluate.antenna_budget`, the function ``choose`` uses.
    """
    from ..detection.evaluate import antenna_budget, soil_loss_terms
    from ..ground import Soil
    from ..waves.propagation import NP_TO_DB, _alpha_beta

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
    freq = np.asarray(freq_hz, dtype=float)
    pulse = _pulse_lengths(freq, pulse_length_s)
    if bandwidth_hz is None:
        f_nodes, w_nodes = freq[..., None], np.ones(1)
    else:
        f_nodes, w_nodes = _band_axes(freq, np.asarray(bandwidth_hz, dtype=float))
    band_soil = Soil(texture=texture, model=model, **{k: np.asarray(v)[..., None] for k, v in filled.items()})
    eps_b, sig_b = band_soil.electrical(f_nodes)
    extra_b, surface_b = soil_loss_terms(band_soil, f_nodes, eps_b)
    if calibration is not None:  # the site's measured ground (scattering and roughness are in it)
        (eps_b, sig_b), extra_b, surface_b = calibration.electrical(band_soil, f_nodes, eps_b, sig_b), 0.0, 1.0
    fixed_gain = None if gain is None or np.all(np.isnan(np.asarray(gain, dtype=float))) else gain
    # ε, σ from the Soil just validated: the budget does not re-check them
    # a range of depths of interest: margin at target_depth_m (its bottom), blind zone and resolution at its top
    top = getattr(target, "depth_top_m", None)
    top = top if top is not None and top < target_depth_m else None
    res = antenna_budget(eps_b, sig_b, f_nodes, w_nodes, target, depth_m=target_depth_m, depth_top_m=top,
                         performance_db=performance_db, pulse_length_s=pulse, separation_m=separation_m,
                         gain=fixed_gain, surface_loss_db=0.0 if surface_loss_db is None else surface_loss_db,
                         extra_attenuation_np_per_m=extra_b, surface_power_factor=surface_b,
                         validate=False, margin_only=margin_only)
    if margin_only:
        vm = np.broadcast_to(valid, np.shape(res["margin_db"]))
        return {"margin_db": np.where(vm, res["margin_db"], np.nan), "too_shallow": res["too_shallow"] & vm,
                "blind_zone_slack_m": np.where(vm, res["blind_zone_slack_m"], np.nan)}
    eps, sigma = soil.electrical(freq_hz) if calibration is None else calibration.electrical(
        soil, freq_hz, *soil.electrical(freq_hz))
    omega = 2.0 * np.pi * freq
    eps_arr = np.asarray(eps)
    alpha, beta = _alpha_beta(eps_arr.real, -eps_arr.imag, sigma, omega)
    out = {
        "eps_real": eps_arr.real, "eps_imag": -eps_arr.imag, "sigma": sigma, "velocity": omega / beta,
        "attenuation_db_per_m": alpha * NP_TO_DB, "max_depth": res["max_depth"], "margin_db": res["margin_db"],
        "min_depth": res["min_depth"], "blind_zone_slack_m": res["blind_zone_slack_m"],
        "received_freq": res["received_freq_hz"],
        "vertical_resolution": res["vertical_resolution"],
    }
    too_shallow = res["too_shallow"]
    full = np.broadcast_shapes(*(np.shape(v) for v in out.values()))
    if np.all(valid):  # no gaps to blank: skip the masking pass (same values)
        out = {k: v if np.shape(v) == full else np.array(np.broadcast_to(v, full)) for k, v in out.items()}
        out["too_shallow"] = np.array(np.broadcast_to(too_shallow, full))
        return out
    vmask = np.broadcast_to(valid, full)
    out = {k: np.where(vmask, np.broadcast_to(v, full), np.nan) for k, v in out.items()}
    out["too_shallow"] = np.broadcast_to(too_shallow, full) & vmask
    return out


def _pulse_lengths(freq, pulse_length_s):
    """Pulse length per antenna: given, or 1.5 periods of the centre frequency where None/NaN."""
    from ..detection.blindzone import default_pulse_length

    if pulse_length_s is None:
        return default_pulse_length(freq)
    p = np.asarray(pulse_length_s, dtype=float)
    return np.where(np.isnan(p), default_pulse_length(freq), p)


def _band_axes(freq, bandwidth):
    """Band frequencies and weights with a trailing node axis, one band per antenna (leading axis)."""
    from ..detection.band import band_nodes

    fc, bw = np.broadcast_arrays(freq, bandwidth)
    flat_f, flat_b = fc.reshape(fc.shape[0] if fc.ndim else 1, -1)[:, 0], bw.reshape(bw.shape[0] if bw.ndim else 1,
                                                                                       -1)[:, 0]
    nodes = [band_nodes(float(f), float(b)) for f, b in zip(flat_f, flat_b)]  # per antenna, not per cell
    f_nodes = np.stack([n[0] for n in nodes]).reshape(fc.shape + (-1,))
    w_nodes = np.stack([n[1] for n in nodes]).reshape(fc.shape + (-1,))
    return f_nodes, w_nodes


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
    """(freq, perf, gain, bandwidth) on a leading antenna axis; gain NaN where the coupling model applies."""
    kw = _antenna_chain_kwargs(antennas, ndim)
    return kw["freq_hz"], kw["performance_db"], kw["gain"], kw["bandwidth_hz"]


def _antenna_chain_kwargs(antennas, ndim: int) -> dict:
    """Every per-antenna input of :func:`feasibility_chain`, on a leading antenna axis."""
    shape = (-1,) + (1,) * ndim

    def col(name, default):
        vals = [getattr(a, name, default) for a in antennas]
        return np.array([np.nan if v is None else v for v in vals], dtype=float).reshape(shape)

    freq = col("centre_freq_hz", None)
    perf = np.array([getattr(a, "effective_performance_db", a.performance_db) for a in antennas],
                    dtype=float).reshape(shape)
    bws = [getattr(a, "bandwidth_hz", None) for a in antennas]
    bw = None if any(b is None for b in bws) else np.array(bws, dtype=float).reshape(shape)
    pulses = [getattr(a, "pulse_length", None) or getattr(a, "pulse_length_s", None) for a in antennas]
    return {"freq_hz": freq, "performance_db": perf, "gain": col("gain", None), "bandwidth_hz": bw,
            "separation_m": col("separation_m", 0.0), "pulse_length_s": np.array(
                [np.nan if p is None else p for p in pulses], dtype=float).reshape(shape)}


def _clip_moisture(values: dict, *, texture, margin: float = 0.995):
    phi = _soil_porosity_limit(texture, values.get("bulk_density"))
    if phi is not None and "moisture" in values:
        values = dict(values)
        values["moisture"] = np.minimum(values["moisture"], margin * phi)
    return values


def evaluate(values: dict, antennas, *, target, target_depth_m, texture=None, model="crim", calibration=None):
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
    values = _clip_moisture(values, texture=texture)
    arrays = {k: np.asarray(v, dtype=float) for k, v in values.items()}
    shape = np.broadcast_shapes(*(a.shape for a in arrays.values()))
    valid = np.logical_and.reduce([np.isfinite(np.broadcast_to(a, shape)) for a in arrays.values()])
    # only the cells with data go through the chain (a site's outline leaves a fifth of its grid outside):
    # the chain is elementwise per cell, so their values are the same as over the whole grid
    some = bool(np.any(valid)) and not bool(np.all(valid))
    if some:
        arrays = {k: np.broadcast_to(a, shape)[valid] for k, a in arrays.items()}
    try:
        # the band-integrated budget of `choose` (fixed band frequencies per antenna, no per-cell loop)
        out = feasibility_chain(target=target, target_depth_m=target_depth_m, texture=texture, model=model,
                                calibration=calibration, **_antenna_chain_kwargs(antennas, 1 if some else len(shape)),
                                **_chain_kwargs(arrays))
    except SubsurfError as exc:
        raise InputError(f"soil inputs on the grid are not physically possible: {exc}") from None
    if not some:
        return out
    for k, v in out.items():  # back onto the grid: NaN (too_shallow False) where there are no data
        out[k] = np.zeros(v.shape[:-1] + shape, bool) if v.dtype == bool else np.full(v.shape[:-1] + shape, np.nan)
        out[k][..., valid] = v
    return out


def recommend_antenna(margin_db, freq_hz, *, reaches_db=None, too_shallow=None):
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
    from ..detection.verdicts import REACHES_MARGIN_DB

    reaches = REACHES_MARGIN_DB if reaches_db is None else reaches_db
    m = np.asarray(margin_db, dtype=float)
    if too_shallow is not None:  # inside an antenna's blind zone it does not see the target, whatever the margin
        m = np.where(np.asarray(too_shallow, dtype=bool), -np.inf, m)
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
                      texture=None, model="crim", method="auto", calibration=None, reaches_db=None):
    """Per-cell probability that each antenna reaches the target depth, and its error.

    "Reaches" is the one definition of :mod:`subsurf.detection.verdicts`: margin ≥
    ``reaches_db`` (default :data:`~subsurf.detection.verdicts.REACHES_MARGIN_DB`) outside
    the blind zone.  The estimate of :func:`subsurf.site.probability.reach_probability`
    (first-order where it is accurate to 0.01, seeded Monte Carlo with ``draws`` draws where
    clipping or nonlinearity matter; draws keyed per tile of cells, so results do not depend
    on how the work is cut).

    Returns
    -------
    p, err : ndarray, shape (n_antennas, *cells)
        Probability and its estimated error (the Monte Carlo standard error √(p(1−p)/N)
        where sampled).
    """
    from .probability import reach_probability as _estimate

    r = _estimate(values, sds, antennas, target=target, target_depth_m=target_depth_m, draws=draws, seed=seed,
                  texture=texture, model=model, method=method, calibration=calibration, reaches_db=reaches_db)
    return r.probability, r.error


from .areas import area_fractions  # noqa: E402  (its own module; re-exported here)
