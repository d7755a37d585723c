"""Second set of method-of-moments reference antennas (Yagis, log-periodic, FM bays, small
radiators, a mast over ground). Geometry only; the runs are in generate_nec_reference.py.

Thin-wire rules kept in every case (NEC-2 user's guide, Burke and Poggio, LLNL UCID-18834,
1981, part III "modelling guidelines", from memory): segment length below lambda/10 (here
lambda/20 or shorter), segment length at least about 8 wire radii (the smallest ratio is
noted per case), wires joined only at segment ends.
"""

from __future__ import annotations

import numpy as np
from nec_case import C0, Case, body_box


def _odd(n: float) -> int:
    n = int(np.ceil(n))
    return n if n % 2 else n + 1


def yagi3_case() -> Case:
    """Horizontal 3-element Yagi, 146 MHz: reflector, driven element, director along +x.

    Dimensions (common practice for a 2 m band 3-element Yagi, from memory): reflector
    0.506 lambda, driven element 0.472 lambda, director 0.438 lambda; spacings 0.20 lambda
    (reflector - driven) and 0.15 lambda (driven - director); 6 mm tubing. Origin at the boom
    midpoint. 21 segments per element (segment 8 radii at least: 0.022 lambda / 3 mm = 15).
    """
    c = Case("yagi3", 146.0, "horizontal 3-element Yagi: reflector 0.506, driven 0.472, "
             "director 0.438 lambda; spacings 0.20 and 0.15 lambda; 1 V at the driven element",
             polarization="horizontal", kind="yagi",
             sources="common practice for a 2 m band 3-element Yagi (from memory)")
    lam = c.wavelength_m
    lens = np.array([0.506, 0.472, 0.438]) * lam
    xs = np.array([-0.20, 0.0, 0.15]) * lam
    xs -= 0.5 * (xs[0] + xs[-1])
    for i, (ln, x) in enumerate(zip(lens, xs, strict=True)):
        c.wires.append((i + 1, 21, x, -0.5 * ln, 0.0, x, 0.5 * ln, 0.0, 0.003))
    c.feeds.append((2, 11, 1.0 + 0.0j))
    return c


def yagi6_case() -> Case:
    """Vertically polarised 6-element Yagi, 435 MHz, elements along z, boom along +x.

    Reflector 0.49, driven 0.47, directors 0.44, 0.43, 0.42, 0.41 lambda at 0, 0.20, 0.30,
    0.55, 0.85, 1.20 lambda along the boom (common practice for a 70 cm Yagi on a 1.2 lambda
    boom, lengths tuned in this solver for a clean pattern); 3 mm rods. A straight split
    dipole as driven element (a real one would often be folded: same pattern).
    """
    c = Case("yagi6", 435.0, "vertical 6-element Yagi: reflector 0.49, driven 0.47, directors "
             "0.44/0.43/0.42/0.41 lambda at 0, 0.20, 0.30, 0.55, 0.85, 1.20 lambda; 1 V at the "
             "driven element", polarization="vertical", kind="yagi",
             sources="common practice for a 70 cm 6-element Yagi (from memory), tuned in PyNEC")
    lam = c.wavelength_m
    lens = np.array([0.49, 0.47, 0.44, 0.43, 0.42, 0.41]) * lam
    xs = np.array([0.0, 0.20, 0.30, 0.55, 0.85, 1.20]) * lam
    xs -= 0.5 * (xs[0] + xs[-1])
    for i, (ln, x) in enumerate(zip(lens, xs, strict=True)):
        c.wires.append((i + 1, 21, x, 0.0, -0.5 * ln, x, 0.0, 0.5 * ln, 0.0015))
    c.feeds.append((2, 11, 1.0 + 0.0j))
    return c


