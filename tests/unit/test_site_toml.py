"""Site-file reader (siteexposure.readers.site_toml): valid files and every kind of bad input.

Every bad input must raise InputError (or its subclass PatternError) with a one-line
message that names the file, the key and the value (SPEC 3.1, issue 4 "Bad input").
"""

from __future__ import annotations

import hashlib
import math
import shutil
import warnings
from pathlib import Path

import numpy as np
import pytest

from siteexposure.errors import InputError, PatternError, SiteExposureWarning
from siteexposure.readers.site_toml import read_site
from siteexposure.resources import sample_sites_dir

SAMPLES = sample_sites_dir()
PANEL = SAMPLES / "patterns" / "panel_midband.csv"

BASE = """\
[site]
name = "Test site"
origin = { lat = 10.0, lon = 20.0 }
limits = ["fcc-1310"]
averaging = { method = "vertical-line", bottom_m = 0.0, top_m = 2.0, points = 5 }
resolution_m = 0.5

[[area]]
name = "Roof"
access = "public"
floor_m = 10.0
outline = [[0, 0], [20, 0], [20, 10], [0, 10]]

[[point]]
name = "Window"
at = [30.0, 5.0, 12.0]

[[antenna]]
id = "A1"
operator = "Op"
position = [5.0, 5.0, 13.0]
azimuth_deg = 90
frequency_mhz = 1950
tx_power_w = 40.0
carriers = 2
line_loss_db = 2.0
activity = 0.5
pattern = "pat/panel.csv"
aperture = { height_m = 1.2, width_m = 0.25 }

[[antenna]]
id = "A2"
operator = "Op"
position = [15.0, 5.0, 13.0]
frequency_mhz = 900
tx_power_dbm = 46.0
pattern = { model = "isotropic" }
"""


def write_site(folder: Path, text: str, name: str = "site.toml") -> Path:
    (folder / "pat").mkdir(exist_ok=True)
    shutil.copyfile(PANEL, folder / "pat" / "panel.csv")
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def edit(old: str, new: str, text: str = BASE) -> str:
    assert old in text, old
    return text.replace(old, new, 1)


def bad(tmp_path: Path, text: str, *fragments: str, error=InputError) -> str:
    path = write_site(tmp_path, text)
    with pytest.raises(error) as info:
        read_site(path)
    message = str(info.value)
    assert "\n" not in message, message
    assert message.startswith(str(path)), message
    for fragment in fragments:
        assert fragment in message, f"{fragment!r} not in {message!r}"
    return message


# -- valid files ---------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["office_roof.toml", "shared_tower.toml", "parking_dish.toml"])
def test_every_sample_site_reads_without_warnings(name):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        site = read_site(SAMPLES / name)
    assert site.antennas and site.areas and site.name
    assert site.source_path == SAMPLES / name
    assert site.input_files[0] == (str(SAMPLES / name),
                                   hashlib.sha256((SAMPLES / name).read_bytes()).hexdigest())
    for shown, digest in site.input_files[1:]:
        assert hashlib.sha256(Path(shown).read_bytes()).hexdigest() == digest
    assert len({a.id for a in site.antennas}) == len(site.antennas)
    assert {a.access for a in site.areas} <= {"public", "worker", "none"}


def test_office_roof_has_the_scenario_of_the_issue():
    site = read_site(SAMPLES / "office_roof.toml")
    assert len(site.operators) == 3 and len(site.antennas) == 18
    assert {a.access for a in site.areas} == {"public", "worker", "none"}
    assert site.limits == ("fcc-1310", "icnirp-2020") and site.resolution_m == 0.5
    assert any("Penthouse" in a.name and a.access == "worker" for a in site.areas)
    assert len(site.points) >= 3
    for operator in site.operators:
        own = [a for a in site.antennas if a.operator == operator]
        low = [a for a in own if 690 <= a.frequency_mhz <= 960]
        high = [a for a in own if 1700 <= a.frequency_mhz <= 3800]
        assert len(low) == 3 and len(high) == 3  # three sectors in two bands
        assert len({a.azimuth_deg for a in low}) == 3


