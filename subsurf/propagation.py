"""Public path of the propagation functions named in the design (``subsurf.propagation.*``).

Their home is :mod:`subsurf.waves` (plane waves in a medium, interfaces, time ↔ depth)
and :mod:`subsurf.detection.solver` (the one depth solver, with DESIGN.md's plain radar
range equation :func:`max_detectable_depth`); this module only re-exports them.
"""

from .detection.solver import depth_from_loss_terms, lambertw_of_exp, max_detectable_depth
from .waves.propagation import *  # noqa: F403
from .waves.propagation import __all__ as _waves_all

__all__ = [*_waves_all, "max_detectable_depth", "lambertw_of_exp", "depth_from_loss_terms"]
