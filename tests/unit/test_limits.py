"""Unit tests of the limits module and the limit-table reader: vectorisation, NaN where a table
gives no value, plane-wave conversions, exposure-ratio sums, and the error messages."""

from __future__ import annotations

import hashlib
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.constants import ETA0
from siteexposure.errors import LimitsError, SiteExposureError
from siteexposure.physics import limits as L
from siteexposure.readers.limit_tables import available_sets, load_limit_set, read_limit_file

IDS = ["fcc-1310", "hc-sc6-2015", "icnirp-1998", "icnirp-2020", "ieee-c95.1-2019"]


# ------------------------------------------------------------------------------ loading
def test_available_sets_are_the_fixed_ids_sorted() -> None:
    assert available_sets() == IDS


def test_load_is_cached_and_traceable() -> None:
    ls = load_limit_set("fcc-1310")
    assert load_limit_set("fcc-1310") is ls
    path = Path(ls.source_file)
    assert path.name == "fcc-1310.toml"
    assert ls.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert ls.populations["general"] == "General Population/Uncontrolled Exposure"
    assert ls.regions() == ("whole-body",)
    assert load_limit_set("icnirp-2020").regions() == ("whole-body", "local")


def test_unknown_set_id_lists_the_valid_ids() -> None:
    with pytest.raises(LimitsError) as err:
        load_limit_set("fcc-1307")
    message = str(err.value)
    assert "fcc-1307" in message
    for set_id in IDS:
        assert set_id in message
    assert isinstance(err.value, SiteExposureError)


# ---------------------------------------------------------------------------- evaluation
def test_evaluate_is_vectorised_and_keeps_shape() -> None:
    ls = load_limit_set("icnirp-2020")
    f = np.array([[0.5, 50.0, 900.0], [2450.0, 28000.0, 300000.0]])
    out = ls.evaluate(f, "general")
    for key in ("s_w_m2", "e_v_m", "h_a_m", "averaging_min", "averaging_h_min", "s_h_w_m2"):
        assert out[key].shape == f.shape
    one_by_one = np.array([[float(ls.evaluate(x, "general")["s_w_m2"]) for x in r] for r in f])
    np.testing.assert_allclose(out["s_w_m2"], one_by_one, rtol=1e-14)
    assert ls.evaluate(900.0, "general")["s_w_m2"].shape == ()


def test_nan_where_the_table_gives_no_value() -> None:
    """47 CFR 1.1310 Table 1 gives no E/H above 300 MHz; ICNIRP 2020 Table 5 no S below 30 MHz
    (NA) and no E/H above 2 GHz (NA)."""
    fcc = load_limit_set("fcc-1310").evaluate([100.0, 900.0], "general")
    assert not math.isnan(fcc["e_v_m"][0]) and math.isnan(fcc["e_v_m"][1])
    assert math.isnan(fcc["h_a_m"][1]) and fcc["s_w_m2"][1] == pytest.approx(6.0)
    icnirp = load_limit_set("icnirp-2020").evaluate([1.0, 3500.0], "occupational")
    assert math.isnan(icnirp["s_w_m2"][0]) and not math.isnan(icnirp["e_v_m"][0])
    assert math.isnan(icnirp["e_v_m"][1]) and math.isnan(icnirp["h_a_m"][1])


def test_frequency_outside_the_table_gives_its_range() -> None:
    ls = load_limit_set("fcc-1310")
    with pytest.raises(LimitsError, match=r"0\.3 to 100000 MHz") as err:
        ls.evaluate([900.0, 150000.0, 200000.0], "occupational")
    assert "150000 MHz (and 1 more)" in str(err.value)
    with pytest.raises(LimitsError, match=r"outside the table"):
        ls.power_density_limit_w_m2(0.1, "general")
    assert ls.frequency_range_mhz("general") == (0.3, 100000.0)
    assert load_limit_set("hc-sc6-2015").frequency_range_mhz("occupational") == (10.0, 300000.0)


@pytest.mark.parametrize("bad", [0.0, -5.0, math.nan, math.inf])
def test_frequency_must_be_positive_and_finite(bad: float) -> None:
    with pytest.raises(LimitsError, match="positive finite"):
        load_limit_set("icnirp-1998").evaluate([900.0, bad], "general")


def test_unknown_population_and_region_list_the_valid_words() -> None:
    ls = load_limit_set("icnirp-2020")
    with pytest.raises(LimitsError, match="general, occupational"):
        ls.evaluate(900.0, "public")
    with pytest.raises(LimitsError, match="expected one of whole-body$"):
        load_limit_set("fcc-1310").evaluate(900.0, "general", "local")
    assert ls.evaluate(900.0, "general", "local")["averaging_min"] == 6.0


