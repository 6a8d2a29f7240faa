"""``--reach-margin``: the one flag that sets the reach threshold of a run (choose, setup, map, report, region, demo).

The threshold itself, its default and its allowed range live in
:mod:`subsurf.detection.verdicts`; this module only reads the flag.
"""

from __future__ import annotations

FLAG = "--reach-margin"


def add_reach_margin_argument(parser, *, survey: bool = False) -> None:
    """Add ``--reach-margin DB`` to ``parser`` (``survey``: the help says it overrides the survey file's key)."""
    from .._reach_threshold import REACH_MARGIN_RANGE_DB, REACHES_MARGIN_DB

    low, high = REACH_MARGIN_RANGE_DB
    where = (f" (default: the survey's [target] reach_margin, else {REACHES_MARGIN_DB:g} dB)" if survey
             else f" (default {REACHES_MARGIN_DB:g} dB)")
    parser.add_argument(FLAG, metavar="DB", help=f"margin a target needs to count as reached, {low:g} to "
                        f"{high:g} dB, e.g. '10 dB' (bare number: dB){where}; between 0 dB and this it is marginal")


def reach_margin_from_args(args) -> float | None:
    """The threshold the flag gives, in dB (None when it is not given); exit-1 error naming the flag otherwise."""
    text = getattr(args, "reach_margin", None)
    if text is None:
        return None
    from ..detection.verdicts import check_reach_margin
    from ..errors import InputError
    from ..units import parse_quantity

    try:
        value = parse_quantity(text, "decibel", default_unit="dB", name=FLAG)
    except InputError:
        raise InputError(f"{FLAG}: cannot read {text!r} as dB; give a number such as 10 or '10 dB'") from None
    return check_reach_margin(value, name=FLAG, shown=text)
