"""Field models against the PyNEC method-of-moments solver (stored reference cases).

Reference library: PyNEC (NEC-2 method of moments; G. J. Burke and A. J. Poggio, "Numerical
Electromagnetics Code (NEC) - Method of Moments", LLNL UCID-18834, 1981). Cases, geometry and
regeneration: tests/data/nec/README.md. The error analysis lives in nec_accuracy.py, which also
writes tests/data/nec/accuracy.md (the accuracy statement).

Reference quantity: |E_rms|^2 / eta0 from NEC's near E field (plane-wave equivalent, what an
E-field probe reading is compared with). Judged: points within 20 dB of the strongest value at
the same range. Pass criteria of issue 3 for ``auto``: >= 95 % of judged points within
-1.5 .. +3 dB (model minus reference), none below -3 dB, within +-0.5 dB in the far field.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
import nec_accuracy as na  # noqa: E402

sys.path.insert(0, str(na.DATA))
import generate_nec_reference as gen  # noqa: E402


@pytest.fixture(scope="module")
def auto_errors():
    """{case: (errors dB of `auto` on judged points, region index, assessable count)}."""
    out = {}
    for name in na.CASES:
        case = na.load_case(name)
        s, ok, _ = na.predict(case, "auto")
        err = na.errors_db(case, s, ok)[case.judged]
        out[name] = (err, case.region[case.judged])
    return out


def test_live_pynec_dipole_matches_the_stored_reference_and_textbook_values():
    """A fresh PyNEC run of the half-wave dipole reproduces the stored data, and the NEC model
    is sound: gain 2.15 dBi (common practice; Balanis 4th ed. sec. 4.6: D = 1.643), input
    impedance near 73 + j42.5 ohm (Balanis 4th ed. sec. 4.6, infinitely thin; a finite radius
    of 1e-5 lambda raises both parts by a few ohms, from memory), radiated = input power for
    lossless wires (within 1 %)."""
    pytest.importorskip("PyNEC")
    case = gen.dipole_case()
    ctx = gen.build_context(case)
    p_in, z = gen.input_power_w(ctx)
    cuts = gen.far_field_cuts(ctx, 0)
    ratio = gen.radiated_over_input(ctx, 3)
    assert cuts["h_gain_dbi"].max() == pytest.approx(2.15, abs=0.05)
    assert z.real == pytest.approx(73.0, rel=0.10) and z.imag == pytest.approx(42.5, rel=0.10)
    assert ratio == pytest.approx(1.0, abs=0.01)
    with np.load(na.DATA / "dipole.npz") as d:
        meta = json.loads(str(d["meta"]))
        xyz, e_ref = d["xyz_m"], d["e_peak_v_m"]
    assert p_in == pytest.approx(meta["input_power_w"], rel=1e-6)
    pick = np.linspace(0, len(xyz) - 1, 7).astype(int)
    for i in pick:
        x, y, zz = xyz[i]
        ctx.ne_card(0, 1, 1, 1, float(x), float(y), float(zz), 0.0, 0.0, 0.0)
    for k, i in enumerate(pick):
        nf = ctx.get_near_field_pattern(k)
        e = np.array([nf.get_field_x()[0], nf.get_field_y()[0], nf.get_field_z()[0]])
        np.testing.assert_allclose(np.abs(e), np.abs(e_ref[i]), rtol=1e-4, atol=1e-9)


def test_stored_cases_conserve_power():
    """NEC: radiated over input power within 1 % for every stored case (lossless wires)."""
    for name in na.CASES:
        assert na.load_case(name).meta["radiated_over_input"] == pytest.approx(1.0, abs=0.01)


def test_auto_within_minus_1p5_plus_3_db_at_95_percent_and_never_below_minus_3(auto_errors):
    """Issue 3 criteria on judged, assessable points of every case (all regions)."""
    for name, (err, _) in auto_errors.items():
        e = err[np.isfinite(err)]
        assert e.size > 0, name
        within = np.mean((e >= na.LOW_DB) & (e <= na.HIGH_DB))
        assert within >= 0.95, f"{name}: {100 * within:.1f} % within -1.5..+3 dB"
        assert e.min() >= -3.0, f"{name}: lowest error {e.min():.2f} dB"


def test_auto_not_assessable_only_inside_the_reactive_radius(auto_errors):
    """Points `auto` leaves out are inside max(lambda/2pi, 0.62 sqrt(D^3/lambda)) or within
    lambda/2pi of the aperture column (never a silent pass, never elsewhere)."""
    for name in na.CASES:
        case = na.load_case(name)
        _, ok, _ = na.predict(case, "auto")
        lam = case.meta["wavelength_m"]
        big = max(case.meta["aperture_height_m"], case.meta["aperture_width_m"])
        r = np.linalg.norm(case.xyz_m, axis=1)
        r_react = max(lam / (2 * np.pi), 0.62 * np.sqrt(big**3 / lam))
        assert np.all(ok[r >= max(r_react, 0.5 * big + lam / (2 * np.pi))]), name


@pytest.mark.parametrize("name", ["dipole", "collinear", "panel"])
def test_far_field_region_within_half_a_db(auto_errors, name):
    """Issue 3 far-field criterion (+-0.5 dB for R >= max(2 L^2/lambda, 3 lambda, 5 L)) at
    every judged point, met for the half-wave dipole, the collinear array and the untilted
    panel (PyNEC reference, tests/data/nec). The collinear's first side-lobe null (el
    +-18..20 deg, still filling in at 1.1..2 R_ff) needs the quadratic aperture phase of the
    array model's taper fit; with a real taper the model is 1.0 dB low there."""
    err, region = auto_errors[name]
    e = err[(region == 2) & np.isfinite(err)]
    assert e.size > 0 and np.max(np.abs(e)) <= 0.5, f"{name}: {np.max(np.abs(e)):.2f} dB"


