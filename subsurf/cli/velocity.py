"""``subsurf velocity``: ground velocity from hyperbola picks, a CMP gather or a target at known depth."""

from __future__ import annotations

HELP = "fit ground velocity to hyperbola or CMP picks (CSV), or from a target at a known depth"
EXAMPLE = """subsurf velocity --picks surveys/picks/fictional_hyperbolas.csv --offset "0.14 m" \\
    --out-json fit.json --figure fit.png
subsurf velocity --picks surveys/picks/fictional_cmp.csv --figure cmp.png
subsurf velocity --known-depth "1.20 m" --depth-sd "0.02 m" --twt "25.1 ns" --pick-sd "0.3 ns\""""


def add_arguments(parser) -> None:
    g = parser.add_argument_group("picks")
    g.add_argument("--picks", metavar="CSV", help="pick table: line, target, distance_m, twt_ns for hyperbolas; "
                   "offset_m, twt_ns for a CMP/WARR gather (target = reflector)")
    g.add_argument("--method", choices=["auto", "hyperbola", "cmp"], default="auto",
                   help="fit kind (default auto: cmp when the table has offset_m, else hyperbola)")
    g.add_argument("--target", action="append", metavar="ID", help="fit only this target id (repeatable)")
    g.add_argument("--offset", metavar="L", default="0",
                   help="antenna separation of the hyperbola picks (bare number: m; default 0)")
    g.add_argument("--radius", metavar="R", default="0",
                   help="radius of a cylindrical target (bare number: m; default 0 = point diffractor; "
                   "'fit' to fit it)")
    g.add_argument("--time-zero", metavar="T", default="0",
                   help="time zero to subtract from the picks (bare number: ns; default 0)")
    c = parser.add_argument_group("calibration target at a known depth")
    c.add_argument("--known-depth", metavar="D", help="depth of the target's reflecting surface (bare number: m)")
    c.add_argument("--depth-sd", metavar="D", default="0", help="its standard deviation (bare number: m)")
    c.add_argument("--twt", metavar="T", help="the target's two-way time as on the record (bare number: ns)")
    c.add_argument("--pick-sd", metavar="T", default="0", help="standard deviation of the pick (bare number: ns)")
    c.add_argument("--time-zero-sd", metavar="T", default="0", help="standard deviation of time zero (bare number: ns)")
    o = parser.add_argument_group("outputs")
    o.add_argument("--out-json", metavar="FILE", help="write the result as JSON (read by 'subsurf depth "
                   "--velocity-from')")
    o.add_argument("--out-csv", metavar="FILE", help="write the fits as a CSV table")
    o.add_argument("--figure", metavar="PNG", help="write a figure of picks, fitted curves and residuals")
    o.add_argument("--force", action="store_true", help="overwrite existing outputs")


def _calibration(args, q):
    from ..errors import InputError
    from ..interpretation.velocity import velocity_from_calibration

    # checked here in the flags' own units, so a message names the flag the user typed rather
    # than the library's parameter (was 'twt_sd_s must be >= 0 s, got -1e-09' for --pick-sd -1)
    d = q(args.known_depth, "length", "m", "--known-depth")
    t = q(args.twt, "time", "ns", "--twt")
    given = {"--offset": (args.offset, q(args.offset, "length", "m", "--offset"), "m"),
             "--pick-sd": (args.pick_sd, q(args.pick_sd, "time", "ns", "--pick-sd"), "ns"),
             "--depth-sd": (args.depth_sd, q(args.depth_sd, "length", "m", "--depth-sd"), "m"),
             "--time-zero-sd": (args.time_zero_sd, q(args.time_zero_sd, "time", "ns", "--time-zero-sd"), "ns")}
    if d <= 0:
        raise InputError(f"--known-depth must be > 0 m, got {args.known_depth!r}")
    for flag, (text, value, unit) in given.items():
        if value < 0:
            raise InputError(f"{flag} must be >= 0 {unit}, got {text!r}")
    tz = q(args.time_zero, "time", "ns", "--time-zero")
    if t <= tz:
        raise InputError(f"--twt must be later than --time-zero ({tz * 1e9:g} ns), got {args.twt!r}")
    res = velocity_from_calibration(t, d, offset_m=given["--offset"][1], twt_sd_s=given["--pick-sd"][1],
                                    depth_sd_m=given["--depth-sd"][1], time_zero_s=tz,
                                    time_zero_sd_s=given["--time-zero-sd"][1])
    v, se = float(res.velocity), float(res.velocity_se)
    return {"target": "calibration", "method": "known depth", "velocity_m_per_ns": v * 1e-9,
            "velocity_se_m_per_ns": se * 1e-9, "permittivity": (299792458.0 / v) ** 2,
            "depth_m": d, "twt_ns": t * 1e9, "n_picks": 1}


