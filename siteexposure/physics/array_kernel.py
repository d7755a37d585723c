"""Compiled coherent sum of the array-synthesis column (numba when installed).

The field of a column of short current elements at cylindrical coordinates (rho, z) of
the antenna frame, summed coherently over the elements, is the inner loop of the array
model (:meth:`siteexposure.physics.array.ArraySynthesis.power_density`). The numpy form
materialises several complex ``(n_sub, n_point)`` temporaries; the compiled kernels work
on blocks of :data:`BLOCK` points, element by element with the loop over the block's points
innermost, and take sine and cosine from :func:`_sincos` (no library call), so that the
compiler vectorises the loop; they hold nothing of size ``n_sub x n_point``. Without numba
(or with ``SITEEXPOSURE_NO_NUMBA=1``), or when a phase ``k R`` exceeds
:data:`SINCOS_MAX_RAD`, the numpy reference :func:`column_density_reference` runs; both
compute the same quantity (tested to 1e-9 relative). The compiled kernels let the compiler
fuse multiply-adds (``fastmath={"contract"}``: no reassociation, NaN and infinities kept).

References
----------
C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, §4.2
(fields of an infinitesimal dipole, all terms; equation numbers from memory: 4-8a,
4-10a, 4-10b).
"""

from __future__ import annotations

import math

import numpy as np

from siteexposure.constants import ETA0
from siteexposure.physics.fastpath import _jit, _prange, atan2_kernel, fast_available

_TWO_PI = 2.0 * math.pi
_FOUR_PI = 4.0 * math.pi


def column_density_reference(rho, za, z_m, moments, wavelength_m, with_h: bool = False):
    """Density of the column without its element factor (numpy reference). [W/m^2]

    With ``with_h`` also ``eta0 |H_rms|^2`` of the summed magnetic field (a tuple).

    Parameters
    ----------
    rho, za : ndarray, shape (n_point,)
        Horizontal distance from the column axis and height along it. [m]
    z_m : ndarray, shape (n_sub,)
        Element positions along the axis. [m]
    moments : ndarray of complex, shape (n_sub,)
        Current moments ``I l`` (peak phasors). [A m]
    wavelength_m : float
        Free-space wavelength. [m]

    Notes
    -----
    With ``R`` the distance from element ``n`` and ``c = cos``, ``s = sin`` of its polar
    angle::

        E_r = eta p_n c / (2 pi R^2) (1 + 1/(j k R)) exp(-j k R)
        E_t = j eta k p_n s / (4 pi R) (1 + 1/(j k R) - 1/(k R)^2) exp(-j k R)
        H_phi = j k p_n s / (4 pi R) (1 + 1/(j k R)) exp(-j k R)
        S = (|sum E_r s + E_t c|^2 + |sum E_r c - E_t s|^2) / (2 eta),  S_H = eta |sum H_phi|^2 / 2
    """
    k = _TWO_PI / wavelength_m
    dz = za[None, :] - z_m[:, None]
    rr = np.hypot(rho[None, :], dz)
    c = dz / rr
    sn = rho[None, :] / rr
    kr = k * rr
    ph = np.exp(-1j * kr)
    inv = 1.0 / (1j * kr)
    e_r = (ETA0 / _TWO_PI) * c / rr**2 * (1.0 + inv) * ph
    e_t = (1j * ETA0 * k / _FOUR_PI) * sn / rr * (1.0 + inv - 1.0 / kr**2) * ph
    e_rho = moments @ (e_r * sn + e_t * c)
    e_z = moments @ (e_r * c - e_t * sn)
    s_e = (np.abs(e_rho) ** 2 + np.abs(e_z) ** 2) / (2.0 * ETA0)
    if not with_h:
        return s_e
    h_phi = moments @ ((1j * k / _FOUR_PI) * sn / rr * (1.0 + inv) * ph)
    return s_e, ETA0 * np.abs(h_phi) ** 2 / 2.0


# -- sine and cosine in one go, vectorisable ------------------------------------------------

# pi/2 in three parts (Cody-Waite reduction; the leading parts carry 23 and 21 significant bits,
# so q * _PIO2_A and q * _PIO2_B are exact for |q| < 2^30). These are twice the pi/4 parts
# DP1..DP3 of the Cephes library's sin.c (S. L. Moshier), from memory; the accuracy test
# tests/unit/test_array_kernel.py measures the result against numpy's sin and cos.
_PIO2_A = 1.570796251296997070312
_PIO2_B = 7.549789415861596353357e-8
_PIO2_C = 5.390302858158119052901e-15
_TWO_BY_PI = 2.0 / math.pi
#: largest |argument| of :func:`_sincos` for which its error stays below 3e-16. [rad]
SINCOS_MAX_RAD = 1.0e9
# minimax polynomials of sin and cos on [-pi/4, pi/4] (Cephes sin.c sincof, coscof; from memory)
_S = (1.58962301576546568060e-10, -2.50507477628578072866e-8, 2.75573136213857245213e-6,
      -1.98412698295895385996e-4, 8.33333333332211858878e-3, -1.66666666666666307295e-1)