@pytest.mark.xfail(strict=True, reason=(
    "measured shortfall: far-field errors of `auto` for the 6 deg tilted panel are "
    "-0.67..+2.16 dB (95 of 532 judged points outside +-0.5 dB); the model's far-field gain "
    "is -1.15..+2.13 dB off the solver's own 3-D far field at those points (beside and "
    "behind: az 90..150 deg, el -12..-2 deg; off-axis in front near the upper nulls: az "
    "30..75 deg, el +2..+15 deg; az 75 deg, el -20 deg), while its finite-range part is "
    "within -0.55..+0.63 dB. The three "
    "cuts of the pattern file do not carry the vertical beam shape off the cut planes; see "
    "tests/data/nec/README.md. Not loosened."))
def test_far_field_of_the_tilted_panel_within_half_a_db(auto_errors):
    """Issue 3: within +-0.5 dB in the far field at every judged point (6 deg tilted panel)."""
    err, region = auto_errors["panel_tilt6"]
    e = err[(region == 2) & np.isfinite(err)]
    assert e.size > 0 and np.max(np.abs(e)) <= 0.5, f"panel_tilt6: {np.max(np.abs(e)):.2f} dB"


def test_accuracy_statement_is_current(auto_errors):
    """tests/data/nec/accuracy.md carries the numbers this code computes for `auto`."""
    text = (na.DATA / "accuracy.md").read_text(encoding="utf-8")
    for name, (err, _) in auto_errors.items():
        st = na.summary(err, err.size)
        row = na._row(f"{name} (array-synthesis)", st)
        label = row.split(" | ")[0] + " |"
        stored = [ln for ln in text.splitlines() if ln.startswith(label)]
        assert stored, row
        # counts exactly; dB figures to 0.02 dB (the fits' last digit differs between
        # numpy/scipy builds), shares to 0.2 %
        got, want = _cells(row), _cells(stored[0])
        assert got[:2] == want[:2], (row, stored[0])
        np.testing.assert_allclose(got[2:], want[2:], atol=0.02 + 1e-12, err_msg=row)


def _cells(row: str) -> list[float]:
    return [float(c.strip().rstrip("%").strip()) for c in row.strip("| ").split(" | ")[1:]]