def _layered_model(fits, cmp_picks, source):
    """Joint ray-traced fit of every CMP reflector: the interval model written to JSON, and warnings."""
    import numpy as np

    from ..errors import SubsurfError
    from ..interpretation.layered_cmp import HYPERBOLIC_SPREAD_LIMIT, fit_flags, fit_layered_cmp

    order = sorted(range(len(fits)), key=lambda i: fits[i]["t0_ns"])
    try:
        lf = fit_layered_cmp([cmp_picks[i][0] for i in order], [cmp_picks[i][1] for i in order])
    except SubsurfError as exc:
        raise type(exc)(f"{source}: layered model of the reflectors: {exc}") from None
    names = [fits[i]["target"] for i in order]
    n = len(names)
    warnings = []
    for k, i in enumerate(order):
        rec = fits[i]
        rec.update({"depth_m": float(lf.reflector_depth[k]), "depth_se_m": float(lf.reflector_depth_se[k]),
                    "depth_method": "layered model (ray-traced fit of all reflectors)",
                    "spread_to_depth": float(lf.spread_ratio[k])})
        if k > 0 and lf.spread_ratio[k] > HYPERBOLIC_SPREAD_LIMIT:
            warnings.append(
                f"{rec['target']}: spread/depth = {lf.spread_ratio[k]:.2f} exceeds {HYPERBOLIC_SPREAD_LIMIT:g}, "
                "beyond which the t²–x² (hyperbolic) fit below other layers is biased (Yilmaz 2001, Seismic Data "
                f"Analysis §3.1; common practice): its v_rms and the Dix depth {lf.dix_depth[k]:.3f} m are biased; "
                f"the layered model gives {lf.reflector_depth[k]:.3f} ± {lf.reflector_depth_se[k]:.3f} m")
    pnames = [f"v({m})" for m in names] + [f"thickness({m})" for m in names]
    model = {
        "kind": "layered", "method": "joint least-squares fit of all reflectors with ray-traced (Snell) times",
        "reflectors": names,
        "velocity_m_per_ns": (lf.velocity * 1e-9).tolist(), "velocity_se_m_per_ns": (lf.velocity_se * 1e-9).tolist(),
        "thickness_m": lf.thickness.tolist(), "thickness_se_m": lf.thickness_se.tolist(),
        "reflector_depth_m": lf.reflector_depth.tolist(), "reflector_depth_se_m": lf.reflector_depth_se.tolist(),
        "parameters": pnames,
        "covariance": (lf.covariance * np.outer(*(2 * [np.concatenate([np.full(n, 1e-9), np.ones(n)])]))).tolist(),
        "covariance_units": "m/ns for velocities, m for thicknesses",
        "below_deepest_reflector": "the deepest layer's velocity continues as a half-space",
        "rms_ns": lf.rms_s * 1e9, "n_picks": lf.n_picks,
        "flags": fit_flags(pnames, np.concatenate([lf.velocity, lf.thickness]), lf.covariance),
    }
    return model, warnings


def _csv_columns() -> dict:
    """The --out-csv columns: name -> TableColumn (units for the CSVW metadata)."""
    from ..io.tables import TableColumn as C

    return {c.name: c for c in (
        C("target", "target id", datatype="string", fmt=""), C("method", "fit method", datatype="string", fmt=""),
        C("velocity_m_per_ns", "velocity", "m/ns", fmt=".5g"),
        C("velocity_se_m_per_ns", "velocity standard error", "m/ns", fmt=".5g"),
        C("permittivity", "relative permittivity (c/v)^2", "1", fmt=".5g"),
        C("x0_m", "apex position along the line", "m", fmt=".5g"),
        C("x0_se_m", "apex position standard error", "m", fmt=".5g"),
        C("t0_ns", "zero-offset two-way time", "ns", fmt=".5g"),
        C("t0_se_ns", "zero-offset two-way time standard error", "ns", fmt=".5g"),
        C("depth_m", "depth", "m", fmt=".5g"), C("depth_se_m", "depth standard error", "m", fmt=".5g"),
        C("radius_m", "target radius", "m", fmt=".5g"), C("radius_se_m", "target radius standard error", "m",
                                                          fmt=".5g"),
        C("rms_ns", "rms residual", "ns", fmt=".5g"), C("n_picks", "picks used", datatype="integer"))}


