"""Unit tests of the array-synthesis model (siteexposure.physics.array).

Sources: C. A. Balanis, Antenna Theory, 4th ed., Wiley, 2016 -- sec. 4.6 (half-wave dipole,
directivity 1.643), sec. 6.3 (progressive phase steers a linear array's beam), sec. 2.2.4
(reactive near-field radius 0.62 sqrt(D^3/lambda)); 3GPP TR 38.901 V17.0.0 Table 7.3-1
(the element pattern used as input). Equation numbers from memory.
"""

from __future__ import annotations

import numpy as np
import pytest

from siteexposure.constants import C0
from siteexposure.errors import InputError
from siteexposure.physics.array import ArraySynthesis, array_power_density
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.radiator import Radiator
from siteexposure.physics.synthesis import normalised

F_HZ = 1.9e9
LAM = C0 / F_HZ


def _panel(tilt_deg=0.0, power_w=20.0, height_m=1.3, azimuth_deg=0.0):
    spec = {"model": "3gpp-panel", "gain_dbi": 16.0, "hpbw_h_deg": 65, "hpbw_v_deg": 8}
    pat = normalised(parametric_pattern(spec, electrical_tilt_deg=tilt_deg))
    return Radiator(position_m=np.array([1.0, 2.0, 10.0]), azimuth_deg=azimuth_deg,
                    mechanical_tilt_deg=0.0, electrical_tilt_deg=tilt_deg, frequency_hz=F_HZ,
                    power_w=power_w, pattern=pat, aperture_height_m=height_m,
                    aperture_width_m=0.3)


def _dipole(power_w=1.0):
    pat = parametric_pattern({"model": "half-wave-dipole"})
    return Radiator(position_m=np.zeros(3), azimuth_deg=0.0, mechanical_tilt_deg=0.0,
                    electrical_tilt_deg=0.0, frequency_hz=F_HZ, power_w=power_w, pattern=pat,
                    aperture_height_m=0.5 * LAM)


def _sphere(center, r, n_el=181, n_az=120):
    """Midpoint grid on a sphere: points [m] and solid-angle weights [sr]."""
    el = (np.arange(n_el) + 0.5) * np.pi / n_el - np.pi / 2
    az = (np.arange(n_az) + 0.5) * 2 * np.pi / n_az
    e, a = np.meshgrid(el, az, indexing="ij")
    d = np.stack([np.cos(e) * np.sin(a), np.cos(e) * np.cos(a), np.sin(e)], -1)
    w = np.cos(e) * (np.pi / n_el) * (2 * np.pi / n_az)
    return center + r * d.reshape(-1, 3), w.ravel()


def test_radiated_power_equals_input_power():
    """Flux of the density through a far sphere equals P (energy conservation), within 2 %."""
    rad = _panel(power_w=20.0)
    arr = ArraySynthesis.from_radiator(rad)
    r = 3.0 * arr.far_field_range_m
    pts, w = _sphere(rad.position_m, r, n_el=721, n_az=90)
    s, ok = arr.power_density(pts)
    assert ok.all()
    p = float(np.sum(s * w) * r**2)
    assert p == pytest.approx(20.0, rel=0.02)


def test_far_field_gain_integrates_to_4pi():
    """The model's own far-field gain integrates to 4 pi over the sphere (within 1 %)."""
    arr = ArraySynthesis.from_radiator(_panel(tilt_deg=4.0))
    el = (np.arange(1441) + 0.5) * np.pi / 1441 - np.pi / 2
    phi = (np.arange(180) + 0.5) * 2 * np.pi / 180
    g = arr.far_field_gain(phi[None, :], el[:, None])
    total = np.sum(g * np.cos(el)[:, None]) * (np.pi / 1441) * (2 * np.pi / 180)
    assert total == pytest.approx(4 * np.pi, rel=0.01)


