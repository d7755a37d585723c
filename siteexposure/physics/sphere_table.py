"""Full-sphere gain table of a pattern file: checks and bilinear interpolation in dB.

A pattern file may carry, after its cuts, a table of absolute gains on a rectangular grid of
azimuths ``A`` (0..360 deg, clockwise from boresight seen from above) and elevations ``E``
(-90 nadir .. +90 zenith, in the antenna frame, tilt already in the data). When it does, the
3-D gain of :class:`~siteexposure.physics.synthesis.TablePattern` is read from the table
(:meth:`SphereTable.lookup_dbi`) instead of being synthesised from the cuts.

The checks here work on arrays (no line numbers); the reader
(:mod:`siteexposure.readers.pattern_csv`) runs the same functions first and adds the lines of
the file to the message.

Pure numpy, no I/O. Angles in degrees in the table, radians at :meth:`SphereTable.lookup_dbi`
(antenna frame of :mod:`siteexposure.physics.orientation`).
"""

from __future__ import annotations

import numpy as np

from siteexposure.errors import PatternError

#: Largest allowed spread of the gains of one pole row (a pole is one direction). [dB]
POLE_TOLERANCE_DB = 1.0

#: Largest allowed difference between the 0 deg and the 360 deg columns where both are given
#: (the same directions). [dB]
SEAM_TOLERANCE_DB = 0.01

#: Largest grid accepted (azimuths x elevations): a 0.25 deg grid has about 1.04 million
#: cells; above this the table would cost more memory than it can add in accuracy. [1]
MAX_SPHERE_CELLS = 2_000_000

#: The ``synthesis`` word of a pattern whose 3-D gain comes from a full-sphere table.
SPHERE_SYNTHESIS = "3-d table"


def seam_mismatch(az_deg: np.ndarray, gain_dbi: np.ndarray) -> int | None:
    """Elevation index of the largest 0-vs-360 deg difference beyond
    :data:`SEAM_TOLERANCE_DB`, or None (also when 0 and 360 are not both present).

    ``az_deg`` sorted, ``gain_dbi`` of shape ``(n_az, n_el)``.
    """
    if az_deg.size < 2 or az_deg[0] != 0.0 or az_deg[-1] != 360.0:
        return None
    diff = np.abs(gain_dbi[-1] - gain_dbi[0])
    j = int(np.argmax(diff))
    return j if diff[j] > SEAM_TOLERANCE_DB else None


def pole_mismatch(gain_dbi: np.ndarray) -> tuple[int, int, int] | None:
    """``(j, i_low, i_high)`` of the first pole row (``j`` = 0 nadir, -1 zenith) whose gains
    spread by more than :data:`POLE_TOLERANCE_DB` across azimuths, or None."""
    for j in (0, -1):
        row = gain_dbi[:, j]
        i_lo, i_hi = int(np.argmin(row)), int(np.argmax(row))
        if row[i_hi] - row[i_lo] > POLE_TOLERANCE_DB:
            return j, i_lo, i_hi
    return None


def cut_plane_mismatch(az_deg, el_deg, gain_dbi, cuts, tol_db: float
                       ) -> tuple[str, float, int, int, float, float] | None:
    """The largest disagreement beyond ``tol_db`` between the table and the cuts where both
    have a sample at the same angle, or None.

    Parameters
    ----------
    az_deg, el_deg : ndarray
        Sorted grid angles. [deg]
    gain_dbi : ndarray, shape (n_az, n_el)
        Table gains. [dBi]
    cuts : object
        With ``h_angle_deg`` (in [0, 360)), ``h_gain_dbi``, ``v_front_elev_deg``,
        ``v_front_gain_dbi``, ``v_back_elev_deg``, ``v_back_gain_dbi`` (sorted).
    tol_db : float
        Allowed difference. [dB]

    Returns
    -------
    tuple or None
        ``(cut, angle_deg, i_az, j_el, table_dbi, cut_dbi)`` with ``cut`` one of
        ``"front"`` (table at az 0 against the front vertical cut at elevation ``angle_deg``),
        ``"back"`` (az 180) and ``"horizontal"`` (el 0 against the horizontal cut at azimuth
        ``angle_deg``, 360 counted as 0).
    """
    worst = None

    def consider(cut, angles_t, vals_t, idx, angles_c, vals_c):
        nonlocal worst
        _, it, ic = np.intersect1d(angles_t, angles_c, assume_unique=True, return_indices=True)
        if it.size == 0:
            return
        diff = np.abs(vals_t[it] - vals_c[ic])
        k = int(np.argmax(diff))
        if diff[k] > tol_db and (worst is None or diff[k] > worst[0]):
            i_az, j_el = idx(int(it[k]))
            worst = (float(diff[k]), (cut, float(angles_c[ic[k]]), i_az, j_el,
                                      float(vals_t[it[k]]), float(vals_c[ic[k]])))

    for cut, az0, el_c, g_c in (("front", 0.0, cuts.v_front_elev_deg, cuts.v_front_gain_dbi),
                                ("back", 180.0, cuts.v_back_elev_deg, cuts.v_back_gain_dbi)):
        hits = np.flatnonzero((az_deg == az0) | (az_deg == az0 + 360.0))
        if hits.size:
            i = int(hits[0])
            consider(cut, el_deg, gain_dbi[i], lambda j, i=i: (i, j), el_c, g_c)
    zero = np.flatnonzero(el_deg == 0.0)
    if zero.size:
        j0 = int(zero[0])
        keep = az_deg < 360.0 if (az_deg == 0.0).any() else np.ones(az_deg.size, dtype=bool)
        rows = np.flatnonzero(keep)
        wrapped = np.where(az_deg[rows] == 360.0, 0.0, az_deg[rows])
        order = np.argsort(wrapped)
        consider("horizontal", wrapped[order], gain_dbi[rows[order], j0],
                 lambda k: (int(rows[order][k]), j0),
                 np.where(cuts.h_angle_deg == 360.0, 0.0, cuts.h_angle_deg), cuts.h_gain_dbi)
    return None if worst is None else worst[1]


