"""The ground as a site calibration measured it: α(f) and v, as ε'(f), σ(f) for the budget.

The detection budget takes a ground as ``electrical(freq_hz) -> (eps, sigma)``.  A
calibration gives the attenuation at one frequency, its frequency slope from Q* and a
velocity; :func:`effective_medium` inverts the Helmholtz propagation constant exactly so
that :func:`subsurf.propagation.wave_properties` of the returned (ε', σ) gives back that
α and v.  :class:`CalibratedGround` is a drop-in for :class:`subsurf.ground.medium.Medium`.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
from scipy import constants

from ..errors import InputError, ModelRangeWarning, check_nonnegative, check_positive
from ..waves.propagation import NP_TO_DB

__all__ = ["effective_medium", "CalibratedGround", "model_predictions", "solver_depth", "check_calibrated_antenna",
           "calibrated_antennas", "band_effective_performance"]


def effective_medium(alpha_np_per_m, velocity, freq_hz):
    """(ε', σ) of the medium whose propagation constant is γ = α + jω/v at ``freq_hz``.

    Parameters
    ----------
    alpha_np_per_m : float or array_like
        Attenuation constant (Np/m, ≥ 0).
    velocity : float or array_like
        Phase velocity (m/s, 0 < v ≤ c).
    freq_hz : float or array_like
        Frequency (Hz, > 0).  All three broadcast.

    Returns
    -------
    (eps_real, sigma) : ndarray, ndarray
        Relative permittivity (real, no separate ε'') and effective conductivity (S/m).

    Notes
    -----
    From γ² = jωμ₀(σ + jωε₀ε') and γ = α + jβ, β = ω/v:
    ε' = (β² − α²)/(ω²μ₀ε₀) and σ = 2αβ/(ωμ₀) (the real and imaginary parts of γ²; e.g.
    Balanis, C. A. (2012). *Advanced Engineering Electromagnetics*, 2nd ed., Wiley, §4.3).

    Raises
    ------
    InputError
        If the result has ε' < 1 (an attenuation too large for that velocity).
    """
    a = check_nonnegative("alpha_np_per_m", alpha_np_per_m, unit="Np/m")
    v = check_positive("velocity", velocity, unit="m/s")
    f = check_positive("freq_hz", freq_hz, unit="Hz")
    omega = 2.0 * np.pi * f
    beta = omega / v
    eps = (beta**2 - a**2) / (omega**2 * constants.mu_0 * constants.epsilon_0)
    if np.any(eps < 1.0):
        raise InputError(f"attenuation {float(np.max(a)) * NP_TO_DB:.3g} dB/m is too large for a velocity of "
                         f"{float(np.min(v)) * 1e-9:.4g} m/ns (no ground has ε' < 1)")
    return eps, 2.0 * a * beta / (omega * constants.mu_0)


@dataclass
class CalibratedGround:
    """A ground of measured α(f) = α_ref + s·(f − f_ref) (clipped at 0) and constant velocity.

    Attributes
    ----------
    attenuation_db_per_m : float
        α at ``reference_freq_hz`` (dB/m).
    reference_freq_hz : float
    slope_db_per_m_per_hz : float
        dα/df (dB/m per Hz) = 8.686·π/(Q*·v); 0 when Q* was not resolved (then the ground is
        the constant-(ε', σ) medium with α and v at the reference frequency).
    velocity : float
        m/s, taken as the same at every frequency (with Q*).
    band_hz : (float, float)
        Frequencies the calibration measured; outside them α(f) is extrapolated (warned).
    label : str
        One line for tables ("site calibration FILE: ...").
    facts : dict
        What the calibration says, in human units (for JSON outputs).
    """

    attenuation_db_per_m: float
    reference_freq_hz: float
    slope_db_per_m_per_hz: float
    velocity: float
    band_hz: tuple[float, float]
    label: str = "site calibration"
    facts: dict = field(default_factory=dict)

    def attenuation_at(self, freq_hz) -> np.ndarray:
        """α(f) in dB/m (≥ 0), warning once when a frequency lies outside the calibrated band.

        With Q*: the constant-Q line α_ref + s·(f − f_ref), held at its value at the band's
        lower edge below the band (conservative: conduction loss does not vanish at low
        frequency as the line does), clipped at 0 and at the largest α any ground of this
        velocity can have (ε' ≥ 1:
        α ≤ β·√(1 − v²/c²), β = 2πf/v).  Without Q*: the α(f) of the constant-(ε', σ)
        medium that has α_ref and v at f_ref (nearly flat above its transition frequency,
        falling below it), so the ground stays physical at every frequency of the band.
        """
        f = np.asarray(freq_hz, dtype=float)
        lo, hi = self.band_hz
        outside = (f < lo * (1 - 1e-9)) | (f > hi * (1 + 1e-9))
        if np.any(outside):
            warnings.warn(f"site calibration measured {lo / 1e6:.4g}–{hi / 1e6:.4g} MHz; the attenuation outside "
                          "that band is extrapolated along its "
                          f"{'Q* slope' if self.slope_db_per_m_per_hz else 'constant-ε′, σ medium (no Q* resolved)'}",
                          ModelRangeWarning, stacklevel=3)
        if not self.slope_db_per_m_per_hz:
            from ..waves.propagation import _alpha_beta

            eps, sigma = effective_medium(self.attenuation_db_per_m / NP_TO_DB, self.velocity, self.reference_freq_hz)
            alpha, _ = _alpha_beta(eps, 0.0, sigma, 2.0 * np.pi * f)
            return alpha * NP_TO_DB
        # below the measured band the line is held at its value at the band's lower edge: the
        # constant-Q line falls towards 0 there (0.49 dB/m at 50 MHz for Q* 20 measured at
        # 120-320 MHz, so a 50 MHz antenna was planned to reach 118 m), while real grounds keep
        # the frequency-independent conduction loss alpha ~ sigma/2 sqrt(mu/eps) at low
        # frequency; the flat edge value is the conservative extrapolation
        f_line = np.maximum(f, lo)
        line = np.maximum(self.attenuation_db_per_m + self.slope_db_per_m_per_hz * (f_line - self.reference_freq_hz),
                          0.0)
        ceiling = 0.999 * NP_TO_DB * 2.0 * np.pi * f / self.velocity * np.sqrt(
            max(1.0 - (self.velocity / constants.c) ** 2, 0.0))
        return np.minimum(line, ceiling)

    def electrical(self, freq_hz):
        """(eps, sigma) at ``freq_hz`` reproducing the calibrated α(f) and v (see :func:`effective_medium`).

        Without Q*, the constant-(ε', σ) medium itself (its velocity varies slightly away from f_ref)."""
        f = np.asarray(freq_hz, dtype=float)
        if not self.slope_db_per_m_per_hz:
            self.attenuation_at(f)  # the out-of-band warning
            eps, sigma = effective_medium(self.attenuation_db_per_m / NP_TO_DB, self.velocity, self.reference_freq_hz)
            return np.full(f.shape, complex(eps)), np.full(f.shape, float(sigma))
        eps, sigma = effective_medium(self.attenuation_at(f) / NP_TO_DB, self.velocity, f)
        return eps.astype(complex), sigma

    @classmethod
    def from_record(cls, record: dict, *, source: str = "calibration") -> CalibratedGround:
        """Build from a calibration file's content (:mod:`subsurf.io.calibration_file`, human units)."""
        try:
            att = float(record["attenuation"]["db_per_m"])
            f_ref = float(record["attenuation"]["reference_freq_mhz"]) * 1e6
            v = float(record["velocity"]["m_per_ns"]) * 1e9
            q = record["q_star"].get("value")
            lo, hi = (float(x) * 1e6 for x in record["band_mhz"])
        except (KeyError, TypeError, ValueError, AttributeError) as exc:
            raise InputError(f"{source}: not a subsurf site calibration ({exc})") from None
        slope = 0.0 if q is None else NP_TO_DB * np.pi / (float(q) * v)
        q_txt = f"Q*={float(q):.3g}" if q is not None else "Q* not resolved"
        label = (f"site calibration {source}: α={att:.3g} dB/m at {f_ref / 1e6:.4g} MHz, {q_txt}, "
                 f"v={v * 1e-9:.4g} m/ns")
        facts = {"calibration_file": source, "attenuation_db_per_m": att, "reference_freq_mhz": f_ref / 1e6,
                 "q_star": q, "velocity_m_per_ns": v * 1e-9, "band_mhz": [lo / 1e6, hi / 1e6]}
        return cls(max(att, 0.0), f_ref, slope, v, (lo, hi), label, facts)


def model_predictions(electrical, *, centre_freq_hz: float, performance_db: float, gain: float | None,
                      reference_reflection: float) -> dict:
    """What a ground model predicts for the quantities a calibration measures (for side-by-side output).

    Parameters
    ----------
    electrical : callable
        ``electrical(freq_hz) -> (eps, sigma)`` of the ground model (e.g. ``Medium.electrical``).
    centre_freq_hz, performance_db, gain : float
        The antenna's centre frequency, catalogue performance with the record's stacking, gain.
    reference_reflection : float
        |R| of the planar reference reflector (as for the effective performance).

    Returns
    -------
    dict
        ``attenuation_db_per_m`` and ``velocity_m_per_ns`` at the centre frequency,
        ``q_equivalent`` = π/(v·dα/df) from α at 0.9 and 1.1 × f_c (None when α does not
        rise with frequency), ``penetration_m`` the budget's maximum depth of the reference
        reflector with ``performance_db``, and ``performance_db``.
    """
    from ..detection import Target, max_depth
    from ..waves.propagation import wave_properties

    fc = float(check_positive("centre_freq_hz", centre_freq_hz, unit="Hz"))
    f = np.array([0.9 * fc, fc, 1.1 * fc])
    eps, sig = electrical(f)
    w = wave_properties(eps, sig, f)
    slope = (w.alpha[2] - w.alpha[0]) / (f[2] - f[0])
    d = max_depth(eps[1], sig[1], fc, performance_db, target=Target("planar", reflection=reference_reflection),
                  gain=gain)
    return {"attenuation_db_per_m": float(w.attenuation_db_per_m[1]), "velocity_m_per_ns": float(w.velocity[1]) * 1e-9,
            "q_equivalent": float(np.pi / (w.velocity[1] * slope)) if slope > 0 else None,
            "penetration_m": float(d), "performance_db": float(performance_db)}


def solver_depth(attenuation_db_per_m: float, velocity: float, freq_hz: float, performance_db: float, *,
                 gain: float | None, reference_reflection: float) -> float:
    """Maximum depth (m) of the planar reference reflector in the calibrated ground with ``performance_db``:
    the detection budget's one solver, as choose/setup will use it (equals the observed penetration)."""
    from ..detection import Target, max_depth

    eps, sig = effective_medium(max(attenuation_db_per_m, 0.0) / NP_TO_DB, velocity, freq_hz)
    return float(max_depth(eps, sig, freq_hz, performance_db, target=Target("planar", reflection=reference_reflection),
                           gain=gain))


def check_calibrated_antenna(record: dict, catalogue: dict, *, source) -> None:
    """Refuse a calibration made with an antenna the catalogue does not have, or has at another frequency.

    Parameters
    ----------
    record : dict
        Content of a calibration file (human units).
    catalogue : dict of str -> Antenna
        The catalogue the plan uses.
    source : str or Path
        The calibration file, for the message.

    Raises
    ------
    FileInputError
        Naming ``antenna.name`` (not in the catalogue) or ``antenna.centre_freq_mhz`` /
        ``antenna.bandwidth_mhz`` (more than 1 % from the catalogue's: a different antenna
        under the same name, whose effective performance would be misapplied).
    """
    from ..errors import FileInputError

    ant = record.get("antenna") or {}
    name = ant.get("name")
    if name not in catalogue:
        raise FileInputError(source, f"antenna {name!r} is not in the antenna catalogue used "
                             f"(available: {', '.join(catalogue)})", field="antenna.name")
    a = catalogue[name]
    for key, mine in (("centre_freq_mhz", a.centre_freq_hz / 1e6), ("bandwidth_mhz", a.bandwidth_hz / 1e6)):
        theirs = ant.get(key)
        if theirs is None:
            continue
        if isinstance(theirs, bool) or not isinstance(theirs, (int, float)) or not np.isfinite(theirs):
            raise FileInputError(source, f"must be a finite number, got {theirs!r}", field=f"antenna.{key}")
        if abs(theirs - mine) > 0.01 * mine:
            raise FileInputError(source, f"{theirs:g} MHz, but the catalogue's {name} has {mine:g} MHz: the "
                                 "calibration was made with a different antenna (calibrate again with this one, "
                                 "or use the catalogue it was made with)", field=f"antenna.{key}")


def calibrated_antennas(antennas, record: dict):
    """Antennas with the calibrated one's single-trace performance replaced by the measured figure.

    Returns
    -------
    (list, list of str)
        The antennas (the calibrated one no longer marked illustrative) and the names replaced
        (empty when the calibrated antenna is not among them).  Stacking gain is then added
        with each antenna's own stacks, as for the catalogue figure.
    """
    from dataclasses import replace

    name = record["antenna"]["name"]
    single = float(record["effective_performance"]["single_trace_db"])
    out, hit = [], []
    for a in antennas:
        if a.name == name:
            out.append(replace(a, performance_db=single, illustrative=False))
            hit.append(a.name)
        else:
            out.append(a)
    return out, hit


def band_effective_performance(ground: CalibratedGround, antenna, penetration_m: float, *,
                               reference_reflection: float, stacks: int) -> tuple[float, float]:
    """System performance (dB, with ``stacks``) that puts the band budget's maximum depth at the penetration.

    The budget ``choose``/``map`` use (:func:`subsurf.planning.antennas.antenna_budget_for`: the
    antenna's band, its separation and coupling gain) in the calibrated ground, for a planar
    reflector of |R| = ``reference_reflection``: P = L(d_obs), read as P_trial − margin(d_obs),
    so re-planning with P returns the observed penetration for that antenna.

    Returns
    -------
    (performance_db, check_depth_m) : float, float
        The performance and the budget's maximum depth with it (equals ``penetration_m``).
    """
    from ..detection import Target
    from ..planning.antennas import antenna_budget_for

    d = float(check_positive("penetration_m", penetration_m, unit="m"))
    target = Target("planar", reflection=float(reference_reflection), depth_m=d)
    a = antenna.with_stacks(int(stacks))
    margin = float(np.asarray(antenna_budget_for(ground.electrical, a, target, depth_m=d)["margin_db"]))
    perf = a.effective_performance_db - margin
    from dataclasses import replace

    tuned = replace(a, performance_db=perf - a.stacking_gain_db)
    check = float(np.asarray(antenna_budget_for(ground.electrical, tuned, target, depth_m=d)["max_depth"]))
    return perf, check
