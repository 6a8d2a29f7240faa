"""How strongly a target's material stands out from the ground: |R| at normal incidence, and when it is low.

The loss budget already charges a weak contrast (|R|² for a planar target, the radar
cross-section or echo width of a point or line target); this module states the contrast
itself so that an output can warn where it is low: a weak echo from a target whose
material is close to the host's is hard to tell from the reflections of the ground's own
layering and moisture changes, whatever the margin says.  SI units; no files read.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .targets import Target, target_reflection

__all__ = ["LOW_CONTRAST_REFLECTION", "Contrast", "target_contrast"]

#: |R| below which a target is "low contrast" (0.1, i.e. −20 dB against a metal reflector).
#: Engineering judgement, stated: reflections within natural soils (a moisture step of a
#: few per cent, a change of texture) have |R| of about 0.01–0.1 (lossless Fresnel
#: coefficient for ε' steps of 4→4.2 to 9→13), so a target under 0.1 competes with them.
LOW_CONTRAST_REFLECTION = 0.1


@dataclass(frozen=True)
class Contrast:
    """The contrast of a target in its host at the frequency where it is weakest.

    Attributes
    ----------
    reflection_magnitude : float
        |R| at normal incidence, host → target (:func:`subsurf.detection.target_reflection`).
    freq_hz : float
        The frequency of that |R| (the lowest |R| over the frequencies asked).
    host_eps_real : float
        Host ε' at ``freq_hz``.
    host_sigma_eff : float
        Host effective conductivity σ + ωε₀ε'' at ``freq_hz`` (S/m).
    target_eps_real : float or None
        Target ε' (None for a perfect conductor or an explicit reflection).
    limit : float
        :data:`LOW_CONTRAST_REFLECTION`.
    """

    reflection_magnitude: float
    freq_hz: float
    host_eps_real: float
    host_sigma_eff: float
    target_eps_real: float | None
    target_label: str
    limit: float = LOW_CONTRAST_REFLECTION

    @property
    def low(self) -> bool:
        """True where |R| is below the limit."""
        return self.reflection_magnitude < self.limit

    @property
    def reflection_db(self) -> float:
        """20·log10 |R| (dB; −inf for |R| = 0)."""
        return 20.0 * math.log10(self.reflection_magnitude) if self.reflection_magnitude > 0 else -math.inf

    def note(self) -> str | None:
        """One line for the outputs where the contrast is low, else None."""
        if not self.low:
            return None
        target = (f"target ε' {self.target_eps_real:.3g}" if self.target_eps_real is not None
                  else "the target's reflection as given")
        db = "no echo" if self.reflection_magnitude == 0 else f"{self.reflection_db:.0f} dB"
        return (f"low contrast: |R| = {self.reflection_magnitude:.2g} ({db}; host ε' {self.host_eps_real:.3g}, "
                f"{target}, {self.target_label}, at {self.freq_hz / 1e6:.4g} MHz), below {self.limit:g}: the "
                "echo is as weak as the ground's own layering and moisture changes give, so it may not stand out "
                "even with margin; confirm the target's material, or test over a known one")

    def as_json(self) -> dict:
        """Plain JSON-able facts, keys with units."""
        return {"reflection_magnitude": self.reflection_magnitude,
                "reflection_db": None if self.reflection_magnitude == 0 else self.reflection_db,
                "freq_mhz": self.freq_hz / 1e6, "host_eps_real": self.host_eps_real,
                "host_sigma_eff_ms_per_m": self.host_sigma_eff * 1e3, "target_eps_real": self.target_eps_real,
                "low_contrast_limit": self.limit, "low_contrast": self.low, "note": self.note()}


def target_contrast(electrical, target: Target, freqs_hz) -> Contrast:
    """|R| of ``target`` in the host ``electrical`` (a callable f → (ε, σ)) at the weakest of ``freqs_hz``.

    Parameters
    ----------
    electrical : callable
        The host ground, ``electrical(freq_hz) -> (eps, sigma)`` (e.g. ``Medium.electrical``).
    target : Target
    freqs_hz : array_like
        Frequencies to look at (e.g. each antenna's centre frequency).

    Notes
    -----
    R = (Z_t − Z_h)/(Z_t + Z_h) with Z = jωμ₀/γ (lossy media; Balanis 2012, ch. 5; the
    lossless limit (√ε_h − √ε_t)/(√ε_h + √ε_t), Annan 2009).  A perfect conductor gives
    |R| = 1.
    """
    from ..waves.propagation import wave_properties

    f = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
    eps, sig = electrical(f)
    r = np.abs(np.broadcast_to(target_reflection(eps, sig, f, target), f.shape))
    i = int(np.argmin(r))
    w = wave_properties(np.atleast_1d(eps)[i], np.atleast_1d(sig)[i], f[i])
    t_eps = None if (target.conductor or target.eps is None) else float(complex(target.eps).real)
    return Contrast(reflection_magnitude=float(r[i]), freq_hz=float(f[i]), host_eps_real=float(w.eps_real),
                    host_sigma_eff=float(w.effective_conductivity), target_eps_real=t_eps,
                    target_label=target.material or "custom")
