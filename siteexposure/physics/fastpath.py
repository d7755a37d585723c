"""Fused far-field kernel: many sources x many points -> weighted exposure-ratio sums.

The engine needs ``R[c, p] = sum_i W[c, i] S_i(p)`` for every limit combination ``c`` and
point ``p``, with the far-field densities ``S_i = P G(phi, theta) F / (4 pi r^2)`` of
:func:`siteexposure.physics.farfield.farfield_power_density`. The plain path builds an
``(n_source, n_point)`` block of densities and multiplies it by ``W``. Here:

* :func:`far_field_ratio_sums` -- the same quantity from a fused kernel compiled with numba
  (``njit(parallel=True, fastmath={"contract"}, cache=True)``: fused multiply-adds only, no
  reassociation, NaN and infinities kept) when numba imports and
  ``SITEEXPOSURE_NO_NUMBA`` is unset (read at every call), else from
  :func:`far_field_ratio_sums_reference`, the plain numpy reference (the package's own model,
  source by source, added into ``R``);
* :func:`ratio_sums` / :func:`reduced_ratio_sums` -- the engine's entry points: far-field
  sources with pattern files take the kernel (unless the file has a full-sphere table, whose
  3-D gain the kernel does not read), others :func:`siteexposure.physics.sources.power_density`;
  the second also reduces each averaging line (mean or peak) as
  :func:`siteexposure.engine.evaluate.column_ratios` does, inside the kernel when it can.

Per (source, point) the kernel projects the offset on the antenna axes (three dot
products), takes ``phi = atan2(-y_a, x_a)`` and ``theta = atan2(z_a, rho)`` with our own
branch-free :func:`atan2_kernel` (no arccos, no ``mod``: ``|phi'|`` is ``|atan2|``; once per
averaging line for antennas without mechanical tilt), reads the cuts on regular grids whose
nodes hold every sample of the file (the very piecewise-linear-in-dB functions of
:class:`~siteexposure.physics.synthesis.TablePattern`), applies the same synthesis rule,
turns dB into a ratio with a table of tenths of a dB and a short series, and adds
``W[:, i] S_i`` into the block's sums. The reactive-near-field test compares ``r^2`` with a
threshold equivalent to ``sqrt(r^2) >= radius``; a point a weighted source cannot assess
makes that sum NaN, as :func:`siteexposure.engine.evaluate.weighted_sums` does. Loops are
split so that the arithmetic vectorises. Memory: per work item a few ``POINT_BLOCK``-long
rows and ``n_combo x POINT_BLOCK`` sums; nothing of size ``n_source x n_point``.

References
----------
.. [1] FCC OET Bulletin 65, Edition 97-01, Aug. 1997, Section 2, eqs. (3) and (6)
   (equation numbers from memory).
.. [2] 3GPP TR 38.901 V17.0.0 (2022-03), clause 7.3, Table 7.3-1; F. Gil et al., "A 3D
   interpolation method for base-station-antenna radiation patterns", IEEE Antennas Propag.
   Mag., vol. 43, no. 2, Apr. 2001 (the two rules of :class:`TablePattern`).
.. [3] M. Abramowitz, I. A. Stegun, "Handbook of Mathematical Functions", 10th printing,
   1972, eqs. 4.4.34 and 4.4.42 (arctangent), 4.2.1 (exponential series).
.. [4] ISO/IEC 9899:2018 (C17), Annex F.10.1.4 (atan2 of signed zeros).
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from siteexposure.physics.exposure import weighted_sums

try:  # optional accelerator (the "fast" extra)
    import numba as _numba
except ImportError:  # pragma: no cover - exercised by the no-numba subprocess test
    _numba = None

NO_NUMBA_ENV = "SITEEXPOSURE_NO_NUMBA"  #: set to 1 to force the plain numpy reference
POINT_BLOCK = 128  #: points per block of the kernel (its scratch rows stay in L1 cache)
_WORK_ITEMS = 64  # parallel work items per call (each runs whole blocks)
REFERENCE_CHUNK = 65_536  #: points per pass of the numpy reference (bounds its temporaries)
_R2D = 180.0 / math.pi  # the factor np.rad2deg multiplies by
_HALF_PI = 0.5 * math.pi
_QUARTER_PI = 0.25 * math.pi
_EIGHTH_PI = 0.125 * math.pi
_TAN_PI_8 = math.sqrt(2.0) - 1.0  # tan(pi/8)
_TAN_PI_16 = math.tan(math.pi / 16.0)
_TAN_3PI_16 = math.tan(3.0 * math.pi / 16.0)
_LN10_BY_10 = math.log(10.0) / 10.0
_INV_180 = 1.0 / 180.0
_METHOD_CODES = {"additive": 0, "weighted-bilinear": 1}
_PLANE_TOL = 1e-9  # = synthesis.PLANE_TOLERANCE_DEG (a literal: numba compiles it in)
_prange = _numba.prange if _numba is not None else range


def _jit(**options):
    """``numba.njit(error_model="numpy", **options)`` when numba is installed (IEEE division:
    no Python ZeroDivisionError checks, which also keeps loops vectorisable), else leave the
    function as plain Python."""
    if _numba is None:  # pragma: no cover
        return lambda f: f
    return _numba.njit(error_model="numpy", **options)


def fast_available() -> bool:
    """True when the compiled kernel will run: numba imports and ``SITEEXPOSURE_NO_NUMBA``
    is unset, empty or ``0`` (read at every call)."""
    flag = os.environ.get(NO_NUMBA_ENV, "").strip().lower()
    return _numba is not None and flag in ("", "0", "false", "no")


# -- scalar kernels (compiled with numba; plain Python without it) ------------------------

_ATAN_C = tuple(1.0 / (2 * k + 1) for k in range(8, -1, -1))  # A&S 4.4.42, highest first
_EXP_C = tuple(1.0 / math.factorial(k) for k in range(7, -1, -1))  # A&S 4.2.1, highest first


@_jit(cache=True, inline="always")
def _atan_series(s):
    """``atan(u) / u`` for ``s = u^2 <= tan(pi/16)^2``: the series to ``u^16/17`` (Horner)."""
    p = 0.0
    for c in _ATAN_C:
        p = c - s * p
    return p


@_jit(cache=True, inline="always")
def _atan_first_quadrant(ay, ax):
    """``atan2(ay, ax)`` for ``ay, ax >= 0``, in [0, pi/2]. [rad]"""
    big = max(ax, ay)
    small = min(ax, ay)
    hi = small > _TAN_3PI_16 * big
    mid = small > _TAN_PI_16 * big
    tc = 1.0 if hi else (_TAN_PI_8 if mid else 0.0)
    base = _QUARTER_PI if hi else (_EIGHTH_PI if mid else 0.0)
    den = big + tc * small
    u = (small - tc * big) / den
    u = u if den > 0.0 else 0.0
    a = base + u * _atan_series(u * u)
    return _HALF_PI - a if ay > ax else a


@_jit(cache=True, inline="always")
def atan2_kernel(y, x):
    """Two-argument arctangent ``atan2(y, x)`` in [-pi, pi], C99 conventions. [rad]

    Notes
    -----
    With ``t = min(|x|,|y|) / max(|x|,|y|)``, ``atan t = c + atan((t - tan c) / (1 + t tan c))``
    for the nearest ``c in {0, pi/8, pi/4}`` leaves ``|u| <= tan(pi/16)``, where the series
    ``sum_k (-1)^k u^(2k+1) / (2k+1)``, k = 0..8, errs by less than ``u^19/19 < 3e-15`` rad.
    The quadrant comes from the sign bits (signed zeros as in C99 Annex F.10.1.4); selects
    only, no branch on the data, so that a compiled loop over points vectorises.

    References
    ----------
    Abramowitz and Stegun, Handbook of Mathematical Functions, eqs. 4.4.34 and 4.4.42;
    ISO/IEC 9899:2018 Annex F.10.1.4.
    """
    a = _atan_first_quadrant(abs(y), abs(x))
    a = math.pi - a if math.copysign(1.0, x) < 0.0 else a
    return math.copysign(a, y)


@_jit(cache=True, inline="always")
def _exp_series(y):
    """``exp(y)`` for ``0 <= y < 0.0231``: the series to ``y^7/7!`` (error < ``y^8/8!`` < 2e-18)."""
    e = 0.0
    for c in _EXP_C:
        e = c + y * e
    return e


@_jit(cache=True, inline="always")
def _clear2(xa, ya, za, box):
    """Squared distance of an antenna-frame point from the body box ``box[:6]`` (centre,
    half-extents). [m^2]"""
    qx = max(abs(xa - box[0]) - box[3], 0.0)
    qy = max(abs(ya - box[1]) - box[4], 0.0)
    qz = max(abs(za - box[2]) - box[5], 0.0)
    return qx * qx + qy * qy + qz * qz


@_jit(cache=True, inline="always")
def _geometry(m, f, it, o, ax, box):
    """Rows of ``f`` for the first ``m`` points of a block: from ``px, py, pz`` (rows 0-2)
    to ``1/r^2`` (row 3; 0 where not assessable), ``phi`` in [0, 360] (row 4), ``|phi'|``
    (row 5) and the elevation (row 6) [deg]; ``it[0]`` flags points not assessable (within
    the stand-off ``sqrt(box[6])`` of the body box ``box[:6]``). Returns their number.
    Vectorises: no data-dependent branches."""
    n_out = 0
    for q in range(m):
        dx = f[0, q] - o[0]
        dy = f[1, q] - o[1]
        dz = f[2, q] - o[2]
        r2 = dx * dx + dy * dy + dz * dz
        xa = dx * ax[0] + dy * ax[1] + dz * ax[2] + 0.0  # +0.0: a zero sum is +0, as in BLAS
        ya = dx * ax[3] + dy * ax[4] + dz * ax[5]
        za = dx * ax[6] + dy * ax[7] + dz * ax[8]
        ok = _clear2(xa, ya, za, box) >= box[6] and r2 > 0.0  # see _r2_threshold
        a = atan2_kernel(-ya, xa) * _R2D
        e = math.copysign(_atan_first_quadrant(abs(za), math.sqrt(xa * xa + ya * ya)), za)
        f[3, q] = 1.0 / r2 if ok else 0.0
        f[4, q] = (a + 360.0 if a < 0.0 else a) if ok else 0.0
        f[5, q] = abs(a) if ok else 0.0
        f[6, q] = min(90.0, max(-90.0, e * _R2D)) if ok else 0.0
        it[0, q] = 0 if ok else 1
        n_out += it[0, q]
    return n_out


@_jit(cache=True, inline="always")
def _geometry_lines(m, group, f, it, o, ax, box, h_node, h_slope, h_off, hn):
    """:func:`_geometry` for vertical lines of ``group`` points and an antenna without
    mechanical tilt (``x_a``, ``y_a`` constant along a line): ``phi`` and the horizontal cut
    once per line, spread over its points (cut value in row 9, rows 4 and 10 zero, as
    :func:`_additive` reads them). Sums keep :func:`_geometry`'s association: same numbers."""
    h_inv = hn / 360.0
    for g in range(m // group):  # once per line
        q0 = g * group
        dx = f[0, q0] - o[0]
        dy = f[1, q0] - o[1]
        xa = dx * ax[0] + dy * ax[1] + 0.0  # dz * ax[2] is a signed zero here
        ya = dx * ax[3] + dy * ax[4]
        a = atan2_kernel(-ya, xa) * _R2D
        x = (a + 360.0 if a < 0.0 else a) * h_inv  # as _to_cells does with row 4
        j = min(max(int(x), 0), hn - 1)
        h = h_node[h_off + j] + (x - j) * h_slope[h_off + j]
        r2_xy = dx * dx + dy * dy
        z_xy = dx * ax[6] + dy * ax[7]
        rho = math.sqrt(xa * xa + ya * ya)
        for q in range(q0, q0 + group):
            f[5, q] = abs(a)
            f[9, q] = h
            f[11, q] = r2_xy
            f[12, q] = z_xy
            f[13, q] = rho
            f[14, q] = xa
            f[16, q] = ya
    n_out = 0
    for q in range(m):  # per point, vectorised
        dz = f[2, q] - o[2]
        r2 = f[11, q] + dz * dz
        za = f[12, q] + dz * ax[8]
        ok = _clear2(f[14, q], f[16, q], za, box) >= box[6] and r2 > 0.0
        e = math.copysign(_atan_first_quadrant(abs(za), f[13, q]), za)
        f[3, q] = 1.0 / r2 if ok else 0.0
        f[4, q] = 0.0
        f[5, q] = f[5, q] if ok else 0.0
        f[6, q] = min(90.0, max(-90.0, e * _R2D)) if ok else 0.0
        f[10, q] = 0.0
        it[0, q] = 0 if ok else 1
        n_out += it[0, q]
    return n_out


@_jit(cache=True, inline="always")
def _to_cells(m, f, src, dst, it, row, inv_width, n, shift):
    """Row ``dst`` of ``f`` := fraction within its cell, ``it[row]`` := cell index, of
    ``f[src] + shift`` on a regular grid of ``n`` cells of width ``1/inv_width``."""
    for q in range(m):
        x = (f[src, q] + shift) * inv_width
        j = min(max(int(x), 0), n - 1)
        it[row, q] = j
        f[dst, q] = x - j


@_jit(cache=True, inline="always")
def _gather(m, f, it, row, node, slope, off, dst):
    """Rows ``dst``, ``dst + 1`` := node value and slope of the cell ``it[row]`` (scalar loads,
    kept apart so that the arithmetic around them vectorises)."""
    for q in range(m):
        j = off + it[row, q]
        f[dst, q] = node[j]
        f[dst + 1, q] = slope[j]


@_jit(cache=True, inline="always")
def _density(m, f, it, g_row, k, table, k0):
    """Row 7 := ``k 10**(g/10) / r^2`` from the gains in row ``g_row`` [dB]: table of tenths
    of a dB (``it[1]`` holds the index) times :func:`_exp_series` of the rest."""
    nt = table.shape[0]
    for q in range(m):
        g = f[g_row, q]
        j = min(max(int(math.floor(10.0 * g)) - k0, 0), nt - 1)
        it[1, q] = j
        f[7, q] = k * _exp_series((g - 0.1 * (j + k0)) * _LN10_BY_10) * f[3, q]
    for q in range(m):
        f[7, q] *= table[it[1, q]]


@_jit(cache=True, inline="always")
def _additive(m, f, f0, b0, g_lo):
    """Row 8 := gain [dBi] by the additive rule of :meth:`TablePattern.gain_dbi`, from the
    cut values and slopes gathered into rows 9-14 and the fractions in rows 4 and 6."""
    for q in range(m):
        w = min(1.0, max(0.0, (100.0 - f[5, q]) * 0.05))
        h = f[9, q] + f[4, q] * f[10, q]
        vf = f[11, q] + f[6, q] * f[12, q]
        vb = f[13, q] + f[6, q] * f[14, q]
        f[8, q] = max(h + w * (vf - f0) + (1.0 - w) * (vb - b0), g_lo)


@_jit(cache=True, inline="always")
def _bilinear(m, f, el_deg):
    """Row 8 := gain [dBi] by the weighted bilinear rule of :meth:`TablePattern.gain_dbi`;
    the opposite horizontal value (phi + 180 deg) is gathered into rows 15-16 (fraction in
    row 17), the elevation itself is in ``el_deg``."""
    for q in range(m):
        h = f[9, q] + f[4, q] * f[10, q]
        vf = f[11, q] + f[6, q] * f[12, q]
        vb = f[13, q] + f[6, q] * f[14, q]
        ho = f[15, q] + f[17, q] * f[16, q]
        d_f = f[5, q]
        d_b = 180.0 - d_f
        e_1 = abs(el_deg[q])
        e_2 = 180.0 - e_1
        a_val = (d_b * vf + d_f * vb) * _INV_180
        e_val = (e_2 * h + e_1 * ho) * _INV_180
        w_a = e_1 * e_2  # both weights without their common factor 1/180
        w_e = d_f * d_b
        g = (w_a * a_val + w_e * e_val) / (w_a + w_e)
        g = e_val if e_1 < _PLANE_TOL else g  # the tolerance of TablePattern.gain_dbi
        f[8, q] = a_val if min(d_f, d_b) < _PLANE_TOL else g


@_jit(parallel=True, fastmath={"contract"}, cache=True)
def _ratio_kernel(pts, pos, axes, kfac, box, method, gfloor, vf0, vb0, h_node, h_slope,
                  h_off, h_n, vf_node, vf_slope, vb_node, vb_slope, v_off, v_n,
                  exp_table, exp_k0, weights, group, is_max, lines, out):
    """``sum_i weights[c, i] S_i(p)``, NaN where a weighted source is not assessable, reduced
    over consecutive groups of ``group`` points (the mean, or the maximum where
    ``is_max[c]``; NaN if any point of the group is NaN) into ``out[c, p // group]``;
    ``lines``: every group is a vertical line (same east and north).
    Work items of whole blocks (whole groups) run in parallel, each with its own scratch
    rows, allocated once per item."""
    n = pts.shape[0]
    nc = weights.shape[0]
    bs = max(group, (POINT_BLOCK // group) * group)
    nblk = (n + bs - 1) // bs
    n_items = min(nblk, _WORK_ITEMS)
    for item in _prange(n_items):  # pragma: no cover - compiled
        f = np.empty((18, bs))
        el = np.empty(bs)
        it = np.empty((4, bs), dtype=np.int64)
        acc = np.empty((nc, bs))
        nbad = np.empty((nc, bs), dtype=np.int64)
        for blk in range(item * nblk // n_items, (item + 1) * nblk // n_items):
            p0 = blk * bs
            m = min(n, p0 + bs) - p0
            for q in range(m):
                f[0, q] = pts[p0 + q, 0]
                f[1, q] = pts[p0 + q, 1]
                f[2, q] = pts[p0 + q, 2]
            acc[:, :] = 0.0
            nbad[:, :] = 0
            for i in range(pos.shape[0]):
                hn, vn = h_n[i], v_n[i]
                per_line = lines and method[i] == 0 and axes[i, 2] == 0.0 and axes[i, 5] == 0.0
                if per_line:
                    n_out = _geometry_lines(m, group, f, it, pos[i], axes[i], box[i], h_node,
                                            h_slope, h_off[i], hn)
                else:
                    n_out = _geometry(m, f, it, pos[i], axes[i], box[i])
                if method[i] == 1:  # the elevation, and the opposite azimuth phi + 180 deg
                    for q in range(m):
                        el[q] = f[6, q]
                        p2 = f[4, q] + 180.0
                        f[17, q] = p2 - 360.0 if p2 >= 360.0 else p2
                    _to_cells(m, f, 17, 17, it, 3, hn / 360.0, hn, 0.0)
                    _gather(m, f, it, 3, h_node, h_slope, h_off[i], 15)
                if not per_line:
                    _to_cells(m, f, 4, 4, it, 1, hn / 360.0, hn, 0.0)
                    _gather(m, f, it, 1, h_node, h_slope, h_off[i], 9)
                _to_cells(m, f, 6, 6, it, 2, vn / 180.0, vn, 90.0)
                _gather(m, f, it, 2, vf_node, vf_slope, v_off[i], 11)
                _gather(m, f, it, 2, vb_node, vb_slope, v_off[i], 13)
                if method[i] == 0:
                    _additive(m, f, vf0[i], vb0[i], gfloor[i])
                else:
                    _bilinear(m, f, el)
                _density(m, f, it, 8, kfac[i], exp_table, exp_k0)
                for c in range(nc):
                    w = weights[c, i]
                    for q in range(m):
                        acc[c, q] += w * f[7, q]
                    if n_out > 0 and w != 0.0:  # NaN weights count as weighted
                        for q in range(m):
                            nbad[c, q] += it[0, q]
            for c in range(nc):
                for g in range(m // group):
                    q0 = g * group
                    red = acc[c, q0]
                    bad = nbad[c, q0]
                    for q in range(q0 + 1, q0 + group):
                        bad += nbad[c, q]
                        red = max(red, acc[c, q]) if is_max[c] else red + acc[c, q]
                    red = red if is_max[c] else red / group
                    out[c, p0 // group + g] = np.nan if bad > 0 else red


# -- per-source tables ----------------------------------------------------------------------

MAX_CELLS = 36_000  #: finest regular grid of a cut the kernel takes (0.01 deg over 360 deg)
_ON_GRID = 1e-9  # largest offset of a sample from a grid node, in cells (rounding only)


def _uniform_cells(angles, lo: float, span: float) -> int | None:
    """Smallest number of equal cells of [lo, lo + span] whose nodes hold every sample angle.

    ``None`` when no such grid of at most :data:`MAX_CELLS` cells exists (irregular samples).
    """
    a = np.unique(np.concatenate([np.asarray(angles, dtype=float), [lo, lo + span]]))
    a = a[(a >= lo) & (a <= lo + span)]
    n0 = max(1, int(round(span / float(np.diff(a).min()))))
    for mult in range(1, 13):
        n = n0 * mult
        if n > MAX_CELLS:
            return None
        pos = (a - lo) * (n / span)
        if float(np.max(np.abs(pos - np.rint(pos)))) <= _ON_GRID:
            return n
    return None


@dataclass(frozen=True)
class _CutTables:
    """One pattern's cuts on regular grids: the same piecewise-linear functions in dB."""

    method: int
    h_cells: int
    h_dbi: np.ndarray  # (h_cells + 1,) at 0 .. 360 deg
    v_cells: int
    vf_dbi: np.ndarray  # (v_cells + 1,) at -90 .. 90 deg
    vb_dbi: np.ndarray
    vf0_dbi: float
    vb0_dbi: float
    floor_dbi: float
    lo_dbi: float  # range of the synthesised gain, for the exponential table
    hi_dbi: float


def _pattern_tables(pattern, cache=None) -> _CutTables | None:
    """The regular-grid tables of a pattern file, or None if the kernel cannot take it;
    memoised in ``cache`` (the engine's :class:`~siteexposure.physics.cache.ModelCache`) when
    given, nothing kept otherwise."""
    if cache is None:
        return _build_tables(pattern)
    return cache.get("far-field cut tables", id(pattern), lambda: _build_tables(pattern),
                     hold=(pattern,))


def _build_tables(pattern) -> _CutTables | None:
    from siteexposure.physics.synthesis import TablePattern

    tables = None
    # a pattern with a full-sphere table takes its 3-D gain from the table, which this
    # kernel (built on the cuts) does not read: it goes through the numpy path
    if (isinstance(pattern, TablePattern) and pattern.sphere is None
            and pattern.method in _METHOD_CODES):
        nh = _uniform_cells(pattern.h_angle_deg, 0.0, 360.0)
        nv = _uniform_cells(np.union1d(pattern.v_front_elev_deg, pattern.v_back_elev_deg),
                            -90.0, 180.0)
        if nh is not None and nv is not None:
            hn = np.arange(nh + 1) * (360.0 / nh)
            vn = -90.0 + np.arange(nv + 1) * (180.0 / nv)
            h = np.interp(hn, pattern.h_angle_deg, pattern.h_gain_dbi, period=360.0)
            vf = np.interp(vn, pattern.v_front_elev_deg, pattern.v_front_gain_dbi)
            vb = np.interp(vn, pattern.v_back_elev_deg, pattern.v_back_gain_dbi)
            f0 = float(np.interp(0.0, pattern.v_front_elev_deg, pattern.v_front_gain_dbi))
            b0 = float(np.interp(0.0, pattern.v_back_elev_deg, pattern.v_back_gain_dbi))
            lo = min(h.min(), vf.min(), vb.min())
            hi = max(h.max(), vf.max(), vb.max())
            if pattern.method == "additive":  # H plus a convex blend of two differences
                hi = h.max() + max(0.0, (vf - f0).max(), (vb - b0).max())
            tables = _CutTables(_METHOD_CODES[pattern.method], nh, h, nv, vf, vb, f0, b0,
                                float(pattern.min_gain_dbi), float(lo), float(hi))
    return tables


def fast_eligible(rad, cache=None) -> bool:
    """True when the kernel can evaluate ``rad``: its pattern is a pattern file
    (:class:`~siteexposure.physics.synthesis.TablePattern`) without a full-sphere table, with
    a known synthesis method, whose cuts are sampled on regular grids of at most
    :data:`MAX_CELLS` cells."""
    return _pattern_tables(getattr(rad, "pattern", None), cache) is not None


def _r2_threshold(radius: float) -> float:
    """The smallest double ``t`` with ``sqrt(t) >= radius`` (sqrt is correctly rounded)."""
    t = radius * radius
    while t > 0.0 and math.sqrt(t) >= radius:
        t = float(np.nextafter(t, 0.0))
    while math.sqrt(t) < radius:
        t = float(np.nextafter(t, np.inf))
    return t


@dataclass(frozen=True, eq=False)
class FarFieldPlan:
    """What the kernel needs of a set of radiators, prepared once (:func:`prepare_far_field`)
    and reused on every chunk. Per-source arrays have length ``n_source``; the cut tables of
    all sources are concatenated, source ``i`` owning the ``n[i]`` cells from ``off[i]`` on
    (value at the start of each cell and its rise to the next node, in dBi)."""

    radiators: tuple  #: the sources, in the order of the weight columns
    position_m: np.ndarray  #: (n_source, 3) radiation centres (east, north, up) [m]
    axes: np.ndarray  #: (n_source, 9) boresight, left and top unit vectors (site frame) [1]
    kfac_w: np.ndarray  #: P F / (4 pi), so that S = kfac G / r^2 [W]
    box_m: np.ndarray  #: (n_source, 7) body box centre, half-extents (antenna frame) [m] and
    #: the smallest squared distance from it outside the stand-off [m^2]
    method: np.ndarray  #: 0 additive, 1 weighted bilinear
    gain_floor_dbi: np.ndarray  #: lowest gain of the data (floor of the additive rule) [dBi]
    vf0_dbi: np.ndarray  #: front vertical cut at the horizon [dBi]
    vb0_dbi: np.ndarray  #: back vertical cut at the horizon [dBi]
    h_node: np.ndarray  #: horizontal cuts, cells over 0..360 deg [dBi]
    h_slope: np.ndarray
    h_off: np.ndarray
    h_n: np.ndarray
    vf_node: np.ndarray  #: front vertical cuts, cells over -90..90 deg [dBi]
    vf_slope: np.ndarray
    vb_node: np.ndarray  #: back vertical cuts, same cells [dBi]
    vb_slope: np.ndarray
    v_off: np.ndarray
    v_n: np.ndarray
    exp_table: np.ndarray  #: 10**(0.1 (j + exp_k0) / 10) over the gains that can occur [1]
    exp_k0: int  #: tenths of a dB of exp_table[0]

    @property
    def n_source(self) -> int:
        """Number of sources. [1]"""
        return len(self.radiators)


def prepare_far_field(radiators: Sequence, cache=None) -> FarFieldPlan:
    """The kernel's :class:`FarFieldPlan` for ``radiators`` (in the order of the weight
    columns); raises :class:`~siteexposure.errors.PatternError` naming the first radiator
    whose pattern the kernel cannot take (see :func:`fast_eligible`)."""
    from siteexposure.errors import PatternError
    from siteexposure.physics.orientation import antenna_axes
    from siteexposure.physics.regions import standoff_m

    rads = tuple(radiators)
    tabs = []
    for i, rad in enumerate(rads):
        tab = _pattern_tables(getattr(rad, "pattern", None), cache)
        if tab is None:
            pat = getattr(rad, "pattern", None)
            raise PatternError(
                f"far-field fast path: source {i} has pattern {getattr(pat, 'name', pat)!r} "
                f"of type {type(pat).__name__}; expected a pattern-file pattern (TablePattern, "
                f"method {' or '.join(_METHOD_CODES)}) sampled on a regular grid of at most "
                f"{MAX_CELLS} cells per cut"
            )
        tabs.append(tab)
    ns = len(rads)

    def col(values, dtype=float, width=None):
        arr = np.array(list(values), dtype=dtype)
        return np.ascontiguousarray(arr.reshape((ns,) if width is None else (ns, width)))

    def cat(parts):
        return np.ascontiguousarray(np.concatenate([np.zeros(0), *parts]))

    def offsets(sizes):
        return np.ascontiguousarray(np.concatenate(([0], np.cumsum(sizes)))[:ns], dtype=np.int64)

    def box(rad):
        c, half = rad.body.box()
        return np.concatenate([c, half, [_r2_threshold(standoff_m(rad.wavelength_m)
                                                       * (1.0 - 1e-9))]])

    g_lo = min((t.lo_dbi for t in tabs), default=0.0)
    g_hi = max((t.hi_dbi for t in tabs), default=0.0)
    k0 = int(math.floor(10.0 * g_lo)) - 2
    k = np.arange(k0, int(math.floor(10.0 * g_hi)) + 3)
    return FarFieldPlan(
        radiators=rads,
        position_m=col((np.asarray(r.position_m, dtype=float).reshape(3) for r in rads), width=3),
        axes=col((np.concatenate([np.ravel(v) for v in
                                  antenna_axes(r.azimuth_deg, r.mechanical_tilt_deg)])
                  for r in rads), width=9),
        kfac_w=col(float(r.power_w) * float(r.reflection_factor) / (4.0 * np.pi) for r in rads),
        box_m=col((box(r) for r in rads), width=7),
        method=col((t.method for t in tabs), np.int64),
        gain_floor_dbi=col(t.floor_dbi for t in tabs),
        vf0_dbi=col(t.vf0_dbi for t in tabs),
        vb0_dbi=col(t.vb0_dbi for t in tabs),
        h_node=cat(t.h_dbi[:-1] for t in tabs),
        h_slope=cat(np.diff(t.h_dbi) for t in tabs),
        h_off=offsets([t.h_cells for t in tabs]),
        h_n=col((t.h_cells for t in tabs), np.int64),
        vf_node=cat(t.vf_dbi[:-1] for t in tabs),
        vf_slope=cat(np.diff(t.vf_dbi) for t in tabs),
        vb_node=cat(t.vb_dbi[:-1] for t in tabs),
        vb_slope=cat(np.diff(t.vb_dbi) for t in tabs),
        v_off=offsets([t.v_cells for t in tabs]),
        v_n=col((t.v_cells for t in tabs), np.int64),
        exp_table=np.power(10.0, (0.1 * k) / 10.0),
        exp_k0=k0,
    )


# -- public entry points ----------------------------------------------------------------------


def _points_and_weights(points_enu, weights, n_source: int) -> tuple[np.ndarray, np.ndarray]:
    from siteexposure.errors import InputError

    pts = np.asarray(points_enu, dtype=float)
    w = np.asarray(weights, dtype=float)
    w = w.reshape(1, -1) if w.ndim == 1 else w
    if pts.ndim < 1 or pts.shape[-1] != 3:
        raise InputError(f"field points: array of shape {pts.shape}; expected (n_point, 3)")
    if w.ndim != 2 or w.shape[1] != n_source:
        raise InputError(f"weights: array of shape {w.shape}; expected (n_combo, {n_source})")
    return np.ascontiguousarray(pts.reshape(-1, 3)), np.ascontiguousarray(w)


def far_field_ratio_sums_reference(radiators, points_enu, weights) -> np.ndarray:
    """Weighted far-field exposure-ratio sums with the package's own numpy far-field model.

    The plain reference of :func:`far_field_ratio_sums` (same arguments and result): source
    by source, :func:`siteexposure.physics.farfield.farfield_power_density` on chunks of
    :data:`REFERENCE_CHUNK` points, masked inside the reactive near field as
    :func:`siteexposure.physics.sources.power_density` masks it, added into the sums. Takes
    any pattern.

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, Section 2, eqs. (3) and (6) (from memory).
    """
    from siteexposure.physics.body import to_antenna_frame_points
    from siteexposure.physics.farfield import farfield_power_density
    from siteexposure.physics.regions import standoff_m

    rads = radiators.radiators if isinstance(radiators, FarFieldPlan) else tuple(radiators)
    pts, w = _points_and_weights(points_enu, weights, len(rads))
    out = np.zeros((w.shape[0], pts.shape[0]))
    bad = np.zeros(out.shape, dtype=bool)
    touched = w != 0.0  # NaN weights count as weighted
    for start in range(0, pts.shape[0], REFERENCE_CHUNK):
        sl = slice(start, start + REFERENCE_CHUNK)
        p = pts[sl]
        for i, rad in enumerate(rads):
            s = farfield_power_density(rad, p)
            ant = to_antenna_frame_points(p, rad.position_m, rad.azimuth_deg,
                                          rad.mechanical_tilt_deg)
            ok = ((rad.body.distance_m(ant) >= standoff_m(rad.wavelength_m) * (1.0 - 1e-9))
                  & np.isfinite(s))
            out[:, sl] += w[:, i : i + 1] * np.where(ok, s, 0.0)[None, :]
            if not ok.all():
                bad[:, sl] |= touched[:, i : i + 1] & ~ok[None, :]
    out[bad] = np.nan
    return out


def far_field_ratio_sums(radiators, points_enu, weights, *, accelerate: bool | None = None
                         ) -> np.ndarray:
    """Weighted far-field exposure-ratio sums of many sources at many points, fused.

    The compiled kernel runs when :func:`fast_available`, else
    :func:`far_field_ratio_sums_reference` (the same quantity, to about 1e-13).

    Parameters
    ----------
    radiators : sequence of Radiator or FarFieldPlan
        Sources with pattern-file patterns (:func:`fast_eligible`), or their prepared
        tables (:func:`prepare_far_field`; prepare once, call per chunk).
    points_enu : array_like, shape (n_point, 3)
        Field points (east, north, up) in the site frame. [m]
    weights : array_like, shape (n_combo, n_source)
        Weight of each source in each combination. [m^2/W]
    accelerate : bool, optional
        Force the kernel (True; raises if numba is missing) or the reference (False).

    Returns
    -------
    ndarray, shape (n_combo, n_point)
        ``sum_i W[c, i] P_i G_i F_i / (4 pi r_i^2)``; NaN where a source with non-zero (or
        NaN) weight in row ``c`` cannot be assessed at ``p`` (reactive near field). [1]

    Raises
    ------
    PatternError
        A source whose pattern is not a pattern file.
    InputError
        Arrays of the wrong shape, or ``accelerate=True`` without numba.

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, Section 2, eqs. (3) and (6) (from memory); 3GPP TR
    38.901 V17.0.0 Table 7.3-1 and Gil et al. (2001) for the pattern synthesis.
    """
    from siteexposure.errors import InputError

    use = fast_available() if accelerate is None else bool(accelerate)
    if use and _numba is None:
        raise InputError("far-field fast path: accelerate=True but numba is not installed; "
                         "expected the 'fast' extra (pip install numba) or accelerate=None")
    plan = radiators if isinstance(radiators, FarFieldPlan) else prepare_far_field(radiators)
    if not use:
        return far_field_ratio_sums_reference(plan, points_enu, weights)
    pts, w = _points_and_weights(points_enu, weights, plan.n_source)
    return _run_kernel(plan, pts, w, 1, np.zeros(w.shape[0], dtype=bool))


def _run_kernel(plan: FarFieldPlan, pts, w, group: int, is_max, lines: bool = False
                ) -> np.ndarray:
    out = np.empty((w.shape[0], pts.shape[0] // group))
    if out.size == 0 or plan.n_source == 0:
        out[:] = 0.0
        return out
    _ratio_kernel(pts, plan.position_m, plan.axes, plan.kfac_w, plan.box_m, plan.method,
                  plan.gain_floor_dbi, plan.vf0_dbi, plan.vb0_dbi, plan.h_node, plan.h_slope,
                  plan.h_off, plan.h_n, plan.vf_node, plan.vf_slope, plan.vb_node, plan.vb_slope,
                  plan.v_off, plan.v_n, plan.exp_table, plan.exp_k0, w, int(group),
                  np.ascontiguousarray(is_max, dtype=np.bool_), bool(lines and group > 1), out)
    return out


def _cached_plan(rads: tuple, cache=None) -> FarFieldPlan:
    """The plan of ``rads``, memoised in ``cache`` (the engine's ModelCache) when given."""
    if cache is None:
        return prepare_far_field(rads)
    return cache.get("far-field plan", tuple(id(r) for r in rads),
                     lambda: prepare_far_field(rads, cache), hold=rads)


def _engine_cache(srcs):
    """The engine's ModelCache the sources' model choices carry (None without one)."""
    return next((c for c in (getattr(getattr(s, "choice", None), "cache", None) for s in srcs)
                 if c is not None), None)


def kernel_source(src) -> bool:
    """True for an engine source the kernel takes: the far-field model by request (under
    ``auto`` the far-field formula is bounded close in, which the kernel does not do) with a
    pattern-file pattern (:func:`fast_eligible`)."""
    choice = getattr(src, "choice", None)
    return (getattr(choice, "word", None) == "far-field" and not getattr(choice, "auto", False)
            and fast_eligible(src.radiator, getattr(choice, "cache", None)))


def ratio_sums(sources: Sequence, points_enu, weights, h_rows=None) -> np.ndarray:
    """Weighted exposure-ratio sums of the engine's sources, fused where possible.

    Sources whose chosen model is ``far-field`` and whose pattern is a pattern file take
    :func:`far_field_ratio_sums` (their E and H densities are equal); every other source
    :func:`siteexposure.physics.sources.field_densities`, each row summing the densities of
    its field (``h_rows``: the rows of the magnetic field, ``S_H``; the others ``S_E``). Equals
    ``weighted_sums(densities(sources, points), weights)`` of
    :mod:`siteexposure.engine.evaluate`.

    Parameters
    ----------
    sources : sequence
        Objects with ``radiator`` (Radiator) and ``choice`` (ModelChoice), e.g.
        :class:`siteexposure.engine.evaluate.Source`.
    points_enu, weights : array_like
        As for :func:`far_field_ratio_sums`. [m], [m^2/W]

    Returns
    -------
    ndarray, shape (n_combo, n_point)
        Exposure ratios; NaN where a weighted source is not assessable. [1]
    """
    srcs = list(sources)
    pts, w = _points_and_weights(points_enu, weights, len(srcs))
    fast = [i for i, s in enumerate(srcs) if kernel_source(s)]
    rest = [i for i in range(len(srcs)) if i not in set(fast)]
    out = np.zeros((w.shape[0], pts.shape[0]))
    if fast:
        plan = _cached_plan(tuple(srcs[i].radiator for i in fast), _engine_cache(srcs))
        out = far_field_ratio_sums(plan, pts, w[:, fast])
    if rest:
        from siteexposure.physics.sources import field_densities

        s_e = np.empty((len(rest), pts.shape[0]))
        s_h = np.empty_like(s_e)
        for k, i in enumerate(rest):
            est = field_densities(srcs[i].radiator, srcs[i].choice, pts)
            s_e[k], s_h[k] = est.fields.s_e, est.fields.s_h
        h = (np.zeros(w.shape[0], dtype=bool) if h_rows is None
             else np.asarray(h_rows, dtype=bool).reshape(-1))
        add = np.empty_like(out)
        if (~h).any():
            add[~h] = weighted_sums(s_e, w[~h][:, rest])
        if h.any():
            add[h] = weighted_sums(s_h, w[h][:, rest])
        out = out + add
    return out


def reduced_ratio_sums(sources: Sequence, points_enu, weights, group: int, is_max, h_rows=None
                       ) -> np.ndarray:
    """:func:`ratio_sums` reduced over consecutive groups of points (averaging lines).

    Equals ``np.where(is_max[:, None], r.max(axis=2), r.mean(axis=2))``, ``r =
    ratio_sums(...).reshape(n_combo, -1, group)`` (the reduction of
    :func:`siteexposure.engine.evaluate.column_ratios`); when every source takes the kernel
    it reduces as it goes and the ``(n_combo, n_point)`` sums are never held.

    Parameters
    ----------
    sources, weights
        As for :func:`ratio_sums`.
    points_enu : array_like, shape (n_line * group, 3)
        Field points, each run of ``group`` consecutive points one averaging line. [m]
    group : int
        Points per averaging line. [1]
    is_max : array_like of bool, shape (n_combo,)
        Per combination: the line's maximum (peak) instead of its mean.

    Returns
    -------
    ndarray, shape (n_combo, n_line)
        Reduced exposure ratios; NaN where any point of a line is NaN. [1]
    """
    from siteexposure.errors import InputError

    srcs = list(sources)
    pts, w = _points_and_weights(points_enu, weights, len(srcs))
    flags = np.asarray(is_max, dtype=bool).reshape(-1)
    if group < 1 or pts.shape[0] % group or flags.size != w.shape[0]:
        raise InputError(f"averaging lines: {pts.shape[0]} points in groups of {group} with "
                         f"{flags.size} reducers; expected whole groups and one reducer per "
                         f"combination ({w.shape[0]})")
    fast = all(kernel_source(s) for s in srcs)
    if fast and srcs and fast_available():
        en = pts[:, :2].reshape(-1, group, 2)
        lines = bool(np.all(en == en[:, :1, :]))  # vertical lines: one east/north per group
        return _run_kernel(_cached_plan(tuple(s.radiator for s in srcs), _engine_cache(srcs)),
                           pts, w, group, flags, lines)
    r = ratio_sums(srcs, pts, w, h_rows).reshape(w.shape[0], -1, group)
    return np.where(flags[:, None], r.max(axis=2), r.mean(axis=2))