def test_single_frequency_band_and_open_edges_of_icnirp_2020_table_6() -> None:
    """ICNIRP 2020 Table 6 (retrieved copy): '>6 to <300 GHz' is 55/f_G^0.177, '300 GHz' is 20."""
    ls = load_limit_set("icnirp-2020")
    f = np.array([float(np.nextafter(300000.0, 0.0)), 300000.0])
    s = ls.evaluate(f, "general", "local")["s_w_m2"]
    assert s[0] == pytest.approx(55 / 300**0.177) and s[1] == 20.0


# ------------------------------------------------------------------ power-density limit
def test_power_density_limit_rules() -> None:
    """S from the table where printed; S_E/S_H smaller of the two; else plane-wave E and H."""
    icnirp = load_limit_set("icnirp-2020")
    # ICNIRP 2020 Table 5, general public, 1 MHz: E = 300 V/m, H = 2.2 A/m, S NA.
    s = float(icnirp.power_density_limit_w_m2(1.0, "general"))
    assert s == pytest.approx(min(300.0**2 / ETA0, ETA0 * 2.2**2))
    assert s == pytest.approx(238.9, abs=0.05)
    assert str(icnirp.describe_s(1.0, "general")) == L.S_FROM_E_AND_H
    assert str(icnirp.describe_s(900.0, "general")) == L.S_FROM_TABLE
    ieee = load_limit_set("ieee-c95.1-2019")
    assert str(ieee.describe_s(50.0, "general")) == L.S_FROM_TABLE_EH
    # IEEE C95.1-2019 unrestricted 50 MHz (from memory): S_E = 2, S_H = 9.4e6/50^3.336 = 20.2.
    assert float(ieee.power_density_limit_w_m2(50.0, "general")) == 2.0


def test_power_density_limit_takes_s_h_where_it_is_the_smaller(tmp_path: Path) -> None:
    """A band printing S_E and S_H gives the smaller (invented band, rule test only)."""
    text = GOOD.format(stem="demo-set").replace("s_b = 0.0\n", "s_b = 0.0\nsh_a = 1.5\nsh_b = 0.0\n")
    ls = read_limit_file(_write(tmp_path, text))
    assert float(ls.power_density_limit_w_m2(5.0, "general")) == 1.5
    assert float(ls.evaluate(5.0, "general")["s_w_m2"]) == 2.0


def test_icnirp_1998_power_density_below_10_mhz_uses_e_and_h() -> None:
    """ICNIRP 1998 Table 7 gives no S_eq below 10 MHz; at 0.12 MHz E = 87 V/m, H = 5 A/m."""
    ls = load_limit_set("icnirp-1998")
    v = ls.evaluate(0.12, "general")
    assert math.isnan(v["s_w_m2"]) and (v["e_v_m"], v["h_a_m"]) == (87.0, 5.0)
    s = float(ls.power_density_limit_w_m2(0.12, "general"))
    assert s == pytest.approx(87.0**2 / ETA0)


# ----------------------------------------------------------------- plane-wave conversions
def test_plane_wave_conversions_round_trip_and_scale() -> None:
    s = np.array([0.5, 2.0, 10.0, 1000.0])
    np.testing.assert_allclose(L.s_from_e(L.e_from_s(s)), s)
    np.testing.assert_allclose(L.s_from_h(L.h_from_s(s)), s)
    np.testing.assert_allclose(L.e_from_s(s) / L.h_from_s(s), ETA0)
    np.testing.assert_allclose(L.s_from_e(2 * L.e_from_s(s)), 4 * s)  # S scales as E²
    # 47 CFR 1.1310 Table 1 (A), 30-300 MHz: 1.0 mW/cm² = 10 W/m² <-> 61.4 V/m, 0.163 A/m.
    assert round(float(L.e_from_s(10.0)), 1) == 61.4
    assert round(float(L.h_from_s(10.0)), 3) == 0.163


# --------------------------------------------------------------------- exposure ratio sum
def test_exposure_ratio_sum_against_hand_sums() -> None:
    s = np.array([[1.0, 0.0, 4.5], [5.0, 10.0, 0.0], [0.2, 0.2, 0.2]])
    limit = np.array([10.0, 50.0, 2.0])
    # by hand: point 0: 0.1 + 0.1 + 0.1 = 0.3; point 1: 0 + 0.2 + 0.1 = 0.3; point 2: 0.45+0+0.1
    np.testing.assert_allclose(L.exposure_ratio_sum(s, limit), [0.3, 0.3, 0.55])
    assert L.exposure_ratio_sum([6.0, 2.0], [6.0, 2.0]) == pytest.approx(2.0)


