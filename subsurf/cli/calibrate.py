"""``subsurf calibrate``: measure penetration, attenuation, Q* and effective performance on a test profile."""

from __future__ import annotations

HELP = ("calibrate the plan to the site from a short test profile (SEG-Y, NetCDF or CSV): noise floor, "
        "observed penetration, attenuation, Q*, effective performance")
EXAMPLE = """python surveys/calibration/make_example.py /tmp/cal
subsurf calibrate /tmp/cal/fictional_test_line.sgy --segy-time-unit ps --antenna midband-250 \\
    --velocity "0.1 m/ns" --velocity-se "0.003 m/ns" --out site-cal.json --figure site-cal.png
subsurf choose --calibration site-cal.json --target line --depth 1.2 --size "15 cm\""""


def add_arguments(parser) -> None:
    from ._medium_args import add_medium_arguments

    parser.add_argument("profile", metavar="PROFILE", help="test profile: SEG-Y (.sgy/.segy), or subsurf's NetCDF "
                        "(.nc) or CSV (.csv) trace matrix (surveys/README.md)")
    i = parser.add_argument_group("reading the profile")
    i.add_argument("--format", choices=["auto", "segy", "netcdf", "csv"], default="auto",
                   help="file format (default: by suffix)")
    i.add_argument("--segy-time-unit", choices=["us", "ns", "ps"], default="us",
                   help="unit of the SEG-Y sample-interval field (standard: us; radar files often store ps or ns; "
                   "the delay field is then scaled alike)")
    i.add_argument("--antenna", required=True, metavar="NAME", help="antenna of the catalogue used for the profile")
    i.add_argument("--catalogue", metavar="FILE", help="antenna catalogue TOML (default: the bundled one)")
    i.add_argument("--separation", metavar="L", help="antenna separation (bare number: m; default: the catalogue's)")
    i.add_argument("--stacks", type=int, metavar="N", help="stacks of the recorded traces (default: the file's, "
                   "else the catalogue's)")
    i.add_argument("--time-zero", metavar="T", help="time zero on the record (bare number: ns; default: picked "
                   "from the direct wave)")
    i.add_argument("--time-zero-sd", metavar="T", default="0", help="its standard deviation (bare number: ns)")
    v = parser.add_argument_group("velocity (one of --velocity, --velocity-from, or ground facts for the soil model)")
    v.add_argument("--velocity", metavar="V", help="ground velocity (bare number: m/ns)")
    v.add_argument("--velocity-se", metavar="V", default="0", help="its standard error (bare number: m/ns)")
    v.add_argument("--velocity-from", metavar="JSON", help="a 'subsurf velocity --out-json' file")
    v.add_argument("--velocity-target", metavar="ID", help="which fit of that file (default: the first)")
    add_medium_arguments(parser)
    m = parser.add_argument_group("measurement")
    m.add_argument("--noise", choices=["late", "pre"], default="late",
                   help="noise floor from the end of the record (default) or from the samples before the direct wave")
    m.add_argument("--noise-from", metavar="T", help="start of the late noise window (bare number: ns; default: "
                   "the last 10 %% of the record)")
    m.add_argument("--margin", metavar="DB", default="3", help="penetration = where the envelope falls to the noise "
                   "floor + this margin (dB; default 3: signal power = noise power)")
    m.add_argument("--spreading", choices=["planar", "line", "point"], default="planar",
                   help="geometric spreading removed before the decay fit (default planar: layered ground)")
    m.add_argument("--fit-from", metavar="D", help="shallowest depth of the decay fit (bare number: m; default one "
                   "wavelength in the ground)")
    m.add_argument("--reference-reflection", metavar="R", default="0.1",
                   help="|R| of the faintest reflectors still seen, for the effective performance (default 0.1)")
    o = parser.add_argument_group("outputs")
    o.add_argument("--out", metavar="JSON", help="write the calibration file (read by choose/setup --calibration)")
    o.add_argument("--figure", metavar="PNG", help="write the figure: envelope vs depth, centroid vs time")
    o.add_argument("--force", action="store_true", help="overwrite existing outputs")


#: the speed of light in air, m/s (scipy.constants.c, with a part-per-billion allowance)
_C_AIR = 299792458.0 * (1 + 1e-9)


