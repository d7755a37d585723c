"""Reader and writer of pattern CSV v1 (SPEC §3.2): round trip, tolerated variations, and an
error naming the file and the line for every way a file can be wrong."""

from __future__ import annotations

import os

import numpy as np
import pytest

from siteexposure.errors import PatternError
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.synthesis import TablePattern, sample_cuts
from siteexposure.readers.pattern_csv import (
    MAX_GAP_DEG,
    read_pattern_csv,
    write_pattern_csv,
)

H = np.arange(0.0, 360.0, 5.0)
V = np.arange(-90.0, 90.001, 5.0)


def rows():
    """A small valid file as a list of lines (a gentle invented pattern)."""
    hg = 10.0 - 8.0 * (1 - np.cos(np.deg2rad(H)))
    vf = 10.0 - 0.003 * V**2
    vb = hg[H == 180.0][0] - 0.003 * V**2 + 0.0
    vb[0], vb[-1] = vf[0], vf[-1]
    out = ["# pattern CSV v1", "# peak_gain_dbi = 10", "# frequency_mhz = 900",
           "# electrical_tilt_deg = 0", "# name = demo", "cut,side,angle_deg,gain_dbi"]
    out += [f"horizontal,,{a:g},{g:.4f}" for a, g in zip(H, hg, strict=True)]
    out += [f"vertical,front,{a:g},{g:.4f}" for a, g in zip(V, vf, strict=True)]
    out += [f"vertical,back,{a:g},{g:.4f}" for a, g in zip(V, vb, strict=True)]
    return out


def write(tmp_path, lines, name="p.csv", newline="\n", encoding="utf-8"):
    f = tmp_path / name
    f.write_bytes((newline.join(lines) + newline).encode(encoding))
    return f


def line_of(lines, prefix):
    return next(i for i, ln in enumerate(lines, 1) if ln.startswith(prefix))


def test_reads_a_valid_file(tmp_path):
    f = write(tmp_path, rows())
    p = read_pattern_csv(f)
    assert isinstance(p, TablePattern)
    assert (p.name, p.source, p.frequency_mhz, p.electrical_tilt_deg) == ("demo", str(f), 900.0, 0.0)
    assert p.peak_gain_dbi == 10.0
    assert p.metadata["name"] == "demo"
    assert float(p.gain_dbi(0.0, 0.0)) == pytest.approx(10.0)
    assert p.method == "additive"
    assert read_pattern_csv(f, method="weighted-bilinear").method == "weighted-bilinear"


def test_tolerated_variations(tmp_path):
    """Shuffled rows, CRLF, a BOM, comments, blank lines, 0 and 360 both, extra header keys."""
    lines = rows()
    head, body = lines[:6], lines[6:]
    body = [body[i] for i in np.random.default_rng(0).permutation(len(body))]
    first_h = next(r for r in body if r.startswith("horizontal,,0,"))
    body.append(first_h.replace("horizontal,,0,", "horizontal,,360,"))
    text_lines = ["# a free comment line", *head[:2], "# source = invented", *head[2:], "",
                  *body[:10], "# comment inside the table", "", *body[10:]]
    f = tmp_path / "v.csv"
    f.write_bytes(b"\xef\xbb\xbf" + ("\r\n".join(text_lines) + "\r\n").encode())
    p = read_pattern_csv(f)
    ref = read_pattern_csv(write(tmp_path, rows(), "ref.csv"))
    np.testing.assert_array_equal(p.h_angle_deg, ref.h_angle_deg)
    np.testing.assert_array_equal(p.v_back_gain_dbi, ref.v_back_gain_dbi)
    assert p.metadata["source"] == "invented"


def test_name_defaults_to_file_stem(tmp_path):
    lines = [ln for ln in rows() if not ln.startswith("# name")]
    assert read_pattern_csv(write(tmp_path, lines, "panel_a.csv")).name == "panel_a"