def test_exposure_ratio_sum_propagates_nan_and_checks_shapes() -> None:
    s = np.array([[1.0, math.nan], [1.0, 1.0]])
    out = L.exposure_ratio_sum(s, [1.0, 2.0])
    assert out[0] == 1.5 and math.isnan(out[1])
    with pytest.raises(ValueError, match="one limit per source"):
        L.exposure_ratio_sum(s, [1.0, 2.0, 3.0])
    with pytest.raises(ValueError, match="positive"):
        L.exposure_ratio_sum(s, [1.0, 0.0])
    with pytest.raises(ValueError, match="source axis"):
        L.exposure_ratio_sum(3.0, [1.0])


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.floats(0, 1e3), min_size=6, max_size=6),
    st.lists(st.floats(0, 1e3), min_size=6, max_size=6),
    st.lists(st.floats(0.01, 100), min_size=2, max_size=2),
)
def test_exposure_ratio_sum_is_linear_superposition(a, b, limit) -> None:
    """Σ over sources of the summed densities equals the sum of the separate ratios."""
    sa, sb = np.reshape(a, (2, 3)), np.reshape(b, (2, 3))
    lhs = L.exposure_ratio_sum(sa + sb, limit)
    rhs = L.exposure_ratio_sum(sa, limit) + L.exposure_ratio_sum(sb, limit)
    np.testing.assert_allclose(lhs, rhs, rtol=1e-12, atol=1e-12)


@settings(max_examples=60, deadline=None)
@given(
    st.sampled_from(IDS),
    st.sampled_from(["general", "occupational"]),
    st.lists(st.floats(0.0, 1.0), min_size=1, max_size=20),
)
def test_vectorised_limit_equals_elementwise(set_id, population, u) -> None:
    """Any frequencies inside a table: array evaluation equals one-at-a-time evaluation."""
    ls = load_limit_set(set_id)
    lo, hi = ls.frequency_range_mhz(population)
    f = np.exp(np.log(lo) + np.asarray(u) * (np.log(hi) - np.log(lo)))
    f = np.clip(f, lo, hi)
    vec = ls.power_density_limit_w_m2(f, population)
    one = [float(ls.power_density_limit_w_m2(x, population)) for x in f]
    np.testing.assert_allclose(vec, one, rtol=1e-14)  # numpy's array and scalar pow differ by 1 ulp
    assert np.all(vec > 0)


# ---------------------------------------------------------------------------- JSON rows
def test_table_rows_keys_and_nulls() -> None:
    rows = L.table_rows(["fcc-1310"], [900.0, 100.0])
    assert len(rows) == 4
    for row in rows:
        assert {"set", "population", "frequency_mhz", "s_w_m2", "e_v_m", "h_a_m",
                "averaging_min", "region", "s_source", "limit_w_m2"} <= set(row)
    at_900 = [r for r in rows if r["frequency_mhz"] == 900.0 and r["population"] == "general"]
    assert at_900[0]["e_v_m"] is None and at_900[0]["s_w_m2"] == pytest.approx(6.0)


def test_table_rows_default_frequencies_are_edges_and_middles() -> None:
    ls = load_limit_set("fcc-1310")
    rows = L.table_rows([ls])
    freqs = sorted({r["frequency_mhz"] for r in rows if r["population"] == "general"})
    for edge in (0.3, 1.34, 30.0, 300.0, 1500.0, 100000.0):
        assert edge in freqs
    assert 94.87 in freqs  # geometric middle of 30-300 MHz, four figures
    assert len(freqs) == 11


def test_table_rows_out_of_range_raise_or_skip() -> None:
    with pytest.raises(LimitsError, match="outside the table"):
        L.table_rows(["fcc-1310"], [200000.0])
    rows = L.table_rows(["fcc-1310", "icnirp-2020"], [200000.0], skip_out_of_range=True)
    assert {r["set"] for r in rows} == {"icnirp-2020"}
    assert {(r["population"], r["region"]) for r in rows} == {
        ("general", "whole-body"), ("general", "local"),
        ("occupational", "whole-body"), ("occupational", "local"),
    }


# ------------------------------------------------------------------ reader error messages
GOOD = """\
id = "{stem}"
title = "t"
publication = "p"
edition = "e"
tables = ["Table 1"]
frequency_unit = "MHz"
populations = {{ general = "Public" }}
notes = "n"

[[band]]
population = "general"
region = "whole-body"
f_min_mhz = 1.0
f_max_mhz = 10.0
inclusive = "both"
f_ref_mhz = 1.0
s_a = 2.0
s_b = 0.0
averaging_min_a = 6.0
averaging_min_b = 0.0
source = "row one"
verified = "invented for a reader test"

[[band]]
population = "general"
region = "whole-body"
f_min_mhz = 10.0
f_max_mhz = 100.0
inclusive = "upper"
f_ref_mhz = 1.0
e_a = 30.0
e_b = 0.0
averaging_min_a = 6.0
averaging_min_b = 0.0
source = "row two"
verified = "invented for a reader test"
"""


