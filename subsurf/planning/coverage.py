"""Covering an area: line spacing for 2D detection and 3D imaging, aliasing, lines and survey time.

Three spacings a crew may lay out (SI units, broadcasting):

* 2D detection, :func:`line_spacing_2d`: a target midway between lines is still inside one
  line's footprint (S = 2A + D);
* 3D imaging limit, :func:`line_spacing_3d`: λ/4 across the lines as along them, the
  spatial sampling that images every dip without aliasing (Grasmueck et al. 2005);
* 3D common practice, :func:`line_spacing_3d_practice`: lines about half a footprint
  width apart, which is what field grids usually are, and what that coarser spacing costs
  (:func:`unaliased_dip_deg`).

:func:`survey_effort` counts the lines, the kilometres of line and the hours for one of
them.  This module reads no files.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from ..errors import InputError, check_nonnegative, check_positive

__all__ = [
    "GridKind",
    "GRID_LABELS",
    "PRACTICE_STEP_M",
    "TURN_TIME_S",
    "line_spacing_2d",
    "line_spacing_3d",
    "line_spacing_3d_practice",
    "unaliased_dip_deg",
    "survey_lines",
    "survey_time",
    "SurveyEffort",
    "survey_effort",
]

GridKind = Literal["2d_detection", "3d_practice", "3d_limit"]
#: How each grid is named in tables.
GRID_LABELS = {"2d_detection": "2D detection lines", "3d_practice": "3D grid, common practice",
               "3d_limit": "3D grid, λ/4 imaging limit"}
#: Tape step (m) a common-practice spacing is floored to (1 cm below 10 cm, as for concrete work).
PRACTICE_STEP_M = 0.05
#: Time (s) to turn and position for the next line (our default for a hand-pushed or towed antenna).
TURN_TIME_S = 10.0


def line_spacing_2d(footprint_radius_m, target_size_m=0.0):
    """Line spacing (m) for 2D detection: S = 2A + D.

    A target of width D midway between two lines is still inside the footprint of one
    of them (footprint semi-axis A at the target depth, Annan & Cosway 1992).  Our own
    geometric rule, stated so it can be checked.  Which way the lines run depends on the
    target (across a pipe; any way for a level interface; across the dip of a dipping
    one): the plan says so in a note.
    """
    a = check_positive("footprint_radius_m", footprint_radius_m, unit="m")
    s = check_nonnegative("target_size_m", target_size_m, unit="m")
    return 2.0 * a + s


def line_spacing_3d(wavelength_m):
    """Line spacing (m) at the 3D imaging limit: λ/4 across the lines as along them.

    Full-resolution 3D imaging needs spatial sampling of at most a quarter of the
    wavelength in the ground in both directions; coarser crossline spacing aliases
    dipping and curved reflectors and the flanks of diffractions, which migration then
    cannot restore.

    References
    ----------
    Grasmueck, M., Weger, R. & Horstmeyer, H. (2005). Full-resolution 3D GPR imaging.
    Geophysics 70(1), K12–K19. doi:10.1190/1.1852780
    """
    return 0.25 * check_positive("wavelength_m", wavelength_m, unit="m")


def line_spacing_3d_practice(footprint_radius_m, wavelength_m, *, step_m: float = PRACTICE_STEP_M):
    """Common-practice 3D line spacing (m): the footprint semi-axis A, floored to a tape step, ≥ λ/4.

    Lines about half a footprint width apart, so neighbouring footprints overlap by half
    and every point of a level target is seen from two lines.  Floored to ``step_m``
    (5 cm; 1 cm where A is under 10 cm), never finer than :func:`line_spacing_3d`.

    Notes
    -----
    This is common practice, not a sampling theorem: it gives the 0.25–0.5 m grids usual
    for 400–500 MHz archaeological surveys (Conyers 2013; the EAC guidelines, Schmidt et
    al. 2015, ask for GPR traverses no more than 0.5 m apart; both from memory), several
    times λ/4.  What it loses is stated by :func:`unaliased_dip_deg`.

    References
    ----------
    Annan, A. P. & Cosway, S. W. (1992). Ground penetrating radar survey design. Proc.
    SAGEEP 1992, 329–351 (footprint).  Conyers, L. B. (2013). Ground-Penetrating Radar for
    Archaeology, 3rd ed., AltaMira.  Schmidt, A. et al. (2015). EAC Guidelines for the Use
    of Geophysics in Archaeology. Europae Archaeologiae Consilium, Guidelines 2.
    Verdonck, L. et al. (2015). The impact of spatial sampling and migration on the
    interpretation of complex archaeological GPR data. Archaeological Prospection 22: an
    f–k analysis of one site found about three times λ_min/4 sufficient (abstract).
    """
    a = check_positive("footprint_radius_m", footprint_radius_m, unit="m")
    limit = line_spacing_3d(wavelength_m)
    if not step_m > 0:
        raise InputError(f"step_m must be > 0 m, got {step_m:g}")
    step = np.where(a < 2 * step_m, 0.01, step_m)
    floored = np.round(np.floor(a / step + 1e-9) * step, 6)  # 0.35, not 0.35000000000000003
    return np.maximum(floored, limit)


def unaliased_dip_deg(line_spacing_m, wavelength_m):
    """Steepest dip (degrees) sampled without aliasing across lines ``line_spacing_m`` apart.

    Zero-offset data: the two-way phase changes by 2k·s·sin θ between neighbouring lines
    over a reflector dipping at θ (k = 2π/λ); Nyquist allows at most π, so
    sin θ_max = λ/(4s), and at s ≤ λ/4 every dip (90°) is sampled.

    References
    ----------
    Yilmaz, Ö. (2001). Seismic Data Analysis, SEG (spatial aliasing of zero-offset data;
    from memory).  Grasmueck et al. (2005), op. cit.
    """
    s = check_positive("line_spacing_m", line_spacing_m, unit="m")
    lam = check_positive("wavelength_m", wavelength_m, unit="m")
    return np.degrees(np.arcsin(np.minimum(1.0, lam / (4.0 * s))))


def survey_lines(area_m2, line_spacing_m, *, line_length_m=None) -> tuple[int, float, float]:
    """Parallel lines covering an area: (count, length of one line m, total length m).

    n = ⌈(A/ℓ)/s⌉ + 1 lines of length ℓ (both edges covered); ℓ = √A when not given.
    """
    a = float(check_positive("area_m2", area_m2, unit="m²"))
    s = float(check_positive("line_spacing_m", line_spacing_m, unit="m"))
    ell = math.sqrt(a) if line_length_m is None else float(check_positive("line_length_m", line_length_m, unit="m"))
    n = math.ceil(a / ell / s - 1e-9) + 1
    return n, ell, n * ell


def survey_time(area_m2, line_spacing_m, speed_m_per_s, *, line_length_m=None, turn_time_s: float = TURN_TIME_S):
    """Time (s) to cover an area with parallel lines: L_total/v plus a turn per line.

    Parameters
    ----------
    area_m2 : float
        Area to cover.
    line_spacing_m, speed_m_per_s : float
    line_length_m : float or None
        Length of one line; None takes a square area (√A).
    turn_time_s : float
        Time to turn and position for the next line (10 s is our default for a
        hand-pushed or towed antenna).

    Notes
    -----
    n = ⌈(A/ℓ)/s⌉ + 1 lines of length ℓ; T = n·ℓ/v + (n − 1)·t_turn.
    """
    v = float(check_positive("speed_m_per_s", speed_m_per_s, unit="m/s"))
    if turn_time_s < 0:
        raise InputError(f"turn_time_s must be >= 0, got {turn_time_s:g}")
    n, _, total = survey_lines(area_m2, line_spacing_m, line_length_m=line_length_m)
    return total / v + (n - 1) * turn_time_s


@dataclass(frozen=True)
class SurveyEffort:
    """Lines, kilometres and time to cover an area at one line spacing (SI units)."""

    grid: str
    line_spacing_m: float
    lines: int
    line_length_m: float
    total_length_m: float
    time_s: float


def survey_effort(grid: GridKind, area_m2, line_spacing_m, speed_m_per_s, *, line_length_m=None,
                  turn_time_s: float = TURN_TIME_S) -> SurveyEffort:
    """The :class:`SurveyEffort` of one grid kind (see :data:`GRID_LABELS`)."""
    if grid not in GRID_LABELS:
        raise InputError(f"grid must be one of {', '.join(GRID_LABELS)}, got {grid!r}")
    n, ell, total = survey_lines(area_m2, line_spacing_m, line_length_m=line_length_m)
    t = survey_time(area_m2, line_spacing_m, speed_m_per_s, line_length_m=line_length_m, turn_time_s=turn_time_s)
    return SurveyEffort(grid=grid, line_spacing_m=float(line_spacing_m), lines=n, line_length_m=ell,
                        total_length_m=total, time_s=float(t))
