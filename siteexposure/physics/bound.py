"""A conservative upper bound of the power density near an antenna of known size and gain.

Where no field model is validated for a point, the engine uses this bound instead: it does
not depend on how the antenna is built inside its envelope, only on what a user has (the
net power, the gain pattern, the body's envelope and the wavelength).

Form (our construction, from the fields of the infinitesimal dipole)::

    S_bound = F P / (4 pi d^2) [ G_sub max(A(x), 1 + 1/x^2) + G_peak B(x) ] (1 + L/d)^2
    A(x) = 1 - 1/x^2 + 1/x^4,   B(x) = 4/x^2 (1 + 1/x^2)

* ``d`` is the distance of the point from the nearest point of the body's envelope
  (:mod:`siteexposure.physics.body`), never from its nominal centre, so every part of the
  radiating structure is at least that far away;
* ``G_sub`` is the largest gain of the pattern over every direction in which the body is
  seen from the point (a cone about the direction from the body's centre that holds the
  whole body, at least ``lambda / L`` wide), so that whichever part of the structure
  radiates towards the point, its far-field strength in that direction is covered; without
  a full-sphere table the gain is the larger of the pattern's synthesis and its rotational
  envelope about boresight (:func:`rotational_envelope`);
* ``A`` and ``1 + 1/x^2`` are the near-field growth of the transverse electric and the
  magnetic field of an infinitesimal dipole over their far-field values in the same
  direction, and ``B`` that of its radial (quasi-static) electric field, which does not
  follow the far-field pattern (it is largest on the dipole's axis, where the pattern has its
  null) and is therefore taken at the peak gain. With ``|E|^2 = sin^2(theta) A + cos^2(theta)
  B`` times the far-field peak (Balanis eqs. 4-10a, 4-10b, from memory) this is exact for one
  infinitesimal dipole at distance ``d`` and, by duality, for a small loop; for larger
  structures it is a bound by construction only where the field is a superposition of such
  sources no closer than ``d``. Its margin over the method-of-moments references of
  tests/data/nec is measured by ``tests/validation/test_nec_bound.py`` (never below them
  outside the stand-off) and stated in the accuracy table.
* ``(1 + L / d)^2``, ``L`` the body's largest dimension, is an allowance for the
  filling of nulls and back lobes at a finite range, which fades with distance (measured:
  the method-of-moments field behind the tilted panel of tests/data/nec lies up to 0.7 dB
  above its far-field back lobe at 20-60 lambda, 3-10 body lengths away);
* ``F`` is the radiator's reflection factor.

The bound is loose (several dB, more close in) by design: it is what a point gets where the
models have not been shown to hold, so that not knowing never lowers a result.

References
----------
.. [1] C. A. Balanis, "Antenna Theory: Analysis and Design", 4th ed., Wiley, 2016, sec. 4.2
   (fields of the infinitesimal dipole, all terms) and sec. 5.2 (small loop, the dual);
   equation numbers from memory.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from siteexposure.physics.body import Body
from siteexposure.physics.regions import standoff_m

#: Cone half-angles of the tables of pattern maxima; a point's cone takes the next larger. [deg]
CONE_LEVELS_DEG = (0.0, 1.0, 2.0, 4.0, 8.0, 16.0, 32.0, 64.0, 180.0)
_STEP_DEG = 1.0


def near_field_factors(x) -> tuple[np.ndarray, np.ndarray]:
    """``(max(A, 1 + 1/x^2), B)`` of the infinitesimal dipole at ``x = k d`` (module notes). [1]"""
    x = np.asarray(x, dtype=float)
    i2 = 1.0 / (x * x)
    transverse = np.maximum(1.0 - i2 + i2 * i2, 1.0 + i2)
    radial = 4.0 * i2 * (1.0 + i2)
    return transverse, radial


def _running_max(a: np.ndarray, half: int, axis: int, periodic: bool) -> np.ndarray:
    """Maximum over a window of ``2 half + 1`` samples along ``axis`` (edge or wrap padding)."""
    if half <= 0:
        return a.copy()
    n = a.shape[axis]
    if periodic and 2 * half + 1 >= n:
        return np.broadcast_to(a.max(axis=axis, keepdims=True), a.shape).copy()
    pad = [(0, 0)] * a.ndim
    pad[axis] = (half, half)
    padded = np.pad(a, pad, mode="wrap" if periodic else "edge")
    win = np.lib.stride_tricks.sliding_window_view(padded, 2 * half + 1, axis=axis)
    return win.max(axis=-1)


def cone_maxima(pattern) -> tuple[np.ndarray, float]:
    """Tables of the largest gain within each cone of :data:`CONE_LEVELS_DEG` (linear).

    Returns ``(tables (n_level, 360, 181) float32 on 1 deg steps of phi and el, peak gain)``.
    A cone of half-angle ``a`` about ``(phi0, el0)`` lies inside the box ``|el - el0| <= a``,
    ``|phi - phi0| <= asin(sin a / cos el0)`` (all azimuths where the cone reaches a pole),
    so the maximum over that box, one grid step wider on each side, is at least the maximum
    over the cone: the tables overstate, never understate. The pattern's peak direction,
    found on a 0.1 deg search about the largest grid sample, is counted in every box that
    holds it, so a beam narrower than the grid is not missed.
    """
    phi = np.deg2rad(np.arange(0.0, 360.0, _STEP_DEG))
    el = np.deg2rad(np.arange(-90.0, 90.0 + 0.5 * _STEP_DEG, _STEP_DEG))
    g = np.asarray(pattern.gain(phi[:, None], el[None, :]), dtype=float)
    if hasattr(pattern, "horizontal_cut") and hasattr(pattern, "h_angle_deg") and getattr(
            pattern, "sphere", None) is None:  # a file's cuts: their 3-D gain is a synthesis
        g = np.maximum(g, rotational_envelope(pattern, phi[:, None], el[None, :]))
    g = np.where(np.isfinite(g), np.maximum(g, 0.0), np.inf)  # a bad gain never lowers a bound
    i, j = np.unravel_index(int(np.argmax(g)), g.shape)
    fine_p = np.deg2rad(np.arange(-1.0, 1.0001, 0.1)) + phi[i]
    fine_e = np.clip(np.deg2rad(np.arange(-1.0, 1.0001, 0.1)) + el[j], -np.pi / 2, np.pi / 2)
    gf = np.asarray(pattern.gain(fine_p[:, None], fine_e[None, :]), dtype=float)
    k = np.unravel_index(int(np.argmax(gf)), gf.shape)
    peak = float(max(gf[k], g[i, j]))
    peak_dir = (float(np.rad2deg(fine_p[k[0]])) % 360.0, float(np.rad2deg(fine_e[k[1]])))
    el_deg = np.rad2deg(el)
    tables = np.empty((len(CONE_LEVELS_DEG), phi.size, el.size), dtype=np.float32)
    for n, a in enumerate(CONE_LEVELS_DEG):
        half_el = int(np.ceil(a / _STEP_DEG)) + 1
        m1 = _running_max(g, half_el, axis=1, periodic=False)
        out = np.empty_like(m1)
        for jj, e in enumerate(el_deg):  # the azimuth half-width grows towards the poles
            ce = np.cos(np.deg2rad(e))
            if abs(e) + a >= 90.0 or ce <= 1e-9 or a >= 90.0:
                out[:, jj] = m1[:, jj].max()
                continue
            w = np.rad2deg(np.arcsin(min(1.0, np.sin(np.deg2rad(a)) / ce)))
            out[:, jj] = _running_max(m1[:, jj], int(np.ceil(w / _STEP_DEG)) + 1, 0, True)
        # the peak direction itself, for cones that reach it
        d_el = np.abs(el_deg - peak_dir[1])
        d_phi = np.abs((np.rad2deg(phi) - peak_dir[0] + 180.0) % 360.0 - 180.0)
        reach = (d_el[None, :] <= a + _STEP_DEG) & (
            d_phi[:, None] * np.cos(np.deg2rad(np.minimum(np.abs(el_deg), 89.0)))[None, :]
            <= a + 2.0 * _STEP_DEG)
        out = np.where(reach, np.maximum(out, peak), out)
        tables[n] = out
    return tables, peak


def rotational_envelope(pattern, phi, el) -> np.ndarray:
    """The largest gain of the pattern's cuts at the same angle from boresight (linear). [1]

    For a direction at angle ``psi`` from boresight: the largest of the horizontal cut at
    ``+-psi`` and the vertical cuts at ``psi`` above and below (the back cut beyond 90 deg) --
    the pattern as if it were symmetric about boresight in whichever plane is strongest. Two
    cuts do not fix the 3-D gain off their planes, and a synthesis rule can fall tens of dB
    below it there (the additive rule of 3GPP TR 38.901 for a loop with a horizontal axis, a
    Yagi, a dish: up to 12 dB below the method-of-moments far field of tests/data/nec); the
    bound takes the larger of the synthesis and this envelope.
    """
    from siteexposure.physics.orientation import direction_from_angles

    d = direction_from_angles(phi, el)
    psi = np.arccos(np.clip(d[..., 0], -1.0, 1.0))
    front = psi <= 0.5 * np.pi
    v_el = np.where(front, psi, np.pi - psi)
    side = np.where(front, 0.0, np.pi)

    def gain(p, e):
        return np.asarray(pattern.gain(np.mod(p, 2 * np.pi), e), dtype=float)

    return np.maximum.reduce([gain(psi, 0.0 * psi), gain(-psi, 0.0 * psi),
                              gain(side, v_el), gain(side, -v_el)])


@dataclass(frozen=True)
class EnvelopeBound:
    """The bound of one antenna, prepared once (its tables come from the engine's cache).

    Attributes
    ----------
    body : Body
        The envelope, antenna frame.
    wavelength_m, power_w, reflection_factor : float
        [m], net input [W], F [1].
    tables : ndarray, shape (n_level, 360, 181)
        :func:`cone_maxima` of the pattern. [1]
    peak_gain : float
        Largest gain of the pattern (linear). [1]
    """

    body: Body
    wavelength_m: float
    power_w: float
    reflection_factor: float
    tables: np.ndarray
    peak_gain: float

    @classmethod
    def from_radiator(cls, rad, cache=None, body: Body | None = None) -> EnvelopeBound:
        """The bound of ``rad`` (its own body unless ``body`` is given, e.g. inferred)."""
        from siteexposure.physics.cache import ModelCache

        cache = cache if cache is not None else ModelCache()
        tables, peak = cache.get("cone-maxima", id(rad.pattern),
                                 lambda: cone_maxima(rad.pattern), hold=(rad.pattern,))
        return cls(rad.body if body is None else body, float(rad.wavelength_m),
                   float(rad.power_w), float(rad.reflection_factor), tables, peak)

    def cone_gain(self, points_ant) -> np.ndarray:
        """``G_sub``: largest gain over the directions in which the body is seen, and never
        over less than ``lambda / L`` about the direction (``L`` the body's largest
        dimension): at a finite range the pattern is smeared over about ``L / r``, which is
        ``lambda / (2 L)`` at the far-field range ``2 L^2 / lambda``; twice that covers the
        filling of nulls and back lobes there (measured: up to 0.7 dB behind the tilted
        panel of tests/data/nec at 20-60 lambda, where the file's back cut is lower). [1]"""
        unit, alpha = self.body.cone_half_angle_rad(points_ant)
        big = self.body.largest_dimension_m
        if big > 0:
            alpha = np.maximum(alpha, min(np.pi, self.wavelength_m / big))
        level = np.searchsorted(np.deg2rad(np.asarray(CONE_LEVELS_DEG)), alpha - 1e-12)
        level = np.minimum(level, len(CONE_LEVELS_DEG) - 1)
        phi = np.mod(np.arctan2(-unit[..., 1], unit[..., 0]), 2.0 * np.pi)
        el = np.arcsin(np.clip(unit[..., 2], -1.0, 1.0))
        x = np.rad2deg(phi) / _STEP_DEG
        y = (np.rad2deg(el) + 90.0) / _STEP_DEG
        n_phi, n_el = self.tables.shape[1:]
        i0 = np.floor(x).astype(np.int64) % n_phi
        j0 = np.clip(np.floor(y).astype(np.int64), 0, n_el - 2)
        i1 = (i0 + 1) % n_phi
        t = self.tables
        return np.maximum.reduce([t[level, i0, j0], t[level, i1, j0], t[level, i0, j0 + 1],
                                  t[level, i1, j0 + 1]]).astype(float)

    def density(self, points_ant) -> np.ndarray:
        """The bound at points given in the antenna frame (offsets from the radiation
        centre); points within the stand-off take the stand-off distance (the dispatcher
        does not assess them anyway). [W/m^2]"""
        p = np.asarray(points_ant, dtype=float)
        # never closer than the stand-off: within a body inferred (not given) for an antenna,
        # the point still gets a finite, very large bound
        d = np.maximum(self.body.distance_m(p), standoff_m(self.wavelength_m))
        k = 2.0 * np.pi / self.wavelength_m
        transverse, radial = near_field_factors(k * np.maximum(d, 1e-300))
        g = self.cone_gain(p)
        allowance = (1.0 + self.body.largest_dimension_m / d) ** 2
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
            s = (self.reflection_factor * self.power_w / (4.0 * np.pi * d * d)
                 * (g * transverse + self.peak_gain * radial) * allowance)
        return s
