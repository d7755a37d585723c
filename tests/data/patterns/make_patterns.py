"""Regenerate the pattern CSV v1 test files of this folder from published closed forms.

Run from the repository root::

    .venv/bin/python tests/data/patterns/make_patterns.py

The formulas are written out here on purpose, independently of siteexposure.physics.patterns,
so that the files can check that code. Only the file layout comes from the package
(siteexposure.readers.pattern_csv.format_pattern_csv). See README.md beside this script.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from scipy.special import sici

HERE = Path(__file__).resolve().parent
FLOOR_DB = 40.0  # exact nulls are written this far below the peak (a file cannot hold -inf)


def _db(x):
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(x)


def dipole_shape(elev_deg):
    """Balanis, Antenna Theory 4th ed., §4.6: [cos(pi/2 cos t) / sin t]^2, t from the axis."""
    t = np.deg2rad(90.0 - np.asarray(elev_deg, dtype=float))
    s = np.sin(t)
    with np.errstate(divide="ignore", invalid="ignore"):
        f = np.cos(0.5 * np.pi * np.cos(t)) / s
    return np.where(np.abs(s) < 1e-12, 0.0, f) ** 2


def dipole_directivity():
    """D0 = 4 / Cin(2 pi), Cin(x) = gamma + ln x - Ci(x)  (Balanis §4.6)."""
    ci = sici(2.0 * np.pi)[1]
    cin = np.euler_gamma + np.log(2.0 * np.pi) - ci
    return 4.0 / cin


def collinear_shape(elev_deg, n=8, spacing_wl=0.7, tilt_deg=0.0):
    """Vertical uniform array of n half-wave dipoles (Balanis §6.3, uniform linear array):
    |AF|^2 with AF = sin(n psi/2) / (n sin(psi/2)), psi = k d (sin(el) + sin(tilt)),
    times the dipole element power pattern."""
    el = np.deg2rad(np.asarray(elev_deg, dtype=float))
    psi = 2.0 * np.pi * spacing_wl * (np.sin(el) + np.sin(np.deg2rad(tilt_deg)))
    half = 0.5 * psi
    with np.errstate(divide="ignore", invalid="ignore"):
        af = np.sin(n * half) / (n * np.sin(half))
    af = np.where(np.abs(np.sin(half)) < 1e-12, 1.0, af)
    return dipole_shape(elev_deg) * af**2


def omni_directivity(shape):
    """D = 2 max(F) / integral_{-pi/2}^{pi/2} F(el) cos(el) d(el), trapezoid on 0.001 deg."""
    el = np.linspace(-90.0, 90.0, 180_001)
    f = shape(el)
    integral = np.trapezoid(f * np.cos(np.deg2rad(el)), np.deg2rad(el))
    return 2.0 * f.max() / integral


def panel_3gpp(phi_deg, elev_deg, g_max=17.0, hpbw_h=65.0, hpbw_v=7.0, a_m=30.0, sla_v=30.0,
               tilt_deg=0.0):
    """3GPP TR 38.901 V17.0.0 Table 7.3-1 form (zenith angle theta'' = 90 - elevation) with the
    tilt as theta - theta_tilt in the vertical term: G = G_max - min(-(A_V + A_H), A_m)."""
    phi = np.mod(np.asarray(phi_deg, dtype=float) + 180.0, 360.0) - 180.0
    a_v = -np.minimum(12.0 * ((np.asarray(elev_deg, dtype=float) + tilt_deg) / hpbw_v) ** 2, sla_v)
    a_h = -np.minimum(12.0 * (phi / hpbw_h) ** 2, a_m)
    return g_max - np.minimum(-(a_v + a_h), a_m)


def files() -> dict[str, str]:
    from siteexposure.readers.pattern_csv import format_pattern_csv

    out = {}
    h1 = np.arange(0.0, 360.0, 1.0)
    v1 = np.arange(-90.0, 90.001, 1.0)
    v05 = np.arange(-90.0, 90.001, 0.5)

    d0 = dipole_directivity()
    g = _db(d0) + np.maximum(_db(dipole_shape(v1)), -FLOOR_DB)
    out["dipole_halfwave.csv"] = format_pattern_csv(
        peak_gain_dbi=_db(d0), h_angle_deg=h1, h_gain_dbi=np.full(h1.size, _db(d0)),
        v_front_elev_deg=v1, v_front_gain_dbi=g, v_back_elev_deg=v1, v_back_gain_dbi=g,
        metadata={"name": "thin half-wave dipole, vertical (Balanis 4th ed. 4.6)",
                  "electrical_tilt_deg": 0.0, "directivity_source": "D0 = 4/Cin(2 pi)"})

    for tilt in (0.0, 6.0):
        def shape(el, tilt=tilt):
            return collinear_shape(el, tilt_deg=tilt)
        d = omni_directivity(shape)
        f = shape(v05)
        g = _db(d) + np.maximum(_db(f / f.max()), -FLOOR_DB)
        out[f"collinear_8x07_tilt{int(tilt)}.csv"] = format_pattern_csv(
            peak_gain_dbi=float(g.max()), h_angle_deg=h1,
            h_gain_dbi=np.full(h1.size, g[v05 == 0.0][0]),
            v_front_elev_deg=v05, v_front_gain_dbi=g, v_back_elev_deg=v05, v_back_gain_dbi=g,
            metadata={"name": f"8 half-wave dipoles, 0.7 wavelength apart, {tilt:g} deg downtilt",
                      "electrical_tilt_deg": tilt,
                      "directivity_source": "numerical integral, trapezoid on 0.001 deg"})

    for tilt in (0.0, 6.0):
        out[f"panel_3gpp_tilt{int(tilt)}.csv"] = format_pattern_csv(
            peak_gain_dbi=17.0, h_angle_deg=h1, h_gain_dbi=panel_3gpp(h1, 0.0, tilt_deg=tilt),
            v_front_elev_deg=v05, v_front_gain_dbi=panel_3gpp(0.0, v05, tilt_deg=tilt),
            v_back_elev_deg=v05, v_back_gain_dbi=panel_3gpp(180.0, v05, tilt_deg=tilt),
            metadata={"name": f"3GPP TR 38.901 Table 7.3-1 form, 17 dBi, 65/7 deg, {tilt:g} deg tilt",
                      "electrical_tilt_deg": tilt, "frequency_mhz": 1950.0})
    return out


def main(argv: list[str]) -> int:
    check = "--check" in argv
    stale = []
    for name, text in files().items():
        path = HERE / name
        if check:
            if not path.exists() or path.read_text(encoding="utf-8") != text:
                stale.append(name)
        else:
            from siteexposure.atomic import write_text

            write_text(path, text)
            print(f"wrote {path}")
    if stale:
        print("stale: " + ", ".join(stale))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
