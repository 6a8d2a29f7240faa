"""The ground as the wave sees it, given either as constants (ε, σ) or as a soil description."""

from __future__ import annotations

from dataclasses import dataclass, field

__all__ = ["Medium"]


@dataclass
class Medium:
    """The ground as the wave sees it: ε(f) and σ, with a label and the facts used."""

    label: str
    facts: dict = field(default_factory=dict)
    eps_const: complex | None = None
    sigma_const: float | None = None
    soil: object | None = None  # subsurf.soil.Soil

    def electrical(self, freq_hz):
        """Return (eps, sigma) at ``freq_hz`` without counting conduction twice."""
        import numpy as np

        if self.soil is not None:
            return self.soil.electrical(freq_hz)
        f = np.asarray(freq_hz, dtype=float)
        return np.full(f.shape, self.eps_const, dtype=complex), np.full(f.shape, self.sigma_const)
