"""Unit tests of siteexposure.physics.sources: model choice, masking, keep-out distances."""

from __future__ import annotations

import time

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.constants import C0
from siteexposure.errors import InputError
from siteexposure.physics import sources
from siteexposure.physics.cylindrical import crossover_distance_m, horizontal_hpbw_deg
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


def test_auto_choice_per_antenna_type(monkeypatch):
    dish = sources.choose_model(_rad(diameter_m=0.6))
    assert (dish.word, dish.model_id) == ("aperture", "oet65-aperture") and "0.6 m" in dish.reason
    monkeypatch.setattr(sources, "array_model_available", lambda: False)
    line = sources.choose_model(_rad(aperture_height_m=1.4))
    assert (line.word, line.model_id) == ("cylindrical", "oet65-cylindrical")
    monkeypatch.setattr(sources, "array_model_available", lambda: True)
    line = sources.choose_model(_rad(aperture_height_m=1.4))
    assert (line.word, line.model_id) == ("array", "array-synthesis")
    bare = sources.choose_model(_rad())
    assert (bare.word, bare.model_id) == ("far-field", "far-field-friis")
    assert bare.reason.startswith("auto")


def test_requested_models_and_impossible_requests(monkeypatch):
    assert sources.choose_model(_rad(), "far-field").reason.startswith("requested")
    assert sources.choose_model(_rad(aperture_height_m=1.4), "Cylindrical").word == "cylindrical"
    with pytest.raises(InputError, match="diameter_m"):
        sources.choose_model(_rad(), "aperture")
    with pytest.raises(InputError, match="height_m"):
        sources.choose_model(_rad(diameter_m=0.6), "cylindrical")
    with pytest.raises(InputError, match="expected one of"):
        sources.choose_model(_rad(), "raytrace")
    monkeypatch.setattr(sources, "array_model_available", lambda: False)
    with pytest.raises(InputError, match="not installed"):
        sources.choose_model(_rad(aperture_height_m=1.4), "array")


def test_reactive_radius_uses_the_largest_dimension():
    """max(lambda/2pi, 0.62 sqrt(D^3/lambda)), Balanis 3rd ed. Sec. 2.2.4."""
    assert sources.reactive_radius_m(_rad()) == pytest.approx(LAM / (2 * np.pi))
    r = sources.reactive_radius_m(_rad(aperture_height_m=1.4, aperture_width_m=0.3))
    assert r == pytest.approx(0.62 * np.sqrt(1.4**3 / LAM))


@pytest.mark.parametrize(
    "kw,word",
    [
        ({}, "far-field"),
        ({"aperture_height_m": 1.4}, "cylindrical"),
        ({"diameter_m": 0.6}, "aperture"),
    ],
)
def test_density_masks_the_reactive_near_field_and_is_fast(kw, word):
    rad = _rad(**kw)
    choice = sources.choose_model(rad, word)
    r0 = sources.reactive_radius_m(rad)
    pts = rad.position_m + np.array(
        [[0.5 * r0, 0.0, 0.0], [0.0, 1.01 * r0, 0.0], [0.0, 0.0, -3.0 * r0]]
    )
    s, ok = power_density_checked(rad, choice, pts)
    assert ok.tolist() == [False, True, True]
    assert np.isnan(s[0]) and np.all(np.isfinite(s[1:])) and np.all(s[1:] > 0)
    big = np.random.default_rng(1).uniform(-40, 40, (100_000, 3))
    t0 = time.perf_counter()
    s, ok = power_density_checked(rad, choice, big)
    assert time.perf_counter() - t0 < 2.0
    assert np.array_equal(ok, np.isfinite(s))


def power_density_checked(rad, choice, pts):
    s, ok = sources.power_density(rad, choice, pts)
    assert s.shape == (len(pts),) and ok.shape == (len(pts),) and ok.dtype == bool
    return s, ok


