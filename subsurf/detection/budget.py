"""The two-way loss budget: one set of loss terms per antenna, ground, target and geometry.

For a ground-coupled antenna pair with separation x over a host ground (optionally under
surface layers) the received-to-transmitted energy ratio at the band frequencies fᵢ is

    E_r/E_t = Σᵢ wᵢ · G(fᵢ)²·λ₁(fᵢ)²·Xᵢ / (C_p·(v_h/v₁)^q·rᵖ) · e^(−4αᵢ(r)) · T_layers · F

where (term by term, each a function of its own module):

- wᵢ: energy weights of the transmitted spectrum (:mod:`.band`);
- G: one-way in-ground gain of a dipole on the surface, from ε' of the host
  (:mod:`.coupling`, Engheta et al. 1982), times the antenna's extra gain; or a fixed gain;
- λ₁: wavelength in the host (the receiving aperture Gλ²/4π);
- X and C_p, p per target kind (:mod:`.targets`):
    planar, image source at 2r:               X = |R|²·F_rough,   C = (4π)²·4,  p = 2
    point, radar cross-section σ_RCS:         X = σ_RCS,          C = (4π)³,    p = 4
    line, echo width σ₂ over the stationary-phase length L² = λr/2
    (finite-cylinder σ = 2σ₂L²/λ = σ₂·r):    X = σ₂,             C = (4π)³,    p = 3
- r = √((d + s)² + (x/2)²): the bistatic slant range (x the separation) in host-equivalent
  distance (s from the layers, :mod:`.layers`; 0 without);
- α: attenuation of the host plus any extra attenuation (volume scattering) along r;
- T_layers: absorption in and transmission through the surface layers;
- F: the rough ground surface's coherent two-way transmission (Kirchhoff, from the soil's
  surface roughness) and a user surface loss (dB) if given.

Surface layers are treated in the host's frame: the antenna couples through them into the
host (G and λ of the host), the range is the host-equivalent r of :mod:`.layers`, and each
layer adds its absorption and interface transmissions.  This is exact as the layers become
thin (t ≪ λ, the usual asphalt or concrete over a street at utility frequencies: the layer
then only absorbs and reflects) and continuous in t; for layers many wavelengths thick the
ray-tube spreading of an antenna standing on the layer (Newman 1973) differs from it by
the ratio of G·λ² in the layer to that in the host, which is not modelled.

The depth where the loss equals the system performance P is found by the one solver
(:mod:`.solver`); with one frequency and no layers or separation it is the closed form
of DESIGN.md's radar range equation.

References
----------
Annan, A. P. & Davis, J. L. (1977). Radar range analysis for geological materials.
Geological Survey of Canada Paper 77-1B, 117–124.
Daniels, D. J. (ed.) (2004). *Ground Penetrating Radar*, 2nd ed., IEE, ch. 4 (radar range
equation for planar, cylindrical and compact targets).
Knott, E. F., Shaeffer, J. F. & Tuley, M. T. (2004). *Radar Cross Section*, 2nd ed., SciTech
(finite cylinder from the echo width, σ = 2σ₂L²/λ).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError, check_finite, check_nonnegative, check_positive
from ..waves.propagation import NP_TO_DB, _alpha_beta, _check_medium, _reflection_power_from_gamma
from .coupling import coupling_gain
from .layers import check_layers, overburden_terms
from .solver import SPREADING_EXPONENT, band_loss_db, band_range_from_loss_terms, depth_from_range
from .targets import Target, echo_width, radar_cross_section
from .verdicts import REACHES_MARGIN_DB  # noqa: F401  (the one definition lives in .verdicts; importable here too)

__all__ = [
    "LossTerms",
    "loss_terms",
    "two_way_loss_db",
    "max_depth",
    "margin_db",
    "max_depth_and_margin",
    "received_energy",
    "orientation_penalty_db",
]

_SPREADING_CONSTANT = {"planar": (4.0 * np.pi) ** 2 * 4.0, "point": (4.0 * np.pi) ** 3, "line": (4.0 * np.pi) ** 3}


@dataclass(frozen=True)
class LossTerms:
    """The loss budget of one antenna/ground/target, ready for the solver (SI; node axis last).

    k0_db : (..., n) depth-free loss at each band frequency, dB (+inf: no return)
    alpha : (..., n) attenuation along the range, Np/m
    weights : (..., n) energy weights of the band frequencies (Σ = 1)
    p : spreading exponent
    half_separation_m, shift_m : h and s of r = √((d + s)² + h²)
    freqs_hz : (..., n) the band frequencies
    velocity : (..., n) phase velocity in the host at each frequency, m/s
    eps_real : (..., n) ε' of the host
    top_eps_real : (..., n) ε' of the medium the antenna sits on
    gain : (..., n) one-way gain used
    layer_thickness_m : total thickness of the surface layers
    """

    k0_db: np.ndarray
    alpha: np.ndarray
    weights: np.ndarray
    p: float
    half_separation_m: np.ndarray
    shift_m: np.ndarray
    freqs_hz: np.ndarray
    velocity: np.ndarray
    eps_real: np.ndarray
    top_eps_real: np.ndarray
    gain: np.ndarray
    layer_thickness_m: float = 0.0


def _strength(target: Target, alpha, beta, eps_c, sigma, freq, omega, roughness_factor):
    """X of the module notes (|R|²·F, σ_RCS or σ₂) at every node; |R|² from the propagation constants."""
    if target.conductor:
        r2 = np.ones_like(alpha)
    elif target.reflection is not None:
        r2 = np.full_like(alpha, abs(complex(target.reflection)) ** 2)
    else:
        et = complex(target.eps)
        r2 = _reflection_power_from_gamma(alpha, beta, *_alpha_beta(et.real, -et.imag, target.sigma, omega))
    if target.kind == "planar":
        return r2 * np.square(roughness_factor)
    if target.kind == "point":
        return radar_cross_section(eps_c, sigma, freq, target, k=beta, r2=r2)
    return echo_width(eps_c, sigma, freq, target, k=beta, r2=r2)


def loss_terms(eps, sigma, freq_hz, target: Target, *, weights=None, gain=None, extra_gain=1.0,
               separation_m=0.0, layers=(), surface_loss_db=0.0, extra_attenuation_np_per_m=0.0,
               roughness_factor=1.0, surface_power_factor=1.0, validate: bool = True) -> LossTerms:
    """Loss terms of the budget at the band frequencies (node axis last).

    Parameters
    ----------
    eps, sigma : array_like, shape (..., n)
        Host ground ε' − jε'' and DC conductivity (S/m) at each frequency.
    freq_hz : array_like, shape (..., n)
        The band frequencies (Hz); n = 1 for a single-frequency budget.
    target : Target
    weights : array_like, shape (..., n), optional
        Energy weights (Σ = 1); None with n = 1.
    gain : array_like or None
        Fixed one-way gain in the ground (linear), replacing the coupling model; None uses
        :func:`subsurf.detection.coupling.coupling_gain` of the top medium's ε'.
    extra_gain : array_like
        Antenna gain over the interfacial dipole (linear; shielding, efficiency < 1).
    separation_m : array_like
        Transmitter–receiver separation (m, ≥ 0), broadcast against the leading shape.
    layers : sequence of :class:`subsurf.detection.layers.Layer`
        Surface layers, top first.
    surface_loss_db : array_like
        A user-supplied extra two-way loss at the surface (dB, ≥ 0), e.g. an air gap.
    extra_attenuation_np_per_m : array_like, shape broadcastable to (..., n)
        Attenuation added to the host's (e.g. volume scattering), Np/m, one way.
    roughness_factor : array_like
        Amplitude factor (0–1) of the coherent reflection of a rough planar target.
    surface_power_factor : array_like, shape broadcastable to (..., n)
        Two-way power factor (0–1) of the coherent transmission through a rough ground surface,
        e.g. :func:`subsurf.ground.roughness_transmission_factor` (power) squared.
    validate : bool
        False skips re-checking ε, σ that a soil model just produced (the grid chain).
    """
    if validate:
        eps, sigma, freq, _ = _check_medium(eps, sigma, freq_hz, 1.0)
        extra_gain = check_positive("extra_gain", extra_gain)
        separation_m = check_nonnegative("separation_m", separation_m, unit="m")
        surface_loss_db = check_nonnegative("surface_loss_db", surface_loss_db, unit="dB")
        extra_attenuation_np_per_m = check_nonnegative("extra_attenuation_np_per_m", extra_attenuation_np_per_m,
                                                       unit="Np/m")
        rough = check_finite("roughness_factor", roughness_factor)
        if np.any((rough < 0) | (rough > 1)):
            raise InputError(f"roughness_factor must be between 0 and 1, got {rough.ravel()[0]:g}")
        if gain is not None:
            gain = np.asarray(gain, dtype=float)
            check_positive("gain", np.where(np.isnan(gain), 1.0, gain))  # NaN: the coupling model
    else:
        freq = np.asarray(freq_hz, dtype=float)
    layers = check_layers(layers)
    eps = np.asarray(eps)
    eps_real, eps_imag = (eps.real, -eps.imag) if np.iscomplexobj(eps) else (eps, np.zeros(np.shape(eps)))
    omega = 2.0 * np.pi * freq
    alpha_h, beta_h = _alpha_beta(eps_real, eps_imag, sigma, omega)
    over = overburden_terms(layers, alpha_h, beta_h, eps_real, omega)
    lam1 = 2.0 * np.pi / beta_h  # aperture of the host (see the layers note in the module docstring)
    # coupling from ε' of the host at every band frequency (ε' of relaxing soils changes across a band)
    top = np.asarray(eps_real, dtype=float)
    g = coupling_gain(top) * np.asarray(extra_gain, dtype=float)
    if gain is not None:
        fixed = np.asarray(gain, dtype=float)
        g = np.where(np.isnan(fixed), g, fixed)
    # the complex host ε is needed only by a dielectric compact target's Rayleigh branch
    needs_eps = target.kind != "planar" and target.eps is not None and not target.conductor
    eps_c = eps_real - 1j * eps_imag if needs_eps else None
    x = _strength(target, alpha_h, beta_h, eps_c, sigma, freq, omega, roughness_factor)
    alpha = alpha_h + np.asarray(extra_attenuation_np_per_m, dtype=float)
    factor = np.square(g) * lam1**2 * x / _SPREADING_CONSTANT[target.kind]
    with np.errstate(divide="ignore"):
        k0 = -10.0 * np.log10(factor)
    if layers:
        k0 = k0 + over.loss_db - 2.0 * NP_TO_DB * alpha * (over.shift_m + over.thickness_m)
    k0 = k0 + np.asarray(surface_loss_db, dtype=float)
    if np.ndim(surface_power_factor) or surface_power_factor != 1.0:
        with np.errstate(divide="ignore"):
            k0 = k0 - 10.0 * np.log10(np.asarray(surface_power_factor, dtype=float))
    n = np.shape(k0)[-1] if np.ndim(k0) else 1
    if weights is None:
        if n != 1:
            raise InputError("give the energy weights of the band frequencies (detection.band.band_nodes)")
        weights = np.ones(1)
    w = np.asarray(weights, dtype=float)
    if over.shift_m.ndim:
        # one shift per ground: the transmitted-energy mean over the band (dispersion within the band is small)
        wn = np.broadcast_to(w, np.shape(over.shift_m))
        shift = np.sum(wn * over.shift_m, axis=-1) / np.sum(wn, axis=-1)
    else:
        shift = over.shift_m
    return LossTerms(k0_db=np.atleast_1d(k0), alpha=np.atleast_1d(alpha), weights=w,
                     p=SPREADING_EXPONENT[target.kind], half_separation_m=0.5 * np.asarray(separation_m, float),
                     shift_m=np.asarray(shift, dtype=float), freqs_hz=np.atleast_1d(freq),
                     velocity=np.atleast_1d(omega / beta_h), eps_real=np.atleast_1d(eps_real),
                     top_eps_real=np.atleast_1d(over.top_eps_real), gain=np.atleast_1d(g),
                     layer_thickness_m=over.thickness_m)


def _geometry(terms: LossTerms):
    lead = np.shape(terms.k0_db)[:-1]
    return (np.broadcast_to(terms.half_separation_m, np.broadcast_shapes(lead, np.shape(terms.half_separation_m))),
            terms.shift_m)


def _check_performance(performance_db):
    perf = check_finite("performance_db", performance_db)
    if np.any(perf <= 0):
        raise InputError(f"performance_db must be > 0 dB, got {perf[perf <= 0].ravel()[0]:.6g}")
    return perf


def _terms_of(eps, sigma, freq_hz, target, kw) -> LossTerms:
    """Single-frequency terms from arrays at one frequency (a trailing node axis of length 1)."""
    e, s, f = (np.asarray(v)[..., None] for v in np.broadcast_arrays(np.asarray(eps), np.asarray(sigma, float),
                                                                      np.asarray(freq_hz, float)))
    if kw.get("gain") is not None:
        kw = dict(kw, gain=np.asarray(kw["gain"], dtype=float)[..., None])
    if np.ndim(kw.get("extra_gain", 1.0)):
        kw = dict(kw, extra_gain=np.asarray(kw["extra_gain"], dtype=float)[..., None])
    return loss_terms(e, s, f, target, **kw)


def two_way_loss_db(depth_m, eps=None, sigma=None, freq_hz=None, target: Target | None = None, *,
                    terms: LossTerms | None = None, **kw):
    """Two-way loss L(d) in dB at ``depth_m``: from ready ``terms`` or from (eps, sigma, freq_hz, target, **kw).

    Single-frequency arguments (ε, σ at ``freq_hz``) give the monochromatic budget;
    ``kw`` are the options of :func:`loss_terms`.
    """
    d = check_positive("depth_m", depth_m, unit="m")
    t = terms if terms is not None else _terms_of(eps, sigma, freq_hz, target, kw)
    h, s = _geometry(t)
    return band_loss_db(t.k0_db, t.p, t.alpha, t.weights, d, half_separation_m=h, depth_shift_m=s)


def max_depth(eps=None, sigma=None, freq_hz=None, performance_db=None, *, target: Target | None = None,
              terms: LossTerms | None = None, **kw):
    """Maximum detectable depth (m): where the budget's two-way loss equals ``performance_db``.

    Parameters
    ----------
    eps, sigma, freq_hz : array_like, optional
        Host ground at one frequency (single-frequency budget), when ``terms`` is not given.
    performance_db : array_like
        System performance including stacking (dB).
    target : Target
    terms : LossTerms, optional
        Band terms from :func:`loss_terms`.
    **kw
        Options of :func:`loss_terms` (gain, separation_m, layers, surface_loss_db, ...).

    Returns
    -------
    ndarray
        Depth (m) below the surface, 0 where the target is detected at no depth.
        The target is assumed to lie below any surface layers.

    Notes
    -----
    Solved by :func:`subsurf.detection.solver.band_range_from_loss_terms` (closed form
    at one frequency) and r = √((d + s)² + h²).
    """
    perf = _check_performance(performance_db)
    t = terms if terms is not None else _terms_of(eps, sigma, freq_hz, target, kw)
    r = band_range_from_loss_terms(t.k0_db, t.p, t.alpha, t.weights, perf)
    h, s = _geometry(t)
    return depth_from_range(r, half_separation_m=h, depth_shift_m=s)


def margin_db(depth_m, eps=None, sigma=None, freq_hz=None, performance_db=None, *, target: Target | None = None,
              terms: LossTerms | None = None, **kw):
    """Margin (dB) = performance − two-way loss at ``depth_m``; ≥ 0 means detectable."""
    perf = _check_performance(performance_db)
    return perf - two_way_loss_db(depth_m, eps, sigma, freq_hz, target, terms=terms, **kw)


def max_depth_and_margin(depth_m, eps=None, sigma=None, freq_hz=None, performance_db=None, *,
                         target: Target | None = None, terms: LossTerms | None = None, **kw):
    """:func:`max_depth` and :func:`margin_db` at ``depth_m`` from one set of loss terms."""
    t = terms if terms is not None else _terms_of(eps, sigma, freq_hz, target, kw)
    return (max_depth(performance_db=performance_db, terms=t),
            margin_db(depth_m, performance_db=performance_db, terms=t))


def received_energy(depth_m, terms: LossTerms):
    """Energy received from ``depth_m`` at each band frequency (relative, node axis last).

    wᵢ·10^(−K₀ᵢ/10)·e^(−4αᵢr)/rᵖ, normalised to a maximum of 1 per spectrum: the received
    spectrum whose centroid gives the frequency and resolution at depth.
    """
    d = np.asarray(depth_m, dtype=float)
    h, s = _geometry(terms)
    r = np.sqrt((d + s) ** 2 + np.square(h))
    z = np.log(terms.weights) - terms.k0_db * (np.log(10.0) / 10.0) - 4.0 * terms.alpha * r[..., None]
    z = np.where(np.isfinite(z), z, -np.inf)
    zmax = np.max(z, axis=-1, keepdims=True)
    return np.exp(z - np.where(np.isfinite(zmax), zmax, 0.0))


def orientation_penalty_db(eps, sigma, freq_hz, target: Target):
    """Loss (dB, ≥ 0 when parallel is stronger) of crossing a line target with the dipoles across it.

    10·log10(σ₂,parallel/σ₂,perpendicular) at the given ground and frequency
    (:func:`subsurf.detection.targets.echo_width`).
    """
    if target.kind != "line":
        raise InputError("the orientation penalty applies to line targets")
    par = echo_width(eps, sigma, freq_hz, target, polarisation="parallel")
    per = echo_width(eps, sigma, freq_hz, target, polarisation="perpendicular")
    return 10.0 * np.log10(par / per)
