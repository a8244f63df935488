"""render/plots.py: the figures hold the computed metrics, the threshold and the bands where they belong."""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from helpers import ROOT, gamma_of, series_rlc_z

from matchtool import reflection as rf
from matchtool.errors import UsageError
from matchtool.render import plots
from matchtool.sweep import sweep_from_arrays

F0, L_H, R = 915e6, 40e-9, 50.0


def rlc_trace(label="ant.s1p", f0=F0, n=2301, z0=50.0):
    f = np.linspace(800e6, 1030e6, n)
    sw = sweep_from_arrays(f, gamma_of(series_rlc_z(f, R, L_H, f0), z0), z0, path=f"/x/{label}")
    return plots.trace_from_sweep(sw, 10.0, label)


def by_gid(fig, gid):
    found = [a for ax in fig.axes for a in ax.get_children() if a.get_gid() == gid]
    assert found, f"no artist with gid {gid!r}"
    return found[0]


def span_x(patch):
    """x extent (data) of an axvspan patch (Rectangle in recent matplotlib, Polygon before)."""
    if hasattr(patch, "get_width"):
        return patch.get_x(), patch.get_x() + patch.get_width()
    xs = patch.get_xy()[:, 0]
    return xs.min(), xs.max()


def rlc_edges_hz(f0, l_h, r_ohm, x_ohm):
    """Frequencies where a series RLC's reactance equals +-x: w L - 1/(w C) = +-x (closed form)."""
    c = 1 / ((2 * math.pi * f0) ** 2 * l_h)
    out = []
    for s in (-1, 1):
        w = (s * x_ohm + math.sqrt(x_ohm**2 + 4 * l_h / c)) / (2 * l_h)
        out.append(w / (2 * math.pi))
    return sorted(out)


def test_return_loss_panel_holds_the_metrics_threshold_and_masks():
    t = rlc_trace()
    bands = [plots.BandMask("ism", 902e6, 928e6, 12.0)]
    fig = plots.figure([t], ["return-loss"], 10.0, bands)
    line = by_gid(fig, "return-loss:trace:ant.s1p")
    np.testing.assert_allclose(line.get_xdata() * 1e6, t.f_hz)  # MHz axis
    np.testing.assert_allclose(line.get_ydata(), rf.return_loss_db(t.gamma))
    thr = by_gid(fig, "return-loss:threshold")
    assert set(np.asarray(thr.get_ydata(), float)) == {10.0}
    lo, hi = span_x(by_gid(fig, "return-loss:band:ism"))
    assert (lo, hi) == pytest.approx((902.0, 928.0))
    mask = by_gid(fig, "return-loss:mask:ism")
    assert list(mask.get_xdata()) == pytest.approx([902.0, 928.0]) and list(mask.get_ydata()) == [12.0, 12.0]
    # Threshold-band edges: RL 10 dB where |X| = (2/3) Z0 for R = Z0 (derived; tests/REFERENCES.md "Exact test vectors")
    edges = by_gid(fig, "return-loss:edges:ant.s1p")
    np.testing.assert_allclose(np.asarray(edges.get_xdata()) * 1e6, rlc_edges_hz(F0, L_H, R, 2 / 3 * 50), rtol=2e-6)
    best = by_gid(fig, "return-loss:best:ant.s1p")
    assert best.get_xdata()[0] * 1e6 == pytest.approx(F0, abs=0.1e6)
    ax = fig.axes[0]
    assert "positive" in ax.get_ylabel() and ax.get_xlabel() == "Frequency (MHz)"


def test_s11_panel_is_the_negative_and_labelled_so():
    t = rlc_trace()
    fig = plots.figure([t], ["s11-db"], 10.0, [plots.BandMask("ism", 902e6, 928e6, 10.0)])
    line = by_gid(fig, "s11-db:trace:ant.s1p")
    np.testing.assert_allclose(line.get_ydata(), 20 * np.log10(np.abs(t.gamma)))
    assert set(np.asarray(by_gid(fig, "s11-db:threshold").get_ydata(), float)) == {-10.0}
    assert list(by_gid(fig, "s11-db:mask:ism").get_ydata()) == [-10.0, -10.0]
    assert "= -return loss" in fig.axes[0].get_ylabel()
    assert fig.axes[0].get_ylim()[1] == 0.0


