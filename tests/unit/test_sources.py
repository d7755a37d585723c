"""Unit tests of siteexposure.physics.sources: model choice, stand-off, bound where unvalidated."""

from __future__ import annotations

import numpy as np
import pytest

from siteexposure.constants import C0
from siteexposure.errors import InputError
from siteexposure.physics import sources
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.radiator import Radiator


def _panel():
    """3GPP TR 38.901 Table 7.3-1 form with whole-panel parameters (the package's model)."""
    return parametric_pattern(
        {"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65.0, "hpbw_v_deg": 7.0}
    )


def _db(pattern, phi_deg, el_deg):
    return float(pattern.gain_dbi(np.deg2rad(phi_deg), np.deg2rad(el_deg)))


F_HZ = 1950e6
LAM = C0 / F_HZ


def _rad(power_w=80.0, azimuth=30.0, tilt=0.0, **kw):
    return Radiator(np.array([5.0, -3.0, 20.0]), azimuth, tilt, 0.0, F_HZ, power_w, _panel(), **kw)


def test_auto_choice_per_antenna_type():
    dish = sources.choose_model(_rad(diameter_m=0.6))
    assert (dish.word, dish.model_id) == ("aperture", "circular-aperture") and "0.6 m" in dish.reason
    line = sources.choose_model(_rad(aperture_height_m=1.4))
    assert (line.word, line.model_id) == ("array", "array-synthesis") and line.auto
    yagi = sources.choose_model(_rad(aperture_width_m=1.0, aperture_depth_m=0.6,
                                     polarization="horizontal"))
    assert yagi.word == "array" and "horizontal" in yagi.reason
    bare = sources.choose_model(_rad())
    assert (bare.word, bare.model_id) == ("far-field", "far-field-friis")
    assert bare.reason.startswith("auto") and "inferred" in bare.reason


def test_requested_models_and_impossible_requests():
    assert sources.choose_model(_rad(), "far-field").reason.startswith("requested")
    assert not sources.choose_model(_rad(), "far-field").auto
    assert sources.choose_model(_rad(aperture_height_m=1.4), "Cylindrical").word == "cylindrical"
    with pytest.raises(InputError, match="diameter_m"):
        sources.choose_model(_rad(), "aperture")
    with pytest.raises(InputError, match="height_m"):
        sources.choose_model(_rad(diameter_m=0.6), "cylindrical")
    with pytest.raises(InputError, match="expected one of"):
        sources.choose_model(_rad(), "raytrace")
    with pytest.raises(InputError, match="body"):
        sources.choose_model(_rad(), "array")


def test_standoff_is_measured_from_the_body_not_a_sphere_about_the_centre():
    """lambda/(2 pi) from the body (Balanis 4th ed. sec. 4.2: near and far terms of a small
    dipole are equal at k r = 1); the Fresnel radius 0.62 sqrt(D^3/lambda) of a 1.4 m panel
    (Balanis sec. 2.2.4), 1.6 m here, is not refused any more."""
    rad = _rad(aperture_height_m=1.4, aperture_width_m=0.3, aperture_depth_m=0.3)
    so = sources.standoff_distance_m(rad)
    assert so == pytest.approx(LAM / (2 * np.pi))
    choice = sources.choose_model(rad, "array")
    # in front of the face (x = 0.15 m is the body's front), above its top, 1 m in front
    x, y, z = (np.asarray(v) for v in (np.sin(np.deg2rad(30)), np.cos(np.deg2rad(30)), 0.0))
    front = np.array([x, y, 0.0])
    pts = rad.position_m + np.array([0.15 * front + 0.5 * so * front,
                                     0.15 * front + 1.5 * so * front,
                                     [0.0, 0.0, 0.7 + 0.9 * so], [0.0, 0.0, 0.7 + 1.1 * so],
                                     1.0 * front])
    s, ok = sources.power_density(rad, choice, pts)
    assert ok.tolist() == [False, True, False, True, True]


@pytest.mark.parametrize(
    "kw,word",
    [
        ({}, "far-field"),
        ({"aperture_height_m": 1.4}, "cylindrical"),
        ({"diameter_m": 0.6}, "aperture"),
        ({"aperture_height_m": 1.4}, "auto"),
    ],
)
def test_density_masks_only_the_standoff_and_is_fast(kw, word):
    rad = _rad(**kw)
    choice = sources.choose_model(rad, word)
    so = sources.standoff_distance_m(rad)
    _, half = rad.body.box()
    edge = float(half[2])  # the top of the body (a panel's, or a dish's rim)
    pts = rad.position_m + np.array(
        [[0.0, 0.0, edge + 0.5 * so], [0.0, 0.0, edge + 1.01 * so], [0.0, 0.0, -3.0 * so - edge]]
    )
    s, ok = power_density_checked(rad, choice, pts)
    assert ok.tolist() == [False, True, True]
    assert np.isnan(s[0]) and np.all(np.isfinite(s[1:])) and np.all(s[1:] > 0)
    big = np.random.default_rng(1).uniform(-40, 40, (100_000, 3))
    s, ok = power_density_checked(rad, choice, big)
    assert np.array_equal(ok, np.isfinite(s))


def power_density_checked(rad, choice, pts):
    s, ok = sources.power_density(rad, choice, pts)
    assert s.shape == (len(pts),) and ok.shape == (len(pts),) and ok.dtype == bool
    return s, ok


def test_auto_never_gives_less_than_the_bound_where_the_model_is_not_validated():
    """Without a body, auto's far-field formula is validated only beyond the far-field range of
    the inferred body; closer in (into a null of the pattern, 2.5 m from the panel at -20 deg
    elevation) it takes the envelope bound, which is above the far-field value there."""
    from siteexposure.physics.body import to_antenna_frame_points

    rad = _rad()
    auto = sources.choose_model(rad)
    ff = sources.choose_model(rad, "far-field")
    a = np.deg2rad(30.0)
    el = np.deg2rad(-20.0)
    pt = rad.position_m + 2.5 * np.array([np.sin(a) * np.cos(el), np.cos(a) * np.cos(el),
                                          np.sin(el)])
    est = sources.field_densities(rad, auto, pt[None, :])
    s_ff, _ = sources.power_density(rad, ff, pt[None, :])
    assert est.bounded[0] and est.fields.s[0] > s_ff[0]
    far = rad.position_m + 500.0 * np.array([np.sin(a), np.cos(a), 0.0])
    est_far = sources.field_densities(rad, auto, far[None, :])
    s_far, _ = sources.power_density(rad, ff, far[None, :])
    assert not est_far.bounded[0] and est_far.fields.s[0] == pytest.approx(s_far[0], rel=1e-12)
    ant = to_antenna_frame_points(far[None, :], rad.position_m, rad.azimuth_deg, 0.0)
    assert ant[0, 0] == pytest.approx(500.0)
