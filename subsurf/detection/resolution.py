"""Resolution and footprint at depth, from the spectrum received from that depth.

The received spectrum is the one the loss budget integrates (:mod:`subsurf.detection.band`
frequencies weighted by the energy that comes back from the target), so depth and
resolution come from the same spectrum in every output.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import InputError, ModelRangeWarning

if TYPE_CHECKING:
    from .targets import Target

__all__ = [
    "vertical_resolution",
    "fresnel_radius",
    "footprint_radius",
    "Resolution",
    "resolution_from_received",
    "check_target_footprint",
]


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


def resolution_from_received(freqs_hz, received_weights, velocity_nodes, eps_real, depth_m) -> Resolution:
    """Resolution and footprint at ``depth_m`` from the received energy at the band frequencies.

    Parameters
    ----------
    freqs_hz : array_like, shape (..., n)
        The band frequencies (:func:`subsurf.detection.band.band_nodes`).
    received_weights : array_like, shape (..., n)
        Energy received from the target at each frequency (any scale; normalised here).
    velocity_nodes : array_like, shape (..., n)
        Phase velocity in the ground at each frequency (m/s).
    eps_real : array_like
        ε' of the ground (for the footprint), broadcast against the leading shape.
    depth_m : array_like

    Notes
    -----
    f_R = Σ fᵢ·Eᵢ / Σ Eᵢ (the centroid of the received energy spectrum; Quan & Harris 1997
    use the same centroid for the frequency-shift method) and v_R the same energy mean of
    the velocity; λ_R = v_R/f_R.

    References
    ----------
    Quan, Y. & Harris, J. M. (1997). Seismic attenuation tomography using the frequency
    shift method. Geophysics 62(3), 895–905. doi:10.1190/1.1444197
    """
    f = np.asarray(freqs_hz, dtype=float)
    e = np.asarray(received_weights, dtype=float)
    s = e.sum(axis=-1)
    fr = (e * f).sum(axis=-1) / s
    vr = (e * np.asarray(velocity_nodes, dtype=float)).sum(axis=-1) / s
    d = np.asarray(depth_m, dtype=float)
    lam = vr / fr
    vert = vertical_resolution(lam)
    fres = fresnel_radius(lam, d)
    return Resolution(received_freq_hz=fr, wavelength_m=lam, vertical_m=vert, fresnel_radius_m=fres,
                      footprint_radius_m=footprint_radius(lam, d, eps_real),
                      smallest_separable_m=np.maximum(vert, fres))


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
