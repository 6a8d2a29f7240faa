"""Antenna catalogue, target materials and the ranking of antennas for a target.

The catalogue is a TOML file (``configs/antennas.toml`` by default; its header documents
every field).  :func:`load_catalogue` and :func:`get_antenna` read it; :func:`make_target`
builds a :class:`subsurf.detection.Target` from a material name of
``configs/materials.toml``; :func:`rank_antennas` evaluates the loss budget of
:mod:`subsurf.detection` for every antenna at once (numpy arrays over antennas).
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..detection.budget import (
    REACHES_MARGIN_DB,
    Target,
    band_spectrum,
    margin_db,
    max_depth,
    resolution_at_depth,
    verdict,
)
from ..errors import FileInputError, InputError

__all__ = [
    "Antenna",
    "load_catalogue",
    "get_antenna",
    "MATERIAL_ALIASES",
    "material_names",
    "make_target",
    "rank_antennas",
    "recommend",
]


@dataclass(frozen=True)
class Antenna:
    """One antenna (with its control unit) as the loss budget needs it, SI units.

    Attributes
    ----------
    name : str
    centre_freq_hz : float
        Centre frequency of the transmitted spectrum (Hz).
    bandwidth_hz : float
        Full width at half power of the spectrum (Hz).
    performance_db : float
        System performance for a single trace (dB).
    separation_m : float
        Transmitter–receiver separation (m).
    gain : float
        One-way antenna gain in the ground (linear; the catalogue gives dBi).
    trace_rate_hz : float
        Raw traces per second.
    stacks : int
        Traces averaged per recorded trace.
    notes : str
    illustrative : bool
        True for invented demo figures.
    """

    name: str
    centre_freq_hz: float
    bandwidth_hz: float
    performance_db: float
    separation_m: float
    gain: float
    trace_rate_hz: float
    stacks: int = 1
    notes: str = ""
    illustrative: bool = False

    def __post_init__(self):
        for field_name in ("centre_freq_hz", "bandwidth_hz", "performance_db", "gain", "trace_rate_hz"):
            v = getattr(self, field_name)
            if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
                raise InputError(f"antenna {self.name!r}: {field_name} must be a number > 0, got {v!r}")
        if not (math.isfinite(self.separation_m) and self.separation_m >= 0):
            raise InputError(f"antenna {self.name!r}: separation_m must be >= 0, got {self.separation_m!r}")
        if not (isinstance(self.stacks, int) and self.stacks >= 1):
            raise InputError(f"antenna {self.name!r}: stacks must be an integer >= 1, got {self.stacks!r}")

    @property
    def stacking_gain_db(self) -> float:
        """Signal-to-noise gain of stacking, 10·log10(N) dB (incoherent noise)."""
        return 10.0 * math.log10(self.stacks)

    @property
    def effective_performance_db(self) -> float:
        """System performance including the stacking gain, dB."""
        return self.performance_db + self.stacking_gain_db

    @property
    def band_top_hz(self) -> float:
        """Top of the band, f_c + B/2 (Hz)."""
        return self.centre_freq_hz + 0.5 * self.bandwidth_hz

    def with_stacks(self, stacks: int) -> Antenna:
        """The same antenna with another stack count."""
        from dataclasses import replace

        return replace(self, stacks=int(stacks))


_FIELDS = {
    # toml key: (Antenna field, scale to SI, low, high)
    "centre_frequency_mhz": ("centre_freq_hz", 1e6, 1e-3, 1e5),
    "bandwidth_mhz": ("bandwidth_hz", 1e6, 1e-3, 1e5),
    "system_performance_db": ("performance_db", 1.0, 1e-9, 400.0),
    "separation_m": ("separation_m", 1.0, 0.0, 100.0),
    "trace_rate_hz": ("trace_rate_hz", 1.0, 1e-9, 1e7),
}


def _default_catalogue_path() -> Path:
    from .. import config_dir

    return Path(config_dir()) / "antennas.toml"


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
        Naming the file, the antenna and the field of any invalid entry.
    """
    path = Path(path) if path is not None else _default_catalogue_path()
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
    except FileNotFoundError:
        raise FileInputError(path, "antenna catalogue not found") from None
    except tomllib.TOMLDecodeError as exc:
        raise FileInputError(path, f"invalid TOML: {exc}") from None
    table = data.get("antenna")
    if not isinstance(table, dict) or not table:
        raise FileInputError(path, "no [antenna.NAME] tables found")
    out = []
    for name, entry in table.items():
        where = f"[antenna.{name}]"
        if not isinstance(entry, dict):
            raise FileInputError(path, f"{where} must be a table", field=name)
        kw = {}
        for key, (fld, scale, lo, hi) in _FIELDS.items():
            v = entry.get(key)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                raise FileInputError(path, f"{where}: needs a number, got {v!r}", field=key)
            if not lo <= v <= hi:
                raise FileInputError(path, f"{where}: must be between {lo:g} and {hi:g}, got {v!r}", field=key)
            kw[fld] = float(v) * scale
        gain_dbi = entry.get("gain_dbi", 0.0)
        if isinstance(gain_dbi, bool) or not isinstance(gain_dbi, (int, float)) or not -20 <= gain_dbi <= 40:
            raise FileInputError(path, f"{where}: must be a number between -20 and 40 dBi, got {gain_dbi!r}",
                                 field="gain_dbi")
        stacks = entry.get("stacks", 1)
        if isinstance(stacks, bool) or not isinstance(stacks, int) or stacks < 1:
            raise FileInputError(path, f"{where}: must be an integer >= 1, got {stacks!r}", field="stacks")
        out.append(Antenna(name=str(name), gain=10.0 ** (gain_dbi / 10.0), stacks=stacks,
                           notes=str(entry.get("notes", "")),
                           illustrative=bool(entry.get("illustrative", False)), **kw))
    out.sort(key=lambda a: (a.centre_freq_hz, a.name))
    return {a.name: a for a in out}


