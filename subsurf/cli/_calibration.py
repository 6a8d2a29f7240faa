"""Site calibration at the command line: the table of ``subsurf calibrate`` and the
``--calibration FILE`` option of ``choose`` and ``setup`` (re-planning with the site's
measured α(f), Q* and effective performance)."""

from __future__ import annotations


def _pm(value, se, fmt):
    if value is None:
        return "-"
    return format(value, fmt) + ("" if se is None else f" ± {format(se, fmt)}")


def calibration_table(rec: dict) -> str:
    """Readable summary of a calibration record (observed, and the soil model beside it when given)."""
    from ..io.outputs import Column, format_table

    model = rec.get("model") or {}
    pen, att, qs, perf = rec["penetration"], rec["attenuation"], rec["q_star"], rec["effective_performance"]
    if qs["value"] is not None:
        q_obs = _pm(qs["value"], qs["se"], ".3g")
    elif qs["lower_bound"] is not None:
        q_obs = f"> {qs['lower_bound']:.3g} (no downshift resolved)"
    else:
        q_obs = "not measured (too few windows above noise)"
    rows = [
        {"what": "time zero", "observed": _pm(rec["time_zero"]["ns"], rec["time_zero"]["se_ns"], ".3f"),
         "unit": "ns", "model": "", "how": rec["time_zero"]["method"]},
        {"what": "velocity", "observed": _pm(rec["velocity"]["m_per_ns"], rec["velocity"]["se_m_per_ns"], ".4f"),
         "unit": "m/ns", "model": _pm(model.get("velocity_m_per_ns"), None, ".4f"), "how": rec["velocity"]["source"]},
        {"what": "noise floor", "observed": _pm(rec["noise_floor"]["db"], rec["noise_floor"]["se_db"], ".1f"),
         "unit": "dB", "model": "", "how": f"{rec['noise_floor']['window']} window "
         f"{rec['noise_floor']['from_ns']:.4g}–{rec['noise_floor']['to_ns']:.4g} ns (record amplitude²)"},
        {"what": "penetration", "observed": ("≥ " if pen["lower_bound"] else "") + _pm(pen["depth_m"], pen["se_m"], ".3g"),
         "unit": "m", "model": _pm(model.get("penetration_m"), None, ".3g"),
         "how": f"envelope = noise floor + {rec['margin_db']:g} dB at {pen['twt_ns']:.4g} ns"},
        {"what": "attenuation", "observed": _pm(att["db_per_m"], att["se_db_per_m"], ".3g"), "unit": "dB/m",
         "model": _pm(model.get("attenuation_db_per_m"), None, ".3g"),
         "how": f"envelope decay {att['fit_from_m']:.3g}–{att['fit_to_m']:.3g} m at {att['reference_freq_mhz']:.4g} MHz, "
                f"{att['spreading']} spreading removed"},
        {"what": "Q*", "observed": q_obs, "unit": "", "model": _pm(model.get("q_equivalent"), None, ".3g"),
         "how": f"spectral-centroid downshift, {qs['windows']} windows (Quan & Harris 1997)"},
        {"what": "effective performance", "observed": _pm(perf["db"], perf["se_db"], ".1f"), "unit": "dB",
         "model": _pm(model.get("performance_db"), None, ".1f"),
         "how": f"max depth = penetration for a planar |R| = {perf['reference_reflection']:g}; "
                f"{perf['stacks']} stacks ({perf['single_trace_db']:.1f} dB per trace)"},
    ]
    cols = [Column("what", "quantity"), Column("observed", "observed ± se"), Column("unit", "unit")]
    if model:
        cols.append(Column("model", "soil model"))
    cols.append(Column("how", "how"))
    prof = rec["profile"]
    title = (f"Site calibration: {prof['file']} ({prof['traces']} traces × {prof['samples']} samples, "
             f"{prof['sample_interval_ns']:g} ns), antenna {rec['antenna']['name']}")
    text = format_table(rows, cols, title=title)
    if model:
        text += f"\nsoil model: {model['ground']}, catalogue performance with the same stacking."
    if rec["antenna"].get("illustrative"):
        text += ("\nThe catalogue figures of this antenna are ILLUSTRATIVE; the effective performance above is "
                 "the site's measured figure.")
    return text