def test_values_reach_the_containers(tmp_path):
    site = read_site(write_site(tmp_path, BASE))
    a1, a2 = site.antennas
    assert (site.origin_lat, site.origin_lon) == (10.0, 20.0)
    np.testing.assert_array_equal(a1.position_m, [5.0, 5.0, 13.0])
    assert (a1.carriers, a1.line_loss_db, a1.activity) == (2, 2.0, 0.5)
    assert (a1.aperture_height_m, a1.aperture_width_m, a1.diameter_m) == (1.2, 0.25, None)
    # SPEC 3.1: P = tx_power * carriers * activity * 10^(-line_loss/10)
    assert math.isclose(a1.net_power_w, 40.0 * 2 * 0.5 * 10 ** -0.2)
    # dBm is decibels relative to 1 mW (common practice): 46 dBm = 39.81 W
    assert math.isclose(a2.tx_power_w, 39.810717055, rel_tol=1e-9)
    assert a1.model == "auto" and a1.reflection_factor == 1.0
    assert site.averaging.points == 5 and site.points[0].access == "public"
    np.testing.assert_array_equal(site.areas[0].outline_en, [[0, 0], [20, 0], [20, 10], [0, 10]])
    assert [p for p, _ in site.input_files] == [str(tmp_path / "site.toml"),
                                                str(tmp_path / "pat" / "panel.csv")]


def test_pattern_file_tilt_is_used_and_a_different_site_tilt_warns(tmp_path):
    site = read_site(write_site(tmp_path, BASE))
    assert site.antennas[0].electrical_tilt_deg == 4.0  # the file's own tilt
    text = edit('azimuth_deg = 90\n', 'azimuth_deg = 90\nelectrical_tilt_deg = 6\n')
    with pytest.warns(SiteExposureWarning, match=r'antenna "A1" > electrical_tilt_deg = 6'):
        site = read_site(write_site(tmp_path, text))
    assert site.antennas[0].electrical_tilt_deg == 4.0
    # giving the same tilt as the file is no contradiction and does not warn
    text = edit('azimuth_deg = 90\n', 'azimuth_deg = 90\nelectrical_tilt_deg = 4\n')
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        read_site(write_site(tmp_path, text))


def test_gain_override_in_dbd_rescales_a_pattern_file(tmp_path):
    """dBi = dBd + 2.15 (SPEC 3.1; half-wave dipole gain 1.64, common practice)."""
    text = edit('pattern = "pat/panel.csv"', 'pattern = "pat/panel.csv"\ngain_dbd = 15.0')
    ant = read_site(write_site(tmp_path, text)).antennas[0]
    assert ant.peak_gain_dbi == pytest.approx(17.15, abs=0.005)
    plain = read_site(write_site(tmp_path, BASE)).antennas[0]
    ratio = ant.pattern.gain(0.3, -0.1) / plain.pattern.gain(0.3, -0.1)
    assert ratio == pytest.approx(10 ** ((17.15 - plain.peak_gain_dbi) / 10), rel=1e-3)


def test_site_reflection_factor_applies_unless_the_antenna_sets_its_own(tmp_path):
    text = edit('resolution_m = 0.5', 'resolution_m = 0.5\nreflection_factor = 2.56')
    text = edit('activity = 0.5', 'activity = 0.5\nreflection_factor = 1.0', text)
    a1, a2 = read_site(write_site(tmp_path, text)).antennas
    assert (a1.reflection_factor, a2.reflection_factor) == (1.0, 2.56)


def test_optional_site_keys(tmp_path):
    text = edit('resolution_m = 0.5', 'resolution_m = 0.5\naddress = "1 Invented Way"\n'
                'preparer = "QA"\nzone_levels = [10, 0.05, 1, 0.5, 0.05]')
    site = read_site(write_site(tmp_path, text))
    assert site.zone_levels == (0.05, 0.5, 10.0)
    assert (site.address, site.preparer) == ("1 Invented Way", "QA")


