"""Whole-region statistics of a regional map, accumulated tile by tile while it is written.

Split from :mod:`subsurf.site.regional` (which re-exports these names).  "Reaches" is the one
definition of :mod:`subsurf.detection.verdicts`: margin at or above the threshold and the
target below the antenna's blind zone.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["REC_FILL", "SHALLOW_FILL", "RegionSummary"]

#: ``recommended_antenna`` where a cell has no soil data
REC_FILL = np.int16(-32768)
#: fill value of the regional ``too_shallow`` layer where there is no soil data
SHALLOW_FILL = np.int8(-1)


@dataclass
class RegionSummary:
    """Whole-region statistics accumulated tile by tile (:meth:`add`) while the map is written.

    ``reach`` counts cells with margin ≥ 0 dB, ``reach_with_headroom`` cells with margin
    ≥ the reach threshold (:data:`subsurf.detection.verdicts.REACHES_MARGIN_DB` unless
    configured), both below the blind zone (the one "reaches" of :mod:`subsurf.detection.verdicts`).
    """

    antennas: list
    cells: int = 0
    cells_with_data: int = 0
    reach: np.ndarray = field(default=None)
    reach_with_headroom: np.ndarray = field(default=None)
    shallow: np.ndarray = field(default=None)  # cells where the target is inside each antenna's blind zone
    depth_sum: np.ndarray = field(default=None)
    recommended: np.ndarray = field(default=None)  # counts: index 0 = none reaches, i+1 = antenna i
    tiles: int = 0
    filled_names: list = field(default_factory=list)  # quantities of the soil_default_used bits
    filled: np.ndarray = field(default=None)  # cells where each was filled with its default

    def __post_init__(self):
        n = len(self.antennas)
        self.reach = np.zeros(n, np.int64)
        self.reach_with_headroom = np.zeros(n, np.int64)
        self.shallow = np.zeros(n, np.int64)
        self.depth_sum = np.zeros(n)
        self.recommended = np.zeros(n + 1, np.int64)
        self.filled = np.zeros(len(self.filled_names), np.int64)

    def add(self, max_depth, margin, rec, *, reaches_db: float, used=None, too_shallow=None):
        from ..detection.verdicts import reaches

        valid = rec != REC_FILL
        self.cells += rec.size
        self.cells_with_data += int(valid.sum())
        shallow = False if too_shallow is None else np.asarray(too_shallow) == 1
        self.reach += np.count_nonzero(reaches(margin, too_shallow=shallow, reaches_db=0.0) & valid, axis=(1, 2))
        self.reach_with_headroom += np.count_nonzero(reaches(margin, too_shallow=shallow, reaches_db=reaches_db)
                                                     & valid, axis=(1, 2))
        self.shallow += np.count_nonzero(shallow & valid, axis=(1, 2)) if too_shallow is not None else 0
        self.depth_sum += np.where(valid, max_depth, 0.0).sum(axis=(1, 2))
        self.recommended += np.bincount(rec[valid].astype(np.int64) + 1, minlength=self.recommended.size)
        if used is not None:
            u = np.asarray(used)
            u = u[u >= 0]
            for k in range(len(self.filled_names)):
                self.filled[k] += np.count_nonzero(u & (1 << k))
        self.tiles += 1

    def filled_fractions(self) -> dict:
        """Fraction of the cells with soil data where each quantity was filled with its default."""
        n = max(self.cells_with_data, 1)
        return {q: self.filled[k] / n for k, q in enumerate(self.filled_names)}

    def rows(self) -> list[dict]:
        n = max(self.cells_with_data, 1)
        return [{"antenna": a, "reach_fraction": self.reach[i] / n,
                 "reach_with_headroom_fraction": self.reach_with_headroom[i] / n,
                 "too_shallow_fraction": self.shallow[i] / n,
                 "mean_max_depth_m": self.depth_sum[i] / n if self.cells_with_data else float("nan"),
                 "recommended_fraction": self.recommended[i + 1] / n}
                for i, a in enumerate(self.antennas)]
