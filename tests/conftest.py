"""Shared fixtures: run the CLI in-process (fast) or in a subprocess (for import checks)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from dataclasses import dataclass

import pytest
from helpers import ROOT
from hypothesis import settings

from matchtool.cli import main

settings.register_profile("default", max_examples=100, deadline=None)
settings.register_profile("long", max_examples=10_000, deadline=None)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "default"))


@dataclass
class Result:
    code: int
    out: str
    err: str

    def json(self):
        return json.loads(self.out)

    @property
    def err_lines(self) -> list[str]:
        return [ln for ln in self.err.splitlines() if ln.strip()]


@pytest.fixture
def cli(capsys):
    """Call ``cli('inspect', path, '--json')`` -> Result(code, out, err), in-process."""

    def run(*args) -> Result:
        code = main([str(a) for a in args])
        cap = capsys.readouterr()
        return Result(code, cap.out, cap.err)

    return run


@pytest.fixture
def cli_subprocess():
    """Run ``python -m matchtool`` in a fresh interpreter against this checkout."""

    def run(*args, **kw) -> Result:
        env = dict(os.environ, PYTHONPATH=str(ROOT))
        p = subprocess.run([sys.executable, "-m", "matchtool", *map(str, args)], capture_output=True,
                           text=True, env=env, timeout=300, **kw)
        return Result(p.returncode, p.stdout, p.stderr)

    return run
