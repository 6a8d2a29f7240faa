"""Free and saline liquid water: Debye relaxation and electrical conductivity.

The dielectric part (a single Debye relaxation) and the ionic conductivity are kept
apart, following DESIGN.md: :func:`water_permittivity` returns only the relaxation
part; :func:`water_conductivity` gives the DC conductivity of sea-salt water from the
Practical Salinity Scale 1978.
"""

from __future__ import annotations

from math import pi

import numpy as np

from ..errors import InputError, check_broadcast, check_finite, check_nonnegative
from ..quantities import accepts_quantities
from ._validity import warn_validity

__all__ = [
    "water_permittivity",
    "water_static_permittivity",
    "water_relaxation_time",
    "WATER_EPS_INF",
    "water_conductivity",
    "salinity_from_conductivity",
    "REFERENCE_CONDUCTIVITY_35_15",
]

#: High-frequency relative permittivity of water (Klein & Swift 1977, after Stogryn 1971).
WATER_EPS_INF = 4.9

#: Conductivity of standard sea water, SP = 35 at 15 °C (IPTS-68) and 0 dbar, in S/m
#: (42.914 mS/cm, UNESCO 1983).
REFERENCE_CONDUCTIVITY_35_15 = 4.2914

_KS_MODEL = "Klein & Swift (1977) water model"
_T_MAX = 40.0    # °C, upper end of the range checked against IAPWS (0-40 °C)
_S_MAX = 35.0    # psu, upper end of the Klein & Swift saline fit (4-35 psu)

#: Highest temperature (°C) the Klein & Swift relaxation-time fit can describe at all: its
#: fresh-water 2πτ polynomial (eq. 14) falls to zero at 74.78 °C (the cubic's one real root,
#: checked with numpy.roots in tests/ground/test_water.py), above which τ and ε'' would change
#: sign.  Between 40 °C and this limit the fit is extrapolated (a ModelRangeWarning).
WATER_RELAXATION_T_LIMIT = 74.7


def _temperature(temp_c, name: str = "temp_c") -> np.ndarray:
    t = check_finite(name, temp_c)
    if np.any(t < 0):
        bad = t[t < 0].ravel()[0]
        raise InputError(
            f"{name} must be >= 0 °C for liquid water, got {bad:.6g} °C; "
            "frozen ground is not modelled by the liquid-water formulas"
        )
    return t


def _relaxation_temperature(temp_c, name: str = "temp_c") -> np.ndarray:
    """:func:`_temperature`, also refusing temperatures beyond the relaxation-time fit."""
    t = _temperature(temp_c, name)
    if np.any(t > WATER_RELAXATION_T_LIMIT):
        bad = t[t > WATER_RELAXATION_T_LIMIT].ravel()[0]
        raise InputError(
            f"{name} must be between 0 and {WATER_RELAXATION_T_LIMIT:g} °C, got {bad:.6g} °C; the Klein & Swift "
            "(1977) water relaxation time turns negative beyond that"
        )
    return t


def _static_fresh(t):
    # Klein & Swift (1977) eq. (13): fit to Malmberg & Maryott (1956).
    return 88.045 - 0.4147 * t + 6.295e-4 * t**2 + 1.075e-5 * t**3


def _two_pi_tau_fresh(t):
    # Klein & Swift (1977) eq. (14), after Stogryn (1971): 2*pi*tau in seconds.
    return 1.1109e-10 - 3.824e-12 * t + 6.938e-14 * t**2 - 5.096e-16 * t**3


def _saline_static_factor(t, s):
    # Klein & Swift (1977) eq. (15).
    return 1.000 + 1.613e-5 * t * s - 3.656e-3 * s + 3.210e-5 * s**2 - 4.232e-7 * s**3


def _saline_tau_factor(t, s):
    # Klein & Swift (1977) eq. (16).
    return 1.000 + 2.282e-5 * t * s - 7.638e-4 * s - 7.760e-6 * s**2 + 1.105e-8 * s**3