def lpda_case(tau: float = 0.9, sigma: float = 0.06, n_elem: int = 10, longest_m: float = 0.70,
              z0_ohm: float = 100.0, frequency_mhz: float = 400.0) -> Case:
    """Log-periodic dipole array after Carrel, horizontal elements along y, boom along x.

    Element lengths ``L_n = L_1 tau^n``, spacings ``d_n = 2 sigma L_n`` (R. L. Carrel, "The
    design of log-periodic dipole antennas", IRE Int. Conv. Rec., 1961; C. A. Balanis,
    Antenna Theory, 4th ed., 2016, sec. 11.4.2). The longest element (0.70 m) is half a
    wavelength at 214 MHz, the shortest (0.27 m) at 553 MHz: an array for about 220-500 MHz,
    solved at 400 MHz where elements 6-8 are active. Feeder: NEC TL cards between the centre
    segments of neighbouring elements, Z0 = 100 ohm, crossed (negative Z0 on the TL card: the
    phase reversal between neighbours), length = the element spacing; the source is at the
    shortest element, at the front (+x); the feeder is open behind the longest element.
    Elements of one radius (2 mm; Carrel scales the diameters with tau too). Segments
    ``<= lambda/40`` (at lambda/20 the solver's radiated power was 1.7 % below the input, at
    lambda/40 0.2 %, at lambda/80 0.03 %).
    """
    c = Case("lpda", frequency_mhz,
             f"log-periodic dipole array (Carrel): tau {tau}, sigma {sigma}, {n_elem} elements "
             f"{longest_m:.2f}..{longest_m * tau ** (n_elem - 1):.3f} m, crossed {z0_ohm:g} ohm "
             "feeder (TL cards), 1 V at the shortest element", polarization="horizontal",
             kind="lpda", sources="Carrel 1961; Balanis 4th ed. sec. 11.4.2")
    lam = c.wavelength_m
    lens = longest_m * tau ** np.arange(n_elem)
    xs = np.concatenate([[0.0], np.cumsum(2.0 * sigma * lens[:-1])])
    xs = xs - 0.5 * xs[-1]  # longest element at the back (-x), shortest at the front (+x)
    segs = []
    for i, (ln, x) in enumerate(zip(lens, xs, strict=True)):
        ns = max(9, _odd(ln / (lam / 40.0)))
        segs.append(ns)
        c.wires.append((i + 1, ns, x, -0.5 * ln, 0.0, x, 0.5 * ln, 0.0, 0.002))
    for i in range(n_elem - 1):
        c.tls.append((i + 1, segs[i] // 2 + 1, i + 2, segs[i + 1] // 2 + 1, -z0_ohm, 0.0, 0.0, 0.0,
                      0.0, 0.0))
    c.feeds.append((n_elem, segs[-1] // 2 + 1, 1.0 + 0.0j))
    alpha = np.rad2deg(np.arctan((1.0 - tau) / (4.0 * sigma)))
    c.checks.update(tau=tau, sigma=sigma, half_apex_angle_deg=float(alpha), feeder_z0_ohm=z0_ohm,
                    band_mhz=[C0 / (2e6 * lens[0]), C0 / (2e6 * lens[-1])])
    return c


def _fm_bays(lam: float) -> np.ndarray:
    return (np.arange(4) - 1.5) * lam  # 4 bays, 1 lambda apart, centred on the origin


def fm4_case() -> Case:
    """Four circularly polarised bays at 98 MHz, 1 lambda apart, all bays fed in phase.

    Each bay: a horizontal dipole (along y) and a vertical dipole (along z), 0.48 lambda
    each, radius 6 mm, 21 segments; both cross the bay centre, but wires may meet only at
    segment ends in NEC, so the horizontal one sits 2 cm in front (x = +0.02 m) and the
    vertical one 2 cm behind (x = -0.02 m). Feeds: equal feed currents, 10 mA at 0 deg in
    every horizontal and 10 mA at -90 deg in every vertical dipole (quadrature; the feed
    voltages that give them are solved from the 8 x 8 feed admittance matrix, because with
    equal 1 V sources the two dipoles of a bay, coupled differently to the other bays, carry
    unequal currents: axial ratio 3.5 dB at the horizon). Toward +x the field turns from +y
    to +z: right-hand circular (IEEE) in the forward direction, left-hand behind.
    """
    c = Case("fm4", 98.0, "4-bay circularly polarised FM array: crossed horizontal/vertical "
             "0.48 lambda dipoles per bay (4 cm apart along x), bays 1 lambda apart, equal feed "
             "currents, vertical at -90 deg", polarization="circular", kind="fm-array",
             special=("below",), sources="common practice (crossed-dipole circular bay)")
    lam = c.wavelength_m
    half = 0.24 * lam
    tag = 1
    for zc in _fm_bays(lam):
        c.wires.append((tag, 21, 0.02, -half, zc, 0.02, half, zc, 0.006))
        c.feeds.append((tag, 11, 1.0 + 0.0j))
        c.wires.append((tag + 1, 21, -0.02, 0.0, zc - half, -0.02, 0.0, zc + half, 0.006))
        c.feeds.append((tag + 1, 11, complex(0.0, -1.0)))
        tag += 2
    currents = [0.01 * (1.0 if i % 2 == 0 else -1j) for i in range(len(c.feeds))]
    voltages = voltages_for_currents(c, np.array(currents))
    c.feeds = [(t, s, complex(v)) for (t, s, _), v in zip(c.feeds, voltages, strict=True)]
    c.checks["feed_currents_a"] = [[i.real, i.imag] for i in np.asarray(currents, complex)]
    return c


def voltages_for_currents(case: Case, currents: np.ndarray) -> np.ndarray:
    """Source voltages that drive the given currents into the feed segments: V = Y^-1 I with
    the feed admittance matrix Y measured by exciting one feed at a time with 1 V (the other
    feed gaps closed), free space or the case's ground."""
    import generate_nec_reference as gen

    n = len(case.feeds)
    offset = np.cumsum([0] + [w[1] for w in case.wires])
    seg_index = [offset[t - 1] + s - 1 for t, s, _ in case.feeds]
    y = np.zeros((n, n), dtype=complex)
    for j in range(n):
        one = Case(case.name, case.frequency_mhz, "", wires=case.wires, tls=case.tls,
                   ground=case.ground, feeds=[(case.feeds[j][0], case.feeds[j][1], 1.0 + 0j)])
        ctx = gen.build_context(one)
        cur = np.asarray(ctx.get_structure_currents(0).get_current())
        y[:, j] = cur[seg_index]
    return np.linalg.solve(y, currents)


def fm4_slant_case() -> Case:
    """Four bays at 98 MHz, 1 lambda apart, each a single 0.48 lambda dipole slanted 45 deg in
    the y-z plane (rising toward +y), all fed with 1 V in phase."""
    c = Case("fm4_slant", 98.0, "4-bay slant-polarised FM array: one 0.48 lambda dipole per bay "
             "at 45 deg in the y-z plane, bays 1 lambda apart, 1 V each in phase",
             polarization="slant", kind="fm-array", special=("below",),
             sources="common practice")
    lam = c.wavelength_m
    h = 0.24 * lam / np.sqrt(2.0)
    for i, zc in enumerate(_fm_bays(lam)):
        c.wires.append((i + 1, 21, 0.0, -h, zc - h, 0.0, h, zc + h, 0.006))
        c.feeds.append((i + 1, 11, 1.0 + 0.0j))
    return c


def short_dipole_case() -> Case:
    """Vertical centre-fed dipole of length lambda/10 at 30 MHz, radius 2 mm, 21 segments."""
    c = Case("short_dipole", 30.0, "vertical short dipole, length lambda/10, centre fed with 1 V",
             polarization="vertical", kind="short-dipole", sources="Balanis 4th ed. sec. 4.3")
    lam = c.wavelength_m
    half = 0.05 * lam
    c.wires.append((1, 21, 0.0, 0.0, -half, 0.0, 0.0, half, 0.002))
    c.feeds.append((1, 11, 1.0 + 0.0j))
    return c


def small_loop_case(n_sides: int = 16, seg_per_side: int = 3) -> Case:
    """Small loop standing vertically (plane x-z, axis y), circumference 0.1 lambda at 14 MHz.

    A regular polygon of 16 straight wires (3 segments each, 4.5 cm = 22 radii of 2 mm)
    inscribed in the circle of circumference 0.1 lambda, with one side horizontal at the
    bottom; fed with 1 V in the middle segment of that side.
    """
    c = Case("small_loop", 14.0, f"small vertical loop (plane x-z), circumference 0.1 lambda, "
             f"{n_sides}-sided polygon, 1 V in the bottom side", polarization="vertical",
             kind="small-loop", sources="Balanis 4th ed. sec. 5.2")
    lam = c.wavelength_m
    b = 0.1 * lam / (2.0 * np.pi)
    ang = np.deg2rad(-90.0 - 180.0 / n_sides + np.arange(n_sides + 1) * 360.0 / n_sides)
    p = np.stack([b * np.cos(ang), np.zeros_like(ang), b * np.sin(ang)], axis=-1)
    p[-1] = p[0]
    for i in range(n_sides):
        c.wires.append((i + 1, seg_per_side, *p[i], *p[i + 1], 0.002))
    c.feeds.append((1, seg_per_side // 2 + 1, 1.0 + 0.0j))
    area = 0.5 * n_sides * b * b * np.sin(2.0 * np.pi / n_sides)
    c.checks.update(circle_radius_m=float(b), polygon_area_m2=float(area),
                    polygon_perimeter_m=float(n_sides * np.linalg.norm(p[1] - p[0])))
    return c


def monopole_mf_case(n_seg: int = 41) -> Case:
    """Base-fed mast of height lambda/8 over perfect ground at 1 MHz (a small AM mast).

    Equivalent radius 0.1 m (common practice for a narrow lattice mast), 41 segments of
    0.91 m (9 radii). Perfect ground: NEC GE with the ground flag and GN 1; the source is on
    the base segment. NEC's origin is at the mast base; the stored origin is at mid-height,
    so the ground plane lies at z = -h/2 in the stored frame.
    """
    c = Case("monopole_mf", 1.0, "vertical monopole of height lambda/8 (37.5 m) over perfect "
             "ground, base fed with 1 V", polarization="vertical", kind="monopole",
             special=("fence",), ground=True, sources="Balanis 4th ed. sec. 4.7")
    lam = c.wavelength_m
    h = lam / 8.0
    c.wires.append((1, n_seg, 0.0, 0.0, 0.0, 0.0, 0.0, h, 0.1))
    c.feeds.append((1, 1, 1.0 + 0.0j))
    c.origin_nec = (0.0, 0.0, 0.5 * h)
    c.checks.update(height_m=float(h))
    return c


def new_nec_cases() -> list[Case]:
    cases = [yagi3_case(), yagi6_case(), lpda_case(), fm4_case(), fm4_slant_case(),
             short_dipole_case(), small_loop_case(), monopole_mf_case()]
    for c in cases:
        box = body_box(c)
        c.aperture_height_m = box["height_m"]
        c.aperture_width_m = box["width_m"]
    return cases
