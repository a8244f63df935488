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




# ------------------------------------------------------------------------------------------------
# Touchstone as instruments and simulators write it. Each file is written here by hand from the
# Touchstone specification's own descriptions (Touchstone File Format Specification 2.0, IBIS
# Open Forum 2009: option line, [Reference], [Matrix Format] Full/Upper/Lower, network data that
# continue on further lines; Touchstone 1.1 for the one-line 1- and 2-port records; Touchstone 2.1
# / TSIRD 5.1 for one R per port on the option line) or, where marked, from common practice.
# scikit-rf 2.2 (skrf.Network) is the independent reader: f, S and reference must agree.

RNG = np.random.default_rng(1414)


def _random_s(m: int, n: int, symmetric: bool = False) -> np.ndarray:
    s = (RNG.uniform(-0.45, 0.45, (m, n, n)) + 1j * RNG.uniform(-0.45, 0.45, (m, n, n))).round(6)
    return (s + s.transpose(0, 2, 1)) / 2 if symmetric else s


def _ri(vals, digits: int = 6) -> list[str]:
    return [f"{v.real:.{digits}g} {v.imag:.{digits}g}" for v in vals]


def _same_as_skrf(path, sw_or_net, z0=None):
    ref = skrf.Network(str(path))
    net = sw_or_net.network if hasattr(sw_or_net, "network") else sw_or_net
    assert np.allclose(net.f, ref.f, rtol=1e-15, atol=0)
    assert np.allclose(net.s, ref.s, rtol=0, atol=1e-15)
    assert np.allclose(net.z0, ref.z0 if z0 is None else z0, rtol=1e-15)


def test_per_port_r_on_the_option_line(tmp_path):
    # Touchstone 2.1 (TSIRD 5.1, "version 1.1" option line): one R per port
    s = _random_s(3, 2)
    p = tmp_path / "pp.s2p"
    rows = [f"{k + 1} " + " ".join(_ri([s[k, 0, 0], s[k, 1, 0], s[k, 0, 1], s[k, 1, 1]])) for k in range(3)]
    p.write_text("# GHz S RI R 50 75\n" + "\n".join(rows) + "\n")
    sw = load(p, port=2)
    assert sw.z0_ohm == 75.0 and np.allclose(sw.network.s, s)
    _same_as_skrf(p, sw)
    assert load(p, port=1).z0_ohm == 50.0
    one = tmp_path / "pp.s1p"
    one.write_text("# GHz S RI R 50 75\n1 0.1 0.2\n")
    with pytest.raises(TouchstoneError, match="line 1: option line gives 2 reference impedances for 1 port"):
        load(one)


def test_two_port_record_split_after_the_first_two_pairs(tmp_path):
    # common practice of circuit simulators: frequency S11 S21 on one line, S12 S22 on the next;
    # the Touchstone 1.1 rule is one line per record, but the reading is unambiguous
    s = _random_s(4, 2)
    lines = ["! written as a circuit simulator does", "# GHz S RI R 50"]
    for k in range(4):
        lines.append(f"{k + 1} " + " ".join(_ri([s[k, 0, 0], s[k, 1, 0]])))
        lines.append("    " + " ".join(_ri([s[k, 0, 1], s[k, 1, 1]])))
    p = tmp_path / "split.s2p"
    p.write_text("\n".join(lines) + "\n")
    sw = load(p)
    assert np.allclose(sw.network.s, s) and sw.warnings == []
    _same_as_skrf(p, sw)
    # a wrong count is still an error naming the record's first line
    bad = lines[:6] + [lines[6] + " 0.5"] + lines[7:]
    p.write_text("\n".join(bad) + "\n")
    with pytest.raises(TouchstoneError, match=r"line 7: expected 9 numbers for a 2-port row, found 6"):
        load(p)