def test_vswr_panel_threshold_is_the_equivalent_vswr():
    t = rlc_trace()
    fig = plots.figure([t], ["vswr"], 10.0, [plots.BandMask("ism", 902e6, 928e6, 9.5424)])
    np.testing.assert_allclose(by_gid(fig, "vswr:trace:ant.s1p").get_ydata(), rf.vswr(t.gamma))
    # RL 10 dB <-> VSWR 1.9250; RL 9.5424 dB <-> VSWR 2.0 (Pozar 4th ed. eq. 2.40; table in tests/REFERENCES.md)
    assert float(np.asarray(by_gid(fig, "vswr:threshold").get_ydata())[0]) == pytest.approx(1.9250, abs=1e-4)
    assert by_gid(fig, "vswr:mask:ism").get_ydata()[0] == pytest.approx(2.0, abs=1e-4)


def test_smith_chart_traces_gamma_with_threshold_circle_and_band_edge_markers():
    t = rlc_trace()
    fig = plots.figure([t], ["smith"], 10.0, [plots.BandMask("ism", 902e6, 928e6)])
    tr = by_gid(fig, "smith:trace:ant.s1p")
    np.testing.assert_allclose(tr.get_xdata(), t.gamma.real)
    np.testing.assert_allclose(tr.get_ydata(), t.gamma.imag)
    circ = by_gid(fig, "smith:threshold")
    r = np.hypot(circ.get_xdata(), circ.get_ydata())
    np.testing.assert_allclose(r, 10 ** (-10 / 20))  # 0.31623 (Pozar 4th ed. eq. 2.38 at RL 10 dB)
    marks = by_gid(fig, "smith:bandedge:ism:ant.s1p")
    exact = gamma_of(series_rlc_z(np.array([902e6, 928e6]), R, L_H, F0))  # closed form, not interpolated
    np.testing.assert_allclose(marks.get_xdata(), exact.real, atol=1e-5)
    np.testing.assert_allclose(marks.get_ydata(), exact.imag, atol=1e-5)
    # reactance sign: below resonance a series RLC is capacitive (lower half of the chart)
    assert marks.get_ydata()[0] < 0 < marks.get_ydata()[1]


def test_impedance_panel_r_and_x():
    t = rlc_trace()
    fig = plots.figure([t], ["impedance"], 10.0)
    z = series_rlc_z(t.f_hz, R, L_H, F0)
    np.testing.assert_allclose(by_gid(fig, "impedance:r:ant.s1p").get_ydata(), z.real, rtol=1e-8)
    np.testing.assert_allclose(by_gid(fig, "impedance:x:ant.s1p").get_ydata(), z.imag, atol=1e-6)
    assert set(np.asarray(by_gid(fig, "impedance:z0").get_ydata(), float)) == {50.0}


def test_several_panels_and_overlays_with_legend_from_file_names():
    a, b = rlc_trace("r1.s1p", 900e6), rlc_trace("r2.s1p", 921e6)
    fig = plots.figure([a, b], ["return-loss", "vswr", "smith", "impedance"], 10.0)
    assert [ax.get_gid() for ax in fig.axes[:4]] == ["panel:return-loss", "panel:vswr", "panel:smith", "panel:impedance"]
    labels = [tx.get_text() for tx in fig.axes[0].get_legend().get_texts()]
    assert any(s.startswith("r1.s1p") for s in labels) and any(s.startswith("r2.s1p") for s in labels)
    l1, l2 = by_gid(fig, "return-loss:trace:r1.s1p"), by_gid(fig, "return-loss:trace:r2.s1p")
    assert l1.get_color() != l2.get_color() and l1.get_linestyle() != l2.get_linestyle()


def test_legend_labels_fall_back_to_paths_on_collisions():
    assert plots.legend_labels(["a/r1.s1p", "b/r2.s1p"]) == ["r1.s1p", "r2.s1p"]
    assert plots.legend_labels(["a/u.s1p", "b/u.s1p", "c/v.s1p"]) == ["a/u.s1p", "b/u.s1p", "v.s1p"]


