"""The planar budget against a full-wave layered-earth solution (empymod), and the near-field limit it sets.

empymod (Werthmüller 2017, Geophysics 82(6), WB9–WB19, doi:10.1190/geo2016-0626.1) gives the
wavenumber-domain field of a horizontal electric dipole (x-directed, Ex received) just below
the surface of a lossy half-space (ε' 9, 2 mS/m) over a reflecting half-space (ε' 25) at depth
d.  The reflected field is the difference of the kernels with and without the reflector (it
decays exponentially in the wavenumber, so a plain trapezoid of the Hankel transform
converges; the direct wave, which defeats any subtraction in the space domain, cancels in
the kernel).  Budget side: subsurf's two-way loss L of the planar reflector (coupling model,
separation 5 cm, one frequency) converted to the field of a unit dipole moment through the
interfacial dipole's radiation integral P (reciprocity, Lukosz & Kunz 1977):

    |E|² = 10^(−L/10) · ω²μ₀²P²f² / (16π²c²),

so the comparison is absolute: depth dependence, frequency dependence and the coupling gain.
"""

import numpy as np
import pytest
from scipy import constants, special

import subsurf.detection as D

empymod = pytest.importorskip("empymod")

EPS, SIG, EPS_R = 9.0, 0.002, 25.0
Z, X = 1e-4, 0.05  # antennas just below the surface (empymod puts a point on an interface in the air), 5 cm apart


def _reflected_field(d, f, n=200001):
    """|Ex| reflected from depth d (V/m per A·m) from empymod's kernels, Hankel transform by trapezoid."""
    k = 2 * np.pi * f / constants.c * np.sqrt(EPS)
    lam = np.linspace(1e-8, 3.0 * k, n)
    kw = dict(src=[0, 0, Z], rec=[X, 0, Z], freq=f, wavenumber=lam, ab=11, verb=0)
    half = empymod.dipole_k(depth=[0], res=[2e14, 1 / SIG], epermH=[1, EPS], epermV=[1, EPS], **kw)
    layered = empymod.dipole_k(depth=[0, d], res=[2e14, 1 / SIG, 1 / SIG], epermH=[1, EPS, EPS_R],
                               epermV=[1, EPS, EPS_R], **kw)
    p0 = np.ravel(layered[0] - half[0])
    p1 = np.ravel(layered[1] - half[1])  # dipole_k's PJ1 already carries the 1/offset of the J2 identity
    return abs(np.trapezoid(p0 * special.j0(lam * X) + p1 * special.j1(lam * X), lam))


def _budget_field(d, f):
    """The budget's planar return at depth d as the field of a unit dipole moment (module notes)."""
    t = D.Target("planar", eps=EPS_R + 0j, sigma=SIG)
    loss = float(D.two_way_loss_db(d, EPS, SIG, f, t, separation_m=X))
    p_air, p_ground = D.interfacial_dipole_power(EPS)
    omega = 2 * np.pi * f
    scale = omega**2 * constants.mu_0**2 * float(p_air + p_ground) ** 2 * f**2 / (16 * np.pi**2 * constants.c**2)
    return np.sqrt(10 ** (-loss / 10) * scale)


def _departure_db(d, f, n=200001):
    return 20 * np.log10(_reflected_field(d, f, n) / _budget_field(d, f))


def test_depth_dependence_agrees_beyond_the_near_field():
    """250 MHz: budget within 2 dB of empymod from the near-field limit to 8 λ; ratios between depths within 2 dB.

    Measured when this was written: −1.98 dB at 0.5 λ, −0.31 at 0.75 λ, −0.99 at 1 λ, −0.59 at 2 λ,
    −0.40 at 4 λ, −0.25 dB at 8 λ.
    """
    f = 250e6
    lam = constants.c / f / np.sqrt(EPS)
    fractions = [D.NEAR_FIELD_WAVELENGTHS, 1.0, 2.0, 4.0, 8.0]
    dep = [_departure_db(q * lam, f) for q in fractions]
    assert max(abs(x) for x in dep) <= 2.0
    assert max(dep) - min(dep) <= 2.0  # amplitude ratio between any two depths


def test_near_field_departs():
    """Closer than the near-field limit the far-field budget departs by more than 2 dB (−6.6 dB at 0.1 λ)."""
    f = 250e6
    lam = constants.c / f / np.sqrt(EPS)
    assert abs(_departure_db(0.1 * lam, f)) > 2.0


def test_frequency_dependence_agrees_50_mhz_to_2_ghz():
    """At 3 m the budget's frequency dependence (λ², α(f), R(f), coupling) follows empymod within 2 dB.

    Measured: −0.45 dB at 50 MHz, −0.31 at 100, −0.26 at 250, −0.25 at 500 and 1000, −0.22 dB at 2000 MHz.
    """
    dep = [_departure_db(3.0, f, 400001) for f in (50e6, 100e6, 250e6, 500e6, 1e9, 2e9)]
    assert max(abs(x) for x in dep) <= 2.0 and max(dep) - min(dep) <= 2.0
