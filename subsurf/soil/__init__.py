"""Public path of the soil functions named in the design (``subsurf.soil.*``).

The home of these functions is :mod:`subsurf.ground`; this module only re-exports them so
that scripts written against ``subsurf.soil`` keep working.
"""

from ..ground import *  # noqa: F403
from ..ground import __all__  # noqa: F401
