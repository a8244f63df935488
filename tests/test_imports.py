"""Import discipline: the core and non-drawing commands never import matplotlib."""

import subprocess
import sys

from helpers import ROOT, write_rlc


def _modules_after(code: str) -> set[str]:
    out = subprocess.run([sys.executable, "-c", code + "\nimport sys; print(' '.join(sys.modules))"],
                         capture_output=True, text=True, cwd=ROOT, check=True).stdout
    return set(out.split())


def _core_modules() -> list[str]:
    """Every module of the core: the package less the CLI (cli, commands) and the renderers."""
    import pkgutil

    import matchtool

    names = []
    for m in pkgutil.walk_packages(matchtool.__path__, "matchtool."):
        top = m.name.split(".")[1]
        if top in ("cli", "commands", "render", "__main__", "_entry"):
            continue
        names.append(m.name)
    return names


def test_every_core_module_imports_without_the_cli_or_drawing_stack():
    names = _core_modules()
    assert {"matchtool.sweep", "matchtool.touchstone.parse", "matchtool.matching.search", "matchtool.store",
            "matchtool.locate", "matchtool.coupling", "matchtool.antenna", "matchtool.parts"} <= set(names)
    mods = _modules_after("import " + ", ".join(names))
    assert "matplotlib" not in mods and "typer" not in mods and "rich" not in mods
    assert "scipy.optimize" not in mods  # the matching search has its own optimiser (start-up cost)


def test_commands_that_draw_nothing_do_not_import_matplotlib(tmp_path):
    p = write_rlc(tmp_path / "u.s1p")
    q = write_rlc(tmp_path / "v.s1p", f0_hz=880e6)
    import numpy as np

    from matchtool.sweep import touchstone_text

    f = np.linspace(800e6, 1e9, 21)
    s = np.full((f.size, 2, 2), 0.1 + 0.05j)
    two = tmp_path / "pair.s2p"
    two.write_text(touchstone_text(f, s, 50.0))
    spec = tmp_path / "pair.toml"
    spec.write_text('[[isolation]]\nname = "iso"\nports = [1, 2]\nf_low = "850 MHz"\nf_high = "900 MHz"\n'
                    'min_isolation_db = 10\n')
    link = tmp_path / "link.toml"
    link.write_text('f_hz = "915 MHz"\ndistance_m = 100\ntx_power_dbm = 14\ntx_gain_dbi = 2\ntx_cable_loss_db = 0.5\n'
                    'rx_gain_dbi = 2\nrx_cable_loss_db = 0.5\npolarization_angle_deg = 0\n'
                    'rx_sensitivity_dbm = -110\ntx_sweep = "u.s1p"\n')
    spec = tmp_path / "spec.toml"
    spec.write_text('[[band]]\nname = "ism"\nf_low = "902 MHz"\nf_high = "928 MHz"\nmin_return_loss_db = 10\n')
    db = str(tmp_path / "r.db")
    for argv in (["--help"], ["check", str(p), str(q), "--spec", str(spec), "--store", db, "--lot", "L"],
                 ["history", "--store", db], ["history", "--store", db, "--json"],
                 ["inspect", str(p), "--json"], ["inspect", str(p)], ["inspect", str(p), "--min-band-width", "1MHz"],
                 ["compare", str(p), str(q)], ["match", str(q), "--band", "902MHz:928MHz"],
                 ["feedline", str(p), "--delay", "100ps", "--toward", "radio"], ["budget", str(link)],
                 ["match", "--help"], ["report", "--help"], ["plot", "--help"], ["coupling", "--help"],
                 ["coupling", str(two), "--json"], ["coupling", str(two)], ["inspect", str(two), "--port", "all"],
                 ["check", str(two), "--spec", str(spec)],
                 ["locate", str(p), "--velocity-factor", "0.7", "--json"], ["locate", str(p), "--velocity-factor", "0.7"],
                 ["match", "--help"], ["report", "--help"], ["plot", "--help"],
                 ["qfactor", str(p), "--radius", "3cm", "--capped", str(q)], ["qfactor", str(p), "--json"]):
        code = (f"import sys; sys.argv = ['matchtool'] + {argv!r}\nfrom matchtool.cli import main\n"
                "main()")
        mods = _modules_after(code)
        assert "matplotlib" not in mods, argv
