"""What decides whether a target is seen: the loss budget, the one depth solver, blind zone, resolution.

Modules: :mod:`.targets` (reflection, RCS, echo width), :mod:`.contrast` (|R| and the
low-contrast limit), :mod:`.coupling` (antenna–ground
coupling gain), :mod:`.layers` (surface layers), :mod:`.band` (the antenna spectrum and its
fixed frequencies), :mod:`.budget` (the loss terms), :mod:`.solver` (the depth solution),
:mod:`.blindzone` (minimum depth, near field), :mod:`.resolution`, :mod:`.verdicts` (the one
definition of "reaches").
"""

from . import (  # noqa: F401
           band,
           blindzone,
           budget,
           contrast,
           coupling,
           evaluate,
           layers,
           resolution,
           solver,
           targets,
           verdicts,
)
from .band import *  # noqa: F403
from .blindzone import *  # noqa: F403
from .budget import *  # noqa: F403
from .contrast import *  # noqa: F403
from .coupling import *  # noqa: F403
from .evaluate import *  # noqa: F403
from .layers import *  # noqa: F403
from .resolution import *  # noqa: F403
from .solver import *  # noqa: F403
from .targets import *  # noqa: F403
from .verdicts import *  # noqa: F403

__all__ = [*band.__all__, *blindzone.__all__, *budget.__all__, *contrast.__all__, *coupling.__all__, *evaluate.__all__, *layers.__all__,
           *resolution.__all__, *solver.__all__, *targets.__all__, *verdicts.__all__]