def run(args) -> int:
    from ..io.outputs import print_notes, print_result
    from ..io.transaction import OutputTransaction

    txn = OutputTransaction("velocity", force=args.force)
    from ..io.tables import declare_table

    staged = {k: txn.file(p) for k, p in (("json", args.out_json), ("figure", args.figure)) if p}
    if args.out_csv:  # the CSV and its sidecars (CSVW metadata with the units, OGR field types)
        staged["csv"] = declare_table(txn, args.out_csv, coordinates=False)
    with txn:  # outputs checked and claimed before any work; written together or not at all
        payload, text = _velocity(args, staged)
    print_notes(txn.notes, quiet=args.quiet or args.json)
    print_result(payload, text, as_json=args.json)
    return 0


def _velocity(args, staged: dict) -> tuple[dict, str]:
    import numpy as np

    from ..errors import InputError
    from ..interpretation.layered_cmp import fit_flags
    from ..interpretation.velocity import dix_interval_velocities, fit_cmp, fit_hyperbola
    from ..io import picks
    from ..io.outputs import CAUTION, Column, format_table
    from ..units import parse_quantity

    def q(text, kind, unit, name):
        return parse_quantity(text, kind, default_unit=unit, name=name)

    calib = args.known_depth is not None or args.twt is not None
    if calib == bool(args.picks):
        raise InputError("give either --picks CSV, or --known-depth with --twt for a calibration target")
    fits, panels, dix, layered, warnings = [], [], None, None, []
    if calib:
        if args.known_depth is None or args.twt is None:
            raise InputError("a calibration target needs both --known-depth and --twt")
        if args.figure:
            raise InputError("--figure needs --picks (a calibration target has no curve to draw)")
        fits.append(_calibration(args, q))
        method = "calibration"
    else:
        offset = q(args.offset, "length", "m", "--offset")
        if offset < 0:
            raise InputError(f"--offset (antenna separation) must be >= 0 m, got {args.offset!r}")
        tz = q(args.time_zero, "time", "ns", "--time-zero")
        if str(args.radius).strip().lower() == "fit":
            radius = None
        else:
            try:
                radius = q(args.radius, "length", "m", "--radius")
            except InputError as exc:
                raise InputError(f"{exc}, or 'fit' to fit the radius") from None
        method = args.method
        if method == "auto":
            from pathlib import Path

            head = [ln for ln in Path(args.picks).read_text(encoding="utf-8-sig").splitlines()
                    if ln.strip() and not ln.lstrip().startswith("#")][:1] if Path(args.picks).exists() else []
            method = "cmp" if head and "offset_m" in [h.strip() for h in head[0].split(",")] else "hyperbola"
        table = picks.read_picks(args.picks, kind=method)
        ids = table.target if table.target is not None else ["all"] * len(table)
        order = list(dict.fromkeys(ids))
        if args.target:
            unknown = [t for t in args.target if t not in order]
            if unknown:
                raise InputError(f"--target {unknown[0]!r} is not in {args.picks} (targets: {', '.join(order)})")
            order = [t for t in order if t in args.target]
        cmp_picks = []
        for tid in order:
            sel = np.array([i == tid for i in ids])
            rows = table.rows[sel]
            where = f"{args.picks}, target {tid!r} (rows {rows.min()}–{rows.max()})"
            try:
                if method == "hyperbola":
                    f = fit_hyperbola(table.distance_m[sel], table.twt_s[sel], radius_m=radius, offset_m=offset,
                                      time_zero_s=tz)
                else:
                    f = fit_cmp(table.offset_m[sel], table.twt_s[sel] - tz)
            except InputError as exc:
                raise InputError(f"{where}: {exc}") from None
            except Exception as exc:
                from ..errors import SubsurfError

                if isinstance(exc, SubsurfError):
                    raise type(exc)(f"{where}: {exc}") from None
                raise
            rec = {"target": tid, "method": method, "velocity_m_per_ns": f.velocity * 1e-9,
                   "velocity_se_m_per_ns": f.velocity_se * 1e-9, "permittivity": (299792458.0 / f.velocity) ** 2,
                   "rms_ns": f.rms_s * 1e9, "n_picks": f.n_picks, "rows": rows}
            xs = table.distance_m[sel] if method == "hyperbola" else table.offset_m[sel]
            cx = np.linspace(xs.min(), xs.max(), 200)
            if method == "hyperbola":
                rec.update({"x0_m": f.x0, "x0_se_m": f.x0_se, "depth_m": f.depth, "depth_se_m": f.depth_se,
                            "radius_m": f.radius, "radius_se_m": f.radius_se if f.radius_fitted else None,
                            "radius_fitted": f.radius_fitted, "offset_m": offset, "time_zero_ns": tz * 1e9,
                            "downweighted": [{"row": int(rows[i]), "weight": float(f.weights[i]),
                                              "residual_ns": float(f.residuals_s[i] * 1e9)} for i in f.downweighted],
                            "outliers": [{"row": int(rows[i]), "residual_ns": float(f.residuals_s[i] * 1e9),
                                          "studentized": float(f.studentized[i])} for i in f.outliers],
                            "outlier_rule": f"|externally studentized residual| > {f.outlier_threshold:.2f} "
                                            "(flags 1 % of clean picks)"})
                rec["flags"] = fit_flags(list(f.parameters), [getattr(f, n) for n in f.parameters], f.covariance,
                                         positions=("x0",))
                curve = (f.twt(cx) + tz) * 1e9
                label = (f"{tid}: v = {f.velocity * 1e-9:.4f} ± {f.velocity_se * 1e-9:.4f} m/ns, "
                         f"depth {f.depth:.3f} ± {f.depth_se:.3f} m")
                weight = f.weights
            else:
                rec.update({"t0_ns": f.t0 * 1e9, "t0_se_ns": f.t0_se * 1e9, "depth_m": f.depth,
                            "depth_se_m": f.depth_se, "depth_method": "v_rms·t0/2 (homogeneous ground above)",
                            "time_zero_ns": tz * 1e9, "max_offset_m": float(xs.max()),
                            "flags": fit_flags(["velocity", "t0"], [f.velocity, f.t0], f.covariance)})
                cmp_picks.append((table.offset_m[sel], table.twt_s[sel] - tz))
                curve = (f.twt(cx) + tz) * 1e9
                label = f"{tid}: v_rms = {f.velocity * 1e-9:.4f} ± {f.velocity_se * 1e-9:.4f} m/ns, t0 {f.t0 * 1e9:.2f} ns"
                weight = np.ones(f.n_picks)
            fits.append(rec)
            panels.append({"x": xs, "t_ns": table.twt_s[sel] * 1e9, "curve_x": cx, "curve_t_ns": curve,
                           "residual_ns": f.residuals_s * 1e9, "weight": weight, "label": label,
                           "xlabel": "distance along line (m)" if method == "hyperbola" else "antenna separation (m)"})
        if method == "cmp" and len(fits) > 1:
            srt = sorted(fits, key=lambda r: r["t0_ns"])
            iv = dix_interval_velocities([r["t0_ns"] * 1e-9 for r in srt], [r["velocity_m_per_ns"] * 1e9 for r in srt],
                                         t0_se=[r["t0_se_ns"] * 1e-9 for r in srt],
                                         rms_velocity_se=[r["velocity_se_m_per_ns"] * 1e9 for r in srt])
            dix = [{"reflector": r["target"], "interval_velocity_m_per_ns": float(v) * 1e-9,
                    "interval_velocity_se_m_per_ns": float(s) * 1e-9, "thickness_m": float(h),
                    "thickness_se_m": float(hs)}
                   for r, v, s, h, hs in zip(srt, iv.velocity, iv.velocity_se, iv.thickness, iv.thickness_se)]
            layered, more = _layered_model(fits, cmp_picks, args.picks)
            warnings += more

    written = []
    if args.figure:
        from ..io.fig_velocity import velocity_fit_figure

        velocity_fit_figure(panels, staged["figure"], title=f"{method} fit: {args.picks}")
        written.append(args.figure)
    payload = {"caution": CAUTION, "method": method, "fits": fits}
    if dix:
        payload["interval_velocities"] = dix
    if layered:
        payload["layered_model"] = layered
    if warnings:
        payload["warnings"] = warnings
    if args.out_csv:
        keys = ["target", "method", "velocity_m_per_ns", "velocity_se_m_per_ns", "permittivity", "x0_m", "x0_se_m",
                "t0_ns", "t0_se_ns", "depth_m", "depth_se_m", "radius_m", "radius_se_m", "rms_ns", "n_picks"]
        keys = [k for k in keys if any(k in r for r in fits)]
        from ..io.tables import sidecar_listing, write_table_files

        write_table_files(args.out_csv, fits, [_csv_columns()[k] for k in keys],
                          title=f"subsurf velocity: {method} fits of {args.picks}", force=True, targets=staged["csv"])
        written += sidecar_listing(args.out_csv, staged["csv"])
    if args.out_json:
        import json

        from ..io.outputs import atomic_write_text, to_jsonable

        atomic_write_text(staged["json"], json.dumps(to_jsonable({**payload, "written": written}), indent=2,
                                                     allow_nan=False) + "\n", force=True)
        written.append(args.out_json)
    payload["written"] = written

    cols = [Column("target", "target"), Column("velocity_m_per_ns", "velocity", "m/ns", ".4f"),
            Column("velocity_se_m_per_ns", "± se", "m/ns", ".4f"), Column("permittivity", "ε apparent", "", ".2f")]
    if method == "hyperbola":
        cols += [Column("x0_m", "apex x", "m", ".3f"), Column("x0_se_m", "± se", "m", ".3f"),
                 Column("depth_m", "depth to top", "m", ".3f"), Column("depth_se_m", "± se", "m", ".3f"),
                 Column("radius_m", "radius", "m", ".3f")]
        if any(r.get("radius_fitted") for r in fits):
            cols.append(Column("radius_se_m", "± se", "m", ".3f"))
        cols += [Column("rms_ns", "rms", "ns", ".2f"),
                 Column("n_picks", "picks")]
    elif method == "cmp":
        cols += [Column("t0_ns", "t0", "ns", ".2f"), Column("t0_se_ns", "± se", "ns", ".2f"),
                 Column("depth_m", "depth", "m", ".3f"), Column("depth_se_m", "± se", "m", ".3f"),
                 Column("rms_ns", "rms", "ns", ".2f"), Column("n_picks", "picks")]
    else:
        cols += [Column("depth_m", "known depth", "m", ".3f"), Column("twt_ns", "twt", "ns", ".2f")]
    text = [format_table(fits, cols, title=f"Velocity ({method})")]
    for r in fits:
        weights = {d["row"]: d["weight"] for d in r.get("downweighted", [])}
        for d in r.get("outliers", []):
            text.append(f"  {r['target']}: row {d['row']} residual {d['residual_ns']:+.2f} ns, studentized "
                        f"{d['studentized']:+.1f} > {r['outlier_rule'].split('> ')[1].split(' ')[0]}, weight "
                        f"{weights.get(d['row'], 1.0):.2f} - check this pick")
        if r.get("radius_fitted"):
            text.append(f"  {r['target']}: radius fitted {r['radius_m']:.3f} ± {r['radius_se_m']:.3f} m")
        for flag in r.get("flags", []):
            text.append(f"  {r['target']}: {flag}")
    if layered:
        rows_l = [{"layer": f"above {name}", "v": v, "vse": vs, "h": h, "hse": hs, "z": z, "zse": zs}
                  for name, v, vs, h, hs, z, zs in zip(layered["reflectors"], layered["velocity_m_per_ns"],
                                                       layered["velocity_se_m_per_ns"], layered["thickness_m"],
                                                       layered["thickness_se_m"], layered["reflector_depth_m"],
                                                       layered["reflector_depth_se_m"])]
        text += ["", format_table(rows_l, [Column("layer", "layer"), Column("v", "interval v", "m/ns", ".4f"),
                                           Column("vse", "± se", "m/ns", ".4f"), Column("h", "thickness", "m", ".3f"),
                                           Column("hse", "± se", "m", ".3f"), Column("z", "reflector depth", "m", ".3f"),
                                           Column("zse", "± se", "m", ".3f")],
                                  title="Layered model (all reflectors fitted with ray-traced times, Snell's law)"),
                 "  depths in the CMP table above are from this model; for comparison the Dix (t²–x²) "
                 "thicknesses are " + ", ".join(f"{d['thickness_m']:.3f}" for d in dix) + " m"]
        for flag in layered["flags"]:
            text.append(f"  layered model: {flag}")
    for w in warnings:
        text.append(f"WARNING: {w}")
    if any(r.get("outliers") for r in fits):
        text.append("check-this-pick rule: |externally studentized residual| above the Student-t point that "
                    "flags 1 % of clean picks")
    text.append("standard errors: fit covariance scaled by the picks' own residuals"
                if not calib else "standard error: first order from the depth, pick and time-zero uncertainties")
    if written:
        text.append("wrote: " + ", ".join(written))
    text += ["", "CAUTION: " + CAUTION]
    return payload, "\n".join(text)