@pytest.mark.parametrize("make", [_panel, _dipole])
def test_far_field_limit_reproduces_peak_gain(make):
    """Far out on the beam, S = P G / (4 pi r^2) with the pattern's peak gain (within 0.5 dB).

    Dipole: 2.15 dBi (Balanis 4th ed. sec. 4.6); panel: the normalised TR 38.901 pattern.
    """
    rad = make()
    arr = ArraySynthesis.from_radiator(rad)
    r = 5.0 * arr.far_field_range_m
    el = np.deg2rad(np.linspace(-20, 20, 801))
    pts = rad.position_m + r * np.stack([0 * el, np.cos(el), np.sin(el)], -1)  # azimuth 0 = north
    s, ok = arr.power_density(pts)
    g_peak_db = 10 * np.log10(s.max() * 4 * np.pi * r**2 / rad.power_w)
    assert abs(g_peak_db - rad.pattern.peak_gain_dbi) <= 0.5
    assert abs(arr.far_field_peak_gain_dbi - rad.pattern.peak_gain_dbi) <= 0.5


@pytest.mark.parametrize("case", ["collinear", "panel", "panel_tilt6"])
def test_far_field_limit_follows_the_pattern_on_its_cuts(case):
    """Within 20 dB of the peak, the far-field limit follows the cuts of a physically
    realisable pattern (PyNEC reference cases, tests/data/nec) within 1 dB."""
    from pathlib import Path

    from siteexposure.readers.pattern_csv import read_pattern_csv

    data = Path(__file__).resolve().parents[1] / "data" / "nec"
    pat = read_pattern_csv(data / f"{case}.csv")
    height = {"collinear": 2.9, "panel": 6.6, "panel_tilt6": 6.6}[case]
    lam = C0 / (pat.frequency_mhz * 1e6)
    rad = Radiator(position_m=np.zeros(3), azimuth_deg=0.0, mechanical_tilt_deg=0.0,
                   electrical_tilt_deg=pat.electrical_tilt_deg, frequency_hz=pat.frequency_mhz * 1e6,
                   power_w=1.0, pattern=pat, aperture_height_m=height * lam)
    arr = ArraySynthesis.from_radiator(rad)
    el = np.deg2rad(np.arange(-90.0, 90.5, 0.5))
    phi = np.deg2rad(np.arange(0.0, 360.0, 5.0))
    gv, pv = arr.far_field_gain(0.0, el), pat.gain(0.0, el)
    gh, ph = arr.far_field_gain(phi, 0.0), pat.gain(phi, 0.0)
    for g, p in ((gv, pv), (gh, ph)):
        sel = p >= p.max() / 100
        assert np.max(np.abs(10 * np.log10(g[sel] / p[sel]))) <= 1.0


@pytest.mark.parametrize("case", ["collinear", "panel", "panel_tilt6"])
def test_far_field_limit_is_the_patterns_own_3d_gain_off_the_cuts(case):
    """Off the cut planes too, the far-field limit is the pattern's own synthesised 3-D gain
    (3GPP TR 38.901 Table 7.3-1 additive rule of the reader) within 0.5 dB wherever that is
    within 20 dB of the peak, at the whole-degree elevations the files sample (between them
    the file is linear in dB, the column is not) (PyNEC reference pattern files,
    tests/data/nec)."""
    from pathlib import Path

    from siteexposure.readers.pattern_csv import read_pattern_csv

    data = Path(__file__).resolve().parents[1] / "data" / "nec"
    pat = read_pattern_csv(data / f"{case}.csv")
    height = {"collinear": 2.9, "panel": 6.6, "panel_tilt6": 6.6}[case]
    lam = C0 / (pat.frequency_mhz * 1e6)
    rad = Radiator(position_m=np.zeros(3), azimuth_deg=0.0, mechanical_tilt_deg=0.0,
                   electrical_tilt_deg=pat.electrical_tilt_deg, frequency_hz=pat.frequency_mhz * 1e6,
                   power_w=1.0, pattern=pat, aperture_height_m=height * lam)
    arr = ArraySynthesis.from_radiator(rad)
    phi, el = np.meshgrid(np.deg2rad(np.arange(0.0, 360.0, 7.0)),
                          np.deg2rad(np.arange(-87.0, 90.0, 3.0)))
    g, p = arr.far_field_gain(phi, el), pat.gain(phi, el)
    sel = p >= p.max() / 100
    assert np.max(np.abs(10 * np.log10(g[sel] / p[sel]))) <= 0.5


