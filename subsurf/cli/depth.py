"""``subsurf depth``: two-way travel time to depth, with uncertainty, for single values or pick tables."""

from __future__ import annotations

HELP = "convert two-way travel times (single values or a pick CSV) to depths with uncertainty"
EXAMPLE = """subsurf depth --twt "18.5 ns" --velocity "0.095 m/ns" --velocity-se "0.003 m/ns" --offset "0.14 m"
subsurf depth --picks surveys/picks/fictional_utility_picks.csv --velocity "0.095 m/ns" \\
    --velocity-se "0.003 m/ns" --time-zero "2 ns" --time-zero-sd "0.3 ns" --offset "0.14 m" \\
    --out-csv depths.csv --out-geojson depths.geojson
subsurf depth --twt 25 --twt 40 --layer "0.6 m, 0.11 m/ns, 0.004 m/ns" --layer "-, 0.08 m/ns, 0.004 m/ns\""""


#: Longest two-way time a pick may have (s).  Our limit, stated: 10 km, the deepest a plan may ask
#: for (choose.MAX_DEPTH_M), takes 67 µs two-way even at the speed of light; --twt 1e30 gave a
#: depth of 1.5e21 m.
MAX_TWT_S = 100e-6


def add_arguments(parser) -> None:
    g = parser.add_argument_group("travel times")
    g.add_argument("--twt", action="append", metavar="T",
                   help="a two-way travel time as on the record (bare number: ns); repeat for several")
    g.add_argument("--picks", metavar="CSV", help="pick table (columns: line, twt_ns, and distance_m or "
                   "easting_m/northing_m or lon_deg/lat_deg; optional surface_elev_m, pick_sd_ns)")
    g.add_argument("--pick-sd", metavar="T", default="0",
                   help="standard deviation of a pick where the table gives none (bare number: ns; default 0)")
    g.add_argument("--time-zero", metavar="T", help="time zero to subtract from every time (bare number: ns)")
    g.add_argument("--direct-wave", metavar="T", help="record time of the direct air wave; time zero = T − "
                   "offset/c (bare number: ns); instead of --time-zero")
    g.add_argument("--time-zero-sd", metavar="T", default="0",
                   help="standard deviation of time zero (bare number: ns; default 0)")
    g.add_argument("--offset", metavar="L", default="0", help="antenna separation (bare number: m; default 0)")
    v = parser.add_argument_group("velocity (one of)")
    v.add_argument("--velocity", metavar="V", help="ground velocity (bare number: m/ns)")
    v.add_argument("--velocity-se", metavar="V", default="0",
                   help="standard error of --velocity (bare number: m/ns; default 0)")
    v.add_argument("--velocity-from", metavar="JSON",
                   help="velocity and standard error from a file written by 'subsurf velocity --out-json'")
    v.add_argument("--layer", action="append", metavar="'H, V[, SE]'",
                   help="a layer from the top: thickness (bare: m; '-' for the bottom half-space), interval "
                   "velocity and its standard error (bare: m/ns); repeat from top to bottom")
    v.add_argument("--draws", type=int, default=2000, help="Monte Carlo draws for a layered earth (default 2000)")
    v.add_argument("--seed", type=int, default=0, help="Monte Carlo seed (default 0)")
    v.add_argument("--allow-large", action="store_true", help="run a layered Monte Carlo even if its memory or "
                   "time estimate exceeds the limits (75 %% of this machine's memory, 6 h)")
    o = parser.add_argument_group("coordinates and outputs")
    o.add_argument("--coords-crs", metavar="CRS", help="CRS of the pick table's coordinates (EPSG code or WKT); "
                   "overrides a '# crs:' comment line in the file")
    o.add_argument("--crs", metavar="CRS", help="the survey's CRS for outputs (default: the coordinates' CRS)")
    o.add_argument("--out-csv", metavar="FILE", help="write the depths as CSV")
    o.add_argument("--out-geojson", metavar="FILE", help="write the depths as GeoJSON points (needs coordinates)")
    o.add_argument("--force", action="store_true", help="overwrite existing outputs")


def _check_velocity(v: float, name: str, text) -> float:
    """Refuse a velocity outside (0, c] at the edge, naming the flag and the range in m/ns."""
    from scipy.constants import c

    from ..errors import InputError

    if not (0 < v <= c * (1 + 1e-9)):
        raise InputError(f"{name} must be > 0 and at most {c * 1e-9:.4f} m/ns (the speed of light in air), "
                         f"got {text!r} = {v * 1e-9:g} m/ns")
    return v


