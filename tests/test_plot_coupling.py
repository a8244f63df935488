"""Coupling pictures and the report's coupling section: what is drawn, where, and that nothing
external is referenced (the numbers themselves are checked in test_coupling.py)."""

from __future__ import annotations

import io

import numpy as np
import pytest
import skrf

from matchtool.coupling import analyze_coupling
from matchtool.errors import OutputError
from matchtool.render import plot_coupling as pc
from matchtool.render.report_coupling import section_html
from matchtool.spec import parse_spec

F = np.linspace(2.3e9, 2.6e9, 61)
SPEC = parse_spec('[[isolation]]\nname = "iso 1-2"\nports = [1, 2]\nf_low = 2.4e9\nf_high = 2.48e9\n'
                  'min_isolation_db = 15\n[[correlation]]\nname = "ecc 1-3"\nports = [1, 3]\nf_low = 2.4e9\n'
                  'f_high = 2.48e9\nmax_ecc = 0.5\n', "s.toml")


@pytest.fixture(scope="module")
def result():
    rng = np.random.default_rng(5)
    s = (rng.normal(size=(F.size, 3, 3)) + 1j * rng.normal(size=(F.size, 3, 3))) * 0.1
    s[:, 0, 1] = 0.5 * s[:, 1, 0]  # one non-reciprocal pair: both directions drawn
    net = skrf.Network(frequency=skrf.Frequency.from_f(F, unit="Hz"), s=s, z0=50.0, name="trio")
    return analyze_coupling(net, bands=[(2.4e9, 2.48e9)])


def _gids(fig) -> set[str]:
    return {a.get_gid() for ax in fig.axes for a in ax.get_children() if a.get_gid()}


def test_isolation_picture_draws_every_direction_and_the_masks(result):
    g = _gids(pc.isolation_figure(result, SPEC))
    assert {"isolation:trace:S12", "isolation:trace:S21", "isolation:mask:iso 1-2", "isolation:band:0"} <= g
    line = next(a for ax in pc.isolation_figure(result).axes for a in ax.lines if a.get_gid() == "isolation:trace:S21")
    # |S21| in dB is the negative of the isolation (Pozar 4th ed. sec. 4.3)
    np.testing.assert_allclose(line.get_ydata(), np.maximum(-result.pairs[0].isolation_ji_db, pc.ISOLATION_FLOOR_DB))


def test_ecc_and_tarc_pictures(result):
    assert {"ecc:trace:1-2", "ecc:trace:1-3", "ecc:trace:2-3", "ecc:mask:ecc 1-3"} <= _gids(pc.ecc_figure(result, SPEC))
    assert {"tarc:worst", "tarc:best"} <= _gids(pc.tarc_figure(result))


def test_draw_writes_png_and_svg_and_refuses_to_overwrite(result, tmp_path):
    buf = io.BytesIO()
    pc.draw_ecc(result, buf, "svg")
    assert buf.getvalue().lstrip().startswith(b"<?xml") or b"<svg" in buf.getvalue()[:400]
    out = tmp_path / "iso.png"
    data = pc.draw_isolation(result, out, "png", masks=SPEC)
    assert out.read_bytes() == data and data[:8] == b"\x89PNG\r\n\x1a\n"
    with pytest.raises(OutputError):
        pc.draw_isolation(result, out, "png")
    pc.draw_isolation(result, out, "png", force=True)


def test_report_section_is_self_contained(result):
    html = section_html(result, SPEC)
    assert html.startswith('<section class="coupling">') and html.endswith("</section>")
    assert "min isolation" in html and "worst TARC" in html and "lossless antennas" in html
    assert "<svg" in html and "<script" not in html and "src=\"http" not in html and "href=\"http" not in html
    assert f"{result.pairs[0].bands[0].min_isolation_db:.2f} dB" in html
    assert "<svg" not in section_html(result, pictures=False)
