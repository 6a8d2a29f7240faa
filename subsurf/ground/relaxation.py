"""Dielectric relaxation models beyond free water: Cole–Cole, Jonscher and constant Q.

Each function returns the relative complex permittivity ε = ε' − jε'' (ε'' >= 0) of a
causal, passive response, and broadcasts over numpy arrays.  They serve three uses:

* the bound-water / clay–water interface loss of a soil (:class:`subsurf.soil.Soil`
  adds a Jonscher term, on by default, whose parameters come from the texture preset);
* the direct ground description (``--eps`` with ``--q-star``), for which
  :func:`constant_q_permittivity` is the causal permittivity of a given Q;
* reference closed forms for tests (Kramers–Kronig consistency, Debye limits).

References
----------
Cole, K. S., & Cole, R. H. (1941). Dispersion and absorption in dielectrics I.
J. Chem. Phys., 9, 341–351. doi:10.1063/1.1750906
Jonscher, A. K. (1977). The 'universal' dielectric response. Nature, 267, 673–679.
doi:10.1038/267673a0
Hollender, F., & Tillard, S. (1998). Modeling ground-penetrating radar wave propagation
and reflection with the Jonscher parameterization. Geophysics, 63(6), 1933–1942.
doi:10.1190/1.1444486
Kjartansson, E. (1979). Constant Q-wave propagation and attenuation. J. Geophys. Res.,
84(B9), 4737–4748. doi:10.1029/JB084iB09p04737
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError, check_nonnegative, check_positive, check_range

__all__ = [
    "cole_cole_permittivity",
    "jonscher_permittivity",
    "jonscher_susceptibility",
    "constant_q_permittivity",
    "constant_q_exponent",
    "JONSCHER_REFERENCE_FREQ_HZ",
]

#: Reference frequency of the Jonscher parameterisation, Hz (Hollender & Tillard 1998 use 100 MHz).
JONSCHER_REFERENCE_FREQ_HZ = 100e6


def _out(x):
    return x[()] if isinstance(x, np.ndarray) and x.ndim == 0 else x


def cole_cole_permittivity(freq_hz, eps_inf, delta_eps, relaxation_freq_hz, *, alpha=0.0):
    """Cole–Cole relaxation ε(f) = ε∞ + Δε / (1 + (j f/f_r)^(1−α)).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, > 0.
    eps_inf : float or array_like
        High-frequency relative permittivity ε∞, >= 1.
    delta_eps : float or array_like
        Relaxation strength Δε = ε_s − ε∞, >= 0.
    relaxation_freq_hz : float or array_like
        Relaxation frequency f_r = 1/(2πτ) in Hz, > 0.
    alpha : float or array_like
        Cole–Cole broadening, 0 <= α < 1 (0 is Debye).

    Returns
    -------
    complex or ndarray of complex
        ε' − jε'' (ε'' >= 0), broadcast over all inputs.

    Notes
    -----
    With the engineering convention exp(jωt); the response is analytic in the lower
    half of the complex frequency plane, so causal, and ε'' >= 0 for 0 <= α < 1.

    References
    ----------
    Cole, K. S., & Cole, R. H. (1941). J. Chem. Phys., 9, 341–351. doi:10.1063/1.1750906
    """
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    ei = check_range("eps_inf", eps_inf, 1.0, 1e4)
    de = check_nonnegative("delta_eps", delta_eps)
    fr = check_positive("relaxation_freq_hz", relaxation_freq_hz, unit="Hz")
    a = check_range("alpha", alpha, 0.0, 1.0)
    if np.any(a >= 1.0):
        raise InputError("alpha must be >= 0 and < 1 (0 is Debye), got 1")
    return _out(ei + de / (1.0 + (1j * f / fr) ** (1.0 - a)))


def jonscher_susceptibility(freq_hz, chi_r, n, *, reference_freq_hz=JONSCHER_REFERENCE_FREQ_HZ):
    """The Jonscher power-law term χ(f) = χ_r (f/f_r)^(n−1) (1 − j cot(nπ/2)), unchecked inputs allowed.

    Written as χ_r/sin(nπ/2) · (j f/f_r)^(n−1) in real arithmetic; used by
    :func:`jonscher_permittivity` and by the soil model (which validates once).
    """
    f = np.asarray(freq_hz, dtype=float)
    chi = np.asarray(chi_r, dtype=float)
    nn = np.asarray(n, dtype=float)
    power = np.exp((nn - 1.0) * np.log(f / reference_freq_hz))
    real = chi * power
    imag = real / np.tan(0.5 * np.pi * nn)
    return _out(real - 1j * imag)


def jonscher_permittivity(freq_hz, eps_inf, chi_r, n, *, reference_freq_hz=JONSCHER_REFERENCE_FREQ_HZ):
    """Jonscher 'universal response' permittivity as parameterised for GPR by Hollender & Tillard (1998).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, > 0.
    eps_inf : float or array_like
        High-frequency relative permittivity ε∞, >= 1.
    chi_r : float or array_like
        Real susceptibility at the reference frequency, >= 0.
    n : float or array_like
        Power-law exponent, 0 < n < 1 (n → 1: lossless; n → 0: conduction-like).
    reference_freq_hz : float
        Reference frequency f_r in Hz (default 100 MHz, as Hollender & Tillard).

    Returns
    -------
    complex or ndarray of complex
        ε = ε∞ + χ_r (f/f_r)^(n−1) (1 − j cot(nπ/2)), broadcast over all inputs.

    Notes
    -----
    The loss part of the susceptibility has the frequency-independent ratio
    χ''/χ' = cot(nπ/2): with ε∞ = 0 the model is Kjartansson's (1979) constant-Q
    response with Q = tan(nπ/2) (see :func:`constant_q_permittivity`).  The term is
    a power of (jω), hence causal (Kramers–Kronig consistent with ε(∞) = ε∞).

    References
    ----------
    Jonscher, A. K. (1977). Nature, 267, 673–679. doi:10.1038/267673a0
    Hollender, F., & Tillard, S. (1998). Geophysics, 63(6), 1933–1942. doi:10.1190/1.1444486
    """
    check_positive("freq_hz", freq_hz, unit="Hz")
    ei = check_range("eps_inf", eps_inf, 1.0, 1e4)
    chi = check_nonnegative("chi_r", chi_r)
    nn = check_range("n", n, 0.0, 1.0)
    if np.any((nn <= 0) | (nn >= 1)):
        raise InputError(f"n must be strictly between 0 and 1, got {nn[(nn <= 0) | (nn >= 1)].ravel()[0]:.6g}")
    check_positive("reference_freq_hz", reference_freq_hz, unit="Hz")
    return _out(ei + jonscher_susceptibility(freq_hz, chi, nn, reference_freq_hz=reference_freq_hz))


def constant_q_exponent(q):
    """Kjartansson's exponent γ = arctan(1/Q)/π of a constant-Q permittivity (0 < γ < 1/2)."""
    qq = check_positive("q", q)
    return _out(np.arctan(1.0 / qq) / np.pi)