def _debye(freq_hz, t, s):
    """Unchecked Debye permittivity (used by the soil models that validate themselves)."""
    eps_s = _static_fresh(t) * _saline_static_factor(t, s)
    two_pi_tau = _two_pi_tau_fresh(t) * _saline_tau_factor(t, s)
    return WATER_EPS_INF + (eps_s - WATER_EPS_INF) / (1.0 + 1j * freq_hz * two_pi_tau)


def water_static_permittivity(temp_c=20.0, salinity_psu=0.0):
    """Static (zero-frequency) relative permittivity of fresh or saline water.

    Parameters
    ----------
    temp_c : float or array_like
        Temperature in °C, >= 0 (liquid water). Warns above 40 °C.
    salinity_psu : float or array_like
        Practical salinity, >= 0. Warns above 35.

    Returns
    -------
    float or ndarray
        ε_s, broadcast over the inputs.

    Notes
    -----
    ε_s(T, 0) = 88.045 − 0.4147 T + 6.295·10⁻⁴ T² + 1.075·10⁻⁵ T³ and
    ε_s(T, S) = ε_s(T, 0)·a(T, S),
    a = 1 + 1.613·10⁻⁵ TS − 3.656·10⁻³ S + 3.210·10⁻⁵ S² − 4.232·10⁻⁷ S³.
    Within 0.3 of the IAPWS (1997) static dielectric constant from 0 to 40 °C
    (checked in the tests).

    References
    ----------
    Klein, L. A., & Swift, C. T. (1977). An improved model for the dielectric constant
    of sea water at microwave frequencies. IEEE Trans. Antennas Propag., 25(1), 104–111.
    doi:10.1109/TAP.1977.1141539
    """
    t = _temperature(temp_c)
    s = check_nonnegative("salinity_psu", salinity_psu)
    warn_validity(_KS_MODEL, [("temp_c", t, 0.0, _T_MAX, "°C"),
                              ("salinity_psu", s, 0.0, _S_MAX, "")])
    return _static_fresh(t) * _saline_static_factor(t, s)


def water_relaxation_time(temp_c=20.0, salinity_psu=0.0):
    """Debye relaxation time of fresh or saline water, in seconds.

    Parameters
    ----------
    temp_c : float or array_like
        Temperature in °C, 0 to 74.7 (where the fit's τ reaches zero). Warns above 40 °C.
    salinity_psu : float or array_like
        Practical salinity, >= 0. Warns above 35.

    Returns
    -------
    float or ndarray
        τ in s (about 9.9 ps at 20 °C for fresh water).

    Notes
    -----
    2πτ(T, 0) = 1.1109·10⁻¹⁰ − 3.824·10⁻¹² T + 6.938·10⁻¹⁴ T² − 5.096·10⁻¹⁶ T³ s,
    τ(T, S) = τ(T, 0)·b(T, S),
    b = 1 + 2.282·10⁻⁵ TS − 7.638·10⁻⁴ S − 7.760·10⁻⁶ S² + 1.105·10⁻⁸ S³.

    References
    ----------
    Klein, L. A., & Swift, C. T. (1977). IEEE Trans. Antennas Propag., 25(1), 104–111.
    doi:10.1109/TAP.1977.1141539
    Stogryn, A. (1971). Equations for calculating the dielectric constant of saline
    water. IEEE Trans. Microwave Theory Tech., 19(8), 733–736. doi:10.1109/TMTT.1971.1127617
    """
    t = _relaxation_temperature(temp_c)
    s = check_nonnegative("salinity_psu", salinity_psu)
    warn_validity(_KS_MODEL, [("temp_c", t, 0.0, _T_MAX, "°C"),
                              ("salinity_psu", s, 0.0, _S_MAX, "")])
    return _two_pi_tau_fresh(t) * _saline_tau_factor(t, s) / (2.0 * pi)


