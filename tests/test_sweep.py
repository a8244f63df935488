"""Loader: formats, units, parameters, ports, renormalisation (against independent numpy)."""


import numpy as np
import pytest
import skrf
from helpers import gamma_of, s1p_text, series_rlc_z, write_rlc

from matchtool.errors import OutOfRangeError, TouchstoneError, UsageError
from matchtool.sweep import gamma_at, load, parse_touchstone, touchstone_text


@pytest.mark.parametrize("unit", ["Hz", "kHz", "MHz", "GHz"])
@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
def test_units_and_formats_agree(tmp_path, unit, fmt):
    p = write_rlc(tmp_path / f"a_{unit}_{fmt}.s1p", unit=unit, fmt=fmt, n=51)
    sw = load(p)
    f = np.linspace(800e6, 1030e6, 51)
    g = gamma_of(series_rlc_z(f, 50.0, 40e-9, 915e6))
    assert np.allclose(sw.f_hz, f, rtol=1e-11)
    assert np.allclose(sw.gamma, g, atol=1e-9)


def test_option_fields_in_any_order_and_defaults():
    a = parse_touchstone("# R 75 ri MHZ s\n100 0.1 0.2\n200 0.3 0.4\n", "x.s1p", 1)
    assert a.z0_ohm[0] == 75 and a.f_hz[1] == 200e6 and a.s[1, 0, 0] == 0.3 + 0.4j
    b = parse_touchstone("#\n1 0.5 90\n", "y.s1p", 1)  # defaults: GHz S MA R 50
    assert b.f_hz[0] == 1e9 and b.z0_ohm[0] == 50 and b.s[0, 0, 0] == pytest.approx(0.5j)


def test_v1_two_port_order_and_port_choice(tmp_path):
    # v1 two-port rows are N11 N21 N12 N22 (Touchstone spec)
    p = tmp_path / "t.s2p"
    p.write_text("# GHz S RI R 50\n1 0.1 0 0.2 0 0.3 0 0.4 0\n2 0.1 0 0.2 0 0.3 0 0.5 0\n")
    sw = load(p, port=2)
    assert sw.network.s[0, 1, 0] == 0.2 and sw.network.s[0, 0, 1] == 0.3
    assert sw.gamma[1] == 0.5
    with pytest.raises(UsageError):
        load(p, port=3)


def test_v1_z_parameters_are_normalised():
    # v1 Z data are normalised to R: z = 1.5 + j0 on R 50 is 75 ohm
    ts = parse_touchstone("# MHz Z RI R 50\n100 1.5 0\n", "z.s1p", 1)
    assert ts.s[0, 0, 0] == pytest.approx((75 - 50) / (75 + 50))
    ts2 = parse_touchstone("[Version] 2.0\n# MHz Z RI R 50\n[Number of Ports] 1\n[Number of Frequencies] 1\n"
                           "[Network Data]\n100 75 0\n[End]\n", "z.ts", None)
    assert ts2.s[0, 0, 0] == pytest.approx(0.2) and ts2.version == "2.0"


def test_v1_y_parameters_are_normalised():
    ts = parse_touchstone("# MHz Y RI R 50\n100 2 0\n", "y.s1p", 1)  # y = 2/50 S -> 25 ohm
    assert ts.s[0, 0, 0] == pytest.approx((25 - 50) / (25 + 50))


def test_v2_reference_and_renormalise(tmp_path):
    p = tmp_path / "a.s1p"
    f = np.linspace(1e9, 2e9, 11)
    z = 30 + 20j * np.ones(11)
    p.write_text(s1p_text(f, gamma_of(z, 75.0), z0=75.0))
    sw = load(p)
    assert sw.z0_ohm == 75
    sw50 = load(p, z0_ohm=50)
    assert sw50.z0_ohm == 50
    assert np.allclose(sw50.gamma, gamma_of(z, 50.0))


def test_against_skrf_reader_on_shipped_measurement():
    # A real measured file that scikit-rf ships (skrf/data/ntwk1.s2p): our loader must agree with
    # scikit-rf's own Touchstone reader on every number.
    import os
    path = os.path.join(os.path.dirname(skrf.__file__), "data", "ntwk1.s2p")
    ours = load(path)
    ref = skrf.Network(path)  # trusted file shipped with the library
    assert np.allclose(ours.network.f, ref.f)
    assert np.allclose(ours.network.s, ref.s)
    # and the metrics against an independent numpy computation
    g = ref.s[:, 0, 0]
    rl = -20 * np.log10(np.abs(g))
    from matchtool import summarize
    s = summarize(ours, 10.0)
    assert s.best.return_loss_db == pytest.approx(rl.max())
    assert s.best.f_hz == ref.f[np.argmax(rl)]


