"""TablePattern (3-D gain from three cuts), sphere integral and normalisation.

Laws checked: each synthesis method reproduces the input cuts on their planes (the defining
property stated for both methods in 3GPP TR 38.901 Table 7.3-1 and Gil et al., IEEE Antennas
Propag. Mag. 43(2), 2001); the additive rule recovers a separable pattern; the weighted
bilinear result stays within the range of the data; the horizontal cut wraps continuously;
the sphere mean of a constant gain G is G (common practice).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.errors import PatternError
from siteexposure.physics.pattern_base import GainPattern
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.synthesis import (
    SYNTHESIS_METHODS,
    ScaledPattern,
    TablePattern,
    directivity_ratio,
    normalised,
    sample_cuts,
)

H_ANG = np.arange(0.0, 360.0, 10.0)
V_ANG = np.arange(-90.0, 90.001, 10.0)


def consistent_cuts(h, vf, vb):
    """Make three random cuts meet where they share a direction."""
    h, vf, vb = (np.array(x, dtype=float) for x in (h, vf, vb))
    i0 = np.where(V_ANG == 0.0)[0][0]
    vf[i0] = h[0]
    vb[i0] = h[np.where(H_ANG == 180.0)[0][0]]
    vb[0], vb[-1] = vf[0], vf[-1]
    return h, vf, vb


def table(h, vf, vb, method="weighted-bilinear", **kw):
    peak = max(h.max(), vf.max(), vb.max())
    return TablePattern(H_ANG, h, V_ANG, vf, V_ANG, vb, peak_gain_dbi=peak, method=method, **kw)


gains_h = st.lists(st.floats(-40.0, 20.0), min_size=H_ANG.size, max_size=H_ANG.size)
gains_v = st.lists(st.floats(-40.0, 20.0), min_size=V_ANG.size, max_size=V_ANG.size)


@settings(max_examples=60, deadline=None)
@given(gains_h, gains_v, gains_v, st.sampled_from(SYNTHESIS_METHODS))
def test_cuts_reproduced_on_their_planes(h, vf, vb, method):
    h, vf, vb = consistent_cuts(h, vf, vb)
    p = table(h, vf, vb, method)
    phi = np.deg2rad(np.linspace(0.0, 359.9, 721))
    el = np.linspace(-90.0, 90.0, 361)
    np.testing.assert_allclose(p.gain_dbi(phi, 0.0), np.interp(np.rad2deg(phi), H_ANG, h,
                                                                period=360), atol=1e-9)
    np.testing.assert_allclose(p.gain_dbi(0.0, np.deg2rad(el)), np.interp(el, V_ANG, vf),
                               atol=1e-9)
    np.testing.assert_allclose(p.gain_dbi(np.pi, np.deg2rad(el)), np.interp(el, V_ANG, vb),
                               atol=1e-9)
    np.testing.assert_allclose(p.horizontal_cut(phi), p.gain_dbi(phi, 0.0), atol=1e-9)
    np.testing.assert_allclose(p.vertical_cut(np.deg2rad(el), "back"), np.interp(el, V_ANG, vb),
                               atol=1e-9)


@settings(max_examples=60, deadline=None)
@given(gains_h, gains_v, gains_v, st.floats(0.0, 2 * np.pi), st.floats(-np.pi / 2, np.pi / 2))
def test_weighted_bilinear_stays_within_the_data(h, vf, vb, phi, theta):
    h, vf, vb = consistent_cuts(h, vf, vb)
    p = table(h, vf, vb)
    lo = min(h.min(), vf.min(), vb.min())
    hi = max(h.max(), vf.max(), vb.max())
    g = float(p.gain_dbi(phi, theta))
    assert lo - 1e-9 <= g <= hi + 1e-9
    pa = table(h, vf, vb, "additive")
    assert float(pa.gain_dbi(phi, theta)) >= lo - 1e-9  # the A_m-like floor


@settings(max_examples=60, deadline=None)
@given(gains_h, gains_v, gains_v, st.floats(-np.pi / 2, np.pi / 2),
       st.sampled_from(SYNTHESIS_METHODS))
def test_wrap_around_continuity(h, vf, vb, theta, method):
    h, vf, vb = consistent_cuts(h, vf, vb)
    p = table(h, vf, vb, method)
    eps = 1e-7
    a, b = float(p.gain_dbi(eps, theta)), float(p.gain_dbi(2 * np.pi - eps, theta))
    assert a == pytest.approx(b, abs=1e-4)
    assert float(p.gain_dbi(0.3 + 2 * np.pi, theta)) == pytest.approx(float(p.gain_dbi(0.3, theta)))
    assert float(p.gain_dbi(-0.3, theta)) == pytest.approx(float(p.gain_dbi(2 * np.pi - 0.3, theta)))


@settings(max_examples=60, deadline=None)
@given(gains_h, st.floats(0.0, 360.0))
def test_horizontal_interpolation_between_neighbours(h, phi_deg):
    h = np.array(h)
    i = int(np.floor(phi_deg / 10.0)) % H_ANG.size
    j = (i + 1) % H_ANG.size
    vf = np.full(V_ANG.size, h[0])
    vb = np.full(V_ANG.size, h[18])
    vb[0] = vb[-1] = vf[0]  # the poles are shared by both vertical cuts
    p = table(h, vf, vb)
    g = float(p.horizontal_cut(np.deg2rad(phi_deg)))
    assert min(h[i], h[j]) - 1e-9 <= g <= max(h[i], h[j]) + 1e-9


def test_additive_recovers_a_separable_pattern():
    """G = h(phi) v(theta) in linear terms (a sum in dB) is recovered off the poles.

    The data carry a floor of -50 dBi that only the pole samples reach, so that the front and
    back cuts meet at the zenith and nadir as a physical pattern must."""
    h = 6.0 - 10.0 * (1 - np.cos(np.deg2rad(H_ANG)))  # dB, 6 .. -14 dBi
    v = np.where(np.abs(V_ANG) <= 80.0, -0.002 * V_ANG**2, -60.0)  # dB, 0 at the horizon
    vf = np.maximum(h[0] + v, -50.0)
    vb = np.maximum(h[18] + v, -50.0)
    p = TablePattern(H_ANG, h, V_ANG, vf, V_ANG, vb, peak_gain_dbi=6.0, method="additive")
    phi = np.deg2rad(np.arange(0.0, 360.0, 7.3))[None, :]
    el = np.arange(-80.0, 80.1, 3.7)[:, None]
    expect = np.interp(np.rad2deg(phi), H_ANG, h, period=360) + np.interp(el, V_ANG, v)
    np.testing.assert_allclose(p.gain_dbi(phi, np.deg2rad(el)), expect, atol=1e-9)


def test_weighted_bilinear_on_the_pole_mixes_in_the_horizontal_cut():
    """At the zenith the vertical cuts rule on their own planes; across the sides the horizontal
    cut at phi and phi + 180 weighs in equally (W_A = 45 = W_E at phi = 90)."""
    rng = np.random.default_rng(1)
    h, vf, vb = consistent_cuts(rng.uniform(-30, 15, H_ANG.size), rng.uniform(-30, 15, V_ANG.size),
                                rng.uniform(-30, 15, V_ANG.size))
    p = table(h, vf, vb)
    assert float(p.gain_dbi(0.0, np.pi / 2)) == pytest.approx(vf[-1])
    assert float(p.gain_dbi(np.pi, np.pi / 2)) == pytest.approx(vb[-1])
    side = 0.5 * (0.5 * (vf[-1] + vb[-1])) + 0.5 * (0.5 * (h[9] + h[27]))
    assert float(p.gain_dbi(np.pi / 2, np.pi / 2)) == pytest.approx(side)


def test_broadcasting_and_attributes():
    rng = np.random.default_rng(2)
    h, vf, vb = consistent_cuts(rng.uniform(-30, 15, H_ANG.size), rng.uniform(-30, 15, V_ANG.size),
                                rng.uniform(-30, 15, V_ANG.size))
    p = table(h, vf, vb, name="t", source="mem", electrical_tilt_deg=2.0, frequency_mhz=900.0)
    assert isinstance(p, GainPattern)
    assert p.gain(np.zeros((4, 1)), np.zeros((1, 5))).shape == (4, 5)
    assert p.gain(0.1, 0.2).shape == ()
    assert (p.name, p.source, p.electrical_tilt_deg, p.frequency_mhz) == ("t", "mem", 2.0, 900.0)
    with pytest.raises(ValueError):
        p.h_gain_dbi[0] = 0.0  # read-only cuts
    for attr in ("h_angle_deg", "h_gain_dbi", "v_front_elev_deg", "v_front_gain_dbi",
                 "v_back_elev_deg", "v_back_gain_dbi"):
        assert getattr(p, attr).ndim == 1


def test_unsorted_input_and_360_only():
    order = np.random.default_rng(3).permutation(H_ANG.size)
    h = np.zeros(H_ANG.size)
    ang = H_ANG.copy()
    ang[0] = 360.0  # 360 given instead of 0
    p = TablePattern(ang[order], h[order], V_ANG[::-1], np.zeros(V_ANG.size), V_ANG,
                     np.zeros(V_ANG.size), peak_gain_dbi=0.0)
    assert p.h_angle_deg[0] == 0.0 and np.all(np.diff(p.h_angle_deg) > 0)
    assert np.all(np.diff(p.v_front_elev_deg) > 0)


def _zero_cuts():
    return (H_ANG, np.zeros(H_ANG.size), V_ANG, np.zeros(V_ANG.size), V_ANG, np.zeros(V_ANG.size))


@pytest.mark.parametrize(
    ("change", "kw", "pattern"),
    [
        ({1: np.zeros(3)}, {}, r"horizontal cut has 36 angles but 3 gains"),
        ({3: np.r_[np.nan, np.zeros(V_ANG.size - 1)]}, {}, r"front vertical cut holds NaN"),
        ({0: np.r_[0.0, 0.0, H_ANG[2:]]}, {}, r"horizontal cut has angle 0 deg twice"),
        ({0: np.r_[H_ANG[:-1], 370.0]}, {}, r"span 0..370 deg; expected 0..360"),
        ({2: V_ANG[1:], 3: np.zeros(V_ANG.size - 1)}, {}, r"front vertical cut spans -80..90"),
        ({5: np.r_[np.zeros(V_ANG.size - 1), 5.0]}, {"peak_gain_dbi": 5.0},
         r"at the zenith the front vertical cut gives 0.00 dBi and the back vertical cut 5.00"),
        ({3: np.where(V_ANG == 0, 3.0, 0.0)}, {"peak_gain_dbi": 3.0}, r"at the boresight"),
        ({}, {"peak_gain_dbi": 2.0}, r"peak_gain_dbi = 2.0 but the largest gain in the cuts is 0.00"),
        ({}, {"method": "spline"}, r"method 'spline' is unknown; expected one of additive"),
        ({0: np.r_[H_ANG, 360.0], 1: np.r_[np.zeros(H_ANG.size), 0.5]}, {},
         r"0 deg and 0.5 dBi at 360 deg"),
    ],
)
def test_constructor_errors(change, kw, pattern):
    args = list(_zero_cuts())
    for i, v in change.items():
        args[i] = v
    kwargs = {"peak_gain_dbi": 0.0, "name": "demo"} | kw
    with pytest.raises(PatternError, match=pattern):
        TablePattern(*args, **kwargs)


def test_directivity_of_constant_patterns():
    p0 = TablePattern(*_zero_cuts(), peak_gain_dbi=0.0)
    assert directivity_ratio(p0) == pytest.approx(1.0, rel=1e-12)
    h, vf, vb = (np.full(a.size, 3.0) for a in (H_ANG, V_ANG, V_ANG))
    p3 = TablePattern(H_ANG, h, V_ANG, vf, V_ANG, vb, peak_gain_dbi=3.0, method="additive")
    assert directivity_ratio(p3) == pytest.approx(10**0.3, rel=1e-12)


def test_quadrature_converges_for_a_narrow_beam():
    """A 1 deg wide Gaussian-like beam integrates alike with default and doubled nodes."""
    dish = parametric_pattern({"model": "parabolic", "gain_dbi": 44.0})
    a = directivity_ratio(dish)
    b = directivity_ratio(dish, n_theta=96, n_phi=96)
    assert a == pytest.approx(b, rel=1e-4)


def test_normalised_table_and_parametric():
    rng = np.random.default_rng(4)
    h, vf, vb = consistent_cuts(rng.uniform(-20, 15, H_ANG.size), rng.uniform(-20, 15, V_ANG.size),
                                rng.uniform(-20, 15, V_ANG.size))
    p = table(h, vf, vb, name="rnd")
    k = directivity_ratio(p)
    n = normalised(p)
    assert isinstance(n, TablePattern)
    assert n.peak_gain_dbi == pytest.approx(p.peak_gain_dbi - 10 * np.log10(k))
    assert directivity_ratio(n) == pytest.approx(1.0, rel=1e-9)
    assert "normalised" in n.name
    panel = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17, "hpbw_h_deg": 65,
                                "hpbw_v_deg": 7})
    m = normalised(panel)
    assert isinstance(m, ScaledPattern) and isinstance(m, GainPattern)
    assert directivity_ratio(m) == pytest.approx(1.0, rel=1e-9)
    np.testing.assert_allclose(m.horizontal_cut(np.array([0.0, 1.0])),
                               panel.horizontal_cut(np.array([0.0, 1.0])) + m.peak_gain_dbi - 17.0)


def test_sample_cuts_floors_nulls_and_feeds_table_pattern():
    dip = parametric_pattern({"model": "half-wave-dipole"})
    cuts = sample_cuts(dip, h_step_deg=5.0, v_step_deg=2.0, floor_db=60.0)
    assert cuts["v_front_elev_deg"][0] == -90.0 and cuts["v_front_elev_deg"][-1] == 90.0
    assert cuts["v_front_gain_dbi"][-1] == pytest.approx(cuts["peak_gain_dbi"] - 60.0)
    t = TablePattern(**{k: v for k, v in cuts.items() if k != "peak_gain_dbi"},
                     peak_gain_dbi=cuts["peak_gain_dbi"])
    assert t.peak_gain_dbi == pytest.approx(dip.peak_gain_dbi)


@settings(max_examples=80, deadline=None)
@given(st.lists(st.integers(-900_000, 900_000), min_size=2, max_size=60, unique=True),
       st.integers(0, 2**32 - 1), st.booleans(), st.booleans())
def test_fast_lookup_equals_numpy_interp(angles, seed, periodic, force_slow):
    """The O(1) segment lookup gives numpy.interp's values (clamped or wrapped) exactly."""
    from siteexposure.physics.synthesis import _Lerp

    xp = np.sort(np.array(angles) * 1e-4) + (90.0 if periodic else 0.0)  # 1e-4 deg steps
    rng = np.random.default_rng(seed)
    fp = rng.normal(size=xp.size)
    lerp = _Lerp(xp, fp, period=360.0 if periodic else None)
    if force_slow:
        lerp.fast = False
    x = np.concatenate([rng.uniform(-400.0, 400.0, 2000), xp])
    ref = np.interp(x, xp, fp, period=360.0) if periodic else np.interp(x, xp, fp)
    np.testing.assert_allclose(lerp(x), ref, rtol=0, atol=1e-12)
