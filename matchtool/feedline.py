"""Feed lines: cable models, reference-plane moves and de-embedding.

Conventions: lengths in metres, attenuation in dB per metre at a reference frequency, frequencies
in Hz. Conductor loss scales with sqrt(f), dielectric loss with f (common practice, no source).
"""

from __future__ import annotations

import numpy as np


def matched_loss_db(f_hz: np.ndarray | float, length_m: float, loss_db_per_m: float, loss_ref_hz: float = 1e9,
                    dielectric_loss_db_per_m: float = 0.0) -> np.ndarray:
    """One-way matched loss of a cable in dB at ``f_hz``.

    ``loss_db_per_m`` is the conductor part at ``loss_ref_hz`` (scaled with sqrt(f / f_ref));
    ``dielectric_loss_db_per_m`` is the dielectric part at ``loss_ref_hz`` (scaled with f / f_ref).
    """
    ratio = np.asarray(f_hz, dtype=float) / float(loss_ref_hz)
    return length_m * (loss_db_per_m * np.sqrt(ratio) + dielectric_loss_db_per_m * ratio)
