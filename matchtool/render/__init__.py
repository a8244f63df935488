"""Renderers: turn result dataclasses into tables, JSON, CSV, JUnit XML, plots and HTML.

No computation happens here. matplotlib is imported only inside the plotting module.
"""
