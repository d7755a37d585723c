"""Unit tests of siteexposure.physics.body: the envelope, distances from it, inferred sizes."""

from __future__ import annotations

import numpy as np
import pytest

from siteexposure.physics.body import (
    DISH_BOWL_DEPTH_FRACTION,
    Body,
    inferred_body,
    site_from_antenna,
    to_antenna_frame_points,
)
from siteexposure.physics.patterns import parametric_pattern


def test_box_distance_and_nearest_point():
    b = Body(height_m=2.0, width_m=0.4, depth_m=0.2)
    pts = np.array([[0.0, 0.0, 0.0], [1.1, 0.0, 0.0], [0.0, 0.0, 4.0], [1.1, 1.2, 2.0]])
    np.testing.assert_allclose(b.distance_m(pts), [0.0, 1.0, 3.0, np.sqrt(1.0 + 1.0 + 1.0)])
    np.testing.assert_allclose(b.nearest_point(pts)[3], [0.1, 0.2, 1.0])
    assert b.largest_dimension_m == 2.0
    assert b.bounding_radius_m == pytest.approx(np.sqrt(0.1**2 + 0.2**2 + 1.0**2))


def test_offset_moves_the_body_not_the_centre():
    b = Body(height_m=1.0, depth_m=0.2, offset_m=(-0.1, 0.0, 0.0))
    assert b.distance_m(np.array([0.0, 0.0, 0.0])) == 0.0
    assert b.distance_m(np.array([0.3, 0.0, 0.0])) == pytest.approx(0.3)
    assert b.distance_m(np.array([-0.5, 0.0, 0.0])) == pytest.approx(0.3)


def test_dish_is_a_cylinder_from_the_bowl_to_the_feed():
    d = 1.2
    b = Body(diameter_m=d, depth_m=0.3)
    assert b.is_dish and b.largest_dimension_m == pytest.approx(d)
    np.testing.assert_allclose(b.distance_m(np.array([[0.2, 0.0, 0.0], [0.0, 0.0, 0.9],
                                                      [-1.0, 0.0, 0.0], [1.3, 0.0, 1.0]])),
                               [0.0, 0.3, 1.0 - DISH_BOWL_DEPTH_FRACTION * d,
                                np.hypot(1.0, 0.4)])


def test_frames_round_trip_and_follow_azimuth_and_tilt():
    rng = np.random.default_rng(2)
    pts = rng.uniform(-10, 10, (50, 3))
    pos = np.array([1.0, 2.0, 3.0])
    ant = to_antenna_frame_points(pts, pos, 37.0, 8.0)
    np.testing.assert_allclose(site_from_antenna(ant, pos, 37.0, 8.0), pts, atol=1e-12)
    # boresight east, no tilt: a point 2 m east is 2 m forward
    np.testing.assert_allclose(to_antenna_frame_points(pos + [2.0, 0, 0], pos, 90.0, 0.0),
                               [2.0, 0.0, 0.0], atol=1e-12)


def test_cone_of_directions_holds_the_whole_body():
    b = Body(height_m=2.0, width_m=0.5)
    p = np.array([5.0, 0.0, 0.0])
    unit, alpha = b.cone_half_angle_rad(p)
    corners = np.array([[0, y, z] for y in (-0.25, 0.25) for z in (-1.0, 1.0)], float)
    dirs = p - corners
    dirs /= np.linalg.norm(dirs, axis=1)[:, None]
    assert np.all(np.arccos(np.clip(dirs @ unit, -1, 1)) <= alpha + 1e-12)
    assert b.cone_half_angle_rad(np.zeros(3))[1] == pytest.approx(np.pi)


def test_inferred_body_from_the_beamwidths():
    """A 7 deg vertical beam at 1950 MHz: 1.2 lambda / HPBW = 1.51 m (uniform line source
    0.886 lambda/HPBW, Balanis 4th ed. sec. 6.3, from memory, raised by 1.2 x 0.886^-1 ...);
    a 65 deg horizontal beam: 0.28 m; a dipole's wide beams give no size."""
    lam = 299792458.0 / 1950e6
    pat = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65.0,
                              "hpbw_v_deg": 7.0})
    b = inferred_body(pat, lam)
    assert b.height_m == pytest.approx(1.2 * lam / np.deg2rad(7.0), rel=0.03)
    assert b.width_m == pytest.approx(1.2 * lam / np.deg2rad(65.0), rel=0.03)
    assert inferred_body(parametric_pattern({"model": "isotropic"}), lam).is_point
