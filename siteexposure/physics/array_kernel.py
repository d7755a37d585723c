"""Compiled coherent sum of the array-synthesis column (numba when installed).

The field of a column of short current elements at cylindrical coordinates (rho, z) of
the antenna frame, summed coherently over the elements, is the inner loop of the array
model (:meth:`siteexposure.physics.array.ArraySynthesis.power_density`). The numpy form
materialises several complex ``(n_sub, n_point)`` temporaries; this kernel loops over
points and elements with scalar arithmetic and holds nothing of that size. Without numba
(or with ``SITEEXPOSURE_NO_NUMBA=1``) the numpy reference :func:`column_density_reference`
runs; both compute the same quantity (tested to 1e-9 relative).

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
from siteexposure.physics.fastpath import _jit, _prange, fast_available

_TWO_PI = 2.0 * math.pi
_FOUR_PI = 4.0 * math.pi


def column_density_reference(rho, za, z_m, moments, wavelength_m) -> np.ndarray:
    """Density of the column without its element factor (numpy reference). [W/m^2]

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
        S = (|sum E_r s + E_t c|^2 + |sum E_r c - E_t s|^2) / (2 eta)
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
    return (np.abs(e_rho) ** 2 + np.abs(e_z) ** 2) / (2.0 * ETA0)


@_jit(cache=True, inline="always")
def _column_at(rho, zp, z_m, m_re, m_im, k, eta):  # pragma: no cover - compiled
    """Density of the column (no element factor) at one point (rho, z); scalar arithmetic."""
    a_r = eta / (2.0 * math.pi)
    a_t = eta * k / (4.0 * math.pi)
    inv_k = 1.0 / k
    er_re = 0.0
    er_im = 0.0
    ez_re = 0.0
    ez_im = 0.0
    for n in range(z_m.size):
        dz = zp - z_m[n]
        rr = math.sqrt(rho * rho + dz * dz)
        inv = 1.0 / rr
        cs = dz * inv
        sn = rho * inv
        kr = k * rr
        cph = math.cos(kr)
        sph = -math.sin(kr)  # exp(-j kr) = cph + j sph
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
        mr = m_re[n]
        mi = m_im[n]
        er_re += mr * gr_re - mi * gr_im
        er_im += mr * gr_im + mi * gr_re
        ez_re += mr * gz_re - mi * gz_im
        ez_im += mr * gz_im + mi * gz_re
    return (er_re * er_re + er_im * er_im + ez_re * ez_re + ez_im * ez_im) / (2.0 * eta)


@_jit(parallel=True, cache=True)
def _column_kernel(rho, za, z_m, m_re, m_im, k, eta, out):  # pragma: no cover - compiled
    for p in _prange(rho.size):
        out[p] = _column_at(rho[p], za[p], z_m, m_re, m_im, k, eta)


def column_density(rho, za, z_m, moments, wavelength_m) -> np.ndarray:
    """Density of the column without its element factor, compiled when numba is present. [W/m^2]

    Same arguments and result as :func:`column_density_reference`.
    """
    rho = np.ascontiguousarray(rho, dtype=float).ravel()
    za = np.ascontiguousarray(za, dtype=float).ravel()
    z = np.ascontiguousarray(z_m, dtype=float)
    m = np.asarray(moments, dtype=complex)
    if not fast_available():
        return column_density_reference(rho, za, z, m, wavelength_m)
    out = np.empty(rho.size)
    _column_kernel(rho, za, z, np.ascontiguousarray(m.real), np.ascontiguousarray(m.imag),
                   _TWO_PI / wavelength_m, ETA0, out)
    return out


@_jit(parallel=True, cache=True)
def _fused_kernel(xa, ya, za, z_m, m_re, m_im, k, eta, near_t, far_t, corr, r_ff,
                  r_react, clearance, refl, s_out, ok_out):  # pragma: no cover - compiled
    n_pt = xa.size
    n_sub = z_m.size
    n_phi = near_t.shape[0]
    n_el = near_t.shape[1]
    z_lo = z_m[0]
    z_hi = z_m[n_sub - 1]
    r2d = 180.0 / math.pi
    for p in _prange(n_pt):
        x = xa[p]
        y = ya[p]
        zp = za[p]
        rho = math.sqrt(x * x + y * y)
        r = math.sqrt(rho * rho + zp * zp)
        zc = min(max(zp, z_lo), z_hi)
        dcol = math.sqrt(rho * rho + (zp - zc) * (zp - zc))
        if not (r >= r_react and dcol >= clearance and math.isfinite(r)):
            s_out[p] = math.nan
            ok_out[p] = False
            continue
        ok_out[p] = True
        # element factor: bilinear on the 1 deg (phi, el) tables, periodic in phi
        phi = math.atan2(-y, x)
        if phi < 0.0:
            phi += 2.0 * math.pi
        xd = (phi * r2d) % 360.0
        yd = min(max(math.atan2(zp, rho) * r2d, -90.0), 90.0) + 90.0
        i0 = int(math.floor(xd))
        j0 = min(int(math.floor(yd)), n_el - 2)
        tx = xd - i0
        ty = yd - j0
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
        jc = min(int(math.floor(yd)), corr.size - 2)
        tc = yd - jc
        c = corr[jc] * (1.0 - tc) + corr[jc + 1] * tc
        beta = min(1.0, (r / r_ff) ** 2)
        if beta == 1.0:
            e = far * c
        elif beta == 0.0:
            e = near
        else:
            e = near * (far * c / near) ** beta
        s_out[p] = _column_at(rho, zp, z_m, m_re, m_im, k, eta) * e * refl


def fused_power_density(model, xa, ya, za) -> tuple[np.ndarray, np.ndarray]:
    """:meth:`ArraySynthesis.power_density` in one compiled pass (frame coordinates given).

    Parameters
    ----------
    model : ArraySynthesis
    xa, ya, za : ndarray, shape (n_point,)
        Field points in the antenna frame (boresight, left, up). [m]

    Returns
    -------
    s_w_m2, assessable : ndarray
        As :meth:`siteexposure.physics.array.ArraySynthesis.power_density`. [W/m^2], [bool]
    """
    n = xa.size
    s = np.empty(n)
    ok = np.empty(n, dtype=np.bool_)
    m = np.asarray(model.moments, dtype=complex)
    _fused_kernel(np.ascontiguousarray(xa, dtype=float), np.ascontiguousarray(ya, dtype=float),
                  np.ascontiguousarray(za, dtype=float), np.ascontiguousarray(model.z_m, dtype=float),
                  np.ascontiguousarray(m.real), np.ascontiguousarray(m.imag),
                  2.0 * math.pi / model.wavelength_m, ETA0,
                  np.ascontiguousarray(model.element_table, dtype=float),
                  np.ascontiguousarray(model.element_table_far, dtype=float),
                  np.ascontiguousarray(model.vertical_correction, dtype=float),
                  float(model.far_field_range_m), float(model.reactive_radius_m),
                  float(model.column_clearance_m), float(model.reflection_factor), s, ok)
    return s, ok
