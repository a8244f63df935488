"""Pieces several report sections share."""

from __future__ import annotations

from .. import html as h

CAUTIONS = (
    "A high VSWR at transmit power can damage a transmitter's power amplifier: check a match at low "
    "power (or on the network analyser) before driving it.",
    "RF exposure: keep people away from a transmitting antenna as your exposure rules require; "
    "a better match radiates more of the power.",
    "EIRP, band edges and power limits are set by local regulation; the bands and limits in this "
    "report are the user's inputs, not legal limits.",
    "matchtool computes; it does not certify. Every number here comes from the measured files "
    "and the stated models.",
)


def verdict_cell(passed: bool) -> h.Raw:
    return h.Raw('<span class="pass">pass</span>' if passed else '<span class="fail">FAIL</span>')


def label_of(ctx, names, i: int) -> str:
    return names[ctx.sweeps[i].path]
