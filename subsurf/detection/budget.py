"""Two-way loss budget per target kind, maximum detectable depth, resolution and footprint.

The radar range equation for a monostatic (or closely spaced bistatic) ground-coupled
antenna pair gives the ratio of received to transmitted power.  Written as a two-way
loss in decibels it is a depth-independent term, a geometric-spreading term
``10·p·log10(d)`` and the exponential absorption ``2·(20/ln 10)·α·d``::

    L(d) = K₀ + 10·p·log10(d) + 2·8.686·α·d        (dB)

with ``p`` = 2 for a planar interface (image source at 2d), 3 for a line target
(cylinder seen over its first Fresnel zone) and 4 for a compact target (radar cross
section).  A target is detectable where ``L(d)`` does not exceed the system performance
``P`` (dB); the depth where ``L(d) = P`` has the closed form of
:func:`subsurf.propagation.depth_from_loss_terms` (Lambert W), reused here.

Everything broadcasts: ``eps``, ``sigma``, ``freq_hz`` and ``performance_db`` may be
arrays of any common shape, e.g. (n_antennas, ny, nx); a :class:`Target` is a scalar
description (one target per call).  Units are SI; this module reads no files
(materials are resolved by :func:`subsurf.antennas.make_target`).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import Literal

import numpy as np
from scipy import constants

from ..errors import InputError, ModelRangeWarning, check_finite, check_positive
from ..waves.propagation import (
    NP_TO_DB,
    _alpha_beta,
    _check_medium,
    _reflection_power_from_gamma,
    depth_from_loss_terms,
    reflection_coefficient,
    wave_properties,
)

__all__ = [
    "TargetKind",
    "Target",
    "SPREADING_EXPONENT",
    "REACHES_MARGIN_DB",
    "complex_permittivity",
    "target_reflection",
    "radar_cross_section",
    "echo_width",
    "surface_transmission_loss_db",
    "loss_constant_db",
    "two_way_loss_db",
    "max_depth",
    "margin_db",
    "max_depth_and_margin",
    "verdict",
    "band_spectrum",
    "received_centroid_frequency",
    "Resolution",
    "vertical_resolution",
    "fresnel_radius",
    "footprint_radius",
    "resolution_at_depth",
    "check_target_footprint",
]

TargetKind = Literal["planar", "point", "line"]

#: Exponent p of geometric spreading in 10·p·log10(d), per target kind.
SPREADING_EXPONENT: dict[str, float] = {"planar": 2.0, "line": 3.0, "point": 4.0}

#: Margin (dB) at or above which a target "reaches"; between 0 and this it is "marginal".
#: 6 dB is a factor of two in received amplitude: our allowance for the usual
#: uncertainty in ground conductivity and target contrast (engineering judgement,
#: in line with common practice of demanding a few dB of headroom in link budgets).
REACHES_MARGIN_DB = 6.0

_EPS0 = constants.epsilon_0
_C = constants.c
_EULER_GAMMA = np.exp(np.euler_gamma)  # 1.781..., γ in the thin-wire formula


@dataclass(frozen=True)
class Target:
    """A buried target: kind, depth, size and the material it is made of.

    Attributes
    ----------
    kind : {"planar", "point", "line"}
        ``planar``: an extended interface (water table, bedrock, slab base);
        ``point``: a compact target (void, boulder, drum) modelled as a sphere;
        ``line``: a pipe, cable or duct modelled as a long cylinder, crossed at right angles.
    depth_m : float or None
        Depth to the top of the target (m, > 0); optional when only the maximum depth is asked.
    size_m : float or None
        Diameter (m, > 0) of a point or line target; ignored for planar targets.
    eps : complex or None
        Relative complex permittivity ε' − jε'' of the target material (dielectric part).
    sigma : float
        DC conductivity of the target material (S/m).
    conductor : bool
        Perfect electric conductor (metal): reflection coefficient −1, |R| = 1.
    material : str
        Label of the material (for tables), e.g. ``"metal"`` or ``"air"``.
    reflection : complex or None
        Explicit amplitude reflection coefficient host → target, overriding the material.

    Exactly one of ``conductor=True``, ``eps`` or ``reflection`` describes the contrast.
    """

    kind: TargetKind
    depth_m: float | None = None
    size_m: float | None = None
    eps: complex | None = None
    sigma: float = 0.0
    conductor: bool = False
    material: str = ""
    reflection: complex | None = None

    def __post_init__(self):
        if self.kind not in SPREADING_EXPONENT:
            raise InputError(f"target kind must be one of planar, point, line; got {self.kind!r}")
        if self.depth_m is not None:
            check_positive("target depth_m", self.depth_m, unit="m")
        if self.kind != "planar":
            if self.size_m is None:
                raise InputError(f"a {self.kind} target needs size_m (diameter, m > 0)")
            check_positive("target size_m", self.size_m, unit="m")
        given = [self.conductor, self.eps is not None, self.reflection is not None]
        if sum(given) != 1:
            raise InputError("describe the target contrast by exactly one of conductor=True, eps "
                             "(with sigma) or reflection")
        if self.eps is not None:
            e = complex(self.eps)
            if not (np.isfinite(e.real) and np.isfinite(e.imag)) or e.real < 1.0 or e.imag > 0:
                raise InputError(f"target eps must have real part >= 1 and imaginary part <= 0, got {self.eps}")
            check_finite("target sigma", self.sigma)
            if self.sigma < 0:
                raise InputError(f"target sigma must be >= 0 S/m, got {self.sigma:g}")
        if self.reflection is not None:
            r = abs(complex(self.reflection))
            if not np.isfinite(r) or r > 1.0 + 1e-12:
                raise InputError(f"target reflection must have magnitude <= 1, got {self.reflection}")

    @property
    def radius_m(self) -> float | None:
        """Radius (m) of a point or line target."""
        return None if self.size_m is None else 0.5 * float(self.size_m)

    def at_depth(self, depth_m: float) -> Target:
        """The same target at another depth."""
        from dataclasses import replace

        return replace(self, depth_m=depth_m)


# --- contrast --------------------------------------------------------------------------

def complex_permittivity(eps, sigma, freq_hz):
    """Relative complex permittivity with conduction folded in: ε_c = ε − jσ/(ωε₀)."""
    eps = np.asarray(eps, dtype=complex)
    return eps - 1j * np.asarray(sigma, dtype=float) / (2.0 * np.pi * np.asarray(freq_hz, dtype=float) * _EPS0)


def target_reflection(eps_host, sigma_host, freq_hz, target: Target):
    """Complex amplitude reflection coefficient at normal incidence, host → target.

    Parameters
    ----------
    eps_host, sigma_host : array_like
        Host ground: relative complex permittivity ε' − jε'' and DC conductivity (S/m).
    freq_hz : array_like
        Frequency (Hz).
    target : Target
        The target; a perfect conductor gives −1 exactly, an explicit ``reflection`` is
        returned as given (broadcast).

    Returns
    -------
    complex ndarray
        R broadcast over the inputs.

    Notes
    -----
    R = (Z_t − Z_h)/(Z_t + Z_h), Z = jωμ/γ (:func:`subsurf.propagation.reflection_coefficient`);
    lossless limit (√ε_h − √ε_t)/(√ε_h + √ε_t).  A perfect conductor has Z_t = 0, R = −1.
    """
    shape = np.broadcast_shapes(np.shape(eps_host), np.shape(sigma_host), np.shape(freq_hz))
    if target.conductor:
        return np.full(shape, -1.0 + 0j)
    if target.reflection is not None:
        return np.full(shape, complex(target.reflection))
    return reflection_coefficient(eps_host, sigma_host, target.eps, target.sigma, freq_hz)


def _relative_contrast(eps_host, sigma_host, freq_hz, target: Target):
    """ε_t,c / ε_h,c (complex, conduction folded in)."""
    eh = complex_permittivity(eps_host, sigma_host, freq_hz)
    et = complex_permittivity(target.eps, target.sigma, freq_hz)
    return et / eh


def radar_cross_section(eps_host, sigma_host, freq_hz, target: Target):
    """Backscatter radar cross-section (m²) of a compact target modelled as a sphere.

    Parameters
    ----------
    eps_host, sigma_host, freq_hz : array_like
        Host ground and frequency (broadcast).
    target : Target
        A ``point`` target with ``size_m`` its diameter.

    Returns
    -------
    ndarray
        σ_RCS in m².

    Notes
    -----
    With a the radius, k = β the wavenumber in the host and R the normal-incidence
    reflection coefficient:

    - optical (physical-optics) region, ka ≫ 1: σ = π a² |R|²;
    - Rayleigh region, ka ≪ 1: σ = 4π k⁴ a⁶ |(ε_r − 1)/(ε_r + 2)|² with ε_r the complex
      permittivity of the target relative to the host; for a perfect conductor
      σ = 9π k⁴ a⁶.

    We take the smaller of the two, which joins the regimes at ka ≈ 0.5–1 and is
    conservative in the resonance region (the exact Mie series oscillates above it).

    References
    ----------
    Knott, E. F., Shaeffer, J. F. & Tuley, M. T. (2004). *Radar Cross Section*, 2nd ed.,
    SciTech, ch. 5 (sphere: Rayleigh, resonance and optical regions).
    Daniels, D. J. (ed.) (2004). *Ground Penetrating Radar*, 2nd ed., IEE, ch. 4.
    """
    if target.kind != "point":
        raise InputError(f"radar_cross_section is for point targets, got kind {target.kind!r}")
    return _radar_cross_section(wave_properties(eps_host, sigma_host, freq_hz).beta, eps_host, sigma_host,
                                freq_hz, target)


def _radar_cross_section(k, eps_host, sigma_host, freq_hz, target: Target):
    """:func:`radar_cross_section` with the host wavenumber k = β already known (the loss budget's)."""
    a = target.radius_m
    r2 = np.abs(target_reflection(eps_host, sigma_host, freq_hz, target)) ** 2
    optical = np.pi * a**2 * r2
    if target.conductor:
        rayleigh = 9.0 * np.pi * k**4 * a**6
    elif target.eps is None:  # explicit reflection: no Rayleigh information, optical only
        return optical
    else:
        er = _relative_contrast(eps_host, sigma_host, freq_hz, target)
        rayleigh = 4.0 * np.pi * k**4 * a**6 * np.abs((er - 1.0) / (er + 2.0)) ** 2
    return np.minimum(optical, rayleigh)


def echo_width(eps_host, sigma_host, freq_hz, target: Target):
    """Backscatter echo width (2-D radar cross-section per unit length, m) of a long cylinder.

    The electric field is taken parallel to the cylinder axis (TM), the usual survey
    geometry with the antenna dipoles parallel to a pipe crossed at right angles.

    Notes
    -----
    With a the radius and k = β in the host:

    - optical region: σ₂ = π a |R|² (Knott et al. 2004);
    - thin dielectric cylinder, ka ≪ 1: σ₂ = (π²/4) k³ a⁴ |ε_r − 1|²;
    - thin perfectly conducting wire, ka ≪ 1:
      σ₂ = π² / (k·[(π/2)² + ln²(γ k a / 2)]) with γ = e^0.5772 = 1.781.

    Dielectric: the smaller of optical and thin (conservative at resonance).  Metal: the
    larger (the thin-wire echo exceeds the optical one below ka ≈ 1).  Checked against
    the exact Bessel-series solution in the tests.

    References
    ----------
    Balanis, C. A. (2012). *Advanced Engineering Electromagnetics*, 2nd ed., Wiley, §11.5
    (scattering by circular cylinders, small-argument forms).
    Knott, E. F., Shaeffer, J. F. & Tuley, M. T. (2004). *Radar Cross Section*, 2nd ed.
    """
    if target.kind != "line":
        raise InputError(f"echo_width is for line targets, got kind {target.kind!r}")
    return _echo_width(wave_properties(eps_host, sigma_host, freq_hz).beta, eps_host, sigma_host, freq_hz, target)


def _echo_width(k, eps_host, sigma_host, freq_hz, target: Target):
    """:func:`echo_width` with the host wavenumber k = β already known (the loss budget's)."""
    a = target.radius_m
    r2 = np.abs(target_reflection(eps_host, sigma_host, freq_hz, target)) ** 2
    optical = np.pi * a * r2
    if target.conductor:
        thin = np.pi**2 / (k * ((np.pi / 2.0) ** 2 + np.log(_EULER_GAMMA * k * a / 2.0) ** 2))
        return np.maximum(optical, thin)
    if target.eps is None:
        return optical
    er = _relative_contrast(eps_host, sigma_host, freq_hz, target)
    thin = (np.pi**2 / 4.0) * k**3 * a**4 * np.abs(er - 1.0) ** 2
    return np.minimum(optical, thin)


def surface_transmission_loss_db(eps_host, sigma_host, freq_hz):
    """Two-way loss (dB, ≥ 0) of crossing the air–ground surface down and back up.

    Notes
    -----
    Each crossing passes the power fraction 1 − |R|², R the normal-incidence
    reflection coefficient between air and the ground; two crossings give
    L_s = −20·log10(1 − |R|²).  For ε' = 9 this is 2.5 dB.  Ground-coupled antennas
    can couple better than a plane wave does; pass ``surface_loss_db=0`` to the depth
    functions to leave it out.

    References
    ----------
    Annan, A. P. (2009). Electromagnetic principles of ground penetrating radar. In
    Jol, H. M. (ed.), *Ground Penetrating Radar: Theory and Applications*, Elsevier, ch. 1.
    """
    r = reflection_coefficient(1.0, 0.0, eps_host, sigma_host, freq_hz)
    return -20.0 * np.log10(1.0 - np.abs(r) ** 2)


# --- loss budget -----------------------------------------------------------------------

def loss_constant_db(eps, sigma, freq_hz, target: Target, *, gain=1.0, surface_loss_db=None):
    """Depth-independent part K₀ (dB), spreading exponent p and α (Np/m) of the two-way loss.

    Returns
    -------
    (k0_db, p, alpha) : tuple of ndarray, float, ndarray
        ``K₀`` is +inf where the target returns nothing (R = 0).

    Notes
    -----
    With G the one-way antenna gain in the ground, λ the wavelength in the ground,
    R the reflection coefficient, σ_RCS the radar cross-section and σ₂ the echo width:

    - planar (image source at 2d):  P_r/P_t = G²λ²|R|² / ((4π)²(2d)²)  · e^(−4αd)
    - point (radar equation):       P_r/P_t = G²λ²σ_RCS / ((4π)³ d⁴)  · e^(−4αd)
    - line (cylinder over its first Fresnel zone, length L with L² = 2λd, whose
      broadside cross-section is σ₂·2L²/λ = 4σ₂d):
                                    P_r/P_t = G²λ²σ₂ / (16π³ d³)       · e^(−4αd)

    so K₀ = −10·log10 of the depth-free factor, plus the surface transmission loss.

    References
    ----------
    Annan, A. P. & Davis, J. L. (1977). Radar range analysis for geological materials.
    Geological Survey of Canada Paper 77-1B, 117–124.
    Daniels, D. J. (ed.) (2004). *Ground Penetrating Radar*, 2nd ed., IEE, ch. 4
    (radar range equation for planar, cylindrical and compact targets).
    Knott, E. F., Shaeffer, J. F. & Tuley, M. T. (2004). *Radar Cross Section*, 2nd ed.
    (finite cylinder from the two-dimensional echo width, σ = 2σ₂L²/λ).
    """
    g = check_positive("gain", gain)
    eps, sigma, freq, _ = _check_medium(eps, sigma, freq_hz, 1.0)
    if surface_loss_db is not None:
        surface_loss_db = _check_surface_loss(surface_loss_db)
    k0, p, alpha, _ = _loss_budget(eps, sigma, freq, target, g, surface_loss_db)
    return k0, p, alpha


def _check_surface_loss(surface_loss_db):
    sl = check_finite("surface_loss_db", surface_loss_db)
    if np.any(sl < 0):
        raise InputError(f"surface_loss_db must be >= 0 dB, got {sl[sl < 0].ravel()[0]:g}")
    return sl


def _loss_budget(eps, sigma, freq_hz, target: Target, gain, surface_loss_db):
    """(K₀ dB, p, α Np/m, β rad/m) of :func:`loss_constant_db`; inputs NOT validated (callers do).

    The grid chain calls this once per block with ground values its soil model produced
    valid; everything else goes through the validating public functions.  A planar
    target's |R|² and the surface loss come from the ground's α, β computed once here
    (:func:`subsurf.propagation._reflection_power_from_gamma`, the |·|² of
    :func:`subsurf.propagation.reflection_coefficient`).
    """
    eps = np.asarray(eps)
    eps_real, eps_imag = (eps.real, -eps.imag) if np.iscomplexobj(eps) else (eps, 0.0)
    omega = 2.0 * np.pi * np.asarray(freq_hz, dtype=float)
    alpha, beta = _alpha_beta(eps_real, eps_imag, sigma, omega)
    lam = 2.0 * np.pi / beta
    if target.kind == "planar":
        if target.conductor:
            strength = 1.0
        elif target.reflection is not None:
            strength = abs(complex(target.reflection)) ** 2
        else:
            et = complex(target.eps)
            strength = _reflection_power_from_gamma(alpha, beta, *_alpha_beta(et.real, -et.imag, target.sigma, omega))
        factor = lam**2 * strength / ((4.0 * np.pi) ** 2 * 4.0)
    elif target.kind == "point":
        factor = lam**2 * _radar_cross_section(beta, eps, sigma, freq_hz, target) / (4.0 * np.pi) ** 3
    else:
        factor = lam**2 * _echo_width(beta, eps, sigma, freq_hz, target) / (16.0 * np.pi**3)
    with np.errstate(divide="ignore"):
        k0 = -10.0 * np.log10(np.square(gain) * factor)
    if surface_loss_db is None:
        # two crossings of the air–ground surface, −20·log10(1 − |R|²) as in surface_transmission_loss_db
        r2 = _reflection_power_from_gamma(*_alpha_beta(1.0, 0.0, 0.0, omega), alpha, beta)
        k0 = k0 - 20.0 * np.log10(1.0 - r2)
    else:
        k0 = k0 + surface_loss_db
    return k0, SPREADING_EXPONENT[target.kind], alpha, beta


def two_way_loss_db(depth_m, eps, sigma, freq_hz, target: Target, *, gain=1.0, surface_loss_db=None):
    """Two-way loss L(d) in dB to a target at ``depth_m`` (broadcast with the medium).

    Notes
    -----
    L(d) = K₀ + 10·p·log10(d) + 2·(20/ln 10)·α·d; see :func:`loss_constant_db`.
    """
    d = check_positive("depth_m", depth_m, unit="m")
    k0, p, alpha = loss_constant_db(eps, sigma, freq_hz, target, gain=gain, surface_loss_db=surface_loss_db)
    return k0 + 10.0 * p * np.log10(d) + 2.0 * NP_TO_DB * alpha * d


def _check_performance(performance_db):
    perf = check_finite("performance_db", performance_db)
    if np.any(perf <= 0):
        raise InputError(f"performance_db must be > 0 dB, got {perf[perf <= 0].ravel()[0]:.6g}")
    return perf


def max_depth(eps, sigma, freq_hz, performance_db, *, target: Target, gain=1.0, surface_loss_db=None):
    """Maximum detectable depth (m) of a target in a ground, closed form (Lambert W).

    Parameters
    ----------
    eps : complex or array_like
        Relative complex permittivity ε' − jε'' of the ground at ``freq_hz``.
    sigma : float or array_like
        DC conductivity of the ground (S/m).
    freq_hz : float or array_like
        Antenna centre frequency (Hz).
    performance_db : float or array_like
        System performance (dB) including any stacking gain (see
        :meth:`subsurf.antennas.Antenna.effective_performance_db`).
    target : Target
        Kind, size and material of the target (its depth is not used).
    gain : float or array_like
        One-way antenna gain in the ground (linear, ≥ 1 typical).
    surface_loss_db : float or array_like or None
        Two-way surface transmission loss (dB); None computes it from the air–ground
        contrast (:func:`surface_transmission_loss_db`).

    Returns
    -------
    ndarray (or float)
        Depth in metres where the two-way loss equals the performance; 0 where no
        return reaches the receiver.  Shape: the broadcast of the array inputs.

    Notes
    -----
    L(d) = P ⇔ ln d + (4α/p)·d = κ, κ = (P − K₀)·ln 10/(10p), solved as
    d = W(b·e^κ)/b with b = 4α/p (principal Lambert W); lossless: d = e^κ.

    References
    ----------
    Corless, R. M., Gonnet, G. H., Hare, D. E. G., Jeffrey, D. J. & Knuth, D. E. (1996).
    On the Lambert W function. Adv. Comput. Math. 5, 329–359. doi:10.1007/BF02124750
    """
    perf = _check_performance(performance_db)
    k0, p, alpha = loss_constant_db(eps, sigma, freq_hz, target, gain=gain, surface_loss_db=surface_loss_db)
    return depth_from_loss_terms(k0, p, alpha, perf)


def margin_db(depth_m, eps, sigma, freq_hz, performance_db, *, target: Target, gain=1.0, surface_loss_db=None):
    """Margin (dB) = performance − two-way loss at ``depth_m``; ≥ 0 means detectable."""
    perf = _check_performance(performance_db)
    return perf - two_way_loss_db(depth_m, eps, sigma, freq_hz, target, gain=gain,
                                  surface_loss_db=surface_loss_db)


def max_depth_and_margin(depth_m, eps, sigma, freq_hz, performance_db, *, target: Target, gain=1.0,
                         surface_loss_db=None):
    """:func:`max_depth` and :func:`margin_db` at ``depth_m`` from one loss budget (half the work).

    Returns exactly what the two functions return separately (same expressions); the
    depth-free loss K₀ and α are evaluated once.  Used by the grid and regional maps.
    """
    perf = _check_performance(performance_db)
    d = check_positive("depth_m", depth_m, unit="m")
    k0, p, alpha = loss_constant_db(eps, sigma, freq_hz, target, gain=gain, surface_loss_db=surface_loss_db)
    return _depth_and_margin(k0, p, alpha, perf, d)


def _depth_and_margin(k0, p, alpha, perf, depth_m):
    """Maximum depth and margin at ``depth_m`` from the loss terms (shared by the checked and grid paths)."""
    return depth_from_loss_terms(k0, p, alpha, perf), _margin_from_loss_terms(k0, p, alpha, perf, depth_m)


def _margin_from_loss_terms(k0, p, alpha, perf, depth_m):
    """P − L(d) with L(d) = K₀ + 10·p·log10(d) + 2·(20/ln 10)·α·d."""
    return perf - (k0 + 10.0 * p * np.log10(depth_m) + 2.0 * NP_TO_DB * alpha * depth_m)


def _grid_margin(depth_m, eps, sigma, freq_hz, performance_db, *, target: Target, gain=1.0, surface_loss_db=None):
    """:func:`margin_db` for the grid chain and the reach probability; ε and σ NOT validated.

    As :func:`_grid_depth_and_margin` (ε, σ from a validated soil model; the small
    per-antenna inputs checked) without the maximum depth: only what the margin needs.
    """
    perf = _check_performance(performance_db)
    d = check_positive("depth_m", depth_m, unit="m")
    g = check_positive("gain", gain)
    freq = check_positive("freq_hz", freq_hz, unit="Hz")
    if surface_loss_db is not None:
        surface_loss_db = _check_surface_loss(surface_loss_db)
    k0, p, alpha, _ = _loss_budget(eps, sigma, freq, target, g, surface_loss_db)
    return _margin_from_loss_terms(k0, p, alpha, perf, d)


def _grid_depth_and_margin(depth_m, eps, sigma, freq_hz, performance_db, *, target: Target, gain=1.0,
                           surface_loss_db=None):
    """:func:`max_depth_and_margin` for the grid chain, plus α and β; ε and σ NOT validated.

    ``eps`` and ``sigma`` must come from a validated soil model (the chain's entry checks
    the site facts once; re-checking every derived array cost several passes per block).
    The small per-antenna inputs are still checked.

    Returns
    -------
    (max_depth, margin_db, alpha, beta) : tuple of ndarray
    """
    perf = _check_performance(performance_db)
    d = check_positive("depth_m", depth_m, unit="m")
    g = check_positive("gain", gain)
    freq = check_positive("freq_hz", freq_hz, unit="Hz")
    if surface_loss_db is not None:
        surface_loss_db = _check_surface_loss(surface_loss_db)
    k0, p, alpha, beta = _loss_budget(eps, sigma, freq, target, g, surface_loss_db)
    dmax, margin = _depth_and_margin(k0, p, alpha, perf, d)
    return dmax, margin, alpha, beta


def verdict(margin, *, reaches_db: float = REACHES_MARGIN_DB) -> np.ndarray:
    """Verdict per margin: "reaches" (≥ reaches_db), "marginal" (0 to reaches_db), "does not reach" (< 0)."""
    m = np.asarray(margin, dtype=float)
    out = np.where(m >= reaches_db, "reaches", np.where(m >= 0.0, "marginal", "does not reach"))
    return out if out.ndim else out[()]


# --- spectrum received from depth --------------------------------------------------------

def band_spectrum(centre_freq_hz: float, bandwidth_hz: float, *, n: int = 193):
    """Frequencies (Hz) and amplitude of a Gaussian transmitted spectrum.

    The amplitude spectrum is A(f) = exp(−(f − f_c)²/(2s²)) with s = B/(2√ln 2), so
    that B is the full width at half power; sampled on ``n`` points over f_c ± h with
    h = min(4s, 0.98·f_c): the band is cut symmetrically about f_c (GPR pulses carry no
    DC), so the transmitted centroid is exactly f_c.

    Returns
    -------
    (freqs_hz, amplitude) : ndarray, ndarray of shape (n,)
    """
    fc = float(check_positive("centre_freq_hz", centre_freq_hz, unit="Hz"))
    bw = float(check_positive("bandwidth_hz", bandwidth_hz, unit="Hz"))
    s = bw / (2.0 * np.sqrt(np.log(2.0)))
    half = min(4.0 * s, 0.98 * fc)
    freqs = np.linspace(fc - half, fc + half, int(n))
    return freqs, np.exp(-((freqs - fc) ** 2) / (2.0 * s**2))


def received_centroid_frequency(freqs_hz, amplitude, alpha_np_per_m, depth_m):
    """Centroid frequency (Hz) of the amplitude spectrum received from ``depth_m``.

    Parameters
    ----------
    freqs_hz, amplitude : array_like, shape (n,)
        Transmitted amplitude spectrum (e.g. from :func:`band_spectrum`), uniform grid.
    alpha_np_per_m : array_like, shape (..., n)
        Attenuation constant of the ground at each frequency of the grid (Np/m), e.g.
        ``wave_properties(eps(f), sigma, f).alpha`` with ε evaluated at every frequency.
    depth_m : array_like, broadcastable to ``alpha.shape[:-1]``
        Depth (m, ≥ 0).

    Returns
    -------
    ndarray, shape (...)
        f_R = ∫ f·A(f)·e^(−2α(f)d) df / ∫ A(f)·e^(−2α(f)d) df (trapezoidal rule on the grid).

    Notes
    -----
    Attenuation rising with frequency removes the high part of the band first, so the
    centroid moves down with depth; without loss it stays at the transmitted centroid.
    For a Gaussian spectrum of variance s² and α = α₁·f the shift is exactly
    f_S − f_R = 2α₁·d·s² (Quan & Harris 1997, eq. 10 with the two-way path).

    References
    ----------
    Quan, Y. & Harris, J. M. (1997). Seismic attenuation tomography using the frequency
    shift method. Geophysics 62(3), 895–905. doi:10.1190/1.1444197
    Irving, J. D. & Knight, R. J. (2003). Removal of wavelet dispersion from
    ground-penetrating radar data. Geophysics 68(3), 960–970. doi:10.1190/1.1581068
    """
    f = np.asarray(freqs_hz, dtype=float)
    amp = np.asarray(amplitude, dtype=float)
    alpha = np.asarray(alpha_np_per_m, dtype=float)
    d = np.asarray(depth_m, dtype=float)
    if np.any(d < 0) or not np.all(np.isfinite(d)):
        raise InputError("depth_m must be finite and >= 0 m")
    # log-weights, shifted per spectrum so deep, lossy cases do not underflow to 0/0
    logw = np.log(np.maximum(amp, 1e-300)) - 2.0 * alpha * d[..., None]
    logw = logw - logw.max(axis=-1, keepdims=True)
    w = np.exp(logw)
    # trapezoidal weights: the band is cut where the spectrum is not zero, so a plain sum
    # would converge only to first order in the grid spacing
    w[..., 0] *= 0.5
    w[..., -1] *= 0.5
    return (w * f).sum(axis=-1) / w.sum(axis=-1)


# --- resolution and footprint --------------------------------------------------------------

def vertical_resolution(wavelength_m):
    """Vertical resolution (m): a quarter of the dominant wavelength in the ground.

    References
    ----------
    Widess, M. B. (1973). How thin is a thin bed? Geophysics 38(6), 1176–1180.
    doi:10.1190/1.1440403 (the λ/4 limit); Jol, H. M. (ed.) (2009), ch. 1.
    """
    return 0.25 * np.asarray(wavelength_m, dtype=float)


def fresnel_radius(wavelength_m, depth_m):
    """Radius (m) of the first Fresnel zone at ``depth_m``: r = √(λd/2 + λ²/16).

    Two targets closer together laterally than this are not separated; the radius is
    the usual horizontal resolution at depth.

    References
    ----------
    Pérez-Gracia, V., González-Drigo, R. & Di Capua, D. (2008). Horizontal resolution in a
    non-destructive shallow GPR survey. NDT&E Int. 41, 611–620. doi:10.1016/j.ndteint.2008.06.002
    """
    lam = np.asarray(wavelength_m, dtype=float)
    d = np.asarray(depth_m, dtype=float)
    return np.sqrt(lam * d / 2.0 + lam**2 / 16.0)


def footprint_radius(wavelength_m, depth_m, eps_real):
    """Long semi-axis (m) of the antenna footprint at ``depth_m``: A = λ/4 + d/√(ε' − 1).

    References
    ----------
    Annan, A. P. & Cosway, S. W. (1992). Ground penetrating radar survey design. Proc.
    SAGEEP 1992, 329–351.
    """
    er = np.asarray(eps_real, dtype=float)
    if np.any(er <= 1.0):
        raise InputError("footprint needs ε' > 1 in the ground (A = λ/4 + d/√(ε'−1))")
    return 0.25 * np.asarray(wavelength_m, dtype=float) + np.asarray(depth_m, dtype=float) / np.sqrt(er - 1.0)


@dataclass(frozen=True)
class Resolution:
    """Resolution and footprint at a depth, from the spectrum received from that depth.

    Attributes (arrays, SI)
    -----------------------
    received_freq_hz : centroid frequency of the received spectrum
    wavelength_m : wavelength in the ground at the received frequency
    vertical_m : λ_R/4 (Widess 1973)
    fresnel_radius_m : √(λ_R d/2 + λ_R²/16), the horizontal resolution
    footprint_radius_m : λ_R/4 + d/√(ε'−1) (Annan & Cosway 1992)
    smallest_separable_m : the larger of vertical and horizontal resolution; two targets
        closer than this in every direction appear as one
    """

    received_freq_hz: np.ndarray
    wavelength_m: np.ndarray
    vertical_m: np.ndarray
    fresnel_radius_m: np.ndarray
    footprint_radius_m: np.ndarray
    smallest_separable_m: np.ndarray


def resolution_at_depth(eps_band, sigma_band, freqs_hz, amplitude, depth_m) -> Resolution:
    """Resolution and footprint at ``depth_m`` from the band received there.

    Parameters
    ----------
    eps_band, sigma_band : array_like, shape (..., n)
        Ground ε and σ at every frequency of the band grid (a frequency-dependent soil
        is evaluated at each frequency; a constant ground broadcasts).
    freqs_hz, amplitude : array_like, shape (n,)
        The transmitted spectrum (:func:`band_spectrum`).
    depth_m : array_like, broadcastable to the leading shape

    Notes
    -----
    The received wavelength is v(f_R)/f_R with the phase velocity interpolated across
    the band at the received centroid f_R (:func:`received_centroid_frequency`).
    """
    f = np.asarray(freqs_hz, dtype=float)
    w = wave_properties(eps_band, sigma_band, f)
    d = np.asarray(check_positive("depth_m", depth_m, unit="m"))
    fr = received_centroid_frequency(f, amplitude, w.alpha, d)
    idx = np.clip(np.searchsorted(f, fr) - 1, 0, f.size - 2)
    t = (fr - f[idx]) / (f[idx + 1] - f[idx])
    v = np.take_along_axis(w.velocity, idx[..., None], -1)[..., 0] * (1 - t) + \
        np.take_along_axis(w.velocity, (idx + 1)[..., None], -1)[..., 0] * t
    er = np.take_along_axis(w.eps_real, idx[..., None], -1)[..., 0]
    lam = v / fr
    vert = vertical_resolution(lam)
    fres = fresnel_radius(lam, d)
    return Resolution(
        received_freq_hz=fr, wavelength_m=lam, vertical_m=vert, fresnel_radius_m=fres,
        footprint_radius_m=footprint_radius(lam, d, er), smallest_separable_m=np.maximum(vert, fres),
    )


def check_target_footprint(target: Target, footprint_radius_m, *, stacklevel: int = 2) -> bool:
    """Warn (ModelRangeWarning) when a point/line target is wider than the footprint diameter.

    A target wider than the illuminated patch is no longer a compact or thin scatterer;
    its top behaves as a planar reflector.  Returns True when a warning was issued.
    """
    if target.kind == "planar" or target.size_m is None:
        return False
    width = 2.0 * float(np.min(footprint_radius_m))
    if target.size_m > width:
        warnings.warn(
            f"target size {target.size_m:g} m is larger than the antenna footprint "
            f"({width:.3g} m across at {target.depth_m:g} m depth): the {target.kind}-target model "
            "does not hold; its top reflects like a planar interface (use kind 'planar')",
            ModelRangeWarning, stacklevel=stacklevel + 1,
        )
        return True
    return False
