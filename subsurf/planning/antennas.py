"""Antenna catalogue, target materials and the ranking of antennas for a target.

The catalogue is a TOML file (``configs/antennas.toml`` by default; its header documents
every field).  :func:`load_catalogue` and :func:`get_antenna` read it; :func:`make_target`
builds a :class:`subsurf.detection.Target` from a material name of
``configs/materials.toml``; :func:`rank_antennas` evaluates the loss budget of
:mod:`subsurf.detection` for every antenna at once (numpy arrays over antennas).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..detection.band import band_nodes
from ..detection.blindzone import default_pulse_length
from ..detection.coupling import coupling_gain
from ..detection.evaluate import antenna_budget, soil_loss_terms
from ..detection.targets import Target
from ..detection.verdicts import MARGINAL, PARTLY_BLIND, REACHES, REACHES_MARGIN_DB, verdict
from ..errors import InputError
from .targets import MATERIAL_ALIASES, make_target, material_names, target_summary  # noqa: F401  (public here too)

__all__ = [
    "Antenna",
    "CLUTTER_LIMIT_DB",
    "clutter_limited_stacking_gain_db",
    "load_catalogue",
    "get_antenna",
    "MATERIAL_ALIASES",
    "material_names",
    "make_target",
    "rank_antennas",
    "recommend",
]


#: Default signal-to-clutter ceiling (dB) of stacking: the clutter (ringing, ground and
#: surface scattering) that repeats from trace to trace sits this far below the single-trace
#: random-noise floor, so averaging N traces lowers the interference from n to n/N + c and
#: the gain 10·log10(1/(1/N + 10^(−C/10))) never exceeds C.  15 dB is our engineering
#: judgement for ground-coupled antennas on open ground (stacking beats random noise, not
#: clutter: Annan 2009, ch. 1); give your own per antenna as ``clutter_limit_db``.
CLUTTER_LIMIT_DB = 15.0


def clutter_limited_stacking_gain_db(stacks, clutter_limit_db=CLUTTER_LIMIT_DB):
    """Stacking gain (dB) of N traces against noise plus clutter: −10·log10(1/N + 10^(−C/10)).

    N = 1 gives 10·log10(1/(1 + c)) < 0 relative to no clutter at all; the single-trace
    performance of the catalogue already includes that clutter, so the gain is counted
    relative to N = 1: G(N) = 10·log10((1 + c)/(1/N + c)), with c = 10^(−C/10).  G → C as
    N → ∞ (more exactly 10·log10(1 + 1/c)); for N ≪ 1/c it is the familiar 10·log10(N).

    References
    ----------
    Annan, A. P. (2009). Electromagnetic principles of ground penetrating radar. In Jol, H. M.
    (ed.), *Ground Penetrating Radar: Theory and Applications*, Elsevier, ch. 1 (stacking
    improves random noise by √N in amplitude; coherent noise is not reduced).
    """
    n = np.asarray(stacks, dtype=float)
    c = 10.0 ** (-np.asarray(clutter_limit_db, dtype=float) / 10.0)
    return 10.0 * np.log10((1.0 + c) / (1.0 / n + c))


@dataclass(frozen=True)
class Antenna:
    """One antenna (with its control unit) as the loss budget needs it, SI units.

    Attributes
    ----------
    name : str
    centre_freq_hz : float
        Centre frequency (peak) of the transmitted spectrum (Hz).
    bandwidth_hz : float
        Full width at half power of the spectrum (Hz).
    performance_db : float
        System performance for a single trace (dB).
    separation_m : float
        Transmitter–receiver separation (m).
    separation_adjustable : bool
        True where transmitter and receiver are separate units whose separation the crew
        sets (``separation_m`` is then the usual setting); False (default) where it is
        fixed in one housing, as in shielded antennas.
    gain : float or None
        Fixed one-way gain in the ground (linear); None (the default) uses the in-ground
        gain of a dipole on the surface (:func:`subsurf.detection.coupling.coupling_gain`).
    trace_rate_hz : float
        Raw traces per second.
    stacks : int
        Traces averaged per recorded trace.
    pulse_length_s : float or None
        Pulse length (s) for the blind zone; None: 1.5 periods of the centre frequency.
    clutter_limit_db : float
        Ceiling of the stacking gain (:func:`clutter_limited_stacking_gain_db`).
    notes : str
    illustrative : bool
        True for invented demo figures.
    """

    name: str
    centre_freq_hz: float
    bandwidth_hz: float
    performance_db: float
    separation_m: float
    trace_rate_hz: float
    gain: float | None = None
    stacks: int = 1
    pulse_length_s: float | None = None
    clutter_limit_db: float = CLUTTER_LIMIT_DB
    notes: str = ""
    illustrative: bool = False
    separation_adjustable: bool = False

    def __post_init__(self):
        for field_name in ("centre_freq_hz", "bandwidth_hz", "performance_db", "trace_rate_hz", "clutter_limit_db"):
            v = getattr(self, field_name)
            if isinstance(v, bool) or not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
                raise InputError(f"antenna {self.name!r}: {field_name} must be a number > 0, got {v!r}")
        for field_name in ("gain", "pulse_length_s"):
            v = getattr(self, field_name)
            if v is not None and (isinstance(v, bool) or not (isinstance(v, (int, float)) and math.isfinite(v)
                                                              and v > 0)):
                raise InputError(f"antenna {self.name!r}: {field_name} must be a number > 0, got {v!r}")
        if not (isinstance(self.separation_m, (int, float)) and math.isfinite(self.separation_m)
                and self.separation_m >= 0):
            raise InputError(f"antenna {self.name!r}: separation_m must be >= 0, got {self.separation_m!r}")
        if not (isinstance(self.stacks, int) and self.stacks >= 1):
            raise InputError(f"antenna {self.name!r}: stacks must be an integer >= 1, got {self.stacks!r}")

    @property
    def stacking_gain_db(self) -> float:
        """Clutter-limited signal-to-interference gain of stacking (dB), see :func:`clutter_limited_stacking_gain_db`."""
        return float(clutter_limited_stacking_gain_db(self.stacks, self.clutter_limit_db))

    @property
    def effective_performance_db(self) -> float:
        """System performance including the stacking gain, dB."""
        return self.performance_db + self.stacking_gain_db

    @property
    def pulse_length(self) -> float:
        """Pulse length (s): the catalogue's, or 1.5 periods of the centre frequency."""
        return self.pulse_length_s if self.pulse_length_s is not None else float(default_pulse_length(
            self.centre_freq_hz))

    @property
    def band_top_hz(self) -> float:
        """Top of the band, f_c + B/2 (Hz)."""
        return self.centre_freq_hz + 0.5 * self.bandwidth_hz

    def with_stacks(self, stacks: int) -> Antenna:
        """The same antenna with another stack count."""
        from dataclasses import replace

        return replace(self, stacks=int(stacks))