@pytest.mark.parametrize("layout", ["Full", "Upper", "Lower"])
def test_version_2_records_wrapped_anywhere(tmp_path, layout):
    # Touchstone 2.0, [Matrix Format] and [Network Data]: a record may continue on further lines
    n = 2
    s = _random_s(3, n, symmetric=layout != "Full")
    idx = {"Upper": np.triu_indices(n), "Lower": np.tril_indices(n)}.get(layout)
    lines = ["[Version] 2.0", "# GHz S RI R 50", f"[Number of Ports] {n}", "[Two-Port Data Order] 12_21",
             "[Number of Frequencies] 3", f"[Matrix Format] {layout}", "[Network Data]"]
    for k in range(3):
        vals = s[k].ravel() if idx is None else s[k][idx]
        nums = [f"{k + 1}"] + " ".join(_ri(vals)).split()
        cut = [0, 5, len(nums)] if k != 1 else [0, 2, 4, len(nums)]  # wrapped between numbers
        lines += [" ".join(nums[a:b]) for a, b in zip(cut[:-1], cut[1:], strict=True)]
    lines.append("[End]")
    p = tmp_path / f"wrap_{layout}.ts"
    p.write_text("\n".join(lines) + "\n")
    sw = load(p)
    assert np.allclose(sw.network.s, s) and sw.warnings == []
    _same_as_skrf(p, sw)
    # one number missing from the last record: the error names that record's first line
    short = lines[:-2] + [lines[-2].rsplit(" ", 1)[0], "[End]"]
    p.write_text("\n".join(short) + "\n")
    first = len(lines) - (2 if k != 1 else 3)
    with pytest.raises(TouchstoneError, match=rf"line {first}: incomplete 2-port record"):
        load(p)


def test_a_frequency_alone_on_its_line_starts_the_record():
    # Touchstone 2.0 lets a record continue after any number, even the frequency alone (scikit-rf
    # 2.2 then takes the next number as the frequency; the expected values are the ones written)
    text = ("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n[Network Data]\n1\n0.1 0.2\n2 0.3\n"
            "0.4\n[End]\n")
    ts = parse_touchstone(text, "a.ts", None)
    assert np.array_equal(ts.f_hz, [1e9, 2e9]) and np.allclose(ts.s[:, 0, 0], [0.1 + 0.2j, 0.3 + 0.4j])


def _hfss_like(path, f_ghz, s, z_port, stated="! Data is not renormalized", per_line=None):
    """A simulator export whose data are at the per-frequency port impedances ``z_port`` (m, N),
    given in 'Port Impedance' comments (common practice of field-solver exports, no source)."""
    m, n, _ = s.shape
    lines = [stated, "# GHz S RI R 50"]
    for k in range(m):
        if n == 2:
            vals = [s[k, 0, 0], s[k, 1, 0], s[k, 0, 1], s[k, 1, 1]]
        else:
            vals = s[k].ravel()
        lines.append(f"{f_ghz[k]:g} " + " ".join(_ri(vals, 15)))
        lines.append("! Gamma ! " + " ".join("0.001 20.9" for _ in range(n)))
        zs = _ri(z_port[k], 15)
        if per_line:  # no blank after the words, then one port per continuation line
            lines.append("! Port Impedance" + " ".join(zs[:per_line]))
            lines += ["!  " + z for z in zs[per_line:]]
        else:
            lines.append("! Port Impedance " + " ".join(zs))
    path.write_text("\n".join(lines) + "\n")


def test_port_impedances_in_comments_are_used_and_renormalised(tmp_path):
    # Two uncoupled resistive loads, 75 ohm on port 1 and 20 ohm on port 2, written at port
    # impedances that vary with frequency: S_pp = (R_L - Z_p) / (R_L + Z_p) (reflection
    # coefficient at a real reference, Pozar, Microwave Engineering, 4th ed., eq. 2.35), S21 = 0.
    f = np.array([1.0, 1.5, 2.0])
    zp = np.column_stack([[29.0, 31.5, 33.0], [376.0, 380.0, 390.0]]).astype(complex)
    rl = np.array([75.0, 20.0])
    s = np.zeros((3, 2, 2), dtype=complex)
    for p in range(2):
        s[:, p, p] = (rl[p] - zp[:, p]) / (rl[p] + zp[:, p])
    path = tmp_path / "sim.s2p"
    _hfss_like(path, f, s.round(12), zp, per_line=1)
    sw = load(path)
    assert sw.z0_ohm == 50.0
    assert np.allclose(sw.gamma, (75 - 50) / (75 + 50), atol=1e-9)  # derived: the load seen at 50 ohm
    assert np.allclose(load(path, port=2).gamma, (20 - 50) / (20 + 50), atol=1e-9)
    joined = " | ".join(sw.warnings)
    assert "not renormalised" in joined and "29 to 390 ohm" in joined and "renormalised to 50 ohm" in joined
    # --z0 75 renormalises to 75 ohm instead (the 75 ohm load is then matched)
    assert np.allclose(load(path, z0_ohm=75.0).gamma, 0, atol=1e-9)
    # scikit-rf reads the same comments; its renormalisation to 50 ohm gives the same network
    ref = skrf.Network(str(path))
    assert np.allclose(ref.z0, zp)
    ref.renormalize(50)
    assert np.allclose(sw.network.s, ref.s, atol=1e-12)