def test_outline_lonlat_is_converted_to_local_metres_like_pyproj_geod(tmp_path):
    """Vertices placed with pyproj.Geod.fwd (Karney 2013) land at the chosen east/north."""
    pyproj = pytest.importorskip("pyproj")
    geod = pyproj.Geod(ellps="WGS84")
    targets = np.array([[0.0, 0.0], [30.0, 0.0], [30.0, 12.0], [0.0, 12.0]]) + [4.0, -3.0]
    dist = np.hypot(targets[:, 0], targets[:, 1])
    az = np.degrees(np.arctan2(targets[:, 0], targets[:, 1]))
    lon, lat, _ = geod.fwd([20.0] * 4, [10.0] * 4, az, dist)
    ring = ", ".join(f"[{x!r}, {y!r}]" for x, y in zip(lon, lat, strict=True))
    text = edit("outline = [[0, 0], [20, 0], [20, 10], [0, 10]]", f"outline_lonlat = [{ring}]")
    outline = read_site(write_site(tmp_path, text)).areas[0].outline_en
    np.testing.assert_allclose(outline, targets, rtol=0, atol=1e-6)


def test_closed_ring_is_accepted(tmp_path):
    text = edit("[0, 10]]", "[0, 10], [0, 0]]")
    assert read_site(write_site(tmp_path, text)).areas[0].outline_en.shape == (4, 2)


def test_peak_averaging_with_one_point_is_allowed(tmp_path):
    text = edit('method = "vertical-line", bottom_m = 0.0, top_m = 2.0, points = 5',
                'method = "peak", bottom_m = 1.5, top_m = 1.5, points = 1')
    av = read_site(write_site(tmp_path, text)).averaging
    np.testing.assert_array_equal(av.heights_m(), [1.5])


# -- bad input -----------------------------------------------------------------------------

BAD_VALUES = [
    # wrong types
    ("tx_power_w = 40.0", 'tx_power_w = "40"', ['antenna "A1" > tx_power_w = "40"', "a number"]),
    ("tx_power_w = 40.0", "tx_power_w = true", ['"A1" > tx_power_w = true']),
    ("carriers = 2", "carriers = 2.5", ["carriers = 2.5", "whole number"]),
    ('name = "Roof"', "name = 7", ["area #1 > name = 7", "text"]),
    ("at = [30.0, 5.0, 12.0]", "at = [30.0, 5.0]", ['point "Window" > at', "at least 3"]),
    ("at = [30.0, 5.0, 12.0]", 'at = [30.0, "x", 12.0]', ['point "Window" > at > north = "x"']),
    ('limits = ["fcc-1310"]', 'limits = "fcc-1310"', ["site > limits", "list"]),
    ('limits = ["fcc-1310"]', "limits = []", ["site > limits = []", "at least 1 item"]),
    ("carriers = 2", "carriers = 1979-05-27", ["carriers = 1979-05-27", "whole number"]),
    ('id = "A2"', 'id = ""', ['antenna #2 > id = ""', "non-empty"]),
    # negative, zero and non-finite numbers
    ("line_loss_db = 2.0", "line_loss_db = -1", ['"A1" > line_loss_db = -1', ">= 0"]),
    ("tx_power_w = 40.0", "tx_power_w = -40.0", ["tx_power_w = -40.0", "greater than 0"]),
    ("frequency_mhz = 1950", "frequency_mhz = 0", ["frequency_mhz = 0", "greater than 0"]),
    ("carriers = 2", "carriers = 0", ["carriers = 0", ">= 1"]),
    ("resolution_m = 0.5", "resolution_m = 0", ["site > resolution_m = 0", "greater than 0"]),
    ("tx_power_w = 40.0", "tx_power_w = nan", ['antenna "A1" > tx_power_w = nan', "finite"]),
    ("floor_m = 10.0", "floor_m = inf", ['area "Roof" > floor_m = inf', "finite"]),
    ("floor_m = 10.0", "floor_m = -inf", ["floor_m = -inf"]),
    ("[20, 10], [0, 10]]", "[20, nan], [0, 10]]", ['area "Roof" > outline #3 > north = nan']),
    ("pattern = { model = \"isotropic\" }", "pattern = { model = \"isotropic\", gain_dbi = nan }",
     ['antenna "A2" > pattern > gain_dbi = nan']),
    # activity outside 0..1
    ("activity = 0.5", "activity = 1.5", ['"A1" > activity = 1.5', "<= 1"]),
    ("activity = 0.5", "activity = 0", ['"A1" > activity = 0', "greater than 0"]),
    ("activity = 0.5", "activity = -0.2", ["activity = -0.2"]),
    # unknown words
    ('access = "public"', 'access = "private"',
     ['area "Roof" > access = "private"', '"public", "worker" or "none"']),
    ('at = [30.0, 5.0, 12.0]', 'at = [30.0, 5.0, 12.0]\naccess = "everyone"',
     ['point "Window" > access = "everyone"']),
    ("activity = 0.5", 'activity = 0.5\nmodel = "near-field"', ['"A1" > model = "near-field"',
                                                              '"cylindrical"']),
    ('method = "vertical-line"', 'method = "mean"', ['site > averaging > method = "mean"']),
    # latitudes and longitudes out of range
    ("lat = 10.0", "lat = 95.0", ["site > origin > lat = 95.0", "<= 90"]),
    ("lon = 20.0", "lon = -200.0", ["site > origin > lon = -200.0", ">= -180"]),
    # ranges of angles and heights
    ("azimuth_deg = 90", "azimuth_deg = 400", ['"A1" > azimuth_deg = 400', "<= 360"]),
    ("azimuth_deg = 90", "azimuth_deg = 90\nmechanical_tilt_deg = 95",
     ["mechanical_tilt_deg = 95"]),
    ("points = 5", "points = 0", ["site > averaging > points = 0"]),
]


