"""The top-level Python API: one entry point per capability, importable without the CLI stack."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
import skrf
from helpers import ROOT, gamma_of, series_rlc_z

import matchtool


def test_every_exported_name_resolves_and_dir_lists_them():
    for name in matchtool.__all__:
        assert getattr(matchtool, name) is not None, name
    assert set(matchtool.__all__) <= set(dir(matchtool))
    assert len(matchtool.__all__) >= 20


def test_exports_load_without_typer_rich_or_matplotlib():
    code = ("import matchtool, sys\n"
            "[getattr(matchtool, n) for n in matchtool.__all__]\n"
            "print(' '.join(m for m in ('typer', 'rich', 'matplotlib') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True).stdout
    assert out.strip() == ""


def test_match_from_an_skrf_network_returns_networks():
    # a series RLC antenna 3 % low, from an skrf.Network built here: the proposed network's own
    # 2-port cascaded by scikit-rf onto the antenna gives the claimed worst in-band return loss
    f = np.linspace(800e6, 1030e6, 461)
    g = gamma_of(series_rlc_z(f, 30.0, 40e-9, 888e6))
    ant = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=g, z0=50.0, name="ant")
    r = matchtool.propose_match(ant, bands=[(902e6, 928e6)], series="E24")
    best = r.candidates[0]
    net = best.network_2port()
    assert isinstance(net, skrf.Network) and net.nports == 2
    matched = net ** ant  # port 1 radio, port 2 antenna (scikit-rf's own cascade)
    inb = (f >= 902e6) & (f <= 928e6)
    rl = -20 * np.log10(np.abs(matched.s[inb, 0, 0]))
    assert best.worst_return_loss_db == pytest.approx(rl.min(), abs=0.05)  # band edges interpolated in the result


def test_top_level_help_lists_every_command_whole(cli):
    # every command's one-line summary is written whole (never cut to '...')
    r = cli("--help")
    assert r.code == 0
    from matchtool.cli import COMMANDS, SHORT_HELP

    text = " ".join(r.out.split())
    for name in COMMANDS:
        assert " ".join(SHORT_HELP[name].split()) in text, name
    assert "..." not in r.out.split("Commands:")[1]
