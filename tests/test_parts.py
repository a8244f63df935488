"""The parts library: measured series 2-ports, equivalent-circuit models, validation.

Independent references: scikit-rf's lumped elements (``DefinedGammaZ0.capacitor`` and friends,
cascaded with ``**``, combined in parallel through their Y matrices) and the series-element
relation Z = 2 Z0 (1 - S21) / S21 (ABCD of a series impedance, Pozar, Microwave Engineering,
4th ed., Tables 4.1 and 4.2).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import skrf

from matchtool.errors import InputError, UsageError
from matchtool.parts import Part, PartsLibrary, PartsLibraryError, load_library, part_abcd, part_two_port
from matchtool.sweep import write_touchstone

F = np.linspace(0.5e9, 6e9, 221)
W = 2 * math.pi * F


def _media(f=F, z0=50.0):
    return skrf.media.DefinedGammaZ0(frequency=skrf.Frequency.from_f(f, unit="Hz"), z0=z0)


def _z_from_s21(net: skrf.Network, z0: float = 50.0) -> np.ndarray:
    s21 = net.s[:, 1, 0]
    return 2 * z0 * (1 - s21) / s21


def _write(net: skrf.Network, path) -> None:
    write_touchstone(path, net, force=True)


def test_measured_capacitor_gives_its_series_impedance(tmp_path):
    # a scikit-rf series capacitor written as the part's measurement: Z = 1/(j w C)
    _write(_media().capacitor(2.2e-12), tmp_path / "c.s2p")
    (tmp_path / "lib.toml").write_text('[[part]]\nkind = "capacitor"\nvalue = "2.2pF"\ntolerance = "0.1pF"\n'
                                       'file = "c.s2p"\n')
    lib = load_library(tmp_path / "lib.toml")
    (p,) = lib.parts
    assert p.measured and p.value == pytest.approx(2.2e-12) and p.tolerance == pytest.approx(0.1e-12)
    np.testing.assert_allclose(p.series_impedance_ohm(F), 1 / (1j * W * 2.2e-12), rtol=1e-6)
    # between samples: S interpolated in complex S, so Z is close to the ideal at the midpoint
    fm = 0.5 * (F[10] + F[11])
    assert p.series_impedance_ohm(fm) == pytest.approx(1 / (1j * 2 * math.pi * fm * 2.2e-12), rel=2e-3)


def test_measured_part_in_series_cascades_its_own_measurement(tmp_path):
    # a part with pad capacitance to ground (not a pure series element): the written network is the
    # measurement itself, not an ideal element rebuilt from S21
    m = _media()
    meas = m.shunt_capacitor(0.05e-12) ** m.inductor(3.3e-9) ** m.shunt_capacitor(0.05e-12)
    _write(meas, tmp_path / "l.s2p")
    (tmp_path / "lib.toml").write_text('[[part]]\nkind = "inductor"\nvalue = "3.3nH"\ntolerance = "2%"\nfile = "l.s2p"\n')
    (p,) = load_library(tmp_path / "lib.toml").parts
    net = part_two_port(p, F, 50.0, "series")
    np.testing.assert_allclose(net.s, meas.s, atol=1e-9)
    # renormalised to another reference through scikit-rf
    net75 = part_two_port(p, F, 75.0, "series")
    ref = meas.copy()
    ref.renormalize(75.0)
    np.testing.assert_allclose(net75.s, ref.s, atol=1e-9)
    assert p.tolerance == pytest.approx(0.02 * 3.3e-9)


def test_capacitor_model_equals_an_skrf_cascade_of_its_circuit():
    # C = 10 pF, SRF 2.5 GHz -> L_s = 1/((2 pi f)^2 C) = 0.405 nH (derived); Q 50 at 1 GHz ->
    # ESR = 1/(2 pi 1e9 * 10e-12 * 50) = 0.318 ohm (derived)
    c, srf, q, fq = 10e-12, 2.5e9, 50.0, 1e9
    p = Part("capacitor", c, 0.25e-12, "C 10 pF", q=q, q_ref_hz=fq, srf_hz=srf)
    ls = 1 / ((2 * math.pi * srf) ** 2 * c)
    esr = 1 / (2 * math.pi * fq * c * q)
    assert ls == pytest.approx(0.4053e-9, rel=1e-3)
    m = _media()
    ref = m.resistor(esr) ** m.inductor(ls) ** m.capacitor(c)
    np.testing.assert_allclose(p.series_impedance_ohm(F), _z_from_s21(ref), rtol=1e-6, atol=1e-9)
    # the capacitor is an inductor above its self-resonance: reactance changes sign at the SRF
    x = p.series_impedance_ohm(np.array([0.9 * srf, srf, 1.1 * srf])).imag
    assert x[0] < 0 < x[2] and abs(x[1]) < 1e-9
    # the shunt position is the same part to ground: scikit-rf's shunt element of that impedance
    shunt = part_two_port(p, F, 50.0, "shunt")
    y = 1 / _z_from_s21(ref)
    ref_shunt = skrf.Network(frequency=shunt.frequency, s=skrf.network.a2s(
        np.array([[[1, 0], [yy, 1]] for yy in y], dtype=complex), 50.0), z0=50.0)
    np.testing.assert_allclose(shunt.s, ref_shunt.s, atol=1e-12)
    # and for an ideal part it equals scikit-rf's own shunt capacitor
    ideal = Part("capacitor", c, 0.0, "C ideal")
    np.testing.assert_allclose(part_two_port(ideal, F, 50.0, "shunt").s, m.shunt_capacitor(c).s, atol=1e-12)


def test_inductor_model_equals_an_skrf_parallel_combination():
    # L = 12 nH, Q 40 at 1 GHz -> R = 2 pi 1e9 12e-9 / 40 = 1.885 ohm (derived); SRF 4.2 GHz ->
    # C_p = 1/((2 pi 4.2e9)^2 12e-9) = 0.1197 pF (derived)
    L, q, fq, srf = 12e-9, 40.0, 1e9, 4.2e9
    p = Part("inductor", L, 0.24e-9, "L 12 nH", q=q, q_ref_hz=fq, srf_hz=srf)
    r = 2 * math.pi * fq * L / q
    cp = 1 / ((2 * math.pi * srf) ** 2 * L)
    m = _media()
    branch = m.resistor(r) ** m.inductor(L)
    cap = m.capacitor(cp)
    # two 2-ports in parallel: their Y matrices add (Pozar 4th ed., sec. 4.3 on Y parameters)
    y = branch.y + cap.y
    ref = skrf.Network(frequency=branch.frequency, s=skrf.network.y2s(y, 50.0), z0=50.0)
    np.testing.assert_allclose(p.series_impedance_ohm(F), _z_from_s21(ref), rtol=1e-6)
    # at low frequency it is the inductor with its Q: X = w L, R as given
    z1 = p.series_impedance_ohm(1e8)
    assert z1.imag == pytest.approx(2 * math.pi * 1e8 * L, rel=1e-3) and z1.real == pytest.approx(r, rel=2e-3)
    # above the SRF it is a capacitor
    assert p.series_impedance_ohm(1.2 * srf).imag < 0 < p.series_impedance_ohm(0.8 * srf).imag


def test_value_shift_moves_the_ideal_element_and_keeps_the_parasitics():
    p = Part("capacitor", 10e-12, 0.5e-12, "C", srf_hz=2.5e9)
    shifted = p.series_impedance_ohm(F, 10.5e-12)
    ls = 1 / ((2 * math.pi * 2.5e9) ** 2 * 10e-12)
    np.testing.assert_allclose(shifted, 1j * W * ls + 1 / (1j * W * 10.5e-12), rtol=1e-9)
    many = p.series_impedance_ohm(F, np.array([9.5e-12, 10e-12, 10.5e-12]))
    assert many.shape == (3, F.size)
    np.testing.assert_allclose(many[1], p.series_impedance_ohm(F), rtol=1e-12)


def test_a_band_outside_a_measured_part_is_refused_with_the_part_named(tmp_path):
    _write(_media(np.linspace(1e9, 3e9, 41)).capacitor(1e-12), tmp_path / "c.s2p")
    (tmp_path / "lib.toml").write_text('name = "kit"\n[[part]]\nkind = "capacitor"\nvalue = "1pF"\ntolerance = "0.05pF"\n'
                                       'file = "c.s2p"\nname = "shelf C1p0"\n')
    lib = load_library(tmp_path / "lib.toml")
    with pytest.raises(UsageError, match="shelf C1p0.*does not cover"):
        lib.parts[0].series_impedance_ohm(np.array([2e9, 4e9]))
    with pytest.raises(PartsLibraryError, match="lib.toml: part 'shelf C1p0' was measured from 1000 to 3000 MHz"):
        lib.check_covers(np.array([0.9e9, 2e9]))


def _lib(tmp_path, text: str):
    p = tmp_path / "lib.toml"
    p.write_text(text)
    return p


@pytest.mark.parametrize("text, message", [
    ('[[part]]\nkind = "capacitor"\nvalue = "1pF"\ntolerance = "5%"\ncolour = "red"\n', r"key 'part\[1\]\.colour': unknown key"),
    ('[[part]]\nkind = "capacitor"\ntolerance = "5%"\n', r"key 'part\[1\]\.value': missing"),
    ('[[part]]\nkind = "resistor"\nvalue = "1pF"\ntolerance = "5%"\n', r"unknown kind 'resistor'"),
    ('[[part]]\nkind = "capacitor"\nvalue = "1nH"\ntolerance = "5%"\n', r"cannot read value '1nH'"),
    ('[[part]]\nkind = "capacitor"\nvalue = "1pF"\ntolerance = "2pF"\n', r"tolerance '2pF' is not below the value"),
    ('[[part]]\nkind = "capacitor"\nvalue = "1pF"\ntolerance = "150%"\n', r"from 0 to 100"),
    ('[[part]]\nkind = "inductor"\nvalue = "1nH"\ntolerance = "5%"\nq = 30\n', r"q without q_ref"),
    ('[[part]]\nkind = "inductor"\nvalue = "1nH"\ntolerance = "5%"\nq = -3\nq_ref = "1GHz"\n', r"q -3 must be a positive"),
    ('[[part]]\nkind = "inductor"\nvalue = "1nH"\ntolerance = "5%"\nsrf = "0GHz"\n', r"srf '0GHz' must be positive"),
    ('[[part]]\nkind = "inductor"\nvalue = "1nH"\ntolerance = "5%"\nfile = "x.s2p"\nq = 3\nq_ref = "1GHz"\n',
     r"both a file and model"),
    ('[[part]]\nkind = "inductor"\nvalue = "1nH"\ntolerance = "5%"\nfile = "missing.s2p"\n', r"does not exist"),
    ('[[part]]\nkind = "inductor"\nvalue = "1nH"\ntolerance = "5%"\n[[part]]\nkind = "inductor"\nvalue = "1nH"\n'
     'tolerance = "2%"\n', r"key 'part\[2\]': duplicates part\[1\]"),
    ('name = "kit"\n', r"no \[\[part\]\] tables"),
    ('[[part]\n', r"not valid TOML"),
    ('parts = 3\n', r"key 'parts': unknown key"),
])
def test_library_validation_is_one_line_naming_file_and_key(tmp_path, text, message):
    p = _lib(tmp_path, text)
    with pytest.raises(PartsLibraryError, match=message) as exc:
        load_library(p)
    assert str(exc.value).startswith(str(p)) and "\n" not in str(exc.value)
    assert isinstance(exc.value, InputError) and isinstance(exc.value, ValueError)


def test_a_part_file_that_is_not_a_two_port_is_refused(tmp_path):
    (tmp_path / "one.s1p").write_text("# GHz S RI R 50\n1 0.1 0\n2 0.1 0\n")
    p = _lib(tmp_path, '[[part]]\nkind = "capacitor"\nvalue = "1pF"\ntolerance = "5%"\nfile = "one.s1p"\n')
    with pytest.raises(PartsLibraryError, match=r"has 1 port\(s\); expected a 2-port"):
        load_library(p)


def test_library_built_in_code_sorts_by_kind_and_value_and_refuses_duplicates():
    lib = PartsLibrary.from_parts([Part("inductor", 12e-9, 0.2e-9, "L12"), Part("capacitor", 2.2e-12, 0.1e-12, "C2"),
                                   Part("capacitor", 1e-12, 0.05e-12, "C1")], name="kit")
    assert [p.label for p in lib.capacitors] == ["C1", "C2"] and [p.label for p in lib.inductors] == ["L12"]
    with pytest.raises(UsageError, match="duplicates"):
        PartsLibrary.from_parts([Part("inductor", 1e-9, 0, "L"), Part("inductor", 2e-9, 0, "L")])
    with pytest.raises(UsageError, match="tolerance"):
        Part("capacitor", 1e-12, 2e-12, "C")


def test_value_shift_of_a_measured_series_part_cascades_the_ideal_change_after_the_measurement(tmp_path):
    # a measured 3.3 nH part with pads, shifted to 3.5 nH: its measurement cascaded with a series
    # 0.2 nH (scikit-rf's inductor), the ideal element's change on the port-2 side (docs/parts.md)
    m = _media()
    meas = m.shunt_capacitor(0.05e-12) ** m.inductor(3.3e-9) ** m.shunt_capacitor(0.05e-12)
    _write(meas, tmp_path / "l.s2p")
    (tmp_path / "lib.toml").write_text('[[part]]\nkind = "inductor"\nvalue = "3.3nH"\ntolerance = "0.3nH"\n'
                                       'file = "l.s2p"\n')
    (p,) = load_library(tmp_path / "lib.toml").parts
    ref = meas ** m.inductor(0.2e-9)
    np.testing.assert_allclose(part_two_port(p, F, 50.0, "series", value=3.5e-9).s, ref.s, atol=1e-9)
    # an array of values gives one ABCD stack per value; the nominal value is the measurement itself
    stack = part_abcd(p, F, "series", np.array([3.3e-9, 3.5e-9]))
    assert stack.shape == (2, F.size, 2, 2)
    np.testing.assert_allclose(skrf.network.a2s(stack[0], 50.0), meas.s, atol=1e-9)
    np.testing.assert_allclose(skrf.network.a2s(stack[1], 50.0), ref.s, atol=1e-9)