def _velocity_model(args, q):
    from ..errors import InputError

    given = [n for n, a in (("--velocity", args.velocity), ("--velocity-from", args.velocity_from),
                            ("--layer", args.layer)) if a]
    if len(given) != 1:
        raise InputError("give the velocity as exactly one of --velocity, --velocity-from or --layer"
                         + (f" (got {', '.join(given)})" if given else ""))
    if args.velocity:
        v = _check_velocity(q(args.velocity, "velocity", "m/ns", "--velocity"), "--velocity", args.velocity)
        return "homogeneous", v, \
            q(args.velocity_se, "velocity", "m/ns", "--velocity-se"), "--velocity"
    if args.velocity_from:
        return _model_from_file(args.velocity_from)
    from ..interpretation.layers import LayeredEarth

    vel, se, thick = [], [], []
    for k, spec in enumerate(args.layer):
        parts = [s.strip() for s in spec.split(",")]
        if len(parts) not in (2, 3):
            raise InputError(f"--layer {spec!r}: write 'THICKNESS, VELOCITY[, SE]', e.g. '0.6 m, 0.11 m/ns, 0.004 m/ns'")
        last = k == len(args.layer) - 1
        if last:
            if parts[0] not in ("-", "inf", "half-space"):
                raise InputError(f"--layer {spec!r}: the last layer is the half-space below; write '-' as its "
                                 "thickness")
        else:
            thick.append(q(parts[0], "length", "m", f"--layer {k + 1} thickness"))
        vel.append(_check_velocity(q(parts[1], "velocity", "m/ns", f"--layer {k + 1} velocity"),
                                   f"--layer {k + 1} velocity", parts[1]))
        se.append(q(parts[2], "velocity", "m/ns", f"--layer {k + 1} SE") if len(parts) == 3 else 0.0)
        if se[-1] < 0:
            raise InputError(f"--layer {spec!r}: the velocity standard error must be >= 0 m/ns, got {parts[2]!r}")
        if not last and thick[-1] <= 0:
            raise InputError(f"--layer {spec!r}: the thickness must be > 0 m, got {parts[0]!r}")
    return "layered", LayeredEarth.from_thicknesses(vel, thick, velocity_se=se), None, "--layer"


def _model_from_file(name):
    """The velocity model of a 'subsurf velocity --out-json' file: its layered model when it has one."""
    import json
    from pathlib import Path

    import numpy as np

    from ..errors import InputError, SubsurfError
    from ..interpretation.layers import LayeredEarth

    p = Path(name)
    try:
        data = json.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"--velocity-from: file not found: {p}") from None
    except (ValueError, UnicodeDecodeError, IsADirectoryError):
        raise InputError(f"--velocity-from: {p} is not a JSON file written by 'subsurf velocity --out-json'") \
            from None
    if not isinstance(data, dict):
        raise InputError(f"--velocity-from: {p} is not a 'subsurf velocity' JSON result")
    if "layered_model" in data:
        m = data["layered_model"]
        try:
            v = np.asarray(m["velocity_m_per_ns"], dtype=float) * 1e9
            h = np.asarray(m["thickness_m"], dtype=float)
            n = v.size
            cov = np.asarray(m["covariance"], dtype=float)
            scale = np.concatenate([np.full(n, 1e9), np.ones(n)])
            cov = cov * np.outer(scale, scale)
            keep = list(range(2 * n - 1))  # the deepest layer continues as the half-space
            earth = LayeredEarth.from_thicknesses(v, h[:-1], covariance=cov[np.ix_(keep, keep)])
        except (KeyError, TypeError, ValueError, IndexError):
            raise InputError(f"--velocity-from: {p}, key 'layered_model': expected velocity_m_per_ns, thickness_m "
                             "and covariance of the same layers (as 'subsurf velocity' writes them)") from None
        except SubsurfError as exc:
            raise InputError(f"--velocity-from: {p}, key 'layered_model': {exc}") from None
        names = m.get("reflectors") or [str(i + 1) for i in range(n)]
        return "layered", earth, None, (f"{p}: layered model of {n} layers above reflectors {', '.join(names)} "
                                        "(joint ray-traced CMP fit, with its covariance)")
    fits = data.get("fits") if "fits" in data else [data]
    if data.get("method") == "cmp" and isinstance(fits, list) and len(fits) > 1:
        raise InputError(f"--velocity-from: {p} holds {len(fits)} CMP reflectors but no 'layered_model'; "
                         "re-run 'subsurf velocity --out-json' to write the interval model (the first "
                         "reflector's velocity is not the velocity below it)")
    try:
        fit = fits[0]
        v, se = float(fit["velocity_m_per_ns"]) * 1e9, float(fit["velocity_se_m_per_ns"]) * 1e9
    except (ValueError, KeyError, IndexError, TypeError, AttributeError):
        raise InputError(f"--velocity-from: {p} is not a 'subsurf velocity' JSON result "
                         "(needs fits with velocity_m_per_ns and velocity_se_m_per_ns)") from None
    which = f", fit '{fit['target']}'" if isinstance(fit, dict) and "target" in fit else ""
    if len(fits) > 1:
        which += f" (the first of {len(fits)} fits)"
    if not 0 <= se < float("inf"):
        raise InputError(f"--velocity-from {p}: velocity_se_m_per_ns must be a finite number >= 0, "
                         f"got {fit['velocity_se_m_per_ns']!r}")
    return ("homogeneous", _check_velocity(v, f"--velocity-from {p}: velocity_m_per_ns", fit["velocity_m_per_ns"]),
            se, f"{p}{which}")