@pytest.mark.parametrize(("old", "new", "fragments"), BAD_VALUES)
def test_bad_values_name_key_and_value(tmp_path, old, new, fragments):
    bad(tmp_path, edit(old, new), *fragments)


def test_unknown_key_lists_the_allowed_keys_and_a_close_match(tmp_path):
    message = bad(tmp_path, edit("azimuth_deg = 90", "azimuth = 90"),
                  'antenna "A1" > azimuth: unknown key', "did you mean 'azimuth_deg'?")
    assert "allowed keys here:" in message and "tx_power_dbm" in message


def test_unknown_top_level_table(tmp_path):
    bad(tmp_path, BASE + '\n[[antennas]]\nid = "X"\n', "antennas: unknown key",
        "did you mean 'antenna'?")


def test_single_bracket_table_instead_of_array_of_tables(tmp_path):
    bad(tmp_path, edit("[[point]]", "[point]"), "point:", "[[point]]")


def test_missing_required_key(tmp_path):
    bad(tmp_path, edit("frequency_mhz = 1950\n", ""),
        'antenna "A1" > frequency_mhz: required key is missing', "carrier frequency")
    bad(tmp_path, edit('operator = "Op"\n', ""), 'antenna "A1" > operator: required key')
    bad(tmp_path, edit("[site]\n", "[place]\n"), "site: required key is missing",
        "the [site] table (and 1 more problem)")


def test_more_problems_are_counted(tmp_path):
    text = edit("activity = 0.5", "activity = 2").replace("carriers = 2", "carriers = -1")
    bad(tmp_path, text, "(and 1 more problem)")


def test_unknown_limit_set_lists_the_valid_ids(tmp_path):
    from siteexposure.readers.limit_tables import available_sets

    message = bad(tmp_path, edit('limits = ["fcc-1310"]', 'limits = ["fcc-1310", "fcc-1311"]'),
                  'site > limits #2 = "fcc-1311"', 'did you mean "fcc-1310"?')
    for set_id in available_sets():
        assert set_id in message


def test_exactly_one_power_key(tmp_path):
    bad(tmp_path, edit("tx_power_w = 40.0", "tx_power_w = 40.0\ntx_power_dbm = 46"),
        'antenna "A1"', "both of tx_power_w and tx_power_dbm")
    bad(tmp_path, edit("tx_power_w = 40.0\n", ""), 'antenna "A1"', "neither")


