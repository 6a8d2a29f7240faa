"""Figure of a site calibration, in the subsurf style (:mod:`subsurf.io.figstyle`: Agg canvas, no pyplot).

Left: the trace-averaged envelope power (dB) against depth with its noise floor, the
floor + margin, the fitted decay (spreading and attenuation) and the observed penetration.
Right: the spectral centroid of the short-time windows against two-way time with the
fitted constant-Q* downshift.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .figstyle import PALETTE, SIZES, new_figure, png_bytes, style_axes, styled

__all__ = ["calibration_figure"]

_DATA = PALETTE["accent"]
_FIT = PALETTE["second"]
_NOISE = PALETTE["muted"]
_PEN = PALETTE["third"]


@styled
def calibration_figure(cal, path, *, title: str = "") -> Path:
    """Write a PNG of ``cal`` (:class:`subsurf.interpretation.site_calibration.SiteCalibration`)."""
    from ..interpretation.site_calibration import SPREADING_POWER
    from ..waves.propagation import depth_from_time

    fig = new_figure(11.0, 5.0, layout="tight")
    ax, bx = fig.subplots(1, 2)
    t0 = cal.time_zero.time_s
    tau = cal.twt_s - t0
    ok = tau > cal.separation_m / cal.velocity
    depth = depth_from_time(tau[ok], cal.velocity, cal.separation_m)
    curve_db = 10.0 * np.log10(np.maximum(cal.mean_power[ok], 1e-300))
    ax.plot(curve_db, depth, color=_DATA, lw=1.2, label="mean envelope power (smoothed)")
    ax.axvline(cal.noise.db, color=_NOISE, ls="--", lw=1.0,
               label=f"noise floor {cal.noise.db:.1f} ± {cal.noise.se_db:.1f} dB ({cal.noise.window})")
    ax.axvline(cal.noise.db + cal.margin_db, color=_NOISE, ls=":", lw=1.0, label=f"floor + {cal.margin_db:g} dB")
    fit = cal.attenuation_fit
    d = np.linspace(cal.fit_from_m, cal.penetration_m, 100)
    p = SPREADING_POWER[cal.spreading]
    model = fit.intercept + fit.slope * d - 10.0 * p * np.log10(d)
    signal_plus_noise = 10.0 * np.log10(10.0 ** (model / 10.0) + cal.noise.power)
    ax.plot(signal_plus_noise, d, color=_FIT, lw=1.6,
            label=f"fit: α = {cal.attenuation_db_per_m:.2f} ± {cal.attenuation_se_db_per_m:.2f} dB/m, "
                  f"{cal.spreading} spreading")
    pen_txt = ("≥ " if cal.penetration_lower_bound else "") + f"{cal.penetration_m:.2f} ± {cal.penetration_se_m:.2f} m"
    ax.axhline(cal.penetration_m, color=_PEN, lw=1.4, label=f"observed penetration {pen_txt}")
    ax.axhspan(cal.penetration_m - cal.penetration_se_m, cal.penetration_m + cal.penetration_se_m,
               color=_PEN, alpha=0.15)
    ax.invert_yaxis()
    ax.set_xlabel("envelope power (dB, record units)")
    ax.set_ylabel(f"depth (m) at v = {cal.velocity * 1e-9:.4f} m/ns")
    style_axes(ax, minor_grid=False)
    ax.legend(fontsize=SIZES["legend"], loc="lower left")
    ax.set_title("envelope versus depth", fontsize=SIZES["title"])
    q = cal.q_star
    if q is not None and q.centroid_hz.size:
        bx.plot(q.window_twt_s * 1e9, q.centroid_hz / 1e6, "o", ms=4, color=_DATA, label="window centroid")
        x = np.concatenate([[0.0], np.cumsum(0.5 * (q.variance_hz2[1:] + q.variance_hz2[:-1])
                                             * np.diff(q.window_twt_s))])
        lab = (f"fit: Q* = {q.value:.3g} ± {q.se:.2g}" if q.value is not None else
               f"no downshift resolved (Q* > {q.lower_bound:.3g})" if q.lower_bound else "no downshift resolved")
        bx.plot(q.window_twt_s * 1e9, (q.fit.intercept + q.fit.slope * x) / 1e6, color=_FIT, lw=1.6, label=lab)
        bx.legend(fontsize=SIZES["legend"])
    else:
        bx.text(0.5, 0.5, "too few windows above the noise for Q*", ha="center", va="center",
                transform=bx.transAxes)
    bx.set_xlabel("two-way time after time zero (ns)")
    bx.set_ylabel("spectral centroid (MHz)")
    style_axes(bx, minor_grid=False)
    bx.set_title("centroid downshift (Quan & Harris 1997)", fontsize=SIZES["title"])
    if title:
        fig.suptitle(title, fontsize=SIZES["suptitle"])
    Path(path).write_bytes(png_bytes(fig))
    return Path(path)
