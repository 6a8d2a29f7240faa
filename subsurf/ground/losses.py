"""Loss facts of a soil (interface relaxation, stones, roughness, clay CEC) and loss per mechanism.

:func:`resolve_loss_facts` turns the optional loss fields of :class:`subsurf.soil.Soil`
into validated arrays, filling what is not given from the texture preset or, without a
texture, from the presets interpolated by clay fraction (the split of α by mechanism is
:func:`subsurf.waves.attenuation.loss_by_mechanism`).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..errors import InputError, check_nonnegative, check_positive, check_range
from .conductivity import CLAY_CEC, clay_cec_of_mineral
from .relaxation import JONSCHER_REFERENCE_FREQ_HZ
from .roughness import SURFACE_ROUGHNESS_M
from .scattering import STONE_PERMITTIVITY

__all__ = ["SoilLossMixin", "INTERFACE_PIN_FREQ_HZ", "resolve_loss_facts", "interface_defaults", "bound_water", "DEFAULT_STONE_SIZE"]

#: Median stone diameter used when a stone fraction is given without a size, m (fine–medium
#: gravel, common practice).
DEFAULT_STONE_SIZE = 0.02
#: Frequency at which the interface term leaves the CRIM ε' unchanged, Hz (see SoilLossMixin.interface_susceptibility).
INTERFACE_PIN_FREQ_HZ = 500e6


#: Low-frequency corner of the interface term, Hz: below it the power law levels off (Cole–Davidson).
#: The Jonscher fits of Hollender & Tillard (1998) cover GPR frequencies (tens of MHz to ~1 GHz);
#: 1 MHz keeps the band untouched while bounding ε at DC (an assumption, not a fitted value).
INTERFACE_LOW_CORNER_HZ = 1e6


def interface_factor(freq_hz, n):
    """(f_c/f_r)^(n−1)·(1 + j f/f_c)^(n−1)/sin(nπ/2) of the interface term, in real arithmetic.

    For f >> f_c it tends to (f/f_r)^(n−1)(1 − j cot(nπ/2)), the Jonscher form; the branch
    point at f = j f_c lies in the upper half-plane, so the term is causal (exp(jωt)).
    """
    f = np.asarray(freq_hz, dtype=float)
    nn = np.asarray(n, dtype=float)
    x = f / INTERFACE_LOW_CORNER_HZ
    e = nn - 1.0
    mag = np.exp(e * (0.5 * np.log1p(x * x) + np.log(INTERFACE_LOW_CORNER_HZ / JONSCHER_REFERENCE_FREQ_HZ)))
    mag = mag / np.sin(0.5 * np.pi * nn)
    ph = e * np.arctan(x)
    return mag * np.cos(ph) + 1j * (mag * np.sin(ph))


class SoilLossMixin:
    """The loss methods of :class:`subsurf.soil.Soil` (its resolved fields live in ``self._r``)."""

    def interface_susceptibility(self, freq_hz):
        """The interface (bound-water / clay–water) term of :meth:`permittivity`; 0 when off.

        χ(f) − χ'(f_pin), with χ the Jonscher term of the texture (Hollender & Tillard 1998)
        made finite below the band: χ_r/sin(nπ/2)·(f_c/f_r)^(n−1)·(1 + j f/f_c)^(n−1), a
        Cole–Davidson relaxation (Davidson & Cole 1951) of exponent 1 − n and corner f_c =
        1 MHz, identical to Jonscher's power law for f >> f_c (within 1 % above 50 MHz) and
        bounded at DC instead of diverging.  Less its real part at f_pin = 500 MHz, a real
        constant (a shift of ε∞, still causal), so that the CRIM ε' — calibrated like Topp's
        against TDR in this band — is kept at f_pin and the term adds the loss and the
        dispersion Kramers–Kronig ties to it.
        """
        r = self._r
        f = np.asarray(freq_hz, dtype=float)
        if r["interface_chi"] is None:
            return np.zeros(np.broadcast_shapes(np.shape(f), r["shape"]), dtype=complex)[()]
        chi, n = r["interface_chi"], r["interface_n"]
        return chi * (interface_factor(f, n) - interface_factor(INTERFACE_PIN_FREQ_HZ, n).real)

    def _add_interface(self, eps, f):
        """eps + :meth:`interface_susceptibility` (same values), fused in place on real and imaginary parts."""
        r = self._r
        chi, n = r["interface_chi"], r["interface_n"]
        f = np.asarray(f, dtype=float)
        out = np.array(np.broadcast_to(eps, np.broadcast_shapes(np.shape(eps), np.shape(chi), np.shape(f))),
                       dtype=complex)
        k = interface_factor(f, n)  # per frequency only when n is one value (a texture)
        k_pin = interface_factor(INTERFACE_PIN_FREQ_HZ, n).real
        out.real += chi * (k.real - k_pin)
        out.imag += chi * k.imag
        return out[()] if out.ndim == 0 else out

    def scattering_attenuation(self, freq_hz, *, eps=None):
        """Volume-scattering attenuation of the stones in Np/m (one way, amplitude); 0 without stones.

        ``eps`` (the :meth:`permittivity` at ``freq_hz``) may be passed to avoid recomputing it.
        See :func:`subsurf.soil.scattering.scattering_attenuation`.
        """
        from .scattering import scattering_attenuation

        r = self._r
        host = self.permittivity(freq_hz) if eps is None else eps
        shape = np.broadcast_shapes(np.shape(host), np.shape(r["stone_fraction"]))
        if not np.any(r["stone_fraction"] > 0):
            return np.zeros(shape)[()]
        return scattering_attenuation(freq_hz, np.maximum(np.real(host), 1.0), stone_fraction=r["stone_fraction"],
                                      stone_size=r["stone_size"], eps_stone=r["eps_stone"],
                                      size_sd_log=r["stone_size_sd_log"])

    @property
    def loss_facts(self) -> dict:
        """The resolved loss facts (SI): clay CEC, interface n and χ, stones, surface roughness."""
        r = self._r
        keys = ("clay_cec", "interface_n", "interface_chi", "stone_fraction", "stone_size", "eps_stone",
                "stone_size_sd_log", "surface_roughness")
        return {k: r[k] for k in keys}



@lru_cache(maxsize=1)
def _interface_table():
    from .presets import load_textures

    rows = sorted((v["clay"], v["interface_n"], v["interface_chi_per_bound_water"])
                  for v in load_textures().values() if "interface_n" in v and "interface_chi_per_bound_water" in v)
    if not rows:
        raise InputError("configs/textures.toml gives no interface_n / interface_chi_per_bound_water to default from")
    return tuple(np.array(c) for c in zip(*rows))


def bound_water(moisture, clay):
    """Bound-water content θ_b = min(θ, θ_b,max), θ_b,max = 0.02863 + 0.30673·clay (m³/m³).

    θ_b,max is the maximal bound-water fraction of Mironov et al. (2009), written for the
    clay mass fraction (their eq. 19, m_vt = 0.02863 + 0.30673e-2·C with C in %; the
    coefficients agree with independent public implementations of the paper).

    References
    ----------
    Mironov, V. L., Kosolapova, L. G., & Fomin, S. V. (2009). Physically and
    mineralogically based spectroscopic dielectric model for moist soils. IEEE Trans.
    Geosci. Remote Sens., 47(7), 2059–2070. doi:10.1109/TGRS.2008.2011631
    """
    c = np.asarray(0.0 if clay is None else clay, dtype=float)
    return np.minimum(np.asarray(moisture, dtype=float), 0.02863 + 0.30673 * c)


def interface_defaults(clay):
    """(n, χ per unit moisture) of the interface relaxation for a clay fraction, by linear
    interpolation between the texture presets (held constant beyond the first and last)."""
    c, n, chi = _interface_table()
    x = np.asarray(0.0 if clay is None else clay, dtype=float)
    return np.interp(x, c, n), np.interp(x, c, chi)


def resolve_loss_facts(soil, preset: dict, r: dict) -> None:
    """Validate the loss fields of ``soil`` into ``r`` (in place); errors name the field and range."""
    # clay surface conduction: explicit CEC, else the mineral's, else the texture's mineral, else the default
    if soil.clay_cec is not None and soil.clay_mineral is not None:
        raise InputError("give clay_cec or clay_mineral, not both")
    if soil.clay_cec is not None:
        r["clay_cec"] = check_range("clay_cec", soil.clay_cec, 0.0, 2.0, unit="eq/kg")
    else:
        mineral = soil.clay_mineral if soil.clay_mineral is not None else preset.get("clay_mineral")
        r["clay_cec"] = np.asarray(CLAY_CEC if mineral is None else clay_cec_of_mineral(mineral))
    # interface (bound-water / clay-water) relaxation, Jonscher form
    n_def, chi_def = interface_defaults(r["clay"])
    n_def = preset.get("interface_n", n_def)
    chi_def = preset.get("interface_chi_per_bound_water", chi_def)
    n = check_range("interface_n", n_def if soil.interface_n is None else soil.interface_n, 0.0, 1.0)
    if np.any((n <= 0) | (n >= 1)):
        raise InputError(f"interface_n must be strictly between 0 and 1, got {n[(n <= 0) | (n >= 1)].ravel()[0]:.6g}")
    chi = soil.interface_chi_per_bound_water
    chi = check_range("interface_chi_per_bound_water", chi_def if chi is None else chi, 0.0, 1000.0)
    on = bool(soil.interface_relaxation) and soil.model == "crim"
    r["interface_n"], r["interface_chi"] = n, (chi * bound_water(r["moisture"], r["clay"]) if on else None)
    # stones (volume scatterers)
    fv = soil.stone_fraction if soil.stone_fraction is not None else preset.get("stone_fraction", 0.0)
    fv = check_range("stone_fraction", fv, 0.0, 1.0, unit="(volume fraction)")
    if r["porosity"] is not None and np.any(fv > 1.0 - r["porosity"] + 1e-12):
        b = np.broadcast_arrays(fv > 1.0 - r["porosity"] + 1e-12, fv, r["porosity"])
        i = np.flatnonzero(b[0])[0]
        raise InputError(f"stone_fraction must be <= 1 - porosity = {1 - b[2].ravel()[i]:.4g} (stones are part "
                         f"of the solids), got {b[1].ravel()[i]:.6g}; allowed range 0 to 1 - porosity")
    size = soil.stone_size if soil.stone_size is not None else preset.get("stone_size", DEFAULT_STONE_SIZE)
    r["stone_fraction"] = fv
    r["stone_size"] = check_positive("stone_size", size, unit="m")
    r["eps_stone"] = check_range("eps_stone", STONE_PERMITTIVITY if soil.eps_stone is None else soil.eps_stone,
                                 1.0, 100.0)
    r["stone_size_sd_log"] = check_range("stone_size_sd_log", soil.stone_size_sd_log, 0.0, 2.0)
    rough = SURFACE_ROUGHNESS_M if soil.surface_roughness is None else soil.surface_roughness
    r["surface_roughness"] = check_range("surface_roughness", rough, 0.0, 1.0, unit="m")
    check_nonnegative("surface_roughness", r["surface_roughness"])