def load_catalogue(path=None) -> dict[str, Antenna]:
    """Read an antenna catalogue (TOML) into ``{name: Antenna}``, ordered by frequency.

    Parameters
    ----------
    path : path-like or None
        Catalogue file; None reads the bundled ``configs/antennas.toml`` (illustrative
        demo antennas).

    Raises
    ------
    FileInputError
        Naming the file, the antenna and the field of any invalid entry, unknown keys
        with the closest valid key suggested (:func:`subsurf.planning.catalogue.read_catalogue`).
    """
    from .catalogue import read_catalogue

    return read_catalogue(path)


def get_antenna(name: str, catalogue: dict[str, Antenna] | None = None) -> Antenna:
    """One antenna by name; unknown names raise InputError listing those available."""
    cat = catalogue if catalogue is not None else load_catalogue()
    if name not in cat:
        raise InputError(f"unknown antenna {name!r}; available: {', '.join(cat)}")
    return cat[name]


def _soil_of(electrical):
    """The soil behind an ``electrical`` callable (a Soil's or a Medium's bound method), or None."""
    owner = getattr(electrical, "__self__", None)
    return getattr(owner, "soil", owner)


def antenna_budget_for(electrical, antenna: Antenna, target: Target, *, depth_m: float, stacks: int | None = None,
                       surface_loss_db=None, layers=(), roughness_factor=1.0, depth_top_m=None) -> dict:
    """:func:`subsurf.detection.evaluate.antenna_budget` of a catalogue antenna in a ground.

    ``electrical(freq_hz) -> (eps, sigma)`` is evaluated at the antenna's band frequencies; when it
    is a soil's (or a Medium holding a soil), the soil's volume scattering and rough surface enter
    the budget too (:func:`soil_loss_terms`).  ``depth_top_m``: the top of a range of depths
    of interest (blind zone and resolution judged there), None for one depth.
    """
    a = antenna if stacks is None else antenna.with_stacks(stacks)
    f, w = band_nodes(a.centre_freq_hz, a.bandwidth_hz)
    eps, sig = electrical(f)
    extra, surface = soil_loss_terms(_soil_of(electrical), f, eps)
    return antenna_budget(eps, sig, f, w, target, depth_m=depth_m, depth_top_m=depth_top_m,
                          performance_db=a.effective_performance_db,
                          pulse_length_s=a.pulse_length, separation_m=a.separation_m, gain=a.gain,
                          layers=layers, surface_loss_db=0.0 if surface_loss_db is None else surface_loss_db,
                          extra_attenuation_np_per_m=extra, roughness_factor=roughness_factor,
                          surface_power_factor=surface)


