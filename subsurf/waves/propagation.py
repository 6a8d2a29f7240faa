"""Plane-wave propagation in a homogeneous lossy medium, from the Helmholtz equation.

A time-harmonic field ``E ∝ exp(jωt − γz)`` in a medium of relative complex
permittivity ``ε = ε' − jε''`` (dielectric part), DC conductivity ``σ`` and relative
permeability ``μ_r`` satisfies ``d²E/dz² = γ²E`` with

    γ² = jωμ(σ + jωε₀ε),   γ = α + jβ,

``α`` the attenuation constant (Np/m) and ``β`` the phase constant (rad/m).  Every
quantity here is derived from the exact principal square root (evaluated once, in real
arithmetic, by ``_alpha_beta``); low-loss approximations exist as separately named
functions and warn when the loss tangent is not small.

All functions broadcast over numpy arrays and accept scalars.  Units are SI.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import _codata as constants  # scipy.constants values without its import cost (start-up)
from ..errors import (
    InputError,
    check_broadcast,
    check_finite,
    check_nonnegative,
    check_positive,
)
from ..quantities import accepts_quantities

__all__ = [
    "NP_TO_DB",
    "WaveProperties",
    "wave_properties",
    "propagation_constant",
    "reflection_coefficient",
    "transmission_coefficient",
    "depth_from_time",
    "time_from_depth",
    "db_from_np",
    "np_from_db",
    "low_loss_attenuation",
    "low_loss_velocity",
]

#: Decibels per neper, 20/ln(10) ≈ 8.686.
NP_TO_DB = 20.0 / np.log(10.0)

_EPS0 = constants.epsilon_0
_MU0 = constants.mu_0
_C = constants.c


def db_from_np(value):
    """Convert nepers (or Np/m) to decibels (dB/m): multiply by 20/ln 10."""
    return np.asarray(value, dtype=float) * NP_TO_DB


def np_from_db(value):
    """Convert decibels (dB/m) to nepers (Np/m): divide by 20/ln 10."""
    return np.asarray(value, dtype=float) / NP_TO_DB


def _check_medium(eps_r, sigma, freq_hz, mu_r):
    eps = np.asarray(eps_r)
    if not np.iscomplexobj(eps):
        eps = check_finite("eps_r", eps).astype(complex)
    elif not np.all(np.isfinite(eps)):
        raise InputError("eps_r must be finite")
    if np.any(eps.real < 1.0 - 1e-12):
        bad = eps.real[eps.real < 1.0 - 1e-12].ravel()[0]
        raise InputError(f"eps_r (real part) must be >= 1 (vacuum), got {bad:.6g}")
    if np.any(eps.imag > 0):
        bad = eps.imag[eps.imag > 0].ravel()[0]
        raise InputError(
            f"eps_r imaginary part must be <= 0 for a passive medium (convention ε = ε' − jε''), "
            f"got {bad:.6g}"
        )
    sigma = check_nonnegative("sigma", sigma, unit="S/m")
    freq = check_positive("freq_hz", freq_hz, unit="Hz")
    mu = check_positive("mu_r", mu_r)
    check_broadcast(eps_r=eps, sigma=sigma, freq_hz=freq, mu_r=mu)
    return eps, sigma, freq, mu


def propagation_constant(eps_r, sigma, freq_hz, mu_r=1.0):
    """Complex propagation constant γ = α + jβ (1/m) of a homogeneous medium.

    Parameters
    ----------
    eps_r : complex or array_like
        Relative complex permittivity, dielectric part, ε' − jε'' (ε'' ≥ 0).
    sigma : float or array_like
        DC conductivity (S/m), counted separately from ε''.
    freq_hz : float or array_like
        Frequency (Hz), > 0.
    mu_r : float or array_like, optional
        Relative permeability (default 1).

    Returns
    -------
    complex ndarray
        γ with Re γ = α ≥ 0 (Np/m) and Im γ = β > 0 (rad/m), broadcast over the inputs.

    Notes
    -----
    γ = √(jωμ(σ + jωε₀ε)) with the principal square root; since the argument lies in
    the upper half plane for a passive medium, both α and β are non-negative.
    """
    eps, sigma, freq, mu = _check_medium(eps_r, sigma, freq_hz, mu_r)
    alpha, beta = _alpha_beta(eps.real, -eps.imag, sigma, 2.0 * np.pi * freq, mu)
    return alpha + 1j * beta


def _alpha_beta(eps_real, eps_imag, sigma, omega, mu_r=1.0):
    """α (Np/m) and β (rad/m) of γ = √(jωμ(σ + jωε₀ε)) in real arithmetic; inputs NOT validated.

    The physics of :func:`propagation_constant` and :func:`wave_properties`, written once;
    callers validate (ε' ≥ 1, ε'' ≥ 0, σ ≥ 0, ω > 0, μ_r > 0).  Inputs broadcast; the
    results are float arrays of the broadcast shape.

    Notes
    -----
    With σ_eff = σ + ωε₀ε'' and tan δ = σ_eff/(ωε₀ε'), squaring γ = α + jβ gives
    β² − α² = ω²με₀ε' and 2αβ = ωμσ_eff, whose solution with α, β ≥ 0 is

        β = ω·√(με₀ε'·(√(1 + tan²δ) + 1)/2),   α = ωμσ_eff/(2β),

    the exact principal square root (no low-loss approximation).  α is taken from
    2αβ = ωμσ_eff rather than from √(1 + tan²δ) − 1, which would cancel at low loss.
    """
    oe = omega * _EPS0
    sigma_eff = sigma + oe * eps_imag
    tan_d = sigma_eff / (oe * eps_real)
    # √(1 + tan²δ); hypot (slower) only where tan²δ would overflow
    root = np.hypot(1.0, tan_d) if np.max(tan_d, initial=0.0) > 1e150 else np.sqrt(1.0 + tan_d * tan_d)
    beta = omega * np.sqrt((0.5 * _EPS0 * _MU0) * mu_r * eps_real * (root + 1.0))
    alpha = (0.5 * _MU0) * mu_r * omega * sigma_eff / beta
    return alpha, beta


def _alpha_wavelength(eps_r, sigma, freq_hz):
    """α (Np/m) and wavelength λ = 2π/β (m) of a validated medium, without the rest of WaveProperties.

    Validates as :func:`wave_properties` does (same messages; μ_r = 1), but a real ε' is not
    converted to complex and only α and β are formed, so a caller that needs α and λ alone
    (:func:`subsurf.detection.solver.max_detectable_depth`) skips the complex impedance, skin
    depth, loss tangent and copies.  Equal to ``wave_properties(...).alpha`` and ``.wavelength``.
    """
    eps = np.asarray(eps_r)
    if np.iscomplexobj(eps):
        eps, sigma_a, freq, _ = _check_medium(eps, sigma, freq_hz, 1.0)
        eps_real, eps_imag = eps.real, -eps.imag
    else:
        eps_real = check_finite("eps_r", eps)
        if np.any(eps_real < 1.0 - 1e-12):
            bad = eps_real[eps_real < 1.0 - 1e-12].ravel()[0]
            raise InputError(f"eps_r (real part) must be >= 1 (vacuum), got {bad:.6g}")
        eps_imag = 0.0
        sigma_a = check_nonnegative("sigma", sigma, unit="S/m")
        freq = check_positive("freq_hz", freq_hz, unit="Hz")
        check_broadcast(eps_r=eps_real, sigma=sigma_a, freq_hz=freq)
    alpha, beta = _alpha_beta(eps_real, eps_imag, sigma_a, 2.0 * np.pi * freq)
    shape = np.broadcast_shapes(np.shape(eps_real), np.shape(sigma_a), np.shape(freq))
    if alpha.shape != shape:  # e.g. a scalar sigma = 0 with an array ε'
        alpha, beta = np.broadcast_to(alpha, shape), np.broadcast_to(beta, shape)
    return alpha, 2.0 * np.pi / beta


def _reflection_power_from_gamma(alpha1, beta1, alpha2, beta2, mu1=1.0, mu2=1.0):
    """|R|² at normal incidence from the propagation constants of both media; inputs NOT validated.

    R = (Z₂ − Z₁)/(Z₂ + Z₁) with Z = jωμ/γ equals (μ₂γ₁ − μ₁γ₂)/(μ₂γ₁ + μ₁γ₂); this is
    its squared magnitude in real arithmetic.  Symmetric in the two media.
    """
    g1_re, g1_im, g2_re, g2_im = alpha1 * mu2, beta1 * mu2, alpha2 * mu1, beta2 * mu1
    return ((g1_re - g2_re) ** 2 + (g1_im - g2_im) ** 2) / ((g1_re + g2_re) ** 2 + (g1_im + g2_im) ** 2)


@dataclass(frozen=True)
class WaveProperties:
    """Plane-wave properties of a medium at one or more frequencies (SI units).

    Attributes
    ----------
    gamma : complex ndarray, 1/m
    alpha : ndarray, Np/m
    beta : ndarray, rad/m
    velocity : ndarray, m/s (phase velocity ω/β)
    wavelength : ndarray, m (2π/β)
    attenuation_db_per_m : ndarray, dB/m
    skin_depth : ndarray, m (1/α; infinite where α = 0)
    impedance : complex ndarray, Ω (jωμ/γ)
    loss_tangent : ndarray ((ε'' + σ/(ωε₀))/ε')
    effective_conductivity : ndarray, S/m (σ + ωε₀ε'')
    eps_real, eps_imag : ndarray (ε' and ε'' ≥ 0)
    sigma, freq_hz : ndarray
    """

    gamma: np.ndarray
    alpha: np.ndarray
    beta: np.ndarray
    velocity: np.ndarray
    wavelength: np.ndarray
    attenuation_db_per_m: np.ndarray
    skin_depth: np.ndarray
    impedance: np.ndarray
    loss_tangent: np.ndarray
    effective_conductivity: np.ndarray
    eps_real: np.ndarray
    eps_imag: np.ndarray
    sigma: np.ndarray
    freq_hz: np.ndarray


@accepts_quantities(eps_r="dimensionless", sigma="S/m", freq_hz="Hz", mu_r="dimensionless")
def wave_properties(eps_r, sigma, freq_hz, mu_r=1.0) -> WaveProperties:
    """Exact plane-wave properties of a lossy medium.

    Parameters
    ----------
    eps_r : complex or array_like
        Relative complex permittivity (dielectric part) ε' − jε''.
    sigma : float or array_like
        DC conductivity, S/m.
    freq_hz : float or array_like
        Frequency, Hz.
    mu_r : float or array_like, optional
        Relative permeability.

    Returns
    -------
    WaveProperties
        Every field broadcast to the common shape of the inputs.

    Notes
    -----
    γ² = jωμ(σ + jωε₀ε), γ = α + jβ; v = ω/β, λ = 2π/β, δ = 1/α,
    Z = jωμ/γ, tan δ = (ε'' + σ/(ωε₀))/ε', σ_eff = σ + ωε₀ε''.

    References
    ----------
    Balanis, C. A. (2012). *Advanced Engineering Electromagnetics*, 2nd ed., Wiley,
    ch. 4 (plane waves in lossy media).
    """
    eps, sigma_a, freq, mu = _check_medium(eps_r, sigma, freq_hz, mu_r)
    eps, sigma_a, freq, mu = np.broadcast_arrays(eps, sigma_a, freq, mu)
    omega = 2.0 * np.pi * freq
    alpha, beta = _alpha_beta(eps.real, -eps.imag, sigma_a, omega, mu)
    gamma = alpha + 1j * beta
    with np.errstate(divide="ignore", over="ignore"):
        skin = np.where(alpha > 0, 1.0 / np.where(alpha > 0, alpha, 1.0), np.inf)
    eps_imag = -eps.imag + 0.0  # no negative zero
    sigma_eff = sigma_a + omega * _EPS0 * eps_imag
    return WaveProperties(
        gamma=gamma,
        alpha=alpha,
        beta=beta,
        velocity=omega / beta,
        wavelength=2.0 * np.pi / beta,
        attenuation_db_per_m=alpha * NP_TO_DB,
        skin_depth=skin,
        impedance=1j * omega * mu * _MU0 / gamma,
        loss_tangent=(eps_imag + sigma_a / (omega * _EPS0)) / eps.real,
        effective_conductivity=sigma_eff,
        eps_real=eps.real.copy(),
        eps_imag=eps_imag,
        sigma=sigma_a,
        freq_hz=freq,
    )


@accepts_quantities(
    eps1="dimensionless",
    sigma1="S/m",
    eps2="dimensionless",
    sigma2="S/m",
    freq_hz="Hz",
    mu1="dimensionless",
    mu2="dimensionless",
)
def reflection_coefficient(eps1, sigma1, eps2, sigma2, freq_hz, *, mu1=1.0, mu2=1.0):
    """Complex amplitude (electric field) reflection coefficient at normal incidence, 1 → 2.

    Notes
    -----
    R = (Z₂ − Z₁)/(Z₂ + Z₁) with Z = jωμ/γ.  For equal permeabilities this is
    (γ₁ − γ₂)/(γ₁ + γ₂); in the lossless limit (√ε₁ − √ε₂)/(√ε₁ + √ε₂).
    A perfect conductor is represented by a very large σ₂ (R → −1).
    """
    w1 = wave_properties(eps1, sigma1, freq_hz, mu1)
    w2 = wave_properties(eps2, sigma2, freq_hz, mu2)
    check_broadcast(medium_1=w1.gamma, medium_2=w2.gamma)
    z1, z2 = w1.impedance, w2.impedance
    return (z2 - z1) / (z2 + z1)


@accepts_quantities(
    eps1="dimensionless",
    sigma1="S/m",
    eps2="dimensionless",
    sigma2="S/m",
    freq_hz="Hz",
    mu1="dimensionless",
    mu2="dimensionless",
)
def transmission_coefficient(eps1, sigma1, eps2, sigma2, freq_hz, *, mu1=1.0, mu2=1.0):
    """Complex amplitude (electric field) transmission coefficient at normal incidence, 1 → 2.

    Notes
    -----
    T = 2Z₂/(Z₂ + Z₁) = 1 + R.  The power transmitted is |T|²·Re(1/Z₂*)/Re(1/Z₁*)
    for lossless media, and ``1 − |R|²`` when both media are lossless.
    """
    w1 = wave_properties(eps1, sigma1, freq_hz, mu1)
    w2 = wave_properties(eps2, sigma2, freq_hz, mu2)
    check_broadcast(medium_1=w1.gamma, medium_2=w2.gamma)
    z1, z2 = w1.impedance, w2.impedance
    return 2.0 * z2 / (z2 + z1)


@accepts_quantities(twt_s="s", velocity="m/s", offset_m="m")
def depth_from_time(twt_s, velocity, offset_m=0.0):
    """Depth (m) of a reflector from its two-way travel time.

    Parameters
    ----------
    twt_s : float or array_like
        Two-way travel time after time zero, s (≥ 0).
    velocity : float or array_like
        Propagation velocity in the ground, m/s (0 < v ≤ c).
    offset_m : float or array_like, optional
        Transmitter–receiver separation, m.  With separation x the ray path is
        two slant legs: d = √((v·t/2)² − (x/2)²).

    Returns
    -------
    ndarray
        Depth in metres.

    Raises
    ------
    InputError
        If a time is negative, a velocity is outside (0, c], or the separation is too
        large for the travel time (v·t < x: no real depth).
    """
    t = check_nonnegative("twt_s", twt_s, unit="s")
    v = check_positive("velocity", velocity, unit="m/s")
    if np.any(v > _C * (1 + 1e-9)):
        bad = v[v > _C * (1 + 1e-9)].ravel()[0]
        raise InputError(f"velocity must be <= c = {_C:.6g} m/s, got {bad:.6g}")
    x = check_nonnegative("offset_m", offset_m, unit="m")
    check_broadcast(twt_s=t, velocity=v, offset_m=x)
    half_path = v * t / 2.0
    half_sep = x / 2.0
    if np.any(half_path < half_sep - 1e-12):
        raise InputError(
            "offset_m is too large for the travel time: velocity × time must be at least the "
            "antenna separation for a real depth (v·t ≥ x)"
        )
    return np.sqrt(np.maximum(half_path**2 - half_sep**2, 0.0))


@accepts_quantities(depth_m="m", velocity="m/s", offset_m="m")
def time_from_depth(depth_m, velocity, offset_m=0.0):
    """Two-way travel time (s) to a reflector at ``depth_m``; inverse of :func:`depth_from_time`.

    Notes
    -----
    t = 2·√(d² + (x/2)²)/v.
    """
    d = check_nonnegative("depth_m", depth_m, unit="m")
    v = check_positive("velocity", velocity, unit="m/s")
    if np.any(v > _C * (1 + 1e-9)):
        bad = v[v > _C * (1 + 1e-9)].ravel()[0]
        raise InputError(f"velocity must be <= c = {_C:.6g} m/s, got {bad:.6g}")
    x = check_nonnegative("offset_m", offset_m, unit="m")
    check_broadcast(depth_m=d, velocity=v, offset_m=x)
    return 2.0 * np.sqrt(d**2 + (x / 2.0) ** 2) / v


# low-loss approximations live in their own module; re-exported here (public path)
from .low_loss import low_loss_attenuation, low_loss_velocity  # noqa: E402