@pytest.mark.parametrize("tilt", [0.0, 6.0, 10.0])
def test_electrical_tilt_moves_the_beam_by_the_tilt(tilt):
    """Progressive phase k z sin(t) points the beam t below the horizon (Balanis sec. 6.3)."""
    rad = _panel(tilt_deg=tilt)
    arr = ArraySynthesis.from_radiator(rad)
    assert arr.electrical_tilt_deg == tilt
    r = 5.0 * arr.far_field_range_m
    el = np.deg2rad(np.arange(-20.0, 20.0, 0.05))
    pts = rad.position_m + r * np.stack([0 * el, np.cos(el), np.sin(el)], -1)
    s, _ = arr.power_density(pts)
    assert np.rad2deg(el[np.argmax(s)]) == pytest.approx(-tilt, abs=0.3)


def test_density_is_linear_in_power_and_superposes():
    """Density scales with P; the sum over two radiators equals the radiators summed."""
    pts = np.array([[0.0, 3.0, 10.0], [2.0, 1.0, 12.0], [-4.0, -3.0, 8.0], [1.0, 40.0, 10.0]])
    s1, _ = array_power_density(_panel(power_w=5.0), pts)
    s2, _ = array_power_density(_panel(power_w=15.0), pts)
    s3, _ = array_power_density(_panel(power_w=20.0), pts)
    np.testing.assert_allclose(s2, 3.0 * s1, rtol=1e-9)
    np.testing.assert_allclose(s1 + s2, s3, rtol=1e-9)


def test_rotation_of_the_antenna_rotates_the_field():
    """Turning the antenna by 90 deg and the points with it leaves the density unchanged."""
    pts = np.array([[0.3, 4.0, 10.5], [3.0, 3.0, 9.0], [-5.0, 1.0, 11.0]])
    s0, _ = array_power_density(_panel(azimuth_deg=0.0), pts)
    d = pts - np.array([1.0, 2.0, 10.0])
    rot = np.stack([d[:, 1], -d[:, 0], d[:, 2]], -1) + np.array([1.0, 2.0, 10.0])
    s1, _ = array_power_density(_panel(azimuth_deg=90.0), rot)
    np.testing.assert_allclose(s1, s0, rtol=1e-6)


def test_only_the_standoff_of_the_body_is_not_assessable():
    """The Fresnel radius 0.62 sqrt(D^3/lambda) (Balanis sec. 2.2.4) is no longer a refusal
    rule: beside the panel's face, between lambda/2pi and that radius, the model answers;
    within lambda/2pi of the body (the dispatcher's stand-off) it does not."""
    from siteexposure.physics.regions import fresnel_boundary_m, standoff_m
    from siteexposure.physics.sources import choose_model, power_density

    rad = _panel(height_m=1.3)
    r_fresnel = fresnel_boundary_m(1.3, LAM)
    assert r_fresnel == pytest.approx(0.62 * np.sqrt(1.3**3 / LAM)) and r_fresnel > 0.5
    so = standoff_m(LAM)
    pts = rad.position_m + np.array([[0.0, 0.98 * so, 0.0], [0.0, 0.5 * r_fresnel, 0.0],
                                     [0.0, 0.0, 0.65 + 0.5 * so], [0.0, 0.0, 0.65 + 1.5 * so]])
    s, ok = power_density(rad, choose_model(rad, "array"), pts)
    assert ok.tolist() == [False, True, False, True]
    assert np.isnan(s[0]) and np.isnan(s[2]) and np.all(np.isfinite(s[[1, 3]]))


def test_points_hugging_the_column_are_not_assessable():
    """Beside a short dipole, closer than lambda/(2 pi) to the column: not assessable."""
    rad = _dipole()
    pts = np.array([[0.0, 0.10 * LAM, 0.0], [0.0, 0.30 * LAM, 0.0], [0.0, 0.0, 0.3 * LAM]])
    s, ok = array_power_density(rad, pts)
    assert ok.tolist() == [False, True, False]
    assert np.isfinite(s[1])