def test_exactly_one_outline_key(tmp_path):
    text = edit("outline = [[0, 0], [20, 0], [20, 10], [0, 10]]",
                "outline = [[0, 0], [20, 0], [20, 10], [0, 10]]\n"
                "outline_lonlat = [[20, 10], [20.001, 10], [20.001, 10.001]]")
    bad(tmp_path, text, 'area "Roof"', "both of outline and outline_lonlat")
    bad(tmp_path, edit("outline = [[0, 0], [20, 0], [20, 10], [0, 10]]\n", ""), "neither")


@pytest.mark.parametrize(
    ("outline", "fragment"),
    [
        ("[[0, 0], [20, 0], [40, 0]]", "no area"),  # collinear
        ("[[0, 0], [20, 0], [20, 0], [0, 0]]", "no area"),  # repeated vertices
        ("[[0, 0], [20, 10], [20, 0], [0, 10]]", "crosses itself"),  # bow tie
        ("[[0, 0], [20, 0]]", "at least 3"),
        ("[[0, 0], [20, 0], [0, 0]]", "at least 3"),  # closed ring of two vertices
    ],
)
def test_degenerate_or_self_intersecting_outlines(tmp_path, outline, fragment):
    text = edit("outline = [[0, 0], [20, 0], [20, 10], [0, 10]]", f"outline = {outline}")
    bad(tmp_path, text, 'area "Roof" > outline = ', fragment)


def test_outline_lonlat_out_of_range_or_swapped(tmp_path):
    text = edit("outline = [[0, 0], [20, 0], [20, 10], [0, 10]]",
                "outline_lonlat = [[20, 10], [20.001, 10], [20.001, 91.0]]")
    bad(tmp_path, text, 'area "Roof" > outline_lonlat #3 > lat = 91.0', "-90 to 90")
    text = edit("outline = [[0, 0], [20, 0], [20, 10], [0, 10]]",
                "outline_lonlat = [[10, 20], [10.001, 20], [10.001, 20.001]]")  # [lat, lon]
    bad(tmp_path, text, 'area "Roof" > outline_lonlat #1', "km from the site origin",
        "longitude first")


def test_missing_pattern_file_names_antenna_and_path(tmp_path):
    bad(tmp_path, edit('"pat/panel.csv"', '"pat/nothing.csv"'),
        'antenna "A1" > pattern = "pat/nothing.csv"', str(tmp_path / "pat" / "nothing.csv"))


def test_broken_pattern_file_is_a_pattern_error_with_the_antenna(tmp_path):
    path = write_site(tmp_path, BASE)
    (tmp_path / "pat" / "panel.csv").write_text("# name = x\ncut,side,angle_deg,gain_dbi\n")
    with pytest.raises(PatternError, match=r'antenna "A1" > pattern: .*peak_gain_dbi'):
        read_site(path)


def test_bad_inline_pattern_is_a_pattern_error_with_the_antenna(tmp_path):
    text = edit('pattern = { model = "isotropic" }', 'pattern = { model = "yagi" }')
    bad(tmp_path, text, 'antenna "A2" > pattern', "yagi", error=PatternError)
    bad(tmp_path, edit('pattern = { model = "isotropic" }', "pattern = 5"),
        'antenna "A2" > pattern = 5', "file path")


def test_gain_override_beside_an_inline_pattern_is_refused(tmp_path):
    text = edit('pattern = { model = "isotropic" }', 'pattern = { model = "isotropic" }\n'
                "gain_dbi = 3")
    bad(tmp_path, text, 'antenna "A2" > gain_dbi = 3', "inside the inline pattern")