_C = (-1.13585365213876817300e-11, 2.08757008419747316778e-9, -2.75573141792967388112e-7,
      2.48015872888517045348e-5, -1.38888888888730564116e-3, 4.16666666666665929218e-2)


@_jit(cache=True, inline="always")
def _sincos(x):
    """``(sin x, cos x)`` for ``|x| <= SINCOS_MAX_RAD``, both within 3e-16 of libm.

    The nearest multiple ``q pi/2`` is removed in three exact-product steps (Cody and Waite),
    leaving ``|r| <= pi/4``; there both polynomials are evaluated (Horner) and ``q mod 4``
    picks and signs them. Selects only, no calls and no data-dependent branches, so that a
    compiled loop over points vectorises (libm's sin and cos do not).

    References
    ----------
    W. J. Cody and W. Waite, *Software Manual for the Elementary Functions*, Prentice-Hall,
    1980, ch. 8 (argument reduction); S. L. Moshier, *Methods and Programs for Mathematical
    Functions*, Ellis Horwood, 1989 (Cephes sin.c coefficients; from memory, verified by test).
    """
    qf = math.floor(x * _TWO_BY_PI + 0.5)
    q = np.int64(qf)
    r = ((x - qf * _PIO2_A) - qf * _PIO2_B) - qf * _PIO2_C
    z = r * r
    ps = _S[0]
    for c in _S[1:]:
        ps = ps * z + c
    pc = _C[0]
    for c in _C[1:]:
        pc = pc * z + c
    s = r + r * z * ps
    co = 1.0 - 0.5 * z + z * z * pc
    odd = (q & 1) == 1
    sv = co if odd else s
    cv = s if odd else co
    sv = -sv if (q & 2) == 2 else sv
    cv = -cv if ((q + 1) & 2) == 2 else cv
    return sv, cv


# -- the column sum over a block of points ----------------------------------------------------

#: points per block of the compiled kernels (their accumulators stay in L1 cache)
BLOCK = 128


@_jit(cache=True, inline="always")
def _column_block(rho, zp, n, z_m, m_re, m_im, k, eta, acc):  # pragma: no cover - compiled
    """``acc[0:6, i]`` := Re, Im of ``E_rho``, ``E_z`` and ``H_phi`` of the column at
    ``(rho[i], zp[i])``, ``i < n``; element by element over the column, the inner loop over
    points (vectorises)."""
    a_r = eta / (2.0 * math.pi)
    a_t = eta * k / (4.0 * math.pi)
    a_h = k / (4.0 * math.pi)
    inv_k = 1.0 / k
    for i in range(n):
        acc[0, i] = 0.0
        acc[1, i] = 0.0
        acc[2, i] = 0.0
        acc[3, i] = 0.0
        acc[4, i] = 0.0
        acc[5, i] = 0.0
    for j in range(z_m.size):
        zj = z_m[j]
        mr = m_re[j]
        mi = m_im[j]
        for i in range(n):
            ri = rho[i]
            dz = zp[i] - zj
            rr = math.sqrt(ri * ri + dz * dz)
            inv = 1.0 / rr
            cs = dz * inv
            sn = ri * inv
            s_kr, c_kr = _sincos(k * rr)
            cph = c_kr
            sph = -s_kr  # exp(-j kr) = cph + j sph
            ikr = inv * inv_k  # 1 / kr
            # E_r / p = a_r c / R^2 (1 - j/kr) e^{-jkr}
            fr = a_r * cs * inv * inv
            r_re = fr * (cph + ikr * sph)
            r_im = fr * (sph - ikr * cph)
            # E_t / p = j a_t s / R (1 - 1/kr^2 - j/kr) e^{-jkr}
            ft = a_t * sn * inv
            q_re = 1.0 - ikr * ikr
            u_re = q_re * cph + ikr * sph
            u_im = q_re * sph - ikr * cph
            t_re = -ft * u_im
            t_im = ft * u_re
            # contributions to E_rho and E_z per unit moment, times the moment
            gr_re = r_re * sn + t_re * cs
            gr_im = r_im * sn + t_im * cs
            gz_re = r_re * cs - t_re * sn
            gz_im = r_im * cs - t_im * sn
            acc[0, i] += mr * gr_re - mi * gr_im
            acc[1, i] += mr * gr_im + mi * gr_re
            acc[2, i] += mr * gz_re - mi * gz_im
            acc[3, i] += mr * gz_im + mi * gz_re
            # H_phi / p = j a_h s / R (1 - j/kr) e^{-jkr}
            fh = a_h * sn * inv
            w_re = cph + ikr * sph
            w_im = sph - ikr * cph
            h_re = -fh * w_im
            h_im = fh * w_re
            acc[4, i] += mr * h_re - mi * h_im
            acc[5, i] += mr * h_im + mi * h_re