def run(args) -> int:
    from ..io.outputs import print_notes, print_result
    from ..io.transaction import OutputTransaction

    txn = OutputTransaction("depth", force=args.force)
    from ..io.tables import declare_table

    staged = {"geojson": txn.file(args.out_geojson)} if args.out_geojson else {}
    if args.out_csv:  # the CSV and its sidecars (CSVW metadata, OGR types; .prj when the picks have coordinates)
        staged["csv"] = declare_table(txn, args.out_csv, coordinates=None)
    with txn:  # outputs checked and claimed before any work; written together or not at all
        payload, text = _depth(args, staged)
    print_notes(txn.notes, quiet=args.quiet or args.json)
    print_result(payload, text, as_json=args.json)
    return 0


def _depth(args, staged: dict) -> tuple[dict, str]:
    import math

    import numpy as np

    from ..errors import InputError
    from ..interpretation import layers
    from ..io import picks
    from ..io.outputs import CAUTION, Column, format_table
    from ..io.preflight import check_estimate, layered_depth_estimate
    from ..units import parse_quantity

    def q(text, kind, unit, name):
        return parse_quantity(text, kind, default_unit=unit, name=name)

    if bool(args.twt) == bool(args.picks):
        raise InputError("give travel times either as --twt values or as a --picks CSV file (one of them)")
    mode, model, v_se, v_source = _velocity_model(args, q)
    offset = q(args.offset, "length", "m", "--offset")
    if offset < 0:
        raise InputError(f"--offset must be >= 0 m, got {offset:g}")
    if args.time_zero and args.direct_wave:
        raise InputError("give time zero either as --time-zero or from --direct-wave, not both")
    if args.direct_wave:
        t_direct = q(args.direct_wave, "time", "ns", "--direct-wave")
        tz = float(layers.time_zero_from_direct_wave(t_direct, offset, wave="air"))
        tz_source = f"direct air wave at {t_direct * 1e9:g} ns"
    else:
        tz = q(args.time_zero, "time", "ns", "--time-zero") if args.time_zero else 0.0
        tz_source = "--time-zero" if args.time_zero else "not given: times taken as already corrected"
    tz_sd = q(args.time_zero_sd, "time", "ns", "--time-zero-sd")
    pick_sd_default = q(args.pick_sd, "time", "ns", "--pick-sd")
    for name, val in (("--time-zero-sd", tz_sd), ("--pick-sd", pick_sd_default)):
        if val < 0:
            raise InputError(f"{name} must be >= 0 ns, got {val * 1e9:g}")
    if mode == "homogeneous" and v_se < 0:
        raise InputError(f"--velocity-se must be >= 0, got {v_se * 1e-9:g} m/ns")

    table = None
    if args.picks:
        table = picks.read_picks(args.picks, coords_crs=args.coords_crs, kind="depth")
        twt = table.twt_s
        sd = np.where(np.isfinite(table.pick_sd_s), table.pick_sd_s, pick_sd_default) \
            if table.pick_sd_s is not None else np.full(twt.shape, pick_sd_default)
        where = [(int(r), "twt_ns") for r in table.rows]
    else:
        twt = np.array([q(t, "time", "ns", "--twt") for t in args.twt])
        sd = np.full(twt.shape, pick_sd_default)
        where = [(None, f"--twt {t}") for t in args.twt]

    # per-pick checks before any arithmetic: before time zero; too short for the separation
    tau = twt - tz
    if mode == "homogeneous":
        v_min_ok = model * tau >= offset * (1 - 1e-12)
    else:
        t_min = offset / model.velocity[0]  # direct path through the top layer
        v_min_ok = tau >= t_min * (1 - 1e-12)
    problems = []
    for i, (row, col) in enumerate(where):
        if twt[i] < 0:
            msg = (f"negative two-way time {twt[i] * 1e9:g} ns; times are counted from the record start "
                   "and must be >= 0")
        elif tau[i] < 0:
            msg = f"{twt[i] * 1e9:g} ns is before time zero ({tz * 1e9:g} ns)"
        elif twt[i] > MAX_TWT_S:
            msg = (f"{twt[i] * 1e9:g} ns is longer than the {MAX_TWT_S * 1e6:g} µs any radar record holds (the "
                   "two-way time to 10 km at the speed of light is 67 µs); check the unit")
        elif not v_min_ok[i]:
            msg = (f"{twt[i] * 1e9:g} ns is too short for the antenna separation {offset:g} m "
                   "(the direct path between the antennas takes longer; no real depth)")
        else:
            continue
        problems.append((row, col, msg))
    if problems:
        if table is not None:
            picks.raise_row_problems(table.path, problems)
        raise InputError("; ".join(f"{c}: {m}" for _, c, m in problems))

    mc = None
    if mode == "homogeneous":
        est = layers.depth_with_uncertainty(twt, model, offset_m=offset, time_zero_s=tz, velocity_se=v_se,
                                            twt_sd_s=sd, time_zero_sd_s=tz_sd)
        depth, depth_sd = est.depth, est.depth_sd
        velocity_text = f"{model * 1e-9:.4g} ± {v_se * 1e-9:.2g} m/ns ({v_source})"
    else:
        if args.draws < 100:
            raise InputError(f"--draws must be an integer >= 100 (Monte Carlo draws), got {args.draws}")
        if args.seed < 0:
            raise InputError(f"--seed must be an integer >= 0 (random generator seed), got {args.seed}")
        check_estimate(layered_depth_estimate(draws=args.draws, picks=twt.size, layers=model.velocity.size),
                       allow=args.allow_large, hint="use fewer --draws")
        est = layers.layered_depth_first_order(twt, model, offset_m=offset, time_zero_s=tz, twt_sd_s=sd,
                                               time_zero_sd_s=tz_sd)
        mc = layers.layered_depth_monte_carlo(twt, model, offset_m=offset, time_zero_s=tz, twt_sd_s=sd,
                                              time_zero_sd_s=tz_sd, draws=args.draws, seed=args.seed)
        depth, depth_sd = est.depth, est.depth_sd
        velocity_text = ("" if v_source == "--layer" else v_source + ": ") + "layered: " + "; ".join(
            (f"{h:.4g} m" if i < model.thickness.size else "half-space") + f" at {v * 1e-9:.4g} ± {s * 1e-9:.2g} m/ns"
            for i, (v, s, h) in enumerate(zip(model.velocity, model.velocity_se,
                                              list(model.thickness) + [math.inf])))

    # coordinates in the survey CRS
    out_crs = xs = ys = None
    if table is not None and table.crs is not None:
        out_crs = picks.parse_crs(args.crs, name="--crs") if args.crs else table.crs
        xs, ys = picks.transform_xy(table.x, table.y, table.crs, out_crs)
    elif args.crs:
        raise InputError("--crs needs a pick table with easting_m/northing_m or lon_deg/lat_deg columns")
    if args.out_geojson and xs is None:
        raise InputError("--out-geojson needs coordinates: a pick table with easting_m/northing_m or "
                         "lon_deg/lat_deg columns and their CRS")
    geographic = out_crs is not None and out_crs.is_geographic
    xk, yk = ("lon_deg", "lat_deg") if geographic else ("easting_m", "northing_m")

    rows = []
    for i in range(twt.size):
        r = {"twt_ns": twt[i] * 1e9, "tau_ns": tau[i] * 1e9, "depth_m": float(depth[i]),
             "depth_sd_m": float(depth_sd[i])}
        if table is not None:
            r = {"line": table.line[i], "row": int(table.rows[i]), **r}
            if table.distance_m is not None:
                r["distance_m"] = float(table.distance_m[i])
            if xs is not None:
                r[xk], r[yk] = float(xs[i]), float(ys[i])
            if table.surface_elev_m is not None and math.isfinite(table.surface_elev_m[i]):
                r["surface_elev_m"] = float(table.surface_elev_m[i])
                r["target_elev_m"] = float(table.surface_elev_m[i] - depth[i])
        if mc is not None:
            r["depth_mc_sd_m"] = float(mc.depth_sd[i])
            r["depth_p05_m"] = float(mc.depth_p05[i])
            r["depth_p95_m"] = float(mc.depth_p95[i])
        rows.append(r)

    cols = []
    if table is not None:
        cols += [Column("line", "line"), Column("row", "row")]
        if table.distance_m is not None:
            cols.append(Column("distance_m", "distance", "m", ".2f"))
        if xs is not None:
            fmt = ".7f" if geographic else ".2f"
            cols += [Column(xk, xk.split("_")[0], xk.split("_")[1], fmt), Column(yk, yk.split("_")[0],
                                                                                 yk.split("_")[1], fmt)]
    cols += [Column("twt_ns", "twt", "ns", ".2f"), Column("depth_m", "depth", "m", ".3f"),
             Column("depth_sd_m", "± 1 sd", "m", ".3f")]
    if mc is not None:
        cols += [Column("depth_mc_sd_m", "MC sd", "m", ".3f"), Column("depth_p05_m", "MC 5 %", "m", ".3f"),
                 Column("depth_p95_m", "MC 95 %", "m", ".3f")]
    if any("target_elev_m" in r for r in rows):
        cols += [Column("surface_elev_m", "surface", "m", ".2f"), Column("target_elev_m", "target elev.", "m", ".3f")]

    if mode == "homogeneous":
        v_json = {"velocity_m_per_ns": model * 1e-9, "velocity_se_m_per_ns": v_se * 1e-9, "layers": []}
    else:  # layered: one entry per layer, the last the half-space below (thickness null)
        v_json = {"velocity_m_per_ns": None, "velocity_se_m_per_ns": None,
                  "layers": [{"thickness_m": float(h) if math.isfinite(h) else None,
                              "velocity_m_per_ns": float(v) * 1e-9, "velocity_se_m_per_ns": float(s) * 1e-9}
                             for v, s, h in zip(model.velocity, model.velocity_se,
                                                list(model.thickness) + [math.inf])]}
    inputs = {"velocity_model": mode, **v_json, "velocity_source": v_source, "offset_m": offset, "time_zero_ns": tz * 1e9, "time_zero_source": tz_source,
              "time_zero_sd_ns": tz_sd * 1e9, "pick_sd_default_ns": pick_sd_default * 1e9,
              "uncertainty": "first order (linearised), "
              + ("layer parameters with their covariance, pick and time zero independent"
                 if mode == "layered" and model.covariance is not None else "independent inputs")
              + (f"; Monte Carlo {mc.draws} draws, seed {mc.seed}, {mc.rejected} rejected" if mc else "")}
    if out_crs is not None:
        inputs["crs"] = out_crs.to_string()
    written = []
    if args.out_csv:
        from ..io.tables import TableColumn, sidecar_listing, write_table_files

        tcols = []
        for c in cols:
            if c.key == "line":
                tcols.append(TableColumn("line", "survey line", datatype="string", fmt=""))
            elif c.key == "row":
                tcols.append(TableColumn("row", "line number in the pick file", datatype="integer"))
            else:
                fmt = ".4f" if c.key.startswith("depth") or c.key == "target_elev_m" else c.fmt
                unit = {"deg": "degree"}.get(c.unit, c.unit)
                tcols.append(TableColumn(c.key, c.label(), unit, fmt=fmt,
                                         axis="x" if c.key == xk else "y" if c.key == yk else ""))
        write_table_files(args.out_csv, rows, tcols, title="subsurf depth: depths from two-way travel times",
                          crs=out_crs if xs is not None else None, notes=["velocity: " + velocity_text],
                          force=True, targets=staged["csv"])
        written += sidecar_listing(args.out_csv, staged["csv"])
    if args.out_geojson:
        props = [{k: v for k, v in r.items() if k not in (xk, yk)} for r in rows]
        picks.write_geojson(staged["geojson"], xs, ys, props, out_crs, force=True,
                            collection_properties={"caution": CAUTION, "velocity": velocity_text,
                                                   "generator": "subsurf depth"})
        written.append(args.out_geojson)

    payload = {"caution": CAUTION, "inputs": inputs, "picks": rows, "written": written}
    text = [format_table(rows, cols, title=f"Depths ({len(rows)} pick{'s' if len(rows) != 1 else ''})"), "",
            f"velocity: {velocity_text}",
            f"antenna separation: {offset:g} m; time zero: {tz * 1e9:g} ± {tz_sd * 1e9:g} ns ({tz_source})",
            f"uncertainty: {inputs['uncertainty']}"]
    if out_crs is not None:
        text.append(f"coordinates in {out_crs.name} ({out_crs.to_string()})")
    if written:
        text.append("wrote: " + ", ".join(written))
    text += ["", "CAUTION: " + CAUTION]
    return payload, "\n".join(text)
