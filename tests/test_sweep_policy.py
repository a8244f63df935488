"""Loader policy: Y/Z/H/G normalisation, version 2 details, large sweeps, limits, cost against
scikit-rf's own reader.

Sources for the conversions:
- Touchstone File Format Specification 2.0 (IBIS Open Forum), option line: in version 1 files Z
  and Y data are normalised to R, and H/G data likewise (h11 and g22 are impedances divided by R,
  h22 and g11 admittances multiplied by R, h12/h21/g12/g21 dimensionless); in version 2 files the
  data are not normalised (confirmed in part).
- S from Z at a common real reference Z0: S = (Z - Z0 U)(Z + Z0 U)^-1 (Pozar, Microwave
  Engineering, 4th ed., sec. 4.3; from memory for the equation number), and Z = Y^-1.
- H and G from Z (derived here by solving the Z equations for the hybrid variables):
  h11 = det Z / z22, h12 = z12 / z22, h21 = -z21 / z22, h22 = 1 / z22;
  g11 = 1 / z11, g12 = -z12 / z11, g21 = z21 / z11, g22 = det Z / z11.
- scikit-rf 2.2 conversions (skrf.network.h2s, g2s, z2s) as the reference library.
"""

from __future__ import annotations

import numpy as np
import pytest
import skrf

from matchtool.errors import TouchstoneError
from matchtool.sweep import load, parse_touchstone

R = 50.0
F_GHZ = np.array([1.0, 1.5, 2.0])


def tee_z(f_ghz: np.ndarray) -> np.ndarray:
    """Z matrix (ohm) of a lossy tee: series 20 + jX_L, shunt 100 - jX_C, series 35 + jX_L/2."""
    w = 2 * np.pi * f_ghz * 1e9
    za = 20 + 1j * w * 3e-9
    zb = 35 + 1j * w * 1.5e-9
    zc = 100 + 1 / (1j * w * 2e-12)
    z = np.empty((len(f_ghz), 2, 2), dtype=complex)
    z[:, 0, 0], z[:, 0, 1], z[:, 1, 0], z[:, 1, 1] = za + zc, zc, zc, zb + zc
    return z


def s_from_z(z: np.ndarray, z0: float) -> np.ndarray:
    u = np.eye(z.shape[1])
    return (z - z0 * u) @ np.linalg.inv(z + z0 * u)


def h_from_z(z):
    det = z[:, 0, 0] * z[:, 1, 1] - z[:, 0, 1] * z[:, 1, 0]
    h = np.empty_like(z)
    h[:, 0, 0], h[:, 0, 1] = det / z[:, 1, 1], z[:, 0, 1] / z[:, 1, 1]
    h[:, 1, 0], h[:, 1, 1] = -z[:, 1, 0] / z[:, 1, 1], 1 / z[:, 1, 1]
    return h


def g_from_z(z):
    det = z[:, 0, 0] * z[:, 1, 1] - z[:, 0, 1] * z[:, 1, 0]
    g = np.empty_like(z)
    g[:, 0, 0], g[:, 0, 1] = 1 / z[:, 0, 0], -z[:, 0, 1] / z[:, 0, 0]
    g[:, 1, 0], g[:, 1, 1] = z[:, 1, 0] / z[:, 0, 0], det / z[:, 0, 0]
    return g


def v1_two_port(param: str, m: np.ndarray, r_ohm: float = R) -> str:
    rows = [f"# GHz {param} RI R {r_ohm:g}"]
    for f, k in zip(F_GHZ, m, strict=True):
        vals = [k[0, 0], k[1, 0], k[0, 1], k[1, 1]]  # v1 two-port order N11 N21 N12 N22
        rows.append(f"{f:g} " + " ".join(f"{v.real:.15g} {v.imag:.15g}" for v in vals))
    return "\n".join(rows) + "\n"


def test_tee_identities_hold():
    # the independent formulas agree with each other: G = H^-1 and Y = Z^-1 give the same S
    z = tee_z(F_GHZ)
    assert np.allclose(np.linalg.inv(h_from_z(z)), g_from_z(z))
    assert np.allclose(skrf.network.z2s(z, R), s_from_z(z, R))


def test_v1_z_two_port_normalised():
    z = tee_z(F_GHZ)
    ts = parse_touchstone(v1_two_port("Z", z / R), "z.s2p", 2)
    assert np.allclose(ts.s, s_from_z(z, R), atol=1e-12)


