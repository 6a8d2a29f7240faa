"""Public path of the velocity fits named in the design (``subsurf.velocity.*``).

Their home is :mod:`subsurf.interpretation`; this module only re-exports them.
"""

from .interpretation.velocity import *  # noqa: F403
from .interpretation.velocity import __all__  # noqa: F401