@accepts_quantities(freq_hz="Hz", temp_c="degC", salinity_psu="dimensionless")
def water_permittivity(freq_hz, temp_c=20.0, salinity_psu=0.0):
    """Complex relative permittivity of free water (Debye relaxation only).

    Parameters
    ----------
    freq_hz : float or array_like
        Frequency in Hz, >= 0.
    temp_c : float or array_like
        Temperature in °C, 0 to 74.7 (liquid water; an error outside, where the fit's τ
        would turn negative above). Warns above 40 °C.
    salinity_psu : float or array_like
        Practical salinity, >= 0. Warns above 35 (the saline fit covers 4–35; below 4
        the salinity factors tend continuously to 1).

    Returns
    -------
    complex or ndarray of complex
        ε = ε' − jε'' (ε'' >= 0), broadcast over all inputs.  The ionic conduction
        loss σ/(ωε₀) is *not* included; get σ from :func:`water_conductivity`.

    Notes
    -----
    ε(f) = ε∞ + (ε_s − ε∞)/(1 + j2πfτ), with ε∞ = 4.9, ε_s from
    :func:`water_static_permittivity` and τ from :func:`water_relaxation_time`.
    Salinity lowers ε_s and shortens τ.

    References
    ----------
    Klein, L. A., & Swift, C. T. (1977). An improved model for the dielectric constant
    of sea water at microwave frequencies. IEEE Trans. Antennas Propag., 25(1), 104–111.
    doi:10.1109/TAP.1977.1141539
    Stogryn, A. (1971). IEEE Trans. Microwave Theory Tech., 19(8), 733–736.
    doi:10.1109/TMTT.1971.1127617
    """
    f = check_nonnegative("freq_hz", freq_hz, unit="Hz")
    t = _relaxation_temperature(temp_c)
    s = check_nonnegative("salinity_psu", salinity_psu)
    check_broadcast(freq_hz=f, temp_c=t, salinity_psu=s)
    warn_validity(_KS_MODEL, [("temp_c", t, 0.0, _T_MAX, "°C"),
                              ("salinity_psu", s, 0.0, _S_MAX, "")])
    return _debye(f, t, s)


# --- Practical Salinity Scale 1978 ------------------------------------------------------

_PSS_A = (0.0080, -0.1692, 25.3851, 14.0941, -7.0261, 2.7081)
_PSS_B = (0.0005, -0.0056, -0.0066, -0.0375, 0.0636, -0.0144)
_PSS_K = 0.0162
_PSS_C = (0.6766097, 2.00564e-2, 1.104259e-4, -6.9698e-7, 1.0031e-9)
_PSS_MODEL = "PSS-78 (UNESCO 1983) conductivity"


def _rt_ratio(t68):
    c = _PSS_C
    return c[0] + t68 * (c[1] + t68 * (c[2] + t68 * (c[3] + t68 * c[4])))


def _sp_from_rt(rt, t68):
    """PSS-78 salinity from the conductivity ratio Rt, with Hill et al. (1986) below SP 2."""
    x = np.sqrt(np.maximum(rt, 0.0))
    ft = (t68 - 15.0) / (1.0 + _PSS_K * (t68 - 15.0))
    sp = sum((a + ft * b) * x**i for i, (a, b) in enumerate(zip(_PSS_A, _PSS_B)))
    dsp = sum(i * (a + ft * b) * x ** (i - 1) for i, (a, b) in enumerate(zip(_PSS_A, _PSS_B)) if i)
    xh = 400.0 * rt
    yh = 100.0 * rt
    hill = sp - _PSS_A[0] / (1.0 + 1.5 * xh + xh**2) - _PSS_B[0] * ft / (
        1.0 + np.sqrt(yh) + yh + yh**1.5)
    sp = np.where(sp < 2.0, hill, sp)
    return sp, dsp


