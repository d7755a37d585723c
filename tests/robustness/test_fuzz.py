"""Fuzzing: mutated site files and pattern files never end in a traceback.

Hypothesis starts from the valid invented deck of :mod:`sitegen` and its pattern file and
mutates them -- keys deleted, values swapped for other types, NaN, inf, huge, tiny and
negative numbers, random text, unknown words and keys, duplicated tables and entries, and
then the text itself: cut short, lines shuffled, deleted or repeated, random bytes put in.
Every case must end either in a valid result or in a package error
(:class:`~siteexposure.errors.SiteExposureError`) whose message is one line; through the
command line, exit status 0/1 with one JSON object on stdout, or 2 with one ``Error:``
line. Any other exception, and any numpy warning (overflow, invalid value), fails the test
and Hypothesis shrinks it to a small reproducer.

Two sizes of the same tests:

* ``make test``: a few hundred cases each, derandomised (the same cases every run), so CI
  is stable and quick;
* ``make fuzz`` (``pytest -m fuzz``): the campaign, ``SITEEXPOSURE_FUZZ_EXAMPLES`` cases
  each (default 10 000), randomised; add ``--hypothesis-show-statistics`` to see how the
  cases ended (accepted, refused by the reader, refused by the size check, ...).
"""

from __future__ import annotations

import json
import math
import os
import random
import tempfile
from pathlib import Path
from typing import Any

import numpy as np
import pytest
import sitegen
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from siteexposure.errors import SiteExposureError

QUICK_SITE_EXAMPLES = 300
QUICK_PATTERN_EXAMPLES = 300
CAMPAIGN_EXAMPLES = int(os.environ.get("SITEEXPOSURE_FUZZ_EXAMPLES", "10000"))
#: cases whose grids hold more points than this are checked up to the size check only (time)
SCREEN_POINT_LIMIT = 60_000
#: ... and so are cases with an array-model aperture longer than this many wavelengths
ARRAY_WAVELENGTHS = 10.0

_HEALTH = [HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.filter_too_much]
QUICK = settings(max_examples=QUICK_SITE_EXAMPLES, deadline=None, derandomize=True,
                 database=None, suppress_health_check=_HEALTH)
QUICK_PATTERN = settings(QUICK, max_examples=QUICK_PATTERN_EXAMPLES)
CAMPAIGN = settings(max_examples=CAMPAIGN_EXAMPLES, deadline=None, database=None,
                    suppress_health_check=_HEALTH)

# --------------------------------------------------------------------------------------
# values a mutation may put in
# --------------------------------------------------------------------------------------

WORDS = ["public", "worker", "none", "auto", "far-field", "cylindrical", "array", "aperture",
         "vertical-line", "peak", "fcc-1310", "icnirp-2020", "icnirp-1998", "ieee-c95.1-2019",
         "hc-sc6-2015", "isotropic", "half-wave-dipole", "3gpp-panel", "itu-f1336-omni",
         "itu-f1336-sector", "parabolic", sitegen.PATTERN_NAME, "", ".", "..", "/dev/null",
         "missing.csv", "x" * 300, "a\u0000b", "\u202e", "general", "occupational"]
KEYS = ["name", "origin", "lat", "lon", "limits", "averaging", "method", "bottom_m", "top_m",
        "points", "resolution_m", "zone_levels", "reflection_factor", "access", "floor_m",
        "outline", "outline_lonlat", "at", "id", "operator", "position", "azimuth_deg",
        "mechanical_tilt_deg", "electrical_tilt_deg", "frequency_mhz", "tx_power_w",
        "tx_power_dbm", "carriers", "line_loss_db", "activity", "pattern", "gain_dbi",
        "gain_dbd", "aperture", "height_m", "width_m", "diameter_m", "model", "hpbw_h_deg",
        "hpbw_v_deg", "front_to_back_db", "side_lobe_db", "k", "side_lobes", "bogus"]
EXTREMES = [0.0, -0.0, 1e-320, 1e-9, 1e-3, 0.5, 1.0, 2.0, 90.0, 360.0, 1e4, 1e7, 1e9, 1e308,
            -1e308, -1.0, -90.0, float("nan"), float("inf"), -float("inf")]

scalars = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from(EXTREMES),
    st.integers(min_value=-(2**63), max_value=2**63 - 1),
    st.booleans(),
    st.text(max_size=12),
    st.sampled_from(WORDS),
)
values = st.recursive(
    scalars,
    lambda inner: st.one_of(st.lists(inner, max_size=4),
                            st.dictionaries(st.sampled_from(KEYS), inner, max_size=3)),
    max_leaves=6,
)