def add_calibration_argument(parser) -> None:
    parser.add_argument("--calibration", metavar="JSON", help="site calibration written by 'subsurf calibrate': "
                        "use the site's measured attenuation, Q* and velocity, and the calibrated antenna's "
                        "effective performance, instead of the ground model and the catalogue")


def load_calibration(path):
    """(CalibratedGround, record) of a calibration file."""
    from ..interpretation.calibrated_ground import CalibratedGround
    from ..io.calibration_file import read_calibration

    record = read_calibration(path)
    return CalibratedGround.from_record(record, source=str(path)), record


def calibrated_antennas(antennas, record):
    """Antennas with the calibrated one's performance replaced: (list, names replaced)."""
    from ..interpretation.calibrated_ground import calibrated_antennas as _replace

    return _replace(antennas, record)


def calibration_summary(path, record, replaced) -> dict:
    """What the calibration changed, for JSON outputs and the text note."""
    perf = record["effective_performance"]
    return {"file": str(path), "antenna": record["antenna"]["name"],
            "attenuation_db_per_m": record["attenuation"]["db_per_m"],
            "reference_freq_mhz": record["attenuation"]["reference_freq_mhz"],
            "q_star": record["q_star"]["value"], "velocity_m_per_ns": record["velocity"]["m_per_ns"],
            "observed_penetration_m": record["penetration"]["depth_m"],
            "effective_performance_single_trace_db": perf["single_trace_db"],
            "catalogue_performance_db": record["antenna"].get("catalogue_performance_db"),
            "performance_replaced_for": replaced,
            "note": calibration_note(path, record, replaced)}


def calibration_note(path, record, replaced) -> str:
    att, q = record["attenuation"], record["q_star"]["value"]
    text = (f"CALIBRATED to the site by {path}: ground attenuation {att['db_per_m']:.3g} dB/m at "
            f"{att['reference_freq_mhz']:.4g} MHz" + (f", Q* = {q:.3g}" if q is not None else ", no Q* (constant ε′, σ)")
            + f", velocity {record['velocity']['m_per_ns']:.4f} m/ns measured on site, not the soil model")
    perf = record["effective_performance"]["single_trace_db"]
    if replaced:
        text += f"; {replaced[0]}: effective performance {perf:.1f} dB per trace measured, not the catalogue's"
    else:
        text += (f"; the calibrated antenna {record['antenna']['name']} is not among those listed, so every "
                 "performance is the catalogue's")
    return text


def replan_inputs(args, medium, antennas, catalogue=None):
    """(ground, antennas, summary) with ``--calibration`` applied; unchanged (summary None) without it.

    With ``catalogue``, a calibration made with an antenna it lacks, or has at another
    frequency, is refused (one line naming the calibration file and key)."""
    path = getattr(args, "calibration", None)
    if not path:
        return medium, antennas, None
    ground, record = load_calibration(path)
    if catalogue is not None:
        from ..interpretation.calibrated_ground import check_calibrated_antenna

        check_calibrated_antenna(record, catalogue, source=path)
    antennas, replaced = calibrated_antennas(antennas, record)
    return ground, antennas, calibration_summary(path, record, replaced)


def add_model_columns(rows, model_rows) -> None:
    """Beside each calibrated row, the soil model's maximum depth and margin (prediction vs site)."""
    by_name = {r["antenna"]: r for r in model_rows}
    for r in rows:
        m = by_name.get(r["antenna"])
        r["model_max_depth_m"] = None if m is None else m["max_depth_m"]
        r["model_margin_db"] = None if m is None else m["margin_db"]
