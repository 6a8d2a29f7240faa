"""Band-limited constant-Q description of radar attenuation: Q*, and its relation to ε(f).

Turner & Siggins (1994) observed that over the band of a radar pulse the attenuation of
many geological materials is close to linear in frequency, α(f) ≈ α₀ + π f/(Q* v), and
named Q* the parameter of the slope.  Bradford (2007) derived Q* of any permittivity
model from the first-order Taylor expansion of α(f):

    1/Q*(f) = (v/π) · dα/df.

This module gives Q* of a model (:func:`q_star`), the attenuation of a given Q*
(:func:`attenuation_from_q_star`), the exact dielectric Q of Kjartansson's constant-Q
permittivity that has a requested Q* (:func:`q_from_q_star`), and the ground described by
attenuations measured at two frequencies (:func:`loss_from_two_attenuations`).

References
----------
Turner, G., & Siggins, A. F. (1994). Constant Q attenuation of subsurface radar pulses.
Geophysics, 59(8), 1192–1200. doi:10.1190/1.1443677
Bradford, J. H. (2007). Frequency-dependent attenuation analysis of ground-penetrating
radar data. Geophysics, 72(3), J7–J16. doi:10.1190/1.2710183
Kjartansson, E. (1979). Constant Q-wave propagation and attenuation. J. Geophys. Res.,
84(B9), 4737–4748. doi:10.1029/JB084iB09p04737
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import constants, optimize

from ..errors import InputError, check_nonnegative, check_positive
from .relaxation import JONSCHER_REFERENCE_FREQ_HZ, constant_q_permittivity

__all__ = [
    "q_star",
    "attenuation_from_q_star",
    "q_from_q_star",
    "q_star_from_q",
    "TwoFrequencyLoss",
    "loss_from_two_attenuations",
]


def _out(x):
    return x[()] if isinstance(x, np.ndarray) and x.ndim == 0 else x


def _alpha_beta(eps, sigma, freq):
    from ..waves.propagation import _alpha_beta as ab

    eps = np.asarray(eps, dtype=complex)
    return ab(eps.real, -eps.imag, sigma, 2.0 * np.pi * np.asarray(freq, dtype=float))


def q_star(permittivity, sigma, freq_hz, *, rel_step=1e-3):
    """Band-limited Q* of a ground at ``freq_hz`` from the slope of its attenuation (Bradford 2007).

    Parameters
    ----------
    permittivity : callable
        ``permittivity(freq_hz) -> complex ε`` (ε' − jε''), broadcasting over arrays.
    sigma : float or array_like
        DC conductivity in S/m, >= 0 (added to ωε₀ε'').
    freq_hz : float or array_like
        Frequency in Hz, > 0.
    rel_step : float
        Relative step of the central difference of α(f).

    Returns
    -------
    float or ndarray
        Q* = π/(v dα/df) with v = ω/β at ``freq_hz``; ``inf`` where α does not rise
        with frequency (dα/df <= 0).

    Notes
    -----
    Bradford's (2007) first-order expansion α(f) ≈ α(f₀) + (f − f₀) dα/df, written as
    α₀ + π f/(Q* v) (Turner & Siggins 1994).  The derivative is a central difference
    of the exact α of γ² = jωμ₀(σ + jωε₀ε).
    """
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    s = check_nonnegative("sigma", sigma, unit="S/m")
    h = rel_step * f
    a_hi, _ = _alpha_beta(permittivity(f + h), s, f + h)
    a_lo, _ = _alpha_beta(permittivity(f - h), s, f - h)
    _, beta = _alpha_beta(permittivity(f), s, f)
    slope = (a_hi - a_lo) / (2.0 * h)
    v = 2.0 * np.pi * f / beta
    with np.errstate(divide="ignore"):
        out = np.where(slope > 0, np.pi / (v * np.where(slope > 0, slope, 1.0)), np.inf)
    return _out(out)


def attenuation_from_q_star(freq_hz, q_star_value, velocity, *, alpha0=0.0):
    """Attenuation α(f) = α₀ + π f/(Q* v) in Np/m (Turner & Siggins 1994).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, > 0.
    q_star_value : float or array_like
        Q*, > 0.
    velocity : float or array_like
        Phase velocity in m/s, > 0.
    alpha0 : float or array_like
        Intercept in Np/m, >= 0.

    Returns
    -------
    float or ndarray
        α in Np/m, broadcast over the inputs.
    """
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    q = check_positive("q_star", q_star_value)
    v = check_positive("velocity", velocity, unit="m/s")
    a0 = check_nonnegative("alpha0", alpha0, unit="Np/m")
    return _out(a0 + np.pi * f / (q * v))


def q_star_from_q(q):
    """Q* of Kjartansson's constant-Q permittivity of dielectric Q: 1/Q* = 2(1 − γ)·tan(πγ/2), γ = arctan(1/Q)/π.

    Notes
    -----
    ε = |ε|e^(−jπγ) with |ε| ∝ f^(−2γ) gives α = ω√(μ₀ε₀|ε|)·sin(πγ/2) ∝ f^(1−γ)
    and β = ω√(μ₀ε₀|ε|)·cos(πγ/2); then (v/π)dα/df = 2(1 − γ)tan(πγ/2), with no
    conduction.  For large Q, Q* → Q.
    """
    qq = check_positive("q", q)
    g = np.arctan(1.0 / qq) / np.pi
    return _out(1.0 / (2.0 * (1.0 - g) * np.tan(0.5 * np.pi * g)))


def q_from_q_star(q_star_value):
    """Dielectric Q = ε'/ε'' of the constant-Q permittivity whose Q* (no conduction) is ``q_star_value``.

    Inverts :func:`q_star_from_q`, which increases monotonically from 0 to 1 as γ goes
    from 0 to 1/2, by bracketing root finding (scipy brentq); so Q* must be > 1 (no
    passive constant-Q permittivity is lossier).
    """
    qs = check_positive("q_star", q_star_value)
    if np.any(qs <= 1.0):
        raise InputError(f"q_star must be > 1 (no constant-Q ground is lossier), got "
                         f"{qs[qs <= 1.0].ravel()[0]:.6g}")

    def one(target):
        fn = lambda g: 2.0 * (1.0 - g) * np.tan(0.5 * np.pi * g) - 1.0 / target  # noqa: E731
        g = optimize.brentq(fn, 1e-15, 0.5 - 1e-12, xtol=1e-15, rtol=1e-14)
        return 1.0 / np.tan(np.pi * g)

    out = np.vectorize(one, otypes=[float])(qs)
    return _out(out)


#: Largest relative misfit of the two attenuations accepted (α of a constant-Q ε grows as
#: f^(1−γ), slightly slower than the straight line, so a line through 0 is met only closely).
_FIT_TOLERANCE = 0.02


@dataclass(frozen=True)
class TwoFrequencyLoss:
    """Ground loss fitted to attenuations at two frequencies: DC σ and dielectric Q of a constant-Q ε."""

    sigma: float
    q: float
    q_star: float
    reference_freq_hz: float

    def permittivity(self, eps_ref, freq_hz):
        """ε(f) of the fitted ground for ε' = ``eps_ref`` at the reference frequency."""
        if not np.isfinite(self.q):
            return np.full(np.shape(freq_hz), complex(eps_ref))
        return constant_q_permittivity(freq_hz, eps_ref, self.q, reference_freq_hz=self.reference_freq_hz)


def loss_from_two_attenuations(eps_ref, freq1_hz, alpha1, freq2_hz, alpha2, *,
                               reference_freq_hz=JONSCHER_REFERENCE_FREQ_HZ) -> TwoFrequencyLoss:
    """DC conductivity and constant-Q dielectric loss reproducing two measured attenuations.

    Parameters
    ----------
    eps_ref : float
        Real relative permittivity at ``reference_freq_hz``, >= 1.
    freq1_hz, freq2_hz : float
        The two frequencies in Hz, > 0 and different.
    alpha1, alpha2 : float
        Measured one-way attenuations in Np/m, >= 0.
    reference_freq_hz : float
        Reference frequency of ``eps_ref`` (default 100 MHz).

    Returns
    -------
    TwoFrequencyLoss
        σ (S/m) and Q such that ε(f) = constant-Q(ε_ref, Q) with σ gives α(f1) = alpha1
        and α(f2) = alpha2 (exactly where possible, else within 2 %: a constant-Q α grows
        slightly slower than linearly); its Q* at the geometric mean frequency.

    Raises
    ------
    InputError
        When the straight line through the two points has a negative slope (loss
        falling with frequency: a negative dielectric loss) or a negative intercept
        at 0 Hz (a negative conduction loss).

    Notes
    -----
    The linear law α = α₀ + π f/(Q* v) of Turner & Siggins (1994) decides what is
    admissible; the exact fit then solves the two equations of the full γ for (σ, 1/Q)
    by bounded least squares (scipy), starting from σ = 2α₀√ε'/Z₀ and Q = Q*.
    """
    e = float(check_positive("eps_ref", eps_ref))
    f1, f2 = float(check_positive("freq1_hz", freq1_hz)), float(check_positive("freq2_hz", freq2_hz))
    a1, a2 = float(check_nonnegative("alpha1", alpha1)), float(check_nonnegative("alpha2", alpha2))
    if f1 == f2:
        raise InputError("the two attenuation frequencies must differ")
    if f2 < f1:
        f1, a1, f2, a2 = f2, a2, f1, a1
    slope = (a2 - a1) / (f2 - f1)
    a0 = a1 - slope * f1
    db = 20.0 / np.log(10.0)
    if slope < 0:
        raise InputError(f"attenuation {a1 * db:.4g} dB/m at {f1 / 1e6:g} MHz and {a2 * db:.4g} dB/m at "
                         f"{f2 / 1e6:g} MHz falls with frequency, which implies a negative dielectric loss; "
                         "allowed: attenuation at the higher frequency >= that at the lower")
    if a0 < -1e-12 * max(a1, a2, 1e-300):
        raise InputError(f"attenuation {a1 * db:.4g} dB/m at {f1 / 1e6:g} MHz and {a2 * db:.4g} dB/m at "
                         f"{f2 / 1e6:g} MHz extrapolates to {a0 * db:.4g} dB/m at 0 Hz, a negative conduction "
                         "loss; allowed: a line through the two with intercept >= 0 (the higher attenuation at "
                         f"most {f2 / f1:.4g}x the lower)")
    z0 = constants.physical_constants["characteristic impedance of vacuum"][0]
    sigma0 = max(a0, 0.0) * 2.0 * np.sqrt(e) / z0
    v = constants.c / np.sqrt(e)
    qinv0 = slope * v / np.pi
    if slope == 0:
        return TwoFrequencyLoss(sigma=float(sigma0), q=np.inf, q_star=np.inf, reference_freq_hz=reference_freq_hz)
    scale = np.array([max(a1, a2), max(a1, a2)])

    def resid(p):
        s, qi = p
        q = 1.0 / qi if qi > 0 else np.inf
        eps = (constant_q_permittivity(np.array([f1, f2]), e, q, reference_freq_hz=reference_freq_hz)
               if np.isfinite(q) else np.array([e, e], dtype=complex))
        a, _ = _alpha_beta(eps, s, np.array([f1, f2]))
        return (a - np.array([a1, a2])) / scale

    sol = optimize.least_squares(resid, x0=[sigma0, max(qinv0, 1e-9)], bounds=([0.0, 0.0], [np.inf, 2.0]),
                                 xtol=1e-14, ftol=1e-14, gtol=1e-14)
    s, qi = sol.x
    s = 0.0 if s < 1e-9 else s  # round-off of the bounded solver at the σ = 0 bound
    q = 1.0 / qi if qi > 0 else np.inf
    if np.max(np.abs(sol.fun)) > _FIT_TOLERANCE:
        raise InputError(f"no passive ground of ε'={e:g} has attenuations {a1 * db:.4g} dB/m at {f1 / 1e6:g} MHz "
                         f"and {a2 * db:.4g} dB/m at {f2 / 1e6:g} MHz (closest misfit "
                         f"{np.max(np.abs(sol.fun)) * 100:.2g} %)")
    fm = np.sqrt(f1 * f2)
    qs = float(q_star(lambda f: (constant_q_permittivity(f, e, q, reference_freq_hz=reference_freq_hz)
                                 if np.isfinite(q) else np.full(np.shape(f), complex(e))), s, fm))
    return TwoFrequencyLoss(sigma=float(s), q=float(q), q_star=qs, reference_freq_hz=reference_freq_hz)
