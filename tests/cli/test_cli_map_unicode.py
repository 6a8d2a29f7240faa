"""A scenario named with non-ASCII letters ('wét'): mapped, and its name read back by outside readers.

The NetCDF label is read with netCDF4 (Unidata's library, not subsurf's reader): as text through
the variable's ``_Encoding`` attribute, and as the raw char bytes, which must be the name's UTF-8
encoding (netCDF Users Guide, "Strings and Variables of type char": char data are bytes, and the
``_Encoding`` attribute names their encoding; CF 1.8 section 2.2 allows UTF-8 in char text).  The
GDAL band names (PAM sidecar) and the GeoTIFF tags are read through GDAL (rasterio).
"""

from __future__ import annotations

import subprocess
import sys

import pytest
from example_site import coarse_copy

NAME = "wét"  # e with acute accent: two bytes in UTF-8


@pytest.fixture(scope="module")
def mapped(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("map_unicode")
    survey = coarse_copy(tmp)
    text = survey.read_text(encoding="utf-8")
    assert 'name = "wet"' in text
    survey.write_text(text.replace('name = "wet"', f'name = "{NAME}"'), encoding="utf-8")
    out = tmp / "out"
    proc = subprocess.run([sys.executable, "-m", "subsurf", "map", str(survey), "--out", str(out), "--quiet"],
                          capture_output=True, text=True, encoding="utf-8", timeout=300)
    return proc, out


def test_map_with_non_ascii_scenario_succeeds(mapped):
    """Exit 0 and the name in the printed table (it was refused as 'not UTF-8 text')."""
    proc, out = mapped
    assert proc.returncode == 0, proc.stderr
    assert NAME in proc.stdout
    assert (out / "feasibility.nc").is_file()


def test_netcdf_label_reads_back_with_netcdf4(mapped):
    """netCDF4 gives the name back, decoded through _Encoding and from the raw UTF-8 bytes alike."""
    import netCDF4

    _, out = mapped
    with netCDF4.Dataset(out / "feasibility.nc") as nc:
        v = nc["scenario_name"]
        assert v.dtype == "S1" and v.getncattr("_Encoding") == "utf-8"
        assert [str(s) for s in v[:]] == ["dry", NAME]
        v.set_auto_chartostring(False)
        v.set_auto_mask(False)  # the NUL padding is the char fill value: keep it as bytes
        raw = [b"".join(row.tolist()).rstrip(b"\0") for row in v[:]]
        # the string length is the longest name's bytes (4 for 'wét'), not its characters (3)
        assert len(nc.dimensions[v.dimensions[1]]) == len(NAME.encode("utf-8")) == 4
    assert raw == [b"dry", NAME.encode("utf-8")]


def test_gdal_band_names_and_geotiffs_carry_the_name(mapped):
    """GDAL reads 'wét / <antenna>' band names from the sidecar; the GeoTIFF tags say 'wét', file names stay ASCII."""
    rasterio = pytest.importorskip("rasterio")
    _, out = mapped
    with rasterio.open(f"netcdf:{out / 'feasibility.nc'}:max_depth") as src:
        names = [d.split(" / ")[0] for d in src.descriptions]
    assert names.count(NAME) == names.count("dry") == len(names) // 2
    tifs = sorted((out / "geotiff").glob("max_depth__wet__*.tif"))  # accent folded: an ASCII file name
    assert tifs
    for tif in tifs:
        with rasterio.open(tif) as t:
            assert t.tags()["scenario"] == NAME
    assert all(p.name.isascii() for p in out.rglob("*"))
    assert (out / "map_antennas__wet.png").is_file()


def test_cf_checker_accepts_the_utf8_label(mapped):
    """cfchecker (NCAS CF checker, CF-1.8 rules, offline tables of tests/io/cf_tables): 0 errors, 0 warnings."""
    from pathlib import Path

    try:
        import cfchecker.cfchecks  # noqa: F401 - its cfunits raises FileNotFoundError without the udunits2 C library
    except (ImportError, FileNotFoundError, OSError) as exc:
        pytest.skip(f"cfchecker or the udunits2 library it needs (Debian libudunits2-0) is missing: {exc}")
    _, out = mapped
    tables = Path(__file__).resolve().parents[1] / "io" / "cf_tables"
    r = subprocess.run([sys.executable, "-c", "from cfchecker.cfchecks import main; main()", "-v", "1.8",
                        "-s", str(tables / "standard-name-table.xml"), "-a", str(tables / "area-type-table.xml"),
                        "-r", str(tables / "region-names.xml"), str(out / "feasibility.nc")],
                       capture_output=True, text=True, timeout=300)
    assert "ERRORS detected: 0" in r.stdout and "WARNINGS given: 0" in r.stdout, r.stdout[-3000:]