@_jit(cache=True, inline="always")
def _block_density(acc, i, eta):  # pragma: no cover - compiled
    """Plane-wave-equivalent density of the summed electric field of point ``i`` of a block."""
    return (acc[0, i] * acc[0, i] + acc[1, i] * acc[1, i] + acc[2, i] * acc[2, i]
            + acc[3, i] * acc[3, i]) / (2.0 * eta)


@_jit(cache=True, inline="always")
def _block_density_h(acc, i, eta):  # pragma: no cover - compiled
    """``eta |H_rms|^2`` of the summed magnetic field of point ``i`` of a block."""
    return eta * (acc[4, i] * acc[4, i] + acc[5, i] * acc[5, i]) / 2.0


@_jit(parallel=True, cache=True, fastmath={"contract"})
def _column_kernel(rho, za, z_m, m_re, m_im, k, eta, out, out_h):  # pragma: no cover - compiled
    n_pt = rho.size
    for b in _prange((n_pt + BLOCK - 1) // BLOCK):
        p0 = b * BLOCK
        n = min(n_pt, p0 + BLOCK) - p0
        acc = np.empty((6, BLOCK))
        _column_block(rho[p0:p0 + n], za[p0:p0 + n], n, z_m, m_re, m_im, k, eta, acc)
        for i in range(n):
            out[p0 + i] = _block_density(acc, i, eta)
            out_h[p0 + i] = _block_density_h(acc, i, eta)


def phase_in_range(k: float, r_max_m: float) -> bool:
    """True when every phase ``k R`` of a field point (distance from the column at most
    ``r_max_m``) lies where :func:`_sincos` is exact; else the numpy reference must run."""
    return bool(np.isfinite(r_max_m)) and k * r_max_m <= SINCOS_MAX_RAD


def column_density(rho, za, z_m, moments, wavelength_m, with_h: bool = False):
    """Density of the column without its element factor, compiled when numba is present. [W/m^2]

    Same arguments and result as :func:`column_density_reference`.
    """
    rho = np.ascontiguousarray(rho, dtype=float).ravel()
    za = np.ascontiguousarray(za, dtype=float).ravel()
    z = np.ascontiguousarray(z_m, dtype=float)
    m = np.asarray(moments, dtype=complex)
    k = _TWO_PI / wavelength_m
    r_max = _max_distance(rho, za, z)
    if not (fast_available() and phase_in_range(k, r_max)):
        return column_density_reference(rho, za, z, m, wavelength_m, with_h)
    out = np.empty(rho.size)
    out_h = np.empty(rho.size)
    _column_kernel(rho, za, z, np.ascontiguousarray(m.real), np.ascontiguousarray(m.imag),
                   k, ETA0, out, out_h)
    return (out, out_h) if with_h else out


def _max_distance(rho, za, z_m) -> float:
    """Largest distance from any element to any point (bounded above). [m]"""
    if rho.size == 0 or z_m.size == 0:
        return 0.0
    z_ext = max(abs(float(z_m[0])), abs(float(z_m[-1])))
    return float(np.sqrt(np.max(rho * rho + za * za))) + z_ext


@_jit(parallel=True, cache=True, fastmath={"contract"})
def _fused_kernel(xa, ya, za, z_m, m_re, m_im, k, eta, near_t, far_t, corr, r_ff,
                  r_react, clearance, refl, s_out, h_out, ok_out):  # pragma: no cover - compiled
    n_pt = xa.size
    n_sub = z_m.size
    n_phi = near_t.shape[0]
    n_el = near_t.shape[1]
    z_lo = z_m[0]
    z_hi = z_m[n_sub - 1]
    r2d = 180.0 / math.pi
    inv_rff2 = 1.0 / (r_ff * r_ff)
    for b in _prange((n_pt + BLOCK - 1) // BLOCK):
        p0 = b * BLOCK
        n = min(n_pt, p0 + BLOCK) - p0
        rho = np.empty(BLOCK)
        zb = np.empty(BLOCK)
        rb = np.empty(BLOCK)
        xd = np.empty(BLOCK)
        yd = np.empty(BLOCK)
        fac = np.empty(BLOCK)
        acc = np.empty((6, BLOCK))
        # geometry, selects only (vectorises): distances, the mask, pattern angles [deg]
        for i in range(n):
            x = xa[p0 + i]
            y = ya[p0 + i]
            zp = za[p0 + i]
            rh = math.sqrt(x * x + y * y)
            r = math.sqrt(rh * rh + zp * zp)
            zc = min(max(zp, z_lo), z_hi)
            dcol = math.sqrt(rh * rh + (zp - zc) * (zp - zc))
            rho[i] = rh
            zb[i] = zp
            rb[i] = r
            ok_out[p0 + i] = r >= r_react and dcol >= clearance and r < math.inf
            ph = atan2_kernel(-y, x) * r2d
            ph = ph + 360.0 if ph < 0.0 else ph
            xd[i] = ph - 360.0 if ph >= 360.0 else ph
            yd[i] = min(max(atan2_kernel(zp, rh) * r2d, -90.0), 90.0) + 90.0
        # element factor: bilinear on the 1 deg (phi, el) tables, periodic in phi
        for i in range(n):
            if not ok_out[p0 + i]:
                fac[i] = math.nan
                continue
            i0 = int(xd[i])
            j0 = min(int(yd[i]), n_el - 2)
            tx = xd[i] - i0
            ty = yd[i] - j0
            i0 = i0 % n_phi
            i1 = (i0 + 1) % n_phi
            w00 = (1 - tx) * (1 - ty)
            w01 = (1 - tx) * ty
            w10 = tx * (1 - ty)
            w11 = tx * ty
            near = (w00 * near_t[i0, j0] + w01 * near_t[i0, j0 + 1]
                    + w10 * near_t[i1, j0] + w11 * near_t[i1, j0 + 1])
            far = (w00 * far_t[i0, j0] + w01 * far_t[i0, j0 + 1]
                   + w10 * far_t[i1, j0] + w11 * far_t[i1, j0 + 1])
            jc = min(int(yd[i]), corr.size - 2)
            tc = yd[i] - jc
            c = corr[jc] * (1.0 - tc) + corr[jc + 1] * tc
            beta = min(1.0, (rb[i] * rb[i]) * inv_rff2)
            if beta == 1.0:
                e = far * c
            elif beta == 0.0:
                e = near
            else:
                e = near * (far * c / near) ** beta
            fac[i] = e * refl
        _column_block(rho, zb, n, z_m, m_re, m_im, k, eta, acc)
        for i in range(n):
            s_out[p0 + i] = _block_density(acc, i, eta) * fac[i]
            h_out[p0 + i] = _block_density_h(acc, i, eta) * fac[i]


def fused_power_density(model, xa, ya, za) -> tuple[np.ndarray, np.ndarray] | None:
    """:meth:`ArraySynthesis.power_density` in one compiled pass (frame coordinates given).

    Returns None, leaving the work to the numpy path, when numba is missing or disabled, or
    when a point is so far away (``k R`` beyond :data:`SINCOS_MAX_RAD`) that the compiled
    sine and cosine would lose accuracy.

    Parameters
    ----------
    model : ArraySynthesis
    xa, ya, za : ndarray, shape (n_point,)
        Field points in the antenna frame (boresight, left, up). [m]

    Returns
    -------
    s_w_m2, assessable, s_h_w_m2 : ndarray
        As :meth:`siteexposure.physics.array.ArraySynthesis.fields`: E-field density,
        assessable, H-field density. [W/m^2], [bool], [W/m^2]
    """
    xa, ya, za = (np.ascontiguousarray(v, dtype=float).ravel() for v in (xa, ya, za))
    z_m = np.ascontiguousarray(model.z_m, dtype=float)
    k = _TWO_PI / model.wavelength_m
    if not (fast_available() and phase_in_range(k, _max_distance(np.hypot(xa, ya), za, z_m))):
        return None
    n = xa.size
    s = np.empty(n)
    h = np.empty(n)
    ok = np.empty(n, dtype=np.bool_)
    m = np.asarray(model.moments, dtype=complex)
    _fused_kernel(xa, ya, za, z_m, np.ascontiguousarray(m.real), np.ascontiguousarray(m.imag),
                  k, ETA0,
                  np.ascontiguousarray(model.element_table, dtype=float),
                  np.ascontiguousarray(model.element_table_far, dtype=float),
                  np.ascontiguousarray(model.vertical_correction, dtype=float),
                  float(model.far_field_range_m), float(model.reactive_radius_m),
                  float(model.column_clearance_m), float(model.reflection_factor), s, h, ok)
    return s, ok, h
