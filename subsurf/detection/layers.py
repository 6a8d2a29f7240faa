"""Surface layers over the host ground (asphalt, concrete, topsoil, fill) in the loss budget.

Each layer has a thickness and its own ε, σ.  Its effect on the two-way loss to a target in
the host below:

- absorption in the layer, 2·8.686·αₖ·tₖ (dB, vertical path);
- transmission at every interface on the way down and back up, −20·log10(1 − |Rₖ|²)
  (normal-incidence power transmission squared; R from
  :func:`subsurf.propagation.reflection_coefficient`'s impedance form);
- geometric spreading through layers of different velocity: the paraxial spreading
  distance of a layered earth is D = Σ vₖ·hₖ/v_ref (Newman 1973); referred to the host,
  r = d + s with the host-equivalent shift s = Σₖ tₖ·(vₖ/v_h − 1), and the depth solver
  works on r (the budget's note on thin and thick layers says where this holds).

References
----------
Newman, P. (1973). Divergence effects in a layered earth. Geophysics 38(3), 481–488.
doi:10.1190/1.1440353
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..waves.propagation import _alpha_beta, _reflection_power_from_gamma

__all__ = ["Layer", "check_layers", "OverburdenTerms", "overburden_terms"]


@dataclass(frozen=True)
class Layer:
    """One surface layer: thickness (m, > 0), relative permittivity ε' − jε'', DC conductivity (S/m), label."""

    thickness_m: float
    eps: complex
    sigma: float = 0.0
    label: str = ""

    def __post_init__(self):
        t = self.thickness_m
        if isinstance(t, bool) or not isinstance(t, (int, float)) or not np.isfinite(t) or t <= 0:
            raise InputError(f"layer {self.label or ''} thickness must be > 0 m, got {t!r}".replace("  ", " "))
        e = complex(self.eps)
        if not (np.isfinite(e.real) and np.isfinite(e.imag)) or e.real < 1.0 or e.imag > 0:
            raise InputError(f"layer {self.label!r}: eps must have real part >= 1 and imaginary part <= 0, "
                             f"got {self.eps}")
        if not (np.isfinite(self.sigma) and self.sigma >= 0):
            raise InputError(f"layer {self.label!r}: sigma must be >= 0 S/m, got {self.sigma!r}")


def check_layers(layers, depth_m=None) -> tuple:
    """Validate a sequence of :class:`Layer`; the target depth must lie below all of them."""
    layers = tuple(layers or ())
    for lay in layers:
        if not isinstance(lay, Layer):
            raise InputError(f"layers must be subsurf.detection.layers.Layer objects, got {lay!r}")
    total = sum(lay.thickness_m for lay in layers)
    if depth_m is not None and layers and np.any(np.asarray(depth_m) <= total):
        raise InputError(f"the target depth {np.min(depth_m):g} m is within the surface layers "
                         f"({total:g} m thick); the target must lie in the ground below them")
    return layers


@dataclass(frozen=True)
class OverburdenTerms:
    """What the layers add to the budget at each frequency (arrays broadcast over ground and nodes).

    loss_db : extra two-way loss (absorption in the layers + interface transmissions), dB
    shift_m : s of r = d + s (host-equivalent range), m
    top_alpha, top_beta : α, β of the medium the antenna sits on
    top_eps_real : its ε'
    velocity_ratio : v_host / v_top
    thickness_m : total thickness of the layers, m
    """

    loss_db: np.ndarray
    shift_m: np.ndarray
    top_alpha: np.ndarray
    top_beta: np.ndarray
    top_eps_real: np.ndarray
    velocity_ratio: np.ndarray
    thickness_m: float


def overburden_terms(layers, host_alpha, host_beta, host_eps_real, omega) -> OverburdenTerms:
    """Loss, range shift and top-medium properties of the surface layers over a host (see module notes).

    ``host_alpha``, ``host_beta`` (Np/m, rad/m), ``host_eps_real`` and ``omega`` (rad/s)
    broadcast; ``layers`` is top first.  No layers: zero loss and shift, the host on top.
    """
    from ..waves.propagation import NP_TO_DB

    if not layers:
        zero = np.zeros(np.broadcast_shapes(np.shape(host_alpha), np.shape(omega)))
        return OverburdenTerms(zero, zero, host_alpha, host_beta, host_eps_real, np.ones_like(zero), 0.0)
    props = []
    for lay in layers:
        e = complex(lay.eps)
        a, b = _alpha_beta(e.real, -e.imag, lay.sigma, omega)
        props.append((lay.thickness_m, a, b, e.real))
    loss = 0.0
    shift = 0.0
    for k, (t, a, b, _) in enumerate(props):
        loss = loss + 2.0 * NP_TO_DB * a * t
        a2, b2 = (props[k + 1][1], props[k + 1][2]) if k + 1 < len(props) else (host_alpha, host_beta)
        r2 = _reflection_power_from_gamma(a, b, a2, b2)
        with np.errstate(divide="ignore"):
            loss = loss - 20.0 * np.log10(1.0 - r2)
        # vₖ/v_h = β_h/βₖ (phase velocities ω/β)
        shift = shift + t * (host_beta / b - 1.0)
    _, a1, b1, e1 = props[0]
    total = float(sum(p[0] for p in props))
    return OverburdenTerms(np.asarray(loss), np.asarray(shift), a1, b1, np.asarray(e1), b1 / host_beta, total)
