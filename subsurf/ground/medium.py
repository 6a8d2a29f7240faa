"""The ground as the wave sees it, given either as constants (ε, σ) or as a soil description."""

from __future__ import annotations

from dataclasses import dataclass, field

__all__ = ["Medium"]


@dataclass
class Medium:
    """The ground as the wave sees it: ε(f) and σ, with a label and the facts used.

    For a direct description (``eps_const``, ``sigma_const``) the dielectric loss may be
    given a frequency dependence by ``q`` (dielectric Q of Kjartansson's constant-Q
    permittivity, :func:`subsurf.soil.relaxation.constant_q_permittivity`, with ε' =
    ``eps_const.real`` at ``reference_freq_hz``); without it ε is constant and the only
    frequency dependence of the loss is that of conduction (``loss_note`` says so).
    """

    label: str
    facts: dict = field(default_factory=dict)
    eps_const: complex | None = None
    sigma_const: float | None = None
    soil: object | None = None  # subsurf.soil.Soil
    q: float | None = None
    reference_freq_hz: float = 100e6
    loss_note: str | None = None

    def electrical(self, freq_hz):
        """Return (eps, sigma) at ``freq_hz`` without counting conduction twice."""
        import numpy as np

        if self.soil is not None:
            return self.soil.electrical(freq_hz)
        f = np.asarray(freq_hz, dtype=float)
        sigma = np.full(f.shape, self.sigma_const)
        if self.q is not None and np.isfinite(self.q):
            from .relaxation import constant_q_permittivity

            eps = constant_q_permittivity(f, self.eps_const.real, self.q, reference_freq_hz=self.reference_freq_hz)
            return np.asarray(eps, dtype=complex) + 1j * self.eps_const.imag, sigma
        return np.full(f.shape, self.eps_const, dtype=complex), sigma
