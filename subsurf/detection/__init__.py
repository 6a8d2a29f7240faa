"""The two-way loss budget per target kind, the one depth solver, blind zone and resolution.

Owns what decides whether a target is seen: spreading, absorption, reflection, coupling.
"""

from .budget import *  # noqa: F403
from .budget import __all__  # noqa: F401
