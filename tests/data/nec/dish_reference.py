"""Reference near field of a uniformly illuminated circular aperture (the ``dish`` case).

Not a method-of-moments run: the field in front of a circular aperture of diameter D in the
plane x = 0, radiating toward +x, with a uniform, linearly polarised aperture field E0 z
(and nothing outside the aperture), from the vector Rayleigh-Sommerfeld integral of the
first kind (Smythe's formula: the tangential E given on the whole plane; exact for that
boundary value in x > 0)::

    E(P) = (1/2 pi) curl  int_A (x_hat x E_ap) exp(-jkR)/R dA = (E0/2 pi) (psi_z, 0, -psi_x),
    psi(P) = int_A exp(-jkR)/R dA,      H = (j/(w mu0)) curl E  (exp(+jwt), as NEC)

so E_z is the scalar first Rayleigh-Sommerfeld integral of E0 (obliquity x/R, 1 + jkR term
kept), and H comes from the curl of E (second derivatives of psi), not from E/eta0. For a
uniform aperture every needed quantity reduces exactly to an integral over the rim (polar
integration about the foot of P, done in closed form along each ray, or the divergence
theorem in the aperture plane), e.g.::

    psi   = exp(-jkx) oint exp(-j t/2) sinc(t/2pi) / (R + x) (n . v) dl,  t = k (R - x)
    psi_y = -oint exp(-jkR)/R n_y dl,  psi_xy = -oint d_x(exp(-jkR)/R) n_y dl, ...

with v the vector from the foot of P to the rim point, n the rim's outward normal. The rim
integral is periodic and smooth; it is summed with the trapezoidal rule on a graded angle
``alpha = alpha_0 + t - s sin t`` that packs nodes where the rim passes closest to P.

Normalisation: the power through the aperture ``int |E_ap,rms|^2/eta0 dA = E0^2 pi a^2 /
(2 eta0)`` equals the input power (1 W), aperture efficiency 1. Far field of the same model:
``G = (ka)^2 (2 J1(u)/u)^2 (1 - r_y^2)``, ``u = ka sin(off-axis angle)``, in front
(r_x > 0): the Airy pattern (C. A. Balanis, Antenna Theory, 4th ed., 2016, sec. 12.7,
uniform circular aperture, from memory) times the obliquity factor of the E-field form,
which is 1 in the E-plane and cos^2 in the H-plane; on axis ``G = (pi D/lambda)^2``.
"""

from __future__ import annotations

import numpy as np
from nec_case import C0, box_dict
from scipy.special import j1

FREQUENCY_MHZ = 18000.0
DIAMETER_M = 1.2
INPUT_POWER_W = 1.0
N_RIM = 4096
ETA0 = 4e-7 * np.pi * C0  # mu0 c with the classical mu0 (relative difference 1e-10)


def wavelength_m() -> float:
    return C0 / (FREQUENCY_MHZ * 1e6)


def e0_peak_v_m(power_w: float = INPUT_POWER_W, diameter_m: float = DIAMETER_M) -> float:
    """Peak aperture field for ``power_w`` through the aperture: E0^2 pi a^2/(2 eta0) = P."""
    a = 0.5 * diameter_m
    return float(np.sqrt(2.0 * ETA0 * power_w / (np.pi * a * a)))


def _rim_sums(pts: np.ndarray, a: float, k: float, n_rim: int):
    """psi, psi_x, psi_y, psi_z, psi_xy, psi_yy, psi_yz at points (m, 3) with x > 0."""
    x, y, z = pts[:, 0:1], pts[:, 1:2], pts[:, 2:3]
    rho_f = np.hypot(y, z)
    alpha0 = np.arctan2(z, y)
    width = np.maximum(x, np.abs(rho_f - a)) / a  # angular size of the rim's closest stretch
    s = 1.0 - np.clip(width * n_rim / (20.0 * np.pi), 1e-3, 1.0)
    t = -np.pi + 2.0 * np.pi * np.arange(n_rim) / n_rim
    alpha = alpha0 + t - s * np.sin(t)
    dl = a * (1.0 - s * np.cos(t)) * (2.0 * np.pi / n_rim)
    ca, sa = np.cos(alpha), np.sin(alpha)
    vy, vz = a * ca - y, a * sa - z  # foot of P -> rim point
    rho2 = vy * vy + vz * vz
    r = np.sqrt(x * x + rho2)
    t_ph = k * rho2 / (r + x)  # k (R - x)
    ndotv = a - (y * ca + z * sa)
    half = np.exp(-0.5j * t_ph) * np.sinc(t_ph / (2.0 * np.pi))
    ph = np.exp(-1j * t_ph)
    ex = np.exp(-1j * k * x[:, 0])
    psi = ex * np.sum(half / (r + x) * ndotv * dl, axis=1)
    psi_x = ex * np.sum((-1j * k * half / (r + x) - ph / (r * (r + x))) * ndotv * dl, axis=1)
    g = ph / r * dl  # exp(-jkR)/R without exp(-jkx)
    psi_y = -ex * np.sum(g * ca, axis=1)
    psi_z = -ex * np.sum(g * sa, axis=1)
    dg = -(1.0 + 1j * k * r) / (r * r) * g  # d/dR part: grad G = dg (P - q)
    psi_xy = -ex * np.sum(dg * x * ca, axis=1)
    psi_yy = -ex * np.sum(dg * (-vy) * ca, axis=1)
    psi_yz = -ex * np.sum(dg * (-vz) * ca, axis=1)
    return psi, psi_x, psi_y, psi_z, psi_xy, psi_yy, psi_yz