def get_antenna(name: str, catalogue: dict[str, Antenna] | None = None) -> Antenna:
    """One antenna by name; unknown names raise InputError listing those available."""
    cat = catalogue if catalogue is not None else load_catalogue()
    if name not in cat:
        raise InputError(f"unknown antenna {name!r}; available: {', '.join(cat)}")
    return cat[name]


#: Target-material words accepted besides the keys of configs/materials.toml.
MATERIAL_ALIASES = {
    "void": "air",                # air-filled void or cavity
    "plastic_pipe": "air",        # empty plastic pipe: the air inside dominates the contrast
    "water": "fresh_water",       # water-filled pipe or cavity
    "water_table": "saturated_sand",
    "concrete": "concrete_dry",
    "rock": "granite",
    "bedrock": "granite",
    "steel": "metal",
    "iron": "metal",
}


def _canonical(name: str) -> str:
    key = str(name).strip().lower().replace(" ", "_").replace("-", "_")
    return MATERIAL_ALIASES.get(key, key)


def material_names() -> list[str]:
    """Material names accepted by :func:`make_target` (table keys and aliases)."""
    from ..ground.presets import load_materials

    return sorted(set(load_materials()) | set(MATERIAL_ALIASES))


def make_target(kind: str, *, depth_m=None, size_m=None, material: str | None = None,
                eps: complex | None = None, sigma: float = 0.0, reflection: complex | None = None) -> Target:
    """Build a :class:`~subsurf.detection.Target` from a material name or explicit values.

    Parameters
    ----------
    kind : {"planar", "point", "line"}
    depth_m, size_m : float, optional
        Depth to the top (m) and diameter (m) of the target.
    material : str, optional
        A key of ``configs/materials.toml`` (e.g. ``metal``, ``air``, ``fresh_water``,
        ``concrete_dry``, ``granite``, ``saturated_sand``) or an alias of
        :data:`MATERIAL_ALIASES` (``void``, ``plastic_pipe``, ``water``, ``water_table``,
        ``concrete``, ``rock``).
    eps, sigma : explicit relative permittivity and conductivity (S/m) instead of a material.
    reflection : explicit amplitude reflection coefficient instead of a material.

    Notes
    -----
    A material's representative value is the middle of its permittivity range and
    the geometric mean of its conductivity range (conductivity spans decades; the
    arithmetic mean when the low end is 0).  ``perfect_conductor`` materials become
    ``conductor=True`` (|R| = 1).
    """
    given = sum(x is not None for x in (material, eps, reflection))
    if given != 1:
        raise InputError("give the target as exactly one of a material name, eps (with sigma) or a reflection")
    if material is None:
        return Target(kind=kind, depth_m=depth_m, size_m=size_m, eps=eps, sigma=sigma, reflection=reflection,
                      material="custom")
    from ..ground.presets import load_materials

    table = load_materials()
    key = _canonical(material)
    if key not in table:
        raise InputError(f"unknown target material {material!r}; available: {', '.join(material_names())}")
    rec = table[key]
    asked = str(material).strip().lower().replace(" ", "_").replace("-", "_")
    label = key if asked == key else f"{asked} (as {key})"  # show what an alias stands for
    if rec["perfect_conductor"]:
        return Target(kind=kind, depth_m=depth_m, size_m=size_m, conductor=True, material=label)
    e_lo, e_hi = rec["relative_permittivity"]
    s_lo, s_hi = rec["conductivity"]
    s = math.sqrt(s_lo * s_hi) if s_lo > 0 else 0.5 * (s_lo + s_hi)
    return Target(kind=kind, depth_m=depth_m, size_m=size_m, eps=complex(0.5 * (e_lo + e_hi)), sigma=s,
                  material=label)


