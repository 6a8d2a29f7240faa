"""Attenuation of a ground as a function of frequency: Q* of any model, two-frequency fits, loss per mechanism.

Built on the exact α, β of :mod:`subsurf.waves.propagation` (one formula for the whole
package) and on the ground-layer permittivity models.

References
----------
Turner, G., & Siggins, A. F. (1994). Constant Q attenuation of subsurface radar pulses.
Geophysics, 59(8), 1192–1200. doi:10.1190/1.1443677
Bradford, J. H. (2007). Frequency-dependent attenuation analysis of ground-penetrating
radar data. Geophysics, 72(3), J7–J16. doi:10.1190/1.2710183
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import _codata as constants  # scipy.constants values without its import cost (start-up)
from ..errors import InputError, check_nonnegative, check_positive
from ..ground.relaxation import JONSCHER_REFERENCE_FREQ_HZ, constant_q_permittivity
from .propagation import NP_TO_DB
from .propagation import _alpha_beta as _ab

__all__ = ["q_star", "TwoFrequencyLoss", "loss_from_two_attenuations", "loss_by_mechanism",
           "medium_loss_by_mechanism"]


def _out(x):
    return x[()] if isinstance(x, np.ndarray) and x.ndim == 0 else x


def _alpha_beta(eps, sigma, freq):
    eps = np.asarray(eps, dtype=complex)
    return _ab(eps.real, -eps.imag, sigma, 2.0 * np.pi * np.asarray(freq, dtype=float))


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
    z0 = constants.mu_0 * constants.c
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

    from scipy import optimize

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


def loss_by_mechanism(eps_water, eps_interface, sigma, freq_hz, *, scattering_np_per_m=0.0):
    """One-way attenuation in dB/m split by mechanism, exactly.

    Parameters
    ----------
    eps_water : complex or array_like
        Permittivity without the interface term (its ε'' is the free-water relaxation).
    eps_interface : complex or array_like
        The interface (bound-water) susceptibility added to it (0 when absent).
    sigma : float or array_like
        DC conductivity, S/m.
    freq_hz : float or array_like
        Frequency, Hz.
    scattering_np_per_m : float or array_like
        Scattering attenuation, Np/m (:func:`subsurf.soil.scattering.scattering_attenuation`).

    Returns
    -------
    dict
        ``conduction``, ``water_relaxation``, ``interface_relaxation``, ``scattering``
        and ``total`` in dB/m.

    Notes
    -----
    The intrinsic α = ωμ₀σ_eff/(2β) is linear in σ_eff = σ + ωε₀(ε''_w + ε''_i) at the
    common β, so α splits exactly into the shares σ/σ_eff, ωε₀ε''_w/σ_eff and
    ωε₀ε''_i/σ_eff.  Scattering adds to the amplitude attenuation (independent loss
    of coherent power).
    """
    f = np.asarray(freq_hz, dtype=float)
    omega = 2.0 * np.pi * f
    eps = np.asarray(eps_water, dtype=complex) + np.asarray(eps_interface, dtype=complex)
    s = np.asarray(sigma, dtype=float)
    alpha, _ = _ab(eps.real, -eps.imag, s, omega)
    w_part = omega * constants.epsilon_0 * np.maximum(-np.asarray(eps_water, dtype=complex).imag, 0.0)
    i_part = omega * constants.epsilon_0 * np.maximum(-np.asarray(eps_interface, dtype=complex).imag, 0.0)
    total = s + w_part + i_part
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(total > 0, alpha / np.where(total > 0, total, 1.0), 0.0)
    scat = np.broadcast_to(np.asarray(scattering_np_per_m, dtype=float), np.shape(alpha))
    out = {
        "conduction": s * share * NP_TO_DB,
        "water_relaxation": w_part * share * NP_TO_DB,
        "interface_relaxation": i_part * share * NP_TO_DB,
        "scattering": scat * NP_TO_DB,
    }
    out["total"] = (alpha + scat) * NP_TO_DB
    return {k: (v[()] if np.ndim(v) == 0 else v) for k, v in out.items()}


def medium_loss_by_mechanism(medium, freq_hz) -> dict:
    """:func:`loss_by_mechanism` of a :class:`subsurf.ground.medium.Medium` at ``freq_hz``.

    For a soil: conduction (σ_DC), water relaxation (free-water Debye in ε''; for the
    Peplinski model its ε'' holds conduction too), interface relaxation (the Jonscher
    term), scattering (stones).  For a direct description the dielectric ε'' (given, or
    of the Q model) is reported as interface relaxation.
    """
    f = np.asarray(freq_hz, dtype=float)
    eps, sigma = medium.electrical(f)
    if medium.soil is not None:
        inter = medium.soil.interface_susceptibility(f)
        scat = medium.soil.scattering_attenuation(f, eps=eps)
        return loss_by_mechanism(eps - inter, inter, sigma, f, scattering_np_per_m=scat)
    return loss_by_mechanism(eps.real + 0j, -1j * np.maximum(-eps.imag, 0.0), sigma, f)
