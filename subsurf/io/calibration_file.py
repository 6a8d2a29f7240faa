"""The site-calibration file: subsurf's own JSON schema, written by ``subsurf calibrate``
and read by ``choose``/``setup`` with ``--calibration FILE``.

Human units (ns, m, MHz, dB) as at every edge; the schema is documented in
surveys/README.md ("Site calibration file").  Reading checks the schema name and
version and every field re-planning needs; a problem is one line naming the file and field.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

from ..errors import FileInputError

__all__ = ["SCHEMA", "SCHEMA_VERSION", "calibration_record", "write_calibration", "read_calibration"]

SCHEMA = "subsurf-site-calibration"
SCHEMA_VERSION = 1

#: fields re-planning needs: dotted path -> (low, high) accepted range
_REQUIRED = {
    "antenna.name": None,
    "velocity.m_per_ns": (1e-4, 0.2998),
    "attenuation.db_per_m": (-1e3, 1e3),
    "attenuation.reference_freq_mhz": (1e-3, 1e5),
    "penetration.depth_m": (0.0, 1e4),
    "effective_performance.single_trace_db": (0.0, 400.0),
    "effective_performance.stacks": (1, 1e6),
    "effective_performance.reference_reflection": (0.0, 1.0),
}


def _num(x, nd=6):
    return None if x is None else float(f"{float(x):.{nd}g}")


def calibration_record(cal, *, profile, fmt: str, antenna, stacks: int, performance_db: float,
                       performance_se_db: float, reference_reflection: float, velocity_source: str,
                       check_depth_m: float, model: dict | None = None) -> dict:
    """The JSON content (human units) of a :class:`~subsurf.interpretation.site_calibration.SiteCalibration`."""
    from .. import __version__
    from .outputs import CAUTION

    q = cal.q_star
    fit = cal.attenuation_fit
    single = performance_db - antenna.with_stacks(stacks).stacking_gain_db  # the clutter-limited stacking gain
    return {
        "schema": SCHEMA,
        "schema_version": SCHEMA_VERSION,
        "created_by": f"subsurf {__version__} calibrate",
        "caution": CAUTION,
        "profile": {"file": str(profile.source), "format": fmt, "traces": profile.n_traces,
                    "samples": profile.n_samples, "sample_interval_ns": _num(profile.sample_interval_s * 1e9),
                    "first_sample_ns": _num(profile.first_sample_s * 1e9),
                    "length_m": None if profile.distance_m is None else _num(float(profile.distance_m[-1]
                                                                                   - profile.distance_m[0])),
                    "dropped_traces": dict(profile.dropped)},
        "antenna": {"name": antenna.name, "centre_freq_mhz": _num(antenna.centre_freq_hz / 1e6),
                    "bandwidth_mhz": _num(antenna.bandwidth_hz / 1e6), "separation_m": _num(cal.separation_m),
                    "gain_dbi": None if antenna.gain is None else _num(10.0 * math.log10(antenna.gain)),
                    "catalogue_performance_db": _num(antenna.performance_db), "illustrative": antenna.illustrative},
        "time_zero": {"ns": _num(cal.time_zero.time_s * 1e9), "se_ns": _num(cal.time_zero.se_s * 1e9),
                      "method": cal.time_zero.method},
        "velocity": {"m_per_ns": _num(cal.velocity * 1e-9), "se_m_per_ns": _num(cal.velocity_se * 1e-9),
                     "source": velocity_source},
        "noise_floor": {"window": cal.noise.window, "from_ns": _num(cal.noise.start_s * 1e9),
                        "to_ns": _num(cal.noise.stop_s * 1e9), "db": _num(cal.noise.db), "se_db": _num(cal.noise.se_db),
                        "trend_db": _num(cal.noise.trend_db), "power_unit": "amplitude² of the record"},
        "margin_db": _num(cal.margin_db),
        "penetration": {"twt_ns": _num(cal.penetration_twt_s * 1e9), "se_ns": _num(cal.penetration_twt_se_s * 1e9),
                        "depth_m": _num(cal.penetration_m), "se_m": _num(cal.penetration_se_m),
                        "lower_bound": cal.penetration_lower_bound},
        "attenuation": {"db_per_m": _num(cal.attenuation_db_per_m), "se_db_per_m": _num(cal.attenuation_se_db_per_m),
                        "reference_freq_mhz": _num(cal.reference_freq_hz / 1e6), "spreading": cal.spreading,
                        "fit_from_m": _num(cal.fit_from_m), "fit_to_m": _num(cal.penetration_m),
                        "samples": fit.n, "effective_samples": _num(fit.n_effective, 3)},
        "q_star": {"value": None if q is None else _num(q.value), "se": None if q is None else _num(q.se),
                   "lower_bound": None if q is None else _num(q.lower_bound),
                   "windows": 0 if q is None else int(q.centroid_hz.size),
                   "centroid_first_mhz": None if q is None else _num(q.centroid_hz[0] / 1e6),
                   "centroid_last_mhz": None if q is None else _num(q.centroid_hz[-1] / 1e6),
                   "attenuation_slope_db_per_m_per_mhz": None if q is None or q.value is None else
                   _num(8.685889638 * q.attenuation_slope_np_per_m_per_hz(cal.velocity) * 1e6)},
        "band_mhz": [_num(cal.band_hz[0] / 1e6), _num(cal.band_hz[1] / 1e6)],
        "effective_performance": {"db": _num(performance_db), "se_db": _num(performance_se_db),
                                  "single_trace_db": _num(single), "stacks": int(stacks),
                                  "reference_reflection": _num(reference_reflection),
                                  "surface_loss": "from the air-ground contrast of the calibrated ground",
                                  "solver_check_max_depth_m": _num(check_depth_m)},
        "model": model,
    }


def write_calibration(path, record: dict, *, force: bool = False) -> Path:
    """Write ``record`` as JSON atomically (never half-written; no overwrite without ``force``)."""
    from .outputs import atomic_write_text, to_jsonable

    return atomic_write_text(path, json.dumps(to_jsonable(record), indent=2, allow_nan=False,
                                              ensure_ascii=False) + "\n", force=force)


def _get(record, dotted):
    cur = record
    for part in dotted.split("."):
        if not isinstance(cur, dict) or part not in cur:
            raise KeyError(dotted)
        cur = cur[part]
    return cur


def read_calibration(path) -> dict:
    """Read and check a calibration file; returns its content (human units)."""
    p = Path(path)
    try:
        record = json.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise FileInputError(p, "file not found") from None
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise FileInputError(p, f"not JSON: {exc}") from None
    if not isinstance(record, dict) or record.get("schema") != SCHEMA:
        raise FileInputError(p, f"not a subsurf site calibration (needs \"schema\": \"{SCHEMA}\"; write one with "
                             "'subsurf calibrate')", field="schema")
    if record.get("schema_version") != SCHEMA_VERSION:
        raise FileInputError(p, f"schema_version {record.get('schema_version')!r} is not supported (this subsurf "
                             f"reads {SCHEMA_VERSION})", field="schema_version")
    for key, rng in _REQUIRED.items():
        try:
            val = _get(record, key)
        except KeyError:
            raise FileInputError(p, "missing", field=key) from None
        if rng is None:
            if not isinstance(val, str) or not val:
                raise FileInputError(p, f"must be a non-empty string, got {val!r}", field=key)
            continue
        if isinstance(val, bool) or not isinstance(val, (int, float)) or not math.isfinite(val):
            raise FileInputError(p, f"must be a finite number, got {val!r}", field=key)
        if not rng[0] <= val <= rng[1]:
            raise FileInputError(p, f"must be between {rng[0]:g} and {rng[1]:g}, got {val:g}", field=key)
    q = record.get("q_star", {})
    if not isinstance(q, dict) or (q.get("value") is not None and not (isinstance(q["value"], (int, float))
                                                                       and q["value"] > 0)):
        raise FileInputError(p, "q_star.value must be a number > 0 or null", field="q_star.value")
    band = record.get("band_mhz")
    if (not isinstance(band, list) or len(band) != 2 or not all(isinstance(b, (int, float)) for b in band)
            or not 0 < band[0] < band[1]):
        raise FileInputError(p, f"must be [low, high] in MHz with 0 < low < high, got {band!r}", field="band_mhz")
    return record
