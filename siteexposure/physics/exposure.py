"""Weighted sums of power densities: the exposure-ratio arithmetic shared by every path.

Axis order ``(n_source, n_point)``; sums run over sources.
"""

from __future__ import annotations

import numpy as np


def weighted_sums(s: np.ndarray, weights: np.ndarray) -> np.ndarray:
    """``weights @ s`` with NaN only where a source that has weight is not assessable.

    Parameters
    ----------
    s : ndarray, shape (n_source, n_point)
        Densities, NaN where not assessable. [W/m^2]
    weights : ndarray, shape (n_combo, n_source)
        Inverse limits (or zero for sources left out). [m^2/W]

    Returns
    -------
    ndarray, shape (n_combo, n_point)
        Exposure ratios ``R_c = sum_i W[c, i] S_i``. [1]

    Notes
    -----
    The multi-frequency sum of 47 CFR 1.1310 and ICNIRP (2020) §4: each source's density is
    divided by the limit at its own frequency and the fractions are added. A NaN density
    (not assessable) makes every sum it takes part in NaN: never a silent pass.
    """
    bad = np.isnan(s)
    r = weights @ np.where(bad, 0.0, s)
    if bad.any():
        touched = (weights != 0).astype(float) @ bad.astype(float)
        r[touched > 0] = np.nan
    return r