def _velocity(args, q, medium, fc):
    import json
    import math
    from pathlib import Path

    from ..errors import FileInputError, InputError

    given = [n for n, a in (("--velocity", args.velocity), ("--velocity-from", args.velocity_from)) if a]
    if len(given) > 1:
        raise InputError("give the velocity as one of --velocity or --velocity-from, not both")
    def se_flag():
        se = q(args.velocity_se, "velocity", "m/ns", "--velocity-se")
        if se < 0:
            raise InputError(f"--velocity-se must be >= 0 m/ns, got {args.velocity_se!r}")
        return se

    if args.velocity:
        v = q(args.velocity, "velocity", "m/ns", "--velocity")
        if not 0 < v <= _C_AIR:
            raise InputError(f"--velocity must be > 0 and at most 0.2998 m/ns (the speed of light in air), "
                             f"got {args.velocity!r}")
        return v, se_flag(), "--velocity"
    if args.velocity_from:
        p = Path(args.velocity_from)
        try:
            data = json.loads(p.read_text(encoding="utf-8"))
            fits = data["fits"] if "fits" in data else [data]
            if args.velocity_target:
                fits = [f for f in fits if str(f.get("target")) == args.velocity_target]
                if not fits:
                    raise FileInputError(p, f"no fit for target {args.velocity_target!r}", field="fits")
            fit = fits[0]
            v, se = float(fit["velocity_m_per_ns"]) * 1e9, float(fit["velocity_se_m_per_ns"]) * 1e9
        except FileNotFoundError:
            raise FileInputError(p, "file not found") from None
        except (ValueError, KeyError, IndexError, TypeError, AttributeError):
            raise FileInputError(p, "not a 'subsurf velocity --out-json' result (needs fits[].velocity_m_per_ns "
                                 "and velocity_se_m_per_ns)") from None
        if not 0 < v <= _C_AIR:  # NaN fails too
            raise FileInputError(p, f"must be > 0 and at most 0.2998 m/ns (the speed of light in air), got "
                                 f"{v * 1e-9:g}", field="velocity_m_per_ns")
        if not (math.isfinite(se) and se >= 0):
            raise FileInputError(p, f"must be a finite number >= 0 m/ns, got {se * 1e-9:g}",
                                 field="velocity_se_m_per_ns")
        return v, se, f"{p} (target {fit.get('target', '?')})"
    if medium is None:
        raise InputError("give the ground velocity: --velocity, --velocity-from FILE, or ground facts "
                         "(--texture/--moisture/..., --eps) for the soil model")
    from ..waves.propagation import wave_properties

    eps, sig = medium.electrical(fc)
    return (float(wave_properties(eps, sig, fc).velocity), se_flag(),
            f"soil model ({medium.label}) at {fc / 1e6:g} MHz")


def run(args) -> int:
    from ..io.outputs import print_notes, print_result
    from ..io.transaction import OutputTransaction

    txn = OutputTransaction("calibrate", force=args.force)
    staged = {k: txn.file(p) for k, p in (("out", args.out), ("figure", args.figure)) if p}
    with txn:  # outputs checked and claimed before any work; written together or not at all
        record, text, notes = _calibrate(args, staged)
    print_notes(txn.notes, quiet=args.quiet or args.json)
    print_result(record, text, as_json=args.json)
    print_notes(notes, quiet=args.quiet or args.json)
    return 0