def test_vectorised_shapes_and_chunks():
    """Any leading shape works; chunked evaluation equals point-by-point evaluation."""
    rad = _panel()
    arr = ArraySynthesis.from_radiator(rad)
    rng = np.random.default_rng(1)
    pts = rad.position_m + rng.uniform(-30, 30, size=(4, 50, 3))
    s, ok = arr.power_density(pts)
    assert s.shape == ok.shape == (4, 50)
    one = np.array([arr.power_density(p)[0] for p in pts.reshape(-1, 3)]).reshape(4, 50)
    np.testing.assert_allclose(s, one, rtol=1e-10, equal_nan=True)


def test_missing_aperture_height_is_an_input_error():
    rad = _panel()
    bad = Radiator(position_m=rad.position_m, azimuth_deg=0.0, mechanical_tilt_deg=0.0,
                   electrical_tilt_deg=0.0, frequency_hz=F_HZ, power_w=1.0, pattern=rad.pattern)
    with pytest.raises(InputError, match="aperture height_m"):
        ArraySynthesis.from_radiator(bad)


@pytest.mark.parametrize("tilt", [0.0, 6.0])
def test_a_cut_without_nulls_keeps_a_real_taper(tilt):
    """The quadratic aperture phase of the taper fit is only for cuts with nulls: the
    3GPP TR 38.901 Table 7.3-1 vertical form falls monotonically to its side-lobe floor
    (no nulls), so the column keeps a real taper; its moments carry only the phase
    progression k z sin(tilt) of the electrical tilt (Balanis sec. 6.3)."""
    arr = ArraySynthesis.from_radiator(_panel(tilt_deg=tilt))
    k = 2 * np.pi / arr.wavelength_m
    taper = arr.moments * np.exp(-1j * k * arr.z_m * np.sin(np.deg2rad(tilt)))
    assert np.max(np.abs(np.imag(taper))) <= 1e-9 * np.max(np.abs(taper))


def test_filled_nulls_of_a_collinear_fill_further_towards_the_antenna():
    """PyNEC collinear (tests/data/nec): its cut has nulls, so the taper gets a quadratic
    phase with the sign of the near-field term (Fresnel approximation, Balanis 4th ed. sec.
    4.4.2, from memory): in and beside the first null (el 18.5 and 20 deg) the column's
    density times r^2 grows steadily from 100 R_ff (far field) in to R_ff, never dipping
    below its far-field value as the conjugate (focusing) sign would."""
    from pathlib import Path

    from siteexposure.readers.pattern_csv import read_pattern_csv

    pat = read_pattern_csv(Path(__file__).resolve().parents[1] / "data" / "nec" / "collinear.csv")
    lam = C0 / (pat.frequency_mhz * 1e6)
    rad = Radiator(position_m=np.zeros(3), azimuth_deg=0.0, mechanical_tilt_deg=0.0,
                   electrical_tilt_deg=0.0, frequency_hz=pat.frequency_mhz * 1e6, power_w=1.0,
                   pattern=pat, aperture_height_m=2.9 * lam)
    arr = ArraySynthesis.from_radiator(rad)
    assert np.max(np.abs(np.imag(arr.moments))) > 0.01 * np.max(np.abs(arr.moments))
    r = arr.far_field_range_m * np.array([100.0, 4.0, 3.0, 2.0, 1.5, 1.0])
    for el in np.deg2rad([18.5, 20.0]):
        s = arr._density(r * np.cos(el), r * np.sin(el)) * r**2
        assert np.all(np.diff(s) > 0)