def test_complex_port_impedances_follow_scikit_rf(tmp_path):
    # complex, frequency-dependent port impedances (a waveguide-like port): the same f, S and,
    # once renormalised by skrf.Network.renormalize, the same S at 50 ohm
    f = np.array([2.0, 2.5, 3.0, 3.5])
    s = _random_s(4, 2)
    zp = np.column_stack([42.6 + 1j * np.array([-3, -1, 1, 4]), 376.0 - 1j * np.array([10, 12, 15, 20])])
    path = tmp_path / "wg.s2p"
    _hfss_like(path, f, s, zp)
    sw = load(path)
    ref = skrf.Network(str(path))
    assert np.allclose(ref.z0, zp) and np.allclose(ref.f, sw.f_hz)
    ref.renormalize(50)
    assert np.allclose(sw.network.s, ref.s, atol=1e-12)
    assert np.allclose(sw.network.z0, 50)


def test_port_impedances_where_the_data_are_renormalised_load_as_before(tmp_path):
    f = np.array([1.0, 2.0])
    s = _random_s(2, 1)
    zp = np.array([[29.0 + 0j], [31.0 + 0j]])
    said = tmp_path / "said.s1p"
    _hfss_like(said, f, s, zp, stated="! DATA IS RENORMALIZED TO 50 OHMS")  # any letter case
    sw = load(said)
    assert sw.z0_ohm == 50 and np.allclose(sw.gamma, s[:, 0, 0]) and sw.warnings == []
    same = tmp_path / "same.s1p"
    _hfss_like(same, f, s, np.full((2, 1), 50.0 + 0j), stated="! Data is not renormalized")
    sw = load(same)
    assert np.allclose(sw.gamma, s[:, 0, 0]) and sw.warnings == []


def test_not_renormalised_without_impedances_or_with_the_wrong_count_is_refused(tmp_path):
    p = tmp_path / "a.s1p"
    p.write_text("! Data is not renormalized\n# GHz S RI R 50\n1 0.1 0.2\n2 0.2 0.1\n")
    with pytest.raises(TouchstoneError, match="line 1: the file says its data are not renormalised but gives no "
                                              "port impedances; expected data exported renormalised"):
        load(p)
    p.write_text("! Data is not renormalized\n# GHz S RI R 50\n1 0.1 0.2\n! Port Impedance 30 0\n2 0.2 0.1\n")
    with pytest.raises(TouchstoneError, match="line 4: 1 'Port Impedance' comments for 2 frequencies"):
        load(p)
    p.write_text("! Port Impedance\n! Data is not renormalized\n# GHz S RI R 50\n1 0.1 0.2\n! Port Impedance 30 0 5\n")
    with pytest.raises(TouchstoneError, match="line 5: 'Port Impedance' comment gives 3 numbers for a 1-port"):
        load(p)


def test_reference_far_from_any_system_impedance_warns(tmp_path, cli):
    # a measured antenna saved as Z-parameters with R 1: version 1 Z data are normalised to R
    # (Touchstone 2.0, option line), so the numbers are ohms here and S is analysed at 1 ohm
    f = np.linspace(800e6, 1000e6, 21)
    z = series_rlc_z(f, 50.0, 40e-9, 900e6)
    p = tmp_path / "ant.s1p"
    p.write_text("# Hz Z RI R 1\n" + "".join(f"{fi:.9g} {zi.real:.9g} {zi.imag:.9g}\n" for fi, zi in zip(f, z,
                                                                                                      strict=True)))
    sw = load(p)
    assert sw.z0_ohm == 1.0
    _same_as_skrf(p, sw)  # scikit-rf reads the same S at the same 1 ohm reference
    assert any("analysed at a 1 ohm reference" in w and "--z0 50" in w for w in sw.warnings), sw.warnings
    assert load(p, z0_ohm=50).warnings == []
    assert np.allclose(load(p, z0_ohm=50).gamma, gamma_of(z, 50.0), atol=1e-9)
    r = cli("inspect", p, "--json")
    assert r.code == 0 and any("1 ohm reference" in w for w in r.json()["warnings"])
    assert any("1 ohm reference" in ln for ln in r.err_lines)