def _paths(obj: Any, prefix: tuple = ()) -> list[tuple]:
    out = []
    if isinstance(obj, dict):
        items = list(obj.items())
    elif isinstance(obj, list):
        items = list(enumerate(obj))
    else:
        return out
    for key, item in items:
        out.append((*prefix, key))
        out.extend(_paths(item, (*prefix, key)))
    return out


def _parent(doc: Any, path: tuple) -> Any:
    for key in path[:-1]:
        doc = doc[key]
    return doc


def mutate_document(data: st.DataObject, doc: dict) -> dict:
    """One to four structural mutations of a parsed site document."""
    for _ in range(data.draw(st.integers(1, 4), label="n_mutations")):
        paths = _paths(doc)
        path = paths[data.draw(st.integers(0, len(paths) - 1), label="where")]
        parent, key = _parent(doc, path), path[-1]
        op = data.draw(st.sampled_from(["delete", "replace", "scale", "duplicate", "add-key",
                                        "swap", "nudge", "nudge", "nudge"]), label="op")
        number = isinstance(parent[key], int | float) and not isinstance(parent[key], bool)
        if op == "nudge" and number:  # a plausible edit: the file often stays valid
            step = data.draw(st.floats(-3.0, 3.0), label="step")
            parent[key] = type(parent[key])(parent[key] + step) if isinstance(
                parent[key], float) else parent[key] + int(step)
        elif op == "delete":
            del parent[key]
        elif op == "replace":
            parent[key] = data.draw(values, label="value")
        elif op == "scale" and number:
            factor = data.draw(st.sampled_from([-1.0, 0.0, 1e-9, 1e-3, 0.1, 10.0, 1e3, 1e9]))
            parent[key] = parent[key] * factor
        elif op == "duplicate" and isinstance(parent, list):
            parent.insert(key, json.loads(json.dumps(parent[key])))
        elif op == "add-key" and isinstance(parent[key], dict):
            parent[key][data.draw(st.sampled_from(KEYS))] = data.draw(values, label="value")
        elif op == "swap":
            other = paths[data.draw(st.integers(0, len(paths) - 1), label="other")]
            if other[: len(path)] != path and path[: len(other)] != other:
                o_parent = _parent(doc, other)
                parent[key], o_parent[other[-1]] = o_parent[other[-1]], parent[key]
    return doc


def mutate_text(data: st.DataObject, text: str) -> bytes:
    """Zero to two mutations of the text itself; returns the bytes written."""
    lines = text.splitlines(keepends=True)
    for _ in range(data.draw(st.integers(0, 2), label="n_text_mutations")):
        if not lines:
            break
        op = data.draw(st.sampled_from(["truncate", "delete-line", "repeat-line", "shuffle",
                                        "swap-lines", "bytes", "char"]), label="text_op")
        i = data.draw(st.integers(0, len(lines) - 1), label="line")
        if op == "truncate":
            joined = "".join(lines)
            lines = [joined[: data.draw(st.integers(0, len(joined)), label="cut")]]
        elif op == "delete-line":
            del lines[i]
        elif op == "repeat-line":
            lines.insert(i, lines[i])
        elif op == "shuffle":
            random.Random(data.draw(st.integers(0, 2**32 - 1), label="seed")).shuffle(lines)
        elif op == "swap-lines":
            j = data.draw(st.integers(0, len(lines) - 1), label="line2")
            lines[i], lines[j] = lines[j], lines[i]
        elif op == "char":
            pos = data.draw(st.integers(0, len(lines[i])), label="pos")
            ch = data.draw(st.sampled_from(list("[]{}=\"',#\\\n.-+e") + ["\u00e9", "\t"]))
            lines[i] = lines[i][:pos] + ch + lines[i][pos:]
        else:  # random bytes, possibly not UTF-8 and with NULs
            raw = data.draw(st.binary(min_size=1, max_size=8), label="bytes")
            pos = data.draw(st.integers(0, len(lines[i])), label="pos")
            encoded = lines[i].encode("utf-8")
            head, tail = encoded[:pos], encoded[pos:]
            return "".join(lines[:i]).encode() + head + raw + tail + "".join(lines[i + 1:]).encode()
    return "".join(lines).encode("utf-8")


# --------------------------------------------------------------------------------------
# what every case must satisfy
# --------------------------------------------------------------------------------------