def test_the_same_pattern_read_twice_is_fitted_once():
    """The column-shape memo is keyed by the values the fit reads: a second copy of the same
    pattern file (as a batch reads it for every site) reuses the first fit; another pattern,
    frequency or height does not."""
    from pathlib import Path

    from siteexposure.physics import array as arr
    from siteexposure.readers.pattern_csv import read_pattern_csv

    data = Path(__file__).resolve().parents[1] / "data" / "nec"
    one = read_pattern_csv(data / "panel_tilt6.csv")
    two = read_pattern_csv(data / "panel_tilt6.csv")
    other = read_pattern_csv(data / "panel.csv")
    from siteexposure.physics.cache import ModelCache

    assert one is not two
    cache = ModelCache()
    first = arr._column_shape(one, 1900e6, 1.04, 6.0, cache)
    assert arr._column_shape(two, 1900e6, 1.04, 6.0, cache) is first
    assert arr._column_shape(other, 1900e6, 1.04, 0.0, cache) is not first
    assert arr._column_shape(two, 1800e6, 1.04, 6.0, cache) is not first
    assert arr._column_shape(two, 1900e6, 0.9, 6.0, cache) is not first
    # the memo is the engine's object, not a module global: a new cache fits again
    assert arr._column_shape(one, 1900e6, 1.04, 6.0, ModelCache()) is not first


@pytest.mark.parametrize("hpbw_v, f_mhz, h, tilt", [
    (9.47, 1950.0, 1.4, 0.0), (9.47, 1950.0, 1.4, 6.0), (6.5, 1950.0, 1.3, 10.0),
    (11.0, 740.0, 1.8, 6.0), (15.0, 700.0, 1.2, 0.0), (12.0, 3500.0, 0.6, 6.0),
    (4.5, 1800.0, 2.0, 0.0),
])
def test_far_field_reproduces_a_3gpp_panel_and_never_falls_below_it(hpbw_v, f_mhz, h, tilt):
    """Issue 3: the array model "must reproduce the antenna's far-field gain and pattern".
    Against the 3GPP TR 38.901 Table 7.3-1 element pattern (V17.0.0; the parametric model of
    tests/validation/test_pattern_models.py): in the vertical plane through boresight, within
    10 dB of the peak, the model's far field has the pattern's shape to 0.2 dB and is never
    more than 0.05 dB below it. (A uniform-start taper fit alone put nulls of -40 dB into
    this main beam for 9.47 deg on 1.4 m at 1950 MHz and for 12 deg on 0.6 m at 3500 MHz.)"""
    from siteexposure.physics.sources import choose_model, power_density

    pat = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65.0,
                              "hpbw_v_deg": hpbw_v}, frequency_mhz=f_mhz,
                             electrical_tilt_deg=tilt, where="test")
    rad = Radiator(np.zeros(3), 0.0, 0.0, tilt, f_mhz * 1e6, 1.0, pat, aperture_height_m=h)
    el = np.deg2rad(np.arange(-60.0, 60.01, 0.25))
    pts = 2000.0 * np.column_stack([0.0 * el, np.cos(el), np.sin(el)])  # north = boresight
    s_arr, _ = power_density(rad, choose_model(rad, "array"), pts)
    s_ff, _ = power_density(rad, choose_model(rad, "far-field"), pts)
    d = 10.0 * np.log10(s_arr / s_ff)[s_ff >= 0.1 * s_ff.max()]
    assert d.min() >= -0.05, f"{d.min():+.2f} dB"
    assert d.max() - d.min() <= 0.2, f"{d.min():+.2f}..{d.max():+.2f} dB"


def test_a_pattern_claiming_more_gain_than_its_beam_allows_is_taken_at_its_word():
    """17 dBi with 65 x 15 deg half-power beamwidths integrates to more than 4 pi (3GPP
    TR 38.901 form): normalising to the input power would put the model's peak 1.4 dB below
    the stated gain; the model keeps the stated peak and radiates more (conservative)."""
    pat = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65.0,
                              "hpbw_v_deg": 15.0}, frequency_mhz=700.0, where="test")
    rad = Radiator(np.zeros(3), 0.0, 0.0, 0.0, 700e6, 10.0, pat, aperture_height_m=1.2)
    model = ArraySynthesis.from_radiator(rad)
    assert 1.2 < model.radiated_power_ratio < 1.6
    assert abs(model.far_field_peak_gain_dbi - 17.0) < 0.05


