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


@pytest.mark.xfail(strict=True, reason=(
    "measured shortfall: in the far field `auto` (array synthesis) has 5th..95th percentile "
    "-0.22..+0.03 dB but extremes of -1.39 dB and +1.97 dB: collinear at el +-20 deg (a "
    "side-lobe null still filling in at 1.1..2 R_ff, by about 1 dB more than the model's real "
    "taper fills it) and the 6 deg tilted panel beside and behind (its vertical beam shape "
    "there matches neither cut); see tests/data/nec/accuracy.md. Not loosened."))
def test_far_field_region_within_half_a_db_everywhere(auto_errors):
    """Issue 3: within +-0.5 dB in the far field at every judged point."""
    for name, (err, region) in auto_errors.items():
        e = err[(region == 2) & np.isfinite(err)]
        assert np.max(np.abs(e)) <= 0.5, f"{name}: {np.max(np.abs(e)):.2f} dB"


def test_far_field_of_the_untilted_panel_within_half_a_db(auto_errors):
    """Issue 3 far-field criterion (+-0.5 dB for R >= max(2 L^2/lambda, 3 lambda, 5 L)) met
    for the half-wave dipole and the untilted panel: beyond the far-field range the array
    model's element factor is the pattern's own 3-D gain (PyNEC reference, judged points)."""
    for name in ("dipole", "panel"):
        err, region = auto_errors[name]
        e = err[(region == 2) & np.isfinite(err)]
        assert e.size > 0 and np.max(np.abs(e)) <= 0.5, f"{name}: {np.max(np.abs(e)):.2f} dB"


def test_accuracy_statement_is_current(auto_errors):
    """tests/data/nec/accuracy.md carries the numbers this code computes for `auto`."""
    text = (na.DATA / "accuracy.md").read_text(encoding="utf-8")
    for name, (err, _) in auto_errors.items():
        st = na.summary(err, err.size)
        row = na._row(f"{name} (array-synthesis)", st)
        assert row in text, row