def test_writer_round_trip_is_exact(tmp_path):
    panel = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 16.3, "hpbw_h_deg": 63,
                                "hpbw_v_deg": 8.5}, electrical_tilt_deg=3.0)
    cuts = sample_cuts(panel, 1.0, 0.5)
    f = tmp_path / "sub" / "panel.csv"
    write_pattern_csv(f, **cuts, metadata={"name": "round trip", "frequency_mhz": 2100,
                                           "electrical_tilt_deg": 3.0})
    p = read_pattern_csv(f)
    np.testing.assert_array_equal(p.h_gain_dbi, cuts["h_gain_dbi"])
    np.testing.assert_array_equal(p.v_front_gain_dbi, cuts["v_front_gain_dbi"])
    np.testing.assert_array_equal(p.v_back_elev_deg, cuts["v_back_elev_deg"])
    assert (p.name, p.frequency_mhz, p.electrical_tilt_deg) == ("round trip", 2100.0, 3.0)
    assert p.peak_gain_dbi == cuts["peak_gain_dbi"]
    assert [x.name for x in f.parent.iterdir()] == ["panel.csv"]  # no temporary file left


def test_writer_refuses_invalid_data_and_leaves_old_file(tmp_path):
    f = write(tmp_path, rows(), "keep.csv")
    before = f.read_bytes()
    cuts = sample_cuts(parametric_pattern({"model": "isotropic"}), 30.0, 30.0)  # 30 deg steps
    with pytest.raises(PatternError, match=r"keep.csv \(being written\)', line \d+: .*jumps"):
        write_pattern_csv(f, **cuts, metadata={})
    assert f.read_bytes() == before
    with pytest.raises(PatternError, match="single line"):
        write_pattern_csv(f, **sample_cuts(parametric_pattern({"model": "isotropic"})),
                          metadata={"name": "two\nlines"})
    assert f.read_bytes() == before
    assert sorted(os.listdir(tmp_path)) == ["keep.csv"]


def replace_row(lines, prefix, new):
    i = line_of(lines, prefix) - 1
    out = list(lines)
    out[i] = new
    return out, i + 1


CASES = [
    # (mutation, expected message regex); mutation(lines) -> (lines, expected line number)
    (lambda L: (replace_row(L, "# peak_gain_dbi", "# note: no peak")[0], 6),  # table header
     r"header key 'peak_gain_dbi' is missing"),
    (lambda L: replace_row(L, "# peak_gain_dbi", "# peak_gain_dbi = high"),
     r"header key 'peak_gain_dbi' = 'high'; expected a gain in dBi"),
    (lambda L: replace_row(L, "# frequency_mhz", "# frequency_mhz = -3"),
     r"'frequency_mhz' = '-3'; expected a positive frequency"),
    (lambda L: replace_row(L, "# name", "# peak_gain_dbi = 10"),
     r"'peak_gain_dbi' appears again \(first on line 2\)"),
    (lambda L: replace_row(L, "cut,side", "cut,side,angle,gain"), r"table header is"),
    (lambda L: replace_row(L, "horizontal,,10,", "horizontal,,10,abc"),
     r"gain_dbi = 'abc'; expected a finite gain"),
    (lambda L: replace_row(L, "horizontal,,10,", "horizontal,,10,nan"), r"gain_dbi = 'nan'"),
    (lambda L: replace_row(L, "horizontal,,10,", "horizontal,,inf,3"), r"angle_deg = 'inf'"),
    (lambda L: replace_row(L, "horizontal,,10,", "horizontal,,361,3"),
     r"angle_deg = 361 is out of range; expected an azimuth within 0..360"),
    (lambda L: replace_row(L, "vertical,front,10,", "vertical,front,95,3"),
     r"angle_deg = 95 is out of range; expected an elevation within -90..\+90"),
    (lambda L: replace_row(L, "vertical,front,10,", "vertical,up,10,3"),
     r"side = 'up' on a vertical row; expected front or back"),
    (lambda L: replace_row(L, "horizontal,,10,", "horizontal,front,10,3"),
     r"side = 'front' on a horizontal row; expected it empty"),
    (lambda L: replace_row(L, "horizontal,,10,", "diagonal,,10,3"),
     r"cut = 'diagonal'; expected horizontal or vertical"),
    (lambda L: replace_row(L, "horizontal,,10,", "horizontal,,10"), r"has 3 fields; expected 4"),
    (lambda L: replace_row(L, "horizontal,,10,", "horizontal,,5,9.9"),
     r"horizontal angle 5 deg already given on line \d+"),
    (lambda L: (L + ["horizontal,,360,-3"], len(L) + 1),
     r"gain at 360 deg \(-3 dBi\) differs from the gain at 0 deg"),
    (lambda L: replace_row(L, "vertical,back,90,", "vertical,back,90,-40"),
     r"at the zenith the cuts disagree"),
    (lambda L: replace_row(L, "vertical,front,0,", "vertical,front,0,5"),
     r"at the boresight the cuts disagree"),
    (lambda L: replace_row(L, "vertical,back,0,", "vertical,back,0,0"),
     r"at the back the cuts disagree"),
    (lambda L: replace_row(L, "vertical,front,90,", "vertical,front,85.5,-14"),
     r"vertical front cut ends at 85.5 deg; expected a sample at \+90"),
    (lambda L: replace_row(L, "vertical,back,-90,", "vertical,back,-85.5,-14"),
     r"vertical back cut starts at -85.5 deg; expected a sample at -90"),
    (lambda L: replace_row(L, "# peak_gain_dbi", "# peak_gain_dbi = 11"),
     r"peak_gain_dbi = 11 but the largest gain in the table is 10 dBi \(line \d+\)"),
]