def test_v1_y_two_port_normalised():
    z = tee_z(F_GHZ)
    y = np.linalg.inv(z)
    ts = parse_touchstone(v1_two_port("Y", y * R), "y.s2p", 2)
    assert np.allclose(ts.s, s_from_z(z, R), atol=1e-12)


@pytest.mark.parametrize("r_ohm", [50.0, 75.0])
def test_v1_h_two_port_normalised(r_ohm):
    z = tee_z(F_GHZ)
    h = h_from_z(z)
    hn = h.copy()
    hn[:, 0, 0] /= r_ohm  # impedance / R
    hn[:, 1, 1] *= r_ohm  # admittance * R
    ts = parse_touchstone(v1_two_port("H", hn, r_ohm), "h.s2p", 2)
    assert np.allclose(ts.s, s_from_z(z, r_ohm), atol=1e-12)
    assert np.allclose(ts.s, skrf.network.h2s(h, r_ohm), atol=1e-12)


@pytest.mark.parametrize("r_ohm", [50.0, 75.0])
def test_v1_g_two_port_normalised(r_ohm):
    z = tee_z(F_GHZ)
    g = g_from_z(z)
    gn = g.copy()
    gn[:, 0, 0] *= r_ohm  # admittance * R
    gn[:, 1, 1] /= r_ohm  # impedance / R
    ts = parse_touchstone(v1_two_port("G", gn, r_ohm), "g.s2p", 2)
    assert np.allclose(ts.s, s_from_z(z, r_ohm), atol=1e-12)
    assert np.allclose(ts.s, skrf.network.g2s(g, r_ohm), atol=1e-12)


def _v2_two_port(param: str, m: np.ndarray, ref: str = "", order: str = "12_21") -> str:
    rows = ["[Version] 2.0", f"# GHz {param} RI R 50", "[Number of Ports] 2", f"[Two-Port Data Order] {order}",
            f"[Number of Frequencies] {len(F_GHZ)}"]
    if ref:
        rows.append(f"[Reference] {ref}")
    rows.append("[Network Data]")
    for f, k in zip(F_GHZ, m, strict=True):
        vals = [k[0, 0], k[0, 1], k[1, 0], k[1, 1]] if order == "12_21" else [k[0, 0], k[1, 0], k[0, 1], k[1, 1]]
        rows.append(f"{f:g} " + " ".join(f"{v.real:.15g} {v.imag:.15g}" for v in vals))
    rows.append("[End]")
    return "\n".join(rows) + "\n"


@pytest.mark.parametrize("order", ["12_21", "21_12"])
def test_v2_z_is_not_normalised(order):
    z = tee_z(F_GHZ)
    ts = parse_touchstone(_v2_two_port("Z", z, order=order), "z.ts", None)
    assert np.allclose(ts.s, s_from_z(z, R), atol=1e-12)


def test_v2_z_with_per_port_reference_matches_skrf():
    z = tee_z(F_GHZ)
    ts = parse_touchstone(_v2_two_port("Z", z, ref="50 75"), "z.ts", None)
    assert list(ts.z0_ohm) == [50.0, 75.0]
    assert np.allclose(ts.s, skrf.network.z2s(z, np.array([50.0, 75.0])), atol=1e-12)


def test_v2_h_and_g_are_not_normalised():
    z = tee_z(F_GHZ)
    ts_h = parse_touchstone(_v2_two_port("H", h_from_z(z)), "h.ts", None)
    ts_g = parse_touchstone(_v2_two_port("G", g_from_z(z)), "g.ts", None)
    assert np.allclose(ts_h.s, s_from_z(z, R), atol=1e-12)
    assert np.allclose(ts_g.s, s_from_z(z, R), atol=1e-12)


def test_h_in_a_one_port_is_refused():
    with pytest.raises(TouchstoneError, match="need a 2-port"):
        parse_touchstone("# GHz H RI R 50\n1 0.1 0.2\n", "h.s1p", 1)


def test_v2_noise_data_counted_and_checked():
    z = tee_z(F_GHZ)
    base = _v2_two_port("Z", z).replace("[End]\n", "")
    ok = base.replace("[Network Data]", "[Number of Noise Frequencies] 2\n[Network Data]")
    ok += "[Noise Data]\n1.0 1.2 0.3 45 0.4\n2.0 1.4 0.35 50 0.45\n[End]\n"
    ts = parse_touchstone(ok, "n.ts", None)
    assert ts.noise_points == 2 and len(ts.f_hz) == 3
    with pytest.raises(TouchstoneError, match=r"Number of Noise Frequencies\] is 3"):
        parse_touchstone(ok.replace("Noise Frequencies] 2", "Noise Frequencies] 3"), "n.ts", None)
    with pytest.raises(TouchstoneError, match="expected 5 numbers for a noise row") as ei:
        parse_touchstone(ok.replace("2.0 1.4 0.35 50 0.45", "2.0 1.4 0.35 50"), "n.ts", None)
    assert ei.value.line == ok.splitlines().index("2.0 1.4 0.35 50 0.45") + 1