def _one_line(exc: SiteExposureError) -> None:
    text = str(exc)
    assert text and "\n" not in text and "\r" not in text, repr(text)


def _small_enough(site) -> bool:
    from siteexposure.engine.grid import estimate_columns

    k = len(site.averaging.heights_m())
    n = sum(estimate_columns(a, site.resolution_m) * k for a in site.areas if a.access != "none")
    # the array model's set-up grows fast with the electrical length of the aperture
    long_arrays = any(a.model in ("array", "auto") and a.aperture_height_m is not None
                      and a.aperture_height_m * a.frequency_mhz / 299.792458 > ARRAY_WAVELENGTHS
                      for a in site.antennas)
    return n <= SCREEN_POINT_LIMIT and not long_arrays


def check_site_file(path: Path) -> str:
    """Read ``path``; if it is valid and small, screen it through the command line."""
    from siteexposure.engine.orchestrator import check_grid_size
    from siteexposure.readers.site_toml import read_site

    with sitegen.soft_warnings_ignored():
        try:
            site = read_site(path)
        except SiteExposureError as exc:
            _one_line(exc)
            return f"refused by the reader: {type(exc).__name__}"
        if not _small_enough(site):
            try:
                check_grid_size(site)
            except SiteExposureError as exc:
                _one_line(exc)
                return "refused by the size check"
            return "accepted (too large to screen here)"
    run = sitegen.run_cli(["screen", path, "--json", "--no-progress"])
    if run.code == 2:
        sitegen.assert_one_line_error(run)
        assert run.stdout == ""
        return "refused by screen"
    assert run.code in (0, 1), (run.code, run.stderr[-2000:])
    result = json.loads(run.stdout)
    assert {"areas", "antennas", "points"} <= set(result)
    for area in result["areas"]:
        ratio = area["max_exposure_ratio"]
        assert ratio is None or (isinstance(ratio, float | int) and math.isfinite(ratio)
                                 and ratio >= 0.0), area
    _zones_of(path)
    return f"screened (exit {run.code})"