def test_frequency_unit_fits_the_range():
    assert plots.frequency_unit([800e6, 1030e6]) == (1e6, "MHz")
    assert plots.frequency_unit([2.4e9, 2.5e9]) == (1e6, "MHz")
    assert plots.frequency_unit([1e9, 6e9]) == (1e9, "GHz")
    assert plots.frequency_unit([10e9, 10.5e9]) == (1e9, "GHz")
    assert plots.frequency_unit([100e3, 500e3]) == (1e3, "kHz")
    fig = plots.figure([plots.trace_from_sweep(sweep_from_arrays(
        np.linspace(1e9, 6e9, 51), np.full(51, 0.2 + 0j), 50.0, path="wide.s1p"), 10.0)], ["return-loss"], 10.0)
    line = by_gid(fig, "return-loss:trace:wide.s1p")
    assert line.get_xdata()[-1] == pytest.approx(6.0) and fig.axes[0].get_xlabel() == "Frequency (GHz)"


def _lightness(hex_colour: str) -> float:
    """CIE 1976 L* of an sRGB colour (sRGB transfer per IEC 61966-2-1; Rec. 709 luminance weights)."""
    c = np.array([int(hex_colour[i:i + 2], 16) / 255 for i in (1, 3, 5)])
    lin = np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)
    y = float(lin @ [0.2126, 0.7152, 0.0722])
    return 116 * y ** (1 / 3) - 16 if y > 216 / 24389 else 24389 / 27 * y


def test_palette_separates_in_greyscale_and_never_relies_on_hue_alone():
    light = [_lightness(h) for _, h in plots.PALETTE]
    first = light[:4]
    assert min(abs(a - b) for i, a in enumerate(first) for b in first[i + 1:]) >= 15  # first four: clear steps
    assert min(abs(a - b) for i, a in enumerate(light) for b in light[i + 1:]) >= 5
    assert len(set(map(str, plots.DASHES))) == len(plots.DASHES) == len(plots.PALETTE)
    assert len(set(plots.MARKERS)) == len(plots.MARKERS)


def test_svg_keeps_labels_as_text():
    fig = plots.figure([rlc_trace("rev_a.s1p")], ["return-loss", "smith"], 10.0, [plots.BandMask("ism", 902e6, 928e6, 10.0)])
    svg = plots.figure_bytes(fig, "svg").decode()
    for text in ("Return loss (dB, positive)", "Frequency (MHz)", "rev_a.s1p", "ism", "Smith chart",
                 "threshold RL 10.0 dB", "RL &gt;= 10.0 dB"):
        assert text in svg, text
    assert "<dc:date>" not in svg  # no time stamp: the same input draws the same file
    assert plots.figure_bytes(fig, "png")[:8] == b"\x89PNG\r\n\x1a\n"
    assert plots.figure_bytes(fig, "pdf")[:5] == b"%PDF-"


def test_bad_kinds_and_formats_are_refused():
    with pytest.raises(UsageError, match="unknown plot kind"):
        plots.parse_kinds(["return-loss,polar"])
    assert plots.parse_kinds(["smith,vswr", "smith"]) == ["smith", "vswr"]
    with pytest.raises(UsageError, match=".png, .svg or .pdf"):
        plots.output_format("out.jpg")
    assert plots.output_format("A.SVG") == "svg"


def test_importing_plots_does_not_import_matplotlib():
    code = "import matchtool.render.plots, sys; print('matplotlib' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True).stdout
    assert out.strip() == "False"


# --- the plot command ----------------------------------------------------------------------------

def test_plot_command_writes_each_format_and_refuses_overwrite(cli, tmp_path):
    from helpers import write_rlc

    a, b = write_rlc(tmp_path / "r1.s1p", f0_hz=900e6), write_rlc(tmp_path / "r2.s1p")
    for ext, magic in (("png", b"\x89PNG"), ("svg", b"<?xml"), ("pdf", b"%PDF")):
        out = tmp_path / f"p.{ext}"
        r = cli("plot", a, b, "--band", "ism=902MHz:928MHz", "--kind", "return-loss,smith", "--kind", "vswr",
                "--out", out)
        assert r.code == 0, r.err
        assert out.read_bytes().startswith(magic)
    svg = (tmp_path / "p.svg").read_text()
    assert "r1.s1p" in svg and "r2.s1p" in svg and "VSWR" in svg and "ism" in svg
    before = (tmp_path / "p.png").read_bytes()
    r = cli("plot", a, "--out", tmp_path / "p.png")
    assert r.code == 2 and len(r.err_lines) == 1 and "--force" in r.err and "p.png" in r.err
    assert (tmp_path / "p.png").read_bytes() == before
    r = cli("plot", a, "--out", tmp_path / "p.png", "--force")
    assert r.code == 0 and (tmp_path / "p.png").read_bytes() != before