@pytest.mark.parametrize(
    ("freq", "limits", "fragment"),
    [("150000", '["fcc-1310"]', 'limit set "fcc-1310"'),
     ("0.2", '["fcc-1310"]', "0.3 to 100000 MHz"),
     ("5", '["icnirp-2020", "hc-sc6-2015"]', 'limit set "hc-sc6-2015"')],
)
def test_frequency_outside_a_chosen_limit_table(tmp_path, freq, limits, fragment):
    """Table ranges from the limit files: 47 CFR 1.1310 Table 1 spans 0.3-100,000 MHz;
    Health Canada Safety Code 6 (2015) reference levels start at 10 MHz (from memory)."""
    text = edit("frequency_mhz = 900", f"frequency_mhz = {freq}")
    text = edit('limits = ["fcc-1310"]', f"limits = {limits}", text)
    bad(tmp_path, text, f'antenna "A2" > frequency_mhz = {freq}', fragment)


def test_duplicate_ids_and_names(tmp_path):
    bad(tmp_path, edit('id = "A2"', 'id = "A1"'), 'antenna #2 > id = "A1"', "antenna #1")
    text = BASE + '\n[[area]]\nname = "Roof"\naccess = "none"\nfloor_m = 0\n' \
                  'outline = [[0, 0], [1, 0], [1, 1]]\n'
    bad(tmp_path, text, 'area #2 > name = "Roof"')


def test_averaging_line_must_have_length(tmp_path):
    bad(tmp_path, edit("top_m = 2.0", "top_m = 0.0"), "site > averaging > top_m = 0.0")
    bad(tmp_path, edit("bottom_m = 0.0, top_m = 2.0", "bottom_m = 2.0, top_m = 1.0"),
        "site > averaging > top_m = 1.0", "above bottom_m = 2")
    bad(tmp_path, edit("points = 5", "points = 1"), "site > averaging > points = 1", "at least 2")


def test_antenna_inside_a_floor(tmp_path):
    bad(tmp_path, edit("position = [5.0, 5.0, 13.0]", "position = [5.0, 5.0, 10.03]"),
        'antenna "A1" > position = [5.0, 5.0, 10.03]', 'floor of area "Roof"')
    # beside the outline, or clearly above the floor, is fine
    read_site(write_site(tmp_path, edit("position = [5.0, 5.0, 13.0]",
                                        "position = [25.0, 5.0, 10.0]")))
    read_site(write_site(tmp_path, edit("position = [5.0, 5.0, 13.0]",
                                        "position = [5.0, 5.0, 10.1]")))


def test_aperture_and_model_must_agree(tmp_path):
    bad(tmp_path, edit("aperture = { height_m = 1.2, width_m = 0.25 }",
                       "aperture = { height_m = 1.2, diameter_m = 0.6 }"),
        'antenna "A1" > aperture', "{ diameter_m, depth_m } (a dish)")
    bad(tmp_path, edit("aperture = { height_m = 1.2, width_m = 0.25 }", "aperture = { }"),
        'antenna "A1" > aperture', "no size")
    bad(tmp_path, edit("aperture = { height_m = 1.2, width_m = 0.25 }",
                       "aperture = { height_m = -1.2 }"), "aperture > height_m = -1.2")
    bad(tmp_path, edit('pattern = { model = "isotropic" }',
                       'pattern = { model = "isotropic" }\nmodel = "cylindrical"'),
        'antenna "A2" > model = "cylindrical"', "aperture")


def test_body_keys_are_read(tmp_path):
    """polarization, aperture.depth_m and aperture.offset_m reach the antenna and its body."""
    site = read_site(write_site(tmp_path, edit(
        "aperture = { height_m = 1.2, width_m = 0.25 }",
        'aperture = { height_m = 1.2, width_m = 0.25, depth_m = 0.15, offset_m = [-0.05, 0, 0.1] }'
        '\npolarization = "slant"')))
    ant = site.antenna("A1")
    assert ant.polarization == "slant" and ant.aperture_depth_m == 0.15
    body = ant.radiator().body
    centre, half = body.box()
    assert centre.tolist() == [-0.05, 0.0, 0.1]
    assert half.tolist() == pytest.approx([0.075, 0.125, 0.6])
    assert site.antenna("A2").polarization == "vertical"  # the default