def _write(tmp_path: Path, text: str, stem: str = "demo-set") -> Path:
    path = tmp_path / f"{stem}.toml"
    path.write_text(text.format(stem=stem) if "{stem}" in text else text, encoding="utf-8")
    return path


def test_reader_accepts_a_well_formed_file(tmp_path: Path) -> None:
    ls = read_limit_file(_write(tmp_path, GOOD))
    assert ls.frequency_range_mhz("general") == (1.0, 100.0)
    assert float(ls.evaluate(10.0, "general")["s_w_m2"]) == 2.0  # the first band owns 10 MHz
    assert float(ls.power_density_limit_w_m2(50.0, "general")) == pytest.approx(900 / ETA0)
    assert str(ls.describe_s(50.0, "general")) == L.S_FROM_E


@pytest.mark.parametrize(
    ("old", "new", "expected"),
    [
        ('s_a = 2.0', 's_aa = 2.0', r"demo-set\.toml: band 1 \(row one\): unknown key 's_aa'"),
        ('s_b = 0.0\n', '', r"band 1 \(row one\): key 's_a' is given without 's_b'"),
        ('f_min_mhz = 10.0', 'f_min_mhz = 12.0', r"gap between 10 and 12 MHz"),
        ('f_min_mhz = 10.0', 'f_min_mhz = 8.0', r"overlap between 10 and 8 MHz"),
        ('inclusive = "upper"', 'inclusive = "both"', r"edge 10 MHz belongs to 2 bands"),
        ('inclusive = "upper"', 'inclusive = "top"', r"key 'inclusive' is 'top'; expected one"),
        ('region = "whole-body"\nf_min_mhz = 1.0', 'region = "head"\nf_min_mhz = 1.0',
         r"key 'region' is 'head'"),
        ('population = "general"\nregion = "whole-body"\nf_min_mhz = 10.0',
         'population = "workers"\nregion = "whole-body"\nf_min_mhz = 10.0',
         r"band 2 \(row two\): key 'population' is 'workers'; expected one of general"),
        ('e_a = 30.0', 'e_a = "30"', r"band 2 \(row two\): key 'e_a' must be a finite number"),
        ('e_a = 30.0', 'e_a = -30.0', r"key 'e_a' must be positive"),
        ('e_a = 30.0\ne_b = 0.0\n', '', r"band 2 \(row two\): the band gives none of E"),
        ('verified = "invented for a reader test"\n\n[[band]]', '\n[[band]]',
         r"band 1 \(row one\): key 'verified' is missing"),
        ('frequency_unit = "MHz"', 'frequency_unit = "GHz"', r"'frequency_unit' is 'GHz'"),
        ('notes = "n"', 'notes = "n"\nauthor = "x"', r"unknown top-level key 'author'"),
        ('inclusive = "both"', 'inclusive = "upper"', r"first band \(row one\) must include"),
    ],
)
def test_reader_errors_name_file_band_and_key(tmp_path: Path, old, new, expected) -> None:
    text = GOOD.format(stem="demo-set")
    assert old in text
    path = _write(tmp_path, text.replace(old, new, 1))
    with pytest.raises(LimitsError, match=expected):
        read_limit_file(path)


def test_reader_rejects_id_that_differs_from_file_name(tmp_path: Path) -> None:
    path = _write(tmp_path, GOOD.format(stem="other-id"), stem="demo-set")
    with pytest.raises(LimitsError, match=r"key 'id' is 'other-id'; expected 'demo-set'"):
        read_limit_file(path)


def test_reader_rejects_bad_toml_and_missing_file(tmp_path: Path) -> None:
    with pytest.raises(LimitsError, match=r"demo-set\.toml: not valid UTF-8 TOML"):
        read_limit_file(_write(tmp_path, "id = [unclosed"))
    with pytest.raises(LimitsError, match="cannot be read"):
        read_limit_file(tmp_path / "absent.toml")


def test_limits_physics_does_not_import_the_reader() -> None:
    """The physics layer reads no file: importing it must not pull in the reader or tomllib."""
    import subprocess
    import sys

    code = (
        "import sys; import siteexposure.physics.limits; "
        "print('siteexposure.readers.limit_tables' in sys.modules, 'tomllib' in sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["False", "False"]
