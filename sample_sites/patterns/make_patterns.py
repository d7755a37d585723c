"""Generate the invented antenna pattern files of the sample sites (pattern CSV v1).

Every shape here is our own, built from simple invented formulas for demonstration; none
is copied from, fitted to or meant to resemble any product's datasheet:

* a vertical cut = (array factor of a column of elements) x (an element pattern), with a
  small null fill, so the cuts have realistic main beams, nulls and side lobes;
* a horizontal cut = an invented smooth main lobe (panels) or an invented ripple around
  a mast (omnidirectional antennas);
* the absolute gain comes from the directivity of the synthesised 3-D pattern (sphere
  integral of :func:`siteexposure.physics.synthesis.directivity_ratio`) less an invented
  ohmic and mismatch loss, so every file radiates a plausible, consistent power;
* one file (``panel_3d_2600.csv``) also carries a full-sphere 3-D table: there the 3-D
  pattern is (array factor of the column, a function of elevation) x (an invented element
  pattern of the angle from boresight), sampled on a grid and on the three cut planes, so
  the table and the cuts agree where they meet.

The array factor of N equally spaced elements with amplitudes a_n and a progressive
phase that steers the beam to elevation -tilt is (C. A. Balanis, Antenna Theory, 4th ed.,
Wiley, 2016, sec. 6.3)::

    AF(theta) = | sum_n a_n exp(j 2 pi (d / lambda) n (sin theta + sin tilt)) |^2

Run from the repository root (the files are rewritten only if their content changes; name
files to write only those)::

    .venv/bin/python sample_sites/patterns/make_patterns.py [panel_3d_2600.csv ...]
"""

from __future__ import annotations

import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from siteexposure.atomic import write_text
from siteexposure.physics.synthesis import TablePattern, directivity_ratio
from siteexposure.readers.pattern_csv import format_pattern_csv, pattern_from_text

HERE = Path(__file__).resolve().parent
NULL_FILL = 10.0 ** (-38.0 / 10.0)  #: relative power floor of the vertical cuts (null fill)

H_ANGLES = np.arange(0.0, 360.0, 1.0)
V_ANGLES = np.unique(
    np.concatenate([np.arange(-90.0, -30.0, 1.0), np.arange(-30.0, 30.0, 0.25),
                    np.arange(30.0, 90.5, 1.0)])
)


@dataclass(frozen=True)
class Column:
    """A vertical column of elements (all numbers invented)."""

    n: int  #: number of elements
    spacing_wl: float  #: element spacing in wavelengths
    tilt_deg: float  #: electrical downtilt built into the phases, positive down [deg]
    edge_taper: float = 1.0  #: amplitude of the end elements relative to the centre

    def power(self, elev_deg: np.ndarray) -> np.ndarray:
        """Array factor, power, normalised to 1 at its maximum (the steered beam). [1]"""
        k = np.arange(self.n) - 0.5 * (self.n - 1)
        x = np.abs(k) / max(0.5 * (self.n - 1), 1.0)
        amp = self.edge_taper + (1.0 - self.edge_taper) * np.cos(0.5 * np.pi * x) ** 2
        u = np.sin(np.radians(elev_deg))[..., None] + np.sin(np.radians(self.tilt_deg))
        af = np.abs(np.sum(amp * np.exp(2j * np.pi * self.spacing_wl * k * u), axis=-1)) ** 2
        return af / np.sum(amp) ** 2


def _cardioid(angle_deg: np.ndarray, power: float) -> np.ndarray:
    """((1 + cos a) / 2) ** power: a smooth single lobe (invented element shape). [1]"""
    return (0.5 * (1.0 + np.cos(np.radians(angle_deg)))) ** power


def _panel_horizontal(hpbw_deg: float, front_to_back_db: float) -> np.ndarray:
    """Invented panel azimuth shape: a main lobe with shoulders and a rippled back floor."""

    def shape(q: float) -> np.ndarray:
        main = 0.93 * _cardioid(H_ANGLES, q) + 0.07 * _cardioid(H_ANGLES, 0.35 * q)
        back = 10.0 ** ((-front_to_back_db + 2.0 * np.cos(np.radians(4.0 * H_ANGLES))) / 10.0)
        p = main + back * (1.0 - _cardioid(H_ANGLES, 2.0))
        return p / p[0]

    lo, hi = 0.5, 60.0
    for _ in range(80):  # bisection on the exponent for the wanted half-power beamwidth
        q = 0.5 * (lo + hi)
        p = shape(q)
        half = np.interp(0.5 * hpbw_deg, H_ANGLES, p)
        lo, hi = (q, hi) if half > 0.5 else (lo, q)
    return shape(0.5 * (lo + hi))


