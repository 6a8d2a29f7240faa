"""``subsurf setup``: acquisition settings for one antenna, ground and target or depth."""

from __future__ import annotations

from ..planning.plan import MAX_STACKS, ROWS_SPEC, acquisition_for_antenna

HELP = "acquisition settings (time window, sampling, trace/line spacing, separation, speed) for an antenna"
EXAMPLE = """subsurf setup --antenna midband-250 --texture loam --moisture "25 %" --target line --depth 1.5 --size 0.1 --material metal --area "2000 m^2"
subsurf setup --antenna lowband-100 --eps 16 --sigma "8 mS/m" --depth 6 --json"""


def add_arguments(parser) -> None:
    from ._medium_args import add_medium_arguments
    from .choose import add_target_arguments

    parser.add_argument("--antenna", required=True, metavar="NAME", help="antenna name from the catalogue")
    add_medium_arguments(parser)
    add_target_arguments(parser, depth_required=False)
    a = parser.add_argument_group("survey")
    a.add_argument("--area", metavar="Q", help="area to cover, for the survey time (bare number: m^2; or '1 ha'; "
                   "or a rectangle 'LENGTH x WIDTH', e.g. '40 m x 30 m', whose lines run along LENGTH)")
    a.add_argument("--line-length", metavar="Q", help="length of one survey line (bare number: m; default: the "
                   "rectangle's LENGTH, or √area)")
    a.add_argument("--speed", metavar="Q", help="towing speed (bare number: m/s; default: the trace-rate "
                   "limit or a 1 m/s walking pace, whichever is lower)")
    a.add_argument("--stacks", type=int, metavar="N", help="traces stacked (default: the catalogue's, raised "
                   "to reach the 'reaches' margin when a target is given, never beyond the clutter limit)")
    a.add_argument("--grid-3d", action="store_true", help="plan a 3D grid instead of 2D detection lines: "
                   "survey time at the common-practice spacing and at the λ/4 imaging limit")
    from ._calibration import add_calibration_argument
    from ._reach import add_reach_margin_argument

    add_calibration_argument(parser)
    add_reach_margin_argument(parser)