def target_summary(target) -> dict:
    """The target as plain JSON-able facts (SI units, keys with units)."""
    out = {"kind": target.kind, "depth_m": target.depth_m, "size_m": target.size_m,
           "material": target.material}
    if target.conductor:
        out["perfect_conductor"] = True
    elif target.eps is not None:
        out["eps_real"] = complex(target.eps).real
        out["sigma_ms_per_m"] = target.sigma * 1e3
    else:
        out["reflection"] = target.reflection
    return out


def rank_antennas(electrical, antennas: list[Antenna], target: Target, *, surface_loss_db=None,
                  reaches_db: float = REACHES_MARGIN_DB, n_band: int = 193) -> list[dict]:
    """Evaluate every antenna against a target in one vectorised pass.

    Parameters
    ----------
    electrical : callable
        ``electrical(freq_hz) -> (eps, sigma)`` for the ground, broadcasting over an
        array of frequencies (e.g. ``Medium.electrical`` or ``Soil.electrical``).
    antennas : list of Antenna
    target : Target
        With ``depth_m`` set (the depth of interest).
    surface_loss_db : float or None
        Passed to :func:`subsurf.detection.max_depth`.
    reaches_db : float
        Margin for the verdict "reaches".

    Returns
    -------
    list of dict (SI units)
        One row per antenna: name, centre_freq_hz, performance_db (with stacking),
        max_depth_m, margin_db, verdict, received_freq_hz, vertical_resolution_m,
        fresnel_radius_m, footprint_radius_m, smallest_separable_m, eps_real, sigma,
        velocity_m_per_s, attenuation_db_per_m.
    """
    from ..waves.propagation import wave_properties

    if target.depth_m is None:
        raise InputError("the target needs a depth to rank antennas (depth_m)")
    if not antennas:
        raise InputError("no antennas to rank")
    fc = np.array([a.centre_freq_hz for a in antennas])
    perf = np.array([a.effective_performance_db for a in antennas])
    gain = np.array([a.gain for a in antennas])
    eps_c, sig_c = electrical(fc)
    w = wave_properties(eps_c, sig_c, fc)
    dmax = max_depth(eps_c, sig_c, fc, perf, target=target, gain=gain, surface_loss_db=surface_loss_db)
    marg = margin_db(target.depth_m, eps_c, sig_c, fc, perf, target=target, gain=gain,
                     surface_loss_db=surface_loss_db)
    # band of every antenna on its own grid: shape (n_antennas, n_band)
    grids = [band_spectrum(a.centre_freq_hz, a.bandwidth_hz, n=n_band) for a in antennas]
    rows = []
    for i, a in enumerate(antennas):
        f, amp = grids[i]
        eps_b, sig_b = electrical(f)
        res = resolution_at_depth(eps_b, sig_b, f, amp, target.depth_m)
        rows.append({
            "name": a.name,
            "centre_freq_hz": a.centre_freq_hz,
            "performance_db": a.effective_performance_db,
            "stacks": a.stacks,
            "eps_real": float(w.eps_real[i]),
            "sigma": float(w.effective_conductivity[i]),
            "velocity_m_per_s": float(w.velocity[i]),
            "attenuation_db_per_m": float(w.attenuation_db_per_m[i]),
            "max_depth_m": float(np.asarray(dmax)[i]),
            "margin_db": float(np.asarray(marg)[i]),
            "verdict": str(verdict(np.asarray(marg)[i], reaches_db=reaches_db)),
            "received_freq_hz": float(res.received_freq_hz),
            "vertical_resolution_m": float(res.vertical_m),
            "fresnel_radius_m": float(res.fresnel_radius_m),
            "footprint_radius_m": float(res.footprint_radius_m),
            "smallest_separable_m": float(res.smallest_separable_m),
            "illustrative": a.illustrative,
        })
    narrow = [r["name"] for r in rows if target.kind != "planar" and target.size_m > 2 * r["footprint_radius_m"]]
    if narrow:
        import warnings

        from ..errors import ModelRangeWarning

        warnings.warn(
            f"target size {target.size_m:g} m is larger than the antenna footprint at {target.depth_m:g} m "
            f"depth for {', '.join(narrow)}: the {target.kind}-target model does not hold there; "
            "its top reflects like a planar interface (use kind 'planar')",
            ModelRangeWarning, stacklevel=2)
    return rows


