"""matchtool: antenna match from measured S11 sweeps.

Library use mirrors the CLI::

    import matchtool
    sw = matchtool.load("ant_r2.s1p")            # Sweep: .network (skrf.Network), .gamma, .f_hz
    summary = matchtool.summarize(sw, threshold_return_loss_db=10)

Importing matchtool never imports typer, rich or matplotlib.
"""

from .errors import MatchtoolError
from .summary import summarize
from .sweep import Sweep, load

__version__ = "0.1.0"
__all__ = ["MatchtoolError", "Sweep", "__version__", "load", "summarize"]
