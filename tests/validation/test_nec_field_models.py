"""Field models against the method-of-moments references (stored cases, tests/data/nec).

Reference library: PyNEC (NEC-2 method of moments; G. J. Burke and A. J. Poggio, "Numerical
Electromagnetics Code (NEC) - Method of Moments", LLNL UCID-18834, 1981); the dish: direct
Rayleigh-Sommerfeld integration of a uniform circular aperture (tests/data/nec/README.md).
The error analysis lives in nec_accuracy.py, which also writes tests/data/nec/accuracy.md.

Criteria (issue 12), for ``auto`` given only what a user has (pattern cuts, body, polarisation,
power, ground plane): judged against max(S_E, S_H) at points within 20 dB of the strongest
value at the same range, >= lambda/2 from the centre and outside the stand-off: >= 95 % within
-1.5 .. +3 dB, none below -3 dB, <= 5 % refused; far field within -0.5 .. +1.0 dB. Where a
class cannot reach a criterion with what a user has, the test is a strict xfail that states
the measured numbers; criteria are not loosened.
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

_RESULTS: dict = {}


def _auto(name: str, three_d: bool = False) -> dict:
    key = (name, three_d)
    if key not in _RESULTS:
        res = na.evaluate(name, "auto", three_d)
        _RESULTS[key] = {"res": res, **na.criteria(res)}
    return _RESULTS[key]


def _xfail(reason: str):
    return pytest.mark.xfail(strict=True, reason=reason)


# measured shortfalls (figures of tests/data/nec/accuracy.md for this code); each case not
# listed meets the criterion. Pattern cuts only:
WITHIN_SHORT = {
    "panel": "83.4 % within -1.5..+3 dB: beside and behind the panel within a wavelength of "
             "the reflector the column model, with the horizontal cut as element factor, is up "
             "to +14 dB high and down to -4 dB low",
    "panel_tilt6": "82.7 % within: as the untilted panel",
    "yagi6": "92.5 % within: up to +9 dB close beside the boom (the near field takes the larger "
             "of two current profiles the pattern cannot tell apart)",
    "lpda": "77.0 % within: the place of the active region on the boom is not in the pattern",
    "fm4": "81.0 % within: crossed dipoles 4 cm apart driven in quadrature; the lattice's "
           "single crossed element differs close in by -11..+10 dB",
    "small_loop": "91.7 % within: near the loop's axis, where the elements have an exact null "
                  "and the antenna -14 dB, the correction carried off the horizontal cut "
                  "overstates by up to +21 dB (the full-sphere table removes it: 100 %)",
}
BELOW_SHORT = {
    "panel": "lowest -3.79 dB: behind the reflector within a wavelength",
    "panel_tilt6": "lowest -4.26 dB: behind the reflector within a wavelength",
    "lpda": "lowest -4.06 dB: far field off the cut planes",
    "fm4": "lowest -10.91 dB: close to the crossed elements",
    "fm4_slant": "lowest -3.89 dB: close to the slanted elements",
    "dish": "lowest -7.84 dB: 4 cm outside the rim, 1.2 cm in front of the aperture plane, "
            "where the scalar aperture field leaves out the vector fringe field of the rim "
            "(52 of 6243 judged points below -3 dB)",
}
FAR_SHORT = {
    "panel_tilt6": "far field -0.67..+2.16 dB: the cuts do not carry the tilted beam's shape "
                   "off the cut planes (issue 3; with the full-sphere table -0.76..+0.49 dB)",
    "yagi3": "far field -0.15..+1.58 dB off the cut planes",
    "yagi6": "far field -0.79..+1.99 dB off the cut planes",
    "lpda": "far field -4.06..+2.90 dB off the cut planes",
    "fm4": "far field -1.90..+2.26 dB off the cut planes",
    "fm4_slant": "far field -0.87..+1.42 dB off the cut planes",
    "small_loop": "far field -0.98..+21.22 dB near the loop's axis",
    "dish": "far field -0.16..+2.55 dB",
}
# with the pattern file's full-sphere table (cases that have one)
WITHIN_SHORT_3D = {k: v for k, v in WITHIN_SHORT.items() if k != "small_loop"}
BELOW_SHORT_3D = {"panel_tilt6": BELOW_SHORT["panel_tilt6"],
                  "fm4": "lowest -11.07 dB: close to the crossed elements",
                  "fm4_slant": "lowest -3.95 dB: close to the slanted elements"}
FAR_SHORT_3D = {
    "panel_tilt6": "far field -0.76..+0.49 dB",
    "yagi6": "far field -0.75..+1.22 dB",
    "lpda": "far field -0.64..+2.91 dB",
    "fm4": "far field -1.91..+5.98 dB",
    "small_loop": "far field -0.01..+1.92 dB",
}
CASES_3D = tuple(n for n in na.ALL_CASES if na.has_3d(n))


def _cases(short: dict, names=na.ALL_CASES):
    return [pytest.param(n, marks=_xfail(short[n])) if n in short else n for n in names]


@pytest.mark.slow
@pytest.mark.parametrize("name", _cases(WITHIN_SHORT_3D, CASES_3D))
def test_auto_with_a_full_sphere_table_within_at_95_percent(name):
    c = _auto(name, three_d=True)
    assert c["within"] >= 0.95, f"{name}: {100 * c['within']:.1f} % within -1.5..+3 dB"


@pytest.mark.slow
@pytest.mark.parametrize("name", _cases(BELOW_SHORT_3D, CASES_3D))
def test_auto_with_a_full_sphere_table_never_below_minus_3_db(name):
    c = _auto(name, three_d=True)
    assert c["min"] >= -3.0, f"{name}: lowest error {c['min']:.2f} dB"


@pytest.mark.slow
@pytest.mark.parametrize("name", _cases(FAR_SHORT_3D, CASES_3D))
def test_auto_with_a_full_sphere_table_far_field_within_minus_0p5_plus_1_db(name):
    c = _auto(name, three_d=True)
    assert c["ff_min"] >= na.FF_LOW_DB and c["ff_max"] <= na.FF_HIGH_DB, (
        f"{name}: far field {c['ff_min']:+.2f} .. {c['ff_max']:+.2f} dB")


@pytest.mark.slow
@pytest.mark.parametrize("name", _cases(WITHIN_SHORT))
def test_auto_within_minus_1p5_plus_3_db_at_95_percent(name):
    c = _auto(name)
    assert c["within"] >= 0.95, f"{name}: {100 * c['within']:.1f} % within -1.5..+3 dB"


@pytest.mark.slow
@pytest.mark.parametrize("name", _cases(BELOW_SHORT))
def test_auto_never_below_minus_3_db(name):
    c = _auto(name)
    assert c["min"] >= -3.0, f"{name}: lowest error {c['min']:.2f} dB"


@pytest.mark.slow
@pytest.mark.parametrize("name", na.ALL_CASES)
def test_auto_refuses_at_most_5_percent_of_judged_points(name):
    c = _auto(name)
    assert c["refused"] <= 0.05, f"{name}: {100 * c['refused']:.1f} % refused"


@pytest.mark.slow
@pytest.mark.parametrize("name", _cases(FAR_SHORT))
def test_auto_far_field_within_minus_0p5_plus_1_db(name):
    c = _auto(name)
    assert np.isfinite(c["ff_min"]), f"{name}: no judged far-field point"
    assert c["ff_min"] >= na.FF_LOW_DB and c["ff_max"] <= na.FF_HIGH_DB, (
        f"{name}: far field {c['ff_min']:+.2f} .. {c['ff_max']:+.2f} dB")


@pytest.mark.slow
@pytest.mark.parametrize("name", na.ALL_CASES)
def test_envelope_bound_is_never_below_the_reference(name):
    """The bound that auto uses where no model is validated (physics/bound.py) lies at or
    above max(S_E, S_H) of the reference at every point outside the stand-off."""
    m = na.bound_margin_db(na.load_case(name))
    assert m.min() >= 0.0, f"{name}: bound {m.min():+.2f} dB below the reference"


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
    for name in na.ALL_CASES:
        assert na.load_case(name).meta["radiated_over_input"] == pytest.approx(1.0, abs=0.01)


@pytest.mark.slow
def test_accuracy_statement_is_current():
    """tests/data/nec/accuracy.md carries the per-case figures this code computes for auto
    (dB to 0.02, shares to 0.2 %: the fits' last digits differ between numpy/scipy builds)."""
    text = (na.DATA / "accuracy.md").read_text(encoding="utf-8")
    for name in na.ALL_CASES:
        c = _auto(name)
        row = na.case_row(name, c["res"], c)
        label = row.split(" | ")[0] + " |"
        stored = [ln for ln in text.splitlines() if ln.startswith(label)]
        assert stored, row
        got, want = _numbers(row), _numbers(stored[0])
        assert len(got) == len(want), (row, stored[0])
        np.testing.assert_allclose(got, want, atol=0.2 + 1e-9, err_msg=row)


def _numbers(row: str) -> list[float]:
    import re

    return [float(x) for x in re.findall(r"[-+]?\d+\.?\d*", row.split(" | ", 1)[1])]
