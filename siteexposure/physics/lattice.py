"""Equivalent-source lattice: the antenna's body filled with oriented dipoles, for any polarisation.

The array-synthesis column of :mod:`siteexposure.physics.array` models vertical current
elements stacked along the antenna's height (dipoles, collinears, vertically polarised
panels). This model is its generalisation to what that column cannot represent, from what a
user has (pattern, body size, polarisation, power):

* **element orientation** from the polarisation word: vertical -> electric current along
  ``z``; horizontal -> electric current along ``y`` (dipoles side by side, Yagis and
  log-periodic arrays), or a magnetic current along ``z`` (loops, slots: horizontally
  polarised omnidirectional antennas), whichever the pattern calls for; slant -> a +45 deg
  electric element in the ``y-z`` plane; circular -> crossed ``y`` and ``z`` elements in
  quadrature (crossed dipoles). For an electrically small body (largest dimension below
  :data:`SMALL_BODY_WL` wavelengths) the magnetic alternative (a loop) is also tried for the
  vertical word, and the better match to the pattern is kept. Horizontal, slant and circular
  elements radiate along the array axis, so a stacked array of them is not dark below itself;
* **layout**: a column of elements along the element axis (``z`` for vertical elements and
  for stacked bays, ``y`` for a horizontal end-fire antenna's elements), and, for end-fire
  bodies (depth at least :data:`ENDFIRE_DEPTH_WL` wavelengths and half the column length),
  rows along the boresight ``x`` over the body's depth;
* **excitation**: along the column, a sinusoidal standing-wave current with zero ends for
  electrically short conductors (thin-wire current, Balanis 4th ed. sec. 4.5, from memory;
  the pattern of a short column does not determine its taper), otherwise the taper fitted to
  the cut along the column (:func:`siteexposure.physics.array._fit_taper`); along the depth,
  amplitudes and a progressive phase ``exp(-j beta k x)`` fitted in dB to the cut that
  contains the boresight and is normal to the elements (the H-plane cut, where the element
  itself is omnidirectional), from several starts (ordinary end-fire ``beta = 1`` and
  Hansen-Woodyard ``beta = 1 + lambda/(2 D)``, Balanis sec. 6.4, from memory);
* **ground plane** (a monopole): the images of every element in the plane at the body's
  lower end (horizontal electric components reversed, vertical kept; magnetic the other
  way round), radiating into the upper half-space only.

The fields of all elements, electric and magnetic, with all their terms (near, induction and
far), are summed coherently at every point. A correction factor common to all elements,
``e(phi, el)``, turns the lattice's own far field into the pattern's: its far-field value
``e_far = G_pattern / G_lattice`` (null regions interpolated in elevation), and close in its
upper envelope over +-5 deg, blended as ``e_near^(1-b) e_far^b`` with ``b = min(1, (r /
R_ff)^2)`` (as the column model does). The moments are scaled so that the radiated power
equals the input power; where the pattern integrates to more than 4 pi the moments are
raised until the far-field peak equals the stated peak gain (conservative; recorded).

The result is ``|E_rms|^2 / eta0`` and ``eta0 |H_rms|^2`` of the synthesised fields; the
dispatcher keeps the stand-off from the body. Accuracy against the method-of-moments
references: tests/data/nec/accuracy.md.

References
----------
.. [1] C. A. Balanis, "Antenna Theory: Analysis and Design", 4th ed., Wiley, 2016: sec. 4.2
   (infinitesimal dipole, all field terms), sec. 5.2 (small loop, its dual), sec. 4.5
   (sinusoidal current of a thin wire), sec. 6.4 (end-fire and Hansen-Woodyard arrays),
   sec. 4.7 (image theory over a perfect conductor); equation numbers from memory.
.. [2] J. D. Jackson, "Classical Electrodynamics", 3rd ed., Wiley, 1999, sec. 9.2-9.3
   (fields of oscillating electric and magnetic dipoles in vector form).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from siteexposure.constants import ETA0
from siteexposure.errors import InputError
from siteexposure.physics.array import (
    ENVELOPE_DEG,
    FIT_FLOOR_DB,
    _db,
    _fit_quadratic_phase,
    _fit_taper,
    _lookup,
)
from siteexposure.physics.array_kernel import SINCOS_MAX_RAD, _sincos
from siteexposure.physics.fastpath import _jit, _prange, fast_available
from siteexposure.physics.orientation import antenna_angles, direction_from_angles, to_antenna_frame
from siteexposure.physics.pattern_base import dbi_to_linear, linear_to_dbi
from siteexposure.physics.regions import far_field_range_m, standoff_m

SMALL_BODY_WL = 0.4  #: below this largest dimension [lambda] a loop is tried for "vertical"
ENDFIRE_DEPTH_WL = 0.25  #: end-fire rows when the depth is at least this [lambda] ...
ENDFIRE_DEPTH_RATIO = 0.5  #: ... and at least this fraction of the column length [1]
SHORT_COLUMN_WL = 0.75  #: shorter columns carry the thin-wire sinusoidal current [lambda]
COLUMN_SPACING_WL = 0.1  #: element spacing along the column [lambda]
DEPTH_SPACING_WL = 0.08  #: element spacing along the depth [lambda]
MAX_COLUMN = 64
MAX_THIN_WIRE = 400
#: incoherent fill, a fraction of the lattice's peak intensity radiated in every direction
#: (-40 dB): a real antenna's nulls are finite, and the correction then has something to
#: scale where the elements alone have an exact null [1]
FILL = 1e-4
#: the correction reshapes the lattice's own field by at most this above its beam [dB]
CORRECTION_CAP_DB = 6.0
MAX_DEPTH = 40
_BLOCK = 128
_AZ = np.deg2rad(np.arange(0.0, 360.0, 1.0))
_EL = np.deg2rad(np.arange(-90.0, 90.5, 1.0))

#: element kinds: (electric moment vector, magnetic moment vector) per unit, antenna frame
ELEMENTS = {
    "e_z": (np.array([0, 0, 1], complex), np.zeros(3, complex)),
    "e_y": (np.array([0, 1, 0], complex), np.zeros(3, complex)),
    "m_z": (np.zeros(3, complex), np.array([0, 0, ETA0], complex)),
    "m_y": (np.zeros(3, complex), np.array([0, ETA0, 0], complex)),
    "slant": (np.array([0, 1, 1], complex) / math.sqrt(2.0), np.zeros(3, complex)),
    "circular": (np.array([0, 1, 1j], complex) / math.sqrt(2.0), np.zeros(3, complex)),
}
#: the column axis (0 x, 1 y, 2 z) that each element kind is stacked along
COLUMN_AXIS = {"e_z": 2, "m_z": 2, "m_y": 2, "slant": 2, "circular": 2, "e_y": 1}


# -- fields of many dipoles -----------------------------------------------------------------


def dipole_fields_reference(points, src, me, mm, k: float):
    """E and H (peak phasors) of electric and magnetic current elements at points (numpy).

    Parameters
    ----------
    points : ndarray, shape (m, 3)
        Field points. [m]
    src : ndarray, shape (n, 3)
        Element positions. [m]
    me : ndarray of complex, shape (n, 3)
        Electric current moments ``I l``. [A m]
    mm : ndarray of complex, shape (n, 3)
        Magnetic current moments ``I_m l``. [V m]
    k : float
        Wavenumber. [rad/m]

    Returns
    -------
    E, H : ndarray of complex, shape (m, 3)
        [V/m], [A/m]

    Notes
    -----
    With ``C = exp(-j k R) / (4 pi R)``, ``n`` the unit vector from the element to the point,
    ``f1 = 1 + 1/(j k R) - 1/(k R)^2``, ``f2 = 1 + 1/(j k R)``, ``T(v) = v - n (n . v)`` and
    ``L(v) = n (n . v)`` (Balanis eqs. 4-8a to 4-10c in vector form; Jackson sec. 9.2)::

        E = C [ eta (-j k T(M) f1 + 2/R L(M) f2) - j k (K x n) f2 ]
        H = C [ (-j k T(K) f1 + 2/R L(K) f2) / eta + j k (M x n) f2 ]
    """
    p = np.asarray(points, dtype=float)
    e_out = np.zeros((len(p), 3), complex)
    h_out = np.zeros((len(p), 3), complex)
    step = max(1, 400_000 // max(len(src), 1))
    for a in range(0, len(p), step):
        d = p[a:a + step, None, :] - src[None, :, :]
        r = np.sqrt(np.einsum("mni,mni->mn", d, d))
        n = d / r[..., None]
        kr = k * r
        c = np.exp(-1j * kr) / (4.0 * np.pi * r)
        f2 = 1.0 + 1.0 / (1j * kr)
        f1 = f2 - 1.0 / kr**2
        nm = np.einsum("mni,ni->mn", n, me)
        nk = np.einsum("mni,ni->mn", n, mm)
        t_m = me[None] - n * nm[..., None]
        t_k = mm[None] - n * nk[..., None]
        l_m = n * nm[..., None]
        l_k = n * nk[..., None]
        k_x_n = np.cross(mm[None], n)
        m_x_n = np.cross(me[None], n)
        e = c[..., None] * (ETA0 * (-1j * k * t_m * f1[..., None] + (2.0 / r)[..., None] * l_m
                                    * f2[..., None]) - 1j * k * k_x_n * f2[..., None])
        h = c[..., None] * ((-1j * k * t_k * f1[..., None] + (2.0 / r)[..., None] * l_k
                             * f2[..., None]) / ETA0 + 1j * k * m_x_n * f2[..., None])
        e_out[a:a + step] = e.sum(axis=1)
        h_out[a:a + step] = h.sum(axis=1)
    return e_out, h_out


@_jit(cache=True)
def _lattice_block(px, py, pz, n, sx, sy, sz, me, mm, k, eta, acc):  # pragma: no cover
    """``acc[0:6, i]`` := E (x, y, z) and H (x, y, z) at point ``i < n`` of a block (complex),
    element by element, the loop over points innermost."""
    inv_k = 1.0 / k
    inv4pi = 1.0 / (4.0 * math.pi)
    for i in range(n):
        for q in range(6):
            acc[q, i] = 0.0
    for j in range(sx.size):
        mx, my, mz = me[j, 0], me[j, 1], me[j, 2]
        kx, ky, kz = mm[j, 0], mm[j, 1], mm[j, 2]
        for i in range(n):
            dx = px[i] - sx[j]
            dy = py[i] - sy[j]
            dz = pz[i] - sz[j]
            r = math.sqrt(dx * dx + dy * dy + dz * dz)
            inv = 1.0 / r
            nx, ny, nz = dx * inv, dy * inv, dz * inv
            s_kr, c_kr = _sincos(k * r)
            c = complex(c_kr, -s_kr) * (inv * inv4pi)
            ikr = inv * inv_k
            f2 = complex(1.0, -ikr)
            f1 = f2 - ikr * ikr
            nm = nx * mx + ny * my + nz * mz
            nk = nx * kx + ny * ky + nz * kz
            a_e = -1j * k * f1
            b_e = 2.0 * inv * f2
            g = -1j * k * f2
            # E = C [eta (a T(M) + b L(M)) + g (K x n)],  T(M) = M - n nm, L(M) = n nm
            acc[0, i] += c * (eta * (a_e * (mx - nx * nm) + b_e * nx * nm)
                              + g * (ky * nz - kz * ny))
            acc[1, i] += c * (eta * (a_e * (my - ny * nm) + b_e * ny * nm)
                              + g * (kz * nx - kx * nz))
            acc[2, i] += c * (eta * (a_e * (mz - nz * nm) + b_e * nz * nm)
                              + g * (kx * ny - ky * nx))
            # H = C [(a T(K) + b L(K)) / eta - g (M x n)]
            acc[3, i] += c * ((a_e * (kx - nx * nk) + b_e * nx * nk) / eta
                              - g * (my * nz - mz * ny))
            acc[4, i] += c * ((a_e * (ky - ny * nk) + b_e * ny * nk) / eta
                              - g * (mz * nx - mx * nz))
            acc[5, i] += c * ((a_e * (kz - nz * nk) + b_e * nz * nk) / eta
                              - g * (mx * ny - my * nx))


@_jit(parallel=True, cache=True, fastmath={"contract"})
def _lattice_kernel(px, py, pz, sx, sy, sz, me, mm, k, eta, s_e, s_h):  # pragma: no cover
    n_pt = px.size
    for b in _prange((n_pt + _BLOCK - 1) // _BLOCK):
        p0 = b * _BLOCK
        n = min(n_pt, p0 + _BLOCK) - p0
        acc = np.empty((6, _BLOCK), dtype=np.complex128)
        _lattice_block(px[p0:p0 + n], py[p0:p0 + n], pz[p0:p0 + n], n, sx, sy, sz, me, mm, k,
                       eta, acc)
        for i in range(n):
            e2 = 0.0
            h2 = 0.0
            for q in range(3):
                e2 += acc[q, i].real ** 2 + acc[q, i].imag ** 2
                h2 += acc[3 + q, i].real ** 2 + acc[3 + q, i].imag ** 2
            s_e[p0 + i] = e2 / (2.0 * eta)
            s_h[p0 + i] = eta * h2 / 2.0


def dipole_densities(points, src, me, mm, k: float) -> tuple[np.ndarray, np.ndarray]:
    """``|E_rms|^2 / eta0`` and ``eta0 |H_rms|^2`` of the summed elements (compiled when numba
    is present, else :func:`dipole_fields_reference`; equal to 1e-9). [W/m^2]"""
    p = np.ascontiguousarray(points, dtype=float).reshape(-1, 3)
    src = np.ascontiguousarray(src, dtype=float).reshape(-1, 3)
    me = np.asarray(me, dtype=complex).reshape(-1, 3)
    mm = np.asarray(mm, dtype=complex).reshape(-1, 3)
    r_max = (float(np.sqrt(np.max(np.einsum("ij,ij->i", p, p)))) if len(p) else 0.0) + float(
        np.sqrt(np.max(np.einsum("ij,ij->i", src, src))) if len(src) else 0.0)
    if len(p) == 0:
        return np.zeros(0), np.zeros(0)
    if not (fast_available() and np.isfinite(r_max) and k * r_max <= SINCOS_MAX_RAD):
        e, h = dipole_fields_reference(p, src, me, mm, k)
        return (np.sum(np.abs(e) ** 2, axis=1) / (2.0 * ETA0),
                ETA0 * np.sum(np.abs(h) ** 2, axis=1) / 2.0)

    s_e = np.empty(len(p))
    s_h = np.empty(len(p))
    _lattice_kernel(np.ascontiguousarray(p[:, 0]), np.ascontiguousarray(p[:, 1]),
                    np.ascontiguousarray(p[:, 2]), np.ascontiguousarray(src[:, 0]),
                    np.ascontiguousarray(src[:, 1]), np.ascontiguousarray(src[:, 2]),
                    np.ascontiguousarray(me), np.ascontiguousarray(mm), float(k), ETA0, s_e, s_h)
    return s_e, s_h


def far_field_intensity(dirs, src, me, mm, k: float) -> np.ndarray:
    """Radiation intensity ``U = r^2 |E|^2 / (2 eta)`` of the summed elements in directions
    ``dirs`` (unit vectors, shape (d, 3)). [W/sr]

    ``E r exp(jkr) = -j k / (4 pi) [eta T(M~) + K~ x n]`` with ``M~ = sum M_i exp(j k n . r_i)``.
    """
    dirs = np.asarray(dirs, dtype=float).reshape(-1, 3)
    out = np.empty(len(dirs))
    step = max(1, 2_000_000 // max(len(src), 1))
    for a in range(0, len(dirs), step):
        n = dirs[a:a + step]
        ph = np.exp(1j * k * (n @ src.T))  # (d, n_src)
        m_t = ph @ me
        k_t = ph @ mm
        t = m_t - n * np.sum(n * m_t, axis=1)[:, None]
        e = ETA0 * t + np.cross(k_t, n)
        out[a:a + step] = (k / (4.0 * np.pi)) ** 2 * np.sum(np.abs(e) ** 2, axis=1) / (2.0 * ETA0)
    return out


# -- choosing the element and the layout ------------------------------------------------------


def _pattern_db(pattern, phi, el) -> np.ndarray:
    g = np.asarray(pattern.gain(phi, el), dtype=float)
    if not np.all(np.isfinite(g)):
        raise InputError(f"pattern '{getattr(pattern, 'name', '?')}': gain is not finite; "
                         "expected a usable gain pattern")
    return _db(g)


def _element_db(kind: str, phi, el) -> np.ndarray:
    """Far-field power pattern of one element of ``kind`` (dB, arbitrary reference)."""
    n = direction_from_angles(phi, el).reshape(-1, 3)
    me, mm = ELEMENTS[kind]
    u = far_field_intensity(n, np.zeros((1, 3)), me[None, :], mm[None, :], 1.0)
    return _db(u.reshape(np.broadcast(phi, el).shape))


def choose_element(polarization: str, pattern, body, wavelength_m: float, endfire: bool) -> str:
    """The element kind for a polarisation word and a pattern (module docstring)."""
    pol = str(polarization)
    if pol == "slant":
        return "slant"
    if pol == "circular":
        return "circular"
    if pol == "vertical":
        cands = ["e_z"]
        if not endfire and body.largest_dimension_m < SMALL_BODY_WL * wavelength_m:
            cands.append("m_y")
    elif pol == "horizontal":
        cands = ["e_y"] if endfire else ["e_y", "m_z"]
    else:
        raise InputError(f"antenna polarization: {polarization!r}; expected vertical, "
                         "horizontal, slant or circular")
    if len(cands) == 1:
        return cands[0]
    # the element whose own pattern agrees best with the antenna's over the sphere (dB, within
    # 30 dB of the peak, weighted by solid angle)
    phi = _AZ[::5][:, None]
    el = _EL[::5][None, :]
    g = _pattern_db(pattern, phi, el)
    g = np.maximum(g - g.max(), -FIT_FLOOR_DB)
    w = np.broadcast_to(np.cos(el), g.shape)
    best, best_err = cands[0], np.inf
    for kind in cands:
        e = _element_db(kind, phi, el)
        e = np.maximum(e - e.max(), -FIT_FLOOR_DB)
        off = np.sum(w * (g - e)) / np.sum(w)
        err = np.sum(w * (g - e - off) ** 2)
        if err < best_err - 1e-9:
            best, best_err = kind, err
    return best


def _sinusoidal(s_m: np.ndarray, length_m: float, k: float) -> np.ndarray:
    """Thin-wire standing-wave current ``sin(k (L/2 - |s|))`` (Balanis sec. 4.5), never
    negative, normalised to its maximum."""
    a = np.sin(np.clip(k * (0.5 * length_m - np.abs(s_m)), 0.0, None))
    a = np.where(a > 0, a, 0.0)
    if a.max() <= 0:
        return np.ones_like(s_m)
    return a / a.max()


def _fit_endfire(x_m, k, psi, g_lin, floor_db=FIT_FLOOR_DB) -> np.ndarray:
    """Complex weights of the rows along the depth, fitted in dB to the H-plane cut
    ``g_lin(psi)`` (``psi`` the angle from boresight). [1]

    The weights are smooth by construction: ``exp(c1 t + c2 t^2) exp(-j (beta k x + q t^2))``
    with ``t`` the row position scaled to -1..1 (+1 at the front) -- an amplitude that decays
    along the boom towards the front (``c1 <= 0``: the cut cannot tell a growing from a
    decaying current, both radiate the same ``|AF|``; in a Yagi or a log-periodic array the
    driven and reflecting elements at the back carry the larger currents, common practice)
    and bulges or sags, a progressive end-fire phase ``beta`` and a quadratic phase
    ``q``. Four numbers fix the H-plane pattern's main lobe, front-to-back ratio and side-lobe
    level; free amplitudes per row fit the cut as well but take any of many current
    distributions with the same far field (the cut fixes only ``|AF|``), some of them wild,
    whose near fields differ. Least squares on the dB residual above the floor (the level is
    free), from ordinary end-fire and Hansen-Woodyard starts (Balanis 4th ed. sec. 6.4, from
    memory); the best is kept.
    """
    from scipy.optimize import least_squares

    n = x_m.size
    if n == 1:
        return np.ones(1, complex)
    u = np.cos(psi)
    target = 10.0 * np.log10(np.maximum(g_lin, g_lin.max() * 10 ** (-floor_db / 10)))
    lo_db = target.max() - floor_db
    depth = float(x_m.max() - x_m.min())
    xc = x_m - 0.5 * (x_m.max() + x_m.min())
    t = xc / max(0.5 * depth, 1e-12)
    basis = np.exp(1j * k * np.outer(u, xc))  # (n_angle, n)

    def weights(x):
        c1, c2, beta, q = x
        return np.exp(c1 * t + c2 * t * t) * np.exp(-1j * (beta * k * xc + q * t * t))

    def fun(x):
        f = basis @ weights(x)
        m = 10.0 * np.log10(f.real**2 + f.imag**2 + 1e-30)
        off = np.mean(target - m)
        return np.maximum(m + off, lo_db) - target

    best = None
    lam = 2.0 * np.pi / k
    for beta0 in (1.0, 1.0 + 0.25 * lam / max(depth, 1e-9), 1.0 + 0.5 * lam / max(depth, 1e-9)):
        for c10 in (0.0, -0.7):
            sol = least_squares(fun, np.array([c10, 0.0, beta0, 0.0]),
                                bounds=([-3.0, -3.0, 0.0, -np.pi], [0.0, 3.0, 3.0, np.pi]),
                                method="trf", max_nfev=200, x_scale=[1.0, 1.0, 0.1, 1.0])
            if best is None or sol.cost < best.cost:
                best = sol
    w = weights(best.x)
    return w / np.abs(w).max()


# -- the model --------------------------------------------------------------------------------


@dataclass(frozen=True)
class SourceLattice:
    """A built lattice for one radiator (see the module docstring).

    Attributes
    ----------
    position_m, azimuth_deg, mechanical_tilt_deg : placement of the antenna frame. [m], [deg]
    wavelength_m : float [m]
    kind : str
        Element kind (a key of :data:`ELEMENTS`).
    src_m : ndarray, shape (n, 3)
        Element positions, antenna frame (images included). [m]
    me, mm : ndarray of complex, shape (n, 3)
        Electric [A m] and magnetic [V m] current moments, scaled to the power.
    near_table, far_table : ndarray, shape (360, 181)
        Correction factors on a 1 deg (phi, el) grid. [1]
    far_field_range_m, reflection_factor, power_w, radiated_power_ratio : float
    ground_z_m : float or None
        Ground plane height in the antenna frame (a monopole). [m]
    layout : str
        One line saying how the lattice was built (for the model record).
    """

    position_m: np.ndarray
    azimuth_deg: float
    mechanical_tilt_deg: float
    wavelength_m: float
    kind: str
    src_m: np.ndarray
    me: np.ndarray
    mm: np.ndarray
    near_table: np.ndarray
    far_table: np.ndarray
    far_field_range_m: float
    reflection_factor: float
    power_w: float
    radiated_power_ratio: float
    far_field_peak_gain_dbi: float
    ground_z_m: float | None
    layout: str
    fill_w: float = 0.0  #: incoherent fill FILL x peak intensity, scaled: S += fill_w / r^2 [W]
    #: a single thin wire of known (sinusoidal) current: validated down to the stand-off
    thin_wire: bool = False
    #: end-fire bodies: the moments with the amplitude profile reversed along the boom (the
    #: near field is the larger of the two); None otherwise
    alt_moments: tuple | None = None
    #: far-field intensity the capped correction leaves out, scaled (360, 181) [W/sr]
    deficit_table: np.ndarray | None = None

    @classmethod
    def from_radiator(cls, rad, cache=None) -> SourceLattice:
        from siteexposure.physics.cache import ModelCache, content_key

        cache = cache if cache is not None else ModelCache()
        body = rad.body
        if body.is_point or body.is_dish:
            raise InputError("antenna aperture: the lattice model needs a box body "
                             "(height_m, width_m or depth_m); expected one of them > 0")
        if not (np.isfinite(rad.power_w) and rad.power_w >= 0):
            raise InputError(f"antenna power = {rad.power_w!r} W: expected a finite power >= 0")
        lam = float(rad.wavelength_m)
        centre, half = body.box()
        ground = None
        if rad.ground_plane:
            ground = float(centre[2] - half[2])
        key = content_key((), id(rad.pattern), lam, tuple(centre), tuple(half), rad.polarization,
                          ground, float(rad.electrical_tilt_deg))
        shape = cache.get("lattice-shape", key, lambda: _lattice_shape(rad, centre, half, ground),
                          hold=(rad.pattern,))
        (src, me_u, mm_u, near_t, far_t, p_unit, g_model_peak, kind, layout, fill, thin, alt,
         deficit) = shape
        boost = max(1.0, float(dbi_to_linear(rad.pattern.peak_gain_dbi)) / g_model_peak)
        scale = math.sqrt(boost * rad.power_w / p_unit) if rad.power_w > 0 else 0.0
        big = body.largest_dimension_m * (2.0 if ground is not None else 1.0)
        return cls(np.asarray(rad.position_m, dtype=float).reshape(3), float(rad.azimuth_deg),
                   float(rad.mechanical_tilt_deg), lam, kind, src, me_u * scale, mm_u * scale,
                   near_t, far_t, far_field_range_m(lam, big), float(rad.reflection_factor),
                   float(rad.power_w), boost, float(linear_to_dbi(boost * g_model_peak)),
                   ground, layout, fill * scale**2, thin,
                   None if alt is None else (alt[0] * scale, alt[1] * scale),
                   deficit * scale**2)

    def fields(self, points_enu) -> tuple[np.ndarray, np.ndarray]:
        """``F e |E_rms|^2 / eta0`` and ``F e eta0 |H_rms|^2`` at site-frame points. [W/m^2]"""
        pts = np.asarray(points_enu, dtype=float).reshape(-1, 3)
        xa, ya, za = to_antenna_frame(pts - self.position_m, self.azimuth_deg,
                                      self.mechanical_tilt_deg)
        ant = np.column_stack([xa, ya, za])
        if self.power_w <= 0:
            z = np.zeros(len(pts))
            return z, z.copy()
        k = 2 * np.pi / self.wavelength_m
        s_e, s_h = dipole_densities(ant, self.src_m, self.me, self.mm, k)
        r, phi, theta = antenna_angles(xa, ya, za)
        if self.alt_moments is not None:  # the other current profile, faded out by R_ff
            a_e, a_h = dipole_densities(ant, self.src_m, *self.alt_moments, k)
            w = 1.0 - np.minimum(1.0, (r / self.far_field_range_m) ** 2)
            s_e, s_h = np.maximum(s_e, w * a_e), np.maximum(s_h, w * a_h)
        with np.errstate(divide="ignore"):
            fill = self.fill_w / (r * r)  # the incoherent fill that gives nulls their depth
        s_e = s_e + fill
        s_h = s_h + fill
        near, far = _lookup(self.near_table, phi, theta, self.far_table)
        beta = np.minimum(1.0, (r / self.far_field_range_m) ** 2)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            fac = np.where(beta >= 1.0, far, near * (far / near) ** beta)
        fac = fac * self.reflection_factor
        out_e, out_h = s_e * fac, s_h * fac
        if self.deficit_table is not None:
            with np.errstate(divide="ignore", invalid="ignore"):
                add = beta * _lookup(self.deficit_table, phi, theta) / (r * r)
            add = add * self.reflection_factor
            out_e, out_h = out_e + add, out_h + add
        return out_e, out_h

    def far_field_gain(self, phi, theta) -> np.ndarray:
        """Power gain of the model's own far field at pattern angles (radians). [1]"""
        phi, theta = np.broadcast_arrays(np.asarray(phi, float), np.asarray(theta, float))
        if self.power_w <= 0:
            return np.zeros(phi.shape)
        n = direction_from_angles(phi, theta).reshape(-1, 3)
        u = far_field_intensity(n, self.src_m, self.me, self.mm, 2 * np.pi / self.wavelength_m)
        u = u + self.fill_w
        far = _lookup(self.far_table, phi.ravel(), theta.ravel())
        u = u * far
        if self.deficit_table is not None:
            u = u + _lookup(self.deficit_table, phi.ravel(), theta.ravel())
        g = 4.0 * np.pi * u / self.power_w
        if self.ground_z_m is not None:
            g = np.where(theta.ravel() < 0.0, 0.0, g)
        return g.reshape(phi.shape)


