"""Antenna catalogue, target materials and ranking (subsurf.antennas)."""

import math

import numpy as np
import pytest

from subsurf.detection.targets import Target, target_reflection
from subsurf.errors import FileInputError, InputError
from subsurf.planning import antennas as A


def const_ground(eps, sigma):
    return lambda f: (np.full(np.shape(f), complex(eps)), np.full(np.shape(f), float(sigma)))


def test_catalogue_spans_50_mhz_to_2_ghz_and_is_marked_illustrative():
    """The bundled catalogue holds ~6 illustrative antennas from 50 MHz to 2 GHz, ordered by frequency."""
    cat = A.load_catalogue()
    freqs = [a.centre_freq_hz for a in cat.values()]
    assert freqs == sorted(freqs) and freqs[0] == 50e6 and freqs[-1] == 2e9
    assert all(a.illustrative for a in cat.values())


def test_stacking_gain_is_clutter_limited():
    """Stacking adds 10·log10(N) dB while noise dominates (Annan 2009) and never more than the clutter ceiling.

    G(N) = 10·log10((1 + c)/(1/N + c)), c = 10^(−C/10): for N ≪ 1/c within 0.2 dB of 10·log10 N; the limit
    N → ∞ is 10·log10(1 + 1/c) (closed form), i.e. the ceiling C to 0.14 dB for C = 15 dB.
    """
    a = A.get_antenna("lowband-50")
    assert a.effective_performance_db - a.performance_db == pytest.approx(
        float(A.clutter_limited_stacking_gain_db(a.stacks, a.clutter_limit_db)))
    assert float(A.clutter_limited_stacking_gain_db(2, 40.0)) == pytest.approx(10 * math.log10(2), abs=2e-3)
    assert float(A.clutter_limited_stacking_gain_db(4, 15.0)) == pytest.approx(10 * math.log10(4), abs=0.5)
    big = float(A.clutter_limited_stacking_gain_db(2**40, 15.0))
    assert big == pytest.approx(10 * math.log10(1 + 10**1.5), abs=1e-6) and big < 15.2


def test_unknown_antenna_lists_available():
    """An unknown name raises InputError listing every available antenna."""
    with pytest.raises(InputError, match="available: lowband-50, lowband-100"):
        A.get_antenna("no-such")


def test_catalogue_bad_field_names_file_and_field(tmp_path):
    """A non-positive performance in a user catalogue is a FileInputError naming file and field."""
    p = tmp_path / "mine.toml"
    p.write_text("[antenna.x]\ncentre_frequency_mhz = 100\nbandwidth_mhz = 100\nsystem_performance_db = -5\n"
                 "separation_m = 1\ntrace_rate_hz = 10\n")
    with pytest.raises(FileInputError, match=r"mine.toml.*system_performance_db"):
        A.load_catalogue(p)


def test_metal_material_is_perfect_conductor():
    """The 'metal' material becomes a perfect-conductor target (|R| = 1)."""
    t = A.make_target("line", depth_m=1.0, size_m=0.1, material="metal")
    assert t.conductor and abs(complex(target_reflection(9.0, 0.0, 1e8, t))) == 1.0


def test_unknown_material_lists_available():
    """An unknown material names the accepted ones."""
    with pytest.raises(InputError, match="available:.*metal"):
        A.make_target("point", size_m=1.0, material="unobtainium")


def _rows(eps, sigma, target, names=None):
    cat = A.load_catalogue()
    ants = [cat[n] for n in names] if names else list(cat.values())
    return A.rank_antennas(const_ground(eps, sigma), ants, target)


def test_empirical_35_over_sigma_rule():
    """Planar reflector (|R| = 0.3) depths agree with 35/σ[mS/m] m (Annan 2009, common rule of thumb).

    Agreement range: for 10-100 mS/m and ε' 5-25 every bundled antenna predicts between
    0.33 and 2.5 times the rule (antennas up to 250 MHz: 0.6 to 2.4 times; measured 0.36-2.33 and
    0.63-2.33 with the band-integrated, coupled, bistatic budget and the noise-bandwidth catalogue);
    the rule ignores ε' and frequency, so exact agreement is not expected.  The catalogue is not
    fitted to this rule.
    """
    t = Target("planar", depth_m=0.1, reflection=0.3)
    ratios, low_ratios = [], []
    for eps in (5, 9, 16, 25):
        for s_ms in (10, 20, 50, 100):
            for r in _rows(eps, s_ms * 1e-3, t):
                q = r["max_depth_m"] / (35.0 / s_ms)
                ratios.append(q)
                if r["centre_freq_hz"] <= 250e6:
                    low_ratios.append(q)
    assert 1 / 3 < min(ratios) and max(ratios) < 2.5
    assert 0.6 < min(low_ratios) and max(low_ratios) < 2.4


def test_recommendation_is_finest_resolution_that_reaches():
    """The recommendation is the reaching antenna with the smallest vertical resolution."""
    t = A.make_target("line", depth_m=1.0, size_m=0.1, material="metal")
    rows = _rows(9.0, 0.01, t)
    name, reason = A.recommend(rows)
    reach = [r for r in rows if r["verdict"] == "reaches"]
    assert name == min(reach, key=lambda r: r["vertical_resolution_m"])["name"]
    assert "reach" in reason


def test_no_antenna_reaches_gives_no_recommendation():
    """A target far beyond every antenna's range gets no recommendation and names the closest."""
    t = A.make_target("point", depth_m=30.0, size_m=0.2, material="void")
    name, reason = A.recommend(_rows(20.0, 0.05, t))
    assert name is None and "no antenna" in reason


def test_catalogue_performance_follows_noise_bandwidth():
    """Illustrative single-trace figures fall 10 dB per decade of bandwidth (kTB noise; Skolnik 2001, ch. 2)."""
    for a in A.load_catalogue().values():
        assert a.performance_db == pytest.approx(80.0 - 10 * math.log10(a.bandwidth_hz / 100e6), abs=0.05)
    assert "midband-400" in A.load_catalogue()  # the common utility band


def test_catalogue_pulse_length_and_bad_values(tmp_path):
    """Each antenna has a pulse length; a pulse length <= 0 or a negative separation names the field."""
    assert all(a.pulse_length > 0 for a in A.load_catalogue().values())
    base = "[antenna.x]\ncentre_frequency_mhz = 100\nbandwidth_mhz = 100\nsystem_performance_db = 80\ntrace_rate_hz = 10\n"
    p = tmp_path / "c.toml"
    p.write_text(base + "separation_m = 1\npulse_length_ns = 0\n")
    with pytest.raises(FileInputError, match="pulse_length_ns"):
        A.load_catalogue(p)
    p.write_text(base + "separation_m = -1\n")
    with pytest.raises(FileInputError, match="separation_m"):
        A.load_catalogue(p)


def test_material_alias_is_shown_with_what_it_stands_for():
    """An alias such as plastic_pipe is labelled with the table entry it uses, so the input is visibly honoured."""
    from subsurf.planning.antennas import make_target

    t = make_target("line", depth_m=1.0, size_m=0.1, material="plastic_pipe")
    assert t.material == "plastic_pipe (as air)"
    assert make_target("line", depth_m=1.0, size_m=0.1, material="metal").material == "metal"
