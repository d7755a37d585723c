"""Three-dimensional gain from a horizontal cut and two vertical cuts; sphere integrals.

A pattern file (SPEC §3.2, "pattern CSV v1") gives three cuts in absolute dBi:

* the horizontal cut ``H(phi)``: the antenna's x-y plane (``theta = 0``), ``phi`` clockwise from
  boresight seen from above, 0..360 deg, wrapped;
* the front vertical cut ``Vf(theta)``: the half-plane ``phi = 0``, elevation -90..+90 deg;
* the back vertical cut ``Vb(theta)``: the half-plane ``phi = 180 deg``, elevation -90..+90 deg
  (elevation measured from the back horizon, +90 is the same zenith as in the front cut).

:class:`TablePattern` interpolates each cut linearly in dB and combines them into a gain in any
direction by one of :data:`SYNTHESIS_METHODS`, or, where the file carries a full-sphere table
(:class:`~siteexposure.physics.sphere_table.SphereTable`), reads the 3-D gain from that table. :func:`directivity_ratio` integrates any
:class:`~siteexposure.physics.pattern_base.GainPattern` over the sphere and :func:`normalised`
rescales a pattern so that it radiates exactly the power put in.

Pure numpy, no I/O. Angles are radians at the public ``gain`` interface (antenna frame of
:mod:`siteexposure.physics.orientation`) and degrees in the cut arrays.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from siteexposure.errors import PatternError
from siteexposure.physics.pattern_base import GainPattern, dbi_to_linear, linear_to_dbi
from siteexposure.physics.sphere_table import SPHERE_SYNTHESIS, SphereTable, cut_plane_mismatch

#: Names of the published methods that :class:`TablePattern` offers (the ``method`` argument).
SYNTHESIS_METHODS = ("additive", "weighted-bilinear")
#: directions this close to a cut plane take the cut itself (weighted bilinear) [deg]
PLANE_TOLERANCE_DEG = 1e-9

#: The method used unless another is asked for. Against the far fields of the PyNEC reference
#: antennas (tests/validation/test_pattern_models.py) the additive rule stays within a few
#: tenths of a dB in the main beams while the weighted bilinear method errs by several dB,
#: underestimating the main beam of a downtilted panel; hence ``additive``.
DEFAULT_SYNTHESIS_METHOD = "additive"

#: Largest allowed disagreement between two cuts where they meet (zenith, nadir, and the
#: boresight and back directions shared by the horizontal and the vertical cuts). [dB]
CROSSING_TOLERANCE_DB = 1.0

#: Angles of one cut closer than this count as the same angle. [deg]
MIN_STEP_DEG = 1e-6

#: Largest allowed difference between a stated peak gain and the maximum of the data. [dB]
PEAK_TOLERANCE_DB = 0.5

#: Breakpoints of the composite Gauss-Legendre rules of :func:`directivity_ratio`: dense near
#: the horizon (elevation) and near boresight (azimuth), where narrow beams sit. [deg]
_ELEV_BREAKS_DEG = (-90.0, -30.0, -10.0, -3.0, 0.0, 3.0, 10.0, 30.0, 90.0)
_AZIM_BREAKS_DEG = (-180.0, -90.0, -30.0, -10.0, -3.0, 0.0, 3.0, 10.0, 30.0, 90.0, 180.0)


def _as_cut(angle_deg, gain_dbi, label: str, where: str) -> tuple[np.ndarray, np.ndarray]:
    a = np.asarray(angle_deg, dtype=float).ravel()
    g = np.asarray(gain_dbi, dtype=float).ravel()
    if a.shape != g.shape:
        raise PatternError(
            f"{where}: {label} cut has {a.size} angles but {g.size} gains; expected equal lengths"
        )
    if a.size < 2:
        raise PatternError(f"{where}: {label} cut has {a.size} samples; expected at least 2")
    if not (np.all(np.isfinite(a)) and np.all(np.isfinite(g))):
        raise PatternError(f"{where}: {label} cut holds NaN or infinite values; expected numbers")
    order = np.argsort(a, kind="stable")
    a, g = a[order], g[order]
    if np.any(np.diff(a) < MIN_STEP_DEG):
        dup = a[1:][np.diff(a) < MIN_STEP_DEG][0]
        raise PatternError(f"{where}: {label} cut has angle {dup:g} deg twice (or two angles "
                           f"closer than {MIN_STEP_DEG:g} deg); expected unique angles")
    return a, g


def _check_horizontal(a: np.ndarray, g: np.ndarray, where: str) -> tuple[np.ndarray, np.ndarray]:
    if a[0] < 0.0 or a[-1] > 360.0:
        raise PatternError(
            f"{where}: horizontal cut angles span {a[0]:g}..{a[-1]:g} deg; expected 0..360"
        )
    if a[-1] == 360.0:
        if a[0] == 0.0:
            if abs(g[-1] - g[0]) > 1e-6:
                raise PatternError(
                    f"{where}: horizontal cut gives {g[0]:g} dBi at 0 deg and {g[-1]:g} dBi at "
                    "360 deg; expected equal gains (0 and 360 are the same direction)"
                )
            a, g = a[:-1], g[:-1]
        else:
            a = np.concatenate(([0.0], a[:-1]))
            g = np.concatenate(([g[-1]], g[:-1]))
    return a, g


def _check_vertical(a: np.ndarray, side: str, where: str) -> None:
    if a[0] != -90.0 or a[-1] != 90.0:
        raise PatternError(
            f"{where}: {side} vertical cut spans {a[0]:g}..{a[-1]:g} deg; expected samples at "
            "exactly -90 (nadir) and +90 (zenith)"
        )


@dataclass(frozen=True)
class _Cuts:
    """Validated cut arrays, sorted; the horizontal one without a duplicate 360 deg sample."""

    h_angle_deg: np.ndarray
    h_gain_dbi: np.ndarray
    v_front_elev_deg: np.ndarray
    v_front_gain_dbi: np.ndarray
    v_back_elev_deg: np.ndarray
    v_back_gain_dbi: np.ndarray


def validate_cuts(
    h_angle_deg,
    h_gain_dbi,
    v_front_elev_deg,
    v_front_gain_dbi,
    v_back_elev_deg,
    v_back_gain_dbi,
    *,
    where: str = "pattern",
) -> _Cuts:
    """Sort and check three cuts; raise :class:`PatternError` naming ``where`` if they are unusable.

    Checks: equal lengths, finite values, unique angles, ranges (horizontal 0..360 with 0 and
    360 allowed together only with equal gains; vertical exactly -90..+90), and that the cuts
    agree within :data:`CROSSING_TOLERANCE_DB` where they meet (zenith, nadir, boresight, back).
    """
    ha, hg = _check_horizontal(*_as_cut(h_angle_deg, h_gain_dbi, "horizontal", where), where)
    fa, fg = _as_cut(v_front_elev_deg, v_front_gain_dbi, "front vertical", where)
    ba, bg = _as_cut(v_back_elev_deg, v_back_gain_dbi, "back vertical", where)
    _check_vertical(fa, "front", where)
    _check_vertical(ba, "back", where)
    crossings = (
        ("zenith", "front vertical", fg[-1], "back vertical", bg[-1]),
        ("nadir", "front vertical", fg[0], "back vertical", bg[0]),
        ("boresight", "horizontal (0 deg)", _interp_h(0.0, ha, hg), "front vertical (0 deg)",
         np.interp(0.0, fa, fg)),
        ("back", "horizontal (180 deg)", _interp_h(180.0, ha, hg), "back vertical (0 deg)",
         np.interp(0.0, ba, bg)),
    )
    for direction, name1, g1, name2, g2 in crossings:
        if abs(float(g1) - float(g2)) > CROSSING_TOLERANCE_DB:
            raise PatternError(
                f"{where}: at the {direction} the {name1} cut gives {float(g1):.2f} dBi and the "
                f"{name2} cut {float(g2):.2f} dBi; expected agreement within "
                f"{CROSSING_TOLERANCE_DB:g} dB (the same direction)"
            )
    return _Cuts(ha, hg, fa, fg, ba, bg)


def _interp_h(phi_deg, ha: np.ndarray, hg: np.ndarray) -> np.ndarray:
    """Horizontal cut, linear in dB, wrapped at 360 deg."""
    return np.interp(phi_deg, ha, hg, period=360.0)


class _Lerp:
    """Exact piecewise-linear interpolation with an O(1) segment lookup.

    The same values as :func:`numpy.interp` (ends clamped, or wrapped with ``period``), but a
    uniform bucket grid finer than the smallest sample step finds each point's segment
    directly instead of by bisection (about twice as fast on unsorted points).
    """

    _MAX_BUCKETS = 2_000_000

    def __init__(self, xp: np.ndarray, fp: np.ndarray, period: float | None = None) -> None:
        xp = np.asarray(xp, dtype=float)
        fp = np.asarray(fp, dtype=float)
        if period is not None:
            xp = np.concatenate((xp, [xp[0] + period]))
            fp = np.concatenate((fp, [fp[0]]))
        self.xp, self.fp, self.period = xp, fp, period
        self.x0 = float(xp[0])
        self.slope = np.diff(fp) / np.diff(xp)
        span = float(xp[-1] - xp[0])
        with np.errstate(over="ignore", divide="ignore"):
            ratio = span / float(np.min(np.diff(xp)))
        self.fast = bool(np.isfinite(ratio)) and ratio < self._MAX_BUCKETS
        n_b = int(np.ceil(ratio)) + 1 if self.fast else 0
        if self.fast:
            self.n_b = n_b
            self.inv_w = n_b / span
            starts = self.x0 + np.arange(n_b) / self.inv_w
            self.seg = np.clip(np.searchsorted(xp, starts, side="right") - 1, 0, xp.size - 2)

    def locate(self, x) -> tuple[np.ndarray, np.ndarray]:
        """Segment index of each point and its offset from the segment start."""
        x = np.asarray(x, dtype=float)
        if self.period is not None:
            x = x - self.period * np.floor((x - self.x0) / self.period)
        else:
            x = np.clip(x, self.x0, self.xp[-1])
        if self.fast:
            b = np.clip(((x - self.x0) * self.inv_w).astype(np.intp), 0, self.n_b - 1)
            seg = self.seg[b]
            seg = seg + ((x >= self.xp[np.minimum(seg + 1, self.xp.size - 1)])
                         & (seg < self.xp.size - 2))
        else:
            seg = np.clip(np.searchsorted(self.xp, x, side="right") - 1, 0, self.xp.size - 2)
        return seg, x - self.xp[seg]

    def at(self, seg: np.ndarray, dx: np.ndarray) -> np.ndarray:
        """Values at points located by :meth:`locate` (also by another ``_Lerp`` on the same
        sample angles)."""
        return self.fp[seg] + self.slope[seg] * dx

    def __call__(self, x) -> np.ndarray:
        return self.at(*self.locate(x))


class TablePattern:
    """Gain pattern from a horizontal and front/back vertical cuts (absolute dBi), optionally
    with a full-sphere 3-D table.

    Implements :class:`~siteexposure.physics.pattern_base.GainPattern`. Each cut is interpolated
    linearly in dB (the horizontal cut wraps at 360 deg); the 3-D gain off the cut planes comes
    from one of the published synthesis methods of :data:`SYNTHESIS_METHODS`, or, when a
    ``sphere`` table is given, from that table directly
    (:class:`~siteexposure.physics.sphere_table.SphereTable`: bilinear in dB). The cuts stay
    what :meth:`horizontal_cut` and :meth:`vertical_cut` return either way (the near-field
    models fit to them).

    Parameters
    ----------
    h_angle_deg, h_gain_dbi : array_like
        Horizontal cut: azimuth from boresight, clockwise seen from above, 0..360 [deg], and the
        gain there [dBi]. Any order; 0 and 360 may both appear with equal gains.
    v_front_elev_deg, v_front_gain_dbi : array_like
        Vertical cut in the ``phi = 0`` half-plane: elevation -90..+90, both ends included [deg],
        and gain [dBi].
    v_back_elev_deg, v_back_gain_dbi : array_like
        Vertical cut in the ``phi = 180 deg`` half-plane, same convention [deg], [dBi].
    peak_gain_dbi : float
        Stated maximum gain; must agree with the data's maximum within
        :data:`PEAK_TOLERANCE_DB`. [dBi]
    electrical_tilt_deg : float
        Electrical downtilt already contained in the data (informational). [deg]
    name, source : str
        Label and origin (file path) for reports.
    method : str
        ``"additive"`` (default, :data:`DEFAULT_SYNTHESIS_METHOD`) or ``"weighted-bilinear"``,
        see Notes.
    frequency_mhz : float, optional
        Frequency at which the cuts were taken, if known. [MHz]
    sphere : SphereTable or tuple, optional
        Full-sphere table (or ``(az_deg (n_az,), el_deg (n_el,), gain_dbi (n_az, n_el))``).
        Its largest gain must agree with ``peak_gain_dbi`` within :data:`PEAK_TOLERANCE_DB`,
        and it must agree with the cuts within :data:`CROSSING_TOLERANCE_DB` wherever both
        have a sample at the same angle on a cut plane (az 0 and 180, el 0).

    Attributes
    ----------
    h_angle_deg, h_gain_dbi, v_front_elev_deg, v_front_gain_dbi, v_back_elev_deg, v_back_gain_dbi
        The validated cuts (sorted; the horizontal one in [0, 360)), for models that derive an
        element pattern from them (array synthesis). Read-only arrays.
    sphere : SphereTable or None
        The full-sphere table, if any.
    synthesis : str
        Where the 3-D gain comes from, for the model record: ``"3-d table"``
        (:data:`~siteexposure.physics.sphere_table.SPHERE_SYNTHESIS`) or the cut-synthesis
        ``method``.

    Notes
    -----
    Write ``phi'`` for the azimuth wrapped to [-180, 180] deg and ``theta`` for the elevation.

    ``"additive"`` -- the 3GPP TR 38.901 combination rule (Table 7.3-1) of a horizontal and a
    vertical attenuation with a floor::

        A(phi, theta) = -min(-(A_V + A_H), A_m)

    applied to the tabulated cuts: ``A_H = H(phi)`` and ``A_V`` the vertical cut of the same
    half-space relative to its horizon value -- the front cut for ``|phi'| <= 80 deg``, the back
    cut for ``|phi'| >= 100 deg`` and a linear blend ``w = (100 - |phi'|) / 20`` across the
    sides (the blend is our own choice: TR 38.901 has one vertical cut only)::

        G = max( H(phi) + w [Vf(theta) - Vf(0)] + (1-w) [Vb(theta) - Vb(0)],  G_min )

    where ``G_min`` is the lowest gain in the data (the counterpart of ``A_m``). It is exact on
    the horizontal plane; on the vertical planes it is exact to within the data's own mismatch
    at boresight, ``H(0) - Vf(0)`` (checked to be below :data:`CROSSING_TOLERANCE_DB`). A
    separable pattern (product of an azimuth and an elevation factor in linear terms) is
    recovered exactly. Near the zenith and nadir it keeps the azimuth dependence of ``H``.

    ``"weighted-bilinear"`` -- the weighted bilinear interpolation of Gil et al. (2001): a
    weighted mean, in dB, of two interpolations through the direction -- one along the
    parallel (constant elevation) between the front and back vertical cuts, one along the great
    circle through the zenith (or nadir) between the horizontal cut at ``phi`` and at
    ``phi + 180``. With the angular distances ``d_f = |phi'|``, ``d_b = 180 - |phi'|`` to the two
    vertical planes and ``e_1 = |theta|``, ``e_2 = 180 - |theta|`` to the two horizon points::

        A   = (d_b Vf(theta) + d_f Vb(theta)) / 180
        E   = (e_2 H(phi) + e_1 H(phi + 180)) / 180
        W_A = e_1 e_2 / 180,   W_E = d_f d_b / 180
        G   = (W_A A + W_E E) / (W_A + W_E)

    It reproduces every cut exactly (``W_E = 0`` on the vertical planes, ``W_A = 0`` on the
    horizontal plane) and never leaves the range of the data. Its known weakness is the
    zenith and nadir: there the horizontal cut still weighs in, so the value depends on the
    azimuth of approach and nulls above and below an antenna are filled in (an overestimate,
    largest in directions of low gain). The weights are as we reconstruct the method from
    secondary descriptions (the original article was not at hand: "from memory"); the
    validation tests compare its error on a half-wave dipole with the statistics the authors
    publish.

    References
    ----------
    .. [1] 3GPP TR 38.901 V17.0.0 (2022-03), "Study on channel model for frequencies from 0.5
       to 100 GHz", clause 7.3, Table 7.3-1.
    .. [2] F. Gil, A. R. Claro, J. M. Ferreira, C. Pardelinha, L. M. Correia, "A 3D
       interpolation method for base-station-antenna radiation patterns", IEEE Antennas and
       Propagation Magazine, vol. 43, no. 2, Apr. 2001.
    .. [3] T. G. Vasiliadis, A. G. Dimitriou, G. D. Sergiadis, "A novel technique for the
       approximation of 3-D antenna radiation patterns", IEEE Trans. Antennas Propag., vol. 53,
       no. 7, pp. 2212-2219, Jul. 2005, doi:10.1109/TAP.2005.850752 (comparison of methods).
    """

    def __init__(
        self,
        h_angle_deg,
        h_gain_dbi,
        v_front_elev_deg,
        v_front_gain_dbi,
        v_back_elev_deg,
        v_back_gain_dbi,
        *,
        peak_gain_dbi: float,
        electrical_tilt_deg: float = 0.0,
        name: str = "",
        source: str = "",
        method: str = DEFAULT_SYNTHESIS_METHOD,
        frequency_mhz: float | None = None,
        sphere: SphereTable | tuple | None = None,
    ) -> None:
        where = f"pattern '{name or source or 'table'}'"
        if method not in SYNTHESIS_METHODS:
            raise PatternError(
                f"{where}: synthesis method {method!r} is unknown; expected one of "
                f"{', '.join(SYNTHESIS_METHODS)}"
            )
        cuts = validate_cuts(
            h_angle_deg, h_gain_dbi, v_front_elev_deg, v_front_gain_dbi,
            v_back_elev_deg, v_back_gain_dbi, where=where,
        )
        data_max = max(cuts.h_gain_dbi.max(), cuts.v_front_gain_dbi.max(), cuts.v_back_gain_dbi.max())
        peak = float(peak_gain_dbi)
        if not np.isfinite(peak) or abs(peak - data_max) > PEAK_TOLERANCE_DB:
            raise PatternError(
                f"{where}: peak_gain_dbi = {peak_gain_dbi!r} but the largest gain in the cuts is "
                f"{data_max:.2f} dBi; expected agreement within {PEAK_TOLERANCE_DB:g} dB"
            )
        for field_name, arr in vars(cuts).items():
            arr = np.array(arr, dtype=float)
            arr.setflags(write=False)
            setattr(self, field_name, arr)
        self.peak_gain_dbi = peak
        self.electrical_tilt_deg = float(electrical_tilt_deg)
        self.name = name
        self.source = source
        self.method = method
        self.frequency_mhz = None if frequency_mhz is None else float(frequency_mhz)
        self.min_gain_dbi = float(
            min(cuts.h_gain_dbi.min(), cuts.v_front_gain_dbi.min(), cuts.v_back_gain_dbi.min())
        )
        self._h = _Lerp(self.h_angle_deg, self.h_gain_dbi, period=360.0)
        self._vf = _Lerp(self.v_front_elev_deg, self.v_front_gain_dbi)
        self._vb = _Lerp(self.v_back_elev_deg, self.v_back_gain_dbi)
        self._same_v = bool(np.array_equal(self.v_front_elev_deg, self.v_back_elev_deg))
        self._vf0 = float(self._vf(0.0))
        self._vb0 = float(self._vb(0.0))
        if sphere is not None and not isinstance(sphere, SphereTable):
            sphere = SphereTable(*sphere, where=where)
        if sphere is not None:
            if abs(peak - sphere.max_gain_dbi) > PEAK_TOLERANCE_DB:
                raise PatternError(
                    f"{where}: peak_gain_dbi = {peak_gain_dbi!r} but the largest gain in the 3-D "
                    f"table is {sphere.max_gain_dbi:.2f} dBi; expected agreement within "
                    f"{PEAK_TOLERANCE_DB:g} dB"
                )
            bad = cut_plane_mismatch(sphere.az_deg, sphere.el_deg, sphere.gain_dbi, cuts,
                                     CROSSING_TOLERANCE_DB)
            if bad is not None:
                cut, angle, _, _, g_t, g_c = bad
                raise PatternError(
                    f"{where}: the 3-D table gives {g_t:.2f} dBi and the {cut} cut {g_c:.2f} dBi "
                    f"at its angle {angle:g} deg; expected agreement within "
                    f"{CROSSING_TOLERANCE_DB:g} dB (the same direction)"
                )
        self.sphere = sphere
        self.synthesis = method if sphere is None else SPHERE_SYNTHESIS

    def __repr__(self) -> str:
        return (
            f"TablePattern(name={self.name!r}, peak_gain_dbi={self.peak_gain_dbi:.2f}, "
            f"synthesis={self.synthesis!r}, source={self.source!r})"
        )

    # -- cuts ------------------------------------------------------------------------------
    def horizontal_cut(self, phi) -> np.ndarray:
        """Gain on the horizontal plane (``theta = 0``) at azimuths ``phi``. [dBi]

        Parameters
        ----------
        phi : array_like
            Azimuth from boresight, clockwise seen from above; any real value (wrapped). [rad]
        """
        return self._h(np.rad2deg(np.asarray(phi, dtype=float)))

    def vertical_cut(self, theta, side: str = "front") -> np.ndarray:
        """Gain on the front (``phi = 0``) or back (``phi = pi``) vertical half-plane. [dBi]

        Parameters
        ----------
        theta : array_like
            Elevation, -pi/2..pi/2 (clipped). [rad]
        side : {"front", "back"}
        """
        elev = np.rad2deg(np.asarray(theta, dtype=float))
        if side == "front":
            return self._vf(elev)
        if side == "back":
            return self._vb(elev)
        raise PatternError(f"pattern '{self.name}': side {side!r} is unknown; expected front or back")

    # -- 3-D -------------------------------------------------------------------------------
    def gain_dbi(self, phi, theta) -> np.ndarray:
        """Gain in any direction of the antenna frame (broadcasting ``phi``, ``theta``). [dBi]

        From the full-sphere table where the pattern has one, else synthesised from the cuts.
        """
        if self.sphere is not None:
            return self.sphere.lookup_dbi(phi, theta)
        phi_deg = np.rad2deg(np.asarray(phi, dtype=float))
        elev = np.clip(np.rad2deg(np.asarray(theta, dtype=float)), -90.0, 90.0)
        h = self._h(phi_deg)
        loc = self._vf.locate(elev)
        vf = self._vf.at(*loc)
        vb = self._vb.at(*loc) if self._same_v else self._vb(elev)
        az = np.abs(phi_deg - 360.0 * np.floor(phi_deg / 360.0 + 0.5))  # |phi'| in [0, 180]
        if self.method == "additive":
            w = np.clip((100.0 - az) / 20.0, 0.0, 1.0)
            g = h + w * (vf - self._vf0) + (1.0 - w) * (vb - self._vb0)
            return np.maximum(g, self.min_gain_dbi)
        # weighted bilinear (Gil et al. 2001)
        h_opp = self._h(phi_deg + 180.0)
        d_f, d_b = az, 180.0 - az
        e_1 = np.abs(elev)
        e_2 = 180.0 - e_1
        a_val = (d_b * vf + d_f * vb) / 180.0
        e_val = (e_2 * h + e_1 * h_opp) / 180.0
        w_a = e_1 * e_2 / 180.0
        w_e = d_f * d_b / 180.0
        den = w_a + w_e
        with np.errstate(invalid="ignore", divide="ignore"):
            g = (w_a * a_val + w_e * e_val) / den
        # on a cut plane (within PLANE_TOLERANCE_DEG, far below any data's resolution) the cut
        # itself: the method is discontinuous where the data's cuts disagree at a crossing,
        # and a tolerance keeps rounding of the angles from picking a side at random
        on_v = np.minimum(d_f, d_b) < PLANE_TOLERANCE_DEG
        on_h = e_1 < PLANE_TOLERANCE_DEG
        return np.where(on_v, a_val, np.where(on_h, e_val, g))

    def gain(self, phi, theta) -> np.ndarray:
        """Numeric power gain relative to isotropic (see :class:`GainPattern`). [1]"""
        return dbi_to_linear(self.gain_dbi(phi, theta))

    def shifted(self, delta_db: float, *, name: str | None = None, source: str | None = None,
                method: str | None = None) -> TablePattern:
        """The same cuts (and 3-D table) raised by ``delta_db`` (and optionally another
        method). [dB]"""
        return TablePattern(
            self.h_angle_deg, self.h_gain_dbi + delta_db,
            self.v_front_elev_deg, self.v_front_gain_dbi + delta_db,
            self.v_back_elev_deg, self.v_back_gain_dbi + delta_db,
            peak_gain_dbi=self.peak_gain_dbi + delta_db,
            electrical_tilt_deg=self.electrical_tilt_deg,
            name=self.name if name is None else name,
            source=self.source if source is None else source,
            method=self.method if method is None else method,
            frequency_mhz=self.frequency_mhz,
            sphere=None if self.sphere is None else self.sphere.shifted(delta_db),
        )


# -- sphere integrals ---------------------------------------------------------------------


def _composite_gauss(breaks_deg, n_per_panel: int) -> tuple[np.ndarray, np.ndarray]:
    """Nodes [rad] and weights [rad] of a composite Gauss-Legendre rule over ``breaks_deg``."""
    x, w = np.polynomial.legendre.leggauss(int(n_per_panel))
    b = np.deg2rad(np.asarray(breaks_deg, dtype=float))
    lo, hi = b[:-1, None], b[1:, None]
    nodes = 0.5 * (hi - lo) * x[None, :] + 0.5 * (hi + lo)
    weights = 0.5 * (hi - lo) * w[None, :]
    return nodes.ravel(), weights.ravel()


def directivity_ratio(pattern: GainPattern, n_theta: int = 48, n_phi: int = 48) -> float:
    """Mean of the numeric gain over the sphere, ``(1/4pi) * integral of G dOmega``. [1]

    Equals 1 for a pattern whose gain is its directivity (a lossless, power-conserving
    pattern); a value ``k`` means the pattern, as given, radiates ``k`` times the power put in.

    Parameters
    ----------
    pattern : GainPattern
        Any object with ``gain(phi, theta)`` (linear).
    n_theta, n_phi : int
        Gauss-Legendre nodes per panel of the composite rules in elevation (8 panels, dense
        within +-3 deg of the horizon) and in azimuth (10 panels, dense within +-3 deg of
        boresight). The defaults resolve main beams down to about 0.5 deg wide.

    Returns
    -------
    float
        ``(1/4pi) sum_i sum_j G(phi_j, theta_i) cos(theta_i) w_i w_j``. [1]

    Notes
    -----
    ``dOmega = cos(theta) dtheta dphi`` with ``theta`` the elevation. Evaluated row by row so
    that memory stays bounded.

    References
    ----------
    .. [1] C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, §2.7
       (directivity as 4pi U_max / P_rad).
    """
    th, wth = _composite_gauss(_ELEV_BREAKS_DEG, n_theta)
    ph, wph = _composite_gauss(_AZIM_BREAKS_DEG, n_phi)
    ph = np.mod(ph, 2.0 * np.pi)
    total = 0.0
    step = max(1, 200_000 // ph.size)
    for i in range(0, th.size, step):
        t = th[i : i + step, None]
        g = np.asarray(pattern.gain(ph[None, :], t), dtype=float)
        g = np.broadcast_to(g, (t.shape[0], ph.size))
        total += float(np.sum((g @ wph) * np.cos(t[:, 0]) * wth[i : i + step]))
    return total / (4.0 * np.pi)


class ScaledPattern:
    """A pattern multiplied by a constant factor (used by :func:`normalised`)."""

    def __init__(self, base: GainPattern, factor: float, *, name: str, source: str) -> None:
        self.base = base
        self.factor = float(factor)
        self.name = name
        self.source = source
        self.peak_gain_dbi = float(base.peak_gain_dbi) + float(linear_to_dbi(self.factor))
        self.electrical_tilt_deg = float(base.electrical_tilt_deg)

    def gain(self, phi, theta) -> np.ndarray:
        """Numeric gain, ``factor * base.gain``. [1]"""
        return self.factor * np.asarray(self.base.gain(phi, theta), dtype=float)

    def horizontal_cut(self, phi) -> np.ndarray:
        """Horizontal cut of the scaled pattern; exact nulls 100 dB below the peak. [dBi]"""
        return np.maximum(linear_to_dbi(self.gain(phi, 0.0)), self.peak_gain_dbi - 100.0)

    def vertical_cut(self, theta, side: str = "front") -> np.ndarray:
        """Front or back vertical cut of the scaled pattern; nulls 100 dB below the peak. [dBi]"""
        if side not in ("front", "back"):
            raise PatternError(f"pattern '{self.name}': side {side!r} is unknown; expected front or back")
        g = linear_to_dbi(self.gain(0.0 if side == "front" else np.pi, theta))
        return np.maximum(g, self.peak_gain_dbi - 100.0)


def normalised(pattern: GainPattern, n_theta: int = 48, n_phi: int = 48) -> GainPattern:
    """The pattern scaled so that ``integral of G dOmega = 4 pi`` (it radiates the power put in).

    A :class:`TablePattern` comes back as a :class:`TablePattern` (cuts shifted in dB), any
    other pattern as a :class:`ScaledPattern`. ``peak_gain_dbi`` follows the scaling.

    Parameters
    ----------
    pattern : GainPattern
    n_theta, n_phi : int
        Quadrature nodes per panel, see :func:`directivity_ratio`.
    """
    k = directivity_ratio(pattern, n_theta=n_theta, n_phi=n_phi)
    if not np.isfinite(k) or k <= 0.0:
        raise PatternError(
            f"pattern '{pattern.name}': mean gain over the sphere is {k!r}; expected a positive number"
        )
    delta_db = -10.0 * np.log10(k)
    label = f"{pattern.name} (normalised {delta_db:+.2f} dB)"
    if isinstance(pattern, TablePattern):
        return pattern.shifted(delta_db, name=label)
    return ScaledPattern(pattern, 1.0 / k, name=label, source=pattern.source)


def sample_cuts(
    pattern: GainPattern, h_step_deg: float = 1.0, v_step_deg: float = 1.0, floor_db: float = 80.0
) -> dict:
    """Sample a pattern's three cuts on regular grids, ready for ``write_pattern_csv(**cuts)``.

    Uses the pattern's ``horizontal_cut`` / ``vertical_cut`` where it has them, its ``gain``
    otherwise. Gains are floored at ``peak - floor_db`` (a file cannot hold the -inf dBi of an
    exact null). Returns a dict with ``peak_gain_dbi`` (the maximum of the samples) and the six
    arrays named as in :class:`TablePattern` (angles [deg], gains [dBi]).
    """
    h_ang = np.arange(0.0, 360.0, float(h_step_deg))
    v_ang = np.linspace(-90.0, 90.0, int(round(180.0 / float(v_step_deg))) + 1)
    if hasattr(pattern, "horizontal_cut") and hasattr(pattern, "vertical_cut"):
        hg = np.asarray(pattern.horizontal_cut(np.deg2rad(h_ang)), dtype=float)
        fg = np.asarray(pattern.vertical_cut(np.deg2rad(v_ang), side="front"), dtype=float)
        bg = np.asarray(pattern.vertical_cut(np.deg2rad(v_ang), side="back"), dtype=float)
    else:
        hg = linear_to_dbi(pattern.gain(np.deg2rad(h_ang), 0.0))
        fg = linear_to_dbi(pattern.gain(0.0, np.deg2rad(v_ang)))
        bg = linear_to_dbi(pattern.gain(np.pi, np.deg2rad(v_ang)))
    peak = float(max(hg.max(), fg.max(), bg.max()))
    hg, fg, bg = (np.maximum(g, peak - float(floor_db)) for g in (hg, fg, bg))
    return {
        "peak_gain_dbi": peak,
        "h_angle_deg": h_ang,
        "h_gain_dbi": hg,
        "v_front_elev_deg": v_ang,
        "v_front_gain_dbi": fg,
        "v_back_elev_deg": v_ang.copy(),
        "v_back_gain_dbi": bg,
    }
