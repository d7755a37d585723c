"""Frames and sign conventions of siteexposure.physics.orientation.

Sources: the frame definitions in the module docstring and DEVELOPERS.md (azimuth clockwise
from true north, downtilt positive, antenna x = boresight, y = left, z = up); the coordinate
conversion for mechanically tilted antennas of Rec. ITU-R F.1336-5 (the mechanical-tilt
clause of the sectoral recommends; equation numbers from memory); rotation-matrix facts
(orthogonal, determinant +1) are common practice.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.physics.orientation import (
    antenna_angles,
    antenna_axes,
    direction_from_angles,
    to_antenna_frame,
)
from siteexposure.physics.patterns import parametric_pattern

azimuths = st.floats(-720.0, 720.0, allow_nan=False)
tilts = st.floats(-89.0, 89.0, allow_nan=False)


@settings(max_examples=200, deadline=None)
@given(azimuths, tilts)
def test_axes_are_orthonormal_and_right_handed(az, tilt):
    x, y, z = antenna_axes(az, tilt)
    m = np.stack([x, y, z])
    np.testing.assert_allclose(m @ m.T, np.eye(3), atol=1e-12)
    np.testing.assert_allclose(np.cross(x, y), z, atol=1e-12)
    assert np.linalg.det(m) == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize(
    ("az", "expected"),
    [(0.0, (0.0, 1.0, 0.0)), (90.0, (1.0, 0.0, 0.0)), (180.0, (0.0, -1.0, 0.0)),
     (270.0, (-1.0, 0.0, 0.0)), (45.0, (np.sqrt(0.5), np.sqrt(0.5), 0.0))],
)
def test_azimuth_is_clockwise_from_north(az, expected):
    """Azimuth 0 = north (+y of ENU), 90 = east: clockwise seen from above (common practice)."""
    x, _, z = antenna_axes(az, 0.0)
    np.testing.assert_allclose(x, expected, atol=1e-12)
    np.testing.assert_allclose(z, (0.0, 0.0, 1.0), atol=1e-12)


def test_positive_tilt_points_boresight_down():
    x, _, z = antenna_axes(0.0, 10.0)
    assert x[2] == pytest.approx(-np.sin(np.deg2rad(10.0)))
    assert z[1] == pytest.approx(np.sin(np.deg2rad(10.0)))  # the top leans forward
    x_up, _, _ = antenna_axes(0.0, -10.0)
    assert x_up[2] > 0.0


def test_left_axis_and_clockwise_phi():
    """A point to the right of boresight (clockwise seen from above) has phi = +pi/2."""
    # boresight north: east is to the right
    _, phi, theta = antenna_angles(*to_antenna_frame([10.0, 0.0, 0.0], 0.0, 0.0))
    assert float(phi) == pytest.approx(np.pi / 2)
    assert float(theta) == pytest.approx(0.0)
    _, phi, _ = antenna_angles(*to_antenna_frame([-10.0, 0.0, 0.0], 0.0, 0.0))
    assert float(phi) == pytest.approx(3 * np.pi / 2)
    _, phi, _ = antenna_angles(*to_antenna_frame([0.0, -10.0, 0.0], 0.0, 0.0))
    assert float(phi) == pytest.approx(np.pi)
    _, _, theta = antenna_angles(*to_antenna_frame([0.0, 0.0, 5.0], 0.0, 0.0))
    assert float(theta) == pytest.approx(np.pi / 2)


@settings(max_examples=200, deadline=None)
@given(azimuths, tilts, st.floats(0.0, 2 * np.pi - 1e-9), st.floats(-1.5, 1.5),
       st.floats(0.1, 1e4))
def test_mechanical_tilt_is_a_rotation(az, tilt, phi, theta, r):
    """Distances and angles survive the change of frame; angles invert exactly."""
    d_ant = r * direction_from_angles(phi, theta)
    x, y, z = antenna_axes(az, tilt)
    d_site = d_ant[0] * x + d_ant[1] * y + d_ant[2] * z
    xa, ya, za = to_antenna_frame(d_site, az, tilt)
    rr, ph2, th2 = antenna_angles(xa, ya, za)
    assert float(rr) == pytest.approx(r, rel=1e-12)
    assert float(np.linalg.norm(d_site)) == pytest.approx(r, rel=1e-12)
    assert float(th2) == pytest.approx(theta, abs=1e-9)
    if abs(theta) < 1.5:  # azimuth undefined at the poles
        dphi = (float(ph2) - phi + np.pi) % (2 * np.pi) - np.pi
        assert dphi == pytest.approx(0.0, abs=1e-8)


def test_boresight_moves_to_the_tilted_direction():
    """Az 30, downtilt 8: the site direction (az 30, elevation -8) is the antenna boresight."""
    az, tilt = 30.0, 8.0
    a, t = np.deg2rad(az), np.deg2rad(tilt)
    d = np.array([np.sin(a) * np.cos(t), np.cos(a) * np.cos(t), -np.sin(t)])
    _, phi, theta = antenna_angles(*to_antenna_frame(d, az, tilt))
    assert float(theta) == pytest.approx(0.0, abs=1e-12)
    assert min(float(phi), 2 * np.pi - float(phi)) == pytest.approx(0.0, abs=1e-12)
    p = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65,
                            "hpbw_v_deg": 7})
    assert float(p.gain_dbi(phi, theta)) == pytest.approx(17.0, abs=1e-9)


@pytest.mark.parametrize("beta", [2.0, 6.0, 12.0])
@pytest.mark.parametrize("phi_deg", [0.0, 30.0, 75.0, 120.0, 180.0])
@pytest.mark.parametrize("theta_deg", [-40.0, -8.0, 0.0, 15.0])
def test_tilt_conversion_matches_f1336(beta, phi_deg, theta_deg):
    """ITU-R F.1336-5, mechanical tilt (from memory): for downtilt beta, a direction at
    elevation theta and azimuth phi from the antenna's pointing azimuth has, in the tilted
    antenna's own frame, elevation theta_h = asin(sin theta cos beta + cos theta cos phi sin beta)
    and azimuth phi_h = acos((-sin theta sin beta + cos theta cos phi cos beta) / cos theta_h)."""
    az = 40.0
    th, ph, b = np.deg2rad(theta_deg), np.deg2rad(phi_deg), np.deg2rad(beta)
    # site direction at elevation theta, azimuth az + phi (clockwise)
    a = np.deg2rad(az + phi_deg)
    d = np.array([np.sin(a) * np.cos(th), np.cos(a) * np.cos(th), np.sin(th)])
    _, phi_a, theta_a = antenna_angles(*to_antenna_frame(d, az, beta))
    theta_h = np.arcsin(np.sin(th) * np.cos(b) + np.cos(th) * np.cos(ph) * np.sin(b))
    phi_h = np.arccos(np.clip((-np.sin(th) * np.sin(b) + np.cos(th) * np.cos(ph) * np.cos(b))
                              / np.cos(theta_h), -1, 1))
    assert float(theta_a) == pytest.approx(theta_h, abs=1e-12)
    phi_a_abs = min(float(phi_a), 2 * np.pi - float(phi_a))
    assert phi_a_abs == pytest.approx(phi_h, abs=1e-6)  # acos is ill-conditioned near 0, pi


def test_rotated_pattern_differs_from_shifted_vertical_cut():
    """A mechanical downtilt is a rotation: at the sides of the antenna it does not lower the
    beam at all, whereas shifting the vertical cut by the tilt lowers it everywhere.

    On the site horizon 90 deg off boresight the tilted antenna sees elevation
    asin(cos 90 * sin beta) = 0 (F.1336-5 mechanical tilt, from memory), so the rotated pattern
    gives the full horizontal-cut gain there; a shifted cut would apply the vertical
    attenuation of ``beta`` degrees."""
    beta = 10.0
    p = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65,
                            "hpbw_v_deg": 7, "front_to_back_db": 30, "side_lobe_db": 20})

    def rotated_dbi(az_off_deg, elev_deg):
        a, e = np.deg2rad(az_off_deg), np.deg2rad(elev_deg)
        d = np.array([np.sin(a) * np.cos(e), np.cos(a) * np.cos(e), np.sin(e)])
        _, phi, theta = antenna_angles(*to_antenna_frame(d, 0.0, beta))
        return float(p.gain_dbi(phi, theta))

    def shifted_dbi(az_off_deg, elev_deg):
        return float(p.gain_dbi(np.deg2rad(az_off_deg % 360), np.deg2rad(elev_deg + beta)))

    # on boresight both agree
    assert rotated_dbi(0.0, -beta) == pytest.approx(shifted_dbi(0.0, -beta), abs=1e-9)
    assert rotated_dbi(0.0, 0.0) == pytest.approx(shifted_dbi(0.0, 0.0), abs=1e-9)
    # 90 deg off boresight on the horizon: rotation keeps elevation 0 -> horizontal cut only
    side_rot = rotated_dbi(90.0, 0.0)
    assert side_rot == pytest.approx(float(p.gain_dbi(np.pi / 2, 0.0)), abs=1e-9)
    side_shift = shifted_dbi(90.0, 0.0)
    # shifted: A_V = -min(12 (10/7)^2, 20) = -20, A_H = -12 (90/65)^2 = -23.0, capped at -30
    # rotated: A_V = 0, so the difference is 30 - 12 (90/65)^2 = 6.99 dB
    assert side_rot - side_shift == pytest.approx(30.0 - 12.0 * (90.0 / 65.0) ** 2, abs=1e-9)
    # 60 deg off boresight on the site horizon the rotated antenna sees elevation
    # asin(cos 60 sin 10) = +4.98 deg, not the +10 deg of the shifted cut
    a = np.deg2rad(60.0)
    _, _, theta = antenna_angles(*to_antenna_frame([np.sin(a), np.cos(a), 0.0], 0.0, beta))
    assert np.rad2deg(float(theta)) == pytest.approx(4.98, abs=0.01)
    assert abs(rotated_dbi(60.0, -beta) - shifted_dbi(60.0, -beta)) > 1.0
