"""Parametric patterns: construction from a site-file table, error messages, broadcasting,
cuts, tilt and peak laws. Published values at given angles are in
tests/validation/test_pattern_models.py."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.constants import DBD_TO_DBI
from siteexposure.errors import PatternError, SiteExposureWarning
from siteexposure.physics.pattern_base import GainPattern
from siteexposure.physics.patterns import (
    PARAMETRIC_MODELS,
    ParametricPattern,
    parametric_pattern,
)

SPECS = {
    "isotropic": {"model": "isotropic"},
    "half-wave-dipole": {"model": "half-wave-dipole"},
    "3gpp-panel": {"model": "3gpp-panel", "gain_dbi": 17.5, "hpbw_h_deg": 65, "hpbw_v_deg": 7,
                   "front_to_back_db": 25, "side_lobe_db": 30},
    "itu-f1336-omni": {"model": "itu-f1336-omni", "gain_dbi": 9.0},
    "itu-f1336-sector": {"model": "itu-f1336-sector", "gain_dbi": 18.0, "hpbw_h_deg": 65},
    "parabolic": {"model": "parabolic", "diameter_m": 0.6},
}
FREQ = {"parabolic": 18_000.0}

PHI = np.deg2rad(np.arange(0.0, 360.0, 0.5))
THETA = np.deg2rad(np.arange(-90.0, 90.001, 0.25))


def make(model, tilt=0.0):
    return parametric_pattern(SPECS[model], electrical_tilt_deg=tilt,
                              frequency_mhz=FREQ.get(model, 1900.0), where="site.toml: antenna 'X'")


def test_every_fixed_name_builds_a_gain_pattern():
    assert set(SPECS) == set(PARAMETRIC_MODELS)
    for model in PARAMETRIC_MODELS:
        p = make(model)
        assert isinstance(p, GainPattern)
        assert isinstance(p, ParametricPattern)
        assert p.name == model
        assert p.source and p.validity
        assert p.__doc__ and "References" in type(p).__doc__


@pytest.mark.parametrize("model", PARAMETRIC_MODELS)
def test_broadcasting_and_linear_values(model):
    p = make(model)
    g = p.gain(PHI[None, :], THETA[:, None])
    assert g.shape == (THETA.size, PHI.size)
    assert np.all(np.isfinite(g)) and np.all(g >= 0.0)
    np.testing.assert_allclose(10 * np.log10(np.maximum(g, 1e-300)),
                               np.maximum(p.gain_dbi(PHI[None, :], THETA[:, None]), -3000),
                               atol=1e-9)
    assert p.gain(0.3, 0.1).shape == ()


@pytest.mark.parametrize("model", PARAMETRIC_MODELS)
def test_peak_gain_is_the_maximum(model):
    p = make(model)
    g = p.gain_dbi(PHI[None, :], THETA[:, None])
    assert g.max() == pytest.approx(p.peak_gain_dbi, abs=0.01)
    assert g.max() <= p.peak_gain_dbi + 1e-9


@pytest.mark.parametrize("model", PARAMETRIC_MODELS)
def test_cuts_agree_with_gain(model):
    p = make(model)
    floor = p.peak_gain_dbi - 100.0  # exact nulls are reported 100 dB down, finite
    np.testing.assert_allclose(p.horizontal_cut(PHI), np.maximum(p.gain_dbi(PHI, 0.0), floor))
    front, back = p.vertical_cut(THETA, side="front"), p.vertical_cut(THETA, side="back")
    assert np.all(np.isfinite(front)) and np.all(np.isfinite(back))
    np.testing.assert_allclose(front, np.maximum(p.gain_dbi(0.0, THETA), floor))
    np.testing.assert_allclose(back, np.maximum(p.gain_dbi(np.pi, THETA), floor))
    with pytest.raises(PatternError, match="side"):
        p.vertical_cut(THETA, side="left")


@pytest.mark.parametrize("model", ["3gpp-panel", "itu-f1336-omni", "itu-f1336-sector"])
@pytest.mark.parametrize("tilt", [3.0, 8.0, -4.0])
def test_electrical_tilt_moves_the_beam_down(model, tilt):
    p = make(model, tilt)
    assert p.electrical_tilt_deg == tilt
    front = p.vertical_cut(THETA, side="front")
    assert np.rad2deg(THETA[np.argmax(front)]) == pytest.approx(-tilt, abs=0.25)
    assert float(p.gain_dbi(0.0, np.deg2rad(-tilt))) == pytest.approx(p.peak_gain_dbi, abs=1e-9)


@pytest.mark.parametrize("model", ["isotropic", "half-wave-dipole", "parabolic"])
def test_tilt_rejected_where_the_model_has_none(model):
    with pytest.raises(PatternError, match=r"site.toml: antenna 'X'.*electrical_tilt_deg = 4"):
        make(model, 4.0)


def test_gain_dbd_is_dbi_minus_215():
    a = parametric_pattern({"model": "3gpp-panel", "gain_dbd": 15.35, "hpbw_h_deg": 65,
                            "hpbw_v_deg": 7})
    assert a.peak_gain_dbi == pytest.approx(15.35 + DBD_TO_DBI)
    assert DBD_TO_DBI == pytest.approx(2.15, abs=0.005)  # common practice


def test_isotropic_with_gain_is_a_uniform_envelope():
    p = parametric_pattern({"model": "isotropic", "gain_dbi": 12.0})
    np.testing.assert_allclose(p.gain_dbi(PHI, 0.3), 12.0)


def test_dipole_shape():
    p = make("half-wave-dipole")
    assert float(p.gain(1.0, 0.0)) == pytest.approx(10 ** (DBD_TO_DBI / 10))
    assert float(p.gain(0.0, np.pi / 2)) == 0.0
    assert float(p.gain(0.0, -np.pi / 2)) == 0.0
    np.testing.assert_allclose(p.gain(PHI, 0.4), float(p.gain(0.0, 0.4)))  # omni in azimuth


@pytest.mark.parametrize(
    ("spec", "kwargs", "pattern"),
    [
        ({"model": "yagi"}, {}, r"where: key 'model' is 'yagi'; expected one of isotropic"),
        ({"gain_dbi": 3}, {}, r"key 'model' is missing"),
        ({"model": "3gpp-panel", "hpbw_h_deg": 65, "hpbw_v_deg": 7}, {},
         r"needs 'gain_dbi' or 'gain_dbd'"),
        ({"model": "3gpp-panel", "gain_dbi": 17, "gain_dbd": 15, "hpbw_h_deg": 65,
          "hpbw_v_deg": 7}, {}, r"both 'gain_dbi' = 17 and 'gain_dbd' = 15"),
        ({"model": "3gpp-panel", "gain_dbi": 17, "hpbw_h_deg": 65}, {},
         r"needs key 'hpbw_v_deg'"),
        ({"model": "3gpp-panel", "gain_dbi": "17", "hpbw_h_deg": 65, "hpbw_v_deg": 7}, {},
         r"key 'gain_dbi' = '17'; expected a peak gain as a number"),
        ({"model": "3gpp-panel", "gain_dbi": 17, "hpbw_h_deg": True, "hpbw_v_deg": 7}, {},
         r"key 'hpbw_h_deg' = True"),
        ({"model": "3gpp-panel", "gain_dbi": 17, "hpbw_h_deg": -5, "hpbw_v_deg": 7}, {},
         r"key 'hpbw_h_deg' = -5; expected an angle in degrees within \(0, 360\]"),
        ({"model": "3gpp-panel", "gain_dbi": float("nan"), "hpbw_h_deg": 65, "hpbw_v_deg": 7},
         {}, r"key 'gain_dbi' = nan"),
        ({"model": "3gpp-panel", "gain_dbi": 17, "hpbw_h_deg": 65, "hpbw_v_deg": 7,
          "tilt": 3}, {}, r"key 'tilt' = 3 is not a key of model '3gpp-panel'"),
        ({"model": "half-wave-dipole", "gain_dbi": 2.15}, {},
         r"key 'gain_dbi' = 2.15 is not a key of model 'half-wave-dipole'; expected no further"),
        ({"model": "itu-f1336-omni", "gain_dbi": 9, "side_lobes": "low"}, {},
         r"key 'side_lobes' = 'low'"),
        ({"model": "itu-f1336-sector", "gain_dbi": 18}, {}, r"needs key 'hpbw_h_deg'"),
        ({"model": "itu-f1336-sector", "gain_dbi": 18, "hpbw_h_deg": 180}, {},
         r"key 'hpbw_h_deg' = 180; expected .*120"),
        ({"model": "itu-f1336-sector", "gain_dbi": 8, "hpbw_h_deg": 90}, {},
         r"theta_3 derived from gain and hpbw_h_deg = 54.59 deg; expected below 22.5"),
        ({"model": "itu-f1336-sector", "gain_dbi": 18, "hpbw_h_deg": 65, "k_v": 2}, {},
         r"key 'k_v' = 2"),
        ({"model": "parabolic"}, {}, r"needs 'diameter_m'"),
        ({"model": "parabolic", "diameter_m": 1.2}, {}, r"diameter_m' = 1.2 needs the operating"),
        ({"model": "parabolic", "diameter_m": 0.1}, {"frequency_mhz": 1000.0},
         r"D/lambda = 0.334"),
        ({"model": "3gpp-panel", "gain_dbi": 17, "hpbw_h_deg": 65, "hpbw_v_deg": 7},
         {"electrical_tilt_deg": 60.0}, r"electrical_tilt_deg' = 60.0; expected a downtilt"),
        ("3gpp-panel", {}, r"is not a table"),
    ],
)
def test_errors_name_where_key_value_and_expectation(spec, kwargs, pattern):
    with pytest.raises(PatternError, match=pattern):
        parametric_pattern(spec, where="where", **kwargs)


def test_out_of_range_frequency_warns():
    with pytest.warns(SiteExposureWarning, match=r"'3gpp-panel' is defined .* 150 MHz"):
        parametric_pattern(SPECS["3gpp-panel"], frequency_mhz=150.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        parametric_pattern(SPECS["3gpp-panel"], frequency_mhz=1900.0)


@settings(max_examples=150, deadline=None)
@given(
    gain=st.floats(0.0, 25.0),
    hpbw_h=st.floats(10.0, 120.0),
    hpbw_v=st.floats(3.0, 60.0),
    fb=st.floats(10.0, 40.0),
    sla=st.floats(10.0, 40.0),
    tilt=st.floats(-10.0, 15.0),
    phi=st.floats(0.0, 2 * np.pi),
    theta=st.floats(-np.pi / 2, np.pi / 2),
)
def test_3gpp_panel_laws(gain, hpbw_h, hpbw_v, fb, sla, tilt, phi, theta):
    """TR 38.901 Table 7.3-1 form: -3 dB at half the HPBW, floor G - A_max, mirror symmetry."""
    p = parametric_pattern({"model": "3gpp-panel", "gain_dbi": gain, "hpbw_h_deg": hpbw_h,
                            "hpbw_v_deg": hpbw_v, "front_to_back_db": fb, "side_lobe_db": sla},
                           electrical_tilt_deg=tilt)
    t = np.deg2rad(-tilt)
    assert float(p.gain_dbi(np.deg2rad(hpbw_h / 2), t)) == pytest.approx(gain - 3.0)
    assert float(p.gain_dbi(0.0, t + np.deg2rad(hpbw_v / 2))) == pytest.approx(gain - 3.0)
    g = float(p.gain_dbi(phi, theta))
    assert gain - fb - 1e-9 <= g <= gain + 1e-9
    assert float(p.gain_dbi(2 * np.pi - phi, theta)) == pytest.approx(g, abs=1e-9)
