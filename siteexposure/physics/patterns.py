"""Parametric antenna patterns: the fixed model names of a site file's inline ``pattern``.

``pattern = { model = "3gpp-panel", gain_dbi = 17.5, hpbw_h_deg = 65, hpbw_v_deg = 7 }`` becomes
a :class:`ParametricPattern` through :func:`parametric_pattern`. Every model gives the numeric
gain (:meth:`ParametricPattern.gain`) in the antenna frame of
:mod:`siteexposure.physics.orientation`, and its cuts in dBi for plots and pattern files.

Gains are given as ``gain_dbi`` or ``gain_dbd`` (dBi = dBd + 2.15), never both. Electrical
downtilt (positive = down) is applied by the models that define it (``3gpp-panel``,
``itu-f1336-omni``, ``itu-f1336-sector``); the others reject a non-zero tilt (tilt a dish or a
dipole mechanically instead).

These are reference envelopes for screening: the ITU-R patterns are written for sharing
studies and bound the side lobes from above; none of them is normalised to radiate exactly
the input power (see :func:`siteexposure.physics.synthesis.directivity_ratio`).
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping
from typing import Any

import numpy as np

from siteexposure.constants import C0, DBD_TO_DBI, MHZ
from siteexposure.errors import PatternError, SiteExposureWarning
from siteexposure.physics.pattern_base import GainPattern, dbi_to_linear

#: Fixed model names (SPEC §3.2).
PARAMETRIC_MODELS = (
    "isotropic",
    "half-wave-dipole",
    "3gpp-panel",
    "itu-f1336-omni",
    "itu-f1336-sector",
    "parabolic",
)


#: Depth below the peak at which the cut methods report an exact null (the dipole's axis). [dB]
CUT_FLOOR_DB = 100.0


def _wrap_deg(phi) -> np.ndarray:
    """Azimuth [rad] -> degrees in [-180, 180)."""
    return np.mod(np.rad2deg(np.asarray(phi, dtype=float)) + 180.0, 360.0) - 180.0


def _elev_deg(theta) -> np.ndarray:
    return np.clip(np.rad2deg(np.asarray(theta, dtype=float)), -90.0, 90.0)


def _f1336_tilted_elevation(elev_deg, tilt_deg: float) -> np.ndarray:
    """Elevation seen by the untilted pattern for an electrical downtilt ``beta``. [deg]

    ``theta_e = 90 (theta + beta) / (90 + beta)`` for ``theta + beta >= 0`` and
    ``90 (theta + beta) / (90 - beta)`` otherwise: the beam moves to ``-beta`` while the zenith
    and nadir stay where they are (ITU-R F.1336-5, the electrical-tilt clause; equation
    numbers from memory).
    """
    s = np.asarray(elev_deg, dtype=float) + tilt_deg
    return np.where(s >= 0.0, 90.0 * s / (90.0 + tilt_deg), 90.0 * s / (90.0 - tilt_deg))


class ParametricPattern:
    """Base of the parametric models; implements :class:`GainPattern`.

    Attributes
    ----------
    name : str
        The model id (one of :data:`PARAMETRIC_MODELS`).
    peak_gain_dbi : float
        Maximum gain of the model. [dBi]
    electrical_tilt_deg : float
        Electrical downtilt applied, positive = down. [deg]
    source : str
        Citation of the published model.
    validity : str
        Frequency range and assumptions under which the source defines the model.
    params : dict
        The resolved parameters (defaults filled in), for reports.
    frequency_mhz : float or None
        Operating frequency, when known. [MHz]
    """

    name = ""
    source = ""
    validity = ""
    _freq_range_mhz: tuple[float, float] | None = None

    def __init__(self, peak_gain_dbi: float, electrical_tilt_deg: float, params: dict,
                 frequency_mhz: float | None, where: str) -> None:
        self.peak_gain_dbi = float(peak_gain_dbi)
        self.electrical_tilt_deg = float(electrical_tilt_deg)
        self.params = dict(params)
        self.frequency_mhz = None if frequency_mhz is None else float(frequency_mhz)
        rng = self._freq_range_mhz
        if rng is not None and self.frequency_mhz is not None:
            lo, hi = rng
            if not lo <= self.frequency_mhz <= hi:
                warnings.warn(
                    f"{where}: model '{self.name}' is defined by its source for {lo:g}..{hi:g} MHz "
                    f"but the antenna works at {self.frequency_mhz:g} MHz; use a measured pattern "
                    "file for this antenna, or accept the model as a rough envelope",
                    SiteExposureWarning,
                    stacklevel=3,
                )

    def __repr__(self) -> str:
        args = ", ".join(f"{k}={v!r}" for k, v in self.params.items())
        return f"{type(self).__name__}({args}, electrical_tilt_deg={self.electrical_tilt_deg!r})"

    def gain_dbi(self, phi, theta) -> np.ndarray:
        """Gain at pattern angles ``phi`` (azimuth) and ``theta`` (elevation), radians. [dBi]"""
        raise NotImplementedError

    def gain(self, phi, theta) -> np.ndarray:
        """Numeric power gain relative to isotropic (see :class:`GainPattern`). [1]"""
        return dbi_to_linear(self.gain_dbi(phi, theta))

    def horizontal_cut(self, phi) -> np.ndarray:
        """Gain on the antenna's horizontal plane (``theta = 0``) at azimuths ``phi`` [rad]. [dBi]

        Exact nulls are returned :data:`CUT_FLOOR_DB` below the peak (finite for plots and files).
        """
        phi = np.asarray(phi, dtype=float)
        g = np.broadcast_to(self.gain_dbi(phi, 0.0), phi.shape)
        return np.maximum(g, self.peak_gain_dbi - CUT_FLOOR_DB)

    def vertical_cut(self, theta, side: str = "front") -> np.ndarray:
        """Gain on the front (``phi = 0``) or back (``phi = pi``) half-plane at elevations
        ``theta`` [rad]; exact nulls :data:`CUT_FLOOR_DB` below the peak. [dBi]"""
        if side not in ("front", "back"):
            raise PatternError(f"model '{self.name}': side {side!r} is unknown; expected front or back")
        theta = np.asarray(theta, dtype=float)
        phi = 0.0 if side == "front" else np.pi
        g = np.broadcast_to(self.gain_dbi(phi, theta), theta.shape)
        return np.maximum(g, self.peak_gain_dbi - CUT_FLOOR_DB)


class IsotropicPattern(ParametricPattern):
    """The same gain in every direction (``model = "isotropic"``).

    With the default 0 dBi this is the ideal isotropic radiator, the reference of the dBi
    scale (common practice). With ``gain_dbi`` set it is the conservative screening envelope
    "peak gain in every direction", which radiates more than the input power (it is not
    normalised on purpose). No electrical tilt.

    References
    ----------
    .. [1] C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, §2.2
       (isotropic radiator) and §2.7 (directivity).
    """

    name = "isotropic"
    source = "isotropic radiator (Balanis, Antenna Theory, 4th ed., 2016, §2.2)"
    validity = "any frequency; a reference, not a physical antenna"

    def gain_dbi(self, phi, theta) -> np.ndarray:
        phi, theta = np.broadcast_arrays(np.asarray(phi, float), np.asarray(theta, float))
        return np.full(phi.shape, self.peak_gain_dbi)


class HalfWaveDipolePattern(ParametricPattern):
    """Thin half-wave dipole along the antenna's ``z`` axis (``model = "half-wave-dipole"``).

    Notes
    -----
    With ``theta`` the elevation (so that ``90 deg - theta`` is the angle from the axis)::

        G(theta) = D0 [cos(pi/2 sin theta) / cos theta]^2,   D0 = 1.64 (2.15 dBi)

    the far-field power pattern of a sinusoidal current on a very thin wire half a wavelength
    long. Lossless and matched, so the gain equals the directivity and the pattern integrates
    to ``4 pi`` over the sphere. Omnidirectional in azimuth; nulls along the axis. Valid in the
    far field of the dipole at any frequency at which it is half a wavelength long. No
    electrical tilt.

    References
    ----------
    .. [1] C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, §4.6
       (half-wavelength dipole: pattern, D0 = 1.643, i.e. 2.15 dBi).
    """

    name = "half-wave-dipole"
    source = "thin half-wave dipole (Balanis, Antenna Theory, 4th ed., 2016, §4.6)"
    validity = "far field of a resonant thin dipole (length lambda/2), vertical axis"
    D0 = 10.0 ** (DBD_TO_DBI / 10.0)  #: directivity of the half-wave dipole [1]

    def gain(self, phi, theta) -> np.ndarray:
        theta = np.asarray(theta, dtype=float)
        phi = np.asarray(phi, dtype=float)
        c = np.cos(theta)
        with np.errstate(divide="ignore", invalid="ignore"):
            f = np.cos(0.5 * np.pi * np.sin(theta)) / c
        f = np.where(np.abs(c) < 1e-12, 0.0, f)
        return np.broadcast_to(self.D0 * f * f, np.broadcast_shapes(phi.shape, theta.shape)).copy()

    def gain_dbi(self, phi, theta) -> np.ndarray:
        with np.errstate(divide="ignore"):
            return 10.0 * np.log10(self.gain(phi, theta))


class Panel3GPPPattern(ParametricPattern):
    """Sector panel with the 3GPP TR 38.901 element-pattern form (``model = "3gpp-panel"``).

    Parameters (site-file keys): ``gain_dbi`` (or ``gain_dbd``), ``hpbw_h_deg`` (phi_3dB),
    ``hpbw_v_deg`` (theta_3dB), ``front_to_back_db`` (A_max, default 30), ``side_lobe_db``
    (SLA_V, default 30).

    Notes
    -----
    With ``phi'`` the azimuth in [-180, 180] deg, ``theta`` the elevation and ``t`` the
    electrical downtilt (the 3GPP zenith angle is ``theta'' = 90 - theta``)::

        A_V(theta) = -min(12 ((theta + t) / theta_3dB)^2, SLA_V)
        A_H(phi)   = -min(12 (phi' / phi_3dB)^2, A_max)
        G(phi, theta) = G_max - min(-(A_V + A_H), A_max)

    TR 38.901 Table 7.3-1 gives this form with phi_3dB = theta_3dB = 65 deg,
    SLA_V = A_max = 30 dB and G_max = 8 dBi for one element; here those numbers are parameters
    so that a whole panel can be described, as SPEC §3.2 asks. The tilt enters as
    ``theta - theta_etilt`` in the vertical term, the form of 3GPP TR 36.814 Table A.2.1.1-2
    (from memory). TR 38.901 covers 0.5 to 100 GHz. The form ignores the lobe structure: it is a
    smooth envelope with a flat floor ``G_max - A_max``.

    References
    ----------
    .. [1] 3GPP TR 38.901 V17.0.0 (2022-03), clause 7.3, Table 7.3-1.
    .. [2] 3GPP TR 36.814 V9.0.0 (2010-03), Table A.2.1.1-2 (electrical tilt; from memory).
    """

    name = "3gpp-panel"
    source = "3GPP TR 38.901 V17.0.0 (2022-03), clause 7.3, Table 7.3-1"
    validity = "0.5-100 GHz (TR 38.901); smooth main-lobe envelope with a flat floor"
    _freq_range_mhz = (500.0, 100_000.0)

    def gain_dbi(self, phi, theta) -> np.ndarray:
        p = self.params
        az = _wrap_deg(phi)
        el = _elev_deg(theta)
        a_v = -np.minimum(12.0 * ((el + self.electrical_tilt_deg) / p["hpbw_v_deg"]) ** 2,
                          p["side_lobe_db"])
        a_h = -np.minimum(12.0 * (az / p["hpbw_h_deg"]) ** 2, p["front_to_back_db"])
        return self.peak_gain_dbi - np.minimum(-(a_v + a_h), p["front_to_back_db"])


class F1336OmniPattern(ParametricPattern):
    """Omnidirectional antenna of Rec. ITU-R F.1336-5 (``model = "itu-f1336-omni"``).

    Parameters (site-file keys): ``gain_dbi`` (or ``gain_dbd``) G0; ``hpbw_v_deg`` theta_3
    (default from G0, below); ``k`` side-lobe parameter (default 0.7); ``side_lobes`` =
    ``"peak"`` (default) or ``"average"``.

    Notes
    -----
    With ``theta`` the elevation in degrees (F.1336-5, recommends 2; equation numbers from
    memory)::

        G(theta)  = max(G1(theta), G2(theta))
        G1(theta) = G0 - 12 (theta / theta_3)^2
        G2(theta) = G0 - c + 10 log10( max(|theta| / theta_3, 1)^-1.5 + k )
        theta_3   = 107.6 * 10^(-0.1 G0)        [deg]

    with ``c = 12`` for the peak side-lobe pattern and ``c = 15`` for the average one. ``k``
    accounts for side lobes higher than an improved-side-lobe antenna's (k = 0.7 typical,
    k = 0 improved; from memory). An electrical downtilt ``beta`` maps the elevation as in
    the tilt clause of the Recommendation (see ``_f1336_tilted_elevation``). The pattern does
    not depend on azimuth. F.1336-5 covers 400 MHz to about 70 GHz and is written for sharing
    studies: a side-lobe envelope, conservative for exposure.

    References
    ----------
    .. [1] Rec. ITU-R F.1336-5 (01/2019), "Reference radiation patterns of omnidirectional,
       sectoral and other antennas for the fixed and mobile services for use in sharing
       studies in the frequency range from 400 MHz to about 70 GHz", recommends 2.
    """

    name = "itu-f1336-omni"
    source = "Rec. ITU-R F.1336-5 (01/2019), recommends 2 (omnidirectional antennas)"
    validity = "400 MHz - 70 GHz (F.1336-5); side-lobe envelope for sharing studies"
    _freq_range_mhz = (400.0, 70_000.0)

    def gain_dbi(self, phi, theta) -> np.ndarray:
        p = self.params
        el = _f1336_tilted_elevation(_elev_deg(theta), self.electrical_tilt_deg)
        g0, t3 = self.peak_gain_dbi, p["hpbw_v_deg"]
        c = 12.0 if p["side_lobes"] == "peak" else 15.0
        g1 = g0 - 12.0 * (el / t3) ** 2
        g2 = g0 - c + 10.0 * np.log10(np.maximum(np.abs(el) / t3, 1.0) ** -1.5 + p["k"])
        g = np.maximum(g1, g2)
        return np.broadcast_to(g, np.broadcast_shapes(np.shape(phi), g.shape)).copy()


class F1336SectorPattern(ParametricPattern):
    """Sectoral antenna of Rec. ITU-R F.1336-5 §3.1.1 (``model = "itu-f1336-sector"``).

    Peak side-lobe pattern for 400 MHz to 6 GHz. Parameters (site-file keys): ``gain_dbi`` (or
    ``gain_dbd``) G0; ``hpbw_h_deg`` phi_3 (required, at most 120 deg); ``hpbw_v_deg`` theta_3
    (default from G0 and phi_3, below; under 22.5 deg); ``k_p`` (0.7), ``k_h`` (0.7),
    ``k_v`` (0.3) -- the typical values of §3.1.1 (from memory).

    Notes
    -----
    With ``x_h = |phi'| / phi_3`` and ``x_v = |theta_e| / theta_3`` (``theta_e`` the elevation
    after the electrical-tilt mapping)::

        G(phi, theta) = G0 + G_hr(x_h) + R * G_vr(x_v)
        G_hr = -12 x_h^2                      x_h <= 0.5
             = -12 x_h^(2 - k_h) - lambda_kh   x_h > 0.5,   and G_hr >= G_180
        lambda_kh = 3 (1 - 0.5^(-k_h))
        R    = (G_hr(x_h) - G_hr(180/phi_3)) / (G_hr(0) - G_hr(180/phi_3))
        G_vr = -12 x_v^2                                  x_v < x_k = sqrt(1 - 0.36 k_v)
             = -12 + 10 log10(x_v^-1.5 + k_v)             x_k <= x_v < 4
             = -lambda_kv - C log10(x_v)                  4 <= x_v <= 90/theta_3
        lambda_kv = 12 - C log10(4) - 10 log10(4^-1.5 + k_v)
        C    = 10 log10((180/theta_3)^1.5 (4^-1.5 + k_v) / (1 + 8 k_p)) / log10(22.5/theta_3)
        G_180 = -12 + 10 log10(1 + 8 k_p) - 15 log10(180/theta_3)
        theta_3 = 31000 * 10^(-0.1 G0) / phi_3            [deg]

    The last two pieces of ``G_vr`` meet ``G_180`` at the zenith and nadir. The form of ``G``
    and the ``theta_3`` relation are confirmed against the Recommendation's section headings;
    the constants inside ``G_hr``, ``G_vr`` and ``C`` are from memory (they pass the
    continuity checks of tests/validation/test_pattern_models.py). Side-lobe envelope for
    sharing studies; conservative for exposure.

    References
    ----------
    .. [1] Rec. ITU-R F.1336-5 (01/2019), §3.1.1 (sectoral antennas, peak side-lobe patterns,
       400 MHz to 6 GHz), with the electrical-tilt clause of the Recommendation.
    """

    name = "itu-f1336-sector"
    source = "Rec. ITU-R F.1336-5 (01/2019), §3.1.1 (sectoral, peak side-lobe, 400 MHz-6 GHz)"
    validity = "400 MHz - 6 GHz, phi_3 <= 120 deg, theta_3 < 22.5 deg (F.1336-5 §3.1.1)"
    _freq_range_mhz = (400.0, 6000.0)

    def _derived(self) -> dict:
        p = self.params
        t3, kp, kv, kh = p["hpbw_v_deg"], p["k_p"], p["k_v"], p["k_h"]
        c = 10.0 * math.log10((180.0 / t3) ** 1.5 * (4.0**-1.5 + kv) / (1.0 + 8.0 * kp)) / math.log10(
            22.5 / t3
        )
        return {
            "C": c,
            "lambda_kv": 12.0 - c * math.log10(4.0) - 10.0 * math.log10(4.0**-1.5 + kv),
            "lambda_kh": 3.0 * (1.0 - 0.5 ** (-kh)),
            "x_k": math.sqrt(1.0 - 0.36 * kv),
            "G180": -12.0 + 10.0 * math.log10(1.0 + 8.0 * kp) - 15.0 * math.log10(180.0 / t3),
        }

    def relative_horizontal_db(self, x_h) -> np.ndarray:
        """``G_hr(x_h)`` of §3.1.1 (relative azimuth pattern, floored at G_180). [dB]"""
        d = self._derived()
        x = np.asarray(x_h, dtype=float)
        g = np.where(x <= 0.5, -12.0 * x**2, -12.0 * x ** (2.0 - self.params["k_h"]) - d["lambda_kh"])
        return np.maximum(g, d["G180"])

    def relative_vertical_db(self, x_v) -> np.ndarray:
        """``G_vr(x_v)`` of §3.1.1 (relative elevation pattern). [dB]"""
        d = self._derived()
        kv = self.params["k_v"]
        x = np.asarray(x_v, dtype=float)
        with np.errstate(divide="ignore"):
            mid = -12.0 + 10.0 * np.log10(x**-1.5 + kv)
            far = -d["lambda_kv"] - d["C"] * np.log10(x)
        g = np.where(x < d["x_k"], -12.0 * x**2, np.where(x < 4.0, mid, far))
        return np.maximum(g, d["G180"])

    def gain_dbi(self, phi, theta) -> np.ndarray:
        p = self.params
        x_h = np.abs(_wrap_deg(phi)) / p["hpbw_h_deg"]
        el = _f1336_tilted_elevation(_elev_deg(theta), self.electrical_tilt_deg)
        x_v = np.abs(el) / p["hpbw_v_deg"]
        g_hr = self.relative_horizontal_db(x_h)
        g_back = self.relative_horizontal_db(180.0 / p["hpbw_h_deg"])
        r = (g_hr - g_back) / (0.0 - g_back)
        return self.peak_gain_dbi + g_hr + r * self.relative_vertical_db(x_v)


class ParabolicPattern(ParametricPattern):
    """Parabolic dish, reference pattern of Rec. ITU-R F.699-8 (``model = "parabolic"``).

    Parameters (site-file keys): ``diameter_m`` and/or ``gain_dbi`` (or ``gain_dbd``); the
    operating frequency (``frequency_mhz`` of the antenna) is needed with ``diameter_m``.
    Without a diameter, ``D/lambda`` follows from ``20 log10(D/lambda) = G_max - 7.7``; without
    a gain, ``G_max = 20 log10(D/lambda) + 7.7`` (the Recommendation's relation, from memory).

    Notes
    -----
    Axially symmetric about boresight; ``psi`` is the off-axis angle,
    ``cos psi = cos theta cos phi`` [deg below]::

        D/lambda > 100:
          G = G_max - 2.5e-3 (D/lambda psi)^2       0 <= psi < psi_m
          G = G1 = 2 + 15 log10(D/lambda)             psi_m <= psi < psi_r
          G = 32 - 25 log10(psi)                      psi_r <= psi < 48
          G = -10                                     48 <= psi <= 180
        D/lambda <= 100:
          G = G_max - 2.5e-3 (D/lambda psi)^2       0 <= psi < psi_m
          G = G1                                      psi_m <= psi < 100 lambda/D
          G = 52 - 10 log10(D/lambda) - 25 log10(psi) 100 lambda/D <= psi < 48
          G = 10 - 10 log10(D/lambda)                 48 <= psi <= 180
        psi_m = 20 (lambda/D) sqrt(G_max - G1),  psi_r = 15.85 (D/lambda)^-0.6

    The pieces join continuously (checked in the tests). A peak envelope of the side lobes for
    interference studies, i.e. conservative for exposure off axis; far field only (the
    near-field and transition regions belong to the aperture field model). F.699 covers
    100 MHz to about 70 GHz (from memory). No electrical tilt.

    References
    ----------
    .. [1] Rec. ITU-R F.699-8 (01/2018), "Reference radiation patterns for fixed wireless
       system antennas for use in coordination studies and interference assessment in the
       frequency range from 100 MHz to about 86 GHz", recommends 2 and 3 (from memory).
    """

    name = "parabolic"
    source = "Rec. ITU-R F.699-8 (01/2018), reference pattern (peak side-lobe envelope)"
    validity = "far field, 100 MHz - 70 GHz (F.699-8); conservative side-lobe envelope"
    _freq_range_mhz = (100.0, 86_000.0)

    def gain_dbi(self, phi, theta) -> np.ndarray:
        p = self.params
        dl = p["d_over_lambda"]
        gmax = self.peak_gain_dbi
        c = np.cos(np.asarray(theta, dtype=float)) * np.cos(np.asarray(phi, dtype=float))
        psi = np.rad2deg(np.arccos(np.clip(c, -1.0, 1.0)))
        g1 = 2.0 + 15.0 * math.log10(dl)
        psi_m = 20.0 / dl * math.sqrt(gmax - g1)
        main = gmax - 2.5e-3 * (dl * psi) ** 2
        with np.errstate(divide="ignore"):
            lpsi = np.log10(np.maximum(psi, 1e-12))
        if dl > 100.0:
            psi_r = 15.85 * dl**-0.6
            side, far = 32.0 - 25.0 * lpsi, -10.0
        else:
            psi_r = 100.0 / dl
            side, far = 52.0 - 10.0 * math.log10(dl) - 25.0 * lpsi, 10.0 - 10.0 * math.log10(dl)
        return np.where(psi < psi_m, main,
                        np.where(psi < psi_r, g1, np.where(psi < 48.0, side, far)))


# -- building from a site-file table --------------------------------------------------------

_MODEL_CLASSES: dict[str, type[ParametricPattern]] = {
    "isotropic": IsotropicPattern,
    "half-wave-dipole": HalfWaveDipolePattern,
    "3gpp-panel": Panel3GPPPattern,
    "itu-f1336-omni": F1336OmniPattern,
    "itu-f1336-sector": F1336SectorPattern,
    "parabolic": ParabolicPattern,
}

_GAIN_KEYS = ("gain_dbi", "gain_dbd")
_ALLOWED = {
    "isotropic": {"gain_dbi", "gain_dbd"},
    "half-wave-dipole": set(),
    "3gpp-panel": {"gain_dbi", "gain_dbd", "hpbw_h_deg", "hpbw_v_deg", "front_to_back_db",
                   "side_lobe_db"},
    "itu-f1336-omni": {"gain_dbi", "gain_dbd", "hpbw_v_deg", "k", "side_lobes"},
    "itu-f1336-sector": {"gain_dbi", "gain_dbd", "hpbw_h_deg", "hpbw_v_deg", "k_p", "k_h", "k_v"},
    "parabolic": {"gain_dbi", "gain_dbd", "diameter_m"},
}
_TILTABLE = {"3gpp-panel", "itu-f1336-omni", "itu-f1336-sector"}


#: narrowest half-power beamwidth accepted: a 60 m dish at 300 GHz (HPBW ~ 70 lambda/D,
#: common practice) has 0.001 deg; no antenna on a site screened here comes near 0.05 [deg]
MIN_HPBW_DEG = 0.05


def _number(spec: Mapping[str, Any], key: str, where: str, lo: float, hi: float, expected: str,
            *, lo_open: bool = False, default: float | None = None) -> float | None:
    if key not in spec:
        return default
    value = spec[key]
    ok = isinstance(value, int | float) and not isinstance(value, bool) and math.isfinite(value)
    if ok:
        ok = (lo < value if lo_open else lo <= value) and value <= hi
    if ok and key.startswith("hpbw_") and value < MIN_HPBW_DEG:
        ok, expected = False, f"{expected}, at least {MIN_HPBW_DEG:g} deg (a physical beamwidth)"
    if not ok:
        raise PatternError(f"{where}: key '{key}' = {value!r}; expected {expected}")
    return float(value)


def _required(spec: Mapping[str, Any], key: str, model: str, where: str, expected: str) -> None:
    if key not in spec:
        raise PatternError(f"{where}: model '{model}' needs key '{key}' ({expected}); it is missing")


def _gain(spec: Mapping[str, Any], model: str, where: str, required: bool) -> float | None:
    given = [k for k in _GAIN_KEYS if k in spec]
    if len(given) == 2:
        raise PatternError(
            f"{where}: both 'gain_dbi' = {spec['gain_dbi']!r} and 'gain_dbd' = {spec['gain_dbd']!r} "
            "are given; expected exactly one of the two (dBi = dBd + 2.15)"
        )
    if not given:
        if required:
            raise PatternError(f"{where}: model '{model}' needs 'gain_dbi' or 'gain_dbd' (peak "
                               "gain); neither is given")
        return None
    key = given[0]
    value = _number(spec, key, where, -30.0, 70.0, "a peak gain as a number within -30..70")
    return value + DBD_TO_DBI if key == "gain_dbd" else value


def parametric_pattern(
    spec: Mapping[str, Any],
    *,
    electrical_tilt_deg: float = 0.0,
    frequency_mhz: float | None = None,
    where: str = "pattern",
) -> GainPattern:
    """Build a parametric pattern from a site file's inline ``pattern`` table.

    Parameters
    ----------
    spec : mapping
        ``{"model": <one of PARAMETRIC_MODELS>, ...model keys}``; see each model class.
    electrical_tilt_deg : float
        Electrical downtilt, positive = down, applied by the models that define it. [deg]
    frequency_mhz : float, optional
        Operating frequency (needed by ``parabolic`` with ``diameter_m``; used to warn when a
        model is used outside the range its source covers). [MHz]
    where : str
        Context for error messages, e.g. ``"site.toml: antenna 'A1': pattern"``.

    Returns
    -------
    ParametricPattern

    Raises
    ------
    PatternError
        Unknown model, missing or bad key, unknown extra key, both or neither gain keys,
        a tilt the model cannot apply -- each message names ``where``, the key, the value and
        what was expected.

    Examples
    --------
    >>> p = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.5,
    ...                         "hpbw_h_deg": 65, "hpbw_v_deg": 7})
    >>> round(float(p.horizontal_cut(np.deg2rad(32.5))), 3)
    14.5
    """
    if not isinstance(spec, Mapping):
        raise PatternError(f"{where}: {spec!r} is not a table; expected e.g. "
                           "{ model = \"3gpp-panel\", gain_dbi = 17.5, ... }")
    model = spec.get("model")
    if model not in _MODEL_CLASSES:
        shown = "missing" if "model" not in spec else f"{model!r}"
        raise PatternError(f"{where}: key 'model' is {shown}; expected one of "
                           f"{', '.join(PARAMETRIC_MODELS)}")
    extra = sorted(set(spec) - _ALLOWED[model] - {"model"})
    if extra:
        allowed = ", ".join(sorted(_ALLOWED[model])) or "no further keys"
        raise PatternError(f"{where}: key '{extra[0]}' = {spec[extra[0]]!r} is not a key of model "
                           f"'{model}'; expected {allowed}")
    tilt = _number({"electrical_tilt_deg": electrical_tilt_deg}, "electrical_tilt_deg", where,
                   -45.0, 45.0, "a downtilt in degrees within -45..45")
    if tilt != 0.0 and model not in _TILTABLE:
        raise PatternError(f"{where}: electrical_tilt_deg = {electrical_tilt_deg!r} but model "
                           f"'{model}' has no electrical tilt; expected 0 (use mechanical_tilt_deg "
                           "to point it)")
    if frequency_mhz is not None:
        frequency_mhz = _number({"frequency_mhz": frequency_mhz}, "frequency_mhz", where, 0.0,
                                1e7, "a positive frequency in MHz", lo_open=True)
    deg = "an angle in degrees"
    params: dict[str, Any] = {}
    if model == "isotropic":
        gain = _gain(spec, model, where, required=False)
        gain = 0.0 if gain is None else gain
    elif model == "half-wave-dipole":
        gain = DBD_TO_DBI
    elif model == "3gpp-panel":
        gain = _gain(spec, model, where, required=True)
        for key in ("hpbw_h_deg", "hpbw_v_deg"):
            _required(spec, key, model, where, deg)
        params["hpbw_h_deg"] = _number(spec, "hpbw_h_deg", where, 0.0, 360.0,
                                       f"{deg} within (0, 360]", lo_open=True)
        params["hpbw_v_deg"] = _number(spec, "hpbw_v_deg", where, 0.0, 180.0,
                                       f"{deg} within (0, 180]", lo_open=True)
        params["front_to_back_db"] = _number(spec, "front_to_back_db", where, 0.0, 100.0,
                                             "a ratio in dB within (0, 100]", lo_open=True,
                                             default=30.0)
        params["side_lobe_db"] = _number(spec, "side_lobe_db", where, 0.0, 100.0,
                                         "a level below the peak in dB within (0, 100]",
                                         lo_open=True, default=30.0)
    elif model == "itu-f1336-omni":
        gain = _gain(spec, model, where, required=True)
        params["hpbw_v_deg"] = _number(spec, "hpbw_v_deg", where, 0.0, 180.0,
                                       f"{deg} within (0, 180]", lo_open=True,
                                       default=107.6 * 10.0 ** (-0.1 * gain))
        params["k"] = _number(spec, "k", where, 0.0, 1.0, "a number within 0..1", default=0.7)
        sl = spec.get("side_lobes", "peak")
        if sl not in ("peak", "average"):
            raise PatternError(f"{where}: key 'side_lobes' = {sl!r}; expected \"peak\" or \"average\"")
        params["side_lobes"] = sl
    elif model == "itu-f1336-sector":
        gain = _gain(spec, model, where, required=True)
        _required(spec, "hpbw_h_deg", model, where, deg)
        params["hpbw_h_deg"] = _number(spec, "hpbw_h_deg", where, 0.0, 120.0,
                                       f"{deg} within (0, 120] (F.1336-5 §3.1.1)", lo_open=True)
        default_v = 31000.0 * 10.0 ** (-0.1 * gain) / params["hpbw_h_deg"]
        params["hpbw_v_deg"] = _number(spec, "hpbw_v_deg", where, 0.0, 22.5,
                                       f"{deg} within (0, 22.5) (F.1336-5 §3.1.1)", lo_open=True,
                                       default=default_v)
        if params["hpbw_v_deg"] >= 22.5:
            key_text = "hpbw_v_deg" if "hpbw_v_deg" in spec else "theta_3 derived from gain and hpbw_h_deg"
            raise PatternError(f"{where}: {key_text} = {params['hpbw_v_deg']:.4g} deg; expected below "
                               "22.5 deg (F.1336-5 §3.1.1 equations); give a higher gain or a "
                               "narrower hpbw_v_deg")
        for key, default in (("k_p", 0.7), ("k_h", 0.7), ("k_v", 0.3)):
            params[key] = _number(spec, key, where, 0.0, 1.0, "a number within 0..1",
                                  default=default)
    else:  # parabolic
        gain = _gain(spec, model, where, required=False)
        diameter = _number(spec, "diameter_m", where, 0.0, 1000.0,
                           "a dish diameter in metres within (0, 1000]", lo_open=True)
        if diameter is None and gain is None:
            raise PatternError(f"{where}: model 'parabolic' needs 'diameter_m' (with the antenna's "
                               "frequency_mhz) or 'gain_dbi'/'gain_dbd'; none is given")
        if diameter is not None:
            if frequency_mhz is None:
                raise PatternError(f"{where}: model 'parabolic' with 'diameter_m' = {diameter!r} "
                                   "needs the operating frequency_mhz; none is given")
            dl = diameter / (C0 / (frequency_mhz * MHZ))
            params["diameter_m"] = diameter
        else:
            dl = 10.0 ** ((gain - 7.7) / 20.0)
        if gain is None:
            gain = 20.0 * math.log10(dl) + 7.7
        params["d_over_lambda"] = dl
        if dl < 1.0 or gain <= 2.0 + 15.0 * math.log10(dl):
            raise PatternError(
                f"{where}: model 'parabolic' with D/lambda = {dl:.3g} and gain {gain:.2f} dBi: "
                "expected a dish at least a wavelength across whose gain exceeds its first "
                "side lobe 2 + 15 log10(D/lambda) (F.699-8)"
            )
    params = {"gain_dbi": gain, **params}
    return _MODEL_CLASSES[model](gain, tilt, params, frequency_mhz, where)
