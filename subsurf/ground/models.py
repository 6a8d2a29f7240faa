"""The soil description type: site facts in, complex permittivity and DC conductivity out.

:class:`Soil` gathers what is known about a soil (moisture, texture or fractions,
density or porosity, temperature, pore water) and evaluates one of three published
dielectric models plus a bulk-conductivity model (Archie with Waxman–Smits clay
surface conduction).  Every numeric field may be a numpy array; fields broadcast
together (e.g. 2-D grids of shape (ny, nx)).
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields
from typing import Any, Literal

import numpy as np

from ..errors import InputError, SubsurfError, check_positive, check_range
from ._mapping import soil_kwargs_from_mapping
from ._validity import BULK_DENSITY_RANGE, PARTICLE_DENSITY_RANGE, check_density
from .conductivity import (
    cec_from_clay,
    ec25_from_tds,
    ec_from_ec25,
    qv_from_cec,
    salinity_from_ec25,
    waxman_smits_conductivity,
)
from .losses import SoilLossMixin, resolve_loss_facts
from .mixing import crim_permittivity, topp_permittivity
from .peplinski import peplinski_permittivity
from .presets import texture_preset
from .water import _relaxation_temperature, _temperature, water_conductivity, water_permittivity

__all__ = ["Soil", "DEFAULT_PORE_WATER_EC25", "DEFAULT_PARTICLE_DENSITY", "DEFAULT_PEPLINSKI_BULK_DENSITY"]

#: Pore-water EC at 25 °C used when none is given, S/m (500 µS/cm: common practice for
#: non-saline soil water and fresh groundwater, from memory).
DEFAULT_PORE_WATER_EC25 = 0.05
#: Particle density when neither the field nor a texture gives one, kg/m³ (common practice).
DEFAULT_PARTICLE_DENSITY = 2660.0
#: Bulk density assumed by the Peplinski model when nothing gives one (its function default).
DEFAULT_PEPLINSKI_BULK_DENSITY = 1500.0

_MODELS = ("crim", "peplinski", "topp")
_POROSITY_TOLERANCE = 0.02



def _first_bad(mask, *arrays):
    b = np.broadcast_arrays(mask, *arrays)
    i = np.flatnonzero(b[0])[0]
    return [a.ravel()[i] for a in b[1:]]


@dataclass(frozen=True, eq=False)
class Soil(SoilLossMixin):
    """A soil as the radar wave sees it.

    Parameters
    ----------
    moisture : float or array_like
        Volumetric water content θ (m³/m³), 0 <= θ <= porosity.
    texture : str, optional
        Preset from ``configs/textures.toml`` (``"sand"``, ``"loamy_sand"``, ``"loam"``,
        ``"silt_loam"``, ``"clay_loam"``, ``"clay"``); fills sand, clay, particle and
        bulk density unless those are given.
    sand, clay : float or array_like, optional
        Mass fractions of the mineral solids, 0–1, sand + clay <= 1.
    bulk_density : float or array_like, optional
        Dry bulk density in kg/m³, 0 < ρ_b < ρ_s.
    porosity : float or array_like, optional
        Porosity, 0–1 (exclusive).  When given with ``bulk_density`` the two must agree
        with 1 − ρ_b/ρ_s within 0.02; when given alone ρ_b = (1 − φ)ρ_s.
    particle_density : float or array_like, optional
        kg/m³; from the texture, else 2660 (common practice).
    temp_c : float or array_like
        Soil temperature in °C, >= 0 (liquid pore water).
    pore_water_salinity_psu, pore_water_ec25, pore_water_tds : float or array_like, optional
        At most one description of the pore water: practical salinity; EC at 25 °C in
        S/m; total dissolved solids in kg/m³ (EC25 by the common-practice factor 0.64).
        None of them: EC25 = 0.05 S/m (common practice, from memory).
    model : {"crim", "peplinski", "topp"}
        Dielectric model.  ``"crim"``: CRIM of solid (``eps_solid``), Debye pore water
        (Klein & Swift 1977, salinity from the pore water) and air.  ``"peplinski"``:
        Peplinski et al. (1995), whose ε'' already contains conduction (pore-water
        salinity is not used by it).  ``"topp"``: ε' = Ka(θ) of Topp et al. (1980) and
        ε'' = 0 — an apparent permittivity with no dispersion or dielectric loss, a
        limitation; losses then come from the DC conductivity only.
    eps_solid : float or array_like
        Relative permittivity of the mineral grains for CRIM, default 4.7 (the value
        (1.01 + 0.44 ρ_s)² − 0.062 ≈ 4.7 of Dobson et al. 1985 for ρ_s = 2.65 g/cm³).
    archie_a, archie_m, archie_n : float or array_like
        Archie tortuosity factor (1), cementation exponent (default 1.5, common
        practice for unconsolidated sediments) and saturation exponent (2).
    clay_cec : float or array_like, optional
        CEC of the clay fraction in eq/kg for the Waxman–Smits surface conduction.
    clay_mineral : str, optional
        Instead of ``clay_cec``: a mineral of the CEC table
        (:data:`~subsurf.soil.conductivity.CLAY_MINERAL_CEC`, Brady & Weil 2002 Table 8.1); neither given:
        the texture's mineral, else illite (0.25 eq/kg).
    interface_relaxation : bool
        Add the bound-water / clay–water interface loss (Jonscher term, model "crim"
        only; default True), proportional to the bound water (:func:`~subsurf.soil.losses.bound_water`).
        ``interface_n``, ``interface_chi_per_bound_water`` override
        the texture's parameters (see ``configs/textures.toml``; without a texture
        they are interpolated between the presets by clay fraction).
    stone_fraction, stone_size, eps_stone, stone_size_sd_log : float or array_like, optional
        Volume fraction (0 to 1 − porosity; default: the texture's, 0), median diameter
        in m (default 0.02), permittivity (5) and log-normal spread of stones, for the
        volume-scattering loss (:meth:`scattering_attenuation`).
    surface_roughness : float or array_like, optional
        rms height of the ground surface in m (default 0.01, common practice).

    Notes
    -----
    Fields broadcast together with numpy rules; a frequency passed to the methods
    must broadcast against them (e.g. ``freq[:, None]`` with fields of shape (n,)).
    Impossible input raises :class:`~subsurf.errors.InputError` at construction.
    """

    moisture: Any
    texture: str | None = None
    sand: Any = None
    clay: Any = None
    bulk_density: Any = None
    porosity: Any = None
    particle_density: Any = None
    temp_c: Any = 20.0
    pore_water_salinity_psu: Any = None
    pore_water_ec25: Any = None
    pore_water_tds: Any = None
    model: Literal["crim", "peplinski", "topp"] = "crim"
    eps_solid: Any = 4.7
    archie_a: Any = 1.0
    archie_m: Any = 1.5
    archie_n: Any = 2.0
    clay_cec: Any = None
    clay_mineral: str | None = None
    interface_relaxation: bool = True
    interface_n: Any = None
    interface_chi_per_bound_water: Any = None
    stone_fraction: Any = None
    stone_size: Any = None
    eps_stone: Any = None
    stone_size_sd_log: Any = 0.0
    surface_roughness: Any = None
    _r: dict = field(init=False, repr=False, compare=False)

    # ------------------------------------------------------------------ construction
    def __post_init__(self):
        if self.model not in _MODELS:
            raise InputError(f"model must be one of {', '.join(_MODELS)}, got {self.model!r}")
        preset = texture_preset(self.texture) if self.texture is not None else {}
        r: dict[str, Any] = {}
        r["moisture"] = check_range("moisture", self.moisture, 0.0, 1.0, unit="m³/m³")
        r["temp_c"] = _relaxation_temperature(self.temp_c)
        for name in ("sand", "clay"):
            v = getattr(self, name)
            v = preset.get(name) if v is None else v
            r[name] = None if v is None else check_range(name, v, 0.0, 1.0, unit="(mass fraction)")
        if r["sand"] is not None and r["clay"] is not None:
            tot = r["sand"] + r["clay"]
            if np.any(tot > 1.0 + 1e-12):
                raise InputError(f"sand + clay must be <= 1, got {tot[tot > 1.0 + 1e-12].ravel()[0]:.6g}; "
                                 "allowed range 0 to 1")
        rs = self.particle_density
        rs = preset.get("particle_density", DEFAULT_PARTICLE_DENSITY) if rs is None else rs
        r["particle_density"] = check_density("particle_density", rs, *PARTICLE_DENSITY_RANGE)
        self._resolve_density(r, preset)
        if r["porosity"] is not None and np.any(r["moisture"] > r["porosity"]):
            m, p = _first_bad(r["moisture"] > r["porosity"], r["moisture"], r["porosity"])
            raise InputError(f"moisture must be <= porosity, got moisture {m:.6g} with porosity {p:.6g}; "
                             "allowed range 0 to porosity")
        r["eps_solid"] = check_range("eps_solid", self.eps_solid, 1.0, 100.0)
        r["archie_a"] = check_positive("archie_a", self.archie_a)
        r["archie_m"] = check_range("archie_m", self.archie_m, 1.0, 5.0)
        r["archie_n"] = check_range("archie_n", self.archie_n, 1.0, 5.0)
        self._resolve_pore_water(r)
        resolve_loss_facts(self, preset, r)
        if self.model == "peplinski" and (r["sand"] is None or r["clay"] is None):
            raise InputError("model 'peplinski' needs sand and clay fractions (0-1) or a texture preset")
        if self.model == "crim" and r["porosity"] is None:
            raise InputError("model 'crim' needs porosity (0-1), bulk_density (kg/m³) or a texture preset")
        try:
            r["shape"] = np.broadcast_shapes(*(np.shape(v) for v in r.values() if v is not None))
        except ValueError:
            shapes = {k: np.shape(v) for k, v in r.items() if v is not None and np.ndim(v)}
            raise InputError(f"Soil fields must broadcast together, got shapes {shapes}") from None
        object.__setattr__(self, "_r", r)

    def _resolve_density(self, r, preset):
        rs = r["particle_density"]
        rb = None if self.bulk_density is None else check_density("bulk_density", self.bulk_density,
                                                                   *BULK_DENSITY_RANGE)
        phi = None
        if self.porosity is not None:
            phi = check_range("porosity", self.porosity, 0.0, 1.0)
            if np.any((phi <= 0) | (phi >= 1)):
                raise InputError(f"porosity must be strictly between 0 and 1, got "
                                 f"{phi[(phi <= 0) | (phi >= 1)].ravel()[0]:.6g}")
        if rb is None and phi is None and "bulk_density" in preset:
            rb = np.asarray(preset["bulk_density"])
        if rb is not None and np.any(rb >= rs):
            b, s = _first_bad(rb >= rs, rb, rs)
            raise InputError(f"bulk_density must be < particle_density, got {b:.6g} kg/m³ with particle_density "
                             f"{s:.6g} kg/m³; allowed range 0 < bulk_density < particle_density")
        if rb is not None and phi is not None:
            implied = 1.0 - rb / rs
            if np.any(np.abs(implied - phi) > _POROSITY_TOLERANCE):
                p, q = _first_bad(np.abs(implied - phi) > _POROSITY_TOLERANCE, phi, implied)
                raise InputError(f"porosity {p:.6g} disagrees with 1 - bulk_density/particle_density = {q:.6g}; "
                                 f"give one of them, or make them agree within {_POROSITY_TOLERANCE}")
        elif rb is not None:
            phi = 1.0 - rb / rs
        elif phi is not None:
            rb = (1.0 - phi) * rs
        r["bulk_density"], r["porosity"] = rb, phi

    def _resolve_pore_water(self, r):
        given = [n for n in ("pore_water_salinity_psu", "pore_water_ec25", "pore_water_tds")
                 if getattr(self, n) is not None]
        if len(given) > 1:
            raise InputError(f"give at most one of pore_water_salinity_psu, pore_water_ec25, pore_water_tds; "
                             f"got {', '.join(given)}")
        r["salinity"] = r["ec25"] = None
        if given == ["pore_water_salinity_psu"]:
            r["salinity"] = check_range("pore_water_salinity_psu", self.pore_water_salinity_psu, 0.0, 50.0)
            return
        if given == ["pore_water_tds"]:
            tds = check_range("pore_water_tds", self.pore_water_tds, 0.0, 60.0, unit="kg/m³")
            ec25 = ec25_from_tds(tds)
        elif given == ["pore_water_ec25"]:
            ec25 = check_range("pore_water_ec25", self.pore_water_ec25, 0.0, 10.0, unit="S/m")
        else:
            ec25 = np.asarray(DEFAULT_PORE_WATER_EC25)
        r["ec25"] = np.asarray(ec25)
        r["salinity"] = np.asarray(salinity_from_ec25(ec25))

    # ------------------------------------------------------------------ derived values
    @property
    def conduction_in_eps(self) -> bool:
        """True when the model's ε'' already holds conduction losses (Peplinski), so σ is 0."""
        return self.model == "peplinski"

    @property
    def shape(self) -> tuple:
        """Broadcast shape of the fields."""
        return self._r["shape"]

    @property
    def porosity_value(self):
        """Porosity used by the models (given, or 1 − ρ_b/ρ_s); None when unknown."""
        return self._r["porosity"]

    @property
    def bulk_density_value(self):
        """Dry bulk density in kg/m³ used by the models; None when unknown."""
        return self._r["bulk_density"]

    @property
    def pore_water_salinity(self):
        """Practical salinity of the pore water (sea-salt equivalent)."""
        return self._r["salinity"]

    def pore_water_conductivity(self, temp_c=None):
        """Pore-water conductivity in S/m at ``temp_c`` (default: the soil temperature).

        From the salinity by PSS-78 (:func:`~subsurf.soil.water.water_conductivity`), or
        from EC25 with the common-practice 2 %/°C linear correction.
        """
        t = self._r["temp_c"] if temp_c is None else _temperature(temp_c)
        if self._r["ec25"] is not None:
            return ec_from_ec25(self._r["ec25"], t)
        return water_conductivity(self._r["salinity"], t)

    def saturation(self):
        """Water saturation θ/φ (requires porosity)."""
        return self._r["moisture"] / self._need_porosity("saturation")

    def _need_porosity(self, what):
        if self._r["porosity"] is None:
            raise InputError(f"Soil.{what} needs porosity (0-1), bulk_density (kg/m³) or a texture preset")
        return self._r["porosity"]

    # ------------------------------------------------------------------ the outputs
    def permittivity(self, freq_hz):
        """Complex relative permittivity ε = ε' − jε'' (dielectric part) at ``freq_hz``.

        Parameters
        ----------
        freq_hz : float or array_like
            Frequency in Hz, > 0, broadcastable against the fields.

        Returns
        -------
        complex or ndarray of complex
            For ``"peplinski"`` ε'' includes the model's conduction loss; for ``"crim"``
            only the water relaxation loss; for ``"topp"`` ε'' = 0.
        """
        f = check_positive("freq_hz", freq_hz, unit="Hz")
        r = self._r
        try:
            np.broadcast_shapes(np.shape(f), r["shape"])
        except ValueError:
            raise InputError(f"freq_hz of shape {np.shape(f)} does not broadcast against the soil fields of "
                             f"shape {r['shape']}; e.g. pass freq[:, None] for fields of shape (n,)") from None
        if self.model == "crim":
            water = water_permittivity(f, r["temp_c"], r["salinity"])
            eps = crim_permittivity(r["moisture"], r["porosity"], r["eps_solid"], water, 1.0)
            if r["interface_chi"] is not None:
                eps = self._add_interface(eps, f)
            return eps
        if self.model == "peplinski":
            rb = r["bulk_density"]
            rb = DEFAULT_PEPLINSKI_BULK_DENSITY if rb is None else rb
            return peplinski_permittivity(f, r["moisture"], r["sand"], r["clay"], rb,
                                          r["particle_density"], r["temp_c"])
        ka = topp_permittivity(r["moisture"])
        out = np.asarray(ka + 0.0 * f, dtype=complex)
        return out[()] if out.ndim == 0 else out

    def conductivity(self):
        """DC bulk conductivity in S/m (Archie with Waxman–Smits clay surface conduction).

        Notes
        -----
        σ = φ^m S^(n−1)(S σ_w + B Q_v)/a with S = θ/φ, σ_w from
        :meth:`pore_water_conductivity`, Q_v from the clay fraction via
        ``clay_cec`` (0 without clay, which is Archie's law).
        """
        r = self._r
        phi = self._need_porosity("conductivity")
        sat = np.minimum(r["moisture"] / phi, 1.0)
        clay = r["clay"] if r["clay"] is not None else 0.0
        qv = qv_from_cec(cec_from_clay(clay, clay_cec=r["clay_cec"]), phi, r["particle_density"])
        out = waxman_smits_conductivity(self.pore_water_conductivity(), phi, sat, qv=qv,
                                        a=r["archie_a"], m=r["archie_m"], n=r["archie_n"], temp_c=r["temp_c"])
        out = np.broadcast_to(out, r["shape"]).copy() if np.shape(out) != r["shape"] else out
        return out[()] if isinstance(out, np.ndarray) and out.ndim == 0 else out

    def electrical(self, freq_hz):
        """(ε, σ) for the propagation code, never counting conduction twice.

        Returns
        -------
        eps : complex or ndarray of complex
            :meth:`permittivity` at ``freq_hz``.
        sigma : float or ndarray
            DC conductivity in S/m, broadcast to ``eps``'s shape; **0 for the
            ``"peplinski"`` model**, whose ε'' already holds its conduction loss
            (:attr:`conduction_in_eps` is True).
        """
        eps = self.permittivity(freq_hz)
        sigma = 0.0 if self.conduction_in_eps else self.conductivity()
        sigma = np.broadcast_to(np.asarray(sigma, dtype=float), np.shape(eps)).copy()
        return eps, (sigma[()] if sigma.ndim == 0 else sigma)

    # ------------------------------------------------------------------ edge input
    @classmethod
    def from_mapping(cls, mapping: dict, *, source: str = "<input>") -> Soil:
        """Build a Soil from a TOML-like mapping whose keys are the field names.

        Numbers are SI (fractions, kg/m³, S/m, °C, kg/m³ for TDS); strings may carry
        units (``"25 %"``, ``"1.6 g/cm3"``, ``"12 mS/m"``, ``"20 degC"``); lists become
        arrays.  Errors are :class:`~subsurf.errors.InputError` naming ``source``,
        the field, the value and the allowed range.
        """
        kwargs = soil_kwargs_from_mapping(mapping, [f.name for f in fields(cls) if f.init], source=source)
        if "moisture" not in kwargs:
            raise InputError(f"{source}: soil field 'moisture' is required (volumetric fraction 0-1, e.g. '25 %')")
        try:
            return cls(**kwargs)
        except SubsurfError as exc:
            raise InputError(f"{source}: {exc}") from None

