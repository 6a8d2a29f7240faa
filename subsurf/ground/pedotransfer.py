"""Pedotransfer equations: saturated water content and normal bulk density from soil texture."""

from __future__ import annotations

import warnings

import numpy as np

from ..errors import InputError, ModelRangeWarning

__all__ = ["saxton_rawls_saturation", "saxton_rawls_normal_density", "SAXTON_RAWLS_PARTICLE_DENSITY"]

#: Particle density the Saxton & Rawls (2006) normal density is defined with, kg/m³ (their 2.65 g/cm³).
SAXTON_RAWLS_PARTICLE_DENSITY = 2650.0

#: Organic-matter content of their Table 3 (representative values of the texture classes), % by weight.
_TABLE3_ORGANIC_MATTER = 2.5


def _inputs(sand, clay, organic_matter_percent):
    s, c, om = (np.asarray(x, dtype=float) for x in (sand, clay, organic_matter_percent))
    for name, v, hi in (("sand", s, 1.0), ("clay", c, 1.0), ("organic_matter_percent", om, 100.0)):
        if np.any(~np.isfinite(v)) or np.any(v < 0) or np.any(v > hi):
            bad = float(v[~((v >= 0) & (v <= hi))].flat[0]) if v.ndim else float(v)
            raise InputError(f"{name} must be between 0 and {hi:g}, got {bad:.6g}")
    if np.any(s + c > 1.0 + 1e-9):
        raise InputError("sand + clay must not exceed 1 (mass fractions of the mineral solids)")
    # Their data set excluded soils above 60 % clay or 8 % organic matter by weight (Saxton & Rawls
    # 2006, methodology; from memory of the paper's text).
    if np.any(c > 0.6) or np.any(om > 8.0):
        warnings.warn("Saxton & Rawls (2006) equations were fitted for clay <= 0.6 and organic matter <= 8 %; "
                      "extrapolating", ModelRangeWarning, stacklevel=3)
    return s, c, om


def saxton_rawls_saturation(sand, clay, organic_matter_percent=_TABLE3_ORGANIC_MATTER):
    """Saturated volumetric water content θ_S of a soil at normal density (Saxton & Rawls 2006).

    Parameters
    ----------
    sand, clay : float or array_like
        Mass fractions of the mineral solids, 0–1 (broadcast together).
    organic_matter_percent : float or array_like
        Organic matter, % by weight; 2.5 % is the value of their Table 3.

    Returns
    -------
    numpy.ndarray
        θ_S, m³/m³.

    Notes
    -----
    Table 1 of the paper, with S, C in fractions and OM in %:

    θ33t = −0.251S + 0.195C + 0.011OM + 0.006(S·OM) − 0.027(C·OM) + 0.452(S·C) + 0.299;
    θ33 = θ33t + 1.283θ33t² − 0.374θ33t − 0.015;
    θ(S−33)t = 0.278S + 0.034C + 0.022OM − 0.018(S·OM) − 0.027(C·OM) − 0.584(S·C) + 0.078;
    θ(S−33) = θ(S−33)t + 0.636θ(S−33)t − 0.107;
    θ_S = θ33 + θ(S−33) − 0.097S + 0.043.

    References
    ----------
    Saxton, K. E., & Rawls, W. J. (2006). Soil water characteristic estimates by texture and
    organic matter for hydrologic solutions. Soil Sci. Soc. Am. J., 70(5), 1569–1578,
    doi:10.2136/sssaj2005.0117.
    """
    s, c, om = _inputs(sand, clay, organic_matter_percent)
    t33t = -0.251 * s + 0.195 * c + 0.011 * om + 0.006 * s * om - 0.027 * c * om + 0.452 * s * c + 0.299
    t33 = t33t + (1.283 * t33t**2 - 0.374 * t33t - 0.015)
    ts33t = 0.278 * s + 0.034 * c + 0.022 * om - 0.018 * s * om - 0.027 * c * om - 0.584 * s * c + 0.078
    ts33 = ts33t + (0.636 * ts33t - 0.107)
    return t33 + ts33 - 0.097 * s + 0.043


def saxton_rawls_normal_density(sand, clay, organic_matter_percent=_TABLE3_ORGANIC_MATTER):
    """Normal (uncompacted, field) dry bulk density of a soil from texture, kg/m³ (Saxton & Rawls 2006).

    ρ_N = (1 − θ_S) · 2650 kg/m³, with θ_S from :func:`saxton_rawls_saturation` (their
    Table 1, "normal density" with density factor 1; arguments as there).

    References
    ----------
    Saxton, K. E., & Rawls, W. J. (2006). Soil Sci. Soc. Am. J., 70(5), 1569–1578,
    doi:10.2136/sssaj2005.0117.
    """
    return (1.0 - saxton_rawls_saturation(sand, clay, organic_matter_percent)) * SAXTON_RAWLS_PARTICLE_DENSITY