def test_gamma_at_interpolates_complex_and_refuses_outside(tmp_path):
    p = tmp_path / "c.s1p"
    p.write_text("# Hz S RI R 50\n100 0 0\n200 1 1\n")
    sw = load(p)
    assert gamma_at(sw, 150) == pytest.approx(0.5 + 0.5j)
    with pytest.raises(OutOfRangeError):
        gamma_at(sw, 250)


def test_roundtrip_writer_readable_by_skrf(tmp_path):
    rng = np.random.default_rng(3)
    s = (rng.normal(size=(5, 3, 3)) + 1j * rng.normal(size=(5, 3, 3))) * 0.2
    f = np.linspace(1e9, 2e9, 5)
    p = tmp_path / "x.s3p"
    p.write_text(touchstone_text(f, s, 50.0))
    assert np.allclose(load(p).network.s, s)
    assert np.allclose(skrf.Network(str(p)).s, s)
    p2 = tmp_path / "x.s2p"
    p2.write_text(touchstone_text(f, s[:, :2, :2], 50.0))
    assert np.allclose(skrf.Network(str(p2)).s, s[:, :2, :2])


@pytest.mark.parametrize("text, words, line", [
    ("# MHz S RI R 50\n900 0.1 0.2\n910 0.1\n", "expected 3 numbers", 3),
    ("900 0.1 0.2\n# MHz S RI R 50\n", "data before the option line", 1),
    ("900 0.1 0.2\n", "no option line", 1),
    ("# MHz S RI R 50\n900 0.1 0.2\n900 0.1 0.2\n", "repeats", 3),
    ("# MHz S RI R 50\n900 0.1 0.2\n910 inf 0.2\n", "non-finite", 3),
    ("# MHz S RI R 50\n-900 0.1 0.2\n", "negative frequency", 2),
    ("# MHz S XX R 50\n900 0.1 0.2\n", "unknown option-line token", 1),
    ("# MHz S RI R 0\n900 0.1 0.2\n", "positive", 1),
    ("# MHz S RI R 50\n900 0.1 0.2\n910 0.1 abc\n", "expected a number", 3),
])
def test_refusals_name_the_line(text, words, line):
    with pytest.raises(TouchstoneError) as e:
        parse_touchstone(text, "bad.s1p", 1)
    assert words in str(e.value)
    assert e.value.line == line
    assert str(e.value).startswith("bad.s1p")
    assert "\n" not in str(e.value)


def test_v1_two_port_noise_block_accepted():
    text = ("# GHz S RI R 50\n1 .1 0 .2 0 .3 0 .4 0\n2 .1 0 .2 0 .3 0 .4 0\n"
            "1 2.0 .5 30 .4\n2 2.5 .4 40 .5\n")
    ts = parse_touchstone(text, "n.s2p", 2)
    assert ts.f_hz.tolist() == [1e9, 2e9] and ts.noise_points == 2


def test_decreasing_two_port_without_noise_rows_refused():
    text = "# GHz S RI R 50\n2 .1 0 .2 0 .3 0 .4 0\n1 .1 0 .2 0 .3 0 .4 0\n"
    with pytest.raises(TouchstoneError, match="does not increase"):
        parse_touchstone(text, "n.s2p", 2)


def test_warnings_single_point_zero_hz_gain():
    ts = parse_touchstone("# Hz S RI R 50\n0 0.1 0\n", "w.s1p", 1)
    assert any("single" in w for w in ts.warnings) and any("0 Hz" in w for w in ts.warnings)
    import tempfile
    from pathlib import Path
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "g.s1p"
        p.write_text("# Hz S RI R 50\n1 1.1 0\n2 0.5 0\n")
        assert any("> 1" in w for w in load(p).warnings)


def test_second_option_line_warns():
    ts = parse_touchstone("# MHz S RI R 50\n1 0.1 0\n# GHz S RI R 75\n2 0.1 0\n", "o.s1p", 1)
    assert ts.f_hz.tolist() == [1e6, 2e6] and any("second option line" in w for w in ts.warnings)