@accepts_quantities(salinity_psu="dimensionless", temp_c="degC")
def water_conductivity(salinity_psu, temp_c=20.0):
    """Electrical conductivity of sea-salt water from practical salinity and temperature.

    Parameters
    ----------
    salinity_psu : float or array_like
        Practical salinity SP, >= 0. Warns above 42.
    temp_c : float or array_like
        Temperature in °C (ITS-90), >= 0 (liquid water). Warns above 35 °C.

    Returns
    -------
    float or ndarray
        Conductivity in S/m at atmospheric pressure, broadcast over the inputs.
        SP = 0 gives 0 (the ~5.5 µS/m of pure water is neglected).

    Notes
    -----
    PSS-78: SP = Σ aᵢ Rt^(i/2) + (T−15)/(1+k(T−15)) Σ bᵢ Rt^(i/2), i = 0…5, with
    Rt = R/rt(T), rt(T) = Σ cᵢ Tⁱ (T on IPTS-68 = 1.00024 T₉₀) and
    C = R·C(35, 15, 0), C(35, 15, 0) = 42.914 mS/cm.  For SP < 2 the extension of
    Hill et al. (1986) is used.  The equation is solved for Rt by vectorised Newton
    iteration on √Rt.  Agrees with TEOS-10 (gsw.C_from_SP) within 3 % for SP 1–35,
    0–30 °C (tested).  Pore water of other ionic make-up is approximated as sea salt.

    References
    ----------
    UNESCO (1983). Algorithms for computation of fundamental properties of seawater.
    Unesco Technical Papers in Marine Science 44.
    Hill, K. D., Dauphinee, T. M., & Woods, D. J. (1986). The extension of the Practical
    Salinity Scale 1978 to low salinities. IEEE J. Oceanic Eng., 11(1), 109–112.
    doi:10.1109/JOE.1986.1145154
    """
    sp = check_nonnegative("salinity_psu", salinity_psu)
    t = _temperature(temp_c)
    warn_validity(_PSS_MODEL, [("salinity_psu", sp, 0.0, 42.0, ""),
                               ("temp_c", t, 0.0, 35.0, "°C")])
    check_broadcast(salinity_psu=sp, temp_c=t)
    sp, t = np.broadcast_arrays(sp, t)
    t68 = 1.00024 * t
    x = np.sqrt(sp / 35.0)
    for _ in range(30):
        s_x, ds = _sp_from_rt(x**2, t68)
        step = (s_x - sp) / ds
        x = np.maximum(x - step, 0.0)
        if np.all(np.abs(step) < 1e-12):
            break
    rt = np.where(sp > 0, x**2, 0.0)
    out = rt * _rt_ratio(t68) * REFERENCE_CONDUCTIVITY_35_15
    return out[()] if out.ndim == 0 else out


def salinity_from_conductivity(conductivity, temp_c=20.0):
    """Practical salinity of sea-salt water from its conductivity (inverse of :func:`water_conductivity`).

    Parameters
    ----------
    conductivity : float or array_like
        Water conductivity in S/m at ``temp_c``, >= 0.
    temp_c : float or array_like
        Temperature in °C, >= 0.

    Returns
    -------
    float or ndarray
        Practical salinity SP (dimensionless), >= 0.

    Notes
    -----
    The PSS-78 forward equation (see :func:`water_conductivity`) evaluated at
    Rt = C/(C(35, 15, 0)·rt(T)).  Used to feed the Debye water model from a measured
    pore-water EC, assuming sea-salt ionic composition.

    References
    ----------
    UNESCO (1983). Unesco Technical Papers in Marine Science 44.
    Hill, K. D., Dauphinee, T. M., & Woods, D. J. (1986). IEEE J. Oceanic Eng., 11(1),
    109–112. doi:10.1109/JOE.1986.1145154
    """
    c = check_nonnegative("conductivity", conductivity, unit="S/m")
    t = _temperature(temp_c)
    t68 = 1.00024 * t
    rt = c / (REFERENCE_CONDUCTIVITY_35_15 * _rt_ratio(t68))
    sp, _ = _sp_from_rt(rt, t68)
    sp = np.maximum(sp, 0.0)
    warn_validity(_PSS_MODEL, [("salinity (from conductivity)", sp, 0.0, 42.0, ""),
                               ("temp_c", t, 0.0, 35.0, "°C")])
    return sp[()] if np.ndim(sp) == 0 else sp
