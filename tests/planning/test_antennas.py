"""Antenna catalogue, target materials and ranking (subsurf.antennas)."""

import math

import numpy as np
import pytest

from subsurf.detection import budget as D
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


def test_stacking_gain():
    """Stacking N traces adds 10·log10(N) dB (incoherent noise; Annan 2009)."""
    a = A.get_antenna("lowband-50")
    assert a.effective_performance_db - a.performance_db == pytest.approx(10 * math.log10(a.stacks))


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
    assert t.conductor and abs(complex(D.target_reflection(9.0, 0.0, 1e8, t))) == 1.0


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
    0.33 and 2.5 times the rule (antennas up to 250 MHz: 0.7 to 2.1 times); the rule ignores
    ε' and frequency, so exact agreement is not expected.
    """
    t = D.Target("planar", depth_m=0.1, reflection=0.3)
    ratios, low_ratios = [], []
    for eps in (5, 9, 16, 25):
        for s_ms in (10, 20, 50, 100):
            for r in _rows(eps, s_ms * 1e-3, t):
                q = r["max_depth_m"] / (35.0 / s_ms)
                ratios.append(q)
                if r["centre_freq_hz"] <= 250e6:
                    low_ratios.append(q)
    assert 1 / 3 < min(ratios) and max(ratios) < 2.5
    assert 0.7 < min(low_ratios) and max(low_ratios) < 2.2


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


def test_rows_agree_with_direct_budget():
    """Ranking rows reproduce detection.max_depth for each antenna (stacking and gain included)."""
    t = A.make_target("planar", depth_m=2.0, material="water_table")
    a = A.get_antenna("lowband-100")
    row = _rows(9.0, 0.004, t, ["lowband-100"])[0]
    direct = D.max_depth(9.0, 0.004, a.centre_freq_hz, a.performance_db + 10 * math.log10(a.stacks),
                         target=t, gain=a.gain)
    assert row["max_depth_m"] == pytest.approx(float(direct), rel=1e-12)


def test_material_alias_is_shown_with_what_it_stands_for():
    """An alias such as plastic_pipe is labelled with the table entry it uses, so the input is visibly honoured."""
    from subsurf.planning.antennas import make_target

    t = make_target("line", depth_m=1.0, size_m=0.1, material="plastic_pipe")
    assert t.material == "plastic_pipe (as air)"
    assert make_target("line", depth_m=1.0, size_m=0.1, material="metal").material == "metal"