def test_reflection_never_measured_warns_everywhere(tmp_path, cli):
    # S22 exactly 0 at every frequency: port 2 was never measured, not a perfect match
    s = _random_s(3, 2)
    s[:, 1, 1] = 0
    p = tmp_path / "oneway.s2p"
    p.write_text("# GHz S RI R 50\n" + "".join(
        f"{k + 1} " + " ".join(_ri([s[k, 0, 0], s[k, 1, 0], s[k, 0, 1], s[k, 1, 1]])) + "\n" for k in range(3)))
    want = "port 2 reflection is 0 everywhere: not measured?"
    assert any(want in w for w in load(p, port=2).warnings)
    assert not any(want in w for w in load(p, port=1).warnings)
    from matchtool.sweep import load_reflection
    assert any(want in w for w in load_reflection(p, 2, None)[2])
    r = cli("inspect", p, "--port", "2", "--json")
    assert r.code == 0 and any(want in w for w in r.json()["warnings"]), r.out
    spec = tmp_path / "spec.toml"
    spec.write_text('port = 2\n[[band]]\nname = "b"\nf_low = "1 GHz"\nf_high = "3 GHz"\nmin_return_loss_db = 10\n')
    r = cli("check", p, "--spec", spec, "--json")
    assert any(want in ln for ln in r.err_lines), r.err


def test_two_port_rows_in_an_s1p_name_say_so(tmp_path):
    s = _random_s(2, 2)
    p = tmp_path / "mislabelled.s1p"
    p.write_text("# GHz S RI R 50\n" + "".join(
        f"{k + 1} " + " ".join(_ri(s[k].T.ravel())) + "\n" for k in range(2)))
    with pytest.raises(TouchstoneError, match=r"line 2: expected 3 numbers for a 1-port row, found 9 \(a row of 9 "
                                              r"numbers is 2-port data: is this a \.s2p file\?\)"):
        load(p)


# ---------------------------------------------------------------- bytes input and the lazy Network

def test_bytes_and_text_parse_to_the_same_numbers(tmp_path):
    # the loader reads plain ASCII files as bytes (no decode and re-encode); the numbers, lines of
    # errors and warnings must be those of the text. Expected values: the numbers written (derived).
    f = np.array([1e9, 2e9, 3e9])
    s = np.array([[[0.1 + 0.2j, 0.3 - 0.1j], [0.05j, -0.4 + 0j]]] * 3)
    text = touchstone_text(f, s, 50.0, ["a comment"])
    a, b = parse_touchstone(text, "t.s2p", 2), parse_touchstone(text.encode("ascii"), "t.s2p", 2)
    assert np.array_equal(a.f_hz, f) and np.array_equal(b.f_hz, f)
    assert np.array_equal(a.s, s) and np.array_equal(b.s, s)
    bad = text.replace("2000000000 ", "2000000000 x", 1)
    with pytest.raises(TouchstoneError) as ea:
        parse_touchstone(bad, "t.s2p", 2)
    with pytest.raises(TouchstoneError) as eb:
        parse_touchstone(bad.encode("ascii"), "t.s2p", 2)
    assert str(ea.value) == str(eb.value) and ea.value.line == eb.value.line == 4


def test_bytes_that_are_not_plain_ascii_follow_the_input_policy():
    # a Latin-1 comment (old instruments) decodes; binary content is refused with its line,
    # as read_text does for a file
    latin = b"! Messung \xb5W\n# MHz S RI R 50\n100 0.1 0.2\n"
    assert parse_touchstone(latin, "a.s1p", 1).s[0, 0, 0] == 0.1 + 0.2j
    with pytest.raises(TouchstoneError, match="binary content") as ei:
        parse_touchstone(b"# MHz S RI R 50\n100 0.1 0.2\n\x01\n", "a.s1p", 1)
    assert ei.value.line == 3


