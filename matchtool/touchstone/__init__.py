"""Touchstone files: reading (``read``), parsing (``parse``, one small function per keyword or
section), writing (``write``). The Sweep model built on them is :mod:`matchtool.sweep`."""

from __future__ import annotations

from .parse import Touchstone, parse_touchstone
from .read import decode_text, ports_from_name, read_text
from .write import touchstone_text, write_touchstone

__all__ = ["Touchstone", "decode_text", "parse_touchstone", "ports_from_name", "read_text", "touchstone_text",
           "write_touchstone"]