@pytest.mark.parametrize(("mutate", "message"), CASES)
def test_errors_name_file_and_line(tmp_path, mutate, message):
    lines, n = mutate(rows())
    f = write(tmp_path, lines, "bad.csv")
    with pytest.raises(PatternError, match=message) as info:
        read_pattern_csv(f)
    assert f"pattern file '{f}', line {n}: " in str(info.value)


def test_gap_larger_than_limit(tmp_path):
    assert MAX_GAP_DEG == 15.0
    lines = [ln for ln in rows() if not any(ln.startswith(f"horizontal,,{a},")
                                             for a in (50, 55, 60))]
    f = write(tmp_path, lines)
    with pytest.raises(PatternError, match=r"line (\d+): horizontal cut jumps from 45 deg \(line "
                                           r"\d+\) to 65 deg; expected steps of at most 15 deg"):
        read_pattern_csv(f)
    # gap through 360
    lines = [ln for ln in rows() if not any(ln.startswith(f"horizontal,,{a},")
                                             for a in (345, 350, 355))]
    with pytest.raises(PatternError, match=r"jumps from 340 deg .* through 360 to 0 deg"):
        read_pattern_csv(write(tmp_path, lines))


@pytest.mark.parametrize(("cut", "message"), [("horizontal", "the horizontal cut is missing"),
                                               ("vertical,front", "the vertical front cut is missing"),
                                               ("vertical,back", "the vertical back cut is missing")])
def test_missing_cut(tmp_path, cut, message):
    lines = [ln for ln in rows() if not ln.startswith(cut + ",")]
    with pytest.raises(PatternError, match=rf"line {len(lines)}: {message}"):
        read_pattern_csv(write(tmp_path, lines))


def test_no_table_at_all(tmp_path):
    with pytest.raises(PatternError, match=r"line 2: no table header"):
        read_pattern_csv(write(tmp_path, ["# pattern CSV v1", "# peak_gain_dbi = 3"]))


def test_binary_and_undecodable_files(tmp_path):
    f = tmp_path / "bin.csv"
    f.write_bytes(b"# pattern CSV v1\n\x89PNG\x00\x00\x01")
    with pytest.raises(PatternError, match=r"bin.csv', line 2: holds NUL bytes"):
        read_pattern_csv(f)
    g = write(tmp_path, [*rows()[:4], "# name = d\xe9mo"], "latin.csv", encoding="latin-1")
    with pytest.raises(PatternError, match=r"latin.csv', line 5: byte \d+ is not UTF-8"):
        read_pattern_csv(g)
    with pytest.raises(PatternError, match=r"missing.csv': not found"):
        read_pattern_csv(tmp_path / "missing.csv")
    with pytest.raises(PatternError, match=r"is a folder; expected a pattern file"):
        read_pattern_csv(tmp_path)