def test_far_field_follows_a_reference_envelope_at_the_correction_nodes():
    """ITU-R F.1336 (omni, 11 dBi, 4 deg electrical tilt; the parametric model checked in
    tests/validation/test_pattern_models.py): its smooth side-lobe envelope is not the
    pattern of any column with a real taper, so the far field follows it through the
    uncapped correction C(el): at every whole degree within 10 dB of the peak the array
    model equals the pattern (it was up to 3 dB under it with C capped at +-3 dB)."""
    from siteexposure.physics.sources import choose_model, power_density

    pat = parametric_pattern({"model": "itu-f1336-omni", "gain_dbi": 11.0}, frequency_mhz=1900.0,
                             electrical_tilt_deg=4.0, where="test")
    rad = Radiator(np.zeros(3), 0.0, 0.0, 4.0, 1900e6, 1.0, pat, aperture_height_m=1.0)
    el = np.deg2rad(np.arange(-40.0, 40.5, 1.0))
    pts = 5000.0 * np.column_stack([0.0 * el, np.cos(el), np.sin(el)])
    s_arr, _ = power_density(rad, choose_model(rad, "array"), pts)
    s_ff, _ = power_density(rad, choose_model(rad, "far-field"), pts)
    sel = s_ff >= 0.1 * s_ff.max()
    d = 10.0 * np.log10(s_arr / s_ff)[sel]
    assert sel.sum() >= 15 and np.max(np.abs(d)) <= 0.05, f"{d.min():+.2f}..{d.max():+.2f} dB"


def test_the_model_record_says_when_an_array_radiates_more_than_its_input_power():
    """The same 17 dBi / 65 x 15 deg pattern (3GPP TR 38.901 form): once the array model is
    built, its record says by how much it radiates more than the input power; a pattern
    that integrates to less than 4 pi gets no such sentence."""
    from siteexposure.physics.sources import choose_model, model_notes

    for hpbw_v, expect in ((15.0, True), (6.5, False)):
        pat = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65.0,
                                  "hpbw_v_deg": hpbw_v}, frequency_mhz=700.0, where="test")
        rad = Radiator(np.zeros(3), 0.0, 0.0, 0.0, 700e6, 10.0, pat, aperture_height_m=1.2)
        notes = model_notes(rad, choose_model(rad, "auto"))
        assert any("% more than the input power" in n for n in notes) == expect


def test_an_envelope_pattern_does_not_make_the_near_field_radiate_many_times_its_power():
    """A 14 dBi ITU-R F.1336 omni envelope (ITU-R F.1336-5, omni reference pattern) on a 20 m
    column at 600 MHz: the power flowing out through a cylinder about the antenna at 30 m and
    100 m (in its radiating near field, R_ff = 1.6 km) is at least 80 % of the input power and
    at most 15 % above what the model says it radiates (the input power times its recorded
    excess, kept to honour the stated peak gain of an envelope that integrates to 2.2 x 4 pi).
    Before the main-beam-first refit it was 12 x the input power (issue 12)."""
    from siteexposure.physics.sources import choose_model, field_densities, model_notes

    pat = parametric_pattern({"model": "itu-f1336-omni", "gain_dbi": 14.0}, frequency_mhz=600.0)
    rad = Radiator(np.zeros(3), 0.0, 0.0, 0.0, 600e6, 100.0, pat, aperture_height_m=20.0)
    choice = choose_model(rad, "array")
    notes = model_notes(rad, choice)
    ratio = choice.prepared["model"][1].built.radiated_power_ratio
    assert any("more than the input power" in n for n in notes) == (ratio > 1.001)
    z = np.linspace(-3000.0, 3000.0, 6001)
    th = np.linspace(0.0, 2 * np.pi, 8, endpoint=False)
    for radius in (30.0, 100.0):
        zz, tt = np.meshgrid(z, th, indexing="ij")
        pts = np.stack([radius * np.cos(tt), radius * np.sin(tt), zz], -1).reshape(-1, 3)
        s = field_densities(rad, choice, pts).fields.s.reshape(zz.shape)
        cos_r = radius / np.hypot(radius, zz)  # outward share of a wave from the centre
        flux = np.sum(s * cos_r) * (z[1] - z[0]) * 2 * np.pi * radius / th.size
        assert 0.8 * 100.0 <= flux <= 1.15 * ratio * 100.0, (radius, flux / 100.0, ratio)