def recommend(rows: list[dict]) -> tuple[str | None, str]:
    """Pick an antenna from :func:`rank_antennas` rows: (name or None, reason).

    Rule: among antennas whose verdict is "reaches", the one with the finest vertical
    resolution at the target depth (ties: larger margin).  If none reaches with margin,
    the marginal one with the largest margin, flagged as marginal; if none reaches at
    all, no recommendation, and the antenna that comes closest is named.
    """
    reach = [r for r in rows if r["verdict"] == "reaches"]
    if reach:
        best = min(reach, key=lambda r: (r["vertical_resolution_m"], -r["margin_db"]))
        return best["name"], (
            f"{best['name']}: the finest vertical resolution ({best['vertical_resolution_m']:.3g} m) "
            f"among the antennas that reach the target with at least {REACHES_MARGIN_DB:g} dB margin "
            f"(margin {best['margin_db']:.1f} dB, maximum depth {best['max_depth_m']:.3g} m)")
    marginal = [r for r in rows if r["verdict"] == "marginal"]
    if marginal:
        best = max(marginal, key=lambda r: r["margin_db"])
        return best["name"], (
            f"{best['name']}: no antenna reaches the target with {REACHES_MARGIN_DB:g} dB margin; this one has "
            f"the largest margin ({best['margin_db']:.1f} dB), so detection is marginal; consider more "
            "stacking or a lower frequency")
    best = max(rows, key=lambda r: r["margin_db"])
    return None, (
        f"no antenna in the catalogue reaches the target; the closest is {best['name']} "
        f"({-best['margin_db']:.1f} dB short of detection, maximum depth {best['max_depth_m']:.3g} m)")