def test_sweep_network_is_built_on_first_use_from_the_same_arrays(tmp_path):
    p = write_rlc(tmp_path / "a.s1p", n=21)
    sw = load(p)
    assert "network" not in sw.__dict__  # not built by load
    net = sw.network
    assert isinstance(net, skrf.Network) and sw.network is net
    assert np.array_equal(net.f, sw.f_hz) and np.array_equal(net.s[:, 0, 0], sw.gamma)
    assert np.allclose(net.z0, 50.0) and net.name == "a"


def test_inspect_does_not_import_scikit_rf(tmp_path):
    # start-up (benchmark case P2): inspect needs only the arrays, so scikit-rf is not imported
    import subprocess
    import sys

    from helpers import ROOT

    p = write_rlc(tmp_path / "a.s1p", n=21)
    code = (f"import sys; from matchtool.cli import main\nrc = main(['inspect', {str(p)!r}, '--json'])\n"
            "print('SKRF', 'skrf' in sys.modules, rc)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=300)
    assert out.stdout.strip().splitlines()[-1] == "SKRF False 0", out.stdout + out.stderr


def _large_text(n: int, comment_in_rest: bool = False) -> tuple[str, np.ndarray, np.ndarray]:
    f = np.arange(1, n + 1) * 1e6
    g = 0.3 * np.exp(1j * np.arange(n) * 1e-3)
    lines = ["! header comment", "! Port[1] = 1:1  Impedance = 50 ohm", "# Hz S RI R 50"]
    lines += [f"{fk:.0f} {gk.real:.9f} {gk.imag:.9f}" for fk, gk in zip(f, g, strict=True)]
    if comment_in_rest:
        lines.insert(3 + n // 2, "! a comment among the data")
    return "\n".join(lines) + "\n", f, g


def test_large_files_read_in_two_parts_load_as_the_text_does(tmp_path):
    # a file over SPLIT_MIN_BYTES is read as its head and the rest (PlainParts): the numbers, the
    # warnings and the lines named in errors are those of parsing the whole text (expected: the
    # numbers written, and the line numbers derived from the lines written)
    from matchtool.inputs import SPLIT_MIN_BYTES, PlainParts, read_touchstone

    n = 40_000
    for in_rest in (False, True):
        text, f, g = _large_text(n, in_rest)
        assert len(text) > SPLIT_MIN_BYTES
        p = tmp_path / f"big_{in_rest}.s1p"
        p.write_text(text)
        parts = read_touchstone(p)
        assert isinstance(parts, PlainParts) and parts.head.startswith(b"! header") and parts.rest.startswith(b"1000000 ")
        sw, ref = load(p), parse_touchstone(text, p, 1)
        assert np.array_equal(sw.f_hz, f) and np.allclose(sw.gamma, g, atol=1e-9)
        assert np.array_equal(ref.s[:, 0, 0], sw.gamma) and sw.warnings == ref.warnings
    # a bad token in the rest: the same message and line as for the whole text
    text, _, _ = _large_text(n)
    bad_line = 3 + 30_000  # the 30,000th data row (three header lines before the first)
    rows = text.split("\n")
    rows[bad_line - 1] = rows[bad_line - 1].replace(" ", " 0x", 1)
    p = tmp_path / "bad.s1p"
    p.write_text("\n".join(rows))
    with pytest.raises(TouchstoneError) as e_file:
        load(p)
    with pytest.raises(TouchstoneError) as e_text:
        parse_touchstone("\n".join(rows), p, 1)
    assert str(e_file.value) == str(e_text.value) and e_file.value.line == bad_line


def test_large_file_with_binary_content_or_latin1_in_the_rest(tmp_path):
    # the two parts follow the one input policy: binary content is refused with its line; a
    # Latin-1 comment decodes (read as text)
    text, f, _ = _large_text(40_000)
    rows = text.split("\n")
    p = tmp_path / "bin.s1p"
    p.write_bytes("\n".join(rows[:20_000]).encode() + b"\n\x00\x01\n" + "\n".join(rows[20_000:]).encode())
    with pytest.raises(TouchstoneError, match="binary content") as ei:
        load(p)
    assert ei.value.line == 20_001
    p = tmp_path / "latin.s1p"
    p.write_bytes("\n".join(rows[:20_000]).encode() + b"\n! \xb5W\n" + "\n".join(rows[20_000:]).encode())
    assert np.array_equal(load(p).f_hz, f)
