"""The one definition of "reaches", its threshold and the shared verdict words.

Every output that says an antenna reaches a target — ``choose``, ``setup``, ``map``,
``region``, the report, their JSON and figure titles — takes the words, the threshold
and the sentence that states them from here, so they cannot drift apart.

A target **reaches** when the margin (performance − two-way loss) at its depth is at
least :data:`REACHES_MARGIN_DB` and it lies below the antenna's blind zone; **marginal**
when the margin is between 0 and that threshold; **does not reach** below 0 dB;
**too shallow** when it lies inside the blind zone (its echo arrives while the direct
wave still rings, see :mod:`subsurf.detection.blindzone`), whatever the margin.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "REACHES_MARGIN_DB",
    "REACHES",
    "MARGINAL",
    "DOES_NOT_REACH",
    "TOO_SHALLOW",
    "VERDICT_WORDS",
    "verdict",
    "reaches",
    "reach_definition",
    "share_word",
]

#: Margin (dB) at or above which a target "reaches"; between 0 and this it is "marginal".
#: 6 dB is a factor of two in received amplitude: our allowance for the usual
#: uncertainty in ground conductivity and target contrast (engineering judgement,
#: in line with common practice of demanding a few dB of headroom in link budgets).
#: Configured here only; every output states it.
REACHES_MARGIN_DB = 6.0

REACHES = "reaches"
MARGINAL = "marginal"
DOES_NOT_REACH = "does not reach"
TOO_SHALLOW = "too shallow"
#: The verdicts, best first.
VERDICT_WORDS = (REACHES, MARGINAL, DOES_NOT_REACH, TOO_SHALLOW)


def verdict(margin, *, too_shallow=False, reaches_db: float = REACHES_MARGIN_DB) -> np.ndarray:
    """Verdict per margin (dB): reaches (≥ reaches_db), marginal (0 to reaches_db), does not reach (< 0).

    ``too_shallow`` (bool, broadcast) overrides: the target is inside the blind zone.
    """
    m = np.asarray(margin, dtype=float)
    out = np.where(m >= reaches_db, REACHES, np.where(m >= 0.0, MARGINAL, DOES_NOT_REACH))
    out = np.where(np.asarray(too_shallow, dtype=bool), TOO_SHALLOW, out).astype(object).astype(str)
    return out if out.ndim else out[()]


def reaches(margin, *, too_shallow=False, reaches_db: float = REACHES_MARGIN_DB) -> np.ndarray:
    """Boolean mask of "reaches": margin ≥ reaches_db and not inside the blind zone (NaN → False)."""
    m = np.asarray(margin, dtype=float)
    with np.errstate(invalid="ignore"):
        return (m >= reaches_db) & ~np.asarray(too_shallow, dtype=bool)


def reach_definition(reaches_db: float = REACHES_MARGIN_DB) -> str:
    """The sentence every output prints to say what "reaches" means."""
    return (f"reaches = margin >= {reaches_db:g} dB below the blind zone; marginal = 0 to {reaches_db:g} dB; "
            f"does not reach = margin < 0 dB; too shallow = inside the blind zone (echo within the direct wave)")


def share_word(fraction: float) -> str:
    """"majority" for a share above one half, "plurality" otherwise (the largest share that is not most).

    For titles such as "highband-1000 is best over a plurality of cells (43 %)".
    """
    return "majority" if float(fraction) > 0.5 else "plurality"