def run(args) -> int:
    from ..errors import InputError
    from ..io.outputs import Column, collect_warnings, format_table, print_notes, print_result
    from ..planning.antennas import get_antenna
    from ..planning.catalogue import resolve_catalogue
    from ..units import parse_quantity
    from ._depths import parse_depths
    from ._medium_args import medium_from_args
    from ._reach import reach_margin_from_args
    from .choose import layers_from_args, parse_surface_loss, target_from_args

    depths = parse_depths(args.depth) if args.depth is not None else None
    depth = depths.bottom if depths is not None else None
    surface = parse_surface_loss(args.surface_loss)
    reaches_db = reach_margin_from_args(args)

    def positive(text, kind, unit, name, high=None, shown=""):
        if text is None:
            return None
        v = parse_quantity(text, kind, default_unit=unit, name=name)
        if v <= 0:
            raise InputError(f"{name} must be > 0, got {text!r}")
        if high is not None and v > high:
            raise InputError(f"{name} must be at most {shown}, got {text!r}; plan a larger site in parts")
        return v

    # Our limits, stated: 100 km² is already ~24 000 h of towing at 1 m/s over 2D lines, and a
    # survey line longer than 100 km is a route, not a line (--area 1e30 planned 2.4e26 h).
    sides = _rectangle(args.area)
    if sides is None:
        area = positive(args.area, "area", "m**2", "--area", 1e8, "100 km^2 (1e8 m^2)")
    else:  # 'LENGTH x WIDTH': lines along LENGTH unless --line-length says otherwise
        length, width = (positive(t, "length", "m", "--area", 1e5, "100 km per side") for t in sides)
        area = length * width
        if area > 1e8:
            raise InputError(f"--area must be at most 100 km^2 (1e8 m^2), got {args.area!r}; plan a larger site in "
                             "parts")
    line_length = positive(args.line_length, "length", "m", "--line-length", 1e5, "100 km")
    if sides is not None and line_length is None:
        line_length = length
    speed = positive(args.speed, "speed", "m/s", "--speed")
    if args.stacks is not None and not 1 <= args.stacks <= MAX_STACKS:
        raise InputError(f"--stacks must be an integer between 1 and {MAX_STACKS} (beyond the clutter limit "
                         f"stacking adds under 1 dB per doubling), got {args.stacks}")
    with collect_warnings() as warns:
        choice = resolve_catalogue(file=args.catalogue, source="--catalogue")  # as choose reads it
        catalogue = choice.antennas
        antenna = get_antenna(args.antenna, catalogue)
        medium = medium_from_args(args, required=not args.calibration)
        from ._calibration import replan_inputs

        medium, (antenna,), calibration = replan_inputs(args, medium, [antenna], catalogue)
        target = target_from_args(args, depth_m=depth, depths=depths)
        result = acquisition_for_antenna(medium, antenna, target=target, depth_m=depth, surface_loss_db=surface,
                                         stacks=args.stacks, area_m2=area, line_length_m=line_length,
                                         speed_m_per_s=speed, imaging=args.grid_3d, layers=layers_from_args(args),
                                         reaches_db=reaches_db)
    from ..io.jsonstyle import soil_facts_json

    result["facts"] = soil_facts_json(result["facts"])
    result["warnings"] = warns
    result["calibration"] = calibration
    result["catalogue"] = choice.describe([antenna.name])
    rows = [{"setting": label, "value": result["settings"][k], "unit": unit, "rule": result["rules"][k], "_fmt": fmt}
            for k, label, unit, fmt, _ in ROWS_SPEC if result["settings"][k] is not None]
    for r in rows:
        r["value"] = format(r["value"], r.pop("_fmt"))
    g = result["ground_at_centre"]
    title = (f"Antenna: {antenna.name} ({antenna.centre_freq_hz / 1e6:g} MHz)\nGround: {medium.label}  "
             f"(at {g['freq_mhz']:g} MHz: ε'={g['eps_real']:.3g}, v={g['velocity_m_per_ns']:.4f} m/ns, "
             f"α={g['attenuation_db_per_m']:.3g} dB/m)")
    if calibration:
        title += "\n" + calibration["note"]
    if result["target"]:
        t = result["target"]
        title += f"\nTarget: {t['kind']}, {t['material']}" + (f", {t['size_m']:g} m across" if t["size_m"] else "")
        if "depth_top_m" in t:
            from .choose import depth_words

            title += ", " + depth_words(t)
    elif depths is not None and depths.is_range:
        result["notes"].append(f"depth range without --target: the time window is planned for its bottom, "
                               f"{depths.bottom:g} m")
    cols = [Column("setting", "setting"), Column("value", "value"), Column("unit", "unit"), Column("rule", "rule")]
    if result["reachable"]:
        text = format_table(rows, cols, title=title)
    else:
        # say so instead of planning an impossible survey: the verdict first, only the facts behind it
        keep = {"depth of interest", "blind zone (min depth)", "stacks", "margin at depth"}
        text = format_table([r for r in rows if r["setting"] in keep], cols, title=title)
        text = f"{result['verdict'].upper()}: no survey planned.\n" + text
    if result["survey"]:
        text += "\n\n" + survey_table(result["survey"])
    for n in result["notes"]:
        text += f"\nNote: {n}."
    if result["target"]:
        text += (f"\nReach: a target counts as reached with a margin of at least "
                 f"{result['thresholds']['reaches_margin_db']:g} dB, with the target deeper than the blind zone; "
                 "stacking aims at it.")
    if antenna.illustrative:
        text += "\nCatalogue figures are ILLUSTRATIVE demo values; use your instrument's measured figures."
    text += f"\nCatalogue: {result['catalogue']['text']}."
    text += f"\nCaution: {result['caution']}"
    print_result(result, text, as_json=args.json)
    print_notes(warns, quiet=args.quiet or args.json)
    return 0


def _rectangle(text):
    """'40 m x 30 m' (or ×, *) → ('40 m', '30 m'); None for a plain area."""
    import re

    if text is None:
        return None
    parts = re.split(r"\s*[x×*]\s*(?=[0-9.])", str(text).strip(), maxsplit=1)
    if len(parts) != 2 or "**" in str(text) or "^" in str(text):
        return None
    return parts[0], parts[1]


def survey_table(survey: dict, *, planned_only: bool = True) -> str:
    """The survey effort of the planned grids: spacing, lines, km of line, hours."""
    from ..io.outputs import Column, format_table

    rows = [{"grid": g["label"], "line_spacing_m": g["line_spacing_m"], "lines": g["lines"],
             "total_line_km": g["total_line_km"], "survey_time_h": g["survey_time_h"],
             "unaliased_dip_deg": g["unaliased_dip_deg"]}
            for g in survey["grids"] if g["planned"] or not planned_only]
    cols = [Column("grid", "grid"), Column("line_spacing_m", "spacing", "m", ".3g"), Column("lines", "lines", "", "d"),
            Column("total_line_km", "line", "km", ".3g"), Column("survey_time_h", "time", "h", ".3g"),
            Column("unaliased_dip_deg", "dips imaged to", "°", ".0f")]
    if all(r["unaliased_dip_deg"] is None for r in rows):  # 2D lines only: no imaging between lines
        cols.pop()
    title = (f"Survey time over {survey['area_m2']:,.0f} m² (lines {survey['line_length_m']:.4g} m long, "
             f"{survey['speed_m_per_s']:.3g} m/s, {survey['turn_time_s']:g} s per turn; lines × length / speed "
             "+ turns)")
    return format_table(rows, cols, title=title)