def test_three_port_records_may_wrap_but_not_straddle():
    rng = np.random.default_rng(3)
    s = rng.uniform(-0.3, 0.3, (4, 3, 3)) + 1j * rng.uniform(-0.3, 0.3, (4, 3, 3))
    rows = ["# GHz S RI R 50"]
    for k in range(4):  # v1 N-port layout: each matrix row on its own line(s)
        for i in range(3):
            lead = f"{k + 1} " if i == 0 else "  "
            rows.append(lead + " ".join(f"{v.real:.15g} {v.imag:.15g}" for v in s[k, i]))
    ts = parse_touchstone("\n".join(rows) + "\n", "a.s3p", 3)
    assert np.allclose(ts.s, s, atol=1e-14)
    bad = rows[:3] + [rows[3] + " " + rows[4].split()[0]] + rows[5:]
    with pytest.raises(TouchstoneError, match="past the record") as ei:
        parse_touchstone("\n".join(bad) + "\n", "a.s3p", 3)
    assert ei.value.line == 4


def _big_one_port(path, n):
    f = np.arange(1, n + 1, dtype=float) * 1e3
    g = 0.5 * np.exp(1j * f / 1e7)
    with open(path, "w") as fh:
        fh.write("! large sweep\n# Hz S RI R 50\n")
        np.savetxt(fh, np.column_stack([f, g.real, g.imag]), fmt="%.12g")
    return f, g


@pytest.mark.slow
def test_200k_points_one_and_two_port(tmp_path):
    # no quadratic step: 200k rows load (timing is left to the benchmark)
    f, g = _big_one_port(tmp_path / "big.s1p", 200_000)
    sw = load(tmp_path / "big.s1p")
    assert sw.f_hz.size == 200_000 and np.allclose(sw.f_hz, f) and np.allclose(sw.gamma, g, atol=1e-11)
    rows = np.column_stack([f, g.real, g.imag, 0.1 * g.real, 0 * f, 0 * f, 0 * f, g.imag, g.real])
    p2 = tmp_path / "big.s2p"
    with open(p2, "w") as fh:
        fh.write("# Hz S RI R 50\n")
        np.savetxt(fh, rows, fmt="%.12g")
        fh.write("1000 1.2 0.3 45 0.4\n")  # a v1 noise block starts at a frequency not above the last
    sw2 = load(p2, port=2)
    assert sw2.f_hz.size == 200_000 and np.allclose(sw2.gamma, g.imag + 1j * g.real, atol=1e-11)


@pytest.mark.slow
def test_million_point_sweep_loads(tmp_path):
    f, g = _big_one_port(tmp_path / "m.s1p", 1_000_000)
    sw = load(tmp_path / "m.s1p")
    assert sw.f_hz.size == 1_000_000
    assert sw.f_hz[-1] == f[-1] and np.allclose(sw.gamma[[0, 500_000, -1]], g[[0, 500_000, -1]], atol=1e-11)


# (the cost against scikit-rf's reader of a 1,000,000-point file is measured by case P5 of
# tests/benchmarks/run.py: speed is benchmarked, never asserted in a timed test)


def test_size_limit_boundary(tmp_path):
    p = tmp_path / "a.s1p"
    p.write_text("# MHz S RI R 50\n100 0.1 0.2\n200 0.1 0.2\n")
    size = p.stat().st_size
    assert load(p, max_bytes=size).f_hz.size == 2
    with pytest.raises(TouchstoneError, match="over the input limit"):
        load(p, max_bytes=size - 1)


@pytest.mark.parametrize("f, s, z0", [
    ([1e9, 2e9], [0.1, 0.2, 0.3], 50.0),  # shapes disagree
    ([1e9, np.nan], [0.1, 0.2], 50.0),
    ([1e9, 2e9], [0.1, np.inf], 50.0),
    ([2e9, 1e9], [0.1, 0.2], 50.0),
    ([-1e9, 1e9], [0.1, 0.2], 50.0),
    ([1e9, 2e9], [0.1, 0.2], 0.0),
    ([], [], 50.0),
])
def test_sweep_from_arrays_refuses_bad_arrays(f, s, z0):
    from matchtool.errors import UsageError
    from matchtool.sweep import sweep_from_arrays
    with pytest.raises(UsageError):
        sweep_from_arrays(np.array(f, dtype=float), np.array(s, dtype=complex), z0)