def constant_q_permittivity(freq_hz, eps_ref, q, *, reference_freq_hz=JONSCHER_REFERENCE_FREQ_HZ):
    """Causal permittivity with a frequency-independent ratio ε''/ε' = 1/Q (Kjartansson 1979).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, > 0.
    eps_ref : float or array_like
        Real relative permittivity ε' at ``reference_freq_hz``, >= 1.
    q : float or array_like
        Dielectric quality factor Q = ε'/ε'', > 0.
    reference_freq_hz : float
        Frequency at which ε' = ``eps_ref``, Hz (default 100 MHz).

    Returns
    -------
    complex or ndarray of complex
        ε(f) = ε_0 (j f/f_r)^(−2γ) with γ = arctan(1/Q)/π and ε_0 = eps_ref/cos(πγ).

    Notes
    -----
    The phase of ε is −πγ at every frequency, so ε''/ε' = tan(πγ) = 1/Q exactly,
    and |ε| falls as f^(−2γ) (the dispersion Kramers–Kronig demands of a constant
    loss ratio).  It is the Jonscher form with ε∞ = 0 and n = 1 − 2γ.  In a wave
    the attenuation is α = ω√(μ₀ε₀|ε|)·sin(πγ/2), nearly linear in f (see
    :mod:`subsurf.soil.constant_q` for the band-limited Q* of Turner & Siggins 1994).

    References
    ----------
    Kjartansson, E. (1979). J. Geophys. Res., 84(B9), 4737–4748. doi:10.1029/JB084iB09p04737
    """
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    e = check_range("eps_ref", eps_ref, 1.0, 1e4)
    g = constant_q_exponent(q)
    fr = float(check_positive("reference_freq_hz", reference_freq_hz, unit="Hz"))
    mag = e / np.cos(np.pi * g) * np.exp(-2.0 * g * np.log(f / fr))
    return _out(mag * np.cos(np.pi * g) - 1j * mag * np.sin(np.pi * g))