def _omni_horizontal(ripple_db: float, phase_deg: float = 0.0) -> np.ndarray:
    """Invented ripple of an omnidirectional antenna beside a mast (peak on boresight)."""
    a = np.radians(H_ANGLES)
    db = 0.5 * ripple_db * (np.cos(a) + 0.35 * np.cos(2.0 * a + np.radians(phase_deg)))
    return 10.0 ** ((db - db.max()) / 10.0)


def _dipole_element(elev_deg: np.ndarray) -> np.ndarray:
    """Vertical half-wave dipole, power, elevation from the horizon (Balanis sec. 4.6). [1]"""
    th = np.radians(elev_deg)
    c = np.cos(th)
    with np.errstate(invalid="ignore", divide="ignore"):
        p = np.where(np.abs(c) > 1e-9, (np.cos(0.5 * np.pi * np.sin(th)) / c) ** 2, 0.0)
    return p


def _cuts(h_rel: np.ndarray, column: Column, element_front, element_back_h: float):
    """Relative cuts (peak 1): horizontal at the horizon, vertical front and back."""
    af = column.power(V_ANGLES) + NULL_FILL
    e_front = element_front(V_ANGLES) + NULL_FILL
    s2 = np.sin(np.radians(V_ANGLES)) ** 2
    e_back = e_front * (element_back_h * (1.0 - s2) + s2)  # meets the front at the poles
    front = af * e_front
    back = af * e_back
    scale = front.max()
    front, back = front / scale, back / scale
    horizon = float(np.interp(0.0, V_ANGLES, front))
    return h_rel * horizon, front, back


@dataclass(frozen=True)
class Spec:
    """One pattern file: its invented column, element and azimuth shape."""

    file: str
    name: str
    frequency_mhz: float
    column: Column
    horizontal: np.ndarray
    element: object
    loss_db: float


def _specs() -> list[Spec]:
    panel_el = 7.3  # element exponent: about 70 deg element beamwidth in elevation
    low_h = _panel_horizontal(66.0, 27.0)
    mid_h = _panel_horizontal(62.0, 30.0)
    return [
        Spec("panel_lowband.csv", "Invented 800 MHz sector panel (demo data)", 800.0,
             Column(n=6, spacing_wl=0.80, tilt_deg=2.0, edge_taper=0.55), low_h,
             lambda e: _cardioid(e, panel_el), 1.0),
        Spec("panel_midband.csv", "Invented 1950 MHz sector panel (demo data)", 1950.0,
             Column(n=9, spacing_wl=0.85, tilt_deg=4.0, edge_taper=0.5), mid_h,
             lambda e: _cardioid(e, panel_el), 1.2),
        Spec("omni_collinear_155.csv", "Invented 155 MHz three-element omni (demo data)", 155.0,
             Column(n=3, spacing_wl=0.75, tilt_deg=0.0), _omni_horizontal(2.0, 40.0),
             _dipole_element, 0.6),
        Spec("uhf_collinear_460.csv", "Invented 460 MHz four-element collinear (demo data)",
             460.0, Column(n=4, spacing_wl=0.80, tilt_deg=1.0, edge_taper=0.8),
             _omni_horizontal(1.0), _dipole_element, 0.7),
        Spec("fm_bay_4.csv", "Invented 98 MHz four-bay side-mounted FM array (demo data)", 98.0,
             Column(n=4, spacing_wl=1.0, tilt_deg=0.0), _omni_horizontal(3.0, 70.0),
             lambda e: 0.08 + 0.92 * np.cos(np.radians(e)) ** 2, 0.5),
    ]


def build(spec: Spec) -> str:
    """The text of one pattern file."""
    h, front, back = _cuts(spec.horizontal, spec.column, spec.element,
                           float(spec.horizontal[180]))
    rel = TablePattern(H_ANGLES, 10 * np.log10(h), V_ANGLES, 10 * np.log10(front),
                       V_ANGLES, 10 * np.log10(back), peak_gain_dbi=0.0)
    directivity_dbi = -10.0 * np.log10(directivity_ratio(rel))
    peak = round(float(directivity_dbi - spec.loss_db), 2)
    text = format_pattern_csv(
        peak_gain_dbi=peak,
        h_angle_deg=H_ANGLES, h_gain_dbi=np.round(peak + 10 * np.log10(h), 2),
        v_front_elev_deg=V_ANGLES, v_front_gain_dbi=np.round(peak + 10 * np.log10(front), 2),
        v_back_elev_deg=V_ANGLES, v_back_gain_dbi=np.round(peak + 10 * np.log10(back), 2),
        metadata={"frequency_mhz": spec.frequency_mhz,
                  "electrical_tilt_deg": spec.column.tilt_deg, "name": spec.name},
    )
    pattern_from_text(text, spec.file)  # the reader's own checks, before writing
    return text


