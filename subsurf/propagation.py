"""Public path of the propagation functions named in the design (``subsurf.propagation.*``).

Their home is :mod:`subsurf.waves` (plane waves in a medium, interfaces, time ↔ depth)
and :mod:`subsurf.detection` (the depth solver); this module only re-exports them.
"""

from .waves.propagation import *  # noqa: F403
from .waves.propagation import __all__  # noqa: F401
