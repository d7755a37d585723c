"""Frames and sign conventions: the site frame and each antenna's own frame.

Site frame
    Local east, north, up in metres (ENU), origin at the site origin, ``up`` measured
    from site ground. Azimuths are degrees clockwise from TRUE north.

Antenna frame
    Right-handed, origin at the radiation centre: ``x`` along boresight, ``y`` to the
    left of boresight (seen from behind the antenna, looking along boresight), ``z``
    up through the antenna's top. The antenna is placed by first tilting it about its
    own ``y`` axis by the mechanical tilt (positive = boresight down), then turning it
    about the site's vertical by the azimuth (clockwise from north). The mechanical
    tilt is therefore a true 3-D rotation of the whole pattern, not a shift of the
    vertical cut (the two differ away from boresight).

Pattern angles in the antenna frame (the angles of "pattern CSV v1")
    ``phi``: azimuth from boresight, 0..2*pi, clockwise seen from above (a point to
    the right of boresight has phi = +pi/2). ``theta``: elevation above the antenna's
    x-y plane, -pi/2 (nadir) .. +pi/2 (zenith).

All functions broadcast; the last axis of a coordinate array holds (east, north, up).
"""

from __future__ import annotations

import numpy as np


def antenna_axes(azimuth_deg, mechanical_tilt_deg):
    """Unit vectors of an antenna's frame expressed in the site frame.

    Parameters
    ----------
    azimuth_deg : array_like
        Boresight azimuth, clockwise from true north. [deg]
    mechanical_tilt_deg : array_like
        Mechanical downtilt, positive = boresight below the horizon. [deg]

    Returns
    -------
    x_axis, y_axis, z_axis : ndarray, shape (..., 3)
        Boresight, left and top directions in (east, north, up). [1]

    Notes
    -----
    With azimuth a and downtilt t::

        x = ( sin a cos t,  cos a cos t, -sin t)
        z = ( sin a sin t,  cos a sin t,  cos t)
        y = z × x = (-cos a, sin a, 0)

    Examples
    --------
    >>> x, y, z = antenna_axes(90.0, 0.0)
    >>> np.round(x, 12).tolist(), np.round(y, 12).tolist()
    ([1.0, 0.0, 0.0], [-0.0, 1.0, 0.0])
    """
    a = np.deg2rad(np.asarray(azimuth_deg, dtype=float))
    t = np.deg2rad(np.asarray(mechanical_tilt_deg, dtype=float))
    sa, ca, st, ct = np.sin(a), np.cos(a), np.sin(t), np.cos(t)
    x = np.stack(np.broadcast_arrays(sa * ct, ca * ct, -st), axis=-1)
    z = np.stack(np.broadcast_arrays(sa * st, ca * st, ct), axis=-1)
    y = np.stack(np.broadcast_arrays(-ca, sa, np.zeros_like(sa)), axis=-1)
    return x, y, z


def to_antenna_frame(d_enu, azimuth_deg, mechanical_tilt_deg):
    """Express site-frame offsets from the radiation centre in the antenna frame.

    Parameters
    ----------
    d_enu : array_like, shape (..., 3)
        Offset of the field point from the radiation centre (east, north, up). [m]
    azimuth_deg, mechanical_tilt_deg : float
        Antenna orientation, see :func:`antenna_axes`. [deg]

    Returns
    -------
    xa, ya, za : ndarray
        Coordinates along boresight, to the left and up in the antenna frame. [m]
    """
    d = np.asarray(d_enu, dtype=float)
    x, y, z = antenna_axes(azimuth_deg, mechanical_tilt_deg)
    return d @ x, d @ y, d @ z


def antenna_angles(xa, ya, za):
    """Range and pattern angles of points given in the antenna frame.

    Returns
    -------
    r : ndarray
        Distance from the radiation centre. [m]
    phi : ndarray
        Azimuth from boresight, clockwise seen from above, in [0, 2*pi). [rad]
    theta : ndarray
        Elevation above the antenna's x-y plane, in [-pi/2, pi/2]. [rad]
    """
    xa, ya, za = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (xa, ya, za)))
    rho = np.hypot(xa, ya)
    r = np.hypot(rho, za)
    phi = np.mod(np.arctan2(-ya, xa), 2.0 * np.pi)
    theta = np.arctan2(za, rho)
    return r, phi, theta


def direction_from_angles(phi, theta):
    """Unit vector in the antenna frame for pattern angles (inverse of :func:`antenna_angles`).

    Returns
    -------
    ndarray, shape (..., 3)
        (x, y, z) components in the antenna frame. [1]
    """
    phi = np.asarray(phi, dtype=float)
    theta = np.asarray(theta, dtype=float)
    ct = np.cos(theta)
    return np.stack(np.broadcast_arrays(ct * np.cos(phi), -ct * np.sin(phi), np.sin(theta)), axis=-1)
