"""The jobs of subsurf as plain Python calls, for notebooks and scripts.

Each function here is one job a practitioner does, built on the library layers (nothing is
re-derived): the ground's radar properties, antenna choice for a target, the acquisition
plan, time → depth with uncertainty, velocity fits, feasibility maps in memory, the report.
Every argument takes plain SI numbers/arrays or pint Quantities (converted, or refused
with one line); antennas may be given by catalogue name or as objects.

These names are importable from the package root: ``subsurf.ground_properties(...)``
(the layer packages keep their own names: ``subsurf.ground`` is the ground layer).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from .quantities import accepts_quantities

__all__ = [
    "medium",
    "ground_properties",
    "target",
    "choose_antenna",
    "plan_survey",
    "load_survey",
    "feasibility_maps",
    "open_map",
    "write_report",
]


@accepts_quantities(eps_r="dimensionless", sigma="S/m")
def medium(*, eps_r=None, sigma=None, soil=None, label: str | None = None):
    """The ground as the wave sees it, from constants or from soil facts.

    Parameters
    ----------
    eps_r : complex or float, optional
        Relative permittivity ε' − jε'' of a ground given directly (with ``sigma``).
    sigma : float, optional
        DC conductivity (S/m) of a ground given directly.
    soil : subsurf.ground.Soil or mapping, optional
        A :class:`~subsurf.ground.Soil`, or its facts as a mapping with the keys of a
        ``--soil`` file (``{"texture": "loam", "moisture": "20 %"}``).
    label : str, optional
        Name shown in outputs.

    Returns
    -------
    subsurf.ground.medium.Medium
    """
    from .errors import InputError
    from .ground import Soil
    from .ground.medium import Medium

    if soil is not None:
        if eps_r is not None or sigma is not None:
            raise InputError("give the ground either as eps_r and sigma or as soil facts, not both")
        if isinstance(soil, Mapping):
            facts = dict(soil)
            soil = Soil.from_mapping(facts, source="soil facts")
        elif isinstance(soil, Soil):
            facts = {}
        else:
            raise InputError(f"soil must be a subsurf.ground.Soil or a mapping of soil facts, "
                             f"got {type(soil).__name__}")
        return Medium(label=label or "soil", facts=facts, soil=soil)
    if eps_r is None or sigma is None:
        raise InputError("give the ground as eps_r and sigma (S/m), or as soil facts (soil=...)")
    eps = complex(eps_r)
    return Medium(label=label or f"eps_r={eps.real:g}, sigma={float(sigma):g} S/m",
                  facts={"eps_real": eps.real, "sigma_s_per_m": float(sigma)},
                  eps_const=eps, sigma_const=float(sigma))


@accepts_quantities(freq_hz="Hz")
def ground_properties(medium, freq_hz):
    """Radar properties of ``medium`` (from :func:`medium`) at each frequency, as an xarray Dataset.

    Returns
    -------
    xarray.Dataset
        Over ``freq`` (Hz): ``eps_real``, ``eps_imag``, ``sigma`` (S/m), ``velocity`` (m/s,
        phase velocity ω/β), ``wavelength`` (m), ``attenuation`` (dB/m, one way),
        ``skin_depth`` (m), ``loss_tangent``; units in each variable's attributes.
    """
    import numpy as np
    import xarray as xr

    from .waves.propagation import wave_properties

    f = np.atleast_1d(np.asarray(freq_hz, dtype=float))
    eps, sig = medium.electrical(f)
    w = wave_properties(eps, sig, f)
    layers = {
        "eps_real": (np.real(eps), "1", "relative permittivity, real part ε'"),
        "eps_imag": (-np.imag(eps), "1", "relative permittivity, loss part ε''"),
        "sigma": (np.broadcast_to(sig, f.shape), "S/m", "DC conductivity"),
        "velocity": (w.velocity, "m/s", "phase velocity ω/β"),
        "wavelength": (w.wavelength, "m", "wavelength 2π/β in the ground"),
        "attenuation": (w.attenuation_db_per_m, "dB/m", "one-way attenuation 8.686 α"),
        "skin_depth": (w.skin_depth, "m", "skin depth 1/α"),
        "loss_tangent": (w.loss_tangent, "1", "loss tangent (ε'' + σ/ωε₀)/ε'"),
    }
    ds = xr.Dataset({k: ("freq", np.asarray(v, dtype=float), {"units": u, "long_name": n})
                     for k, (v, u, n) in layers.items()},
                    coords={"freq": ("freq", f, {"units": "Hz"})})
    ds.attrs["ground"] = medium.label
    return ds


@accepts_quantities(depth_m="m", size_m="m", sigma="S/m", eps="dimensionless")
def target(kind: str, *, depth_m=None, size_m=None, material: str | None = None, eps=None,
           sigma: float = 0.0, reflection=None):
    """A target (``"planar"``, ``"point"`` or ``"line"``) from a material name or explicit values.

    See :func:`subsurf.planning.antennas.make_target`; lengths take Quantities (``Q_(120, "cm")``).
    """
    from .planning.antennas import make_target

    return make_target(kind, depth_m=depth_m, size_m=size_m, material=material, eps=eps, sigma=sigma,
                       reflection=reflection)


def _antennas(antennas, catalogue):
    from .errors import InputError
    from .planning.antennas import get_antenna, load_catalogue

    table = load_catalogue(catalogue)
    if antennas is None:
        return list(table.values())
    if isinstance(antennas, str) or not isinstance(antennas, Sequence):
        antennas = [antennas]
    out = []
    for a in antennas:
        if isinstance(a, str):
            out.append(get_antenna(a, table))
        elif hasattr(a, "centre_freq_hz"):
            out.append(a)
        else:
            raise InputError(f"antennas: give catalogue names or Antenna objects, got {type(a).__name__}")
    return out


def choose_antenna(medium, target, *, antennas=None, catalogue=None) -> dict:
    """Rank antennas for ``target`` (with its depth of interest) in ``medium``.

    Parameters
    ----------
    medium : from :func:`medium`
    target : from :func:`target`, with ``depth_m`` set
    antennas : sequence of str or Antenna, optional
        Catalogue names or :class:`~subsurf.planning.antennas.Antenna` objects; default all.
    catalogue : path, optional
        A catalogue TOML file of your own instead of the bundled illustrative one.

    Returns
    -------
    dict
        ``rows`` (one dict per antenna, SI units, with its verdict), ``recommended`` (name or
        None) and ``reason``.
    """
    from .planning.antennas import rank_antennas, recommend

    rows = rank_antennas(medium.electrical, _antennas(antennas, catalogue), target)
    name, reason = recommend(rows)
    return {"rows": rows, "recommended": name, "reason": reason}


@accepts_quantities(depth_m="m", area_m2="m**2")
def plan_survey(medium, antenna, *, target=None, depth_m=None, area_m2=None, catalogue=None) -> dict:
    """Acquisition settings for one antenna (a name or an object) in ``medium``.

    Returns the same content as ``subsurf setup --json``: settings in human units (ns, m, h),
    the rule behind each, notes and the caution.
    """
    from .planning.plan import acquisition_for_antenna

    (ant,) = _antennas([antenna], catalogue)
    return acquisition_for_antenna(medium, ant, target=target, depth_m=depth_m, area_m2=area_m2)


def load_survey(path):
    """Read and validate a survey file (TOML) and the files it refers to."""
    from .site.survey import load_survey as load

    return load(path)


def feasibility_maps(survey):
    """Feasibility maps of a survey, in memory, as one labelled :class:`xarray.Dataset`.

    ``survey`` is a path or a loaded survey.  Layers have dims (scenario, antenna, y, x) and
    are selectable by name (``ds.max_depth.sel(antenna="midband-500", scenario="wet")``);
    the CRS is attached for rioxarray (``ds.rio.crs``) when rioxarray is installed.
    """
    from .site.maps import compute_maps

    if not hasattr(survey, "grid_crs"):
        survey = load_survey(survey)
    ds = compute_maps(survey).dataset
    try:
        import rioxarray  # noqa: F401  (registers the .rio accessor)
    except ImportError:  # pragma: no cover - rioxarray is a base dependency
        return ds
    return ds.rio.write_crs(survey.grid_crs.to_wkt())


def open_map(path, *, chunks=None):
    """Open a map written by ``subsurf map`` or ``subsurf region`` (CF NetCDF) as an :class:`xarray.Dataset`.

    Antenna and scenario names are selectable again
    (``ds.max_depth.sel(antenna="midband-500", scenario="wet")``) and the CRS is attached for
    rioxarray (``ds.rio.crs``); ``chunks={}`` reads lazily (dask), for regional maps.
    """
    from .io.netcdf import read_netcdf

    return read_netcdf(path, chunks=chunks)


def write_report(survey_path, out_path, *, force: bool = False):
    """Write the self-contained HTML planning report of a survey; returns its summary."""
    from .io.report.build import make_report

    return make_report(survey_path, out_path, force=force, quiet=True)