def aperture_fields(points, *, diameter_m: float = DIAMETER_M, power_w: float = INPUT_POWER_W,
                    n_rim: int = N_RIM, chunk: int = 64) -> tuple[np.ndarray, np.ndarray]:
    """Peak phasors E [V/m] and H [A/m], shape (n, 3), at points with x > 0 (stored frame)."""
    pts = np.asarray(points, dtype=float).reshape(-1, 3)
    if np.any(pts[:, 0] <= 0.0):
        raise ValueError("aperture fields are defined in front of the aperture only (x > 0)")
    lam = wavelength_m()
    k = 2.0 * np.pi / lam
    a = 0.5 * diameter_m
    c = e0_peak_v_m(power_w, diameter_m) / (2.0 * np.pi)
    e = np.zeros((pts.shape[0], 3), dtype=complex)
    h = np.zeros_like(e)
    for i0 in range(0, pts.shape[0], chunk):
        p = pts[i0 : i0 + chunk]
        psi, psi_x, _psi_y, psi_z, psi_xy, psi_yy, psi_yz = _rim_sums(p, a, k, n_rim)
        e[i0 : i0 + chunk] = c * np.stack([psi_z, np.zeros_like(psi), -psi_x], axis=-1)
        curl = c * np.stack([-psi_xy, -k * k * psi - psi_yy, -psi_yz], axis=-1)
        h[i0 : i0 + chunk] = 1j / (k * ETA0) * curl  # j/(w mu0) = j/(k eta0)
    return e, h


def on_axis_rs1_w_m2(x_m, *, diameter_m: float = DIAMETER_M, power_w: float = INPUT_POWER_W):
    """Closed form of the first Rayleigh-Sommerfeld integral on the axis of the uniform
    aperture: E_z = E0 (exp(-jkx) - x/R_a exp(-jkR_a)), R_a = sqrt(x^2 + a^2) (the rim
    integral above with a constant integrand); density |E_z|^2/(2 eta0). [W/m^2]"""
    x = np.asarray(x_m, dtype=float)
    a = 0.5 * diameter_m
    k = 2.0 * np.pi / wavelength_m()
    ra = np.sqrt(x * x + a * a)
    ez = e0_peak_v_m(power_w, diameter_m) * (np.exp(-1j * k * x) - x / ra * np.exp(-1j * k * ra))
    return np.abs(ez) ** 2 / (2.0 * ETA0)


def far_field_gain(direction) -> np.ndarray:
    """Power gain of the model in unit directions (n, 3): (ka)^2 (2 J1(u)/u)^2 (1 - r_y^2) in
    front (r_x > 0), 0 behind and in the aperture plane. [1]"""
    d = np.asarray(direction, dtype=float).reshape(-1, 3)
    ka = np.pi * DIAMETER_M / wavelength_m()
    u = ka * np.hypot(d[:, 1], d[:, 2])
    with np.errstate(invalid="ignore", divide="ignore"):
        airy = np.where(u > 1e-9, 2.0 * j1(u) / u, 1.0)
    return np.where(d[:, 0] > 0.0, ka * ka * airy**2 * (1.0 - d[:, 1] ** 2), 0.0)


def radiated_over_input(n: int = 400001) -> float:
    """(1/4 pi) int G dOmega over the front half-space (azimuth average of 1 - r_y^2 is
    1 - sin^2(t)/2 about the beam axis; trapezoid on a fine off-axis angle grid)."""
    ka = np.pi * DIAMETER_M / wavelength_m()
    t = np.linspace(0.0, 0.5 * np.pi, n)
    u = ka * np.sin(t)
    airy = np.where(u > 1e-12, 2.0 * j1(u) / np.where(u > 1e-12, u, 1.0), 1.0)
    integrand = ka * ka * airy**2 * (1.0 - 0.5 * np.sin(t) ** 2) * np.sin(t)
    return float(0.5 * np.trapezoid(integrand, t))


def body() -> dict:
    return box_dict(depth=0.0, width=DIAMETER_M, height=DIAMETER_M, offset=(0.0, 0.0, 0.0),
                    diameter=DIAMETER_M)


def axis_distances_m() -> np.ndarray:
    """On-axis distances from lambda/2 to 2 x 2 D^2/lambda: 80 log-spaced values plus 12 per
    lambda of the rim path difference (resolves every on-axis Fresnel maximum and null)."""
    lam = wavelength_m()
    a = 0.5 * DIAMETER_M
    x_max = 2.0 * 2.0 * DIAMETER_M**2 / lam
    logs = np.geomspace(0.5 * lam, x_max, 80)
    p_lo = a * a / (np.sqrt(x_max**2 + a * a) + x_max)
    p_hi = a * a / (np.sqrt(0.25 * lam * lam + a * a) + 0.5 * lam)
    p = np.linspace(p_lo, p_hi, int(np.ceil(12 * (p_hi - p_lo) / lam)) + 1)
    fresnel = (a * a - p * p) / (2.0 * p)
    return np.unique(np.round(np.concatenate([logs, fresnel]), 9))


def radial_cut_distances_m() -> tuple[np.ndarray, np.ndarray]:
    """x of the radial cuts (0.1 .. 2 D^2/(4 lambda), 2 and 4 D^2/lambda) and the radial
    step used at each (resolving the edge-wave ripple lambda x / D, at least 2 mm, at most
    D/40)."""
    lam = wavelength_m()
    r_nf = DIAMETER_M**2 / (4.0 * lam)
    xs = np.array([0.1 * r_nf, 0.25 * r_nf, 0.5 * r_nf, r_nf, 2.0 * r_nf,
                   2.0 * DIAMETER_M**2 / lam, 4.0 * DIAMETER_M**2 / lam])
    steps = np.clip(lam * xs / (8.0 * DIAMETER_M), 0.002, DIAMETER_M / 40.0)
    return xs, steps