def _zones_of(path: Path) -> None:
    """The keep-out zones of a screened site (what `map` and `report` draw) build too."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.engine.zones import compute_zones
    from siteexposure.readers.site_toml import read_site

    with sitegen.soft_warnings_ignored():
        for zone in compute_zones(evaluate_site(read_site(path))):
            assert zone.area_m2 >= 0.0 and zone.geometry.is_valid


def check_pattern_file(path: Path) -> str:
    """Read ``path`` as a pattern file; an accepted pattern gives finite gains everywhere."""
    from siteexposure.readers.pattern_csv import read_pattern_csv

    with sitegen.soft_warnings_ignored():
        try:
            pattern = read_pattern_csv(path)
        except SiteExposureError as exc:
            _one_line(exc)
            return "refused by the reader"
        phi, theta = np.meshgrid(np.linspace(-np.pi, 2 * np.pi, 61),
                                 np.linspace(-np.pi / 2, np.pi / 2, 31))
        gain = np.asarray(pattern.gain(phi, theta), dtype=float)
        assert np.all(np.isfinite(gain)) and np.all(gain >= 0.0)
        peak = 10.0 * math.log10(float(gain.max()))
        # the reader holds the stated peak within 0.5 dB of the data's maximum; the additive
        # rule G = H(phi) + V(theta) - V(0) (3GPP TR 38.901 Table 7.3-1 form) can add the
        # vertical cut's rise above its horizon value to the horizontal maximum (an
        # overestimate, on the safe side), so that is the bound to hold
        vf, vb = np.asarray(pattern.v_front_gain_dbi), np.asarray(pattern.v_back_gain_dbi)
        vf0 = float(np.interp(0.0, pattern.v_front_elev_deg, vf))
        vb0 = float(np.interp(0.0, pattern.v_back_elev_deg, vb))
        data_max = max(float(np.max(pattern.h_gain_dbi)), float(vf.max()), float(vb.max()))
        rise = max(0.0, float(vf.max()) - vf0, float(vb.max()) - vb0)
        if pattern.sphere is not None:  # bilinear in dB never leaves the table's range
            assert peak <= pattern.sphere.max_gain_dbi + 1e-9
            assert pattern.sphere.max_gain_dbi <= float(pattern.peak_gain_dbi) + 0.5 + 1e-9
        else:
            assert peak <= data_max + rise + 1e-9
        assert data_max <= float(pattern.peak_gain_dbi) + 0.5 + 1e-9
    return "accepted"


def _base(data: st.DataObject) -> dict:
    """The deck, or (half the time) a hot deck whose limits are exceeded, so that the
    mitigation and keep-out-zone paths run too."""
    doc = sitegen.base_site()
    if data.draw(st.booleans(), label="hot"):
        doc["antenna"][0].update(tx_power_w=2000.0, position=[1.0, 2.0, 3.5])
        doc["antenna"][1].update(tx_power_dbm=50.0)
    return doc


def _site_case(data: st.DataObject) -> None:
    doc = mutate_document(data, _base(data))
    try:
        text = sitegen.dump_toml(doc)
    except TypeError:  # a value with no TOML form: nothing to test
        text = sitegen.dump_toml(sitegen.base_site())
    raw = mutate_text(data, text)
    with tempfile.TemporaryDirectory(prefix="fuzz-site-") as tmp:
        path = sitegen.write_site(Path(tmp), "")
        path.write_bytes(raw)
        event(check_site_file(path))


def _pattern_case(data: st.DataObject) -> None:
    sphere = data.draw(st.sampled_from([None, None, 15.0]), label="sphere_step")  # a 3-D table
    lines = sitegen.pattern_text(sphere_step=sphere).splitlines(keepends=True)
    for _ in range(data.draw(st.integers(0, 3), label="n_field_edits")):
        i = data.draw(st.integers(0, len(lines) - 1), label="line")
        fields = lines[i].rstrip("\n").split(",")
        j = data.draw(st.integers(0, len(fields) - 1), label="field")
        fields[j] = data.draw(st.one_of(
            st.sampled_from(["", "nan", "inf", "-inf", "1e400", "-1e400", "abc", "0x10", "1e-320",
                             "360", "360.0", "-90", "90", "0", "-0", "1e9", "front", "back",
                             "horizontal", "vertical", '"', '"a,b"', " 5 ", "\u0665"]),
            st.floats(allow_nan=True, allow_infinity=True).map(repr),
            st.floats(-5.0, 15.0).map(lambda v: f"{v:.3f}"),  # plausible: often still valid
            st.text(max_size=8)), label="token")
        lines[i] = ",".join(fields) + "\n"
    raw = mutate_text(data, "".join(lines))
    with tempfile.TemporaryDirectory(prefix="fuzz-pattern-") as tmp:
        path = Path(tmp) / "p.csv"
        path.write_bytes(raw)
        outcome = check_pattern_file(path)
        event(outcome)
        if outcome == "accepted" and data.draw(st.integers(0, 3), label="screen") == 0:
            site = sitegen.write_site(Path(tmp) / "site", sitegen.base_site())
            (site.parent / sitegen.PATTERN_NAME).write_bytes(raw)
            event("pattern " + check_site_file(site))


# --------------------------------------------------------------------------------------
# the tests
# --------------------------------------------------------------------------------------


@QUICK
@given(st.data())
def test_mutated_site_files(data):
    _site_case(data)


@QUICK_PATTERN
@given(st.data())
def test_mutated_pattern_files(data):
    _pattern_case(data)


@pytest.mark.fuzz
@CAMPAIGN
@given(st.data())
def test_mutated_site_files_campaign(data):
    _site_case(data)


@pytest.mark.fuzz
@CAMPAIGN
@given(st.data())
def test_mutated_pattern_files_campaign(data):
    _pattern_case(data)


def test_rows_in_any_order_give_the_same_pattern(tmp_path):
    """SPEC 3.2: "Angles need not be evenly spaced; the reader sorts" -- a shuffled table is
    the same pattern (gains equal to the last bit)."""
    from siteexposure.readers.pattern_csv import read_pattern_csv

    text = sitegen.pattern_text()
    head, table = text.split("cut,side,angle_deg,gain_dbi\n")
    rows = table.splitlines(keepends=True)
    random.Random(8).shuffle(rows)
    (tmp_path / "a.csv").write_text(text)
    (tmp_path / "b.csv").write_text(head + "cut,side,angle_deg,gain_dbi\n" + "".join(rows))
    phi, theta = np.meshgrid(np.linspace(0, 2 * np.pi, 73), np.linspace(-np.pi / 2, np.pi / 2, 37))
    a = read_pattern_csv(tmp_path / "a.csv").gain(phi, theta)
    b = read_pattern_csv(tmp_path / "b.csv").gain(phi, theta)
    np.testing.assert_array_equal(a, b)
