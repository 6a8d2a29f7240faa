"""An exact ray tracer for flat layers, written for the tests (independent of subsurf.interpretation.layers).

Each leg of a reflected ray is straight within a layer and bends at every interface by
Snell's law, sin θᵢ / vᵢ = p (the ray parameter, constant along the ray).  For a source-
receiver separation x the ray parameter solves Σ hᵢ tan θᵢ = x/2 (found with scipy's
brentq), and the two-way time is 2 Σ hᵢ / (vᵢ cos θᵢ).  (Snell's law of refraction; see
e.g. Yilmaz 2001, Seismic Data Analysis, SEG, §3.1.)
"""

import numpy as np
from scipy.optimize import brentq


def snell_twt(x_m, velocity, thickness):
    """Two-way times (s) of the reflection from the base of the given layers, at separations x_m."""
    v = np.asarray(velocity, dtype=float)
    h = np.asarray(thickness, dtype=float)
    out = []
    for x in np.atleast_1d(np.asarray(x_m, dtype=float)):
        if x == 0:
            out.append(2 * np.sum(h / v))
            continue

        def half_offset(p, x=x):
            sin = p * v
            return np.sum(h * sin / np.sqrt(1 - sin**2)) - x / 2

        p = brentq(half_offset, 0.0, (1 - 1e-15) / v.max(), xtol=1e-30, rtol=4 * np.finfo(float).eps)
        cos = np.sqrt(1 - (p * v) ** 2)
        out.append(2 * np.sum(h / (v * cos)))
    return np.array(out)
