"""The one definition of "reaches", its threshold and the shared verdict words.

Every output that says an antenna reaches a target — ``choose``, ``setup``, ``map``,
``region``, the report, their JSON and figure titles — takes the words, the threshold
and the sentence that states them from here, so they cannot drift apart.

A target **reaches** when the margin (performance − two-way loss) at its depth is at
least :data:`REACHES_MARGIN_DB` and it lies below the antenna's blind zone; **marginal**
when the margin is between 0 and that threshold; **does not reach** below 0 dB;
**too shallow** when it lies inside the blind zone (its echo arrives while the direct
wave still rings, see :mod:`subsurf.detection.blindzone`), whatever the margin.

For a **range of depths of interest** (walls whose tops lie from 0.5 to 1.5 m, or a list of
depths) the margin is judged at the deepest depth and the blind zone at the shallowest: the
range reaches when its bottom has the margin and its top lies below the blind zone.  When the
bottom is reached (margin ≥ 0 dB) and lies below the blind zone but the top lies inside it, the
verdict is **partly blind**: the antenna sees only the part of the range below its blind zone.
It is not "reaches" (the top of the range is missed), so it never counts as reaching.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "REACHES_MARGIN_DB",
    "REACH_MARGIN_RANGE_DB",
    "check_reach_margin",
    "REACHES",
    "MARGINAL",
    "DOES_NOT_REACH",
    "TOO_SHALLOW",
    "PARTLY_BLIND",
    "VERDICT_WORDS",
    "verdict",
    "reaches",
    "reach_definition",
    "range_definition",
    "share_word",
]

# The default threshold and its allowed range are defined in :mod:`subsurf._reach_threshold`
# (numpy-free, so the command line's --help can state them without importing the physics)
# and are part of this module's public names.
from .._reach_threshold import REACH_MARGIN_RANGE_DB, REACHES_MARGIN_DB  # noqa: E402

REACHES = "reaches"
MARGINAL = "marginal"
DOES_NOT_REACH = "does not reach"
TOO_SHALLOW = "too shallow"
PARTLY_BLIND = "partly blind"
#: The verdicts, best first.
VERDICT_WORDS = (REACHES, MARGINAL, DOES_NOT_REACH, TOO_SHALLOW, PARTLY_BLIND)


def check_reach_margin(value_db, *, name: str = "reach margin", shown=None) -> float:
    """The reach threshold ``value_db`` (dB) as a float, or an :class:`~subsurf.errors.InputError` naming ``name``.

    Allowed: :data:`REACH_MARGIN_RANGE_DB` (0 to 40 dB, inclusive).  ``shown``: the value as the
    user typed it, for the message (default ``value_db``).
    """
    from ..errors import InputError

    low, high = REACH_MARGIN_RANGE_DB
    try:
        v = float(value_db)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a number of dB between {low:g} and {high:g}, got {value_db!r}") from None
    if not low <= v <= high:  # NaN fails too
        raise InputError(f"{name} must be between {low:g} and {high:g} dB (the margin a target needs to "
                         f"count as reached; default {REACHES_MARGIN_DB:g} dB), got "
                         f"{value_db if shown is None else shown!r}")
    return v


def verdict(margin, *, too_shallow=False, partly_blind=False, reaches_db: float = REACHES_MARGIN_DB) -> np.ndarray:
    """Verdict per margin (dB): reaches (≥ reaches_db), marginal (0 to reaches_db), does not reach (< 0).

    ``too_shallow`` (bool, broadcast) overrides: the target (the top of a depth range) is inside
    the blind zone.  ``partly_blind`` (bool, broadcast; only where ``too_shallow``) marks a range
    whose bottom lies below the blind zone: "partly blind" when its bottom has a margin ≥ 0 dB,
    "does not reach" when not.
    """
    m = np.asarray(margin, dtype=float)
    out = np.where(m >= reaches_db, REACHES, np.where(m >= 0.0, MARGINAL, DOES_NOT_REACH))
    shallow = np.asarray(too_shallow, dtype=bool)
    partly = shallow & np.asarray(partly_blind, dtype=bool)
    out = np.where(shallow, np.where(partly, np.where(m >= 0.0, PARTLY_BLIND, DOES_NOT_REACH), TOO_SHALLOW), out)
    out = out.astype(object).astype(str)
    return out if out.ndim else out[()]


def reaches(margin, *, too_shallow=False, reaches_db: float = REACHES_MARGIN_DB) -> np.ndarray:
    """Boolean mask of "reaches": margin ≥ reaches_db and not inside the blind zone (NaN → False)."""
    m = np.asarray(margin, dtype=float)
    with np.errstate(invalid="ignore"):
        return (m >= reaches_db) & ~np.asarray(too_shallow, dtype=bool)


def reach_definition(reaches_db: float = REACHES_MARGIN_DB) -> str:
    """The sentence every output prints to say what "reaches" means."""
    return (f"reaches = margin >= {reaches_db:g} dB and the target deeper than the blind zone; marginal = 0 to {reaches_db:g} dB; "
            f"does not reach = margin < 0 dB; too shallow = inside the blind zone (echo within the direct wave)")


def range_definition(depth_top_m: float, depth_bottom_m: float) -> str:
    """The sentence outputs print for a range of depths of interest: where each thing is judged."""
    return (f"depths of interest {depth_top_m:g}-{depth_bottom_m:g} m: margin and verdict at the deepest "
            f"({depth_bottom_m:g} m), blind zone and resolution at the shallowest ({depth_top_m:g} m); "
            "partly blind = the bottom is reached (margin >= 0 dB) but the blind zone covers the top of the range")


def share_word(fraction: float) -> str:
    """"majority" for a share above one half, "plurality" otherwise (the largest share that is not most).

    For titles such as "highband-1000 is best over a plurality of cells (43 %)".
    """
    return "majority" if float(fraction) > 0.5 else "plurality"
