"""Import discipline: the core and non-drawing commands never import matplotlib."""

import subprocess
import sys

from helpers import ROOT, write_rlc


def _modules_after(code: str) -> set[str]:
    out = subprocess.run([sys.executable, "-c", code + "\nimport sys; print(' '.join(sys.modules))"],
                         capture_output=True, text=True, cwd=ROOT, check=True).stdout
    return set(out.split())


def test_library_import_is_lean():
    mods = _modules_after("import matchtool, matchtool.sweep, matchtool.reflection, matchtool.bands")
    assert "matplotlib" not in mods and "typer" not in mods and "rich" not in mods


def test_help_and_inspect_do_not_import_matplotlib(tmp_path):
    p = write_rlc(tmp_path / "u.s1p")
    for argv in (["--help"], ["inspect", str(p), "--json"], ["inspect", str(p)]):
        code = (f"import sys; sys.argv = ['matchtool'] + {argv!r}\nfrom matchtool.cli import main\n"
                "main()")
        mods = _modules_after(code)
        assert "matplotlib" not in mods, argv