def test_bad_body_keys(tmp_path):
    """Unknown polarisation words, negative or NaN depths, wrong offsets, a ground plane
    without a height: one line naming the key, the value and what was expected."""
    ap = "aperture = { height_m = 1.2, width_m = 0.25 }"
    bad(tmp_path, edit(ap, ap + '\npolarization = "diagonal"'),
        'antenna "A1" > polarization = "diagonal"', "vertical", "circular")
    bad(tmp_path, edit(ap, "aperture = { height_m = 1.2, depth_m = -0.2 }"),
        "aperture > depth_m = -0.2")
    bad(tmp_path, edit(ap, "aperture = { height_m = 1.2, depth_m = nan }"),
        "aperture > depth_m", "nan")
    bad(tmp_path, edit(ap, "aperture = { height_m = 1.2, offset_m = [0, 1] }"),
        "aperture > offset_m")
    bad(tmp_path, edit(ap, 'aperture = { height_m = 1.2, offset_m = [0, 0, "up"] }'),
        "aperture > offset_m")
    bad(tmp_path, edit(ap, "aperture = { diameter_m = 1.2 }\nground_plane = true"),
        'antenna "A1" > ground_plane = true', "height_m")
    bad(tmp_path, edit(ap, ap + '\nground_plane = true\npolarization = "horizontal"'),
        'antenna "A1" > polarization = "horizontal"', "vertical")
    bad(tmp_path, edit(ap, ap + "\nground_plane = 1"), "ground_plane")


# -- unreadable files ---------------------------------------------------------------------


def test_toml_syntax_error_gives_line_and_column(tmp_path):
    message = bad(tmp_path, edit("carriers = 2", "carriers == 2"), "invalid TOML")
    line = BASE.splitlines().index("carriers = 2") + 1
    assert f"line {line}, column" in message


def test_binary_non_utf8_missing_and_folder(tmp_path):
    path = tmp_path / "bin.toml"
    path.write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00")
    with pytest.raises(InputError, match="binary"):
        read_site(path)
    path.write_bytes('[site]\nname = "Caf\u00e9"\n'.encode("latin-1"))
    with pytest.raises(InputError, match=r"line 2: byte 0xe9 is not UTF-8"):
        read_site(path)
    with pytest.raises(InputError, match="site file not found"):
        read_site(tmp_path / "absent.toml")
    with pytest.raises(InputError, match="is a folder"):
        read_site(tmp_path)


def test_utf8_bom_is_accepted(tmp_path):
    path = write_site(tmp_path, BASE)
    path.write_bytes(b"\xef\xbb\xbf" + path.read_bytes())
    assert read_site(path).name == "Test site"


def test_command_line_prints_one_error_line_and_exits_2(tmp_path):
    """Issue 4, bad input: exit status 2, one clear message, no traceback."""
    import subprocess
    import sys

    path = write_site(tmp_path, edit("activity = 0.5", "activity = 1.5"))
    out = subprocess.run([sys.executable, "-m", "siteexposure", "screen", str(path), "--json"],
                         capture_output=True, text=True, timeout=120, check=False)
    assert out.returncode == 2
    assert out.stdout == ""
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: ") and "Traceback" not in out.stderr
    assert 'antenna "A1" > activity = 1.5' in lines[0]


def test_pattern_file_far_from_its_frequency_warns(tmp_path):
    text = edit("frequency_mhz = 1950", "frequency_mhz = 3500")  # panel file is for 1950 MHz
    with pytest.warns(SiteExposureWarning, match=r'antenna "A1": frequency_mhz = 3500 is far'):
        read_site(write_site(tmp_path, text))


def test_area_smaller_than_a_grid_cell_warns(tmp_path):
    text = BASE + '\n[[area]]\nname = "Hatch"\naccess = "worker"\nfloor_m = 0\n' \
                  'outline = [[0, 0], [0.3, 0], [0.3, 0.3]]\n'
    with pytest.warns(SiteExposureWarning, match=r'area "Hatch": the outline .* smaller than one'):
        read_site(write_site(tmp_path, text))