def _lattice_shape(rad, centre, half, ground) -> tuple:
    """The power- and placement-independent part of a lattice (memoised by the cache)."""
    pattern = rad.pattern
    lam = float(rad.wavelength_m)
    k = 2.0 * np.pi / lam
    body = rad.body
    size = 2.0 * half  # depth (x), width (y), height (z)
    col_len_guess = max(size[2], size[1])
    endfire = bool(size[0] >= ENDFIRE_DEPTH_WL * lam and size[0] >= ENDFIRE_DEPTH_RATIO
                   * col_len_guess and rad.polarization in ("vertical", "horizontal"))
    kind = choose_element(rad.polarization, pattern, body, lam, endfire)
    axis = COLUMN_AXIS[kind]
    if kind == "e_y" and not endfire and size[1] <= 0.0:
        axis = 2  # horizontal elements stacked in a column (no width given)
    length = float(size[axis])
    if ground is not None:
        length = 2.0 * float(size[2])  # the monopole and its image: one dipole of twice the height
    thin_wire = (kind in ("e_z", "e_y") and not endfire
                 and (length < SHORT_COLUMN_WL * lam or ground is not None))
    spacing = COLUMN_SPACING_WL * lam
    if thin_wire:  # points are assessed from the stand-off on: elements at most half that apart
        spacing = min(spacing, 0.5 * standoff_m(lam))
    n_col = int(np.clip(math.ceil(length / spacing - 1e-9), 1,
                        MAX_THIN_WIRE if thin_wire else MAX_COLUMN))
    n_col = max(n_col, 5) if length > 0 else 1
    step = length / n_col if length > 0 else 0.0
    s = (np.arange(n_col) + 0.5) * step - 0.5 * length
    # the taper along the column
    tilt_data = float(getattr(pattern, "electrical_tilt_deg", 0.0) or 0.0)
    tilt = tilt_data if hasattr(pattern, "h_angle_deg") else float(rad.electrical_tilt_deg)
    how = []
    if kind in ("m_z", "m_y") or length < SHORT_COLUMN_WL * lam or ground is not None:
        amp = (np.ones(n_col, complex) if kind in ("m_z", "m_y")
               else _sinusoidal(s, length, k).astype(complex))
        how.append("uniform current (a loop)" if kind in ("m_z", "m_y")
                   else "sinusoidal thin-wire current")
        if tilt and axis == 2:
            amp = amp * np.exp(1j * k * s * np.sin(np.deg2rad(tilt)))
    else:
        el = np.deg2rad(np.arange(-90.0, 90.0 + 0.25, 0.5))
        if axis == 2:
            g_cut = np.asarray(pattern.gain(np.zeros_like(el), el), dtype=float)
            e_amp = np.sqrt(10.0 ** (_element_db(kind, np.zeros_like(el), el) / 10.0))
        else:  # a row along y: the horizontal cut, in the angle from the y axis
            g_cut = np.asarray(pattern.gain(np.mod(-el, 2 * np.pi), np.zeros_like(el)), float)
            e_amp = np.sqrt(10.0 ** (_element_db(kind, np.mod(-el, 2 * np.pi),
                                                 np.zeros_like(el)) / 10.0))
        e_amp = e_amp / max(e_amp.max(), 1e-300)
        tr = np.deg2rad(tilt_data) if axis == 2 else 0.0
        a_re, kk = _fit_taper(s, k, el, g_cut, tr, element=e_amp)
        amp, _ = _fit_quadratic_phase(s, k, el, g_cut, tr, a_re, kk, element=e_amp)
        if axis == 2:
            amp = amp * np.exp(1j * k * s * np.sin(np.deg2rad(tilt)))
        how.append("taper fitted to the cut along the column")
    # rows along the depth (end-fire)
    if endfire:
        n_dep = int(np.clip(math.ceil(size[0] / (DEPTH_SPACING_WL * lam)), 3, MAX_DEPTH))
        x = centre[0] + (np.arange(n_dep) + 0.5) * size[0] / n_dep - 0.5 * size[0]
        el = np.deg2rad(np.arange(-90.0, 90.0 + 0.5, 1.0))
        if kind == "e_y":  # H-plane = x-z: front and back vertical cuts
            gf = np.asarray(pattern.gain(np.zeros_like(el), el), dtype=float)
            gb = np.asarray(pattern.gain(np.full_like(el, np.pi), el), dtype=float)
            psi = np.concatenate([np.abs(el), np.pi - np.abs(el)])
            g = np.concatenate([gf, gb])
        else:  # e_z: H-plane = x-y: the horizontal cut
            phi = np.deg2rad(np.arange(0.0, 360.0, 1.0))
            g = np.asarray(pattern.gain(phi, np.zeros_like(phi)), dtype=float)
            psi = np.arccos(np.clip(np.cos(phi), -1.0, 1.0))
        w_dep = _fit_endfire(x, k, psi, g)
        how.append(f"{n_dep} rows over the depth, end-fire phase fitted to the H-plane cut")
    else:
        x = np.array([0.0])
        w_dep = np.ones(1, complex)
    # the lattice (column positions along its axis, rows along x)
    col = np.zeros((n_col, 3))
    col[:, axis] = s + (centre[axis] if ground is None or axis != 2 else 0.0)
    if ground is not None:
        col[:, 2] = s + ground  # the monopole and its image, centred on the ground plane
    src = (col[None, :, :] + np.column_stack([x, np.zeros_like(x), np.zeros_like(x)])[:, None, :]
           ).reshape(-1, 3)
    if not endfire:
        src[:, 0] = col[:, 0]
    weights = (w_dep[:, None] * amp[None, :]).reshape(-1)
    me0, mm0 = ELEMENTS[kind]
    me = weights[:, None] * me0[None, :]
    mm = weights[:, None] * mm0[None, :]
    alt = None
    if endfire:  # the same far field with the amplitude profile reversed along the boom
        w_alt = np.abs(w_dep[::-1]) * np.exp(1j * np.angle(w_dep))
        wa = (w_alt[:, None] * amp[None, :]).reshape(-1)
        alt = (wa[:, None] * me0[None, :], wa[:, None] * mm0[None, :])
        how.append("near field the larger of the current decaying towards the front and "
                   "towards the back (the cut cannot tell them apart)")
    if ground is not None:
        how.append("image in the ground plane")
    # far field of the lattice and the correction towards the pattern
    phi_g, el_g = np.meshgrid(_AZ, _EL, indexing="ij")
    dirs = direction_from_angles(phi_g, el_g).reshape(-1, 3)
    u_lat = far_field_intensity(dirs, src, me, mm, k).reshape(phi_g.shape)
    fill = FILL * float(u_lat.max())
    c_db = target_db(pattern, u_lat + fill, ground is not None) - 10.0 * np.log10(u_lat + fill)
    peak_c = float(c_db.ravel()[np.argmax(u_lat.ravel())])  # the correction on the beam
    c_db -= peak_c
    # the lattice's own field is reshaped by at most CORRECTION_CAP_DB above its beam; what the
    # pattern has beyond that (where the elements have a null the antenna fills) is radiated
    # as an incoherent far-field term that fades in towards the far-field range
    far_db = np.minimum(c_db, CORRECTION_CAP_DB)
    far_t = 10.0 ** (far_db / 10.0)
    deficit = (u_lat + fill) * (10.0 ** (c_db / 10.0) - far_t)
    near_t = np.ones_like(far_t)  # close in, the lattice's own physics, unreshaped
    p_unit, u_peak = _sphere_integral(src, me, mm, k, far_t, ground is not None, fill, deficit)
    g_model_peak = 4.0 * np.pi * u_peak / p_unit
    layout = (f"{kind.replace('_', ' ')} elements ({_KIND_WORDS[kind]}): "
              f"{n_col} along the {'xyz'[axis]} axis" + (f" x {x.size} rows" if endfire else "")
              + "; " + ", ".join(how))
    return (src, me, mm, near_t, far_t, p_unit, g_model_peak, kind, layout, fill, thin_wire, alt,
            deficit)