@pytest.mark.slow
def test_many_repeated_option_lines_are_one_warning_and_linear():
    # every repeat is ignored (Touchstone: only the first option line counts); one warning for all,
    # and the rows between them are still read as one block with the right line numbers
    n = 100_000
    text = "# MHz S RI R 50\n" + "".join(f"# GHz Z\n{k + 1} 0.1 {k * 1e-6:.6f}\n" for k in range(n))
    ts = parse_touchstone(text, "a.s1p", 1)
    assert len(ts.f_hz) == n and ts.f_hz[-1] == n * 1e6 and ts.s[-1, 0, 0] == pytest.approx(0.1 + 0.099999j)
    assert len(ts.warnings) == 1 and "line 2" in ts.warnings[0] and f"{n - 1} more" in ts.warnings[0]
    bad = text.replace(f"\n{n // 2} 0.1", f"\n{n // 2} ")
    with pytest.raises(TouchstoneError, match="found 2") as ei:
        parse_touchstone(bad, "a.s1p", 1)
    assert ei.value.line == 1 + 2 * (n // 2)


# ---------------------------------------------------------------- one input policy (inputs.py)

def test_one_decoding_rule_for_touchstone_and_toml(tmp_path):
    # UTF-16 with a byte-order mark is decoded for every kind of input; without one it is refused
    # (docs/input-policy.md; the marks are those of the Unicode standard, ch. 23.8, from memory)
    from matchtool import inputs
    from matchtool.errors import SpecError

    rows = "# MHz S RI R 50\n100 0.5 0.1\n200 0.2 -0.3\n"
    plain, wide = tmp_path / "a.s1p", tmp_path / "b.s1p"
    plain.write_text(rows)
    wide.write_bytes(rows.replace("\n", "\r\n").encode("utf-16"))
    assert np.array_equal(load(plain).gamma, load(wide).gamma)
    toml = 'name = "x"\n'
    for enc in ("utf-8", "utf-8-sig", "utf-16"):
        p = tmp_path / f"{enc}.toml"
        p.write_bytes(toml.encode(enc))
        assert inputs.read_text(p, kind="toml", error=SpecError) == toml
    latin = tmp_path / "latin.toml"
    latin.write_bytes(b'x = 1\n# caf\xe9\n')
    with pytest.raises(SpecError, match="line 2: byte 0xe9 is not UTF-8"):
        inputs.read_text(latin, kind="toml", error=SpecError)
    # Latin-1 only in Touchstone comments: a Latin-1 byte among the numbers is refused
    bad = tmp_path / "c.s1p"
    bad.write_bytes(b"# MHz S RI R 50\n100 0.5\xb5 0.1\n")
    with pytest.raises(TouchstoneError, match="line 2"):
        load(bad)


def test_special_files_refused_by_every_reader(tmp_path):
    import os

    from matchtool import inputs
    from matchtool.errors import BudgetError

    fifo = tmp_path / "p.toml"
    os.mkfifo(fifo)
    assert inputs.is_special_file(fifo) and not inputs.is_special_file(tmp_path)
    with pytest.raises(BudgetError, match="not a regular file"):
        inputs.read_text(fifo, kind="toml", error=BudgetError)
    with pytest.raises(TouchstoneError, match="not a regular file"):
        inputs.read_text(fifo)


def test_input_limit_is_a_parameter_and_the_cli_sets_it_for_one_run(tmp_path, monkeypatch):
    from matchtool import inputs
    from matchtool.cli import main

    p = tmp_path / "a.s1p"
    p.write_text("# MHz S RI R 50\n" + "".join(f"{100 + k} 0.1 0.2\n" for k in range(2000)))
    monkeypatch.setenv("MATCHTOOL_MAX_INPUT_MB", "0.01")  # the core never reads it
    assert load(p).f_hz.size == 2000
    assert main(["inspect", str(p)]) == 2
    assert inputs.default_max_bytes() == inputs.DEFAULT_MAX_BYTES  # restored after the run
    inputs.set_default_max_bytes(100)
    try:
        with pytest.raises(TouchstoneError, match="over the input limit of 0.0 MB"):
            load(p)
        assert load(p, max_bytes=10**6).f_hz.size == 2000
    finally:
        inputs.set_default_max_bytes(None)
