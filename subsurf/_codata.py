"""The CODATA values subsurf uses, without importing :mod:`scipy.constants` at start-up.

``import scipy.constants`` costs about 0.1 s of CPU (it loads scipy's array-API layer,
numpy.testing and numpy.f2py), as much as numpy itself; the physics on the start-up path
of the command line (``subsurf medium``) needs three numbers from it.  They are the values
scipy.constants gives (CODATA 2022, scipy ≥ 1.15), checked equal to it in
``tests/test_codata.py``; every other module may keep using scipy.constants directly.

References
----------
Mohr, P. J., Newell, D. B., Taylor, B. N. & Tiesinga, E. (2025). CODATA recommended
values of the fundamental physical constants: 2022. Rev. Mod. Phys. 97, 025002.
doi:10.1103/RevModPhys.97.025002
"""

from __future__ import annotations

__all__ = ["c", "mu_0", "epsilon_0", "CODATA_EDITION"]

CODATA_EDITION = 2022
#: speed of light in vacuum, m/s (exact by the definition of the metre)
c = 299792458.0
#: vacuum magnetic permeability, N/A² (CODATA 2022; no longer exact since the 2019 SI)
mu_0 = 1.25663706127e-06
#: vacuum electric permittivity, F/m (CODATA 2022)
epsilon_0 = 8.8541878188e-12
