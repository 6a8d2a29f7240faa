"""Checks of subsurf.picks: reading, validation, pyproj coordinates and safe writing."""

from pathlib import Path

import numpy as np
import pytest
from pyproj import Transformer

from subsurf.errors import FileInputError, InputError
from subsurf.io.picks import parse_crs, read_picks, transform_xy

EXAMPLES = Path(__file__).resolve().parents[2] / "surveys" / "picks"


def test_reads_projected_picks_with_crs_comment():
    """The utility example has six picks, EPSG:32633 from its comment, times in seconds."""
    t = read_picks(EXAMPLES / "fictional_utility_picks.csv")
    assert len(t) == 6
    assert t.crs.to_epsg() == 32633
    assert t.position_kind == "projected"
    assert t.twt_s[0] == pytest.approx(20.57e-9)
    assert t.rows[0] == 5  # the file's line number


def test_transform_matches_pyproj_and_round_trips():
    """Our transform equals pyproj called directly, and UTM → WGS84 → UTM returns within 1 mm."""
    t = read_picks(EXAMPLES / "fictional_utility_picks.csv")
    lon, lat = transform_xy(t.x, t.y, t.crs, parse_crs("EPSG:4326"))
    ref = Transformer.from_crs("EPSG:32633", "EPSG:4326", always_xy=True)
    rlon, rlat = ref.transform(t.x, t.y)
    np.testing.assert_allclose(lon, rlon, atol=1e-12)
    np.testing.assert_allclose(lat, rlat, atol=1e-12)
    e, n = transform_xy(lon, lat, parse_crs("EPSG:4326"), t.crs)
    np.testing.assert_allclose(e, t.x, atol=1e-3)
    np.testing.assert_allclose(n, t.y, atol=1e-3)


def test_geographic_picks_read_as_lon_lat():
    """lon_deg/lat_deg columns give a geographic position kind."""
    t = read_picks(EXAMPLES / "fictional_lonlat_picks.csv")
    assert t.position_kind == "geographic" and t.crs.is_geographic


def test_bad_rows_all_named():
    """Every offending row is named with its column, in one error naming the file."""
    with pytest.raises(FileInputError) as info:
        read_picks(EXAMPLES / "fictional_bad_picks.csv")
    msg = str(info.value)
    assert "fictional_bad_picks.csv" in msg
    assert "row 5, column 'twt_ns'" in msg and "negative" in msg
    assert "row 6, column 'twt_ns'" in msg and "'abc'" in msg
    assert "row 7, column 'northing_m'" in msg


def test_missing_column_refused(tmp_path):
    """A table without twt_ns is refused, naming the missing column."""
    p = tmp_path / "p.csv"
    p.write_text("line,distance_m\nA,1.0\n")
    with pytest.raises(FileInputError, match="missing column.*twt_ns"):
        read_picks(p)


def test_unknown_crs_refused(tmp_path):
    """An unknown CRS in the file's comment is refused."""
    p = tmp_path / "p.csv"
    p.write_text("# crs: EPSG:99999\nline,easting_m,northing_m,twt_ns\nA,1,2,10\n")
    with pytest.raises(InputError, match="unknown CRS"):
        read_picks(p)


def test_coordinates_need_a_crs(tmp_path):
    """Easting/northing without any CRS is refused with the way to give one."""
    p = tmp_path / "p.csv"
    p.write_text("line,easting_m,northing_m,twt_ns\nA,1,2,10\n")
    with pytest.raises(FileInputError, match="--coords-crs"):
        read_picks(p)