def _calibrate(args, staged: dict):
    from dataclasses import replace

    import numpy as np

    from ..errors import FileInputError, InputError
    from ..io.calibration_file import calibration_record, write_calibration
    from ..io.outputs import CAUTION, collect_warnings
    from ..io.profiles import read_profile
    from ..planning.antennas import get_antenna, load_catalogue
    from ..units import parse_quantity
    from ._calibration import calibration_table
    from ._medium_args import medium_from_args

    def q(text, kind, unit, name):
        return parse_quantity(text, kind, default_unit=unit, name=name)

    try:
        margin = float(str(args.margin).lower().replace("db", ""))
        refl = float(args.reference_reflection)
    except ValueError:
        raise InputError(f"--margin and --reference-reflection are numbers, got {args.margin!r}, "
                         f"{args.reference_reflection!r}") from None
    if not 0 < refl <= 1:
        raise InputError(f"--reference-reflection must be in (0, 1], got {args.reference_reflection!r}")
    from ..planning.plan import MAX_STACKS

    if args.stacks is not None and not 1 <= args.stacks <= MAX_STACKS:
        raise InputError(f"--stacks must be an integer between 1 and {MAX_STACKS}, got {args.stacks}")
    with collect_warnings() as notes:
        antenna = get_antenna(args.antenna, load_catalogue(args.catalogue))
        medium = medium_from_args(args, required=False)
        fc = antenna.centre_freq_hz
        v, v_se, v_source = _velocity(args, q, medium, fc)  # each source checked where it is read
        sep = antenna.separation_m if args.separation is None else q(args.separation, "length", "m", "--separation")
        profile = read_profile(args.profile, fmt=args.format, segy_time_unit=args.segy_time_unit)
        stacks = args.stacks or profile.stacks or antenna.stacks
        from ..interpretation.site_calibration import calibrate_profile, effective_performance

        try:
            cal = calibrate_profile(
                profile, centre_freq_hz=fc, bandwidth_hz=antenna.bandwidth_hz, separation_m=sep, velocity=v,
                velocity_se=v_se, time_zero_s=None if args.time_zero is None else q(args.time_zero, "time", "ns",
                                                                                     "--time-zero"),
                time_zero_se_s=q(args.time_zero_sd, "time", "ns", "--time-zero-sd"), noise_window=args.noise,
                noise_from_s=None if args.noise_from is None else q(args.noise_from, "time", "ns", "--noise-from"),
                margin_db=margin, spreading=args.spreading,
                fit_from_m=None if args.fit_from is None else q(args.fit_from, "length", "m", "--fit-from"))
        except FileInputError:
            raise
        except InputError as exc:
            raise FileInputError(args.profile, str(exc)) from None
        perf, perf_se = effective_performance(
            cal.penetration_m, cal.attenuation_db_per_m, v, cal.reference_freq_hz,
            penetration_se_m=cal.penetration_se_m, attenuation_se_db_per_m=cal.attenuation_se_db_per_m,
            gain=antenna.gain, reference_reflection=refl)
        from ..interpretation.calibrated_ground import (
            CalibratedGround,
            band_effective_performance,
            model_predictions,
        )
        from ..waves.propagation import NP_TO_DB

        # the effective performance in the band budget choose/map re-plan with (band, separation, coupling),
        # so that re-planning with it returns the observed penetration for this antenna; its se from the
        # single-frequency derivative above
        qv = None if cal.q_star is None else cal.q_star.value
        ground = CalibratedGround(max(cal.attenuation_db_per_m, 0.0), cal.reference_freq_hz,
                                  0.0 if qv is None else NP_TO_DB * np.pi / (qv * v), v, tuple(cal.band_hz))
        perf, check = band_effective_performance(ground, replace(antenna, separation_m=sep), cal.penetration_m,
                                                 reference_reflection=refl, stacks=stacks)
        model = None
        if medium is not None:
            model = {"ground": medium.label, **model_predictions(
                medium.electrical, centre_freq_hz=fc, performance_db=antenna.with_stacks(stacks).effective_performance_db,
                gain=antenna.gain, reference_reflection=refl)}
            from ..detection import Target
            from ..planning.antennas import antenna_budget_for

            ref = Target("planar", reflection=refl, depth_m=cal.penetration_m)  # the band budget, as perf above
            model["penetration_m"] = float(np.asarray(antenna_budget_for(
                medium.electrical, replace(antenna, separation_m=sep).with_stacks(stacks), ref,
                depth_m=cal.penetration_m)["max_depth"]))
    record = calibration_record(cal, profile=profile, fmt=args.format, antenna=antenna, stacks=stacks,
                                performance_db=perf, performance_se_db=perf_se, reference_reflection=refl,
                                velocity_source=v_source, check_depth_m=check, model=model)
    record["warnings"] = notes
    written = []
    if args.figure:
        from ..io.fig_calibration import calibration_figure

        calibration_figure(cal, staged["figure"], title=f"site calibration: {profile.source} ({antenna.name})")
        written.append(args.figure)
    if args.out:
        write_calibration(staged["out"], record, force=True)
        written.append(args.out)
    record["written"] = written
    text = calibration_table(record)
    if written:
        text += "\nwrote: " + ", ".join(written)
    text += f"\nCaution: {CAUTION}"
    return record, text, notes
