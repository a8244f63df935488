"""summary.summarize_ports: the inspect metrics of every port of an N-port, from an skrf.Network."""

from __future__ import annotations

import numpy as np
import pytest
import skrf
from helpers import gamma_of, series_rlc_z

from matchtool.errors import UsageError
from matchtool.summary import summarize_ports


def test_every_port_of_a_network_against_scikit_rf():
    f = np.linspace(800e6, 1030e6, 231)
    s = np.zeros((f.size, 3, 3), dtype=complex)
    for k, f0 in enumerate((880e6, 915e6, 950e6)):
        s[:, k, k] = gamma_of(series_rlc_z(f, 50.0, 40e-9, f0))
    s[:, 0, 1] = s[:, 1, 0] = 0.05  # a little coupling; reflections unchanged
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=s, z0=50.0, name="trio")
    m = summarize_ports(net, 10.0, [915e6], detail_port=2)
    assert [p.port for p in m.ports] == [1, 2, 3] and m.nports == 3 and m.detail_port == 2
    with np.errstate(divide="ignore"):  # the zero off-diagonal terms have no dB value
        s_db = net.s_db
    for k, p in enumerate(m.ports):
        # best = the sample with the smallest |S_kk|: scikit-rf's own s_db, independently
        assert p.best.f_hz == f[np.argmin(s_db[:, k, k])]
    assert [len(p.at) for p in m.ports] == [0, 1, 0]  # values at --at only for the detail port
    # -10 dB band of a series RLC with R = Z0: width (2/3) R / (2 pi L) (derived, references.md)
    assert m.port(2).bands[0].bandwidth_hz == pytest.approx((2 / 3) * 50 / (2 * np.pi * 40e-9), rel=5e-3)
    assert all(len(p.at) == 1 for p in summarize_ports(net, 10.0, [915e6]).ports)
    with pytest.raises(UsageError) as ei:
        summarize_ports(net, 10.0, detail_port=4)
    assert ei.value.parameter == "port"