def rank_antennas(electrical, antennas: list[Antenna], target: Target, *, surface_loss_db=None, layers=(),
                  reaches_db: float = REACHES_MARGIN_DB) -> list[dict]:
    """Evaluate every antenna against a target with the full budget (band, coupling, separation, layers).

    Parameters
    ----------
    electrical : callable
        ``electrical(freq_hz) -> (eps, sigma)`` for the host ground, broadcasting over an
        array of frequencies (e.g. ``Medium.electrical`` or ``Soil.electrical``).
    antennas : list of Antenna
    target : Target
        With ``depth_m`` set (the depth of interest; for a range, its bottom, with
        ``depth_top_m`` its top: margin and verdict at the bottom, blind zone and resolution
        at the top).
    surface_loss_db : float or None
        A user-supplied extra two-way surface loss (dB).
    layers : sequence of subsurf.detection.layers.Layer
        Surface layers over the host, top first.
    reaches_db : float
        Margin for the verdict "reaches".

    Returns
    -------
    list of dict (SI units)
        One row per antenna: name, centre_freq_hz, performance_db (with stacking),
        max_depth_m, min_depth_m, margin_db, verdict, near_field, received_freq_hz,
        vertical_resolution_m, fresnel_radius_m, footprint_radius_m, smallest_separable_m,
        eps_real, sigma, velocity_m_per_s, attenuation_db_per_m, coupling_gain_dbi and,
        for line targets, orientation_penalty_db; for a depth range also margin_top_db,
        vertical_resolution_bottom_m and fresnel_radius_bottom_m.
    """
    from ..detection.budget import orientation_penalty_db
    from ..waves.propagation import wave_properties

    if target.depth_m is None:
        raise InputError("the target needs a depth to rank antennas (depth_m)")
    if not antennas:
        raise InputError("no antennas to rank")
    rows = []
    for a in antennas:
        fc = np.array([a.centre_freq_hz])
        eps_c, sig_c = electrical(fc)
        wc = wave_properties(eps_c, sig_c, fc)
        b = antenna_budget_for(electrical, a, target, depth_m=target.depth_m, surface_loss_db=surface_loss_db,
                               layers=layers, depth_top_m=target.depth_top_m)
        margin = float(b["margin_db"])
        row = {
            "name": a.name,
            "centre_freq_hz": a.centre_freq_hz,
            "performance_db": a.effective_performance_db,
            "stacks": a.stacks,
            "eps_real": float(wc.eps_real[0]),
            "sigma": float(wc.effective_conductivity[0]),
            "velocity_m_per_s": float(wc.velocity[0]),
            "attenuation_db_per_m": float(wc.attenuation_db_per_m[0]),
            "max_depth_m": float(b["max_depth"]),
            "min_depth_m": float(b["min_depth"]),
            "margin_db": margin,
            "verdict": str(verdict(margin, too_shallow=bool(b["too_shallow"]), partly_blind=bool(b["partly_blind"]),
                                   reaches_db=reaches_db)),
            "near_field": bool(b["near_field"]),
            "received_freq_hz": float(b["received_freq_hz"]),
            "vertical_resolution_m": float(b["vertical_resolution"]),
            "fresnel_radius_m": float(b["fresnel_radius"]),
            "footprint_radius_m": float(b["footprint_radius"]),
            "smallest_separable_m": float(max(b["vertical_resolution"], b["fresnel_radius"])),
            "coupling_gain_dbi": float(10.0 * np.log10(a.gain if a.gain is not None else coupling_gain(
                wc.eps_real[0]))),
            "illustrative": a.illustrative,
        }
        if target.kind == "line":
            row["orientation_penalty_db"] = float(orientation_penalty_db(eps_c, sig_c, fc, target)[0])
        if target.is_range:
            row["margin_top_db"] = float(b["margin_top_db"])
            row["vertical_resolution_bottom_m"] = float(b["vertical_resolution_bottom"])
            row["fresnel_radius_bottom_m"] = float(b["fresnel_radius_bottom"])
        rows.append(row)
    narrow = [r["name"] for r in rows if target.kind != "planar" and target.size_m > 2 * r["footprint_radius_m"]]
    if narrow:
        import warnings

        from ..errors import ModelRangeWarning

        warnings.warn(
            f"target size {target.size_m:g} m is larger than the antenna footprint at {target.shallowest_m:g} m "
            f"depth for {', '.join(narrow)}: the {target.kind}-target model does not hold there; "
            "its top reflects like a planar interface (use kind 'planar')",
            ModelRangeWarning, stacklevel=2)
    return rows