def test_plot_command_errors_are_one_line_and_leave_nothing(cli, tmp_path):
    from helpers import write_rlc

    a = write_rlc(tmp_path / "r1.s1p")
    bad = tmp_path / "bad.s1p"
    bad.write_text("# Hz S RI R 50\n1e9 0.1 0.0 7\n")
    cases = [
        (("plot", a, "--out", tmp_path / "p.jpg"), ".jpg"),
        (("plot", a, "--out", tmp_path / "p"), "(none)"),
        (("plot", a, "--out", tmp_path / "nodir" / "p.png"), "does not exist"),
        (("plot", a, "--out", tmp_path / "p.png", "--kind", "polar"), "polar"),
        (("plot", a, bad, "--out", tmp_path / "p.png"), "bad.s1p"),
        (("plot", a, "--out", tmp_path / "p.png", "--band", "1GHz"), "1GHz"),
    ]
    for args, must in cases:
        r = cli(*args)
        assert r.code == 2, args
        assert len(r.err_lines) == 1 and r.err_lines[0].startswith("error: ") and must in r.err, (must, r.err)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bad.s1p", "r1.s1p"]  # nothing half-written


def test_plot_into_unwritable_directory_is_one_line(cli, tmp_path):
    import os

    from helpers import write_rlc

    a = write_rlc(tmp_path / "r1.s1p")
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o500)
    try:
        target = ro
        if os.access(ro, os.W_OK):  # running as root: permissions do not bind; /proc refuses new files
            if not os.path.isdir("/proc/self"):
                pytest.skip("no unwritable directory available for this user")
            target = Path("/proc")
        r = cli("plot", a, "--out", target / "p.png")
        assert r.code == 2 and len(r.err_lines) == 1 and "cannot write" in r.err
    finally:
        ro.chmod(0o700)


def test_non_passive_points_stay_on_the_axes_and_single_points_draw(tmp_path):
    # |Gamma| > 1 gives a negative return loss: the axis must extend below 0 to show it.
    f = np.array([900e6, 910e6, 920e6, 930e6])
    g = np.array([1.2, 0.9, 0.2, 1.05]) + 0j
    t = plots.trace_from_sweep(sweep_from_arrays(f, g, 50.0, path="over.s1p"), 10.0)
    fig = plots.figure([t], ["return-loss", "s11-db"], 10.0)
    lo, hi = fig.axes[0].get_ylim()
    assert lo <= -20 * math.log10(1.2) and hi >= -20 * math.log10(0.2)
    assert fig.axes[1].get_ylim()[1] >= 20 * math.log10(1.2)
    one = plots.trace_from_sweep(sweep_from_arrays(f[:1], g[1:2], 50.0, path="one.s1p"), 10.0)
    fig = plots.figure([one], list(plots.KINDS), 10.0)
    a, b = fig.axes[0].get_xlim()
    assert a < 900.0 < b
    assert fig.axes[0].get_ylim()[0] == 0.0


def test_trace_looks_do_not_repeat_within_three_rounds_of_the_palette():
    looks = [plots._look(i) for i in range(18)]
    combos = {(lk["color"], str(lk["linestyle"]), lk["marker"]) for lk in looks}
    assert len(combos) == 18


def test_plotted_return_loss_agrees_with_scikit_rf(tmp_path):
    # Reference library check: scikit-rf's own s_db of the loaded network is S11 in dB; our return-loss
    # curve must be exactly its negative and our S11 curve equal to it.
    from helpers import write_rlc

    from matchtool.sweep import load

    sw = load(write_rlc(tmp_path / "u.s1p", r_ohm=35.0))
    t = plots.trace_from_sweep(sw, 10.0)
    fig = plots.figure([t], ["return-loss", "s11-db"], 10.0)
    s_db = sw.network.s_db[:, 0, 0]
    np.testing.assert_allclose(by_gid(fig, "return-loss:trace:u.s1p").get_ydata(), -s_db, rtol=1e-12)
    np.testing.assert_allclose(by_gid(fig, "s11-db:trace:u.s1p").get_ydata(), s_db, rtol=1e-12)
    np.testing.assert_allclose(by_gid(fig, "return-loss:trace:u.s1p").get_xdata(), sw.network.frequency.f / 1e6)