def _locate(nodes: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Cell index ``i`` (``nodes[i] <= x < nodes[i+1]``, clamped to the end cells) and the
    fraction of the cell at ``x`` (within ``nodes[0]..nodes[-1]``)."""
    i = np.clip(np.searchsorted(nodes, x, side="right") - 1, 0, nodes.size - 2)
    lo = nodes[i]
    return i, np.clip((x - lo) / (nodes[i + 1] - lo), 0.0, 1.0)


class SphereTable:
    """Absolute gain on a rectangular (azimuth, elevation) grid over the whole sphere.

    Parameters
    ----------
    az_deg : array_like, shape (n_az,)
        Azimuths from boresight, clockwise seen from above, within 0..360, any order; 0 and
        360 may both appear (then with equal gains within :data:`SEAM_TOLERANCE_DB`). [deg]
    el_deg : array_like, shape (n_el,)
        Elevations within -90..+90, any order, both poles included. [deg]
    gain_dbi : array_like, shape (n_az, n_el)
        Gain at every grid node; at each pole the row agrees within
        :data:`POLE_TOLERANCE_DB`. [dBi]
    where : str
        Name of the pattern for messages.

    Attributes
    ----------
    az_deg, el_deg, gain_dbi
        The grid as given, sorted by angle (read-only); what a writer prints back.

    Notes
    -----
    Bilinear interpolation in dB, periodic in azimuth (the column after the last azimuth is
    the first one again, 360 deg on). With ``u``, ``v`` the fractions of the cell
    ``[a_i, a_i+1] x [e_j, e_j+1]`` that hold the direction::

        G = (1-u)(1-v) G_ij + u (1-v) G_i+1,j + (1-u) v G_i,j+1 + u v G_i+1,j+1

    exact at the nodes. A pole is one direction: each pole row takes the largest of its
    gains (on the safe side of a file whose pole samples differ by measurement noise), so
    that the gain at a pole does not depend on the azimuth of approach. Linear gain is
    ``10^(G/10)``.

    References
    ----------
    .. [1] W. H. Press, S. A. Teukolsky, W. T. Vetterling, B. P. Flannery, *Numerical
       Recipes*, 3rd ed., Cambridge University Press, 2007, sec. 3.6 (interpolation on a
       grid in multidimensions: bilinear interpolation); section number from memory.
    """

    def __init__(self, az_deg, el_deg, gain_dbi, *, where: str = "pattern") -> None:
        az = np.asarray(az_deg, dtype=float)
        el = np.asarray(el_deg, dtype=float)
        g = np.asarray(gain_dbi, dtype=float)
        if az.ndim != 1 or el.ndim != 1 or g.shape != (az.size, el.size):
            raise PatternError(f"{where}: 3-D table has {az.size} azimuths, {el.size} elevations "
                               f"and gains of shape {g.shape}; expected gains of shape "
                               f"(n_azimuth, n_elevation) = ({az.size}, {el.size})")
        if az.size < 2 or el.size < 2 or az.size * el.size > MAX_SPHERE_CELLS:
            raise PatternError(f"{where}: 3-D table has {az.size} x {el.size} cells; expected at "
                               f"least 2 x 2 and at most {MAX_SPHERE_CELLS} cells")
        if not (np.isfinite(az).all() and np.isfinite(el).all() and np.isfinite(g).all()):
            raise PatternError(f"{where}: 3-D table holds NaN or infinite values; expected numbers")
        ia, ie = np.argsort(az, kind="stable"), np.argsort(el, kind="stable")
        az, el, g = az[ia], el[ie], g[ia][:, ie]
        if np.any(np.diff(az) <= 0.0) or np.any(np.diff(el) <= 0.0):
            raise PatternError(f"{where}: 3-D table has an azimuth or an elevation twice; "
                               "expected unique grid angles")
        if az[0] < 0.0 or az[-1] > 360.0:
            raise PatternError(f"{where}: 3-D table azimuths span {az[0]:g}..{az[-1]:g} deg; "
                               "expected 0..360")
        if el[0] != -90.0 or el[-1] != 90.0:
            raise PatternError(f"{where}: 3-D table elevations span {el[0]:g}..{el[-1]:g} deg; "
                               "expected samples at exactly -90 (nadir) and +90 (zenith)")
        j = seam_mismatch(az, g)
        if j is not None:
            raise PatternError(f"{where}: 3-D table gives {g[0, j]:g} dBi at azimuth 0 and "
                               f"{g[-1, j]:g} dBi at 360 deg (elevation {el[j]:g} deg); expected "
                               f"equal gains within {SEAM_TOLERANCE_DB:g} dB")
        bad = pole_mismatch(g)
        if bad is not None:
            pj, lo, hi = bad
            raise PatternError(f"{where}: 3-D table gains at the {'nadir' if pj == 0 else 'zenith'}"
                               f" span {g[lo, pj]:g}..{g[hi, pj]:g} dBi; expected agreement "
                               f"within {POLE_TOLERANCE_DB:g} dB (a pole is one direction)")
        for name, arr in (("az_deg", az), ("el_deg", el), ("gain_dbi", g)):
            arr = np.array(arr, dtype=float)
            arr.setflags(write=False)
            setattr(self, name, arr)
        # the interpolation grid: one column per direction (360 folded onto 0), pole rows
        # constant, and the first column repeated 360 deg on (periodic)
        a, t = az, g.copy()
        if a[-1] == 360.0:
            if a[0] == 0.0:
                a, t = a[:-1], t[:-1]
            else:
                a, t = np.concatenate(([0.0], a[:-1])), np.concatenate((t[-1:], t[:-1]))
        t[:, 0] = t[:, 0].max()
        t[:, -1] = t[:, -1].max()
        self._az = np.concatenate((a, [a[0] + 360.0]))
        self._grid = np.concatenate((t, t[:1]))
        self.max_gain_dbi = float(g.max())
        self.min_gain_dbi = float(g.min())

    def __repr__(self) -> str:
        return (f"SphereTable({self.az_deg.size} azimuths x {self.el_deg.size} elevations, "
                f"{self.min_gain_dbi:.2f}..{self.max_gain_dbi:.2f} dBi)")

    def lookup_dbi(self, phi, theta) -> np.ndarray:
        """Gain in any direction (broadcasting ``phi``, ``theta``), bilinear in dB. [dBi]

        Parameters
        ----------
        phi : array_like
            Azimuth from boresight, clockwise seen from above; any real value (wrapped). [rad]
        theta : array_like
            Elevation, -pi/2..pi/2 (clipped). [rad]
        """
        phi_deg, el = np.broadcast_arrays(np.rad2deg(np.asarray(phi, dtype=float)),
                                          np.rad2deg(np.asarray(theta, dtype=float)))
        x = phi_deg - 360.0 * np.floor((phi_deg - self._az[0]) / 360.0)
        el = np.clip(el, -90.0, 90.0)
        # NaN angles land in some valid cell with a NaN fraction, so give NaN gains
        i, u = _locate(self._az, x)
        j, v = _locate(self.el_deg, el)
        ne = self.el_deg.size
        flat = self._grid.ravel()
        k = i * ne + j
        lower = (1.0 - v) * flat[k] + v * flat[k + 1]
        upper = (1.0 - v) * flat[k + ne] + v * flat[k + ne + 1]
        g = (1.0 - u) * lower + u * upper
        # the poles exactly (the weights above sum to 1 only to rounding)
        return np.where(el >= 90.0, self._grid[0, -1], np.where(el <= -90.0, self._grid[0, 0], g))

    def shifted(self, delta_db: float) -> SphereTable:
        """The same table raised by ``delta_db``. [dB]"""
        return SphereTable(self.az_deg, self.el_deg, self.gain_dbi + float(delta_db))
