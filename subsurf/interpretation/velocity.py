"""Radar velocity from field evidence: diffraction hyperbolas (:mod:`.hyperbola`), CMP/WARR
gathers (:mod:`.cmp`; several reflectors as a layered model, :mod:`.layered_cmp`), calibration targets at known depth (:mod:`.calibration`) and soil
descriptions (:mod:`.soil_velocity`).

Every fit returns its standard errors from the fit covariance scaled by the residual
variance of the picks themselves (the data say how good they are), so a one-standard-
error interval holds the true value about 68 % of the time when the model is right.
This module gathers their public names; :mod:`subsurf.velocity` re-exports them.
"""

from __future__ import annotations

from .calibration import CalibrationVelocity, velocity_from_calibration
from .cmp import CmpFit, IntervalVelocities, cmp_twt, dix_interval_velocities, fit_cmp
from .hyperbola import HyperbolaFit, fit_hyperbola, hyperbola_twt
from .layered_cmp import LayeredCmpFit, fit_layered_cmp
from .soil_velocity import SoilVelocity, velocity_from_soil

__all__ = [
    "HyperbolaFit",
    "CmpFit",
    "IntervalVelocities",
    "CalibrationVelocity",
    "SoilVelocity",
    "hyperbola_twt",
    "fit_hyperbola",
    "cmp_twt",
    "fit_cmp",
    "dix_interval_velocities",
    "velocity_from_calibration",
    "velocity_from_soil",
    "LayeredCmpFit",
    "fit_layered_cmp",
]