def test_three_panels_leave_no_empty_grid_cell():
    t = rlc_trace()
    fig = plots.figure([t], ["return-loss", "vswr", "smith"], 10.0)
    panels = [ax for ax in fig.axes if (ax.get_gid() or "").startswith("panel:")]
    assert len(panels) == 3
    last = panels[2].get_subplotspec()
    assert list(last.colspan) == [0, 1] and list(last.rowspan) == [1]  # the whole bottom row
    # four panels still fill the 2 x 2 grid one cell each
    fig4 = plots.figure([t], ["return-loss", "vswr", "smith", "impedance"], 10.0)
    spans = [len(ax.get_subplotspec().colspan) for ax in fig4.axes if (ax.get_gid() or "").startswith("panel:")]
    assert spans == [1, 1, 1, 1]


def test_infinite_vswr_is_marked_at_the_axis_top_not_left_out():
    # VSWR = (1 + |G|) / (1 - |G|) has no finite value for |G| >= 1 (Pozar, Microwave Engineering,
    # 4th ed., eq. 2.40): those samples are marked on the top edge and named in the legend.
    f = np.linspace(800e6, 1000e6, 201)
    mag = np.clip(np.abs(f - 900e6) / 60e6, 0.02, 1.05)
    g = mag * np.exp(0.3j)
    t = plots.trace_from_sweep(sweep_from_arrays(f, g, 50.0, path="/x/edge.s1p"), 10.0)
    fig = plots.figure([t], ["vswr"], 10.0)
    ax = fig.axes[0]
    mark = by_gid(fig, "vswr:unbounded:edge.s1p")
    x, y = np.asarray(mark.get_xdata(), dtype=float), np.asarray(mark.get_ydata(), dtype=float)
    off = np.abs(g) >= 1.0
    assert off.any() and not off.all()
    np.testing.assert_array_equal(np.isfinite(x), off)  # exactly the samples with |G| >= 1
    np.testing.assert_allclose(x[off], f[off] / 1e6)
    assert np.all(y == ax.get_ylim()[1]) and mark.get_clip_on() is False
    # the curve itself keeps the computed values (finite everywhere else)
    trace = np.asarray(by_gid(fig, "vswr:trace:edge.s1p").get_ydata(), dtype=float)
    np.testing.assert_allclose(trace[~off], rf.vswr(g[~off]))
    labels = [tx.get_text() for tx in ax.get_legend().get_texts()]
    assert any("VSWR infinite" in s and f"{int(off.sum())} sample" in s for s in labels)
    # a passive sweep gets no such mark
    fig = plots.figure([rlc_trace()], ["vswr"], 10.0)
    assert not [a for a in fig.axes[0].get_children() if (a.get_gid() or "").startswith("vswr:unbounded")]


def test_band_outside_the_sweep_keeps_the_layout_and_labels_in_view():
    import warnings

    t = rlc_trace()  # 800 to 1030 MHz
    bands = [plots.BandMask("far", 2.4e9, 2.5e9, 10.0), plots.BandMask("edge", 780e6, 820e6, 10.0)]
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # matplotlib warns when the layout collapses
        fig = plots.figure([t], ["return-loss", "vswr"], 10.0, bands)
        plots.figure_bytes(fig, "png")
    ax = fig.axes[0]
    assert not [a for a in ax.get_children() if a.get_gid() == "return-loss:bandlabel:far"]
    edge = by_gid(fig, "return-loss:bandlabel:edge")
    x_mhz = edge.xy[0]
    assert 800.0 <= x_mhz <= 820.0  # over the visible part of the band, not at its centre 800 MHz
    assert x_mhz == pytest.approx(810.0)


def _texts(ax):
    return [c for c in ax.get_children() if hasattr(c, "get_text") and c.get_text()]


