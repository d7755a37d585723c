"""The full-sphere 3-D table of pattern CSV v1: reader, writer, interpolation, and its use.

Round trip, bilinear interpolation in dB (exact at the nodes, periodic in azimuth, poles one
direction), one error naming the file and the line for every way the table can be wrong,
power conservation of a tabulated short dipole, and a pattern that two cuts cannot carry
(a small loop with horizontal axis) reproduced by its table. The small table patterns below
are invented for the tests; the dipole and the loop are the textbook patterns.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from siteexposure.errors import PatternError
from siteexposure.physics import fastpath
from siteexposure.physics.radiator import Radiator
from siteexposure.physics.sources import choose_model, pattern_note
from siteexposure.physics.sphere_table import SPHERE_SYNTHESIS, SphereTable
from siteexposure.physics.synthesis import TablePattern, directivity_ratio, normalised
from siteexposure.readers import pattern_csv
from siteexposure.readers.pattern_csv import format_pattern_csv, read_pattern_csv, write_pattern_csv

# -- an invented smooth panel whose cuts and table agree ---------------------------------------
#  H(a) = 10 - 3 (1 - cos a), Vf(e) = 10 - 12 (e/90)^2, Vb(e) = 4 - 6 (e/90)^2, and the table
#  G(a, e) = f Vf(e) + (1 - f) Vb(e), f = (1 + cos a)/2: equal to H at e = 0, to Vf at a = 0,
#  to Vb at a = 180, and -2 dBi at both poles whatever the azimuth.

CUT_H = np.arange(0.0, 360.0, 5.0)
CUT_V = np.arange(-90.0, 90.001, 5.0)
AZ = np.arange(0.0, 360.0, 15.0)  # 24 azimuths
EL = np.arange(-90.0, 90.001, 15.0)  # 13 elevations


def _vf(e):
    return 10.0 - 12.0 * (np.asarray(e) / 90.0) ** 2


def _vb(e):
    return 4.0 - 6.0 * (np.asarray(e) / 90.0) ** 2


def _g(a, e):
    f = 0.5 * (1.0 + np.cos(np.deg2rad(a)))
    return f * _vf(e) + (1.0 - f) * _vb(e)


def rows(az=AZ, el=EL):
    """A valid file with a 3-D table, as a list of lines."""
    out = ["# pattern CSV v1", "# peak_gain_dbi = 10", "# frequency_mhz = 900",
           "# name = invented sphere", "cut,side,angle_deg,gain_dbi"]
    out += [f"horizontal,,{a:g},{_g(a, 0.0):.4f}" for a in CUT_H]
    out += [f"vertical,front,{e:g},{_vf(e):.4f}" for e in CUT_V]
    out += [f"vertical,back,{e:g},{_vb(e):.4f}" for e in CUT_V]
    out += ["azimuth_deg,elevation_deg,gain_dbi"]
    out += [f"{a:g},{e:g},{_g(a, e):.4f}" for a in az for e in el]
    return out


def write(tmp_path, lines, name="s.csv"):
    f = tmp_path / name
    f.write_text("\n".join(lines) + "\n")
    return f


def line_of(lines, text):
    """1-based line number of the first line starting with ``text``."""
    return next(i for i, ln in enumerate(lines, 1) if ln.startswith(text))


def row_of(lines, a, e):
    return line_of(lines, f"{a:g},{e:g},")


SPHERE_HEADER_LINE = line_of(rows(), "azimuth_deg")


# -- reading, writing, interpolating -----------------------------------------------------------


def test_reads_the_table_and_records_where_the_3d_gain_comes_from(tmp_path):
    p = read_pattern_csv(write(tmp_path, rows()))
    assert isinstance(p.sphere, SphereTable)
    assert p.synthesis == SPHERE_SYNTHESIS == "3-d table"
    assert p.method == "additive"  # the cut rule stays recorded, unused for the 3-D gain
    np.testing.assert_array_equal(p.sphere.az_deg, AZ)
    np.testing.assert_array_equal(p.sphere.el_deg, EL)
    assert "full-sphere table" in pattern_note(p)
    cuts_only = read_pattern_csv(write(tmp_path, rows()[:SPHERE_HEADER_LINE - 1], "c.csv"))
    assert cuts_only.sphere is None and cuts_only.synthesis == "additive"
    assert pattern_note(cuts_only) is None
    # the cuts are still the file's cuts
    np.testing.assert_array_equal(p.horizontal_cut(np.deg2rad(CUT_H)),
                                  cuts_only.horizontal_cut(np.deg2rad(CUT_H)))
    np.testing.assert_array_equal(p.vertical_cut(np.deg2rad(CUT_V), "back"),
                                  cuts_only.vertical_cut(np.deg2rad(CUT_V), "back"))


def test_rows_in_any_order_comments_and_a_360_column(tmp_path):
    lines = rows()
    head, table = lines[:SPHERE_HEADER_LINE], lines[SPHERE_HEADER_LINE:]
    table = [table[i] for i in np.random.default_rng(1).permutation(len(table))]
    table += [f"360,{e:g},{_g(0.0, e):.4f}" for e in EL]
    p = read_pattern_csv(write(tmp_path, [*head, "# comment", "", *table]))
    ref = read_pattern_csv(write(tmp_path, lines, "ref.csv"))
    np.testing.assert_array_equal(p.sphere.az_deg, np.append(AZ, 360.0))
    phi, theta = np.meshgrid(np.linspace(-1, 7, 41), np.linspace(-1.6, 1.6, 23))
    np.testing.assert_array_equal(p.gain(phi, theta), ref.gain(phi, theta))


def test_writer_round_trip_is_exact(tmp_path):
    """read(write(x)) == x to the last bit (the writer prints repr of each float)."""
    rng = np.random.default_rng(4)
    az, el = np.arange(0.0, 360.001, 10.0), np.arange(-90.0, 90.001, 7.5)
    g = 3.0 + rng.uniform(-0.4, 0.4, (az.size, el.size)) / 3.0
    g[:, 0], g[:, -1] = g[0, 0], g[0, -1]
    g[-1] = g[0]  # 360 = 0
    cuts = {"h_angle_deg": az[:-1], "h_gain_dbi": g[:-1, el == 0.0].ravel(),
            "v_front_elev_deg": el, "v_front_gain_dbi": g[0],
            "v_back_elev_deg": el, "v_back_gain_dbi": g[az == 180.0].ravel()}
    f = tmp_path / "sub" / "rt.csv"
    write_pattern_csv(f, peak_gain_dbi=float(g.max()), **cuts, sphere=(az, el, g),
                      metadata={"name": "round trip"})
    p = read_pattern_csv(f)
    np.testing.assert_array_equal(p.sphere.az_deg, az)
    np.testing.assert_array_equal(p.sphere.el_deg, el)
    np.testing.assert_array_equal(p.sphere.gain_dbi, g)
    np.testing.assert_array_equal(p.v_back_gain_dbi, cuts["v_back_gain_dbi"])
    text = f.read_text()
    assert text == format_pattern_csv(peak_gain_dbi=float(g.max()), **cuts, sphere=(az, el, g),
                                      metadata={"name": "round trip"})
    # rows az-major, then elevation
    body = text.split("azimuth_deg,elevation_deg,gain_dbi\n")[1].splitlines()
    assert body[:2] == [f"0.0,-90.0,{float(g[0, 0])!r}", f"0.0,-82.5,{float(g[0, 1])!r}"]
    assert [x.name for x in f.parent.iterdir()] == ["rt.csv"]


def test_writer_refuses_a_bad_table_and_writes_nothing(tmp_path):
    lines = rows()
    p = read_pattern_csv(write(tmp_path, lines, "keep.csv"))
    before = (tmp_path / "keep.csv").read_bytes()
    kw = {"peak_gain_dbi": p.peak_gain_dbi, "h_angle_deg": p.h_angle_deg,
          "h_gain_dbi": p.h_gain_dbi, "v_front_elev_deg": p.v_front_elev_deg,
          "v_front_gain_dbi": p.v_front_gain_dbi, "v_back_elev_deg": p.v_back_elev_deg,
          "v_back_gain_dbi": p.v_back_gain_dbi}
    with pytest.raises(PatternError, match=r"gains of shape \(13, 24\); expected .* \(24, 13\)"):
        write_pattern_csv(tmp_path / "keep.csv", **kw, sphere=(AZ, EL, p.sphere.gain_dbi.T))
    bad = p.sphere.gain_dbi.copy()
    bad[3, 6] += 1.2  # azimuth 45, elevation 0: off the horizontal cut by 1.2 dB
    with pytest.raises(PatternError, match=r"keep.csv \(being written\)', line \d+: the 3-D table"
                                           r" gives .* at azimuth 45 deg, elevation 0 deg"):
        write_pattern_csv(tmp_path / "keep.csv", **kw, sphere=(AZ, EL, bad))
    assert (tmp_path / "keep.csv").read_bytes() == before
    assert sorted(x.name for x in tmp_path.iterdir()) == ["keep.csv"]


def _random_sphere(rng):
    """An invented table with uneven steps, constant poles and a free 0 deg column."""
    az = np.array([0.0, 10.0, 25.0, 30.0, 45.0, 60.0, 75.0, 90.0, 100.0, 115.0, 130.0, 145.0,
                   160.0, 175.0, 190.0, 200.0, 215.0, 230.0, 245.0, 260.0, 275.0, 290.0,
                   305.0, 320.0, 335.0, 350.0])
    el = np.array([-90.0, -80.0, -66.0, -51.0, -40.0, -25.0, -12.0, -3.0, 0.0, 4.0, 10.0,
                   24.0, 39.0, 52.0, 66.0, 78.0, 90.0])
    g = rng.uniform(-20.0, 15.0, (az.size, el.size))
    g[:, 0], g[:, -1] = -7.0, -9.0
    return az, el, g


def test_interpolation_exact_at_nodes_and_bilinear_between():
    """Bilinear interpolation in dB (Numerical Recipes, 3rd ed., sec. 3.6; common practice):
    G = (1-u)(1-v) G00 + u(1-v) G10 + (1-u) v G01 + u v G11, exact at the nodes (to the
    rounding of degrees to radians and back, a few 1e-14 dB here)."""
    rng = np.random.default_rng(7)
    az, el, g = _random_sphere(rng)
    t = SphereTable(az, el, g)
    A, E = np.meshgrid(np.deg2rad(az), np.deg2rad(el), indexing="ij")
    np.testing.assert_allclose(t.lookup_dbi(A, E), g, rtol=0.0, atol=1e-12)
    for _ in range(200):
        i, j = rng.integers(0, az.size - 1), rng.integers(0, el.size - 1)
        u, v = rng.uniform(0, 1, 2)
        a = az[i] + u * (az[i + 1] - az[i])
        e = el[j] + v * (el[j + 1] - el[j])
        want = ((1 - u) * (1 - v) * g[i, j] + u * (1 - v) * g[i + 1, j]
                + (1 - u) * v * g[i, j + 1] + u * v * g[i + 1, j + 1])
        assert float(t.lookup_dbi(np.deg2rad(a), np.deg2rad(e))) == pytest.approx(want, abs=1e-9)
    # bilinear: linear along each grid line, so the midpoint of a cell edge is the mean
    mid = t.lookup_dbi(np.deg2rad(0.5 * (az[4] + az[5])), np.deg2rad(el[7]))
    assert float(mid) == pytest.approx(0.5 * (g[4, 7] + g[5, 7]), abs=1e-12)


def test_periodic_in_azimuth_and_poles_are_one_direction():
    rng = np.random.default_rng(8)
    az, el, g = _random_sphere(rng)
    g[5, 0] = -6.2  # the nadir row now spreads by 0.8 dB (allowed: within 1 dB)
    t = SphereTable(az, el, g)
    phi = np.deg2rad(rng.uniform(0.0, 360.0, 50))
    th = np.deg2rad(rng.uniform(-90.0, 90.0, 50))
    base = t.lookup_dbi(phi, th)
    for turns in (-3, -1, 1, 2):
        np.testing.assert_allclose(t.lookup_dbi(phi + 2 * np.pi * turns, th), base, atol=1e-9)
    # between the last azimuth (350) and 360 = 0 the table runs to the 0 deg column
    e = np.deg2rad(el[9])
    assert float(t.lookup_dbi(np.deg2rad(355.0), e)) == pytest.approx(0.5 * (g[-1, 9] + g[0, 9]))
    assert float(t.lookup_dbi(np.deg2rad(-5.0), e)) == pytest.approx(0.5 * (g[-1, 9] + g[0, 9]))
    # a pole is one direction: its value whatever the azimuth of approach (the row's largest)
    for pole, value in ((-np.pi / 2, -6.2), (np.pi / 2, -9.0)):
        np.testing.assert_array_equal(t.lookup_dbi(phi, pole), np.full(phi.size, value))
        np.testing.assert_array_equal(t.lookup_dbi(phi, pole * 1.2), np.full(phi.size, value))
    # broadcasting, and NaN angles give NaN
    assert t.lookup_dbi(np.zeros((3, 1)), np.zeros((1, 4))).shape == (3, 4)
    assert np.isnan(t.lookup_dbi(np.nan, 0.1)) and np.isnan(t.lookup_dbi(0.1, np.nan))


def test_a_table_with_360_but_no_0_column_wraps_the_same():
    rng = np.random.default_rng(9)
    az, el, g = _random_sphere(rng)
    t0 = SphereTable(az, el, g)
    t360 = SphereTable(np.where(az == 0.0, 360.0, az), el, g)
    phi, th = np.deg2rad(rng.uniform(-30, 390, 300)), np.deg2rad(rng.uniform(-90, 90, 300))
    np.testing.assert_allclose(t360.lookup_dbi(phi, th), t0.lookup_dbi(phi, th), atol=1e-12)


def test_pattern_gain_shift_and_normalisation_use_the_table(tmp_path):
    p = read_pattern_csv(write(tmp_path, rows()))
    a, e = np.deg2rad(52.5), np.deg2rad(37.5)  # a cell centre off every cut plane
    want = np.mean([_g(x, y) for x in (45.0, 60.0) for y in (30.0, 45.0)])  # 4 rounded nodes
    assert float(p.gain_dbi(a, e)) == pytest.approx(want, abs=1e-4)
    assert float(p.gain(a, e)) == pytest.approx(10 ** (float(p.gain_dbi(a, e)) / 10))
    q = p.shifted(2.5, name="raised")
    assert q.synthesis == SPHERE_SYNTHESIS and q.peak_gain_dbi == p.peak_gain_dbi + 2.5
    np.testing.assert_allclose(q.sphere.gain_dbi, p.sphere.gain_dbi + 2.5)
    assert float(q.gain_dbi(a, e)) == pytest.approx(float(p.gain_dbi(a, e)) + 2.5)
    np.testing.assert_allclose(q.horizontal_cut(a), p.horizontal_cut(a) + 2.5)
    n = normalised(p)
    assert n.sphere is not None and directivity_ratio(n) == pytest.approx(1.0, rel=1e-9)


def test_a_pattern_with_a_table_skips_the_cut_kernel_and_gives_the_table_gain(tmp_path):
    """The fused far-field kernel synthesises from the cuts, so a pattern with a table goes
    through the numpy path; the density is OET-65 eq. (3), S = P G / (4 pi r^2) (equation
    number from memory), with G read from the table."""
    p = read_pattern_csv(write(tmp_path, rows()))
    cuts_only = read_pattern_csv(write(tmp_path, rows()[:SPHERE_HEADER_LINE - 1], "c.csv"))
    rad = Radiator(np.zeros(3), 0.0, 0.0, 0.0, 9e8, 40.0, p)
    assert not fastpath.fast_eligible(rad)
    assert fastpath.fast_eligible(Radiator(np.zeros(3), 0.0, 0.0, 0.0, 9e8, 40.0, cuts_only))
    from siteexposure.engine.evaluate import Source

    # azimuth 0 deg = north; a point 52.5 deg clockwise of boresight and 37.5 deg up
    r, az, el = 20.0, np.deg2rad(52.5), np.deg2rad(37.5)
    pt = np.array([[r * np.cos(el) * np.sin(az), r * np.cos(el) * np.cos(az), r * np.sin(el)]])
    srcs = [Source("s", rad, choose_model(rad, "far-field"))]
    got = float(fastpath.ratio_sums(srcs, pt, np.array([[1.0]]))[0, 0])
    want = 40.0 * float(p.gain(az, el)) / (4.0 * math.pi * r**2)
    assert got == pytest.approx(want, rel=1e-9)
    assert abs(float(p.gain_dbi(az, el)) - float(cuts_only.gain_dbi(az, el))) > 0.01
    red = fastpath.reduced_ratio_sums(srcs, np.repeat(pt, 2, axis=0), np.array([[1.0]]), 2,
                                      np.array([False]))
    assert float(red[0, 0]) == pytest.approx(want, rel=1e-9)


# -- power conservation and a pattern two cuts cannot carry -----------------------------------


def _analytic_file(tmp_path, name, fun, step=2.0, cut_step=1.0, floor_dbi=-100.0):
    """Cuts (1 deg) and a table (``step``) of the linear pattern ``fun(phi, el)`` [rad]."""
    def db(a_deg, e_deg):
        g = fun(np.deg2rad(a_deg), np.deg2rad(e_deg))
        return np.maximum(10.0 * np.log10(np.maximum(g, 1e-30)), floor_dbi)

    az = np.arange(0.0, 360.0 + 0.5 * step, step)
    el = np.linspace(-90.0, 90.0, int(round(180.0 / step)) + 1)
    table = db(az[:, None], el[None, :])
    ha = np.arange(0.0, 360.0, cut_step)
    va = np.linspace(-90.0, 90.0, int(round(180.0 / cut_step)) + 1)
    f = tmp_path / name
    write_pattern_csv(f, peak_gain_dbi=float(table.max()), h_angle_deg=ha, h_gain_dbi=db(ha, 0.0),
                      v_front_elev_deg=va, v_front_gain_dbi=db(0.0, va), v_back_elev_deg=va,
                      v_back_gain_dbi=db(180.0, va), sphere=(az, el, table))
    return read_pattern_csv(f)


def _dipole(phi, el):
    """Infinitesimal dipole along z: G = 1.5 sin^2 of the angle from its axis = 1.5 cos^2 el."""
    return 1.5 * np.cos(el) ** 2 + 0.0 * phi


def _loop(phi, el):
    """Small loop with its axis along y (to the left of boresight): G = 1.5 sin^2 psi, psi
    the angle from the y axis; the unit vector has y = -cos(el) sin(phi)."""
    return 1.5 * (1.0 - (np.cos(el) * np.sin(phi)) ** 2)


def test_tabulated_short_dipole_conserves_power(tmp_path):
    """C. A. Balanis, Antenna Theory, 4th ed., Wiley, 2016, sec. 4.2: the infinitesimal dipole
    has G = 1.5 sin^2 theta, directivity 1.5, so (1/4pi) oint G dOmega = 1. Written on a 2 deg
    grid (nulls floored at -100 dBi) and read back, the table integrates to 0.99968 (measured),
    within 1 %."""
    p = _analytic_file(tmp_path, "dipole.csv", _dipole)
    assert p.peak_gain_dbi == pytest.approx(10 * math.log10(1.5))
    assert directivity_ratio(p) == pytest.approx(1.0, rel=0.01)


def test_a_table_carries_what_two_cuts_cannot(tmp_path):
    """A small loop with horizontal axis (C. A. Balanis, Antenna Theory, 4th ed., Wiley, 2016,
    sec. 5.2: its far field is the dual of the infinitesimal dipole's, G = 1.5 sin^2 psi about
    the loop axis) has a constant 1.76 dBi front and back vertical cut and a horizontal cut
    1.5 cos^2 phi, so the additive synthesis of its cuts (3GPP TR 38.901 Table 7.3-1 form)
    gives 1.5 cos^2 phi at every elevation.

    Measured, at the 12 800 cell centres of the 2 deg grid at least 10 deg off every cut plane
    (azimuth at least 10 deg from 0 and 180, |elevation| >= 10 deg): the table is within
    -0.0013 .. -0.00005 dB of the loop, the additive synthesis -35.2 .. -0.006 dB off (median
    -2.1 dB);
    at (azimuth 60, elevation 60) the loop has 0.86 dBi, the table 0.86 dBi, the additive
    synthesis -4.26 dBi (-5.12 dB). The table integrates to 0.99985 of 4 pi, the synthesis to
    0.750."""
    p = _analytic_file(tmp_path, "loop.csv", _loop)
    cuts_only = TablePattern(p.h_angle_deg, p.h_gain_dbi, p.v_front_elev_deg,
                             p.v_front_gain_dbi, p.v_back_elev_deg, p.v_back_gain_dbi,
                             peak_gain_dbi=p.peak_gain_dbi)
    a_deg, e_deg = np.meshgrid(np.arange(1.0, 360.0, 2.0), np.arange(-89.0, 90.0, 2.0),
                               indexing="ij")
    side = np.abs((a_deg + 90.0) % 180.0 - 90.0)  # azimuth from the 0/180 deg plane
    off = (side >= 10.0) & (np.abs(e_deg) >= 10.0)
    a, e = np.deg2rad(a_deg[off]), np.deg2rad(e_deg[off])
    true_db = 10.0 * np.log10(_loop(a, e))
    err_table = p.gain_dbi(a, e) - true_db
    err_cuts = cuts_only.gain_dbi(a, e) - true_db
    assert off.sum() == 12800
    assert np.abs(err_table).max() < 0.05
    assert err_cuts.min() < -30.0 and np.median(err_cuts) < -1.5
    a60 = np.deg2rad(60.0)
    assert float(p.gain_dbi(a60, a60)) == pytest.approx(10 * math.log10(1.125 + 0.09375), abs=0.05)
    assert float(cuts_only.gain_dbi(a60, a60)) - 10 * math.log10(1.21875) < -5.0
    assert directivity_ratio(p) == pytest.approx(1.0, rel=0.01)
    assert directivity_ratio(cuts_only) == pytest.approx(0.75, rel=0.01)


# -- every way the table can be wrong ----------------------------------------------------------


def _replace(lines, n, new):
    out = list(lines)
    out[n - 1] = new
    return out


def _drop(lines, keep):
    """Lines of the table whose (azimuth, elevation) ``keep`` refuses; other lines stay."""
    out = []
    for i, ln in enumerate(lines, 1):
        if i > SPHERE_HEADER_LINE:
            a, e, _ = ln.split(",")
            if not keep(float(a), float(e)):
                continue
        out.append(ln)
    return out


def _gain_row(a, e, delta=0.0):
    return f"{a:g},{e:g},{_g(a, e) + delta:.4f}"


L = rows()
H = SPHERE_HEADER_LINE
END = len(L)
F_30_45 = row_of(L, 30, 45)

CASES = [
    # (id, lines, expected line, message regex)
    ("missing-cell", _drop(L, lambda a, e: (a, e) != (30, 45)), F_30_45 - 1,
     r"no 3-D cell at azimuth 30 deg, elevation 45 deg \(this line holds that azimuth at "
     r"elevation 30 deg\); expected each of the table's 24 azimuths at each of its 13 "
     r"elevations \(312 rows, 311 given\)"),
    ("duplicate-cell", [*L, _gain_row(30, 45)], END + 1,
     rf"3-D cell \(azimuth 30 deg, elevation 45 deg\) already given on line {F_30_45}; "
     r"expected each \(azimuth, elevation\) cell once"),
    ("azimuth-at-one-elevation", [*L, _gain_row(7, 0)], END + 1,
     r"azimuth 7 deg of the 3-D table appears at 1 of its 13 elevations \(no cell at elevation "
     r"-90 deg\); expected every azimuth at every elevation"),
    ("elevation-at-one-azimuth", [*L, _gain_row(0, 5)], END + 1,
     r"elevation 5 deg of the 3-D table appears at 1 of its 24 azimuths \(no cell at azimuth "
     r"15 deg\); expected every azimuth at every elevation"),
    ("gain-nan", _replace(L, F_30_45, "30,45,nan"), F_30_45,
     r"gain_dbi = 'nan'; expected a finite gain in dBi within -150..80"),
    ("gain-inf", _replace(L, F_30_45, "30,45,-inf"), F_30_45, r"gain_dbi = '-inf'; expected a finite"),
    ("gain-text", _replace(L, F_30_45, "30,45,high"), F_30_45, r"gain_dbi = 'high'; expected"),
    ("gain-out-of-range", _replace(L, F_30_45, "30,45,200"), F_30_45,
     r"gain_dbi = '200'; expected a finite gain in dBi within -150..80"),
    ("azimuth-text", _replace(L, F_30_45, "thirty,45,3"), F_30_45,
     r"azimuth_deg = 'thirty'; expected a finite number, an azimuth within 0..360 deg"),
    ("azimuth-nan", _replace(L, F_30_45, "nan,45,3"), F_30_45, r"azimuth_deg = 'nan'; expected"),
    ("elevation-inf", _replace(L, F_30_45, "30,inf,3"), F_30_45,
     r"elevation_deg = 'inf'; expected a finite number, an elevation within -90..\+90 deg"),
    ("azimuth-out-of-range", _replace(L, F_30_45, "400,45,3"), F_30_45,
     r"azimuth_deg = 400 is out of range; expected an azimuth within 0..360 deg"),
    ("elevation-out-of-range", _replace(L, F_30_45, "30,95,3"), F_30_45,
     r"elevation_deg = 95 is out of range; expected an elevation within -90..\+90 deg"),
    ("two-fields", _replace(L, F_30_45, "30,45"), F_30_45,
     rf"row '30,45' has 2 fields; expected 3 \(azimuth_deg,elevation_deg,gain_dbi\) in the 3-D "
     rf"table \(header on line {H}\)"),
    ("azimuth-gap", _drop(L, lambda a, e: a != 30), row_of(L, 45, -90) - 13,
     rf"the 3-D table's azimuths jump from 15 deg \(line {row_of(L, 15, -90)}\) to 45 deg; "
     r"expected steps of at most 15 deg"),
    ("azimuth-gap-through-360", _drop(L, lambda a, e: a != 345), H + 1,
     rf"the 3-D table's azimuths jump from 330 deg \(line {row_of(L, 330, -90)}\) through 360 "
     r"to 0 deg; expected steps of at most 15 deg"),
    ("elevation-gap", _drop(L, lambda a, e: e != 15), row_of(L, 0, 30) - 1,
     rf"the 3-D table's elevations jump from 0 deg \(line {row_of(L, 0, 0)}\) to 30 deg; "
     r"expected steps of at most 15 deg"),
    ("no-zenith", _drop(L, lambda a, e: e != 90), row_of(L, 0, 75),
     r"the 3-D table's elevations end at 75 deg; expected rows at \+90 \(zenith\) for every "
     r"azimuth"),
    ("no-nadir", _drop(L, lambda a, e: e != -90), row_of(L, 0, -75) - 1,
     r"the 3-D table's elevations start at -75 deg; expected rows at -90 \(nadir\)"),
    ("poles-disagree", _replace(L, row_of(L, 90, 90), _gain_row(90, 90, -3.0)), row_of(L, 90, 90),
     rf"at the zenith the 3-D table gives -5 dBi \(azimuth 90 deg\) and -2 dBi \(azimuth 0 deg, "
     rf"line {row_of(L, 0, 90)}\); expected agreement within 1 dB across azimuths \(a pole is one "
     r"direction\)"),
    ("0-and-360-disagree",
     [*L, *(_gain_row(360, e, 0.5 if e == 30 else 0.0) for e in EL)], END + 9,
     rf"3-D gain at azimuth 360 deg, elevation 30 deg \(9.1667 dBi\) differs from the gain at "
     rf"azimuth 0 deg on line {row_of(L, 0, 30)} \(8.6667 dBi\); expected equal gains within "
     r"0.01 dB \(the same direction\)"),
    ("peak-disagrees", _replace(L, row_of(L, 45, 15), "45,15,11.5"), 2,
     rf"peak_gain_dbi = 10 but the largest gain in the 3-D table is 11.5 dBi \(line "
     rf"{row_of(L, 45, 15)}\); expected agreement within 0.5 dB"),
    ("off-the-front-cut", _replace(L, row_of(L, 0, 60), _gain_row(0, 60, 1.5)), row_of(L, 0, 60),
     rf"the 3-D table gives 6.1667 dBi at azimuth 0 deg, elevation 60 deg and the vertical front "
     rf"cut 4.6667 dBi at 60 deg \(line {line_of(L, 'vertical,front,60,')}\); expected agreement "
     r"within 1 dB on the cut planes \(the same direction\)"),
    ("off-the-back-cut", _replace(L, row_of(L, 180, -45), _gain_row(180, -45, -1.2)),
     row_of(L, 180, -45),
     rf"elevation -45 deg and the vertical back cut 2.5 dBi at -45 deg \(line "
     rf"{line_of(L, 'vertical,back,-45,')}\)"),
    ("off-the-horizontal-cut", _replace(L, row_of(L, 90, 0), _gain_row(90, 0, 1.1)),
     row_of(L, 90, 0),
     rf"at azimuth 90 deg, elevation 0 deg and the horizontal cut 7 dBi at 90 deg \(line "
     rf"{line_of(L, 'horizontal,,90,')}\)"),
    ("header-without-rows", L[:H], H,
     r"the 3-D table header has no rows after it; expected rows "
     r"'azimuth_deg,elevation_deg,gain_dbi' covering the sphere"),
    ("second-header", [*L[:H + 20], L[H - 1], *L[H + 20:]], H + 21,
     rf"a second 3-D table header \(the first is on line {H}\); expected one 3-D table"),
    ("cuts-row-after-the-table", [*L, "horizontal,,2.5,9.9"], END + 1,
     rf"row 'horizontal,,2.5,9.9' of the cuts table comes after the 3-D table header on line "
     rf"{H}; expected all cuts rows before the 3-D table"),
    ("cuts-header-after-the-table", [*L, "cut,side,angle_deg,gain_dbi"], END + 1,
     r"of the cuts table comes after the 3-D table header"),
    ("table-before-the-cuts", [*L[:4], *L[H - 1:]], 5,
     r"table header is 'azimuth_deg,elevation_deg,gain_dbi'; expected "
     r"'cut,side,angle_deg,gain_dbi' after the '#' header lines \(the cuts table comes first; "
     r"a 3-D table may follow it\)"),
    ("misspelt-header", _replace(L, H, "azimuth_deg,elevation,gain_dbi"), H,
     r"3-D table header is 'azimuth_deg,elevation,gain_dbi'; expected "
     r"'azimuth_deg,elevation_deg,gain_dbi'"),
]


@pytest.mark.parametrize(("lines", "n", "message"), [c[1:] for c in CASES],
                         ids=[c[0] for c in CASES])
def test_errors_name_file_and_line(tmp_path, lines, n, message):
    f = write(tmp_path, lines, "bad.csv")
    with pytest.raises(PatternError, match=message) as info:
        read_pattern_csv(f)
    assert str(info.value).startswith(f"pattern file '{f}', line {n}: ")
    assert "\n" not in str(info.value)


def test_absurd_grids_are_refused_before_they_are_built(tmp_path, monkeypatch):
    """Memory stays bounded: rows beyond MAX_SPHERE_CELLS are refused as they are read, and a
    grid whose azimuths x elevations exceed it is refused before it is allocated (the limit
    lowered here to keep the files small)."""
    assert pattern_csv.MAX_SPHERE_CELLS == 2_000_000
    monkeypatch.setattr(pattern_csv, "MAX_SPHERE_CELLS", 300)
    f = write(tmp_path, L, "big.csv")
    with pytest.raises(PatternError, match=rf"'{f}', line {H + 301}: the 3-D table has more than "
                                           r"300 rows; expected a grid of at most 300 cells"):
        read_pattern_csv(f)
    monkeypatch.setattr(pattern_csv, "MAX_SPHERE_CELLS", 320)
    g = write(tmp_path, [*L, "7,5,3"], "wide.csv")
    with pytest.raises(PatternError, match=rf"'{g}', line {H}: the 3-D table spans 25 azimuths x "
                                           r"14 elevations = 350 cells; expected a grid of at "
                                           r"most 320 cells"):
        read_pattern_csv(g)


@pytest.mark.parametrize(("change", "message"), [
    (lambda az, el, g: (az, el, g[:, :-1]), r"gains of shape \(24, 12\); expected"),
    (lambda az, el, g: (az, el, np.where(g > 9.9, np.nan, g)), r"NaN or infinite"),
    (lambda az, el, g: (np.where(az == 15.0, 0.0, az), el, g), r"an azimuth or an elevation twice"),
    (lambda az, el, g: (az, el[1:], g[:, 1:]), r"elevations span -75..90 deg"),
    (lambda az, el, g: (az - 15.0, el, g), r"azimuths span -15..330 deg; expected 0..360"),
    (lambda az, el, g: (az, el, g + np.where(np.arange(el.size) == 12, np.arange(24)[:, None] / 10,
                                             0.0)), r"gains at the zenith span -2..0.3 dBi"),
    (lambda az, el, g: (np.append(az, 360.0), el, np.vstack([g, g[:1] + 0.02])),
     r"at azimuth 0 and .* at 360 deg .*within 0.01 dB"),
    (lambda az, el, g: (az, el, g + 0.6), r"largest gain in the 3-D table is 10.60 dBi"),
    (lambda az, el, g: (az, el, g + np.where((az == 45.0)[:, None] & (el == 0.0)[None, :], 1.2,
                                             0.0)),
     r"the 3-D table gives 10.32 dBi and the horizontal cut 9.12 dBi at its angle 45 deg"),
])
def test_direct_construction_checks_the_table(change, message):
    """TablePattern and SphereTable check a table handed to them in Python as well."""
    g = _g(AZ[:, None], EL[None, :])
    cut = {"h_angle_deg": CUT_H, "h_gain_dbi": _g(CUT_H, 0.0), "v_front_elev_deg": CUT_V,
           "v_front_gain_dbi": _vf(CUT_V), "v_back_elev_deg": CUT_V, "v_back_gain_dbi": _vb(CUT_V)}
    ok = TablePattern(*cut.values(), peak_gain_dbi=10.0, sphere=(AZ, EL, g), name="direct")
    assert ok.synthesis == SPHERE_SYNTHESIS
    with pytest.raises(PatternError, match=r"^pattern 'direct': .*" + message):
        TablePattern(*cut.values(), peak_gain_dbi=10.0, sphere=change(AZ, EL, g), name="direct")
