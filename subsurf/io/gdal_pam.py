"""Band names for GIS software: a GDAL PAM sidecar (``<file>.aux.xml``) beside a CF NetCDF.

GDAL's netCDF driver (and QGIS, which builds band names from it) labels the bands of a layer
with extra dimensions, e.g. ``max_depth(scenario, antenna, y, x)``, only by their 1-based
positions (``NETCDF_DIM_scenario=1``, ``NETCDF_DIM_antenna=2``): it does not read CF label
variables such as ``antenna_name``, and no CF-valid encoding makes it show the names
(measured with GDAL 3.10; see tests/cli/test_cli_map_gdal.py).  GDAL's own Persistent
Auxiliary Metadata file (https://gdal.org/en/stable/user/raster_data_model.html, "PAM") is
read for every sub-dataset of the NetCDF: one ``<Subdataset name="max_depth">`` section per
layer whose band descriptions are "wet / midband-500", in GDAL's band order (the extra
dimensions in the variable's order, the last varying fastest).  The NetCDF itself is
unchanged; xarray and CF readers ignore the sidecar.
"""

from __future__ import annotations

import itertools
from xml.sax.saxutils import escape, quoteattr

__all__ = ["band_names_xml", "aux_xml_path", "GDAL_SIDECARS"]

#: what GDAL (and QGIS through it) writes beside a raster it has read, derived from its pixels: the PAM
#: statistics and histograms (``<raster>.aux.xml``, e.g. ``gdalinfo -stats``) and external overviews
#: (``<raster>.ovr``: ``gdaladdo -ro``, QGIS "Build Pyramids"); stale once the raster is rewritten
GDAL_SIDECARS = (".aux.xml", ".ovr")


def aux_xml_path(netcdf_path):
    """Where GDAL looks for the PAM sidecar of ``netcdf_path``."""
    from pathlib import Path

    p = Path(netcdf_path)
    return p.with_name(p.name + ".aux.xml")


def _labels(ds, dim: str) -> list[str]:
    values = ds[dim].values if dim in ds.coords else range(1, ds.sizes[dim] + 1)
    return [str(v) if dim in ds.coords and ds[dim].dtype.kind in "OUS" else f"{dim} {v}" for v in values]


def band_names_xml(ds) -> str:
    """The PAM XML naming every band of every layer of ``ds`` that has dimensions before (y, x)
    (an empty document when no layer has)."""
    sections = []
    for name, var in ds.data_vars.items():
        dims = list(var.dims)
        if dims[-2:] != ["y", "x"] or len(dims) < 3:
            continue
        extra = dims[:-2]
        combos = list(itertools.product(*(_labels(ds, d) for d in extra)))  # one band (one antenna) named too
        bands = "".join(f'      <PAMRasterBand band="{i}">\n        <Description>{escape(" / ".join(c))}'
                        f"</Description>\n      </PAMRasterBand>\n" for i, c in enumerate(combos, start=1))
        sections.append(f'  <Subdataset name={quoteattr(str(name))}>\n    <PAMDataset>\n{bands}'
                        f"    </PAMDataset>\n  </Subdataset>\n")
    return f"<PAMDataset>\n{''.join(sections)}</PAMDataset>\n"