def test_far_field_keep_out_matches_the_closed_form_in_every_direction():
    """OET-65 Ed. 97-01 eq. (3) solved for R with the pattern gain toward each direction."""
    rad = _rad(power_w=80.0, azimuth=30.0, reflection_factor=2.56)
    pat = rad.pattern
    limit = 1.0
    ko = sources.keep_out_distances(rad, sources.choose_model(rad, "far-field"), limit)
    gains_db = {
        "front": _db(pat, 0.0, 0.0),
        "behind": _db(pat, 180.0, 0.0),
        "left": _db(pat, -90.0, 0.0),
        "right": _db(pat, 90.0, 0.0),
        "above": _db(pat, 0.0, 90.0),
        "below": _db(pat, 0.0, -90.0),
    }
    for name, g_db in gains_db.items():
        expect = np.sqrt(80.0 * 10 ** (g_db / 10) * 2.56 / (4 * np.pi * limit))
        assert ko[name] == pytest.approx(expect, rel=1e-6), name


def test_front_is_measured_horizontally_even_with_mechanical_tilt():
    rad = _rad(power_w=80.0, tilt=5.0)
    ko = sources.keep_out_distances(rad, sources.choose_model(rad, "far-field"), 2.0)
    g = 10 ** (_db(rad.pattern, 0.0, 5.0) / 10)  # the horizon is 5 deg above the tilted beam
    assert ko["front"] == pytest.approx(np.sqrt(80.0 * g / (4 * np.pi * 2.0)), rel=1e-6)


def test_cylindrical_keep_out_in_the_near_field():
    """Inside R_c the distance solves the OET-65 sector formula: R = (180/theta) P/(pi h S)."""
    rad = _rad(power_w=80.0, aperture_height_m=1.4)
    bw = horizontal_hpbw_deg(rad.pattern)
    limit = 10.0
    expect = 180.0 / bw * 80.0 / (np.pi * 1.4 * limit)
    assert expect < crossover_distance_m(10**1.7, 1.4, bw)
    ko = sources.keep_out_distances(rad, sources.choose_model(rad, "cylindrical"), limit)
    assert ko["front"] == pytest.approx(expect, rel=1e-6)
    assert ko["left"] == ko["right"] == 0.0


def test_never_exceeded_gives_zero_and_bad_limit_raises():
    rad = _rad(power_w=1e-3)
    ko = sources.keep_out_distances(rad, sources.choose_model(rad), 10.0)
    assert ko == dict.fromkeys(sources.KEEP_OUT_DIRECTIONS, 0.0)
    with pytest.raises(InputError, match="limit"):
        sources.keep_out_distances(rad, sources.choose_model(rad), 0.0)


def test_directions_follow_the_azimuth():
    d = sources.keep_out_directions_enu(90.0)
    np.testing.assert_allclose(d["front"], [1, 0, 0], atol=1e-12)
    np.testing.assert_allclose(d["left"], [0, 1, 0], atol=1e-12)  # north is left of east
    np.testing.assert_allclose(d["below"], [0, 0, -1])


@settings(max_examples=15, deadline=None)
@given(
    p=st.floats(1.0, 500.0),
    k=st.floats(1.0, 10.0),
    model=st.sampled_from(["far-field", "cylindrical", "aperture"]),
)
def test_more_power_never_shrinks_a_keep_out_distance(p, k, model):
    kw = {"aperture_height_m": 1.4} if model == "cylindrical" else {}
    kw = {"diameter_m": 0.6} if model == "aperture" else kw
    lo = _rad(power_w=p, **kw)
    hi = _rad(power_w=p * k, **kw)
    choice = sources.choose_model(lo, model)
    ko_lo = sources.keep_out_distances(lo, choice, 5.0)
    ko_hi = sources.keep_out_distances(hi, choice, 5.0)
    for name in sources.KEEP_OUT_DIRECTIONS:
        assert ko_hi[name] >= ko_lo[name] * (1 - 1e-9), name