_KIND_WORDS = {"e_z": "vertical current", "e_y": "horizontal current",
               "m_z": "horizontal loops", "m_y": "vertical loops", "slant": "45 deg current",
               "circular": "crossed currents in quadrature"}


def _cut_db(pattern, which: str, angles) -> np.ndarray:
    """A cut of the pattern in dBi: the file's own cuts where it has them, else its 3-D gain
    on the cut plane (``which`` = horizontal | front | back)."""
    if hasattr(pattern, "horizontal_cut") and hasattr(pattern, "vertical_cut"):
        if which == "horizontal":
            return np.asarray(pattern.horizontal_cut(angles), dtype=float)
        return np.asarray(pattern.vertical_cut(angles, which), dtype=float)
    if which == "horizontal":
        return _pattern_db(pattern, angles, np.zeros_like(angles))
    phi = np.zeros_like(angles) if which == "front" else np.full_like(angles, np.pi)
    return _pattern_db(pattern, phi, angles)


def target_db(pattern, u_eff, half_space: bool) -> np.ndarray:
    """The far field the model radiates, ``G_T(phi, el)`` [dB, arbitrary level], 1 deg grid.

    With a full-sphere table in the pattern file, the table. With cuts only, the lattice's own
    far field (with its incoherent fill) reshaped by a correction that is exact on the three
    cut planes (horizontal cut ``c_h``, front and back vertical cuts ``c_vf``, ``c_vb``)
    and interpolated between them, so that off the cut planes the lattice's physics (its
    elements' polarisation and array factors) shapes the pattern rather than a synthesis rule
    of the cuts::

        c_v(phi, el) = (1 - w) c_vf(el) + w c_vb(el),   w = sin^2(phi/2)
        c(phi, el)   = c_v(phi, el) + cos^2(el) [c_h(phi) - c_v(phi, 0)]

    (our construction, in the spirit of the 3GPP TR 38.901 additive rule applied to the
    correction instead of the gain). Gains are floored 40 dB below the peak. Over a ground
    plane the lower half mirrors the upper. Where the elements have an exact null on a cut
    plane that the antenna fills (a small loop's axis), the correction is large there and the
    interpolation carries it off the plane: the target then lies above the antenna's field
    near that direction (measured: up to +13 dB on the axis of the method-of-moments loop,
    tests/data/nec; a full-sphere table removes it).
    """
    floor = 40.0
    sphere = getattr(pattern, "sphere", None)
    if sphere is not None:
        g = _pattern_db(pattern, _AZ[:, None], _EL[None, :])
        t = np.maximum(g, g.max() - floor)
    else:
        lat = 10.0 * np.log10(u_eff)
        gh = _cut_db(pattern, "horizontal", _AZ)
        gf = _cut_db(pattern, "front", _EL)
        gb = _cut_db(pattern, "back", _EL)
        top = max(gh.max(), gf.max(), gb.max())
        gh, gf, gb = (np.maximum(v, top - floor) for v in (gh, gf, gb))
        c_h = gh - lat[:, 90]
        c_vf = gf - lat[0, :]
        c_vb = gb - lat[180, :]
        w = np.sin(0.5 * _AZ)[:, None] ** 2
        c_v = (1.0 - w) * c_vf[None, :] + w * c_vb[None, :]
        c = c_v + np.cos(_EL)[None, :] ** 2 * (c_h[:, None] - c_v[:, 90:91])
        t = lat + c
        t[:, 90] = gh  # exactly the file on its planes
        t[0, :] = gf
        t[180, :] = gb
    if half_space:
        t[:, :90] = t[:, 180:90:-1]
    return t


