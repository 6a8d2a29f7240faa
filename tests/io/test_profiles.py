"""Reading test profiles: SEG-Y round trip with segyio (the reference reader/writer), NetCDF and CSV layouts."""

import numpy as np
import pytest

from subsurf.errors import FileInputError
from subsurf.io.profiles import read_profile

segyio = pytest.importorskip("segyio")


def write_segy(path, data, *, interval=100, delay=0, dead=(), stacks=8, scalar_time=0, bin_interval=None):
    """A SEG-Y rev 1 file written by segyio itself (IEEE floats), interval in the header's integer field."""
    spec = segyio.spec()
    spec.format = 5
    spec.samples = list(range(data.shape[1]))
    spec.tracecount = data.shape[0]
    with segyio.create(str(path), spec) as f:
        for i, tr in enumerate(data):
            f.header[i] = {segyio.TraceField.TRACE_SAMPLE_INTERVAL: interval,
                           segyio.TraceField.TRACE_SAMPLE_COUNT: data.shape[1],
                           segyio.TraceField.DelayRecordingTime: delay,
                           segyio.TraceField.ScalarTraceHeader: scalar_time,
                           segyio.TraceField.TraceIdentificationCode: 2 if i in dead else 1,
                           segyio.TraceField.NSummedTraces: stacks,
                           segyio.TraceField.SourceGroupScalar: -100,
                           segyio.TraceField.SourceX: 5 * i, segyio.TraceField.GroupX: 5 * i}
            f.trace[i] = tr.astype(np.float32)
        f.bin.update({segyio.BinField.Interval: interval if bin_interval is None else bin_interval,
                      segyio.BinField.Samples: data.shape[1], segyio.BinField.Format: 5})


@pytest.fixture
def data():
    return np.random.default_rng(2).standard_normal((12, 200)).astype(np.float32)


def test_segy_round_trip(tmp_path, data):
    """Samples, interval (ps field), delay (ns when the interval is in ps), dead traces, stacks and distance survive."""
    p = tmp_path / "line.sgy"
    write_segy(p, data, interval=100, delay=5, dead=(3,), stacks=8)
    prof = read_profile(p, segy_time_unit="ps")
    assert prof.sample_interval_s == pytest.approx(100e-12)
    assert prof.first_sample_s == pytest.approx(5e-9)
    keep = [i for i in range(12) if i != 3]
    np.testing.assert_array_equal(prof.amplitude, data[keep].astype(float))
    assert prof.dropped == {"dead (trace identification code 2)": 1}
    assert prof.stacks == 8
    assert prof.distance_m[-1] == pytest.approx(0.05 * 11)  # 5 cm per trace, gap of the dead trace kept


def test_segy_time_scalar_applies_to_delay(tmp_path, data):
    """Bytes 215–216 scale the delay: −10 divides (SEG-Y rev 1 scalar rule)."""
    p = tmp_path / "line.sgy"
    write_segy(p, data, interval=100, delay=50, scalar_time=-10)
    assert read_profile(p, segy_time_unit="ps").first_sample_s == pytest.approx(5e-9)


def test_segy_missing_interval(tmp_path, data):
    """No interval in the binary or any trace header: one message naming the file."""
    p = tmp_path / "line.sgy"
    write_segy(p, data, interval=0)
    with pytest.raises(FileInputError, match=r"line\.sgy: missing sample interval"):
        read_profile(p)


def test_segy_implausible_interval_names_the_unit(tmp_path, data):
    """100 read as microseconds is no radar interval: the message suggests the finer unit."""
    p = tmp_path / "line.sgy"
    write_segy(p, data, interval=100)
    with pytest.raises(FileInputError, match="ns or ps"):
        read_profile(p)


def test_segy_truncated(tmp_path, data):
    """A file cut short is refused as truncated, naming the file."""
    p = tmp_path / "line.sgy"
    write_segy(p, data)
    raw = p.read_bytes()
    (tmp_path / "cut.sgy").write_bytes(raw[:-300])
    with pytest.raises(FileInputError, match=r"cut\.sgy: .*truncated"):
        read_profile(tmp_path / "cut.sgy", segy_time_unit="ps")


def test_segy_all_zero_trace(tmp_path, data):
    """An all-zero trace not flagged dead is refused with its number."""
    data = data.copy()
    data[4] = 0
    p = tmp_path / "line.sgy"
    write_segy(p, data)
    with pytest.raises(FileInputError, match=r"line\.sgy: .*trace 5"):
        read_profile(p, segy_time_unit="ps")


def test_netcdf_profile(tmp_path, data):
    """subsurf's NetCDF layout: amplitude(sample, trace) in any order, twt with units."""
    import xarray as xr

    p = tmp_path / "line.nc"
    xr.Dataset({"amplitude": (("sample", "trace"), data.T)},
               coords={"twt": ("sample", 2.0 + 0.1 * np.arange(200), {"units": "ns"})}, attrs={"stacks": 2}).to_netcdf(p)
    prof = read_profile(p)
    np.testing.assert_allclose(prof.amplitude, data)
    assert prof.sample_interval_s == pytest.approx(0.1e-9)
    assert prof.first_sample_s == pytest.approx(2e-9)
    assert prof.stacks == 2


def test_netcdf_missing_units(tmp_path, data):
    """twt without units is refused: the sample interval cannot be known."""
    import xarray as xr

    p = tmp_path / "line.nc"
    xr.Dataset({"amplitude": (("trace", "sample"), data)}, coords={"twt": ("sample", np.arange(200.0))}).to_netcdf(p)
    with pytest.raises(FileInputError, match="field 'twt'.*units"):
        read_profile(p)


def test_csv_profile_and_truncated_row(tmp_path, data):
    """CSV trace matrix: numeric headers are distances; a short last row is named by its line."""
    p = tmp_path / "line.csv"
    lines = ["# stacks: 4", "twt [ns]," + ",".join(f"{0.05 * i:.2f}" for i in range(12))]
    lines += [f"{0.1 * k:.1f}," + ",".join(f"{v:.6g}" for v in data[:, k]) for k in range(200)]
    p.write_text("\n".join(lines) + "\n")
    prof = read_profile(p)
    assert prof.n_traces == 12 and prof.stacks == 4
    assert prof.distance_m[1] == pytest.approx(0.05)
    np.testing.assert_allclose(prof.amplitude, data, rtol=1e-5)
    p.write_text("\n".join(lines[:-1] + [lines[-1].rsplit(",", 3)[0]]) + "\n")
    with pytest.raises(FileInputError, match=r"row 202"):
        read_profile(p)