#: the 3-D table's grid: 5 deg in azimuth; 1 deg in elevation within +-30 deg, 5 deg beyond
SPHERE_AZ = np.arange(0.0, 360.0, 5.0)
SPHERE_EL = np.unique(np.concatenate([np.arange(-90.0, -30.0, 5.0), np.arange(-30.0, 30.0, 1.0),
                                      np.arange(30.0, 90.5, 5.0)]))


def _panel_3d(column: Column, element_power: float, front_to_back_db: float):
    """Invented 3-D panel, relative power (peak 1) at (azimuth, elevation) [deg], broadcasting:
    column array factor x a single-lobe element of the angle ``psi`` from boresight
    (``cos psi = cos el cos az``) over a back floor that rises behind the panel."""
    back = 10.0 ** (-front_to_back_db / 10.0)

    def power(az_deg, el_deg):
        cos_psi = np.cos(np.radians(el_deg)) * np.cos(np.radians(az_deg))
        lobe = (0.5 * (1.0 + cos_psi)) ** element_power
        element = lobe + back * (1.0 - (0.5 * (1.0 + cos_psi)) ** 2)
        return (column.power(np.asarray(el_deg, dtype=float)) + NULL_FILL) * element

    peak = float(power(0.0, np.linspace(-30.0, 30.0, 6001)).max())
    return lambda az_deg, el_deg: power(az_deg, el_deg) / peak


SPHERE_SPEC = ("panel_3d_2600.csv",
               "Invented 2600 MHz sector panel with a full-sphere table (demo data)", 2600.0,
               Column(n=10, spacing_wl=0.8, tilt_deg=6.0, edge_taper=0.45), 9.4, 28.0, 1.3)


def build_sphere() -> str:
    """The text of the pattern file with a full-sphere 3-D table."""
    file, name, freq, column, element_power, fb_db, loss_db = SPHERE_SPEC
    rel = _panel_3d(column, element_power, fb_db)

    def db(az, el):
        return 10.0 * np.log10(rel(az, el))

    table = db(SPHERE_AZ[:, None], SPHERE_EL[None, :])
    h, f, b = db(H_ANGLES, 0.0), db(0.0, V_ANGLES), db(180.0, V_ANGLES)
    shape = TablePattern(H_ANGLES, h, V_ANGLES, f, V_ANGLES, b, peak_gain_dbi=0.0,
                         sphere=(SPHERE_AZ, SPHERE_EL, table))
    peak = round(float(-10.0 * np.log10(directivity_ratio(shape)) - loss_db), 2)
    text = format_pattern_csv(
        peak_gain_dbi=peak,
        h_angle_deg=H_ANGLES, h_gain_dbi=np.round(peak + h, 2),
        v_front_elev_deg=V_ANGLES, v_front_gain_dbi=np.round(peak + f, 2),
        v_back_elev_deg=V_ANGLES, v_back_gain_dbi=np.round(peak + b, 2),
        metadata={"frequency_mhz": freq, "electrical_tilt_deg": column.tilt_deg, "name": name},
        sphere=(SPHERE_AZ, SPHERE_EL, np.round(peak + table, 2)),
    )
    pattern_from_text(text, file)  # the reader's own checks, before writing
    return text


def main(names: list[str]) -> None:
    builders = {spec.file: (lambda spec=spec: build(spec)) for spec in _specs()}
    builders[SPHERE_SPEC[0]] = build_sphere
    unknown = sorted(set(names) - set(builders))
    if unknown:
        raise SystemExit(f"unknown pattern file(s) {', '.join(unknown)}; expected some of "
                         f"{', '.join(builders)}")
    for file in names or list(builders):
        text = builders[file]()
        target = HERE / file
        if not target.exists() or target.read_text(encoding="utf-8") != text:
            write_text(target, text)
        peak = pattern_from_text(text, file).peak_gain_dbi
        print(f"{file}: peak {peak:.2f} dBi")


if __name__ == "__main__":
    main(sys.argv[1:])