def _envelope(c_db: np.ndarray, half_width_deg: float = ENVELOPE_DEG) -> np.ndarray:
    """Upper envelope over +-half_width_deg in azimuth (periodic) and elevation. [dB]"""
    m = int(round(half_width_deg))
    pad = np.pad(c_db, ((m, m), (0, 0)), mode="wrap")
    env = np.lib.stride_tricks.sliding_window_view(pad, 2 * m + 1, axis=0).max(axis=-1)
    pad = np.pad(env, ((0, 0), (m, m)), mode="edge")
    return np.lib.stride_tricks.sliding_window_view(pad, 2 * m + 1, axis=1).max(axis=-1)


def _sphere_integral(src, me, mm, k, far_t, half_space: bool, fill: float = 0.0,
                     deficit=None) -> tuple[float, float]:
    """Radiated power and peak intensity of the corrected far field (unit moments). [W], [W/sr]

    Trapezoidal in azimuth (1 deg) and Gauss-Legendre in ``sin(el)``, enough nodes for the
    lattice's electrical extent.
    """
    from siteexposure.physics.array import _gauss_legendre

    extent = float(np.max(np.ptp(src, axis=0))) if len(src) > 1 else 0.0
    n_u = int(max(256, 6 * k * extent))
    u, wu = _gauss_legendre(n_u)
    if half_space:
        u, wu = 0.5 * (u + 1.0), 0.5 * wu
    el = np.arcsin(u)
    phi = _AZ
    p_tot, u_max = 0.0, 0.0
    for i0 in range(0, phi.size, 30):
        ph = phi[i0:i0 + 30]
        pg, eg = np.meshgrid(ph, el, indexing="ij")
        dirs = direction_from_angles(pg, eg).reshape(-1, 3)
        inten = far_field_intensity(dirs, src, me, mm, k).reshape(pg.shape) + fill
        inten = inten * _lookup(far_t, pg, eg)
        if deficit is not None:
            inten = inten + _lookup(deficit, pg, eg)
        p_tot += float(np.sum(inten * wu[None, :])) * (2.0 * np.pi / phi.size)
        u_max = max(u_max, float(inten.max()))
    return p_tot, u_max