def test_nested_band_names_sit_on_their_own_rows_above_the_plot_with_their_limits():
    t = rlc_trace()
    bands = [plots.BandMask("ism", 902e6, 928e6, 10.0), plots.BandMask("ism guard", 895e6, 935e6, 6.0206)]
    fig = plots.figure([t], ["return-loss", "vswr"], 10.0, bands)
    for kind in ("return-loss", "vswr"):
        a, b = by_gid(fig, f"{kind}:bandlabel:ism"), by_gid(fig, f"{kind}:bandlabel:ism guard")
        # above the axes (y = 1 in axes fraction, offset upward), one row apart: never stacked on one region
        assert a.xy[1] == b.xy[1] == 1.0 and a.xyann[1] > 0 and b.xyann[1] > 0
        assert abs(a.xyann[1] - b.xyann[1]) >= plots.BAND_ROW_PT
        assert "ism: " in a.get_text() and "ism guard: " in b.get_text()  # the limit is named with its band
    assert by_gid(fig, "return-loss:bandlabel:ism guard").get_text() == "ism guard: RL >= 6.02 dB"
    # no limit label inside the plot, where a best-match mark could sit on it
    inside = [x.get_text() for x in _texts(fig.axes[0]) if ">=" in x.get_text() and getattr(x, "xyann", (0, 1))[1] <= 0]
    assert inside == []


def test_marks_are_matchtools_own_open_hexagons_and_tinted_limits_not_triangles_or_hatching():
    t = rlc_trace()
    fig = plots.figure([t], ["return-loss", "vswr", "smith"], 10.0, [plots.BandMask("ism", 902e6, 928e6, 12.0)])
    for kind in ("return-loss", "vswr", "smith"):
        best = by_gid(fig, f"{kind}:best:ant.s1p")
        assert best.get_marker() == plots.BEST_MARKER == "H" and best.get_markerfacecolor() in ("white", "w", (1, 1, 1, 1))
        assert best.get_clip_on() is False  # a VSWR near 1 is not cut at the axis floor
    for kind in ("return-loss", "vswr"):
        fill = by_gid(fig, f"{kind}:maskfill:ism")
        assert not fill.get_hatch() and 0 < fill.get_alpha() < 0.3


def test_vswr_best_mark_at_the_floor_is_whole():
    # a perfect match at one sample: VSWR 1 sits on the axis floor (the axis starts at 1)
    f = np.linspace(800e6, 1000e6, 201)
    g = gamma_of(series_rlc_z(f, 50.0, L_H, 900e6))
    t = plots.trace_from_sweep(sweep_from_arrays(f, g, 50.0, path="/x/p.s1p"), 10.0)
    fig = plots.figure([t], ["vswr"], 10.0)
    best = by_gid(fig, "vswr:best:p.s1p")
    assert best.get_ydata()[0] == pytest.approx(1.0, abs=1e-6) and fig.axes[0].get_ylim()[0] == 1.0
    assert best.get_clip_on() is False


def test_smith_edges_are_named_in_the_legend_not_written_over_the_chart():
    f = np.linspace(2.3e9, 2.6e9, 601)
    g = gamma_of(series_rlc_z(f, 50.0, 8e-9, 2.44e9))
    t = plots.trace_from_sweep(sweep_from_arrays(f, g, 50.0, path="/x/pcb.s1p"), 10.0)
    bands = [plots.BandMask("2.4 GHz ISM", 2400e6, 2483.5e6, 10.0)]
    fig = plots.figure([t], ["smith"], 10.0, bands)
    ax = fig.axes[0]
    assert not [x for x in _texts(ax) if "2483" in x.get_text() or "2400" in x.get_text()]
    labels = [x.get_text() for x in ax.get_legend().get_texts()]
    assert "2.4 GHz ISM edges: 2400 / 2483.5 MHz" in labels  # the edge at the digits it was given


def test_a_picture_that_stands_alone_explains_its_marks():
    t = rlc_trace()
    bands = [plots.BandMask("ism", 902e6, 928e6, 10.0)]
    alone = plots.figure([t], ["return-loss"], 10.0, bands)
    labels = [x.get_text() for x in alone.axes[0].get_legend().get_texts()]
    for must in ("best match of each trace", "bars: where a trace crosses the threshold",
                 "tint: beyond a band's limit (line: the limit)", "grey: a band (named above the plot)"):
        assert must in labels, must
    in_report = plots.figure([t], ["return-loss"], 10.0, bands, explain=False)  # the caption explains
    assert not [x for x in in_report.axes[0].get_legend().get_texts() if "best match of" in x.get_text()]