def recommend(rows: list[dict], *, reaches_db: float = REACHES_MARGIN_DB, target: Target | None = None
              ) -> tuple[str | None, str]:
    """Pick an antenna from :func:`rank_antennas` rows: (name or None, reason).

    Rule: among antennas whose verdict is "reaches", the one with the finest vertical
    resolution at the target depth (ties: larger margin).  For a range of depths of
    interest (``target`` with ``depth_top_m``) "reaches" covers the whole range; when none
    does, an antenna that reaches its bottom with margin but is blind at its top ("partly
    blind") is named with the depth above which it is blind, and an antenna that sees the
    top is suggested beside it.  If none reaches with margin, the marginal one with the
    largest margin, flagged as marginal; if none reaches at all, no recommendation, and the
    antenna that comes closest is named.  Antennas for which the target is "too shallow"
    (inside their blind zone) are never recommended.
    """
    rng = target is not None and target.is_range
    what = (f"the whole range {target.depth_top_m:g}-{target.depth_m:g} m (its bottom with at least "
            f"{reaches_db:g} dB margin, its top clear of the blind zone)") if rng else \
        f"the target with at least {reaches_db:g} dB margin"
    reach = [r for r in rows if r["verdict"] == REACHES]
    if reach:
        best = min(reach, key=lambda r: (r["vertical_resolution_m"], -r["margin_db"]))
        return best["name"], (
            f"{best['name']}: the finest vertical resolution ({best['vertical_resolution_m']:.3g} m) "
            f"among the antennas that reach {what} "
            f"(margin {best['margin_db']:.1f} dB, maximum depth {best['max_depth_m']:.3g} m)")
    partly = [r for r in rows if r["verdict"] == PARTLY_BLIND and r["margin_db"] >= reaches_db]
    if partly and rng:
        best = min(partly, key=lambda r: (r["min_depth_m"], -r["margin_db"]))
        top = [r for r in rows if r["name"] != best["name"] and r["min_depth_m"] <= target.depth_top_m
               and r.get("margin_top_db", float("-inf")) >= reaches_db]
        also = ""
        if top:
            t = min(top, key=lambda r: r["min_depth_m"])
            also = (f"; for the top of the range also bring {t['name']} (clear of its blind zone from "
                    f"{t['min_depth_m']:.2g} m, margin {t['margin_top_db']:.1f} dB at {target.depth_top_m:g} m)")
        return best["name"], (
            f"no antenna reaches {what}; {best['name']} reaches the bottom ({target.depth_m:g} m, margin "
            f"{best['margin_db']:.1f} dB) but is blind above {best['min_depth_m']:.2g} m, so it misses the "
            f"top of the range{also}")
    marginal = [r for r in rows if r["verdict"] == MARGINAL]
    if marginal:
        best = max(marginal, key=lambda r: r["margin_db"])
        return best["name"], (
            f"{best['name']}: no antenna reaches {what}; this one has "
            f"the largest margin ({best['margin_db']:.1f} dB), so detection is marginal; consider a lower "
            "frequency (stacking is limited by clutter)")
    if partly or any(r["verdict"] == PARTLY_BLIND for r in rows):
        best = max((r for r in rows if r["verdict"] == PARTLY_BLIND), key=lambda r: r["margin_db"])
        return best["name"], (
            f"no antenna reaches {what}; {best['name']} reaches the bottom only marginally (margin "
            f"{best['margin_db']:.1f} dB) and is blind above {best['min_depth_m']:.2g} m")
    shallow = [r for r in rows if r["verdict"] == "too shallow"]
    if len(shallow) == len(rows):
        best = min(rows, key=lambda r: r["min_depth_m"])
        return None, (
            f"the target is too shallow for every antenna: it lies inside each one's blind zone (the "
            f"shallowest is {best['min_depth_m']:.2g} m, {best['name']}); use a higher frequency or a shorter "
            "separation")
    best = max((r for r in rows if r["verdict"] != "too shallow"), key=lambda r: r["margin_db"])
    return None, (
        f"no antenna in the catalogue reaches the target; the closest is {best['name']} "
        f"({-best['margin_db']:.1f} dB short of detection, maximum depth {best['max_depth_m']:.3g} m)")
