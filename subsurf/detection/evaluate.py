"""One antenna's budget against one target, from the ground at its band frequencies.

The single entry used by ``choose``, ``setup``, the maps, the regional run and the
report (through :mod:`subsurf.planning` and :mod:`subsurf.site.feasibility`): loss terms
(:func:`subsurf.detection.budget.loss_terms`), maximum depth and margin (the one solver),
blind zone and near field (:mod:`.blindzone`) and resolution from the received spectrum
(:mod:`.resolution`), all from the same band.  Broadcasts over any leading shape
(antennas × cells); the band axis is last.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError
from .blindzone import min_detectable_depth, near_field_depth
from .budget import loss_terms, received_energy
from .resolution import footprint_radius, fresnel_radius, vertical_resolution
from .solver import band_loss_db, band_range_from_loss_terms, depth_from_range

__all__ = ["antenna_budget", "soil_loss_terms"]


def antenna_budget(eps, sigma, freqs_hz, weights, target, *, depth_m, performance_db, pulse_length_s,
                   depth_top_m=None,
                   separation_m=0.0, gain=None, extra_gain=1.0, layers=(), surface_loss_db=0.0,
                   extra_attenuation_np_per_m=0.0, roughness_factor=1.0, surface_power_factor=1.0,
                   validate: bool = True,
                   margin_only: bool = False) -> dict:
    """Maximum depth, margin, blind zone, near field and resolution of one antenna (arrays).

    Parameters
    ----------
    eps, sigma : array_like, shape (..., n)
        Host ground at the band frequencies ``freqs_hz`` (shape (..., n) or (n,)).
    weights : array_like, shape (n,) or (..., n)
        Transmitted energy weights (:func:`subsurf.detection.band.band_nodes`).
    target : Target
    depth_m : float
        Depth of interest (top of the target, m); for a range of depths of interest, its
        deepest: the margin, maximum depth and verdict are judged here.
    depth_top_m : float or None
        Shallowest depth of interest of a range (m, < ``depth_m``): the blind zone, near field
        and resolution are judged here (the top of the range must clear the blind zone; the
        resolution is that of the spectrum received from it).  None: one depth, ``depth_m``.
    performance_db : array_like
        System performance with the (clutter-limited) stacking gain, dB; leading shape.
    pulse_length_s : array_like
        Pulse length (s) for the blind zone.
    separation_m, gain, extra_gain, layers, surface_loss_db, extra_attenuation_np_per_m, roughness_factor,
    surface_power_factor :
        As :func:`subsurf.detection.budget.loss_terms` (leading-shape arrays get a node axis here).
    margin_only : bool
        Only ``margin_db``, ``too_shallow`` and ``blind_zone_slack_m`` (depth minus the
        blind-zone depth, m; negative inside it), what the reach probability needs.

    Returns
    -------
    dict of ndarray (leading shape)
        ``margin_db`` (at ``depth_m``), ``too_shallow`` (bool: the shallowest depth of interest
        lies inside the blind zone), ``partly_blind`` (bool: a range whose top lies inside the
        blind zone but whose bottom lies below it; always False for one depth), ``blind_zone_slack_m``
        and, unless ``margin_only``: ``max_depth``,
        ``min_depth``, ``near_field`` (bool: target closer than the near-field limit),
        ``received_freq_hz``, ``wavelength_m`` (received), ``vertical_resolution``,
        ``fresnel_radius``, ``footprint_radius``, ``velocity`` (transmitted-energy mean, m/s),
        ``eps_real`` (the same mean), ``terms`` (the :class:`LossTerms`); the received
        frequency, wavelength, near field and resolution are those of the shallowest depth of
        interest.  For a range also ``margin_top_db`` (margin at its top),
        ``vertical_resolution_bottom`` and ``fresnel_radius_bottom`` (at its bottom).
    """
    d = float(depth_m)
    if not np.isfinite(d) or d <= 0:
        raise InputError(f"depth of interest must be > 0 m, got {depth_m!r}")
    top = d if depth_top_m is None else float(depth_top_m)
    if not np.isfinite(top) or not 0 < top <= d:
        raise InputError(f"the top of the depth range must be > 0 m and not below its bottom ({d:g} m), "
                         f"got {depth_top_m!r}")

    def node(v):
        return np.asarray(v, dtype=float)[..., None] if np.ndim(v) else v

    terms = loss_terms(eps, sigma, freqs_hz, target, weights=weights,
                       gain=None if gain is None else node(gain), extra_gain=node(extra_gain),
                       separation_m=separation_m, layers=layers, surface_loss_db=node(surface_loss_db),
                       extra_attenuation_np_per_m=extra_attenuation_np_per_m,
                       roughness_factor=roughness_factor, surface_power_factor=surface_power_factor,
                       validate=validate)
    if terms.layer_thickness_m and top <= terms.layer_thickness_m:
        raise InputError(f"the target depth {top:g} m is within the surface layers ({terms.layer_thickness_m:g} m "
                         "thick); the target must lie in the ground below them")
    perf = np.asarray(performance_db, dtype=float)
    w = np.broadcast_to(terms.weights, np.shape(terms.velocity))
    w = w / np.sum(w, axis=-1, keepdims=True)  # transmitted-energy mean over the band
    velocity = np.sum(w * terms.velocity, axis=-1)
    d_min = min_detectable_depth(velocity, pulse_length_s, separation_m)
    too_shallow = top < d_min
    partly_blind = too_shallow & (d >= d_min)
    h = np.broadcast_to(terms.half_separation_m, np.broadcast_shapes(np.shape(terms.half_separation_m),
                                                                     np.shape(terms.k0_db)[:-1]))
    margin = perf - band_loss_db(terms.k0_db, terms.p, terms.alpha, terms.weights, d, half_separation_m=h,
                                 depth_shift_m=terms.shift_m)
    if margin_only:
        return {"margin_db": margin, "too_shallow": np.broadcast_to(too_shallow, np.shape(margin)),
                "partly_blind": np.broadcast_to(partly_blind, np.shape(margin)),
                "blind_zone_slack_m": np.broadcast_to(top - d_min, np.shape(margin))}
    r = band_range_from_loss_terms(terms.k0_db, terms.p, terms.alpha, terms.weights, perf)
    dmax = depth_from_range(r, half_separation_m=h, depth_shift_m=terms.shift_m)
    fr, lam = _received(top, terms)
    eps_real = np.sum(w * terms.eps_real, axis=-1)
    out = {
        "margin_db": margin, "too_shallow": np.broadcast_to(too_shallow, np.shape(margin)),
        "partly_blind": np.broadcast_to(partly_blind, np.shape(margin)),
        "max_depth": dmax, "min_depth": d_min, "blind_zone_slack_m": np.broadcast_to(top - d_min, np.shape(margin)),
        "near_field": top < near_field_depth(lam),
        "received_freq_hz": fr, "wavelength_m": lam, "vertical_resolution": vertical_resolution(lam),
        "fresnel_radius": fresnel_radius(lam, top), "footprint_radius": footprint_radius(lam, top, eps_real),
        "velocity": velocity, "eps_real": eps_real, "terms": terms,
    }
    if depth_top_m is not None:
        out["margin_top_db"] = perf - band_loss_db(terms.k0_db, terms.p, terms.alpha, terms.weights, top,
                                                   half_separation_m=h, depth_shift_m=terms.shift_m)
        _, lam_b = _received(d, terms)
        out["vertical_resolution_bottom"] = vertical_resolution(lam_b)
        out["fresnel_radius_bottom"] = fresnel_radius(lam_b, d)
    return out


def _received(depth_m, terms):
    """(centroid frequency Hz, wavelength m) of the spectrum received from ``depth_m``."""
    e = received_energy(depth_m, terms)
    s = e.sum(axis=-1)
    fr = np.sum(e * terms.freqs_hz, axis=-1) / s
    vr = np.sum(e * terms.velocity, axis=-1) / s
    return fr, vr / fr


def soil_loss_terms(soil, freq_hz, eps):
    """(extra attenuation Np/m, two-way surface power factor) of a soil's stones and rough surface.

    Volume scattering from :meth:`subsurf.ground.Soil.scattering_attenuation` and the coherent
    transmission of the rough ground surface, down and up, from
    :func:`subsurf.ground.roughness_transmission_factor` (power form, squared).  A ground
    without these facts (direct ε, σ) gives (0, 1).
    """
    if soil is None or not hasattr(soil, "scattering_attenuation"):
        return 0.0, 1.0
    from ..ground.roughness import roughness_transmission_factor

    extra = soil.scattering_attenuation(freq_hz, eps=eps)
    rough = soil.loss_facts["surface_roughness"]
    t = roughness_transmission_factor(freq_hz, rough, eps_incident=1.0,
                                      eps_transmitted=np.maximum(np.real(eps), 1.0), power=True)
    return extra, np.square(t)
