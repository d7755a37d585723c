"""The chunked evaluation loop: sources x points -> weighted exposure-ratio sums.

Axis order is ``(n_source, n_point)`` throughout; sums run over sources. Memory stays
bounded whatever the grid size: points are processed in chunks whose
``n_source x chunk`` density block never exceeds :data:`BLOCK_ELEMENTS` values.

Far-field sources with pattern files go through the fused kernel of
:mod:`siteexposure.physics.fastpath` (numba when installed, its numpy reference otherwise);
every other source through :func:`densities`. Both give the same numbers (tested to 1e-9).

Exposure ratios are linear in the densities, ``R_c = sum_i W[c, i] * S_i`` with
``W[c, i] = 1 / S_limit,c(f_i)`` (or any other weights, e.g. one operator's antennas only),
so one density pass serves every limit set, population and contribution at once.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from siteexposure.physics.radiator import Radiator

BLOCK_ELEMENTS = 2_000_000  #: largest (n_source x n_point) block held at once


@dataclass(frozen=True)
class Source:
    """A radiator with the field model chosen for it."""

    id: str
    radiator: Radiator
    choice: object  #: siteexposure.physics.sources.ModelChoice


def densities(sources: Sequence[Source], points_enu: np.ndarray) -> np.ndarray:
    """Power density of every source at every point, NaN where not assessable.

    Parameters
    ----------
    sources : sequence of Source
    points_enu : ndarray, shape (n_point, 3)
        Field points in the site frame. [m]

    Returns
    -------
    ndarray, shape (n_source, n_point)
        Power density. [W/m^2]
    """
    s_e, s_h = field_densities(sources, points_enu)
    return np.fmax(s_e, s_h) + 0.0 * (s_e + s_h)


def field_densities(sources: Sequence[Source], points_enu: np.ndarray
                    ) -> tuple[np.ndarray, np.ndarray]:
    """E- and H-field densities of every source at every point, NaN where not assessable.

    Returns
    -------
    s_e, s_h : ndarray, shape (n_source, n_point)
        ``|E_rms|^2 / eta0`` and ``eta0 |H_rms|^2``. [W/m^2]
    """
    from siteexposure.physics.sources import field_densities as one

    s_e = np.empty((len(sources), len(points_enu)))
    s_h = np.empty_like(s_e)
    for i, src in enumerate(sources):
        est = one(src.radiator, src.choice, points_enu)
        s_e[i] = est.fields.s_e
        s_h[i] = est.fields.s_h
    return s_e, s_h


def column_ratios(
    sources: Sequence[Source],
    columns_en: np.ndarray,
    floor_m: float,
    heights_m: np.ndarray,
    weights: np.ndarray,
    reducers: Sequence[str],
    *,
    progress: Callable[[int], None] | None = None,
    h_rows: np.ndarray | None = None,
) -> np.ndarray:
    """Exposure ratios of vertical averaging lines standing on a floor.

    Parameters
    ----------
    sources : sequence of Source
    columns_en : ndarray, shape (m, 2)
        East/north of each averaging line. [m]
    floor_m : float
        Floor height above site ground. [m]
    heights_m : ndarray, shape (k,)
        Heights of the line's points above the floor, both ends included. [m]
    weights : ndarray, shape (n_combo, n_source)
        Weight of each source in each combination. [m^2/W]
    reducers : sequence of {"mean", "max"}, length n_combo
        How each combination reduces the k points of a line: the mean (spatial average)
        or the maximum (peak).
    progress : callable, optional
        Called with the number of columns finished after each chunk.
    h_rows : ndarray of bool, shape (n_combo,), optional
        Rows that sum the magnetic-field densities ``S_H`` (the others ``S_E``).

    Returns
    -------
    ndarray, shape (n_combo, m)
        Reduced exposure ratio of each line; NaN if any of its points is not assessable. [1]
    """
    from siteexposure.physics.fastpath import reduced_ratio_sums

    columns_en = np.asarray(columns_en, dtype=float).reshape(-1, 2)
    heights = np.asarray(heights_m, dtype=float).ravel()
    m, k = len(columns_en), len(heights)
    n_src = max(len(sources), 1)
    out = np.full((len(reducers), m), np.nan)
    if m == 0:
        return out
    chunk = max(1, BLOCK_ELEMENTS // (n_src * k))
    is_max = np.array([r == "max" for r in reducers])
    for start in range(0, m, chunk):
        cols = columns_en[start : start + chunk]
        pts = np.empty((len(cols), k, 3))
        pts[..., :2] = cols[:, None, :]
        pts[..., 2] = floor_m + heights[None, :]
        red = reduced_ratio_sums(sources, pts.reshape(-1, 3), weights, k, is_max, h_rows=h_rows)
        out[:, start : start + len(cols)] = red
        if progress is not None:
            progress(len(cols))
    return out
