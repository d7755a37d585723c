"""Array-synthesis near-field model: the aperture as a column of coherent sub-sources.

The antenna's aperture (height ``H`` along the antenna's own ``z`` axis) is replaced by a
column of ``N`` short vertical current elements, evenly spaced at ``d = H/N <= lambda/2``
(normally ``lambda/4``). Their complex moments carry a real, symmetric amplitude taper and
the linear phase progression of the electrical downtilt; the azimuth behaviour comes from
the antenna's own horizontal cut. The fields of all elements are summed coherently with
their complete (near, intermediate and far) terms, and the whole is scaled so that the
radiated power, integrated numerically over the sphere, equals the net input power.

Element pattern (design and justification)
------------------------------------------
* Vertical shape: each sub-source is a z-directed current element, whose field has the
  obliquity factor ``cos(elevation)`` (Balanis eq. 4-26a). A z-directed line current is
  exactly such a column, so for dipole, collinear and vertically polarised panel columns
  this is the physical element; for other polarisations it is a broad shape that the
  taper fit below absorbs on the main beam.
* Amplitude taper: chosen once per antenna by a least-squares fit, in dB, of the column's
  far-field vertical pattern ``cos^2(el) |AF(el)|^2`` to the antenna's own front vertical
  cut (through the horizontal-cut peak), with the downtilt already in the data removed by
  the phase progression. Real symmetric amplitudes give a beam symmetric about the tilt
  direction (in ``sin(el)``); asymmetric features of the cut (upper side-lobe
  suppression) are averaged. Because the fit is made on the far field of the same column,
  the model's far-field limit reproduces the vertical cut and its beamwidth for the given
  aperture height.
* Null fill: the real taper then gets a quadratic phase across the aperture,
  ``A_n exp(-j q (2 z_n / H)^2)``, with ``q >= 0`` fitted to the cut
  (:func:`_fit_quadratic_phase`), for cuts with nulls: it lets the nulls be finite, as a
  real column's are, and, with the sign of the near-field (Fresnel) phase term, sets how
  fast they fill in towards the antenna. Where the cut does not call for it (a ridge term
  in the fit), and for cuts without nulls, ``q = 0``.
* Azimuth shape: an element power factor common to all sub-sources, evaluated at the
  direction of the point from the radiation centre (:func:`_element_table`). Close in it
  is ``e_near``: the horizontal cut relative to boresight combined with the back/front
  difference of the enveloped vertical cuts (3GPP TR 38.901 additive form), smooth because
  the lobes and nulls of the far-field cuts have not formed there yet. Its far-field limit
  ``e_far`` is the pattern's own synthesised 3-D gain over its front cut (interpolated in
  elevation across nulls), so that far out the model's gain is the pattern's 3-D gain off
  the cut planes as well as on them.
* Far field: the factor in use is ``e_near^(1-beta) (C e_far)^beta`` with
  ``beta = min(1, (r / R_ff)^2)``, ``C(el)`` the taper fit's remaining error on the front
  cut at 1 deg nodes, not clipped: the near-field element close in, and from the far-field
  range on the pattern itself (joined continuously), so that far out the front cut is
  reproduced exactly at the nodes. (A column with a real taper cannot radiate the smooth
  side-lobe envelope of a reference pattern such as ITU-R F.1336; clipping ``C`` at +-3 dB,
  as first built, left the model 3 dB under such envelopes. Between two nodes a narrow
  null of the column's array factor can remain: for an 11 dBi F.1336 omni with 4 deg tilt
  on 1 m at 1900 MHz, -29 dB at one 0.25 deg sample 12.5 deg below the horizon.)
  Radiated power is normalised with the far-field form.

Validity and assumptions
------------------------
* From about half a wavelength from the column out to the far field, in free space (times
  the field-squared reflection factor of the radiator). Points closer to the radiation
  centre than the reactive radius ``max(lambda/(2 pi), 0.62 sqrt(D^3/lambda))`` (D the
  largest aperture dimension), and points closer than ``lambda/(2 pi)`` to the column
  itself, are not assessable: NaN and ``False``.
* The width of the aperture enters only through the horizontal cut (a line source); the
  model does not resolve the field across the width of a wide panel.
* The result is the plane-wave-equivalent density ``|E_rms|^2 / eta0`` of the synthesised
  electric field (what an E-field probe reading is compared with), including the radial
  (reactive) field components of the elements.
* Normalisation makes the radiated power equal to ``Radiator.power_w``. Where the pattern
  integrates to less than ``4 pi`` (a lossy antenna, or a 3-D pattern narrower than its
  separable counterpart), the model's far-field peak gain exceeds the pattern's by that
  ratio (conservative); :attr:`ArraySynthesis.far_field_peak_gain_dbi` reports it. Where
  it integrates to more than ``4 pi`` (a stated gain higher than the beamwidths allow, or
  a synthesis that overstates the gain off the cut planes), normalising would put the
  model's peak below the stated peak gain; then the moments are raised until the far-field
  peak equals the stated peak gain, and the model radiates more than ``P`` by the factor
  :attr:`ArraySynthesis.radiated_power_ratio` (conservative: the main beam is never
  weaker than the pattern says).

References
----------
.. [1] C. A. Balanis, "Antenna Theory: Analysis and Design", 4th ed., Wiley, 2016:
   sec. 4.2 eqs. (4-8a)-(4-10c) fields of an infinitesimal dipole; sec. 6.3 (N-element
   linear array, uniform spacing, array factor eq. 6-6 and scanning by progressive phase
   eq. 6-14 ff.); sec. 2.2.4 field regions (reactive near field R < 0.62 sqrt(D^3/lambda));
   equation numbers from memory.
.. [2] FCC OET Bulletin 65, Edition 97-01, Aug. 1997, sec. 2 (context: near-field and far-field
   prediction for exposure evaluation).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from siteexposure.constants import C0, ETA0
from siteexposure.errors import InputError
from siteexposure.physics.orientation import antenna_angles, to_antenna_frame
from siteexposure.physics.pattern_base import dbi_to_linear, linear_to_dbi
from siteexposure.physics.radiator import Radiator
from siteexposure.physics.regions import far_field_range_m

MIN_SUB_SOURCES = 5  #: at least this many elements, however short the aperture [1]
PREFERRED_SPACING_WL = 0.25  #: element spacing aimed at, in wavelengths [1]
MAX_SPACING_WL = 0.5  #: spacing never exceeds this (no grating lobes), in wavelengths [1]
SOFT_MAX_SUB_SOURCES = 48  #: above this the spacing grows towards lambda/2 [1]
FIT_FLOOR_DB = 30.0  #: the taper fit looks at the vertical cut down to peak - 30 dB [dB]
_AZ_STEP_DEG = 1.0
CORRECTION_MAX_DB = 3.0  #: how far above the fit floor a null must lie to count (phase fit) [dB]
ENVELOPE_DEG = 5.0  #: half-width of the cut envelopes of the near-field element factor [deg]
NULL_DEPTH_DB = 6.0  #: a sample this far below the lobes on both sides is in a null [dB]
NULL_HALF_WIDTH_DEG = 10.0  #: how far to each side the lobes of a null are looked for [deg]
_FIT_STEP_DEG = 0.5
_CHUNK_ELEMENTS = 1_500_000  # (n_sub x n_point) block size of the near-field sum
COLUMN_MIN_WL = 0.45  #: shorter vertical bodies take the lattice's thin-wire current [lambda]
SHADOW_FLOOR_WL = 2.0  #: the near-field shadow floor is applied this close to the column [lambda]
#: a taper fit off by more than this on the cut's main beam is refitted with the main beam
#: weighted MAIN_BEAM_WEIGHT times (:func:`main_beam_misfit_db`) [dB], [1]
MAIN_BEAM_MISFIT_DB = 3.0
MAIN_BEAM_WEIGHT = 10.0


def n_sub_sources(height_m: float, wavelength_m: float) -> int:
    """Number of elements for an aperture height: spacing lambda/4, within 5..48 if possible.

    Never fewer than :data:`MIN_SUB_SOURCES`; above :data:`SOFT_MAX_SUB_SOURCES` elements the
    spacing grows, but never beyond lambda/2. [1]
    """
    ratio = height_m / wavelength_m
    n = max(MIN_SUB_SOURCES, int(np.ceil(ratio / PREFERRED_SPACING_WL - 1e-9)))
    return min(n, max(SOFT_MAX_SUB_SOURCES, int(np.ceil(ratio / MAX_SPACING_WL - 1e-9))))


def _db(g) -> np.ndarray:
    return 10.0 * np.log10(np.maximum(np.asarray(g, dtype=float), 1e-30))


def _pattern_cuts_db(pattern, phi, el) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Horizontal cut at ``phi`` and front/back vertical cuts at ``el`` (radians), in dBi.

    The cuts a user supplies: the pattern's own ``horizontal_cut`` / ``vertical_cut`` where it
    exposes them (table patterns), else its 3-D gain on the cut planes (phi = 0 and pi).
    """
    if hasattr(pattern, "horizontal_cut") and hasattr(pattern, "vertical_cut"):
        h = np.asarray(pattern.horizontal_cut(phi), dtype=float)
        vf = np.asarray(pattern.vertical_cut(el, "front"), dtype=float)
        vb = np.asarray(pattern.vertical_cut(el, "back"), dtype=float)
    else:
        h = _db(pattern.gain(phi, np.zeros_like(phi)))
        vf = _db(pattern.gain(np.zeros_like(el), el))
        vb = _db(pattern.gain(np.full_like(el, np.pi), el))
    if not all(np.all(np.isfinite(c)) for c in (h, vf, vb)):
        raise InputError(f"pattern '{getattr(pattern, 'name', '?')}': gain is not finite on its "
                         "cuts; expected a usable gain pattern")
    top = max(h.max(), vf.max(), vb.max())
    lo = top - FIT_FLOOR_DB
    return np.maximum(h, lo), np.maximum(vf, lo), np.maximum(vb, lo)


def _envelope_db(v_db, el, half_width_deg) -> np.ndarray:
    """Running maximum over +-half_width_deg (fills the nulls between lobes). [dB]"""
    step = float(np.rad2deg(el[1] - el[0]))
    m = max(1, int(round(half_width_deg / step)))
    pad = np.pad(v_db, m, mode="edge")
    win = np.lib.stride_tricks.sliding_window_view(pad, 2 * m + 1)
    return win.max(axis=1)


def _null_mask(g_db, half_width_deg, step_deg) -> np.ndarray:
    """Samples of each row lying in a null: more than :data:`NULL_DEPTH_DB` below the lower
    of the largest values within ``half_width_deg`` on either side (rows along the last axis).
    """
    m = max(1, int(round(half_width_deg / step_deg)))
    pad = np.pad(g_db, [(0, 0)] * (g_db.ndim - 1) + [(m, m)], mode="edge")
    win = np.lib.stride_tricks.sliding_window_view(pad, m + 1, axis=-1)
    left = win[..., : g_db.shape[-1], :].max(axis=-1)
    right = win[..., m:, :].max(axis=-1)
    return np.minimum(left, right) - g_db > NULL_DEPTH_DB


def _element_table(pattern) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Element power factors on a 1 deg (phi, el) grid and the front vertical cut (linear).

    Returns ``(near, far, el, g_v)``; ``g_v`` is the front cut at ``el`` (0.5 deg steps)
    [rad]. With the cuts in dB floored at :data:`FIT_FLOOR_DB` below the peak:

    ``near`` -- a smooth element factor for the radiating near field. With
    ``h(phi) = H(phi) - H(0)``, ``dv(el) = env Vb(el) - env Vf(el)`` (upper envelopes over
    +-:data:`ENVELOPE_DEG`, so that a null of one cut does not make the ratio jump) and the
    back weight ``w(phi) = sin^2(phi/2)``::

        e_near_dB(phi, el) = min(0, h(phi) + w(phi) [dv(el) - dv(0)])

    the 3GPP TR 38.901 (Table 7.3-1) additive combination written relative to the front
    cut: exact on the horizontal cut and on the front cut, and on the back cut to within
    the envelope. Close in, the lobes and nulls of the far-field cuts have not formed yet,
    so the envelope is the better element there.

    ``far`` -- the far-field limit. With ``G(phi, el)`` the pattern's own 3-D gain in dB (the
    synthesis rule it was read with, or a parametric model)::

        e_far_dB(phi, el) = G(phi, el) - G(0, el)

    the pattern relative to its own front cut, so that the column's far field (which follows
    the front cut) times ``e_far`` is the pattern's 3-D gain. Where the front cut or the row
    ``G(phi, .)`` is in a null (:func:`_null_mask`: deeper than :data:`NULL_DEPTH_DB` below
    the lobes within +-:data:`NULL_HALF_WIDTH_DEG`) the ratio is ill-defined: there it is
    interpolated linearly in elevation from the neighbouring samples, so that a null of one
    cut becomes neither a spike nor a hole. Both are 0 dB for an omnidirectional antenna. [1]
    """
    phi = np.deg2rad(np.arange(0.0, 360.0, _AZ_STEP_DEG))
    el_t = np.deg2rad(np.arange(-90.0, 90.5, 1.0))
    el = np.deg2rad(np.arange(-90.0, 90.0 + 0.5 * _FIT_STEP_DEG, _FIT_STEP_DEG))
    h, vf_t, vb_t = _pattern_cuts_db(pattern, phi, el_t)
    _, g_v_db, _ = _pattern_cuts_db(pattern, phi, el)
    dv = _envelope_db(vb_t, el_t, ENVELOPE_DEG) - _envelope_db(vf_t, el_t, ENVELOPE_DEG)
    dv0 = float(dv[90])
    w = np.sin(0.5 * phi) ** 2
    near_db = np.minimum(0.0, (h - h[0])[:, None] + w[:, None] * (dv - dv0)[None, :])
    g3 = _db(pattern.gain(phi[:, None], el_t[None, :]))
    if not np.all(np.isfinite(g3)):
        raise InputError(f"pattern '{getattr(pattern, 'name', '?')}': 3-D gain is not finite; "
                         "expected a usable gain pattern")
    g3 = np.maximum(g3, g3.max() - FIT_FLOOR_DB)
    far_db = g3 - g3[0][None, :]
    bad = _null_mask(g3, NULL_HALF_WIDTH_DEG, 1.0) | _null_mask(g3[0], NULL_HALF_WIDTH_DEG,
                                                                 1.0)[None, :]
    x = np.arange(el_t.size, dtype=float)
    for i in np.flatnonzero(bad.any(axis=1) & ~bad.all(axis=1)):
        keep = ~bad[i]
        far_db[i] = np.interp(x, x[keep], far_db[i, keep])
    return 10.0 ** (near_db / 10.0), 10.0 ** (far_db / 10.0), el, 10.0 ** (g_v_db / 10.0)


def _fit_taper(z_m, k, el, g_v, tilt_rad, element=None, mu: float = 0.5,
               main_weight: float = 1.0) -> tuple[np.ndarray, float]:
    """Real symmetric amplitudes ``A`` (max 1) and scale ``K`` with ``K cos^2 |AF_A|^2 ~ g_v``.

    A least-squares fit in dB of the column's far-field vertical pattern to the vertical cut
    ``g_v`` (linear gain at elevations ``el`` [rad]) down to :data:`FIT_FLOOR_DB` below its
    peak, with the cut's own downtilt ``tilt_rad`` in the phase progression and a mild
    smoothness penalty on the taper (second differences). The fit in dB is not convex: from
    a uniform start alone it can settle on the aperture's own narrow beam with nulls inside
    the cut's main beam (a 3GPP-form cut of 9.5 deg on a 1.4 m column at 1950 MHz: -40 dB
    within 10 dB of the peak). It therefore starts from the uniform taper and from Gaussian
    tapers matched to the cut's half-power width (:func:`_taper_starts`) and keeps the best.
    ``element`` is the amplitude of one element's far field along the cut (default
    ``cos(el)``, a current element along the column's axis).
    """
    from scipy.optimize import least_squares

    n = z_m.size
    half = (n + 1) // 2
    # amplitudes A = M @ b with b the free half (mirror symmetry)
    m = np.zeros((n, half))
    for i in range(n):
        m[i, min(i, n - 1 - i)] = 1.0
    u = np.sin(el)
    phase = np.exp(1j * k * np.outer(u + np.sin(tilt_rad), z_m))  # (n_el, n)
    elem = np.cos(el) if element is None else np.asarray(element, dtype=float)
    basis = (phase @ m) * elem[:, None]  # field of each free amplitude, (n_el, half)
    g_max = g_v.max()
    floor = g_max * 10.0 ** (-FIT_FLOOR_DB / 10.0)
    target_db = 10.0 * np.log10(g_v + floor)
    w = _fit_weights(g_v, main_weight)
    # mu: smoothness of the taper (second differences), relative to its mean

    def model(x):
        b, logk = x[:half], x[half]
        f = basis @ b
        p = np.abs(f) ** 2
        return f, p, 10.0**logk

    def fun(x):
        f, p, kk = model(x)
        r = w * (10.0 * np.log10(kk * p + floor) - target_db)
        scale = max(np.mean(x[:half]), 1e-12)
        reg = mu * np.diff(m @ x[:half], 2) / scale
        return np.concatenate([r, reg])

    def jac(x):
        f, p, kk = model(x)
        den = kk * p + floor
        c = 10.0 / np.log(10.0)
        dp = 2.0 * np.real(np.conj(f)[:, None] * basis)  # d|f|^2/db, (n_el, half)
        jb = (w * c * kk / den)[:, None] * dp
        jk = (w * c * kk * p / den) * np.log(10.0)
        scale = max(np.mean(x[:half]), 1e-12)
        d2 = np.diff(np.eye(n), 2, axis=0) @ m
        jr = mu * d2 / scale  # ignoring the weak dependence of the scale on b
        top = np.column_stack([jb, jk])
        bot = np.column_stack([jr, np.zeros(jr.shape[0])])
        return np.vstack([top, bot])

    lo = np.concatenate([np.zeros(half), [-np.inf]])
    hi = np.full(half + 1, np.inf)
    sol = None
    for b0 in _taper_starts(z_m, k, el, g_v)[:, :half]:
        x0 = np.concatenate([b0, [np.log10(g_max / max(np.abs(basis @ b0).max() ** 2, 1e-300))]])
        trial = least_squares(fun, x0, jac=jac, bounds=(lo, hi), method="trf", x_scale="jac",
                              tr_solver="lsmr", max_nfev=80)
        if sol is None or trial.cost < sol.cost:
            sol = trial
    a = m @ sol.x[:half]
    kk = 10.0 ** sol.x[half]
    if not np.any(a > 0):
        a, kk = np.ones(n), g_max / max(np.abs(basis.sum(1)).max() ** 2, 1e-300)
    return a / a.max(), float(kk * a.max() ** 2)


def _fit_weights(g_v, main_weight: float = 1.0) -> np.ndarray:
    """Weights of the dB residuals of the taper fits: ``main_weight`` within 10 dB of the
    peak, 1 down to -20 dB, 0.3 below."""
    g = np.asarray(g_v, dtype=float)
    top = g.max()
    return np.where(g >= 0.1 * top, main_weight, np.where(g >= 0.01 * top, 1.0, 0.3))


def main_beam_misfit_db(z_m, k, el, g_v, tilt_rad, amp, kk, element=None) -> float:
    """Largest dB error of a fitted column on the cut's main beam (within 10 dB of its peak).
    [dB]"""
    elem = np.cos(el) if element is None else np.asarray(element, dtype=float)
    af = np.exp(1j * k * np.outer(np.sin(el) + np.sin(tilt_rad), z_m)) @ amp
    fit = kk * (elem * np.abs(af)) ** 2
    main = g_v >= 0.1 * g_v.max()
    with np.errstate(divide="ignore"):
        return float(np.max(np.abs(10.0 * np.log10(fit[main] / g_v[main]))))


def _taper_starts(z_m, k, el, g_v) -> np.ndarray:
    """Start tapers of the fit, one per row: uniform, and Gaussian tapers whose beams have
    the cut's half-power width and 0.7 and 1.4 times it. [1]

    A Gaussian aperture ``exp(-z^2 / (2 s^2))`` radiates the Gaussian power pattern
    ``exp(-k^2 s^2 u^2)`` in ``u = sin(el)`` (Fourier pair, common practice), whose
    half-power half-width is ``u_h = sqrt(ln 2) / (k s)``; ``u_h`` is read off the cut (the
    -3 dB points around its peak).
    """
    u = np.sin(el)
    i = int(np.argmax(g_v))
    half_power = g_v < 0.5 * g_v[i]
    lo = np.flatnonzero(half_power[:i])
    hi = np.flatnonzero(half_power[i:])
    u_lo = u[lo[-1]] if lo.size else u[0]
    u_hi = u[i + hi[0]] if hi.size else u[-1]
    u_h = max(0.5 * (u_hi - u_lo), 1e-6)
    s = np.sqrt(np.log(2.0)) / (k * u_h)
    zc = z_m - 0.5 * (z_m.max() + z_m.min())
    starts = [np.ones(z_m.size)]
    starts += [np.exp(-0.5 * (zc / (f * s)) ** 2) for f in (1.0, 1.0 / 0.7, 1.0 / 1.4)]
    return np.array(starts)


def _fit_quadratic_phase(z_m, k, el, g_v, tilt_rad, a_real, k_real, element=None
                         ) -> tuple[np.ndarray, float]:
    """The real taper ``a_real`` times a quadratic phase ``exp(-j q (2 z / H)^2)``. [1]

    Only where the cut has nulls within the fit's range: samples more than
    :data:`NULL_DEPTH_DB` below the lobes on both sides (within +-:data:`NULL_HALF_WIDTH_DEG`)
    and at least :data:`CORRECTION_MAX_DB` above the fit floor; a smooth cut without nulls
    (a parametric pattern) keeps the real taper. Then the edge phase ``0 <= q <= pi/4``
    [rad] and the scale are fitted with the residuals of :func:`_fit_taper` (dB, down to
    :data:`FIT_FLOOR_DB`) plus a ridge term ``q`` (one dB of residual per radian, so that a
    phase the cut does not call for stays 0). ``pi/4`` keeps it a small phase error that
    leaves the main beam (some tenths of a dB of gain; Silver, from memory). Returns
    ``(complex amplitudes, max |A| 1; K)``; the real fit where ``q`` does not apply or help.

    Why: a real taper radiates exact nulls, while a solved or measured column has finite
    ones, filled by the unequal current phases that mutual coupling gives its radiators.
    The lowest-order symmetric phase error across an aperture, the quadratic one, fills the
    nulls and leaves the main beam (S. Silver, Microwave Antenna Theory and Design, 1949,
    ch. 6, phase errors; from memory). The finite-range field of the column carries the
    observation's own quadratic phase ``-k z^2 cos^2(el) / (2 r)`` as well (Fresnel
    approximation of the element distances; Balanis 4th ed. sec. 4.4.2, from memory), so
    how fast a filled null fills further towards the antenna depends on the aperture's phase
    and its sign. The cut fixes only ``|AF|``: ``+q`` and ``-q`` radiate the same far-field
    magnitude (the conjugate of a symmetric taper has ``AF = conj(AF)``). The sign taken is
    that of the near-field term: the fill then grows steadily towards the antenna and never
    drops below its far-field value; the other sign would focus the column at a finite range
    (nulls deeper there than far out), which a column fed for the far field is not built to
    do. The cut constrains ``q`` only weakly (PyNEC collinear of tests/data/nec: ``q`` = 6 deg
    lowers the fit's cost by 5 %), while the fill at finite range depends on it to first
    order in ``1/r``; measured there, far-field error -1.0 dB with the real taper, -0.03 dB
    with ``q``. The price: like any phase error it adds to the near-field defocus, which
    lowers the radiating-near-field main beam slightly (about 0.3 dB at 10 lambda for the
    PyNEC panels).
    """
    from scipy.optimize import least_squares

    n = z_m.size
    span = float(z_m.max() - z_m.min())
    a_re = np.asarray(a_real, dtype=float)
    if n < 3 or span <= 0:
        return a_re.astype(complex), float(k_real)
    zz = (2.0 * (z_m - 0.5 * (z_m.max() + z_m.min())) / span) ** 2
    elem = np.cos(el) if element is None else np.asarray(element, dtype=float)
    phase = np.exp(1j * k * np.outer(np.sin(el) + np.sin(tilt_rad), z_m)) * elem[:, None]
    g_max = g_v.max()
    floor = g_max * 10.0 ** (-FIT_FLOOR_DB / 10.0)
    target_db = 10.0 * np.log10(g_v + floor)
    w = _fit_weights(g_v)
    ridge = 1.0
    c = 10.0 / np.log(10.0)
    g_db = 10.0 * np.log10(np.maximum(g_v, 1e-300))
    step = float(np.rad2deg(el[1] - el[0]))
    nulls = (_null_mask(g_db[None, :], NULL_HALF_WIDTH_DEG, step)[0]
             & (g_db > 10.0 * np.log10(floor) + CORRECTION_MAX_DB))
    if not np.any(nulls):
        return a_re.astype(complex), float(k_real)

    def parts(x):
        rot = np.exp(-1j * x[0] * zz)
        f = phase @ (a_re * rot)
        return rot, f, np.abs(f) ** 2, 10.0 ** x[1]

    def fun(x):
        _, _, p, kk = parts(x)
        return np.concatenate([w * (10.0 * np.log10(kk * p + floor) - target_db),
                               [ridge * x[0]]])

    def jac(x):
        rot, f, p, kk = parts(x)
        g = w * c * kk / (kk * p + floor)
        jq = g * 2.0 * np.real(np.conj(f) * (phase @ (a_re * rot * (-1j * zz))))
        return np.vstack([np.column_stack([jq, g * p * np.log(10.0)]), [[ridge, 0.0]]])

    best = None
    for q0 in (0.05, 0.2, 0.6):  # a few starts: the cost is not convex in q
        sol = least_squares(fun, np.array([q0, np.log10(k_real)]), jac=jac,
                            bounds=([0.0, -np.inf], [0.25 * np.pi, np.inf]), method="trf",
                            x_scale="jac", max_nfev=100)
        if best is None or sol.cost < best.cost:
            best = sol
    cost_real = 0.5 * float(np.sum(fun(np.array([0.0, np.log10(k_real)])) ** 2))
    if not (np.all(np.isfinite(best.x)) and best.cost < cost_real and best.x[0] > 0):
        return a_re.astype(complex), float(k_real)
    return a_re * np.exp(-1j * best.x[0] * zz), float(10.0 ** best.x[1])


@dataclass(frozen=True)
class ArraySynthesis:
    """A precomputed column of sub-sources for one radiator.

    Attributes
    ----------
    position_m : ndarray, shape (3,)
        Radiation centre in the site frame (east, north, up). [m]
    azimuth_deg, mechanical_tilt_deg : float
        Orientation of the antenna frame. [deg]
    wavelength_m : float
        Free-space wavelength. [m]
    z_m : ndarray, shape (n_sub,)
        Element positions along the antenna's z axis from the radiation centre. [m]
    moments : ndarray, shape (n_sub,)
        Complex current moments ``I l`` (peak phasors), scaled to the radiated power. [A m]
    element_table : ndarray, shape (360, 181)
        Near-field element power factor ``e_near(phi, el)`` on a 1 deg grid, phi 0..359,
        el -90..90 (:func:`_element_table`). [1]
    element_table_far : ndarray, shape (360, 181)
        Its far-field limit ``e_far(phi, el)``, the pattern's 3-D gain over its front cut;
        the factor in use is ``e_near^(1 - beta) e_far^beta``, ``beta = min(1, (r/R_ff)^2)``.
        [1]
    vertical_correction : ndarray, shape (181,)
        Far-field correction ``C(el)`` of the taper fit's residual on the front cut (not
        clipped), el -90..90 in 1 deg steps. [1]
    far_field_range_m : float
        ``max(2 L^2/lambda, 3 lambda, 5 L)``; ``C`` is phased in as ``(r/R_ff)^2`` up to it. [m]
    reflection_factor : float
        Field-squared factor applied to the density. [1]
    reactive_radius_m : float
        Points closer to the radiation centre are not assessable. [m]
    column_clearance_m : float
        Points closer to the column of elements are not assessable. [m]
    power_w : float
        Radiated (= net input) power. [W]
    electrical_tilt_deg : float
        Downtilt of the phase progression, positive down. [deg]
    far_field_peak_gain_dbi : float
        Peak gain of the model's own far field. [dBi]
    """

    position_m: np.ndarray
    azimuth_deg: float
    mechanical_tilt_deg: float
    wavelength_m: float
    z_m: np.ndarray
    moments: np.ndarray
    element_table: np.ndarray
    element_table_far: np.ndarray
    vertical_correction: np.ndarray
    far_field_range_m: float
    reflection_factor: float
    reactive_radius_m: float
    column_clearance_m: float
    power_w: float
    electrical_tilt_deg: float
    far_field_peak_gain_dbi: float
    #: radiated over input power: 1, or above 1 where the stated peak gain is honoured [1]
    radiated_power_ratio: float = 1.0

    # ------------------------------------------------------------------ construction
    @classmethod
    def from_radiator(cls, rad: Radiator, cache=None) -> ArraySynthesis:
        """Build the columns for ``rad`` (needs ``rad.aperture_height_m``).

        Parameters
        ----------
        rad : Radiator
            The antenna: pattern, power, frequency, orientation and aperture height.

        Raises
        ------
        InputError
            Without a positive aperture height, a finite power >= 0 or a positive frequency.

        Notes
        -----
        The model's far-field gain is ``G(phi, el) = K cos^2(el) |AF(el)|^2 e(phi, el) / eta``
        with the fitted taper (``K cos^2 |AF|^2 ~ Vf``, the front cut), the element factor of
        :func:`_element_table` and ``eta`` the sphere integral of the numerator over 4 pi,
        so that the radiated power equals ``P``; if that puts the peak of ``G`` below the
        pattern's stated peak gain, ``G`` is raised to it (``radiated_power_ratio`` > 1).
        """
        h = rad.aperture_height_m
        if h is None or not np.isfinite(h) or h <= 0:
            raise InputError(f"antenna aperture height_m = {h!r}: the array model needs the "
                             "height of the radiating aperture; expected a positive length in m")
        if not (np.isfinite(rad.power_w) and rad.power_w >= 0):
            raise InputError(f"antenna power = {rad.power_w!r} W: expected a finite power >= 0")
        if not (np.isfinite(rad.frequency_hz) and rad.frequency_hz > 0):
            raise InputError(f"antenna frequency = {rad.frequency_hz!r} Hz: expected > 0")
        lam = C0 / rad.frequency_hz
        z, unit, table, table_far, corr, p_unit, u_peak, tilt = _column_shape(
            rad.pattern, float(rad.frequency_hz), float(h), float(rad.electrical_tilt_deg), cache
        )
        g_model = 4.0 * np.pi * u_peak / p_unit  # far-field peak gain with P radiated
        boost = max(1.0, float(dbi_to_linear(rad.pattern.peak_gain_dbi)) / g_model)
        scale = np.sqrt(boost * rad.power_w / p_unit) if rad.power_w > 0 else 0.0
        return cls(
            position_m=np.asarray(rad.position_m, dtype=float).reshape(3),
            azimuth_deg=float(rad.azimuth_deg),
            mechanical_tilt_deg=float(rad.mechanical_tilt_deg),
            wavelength_m=lam,
            z_m=z,
            moments=unit * scale,
            element_table=table,
            element_table_far=table_far,
            vertical_correction=corr,
            far_field_range_m=far_field_range_m(lam, rad.largest_dimension_m or h),
            reflection_factor=float(rad.reflection_factor),
            reactive_radius_m=0.0,  # the dispatcher keeps the stand-off from the body
            column_clearance_m=lam / (2.0 * np.pi),
            power_w=float(rad.power_w),
            electrical_tilt_deg=tilt,
            far_field_peak_gain_dbi=float(linear_to_dbi(boost * g_model)),
            radiated_power_ratio=boost,
        )

    # ------------------------------------------------------------------ evaluation
    def _factor(self, phi, theta, r) -> np.ndarray:
        """``[e_far C / e_near]^beta e_near`` at pattern angles (radians) and range ``r``. [1]

        ``beta = min(1, (r / R_ff)^2)``: the smooth near-field element factor close in, the
        pattern's own 3-D gain (and the taper fit's residual correction ``C``) from the
        far-field range on.
        """
        near, far = _lookup(self.element_table, phi, theta, self.element_table_far)
        el = np.clip(np.rad2deg(np.asarray(theta, dtype=float)), -90.0, 90.0) + 90.0
        c = np.interp(el, np.arange(181.0), self.vertical_correction)
        beta = np.minimum(1.0, (np.asarray(r, dtype=float) / self.far_field_range_m) ** 2)
        if np.all(beta == 1.0):
            return far * c
        if not np.any(beta):
            return near
        return near * (far * c / near) ** beta

    def far_field_gain(self, phi, theta) -> np.ndarray:
        """Power gain of the model's own far field at pattern angles (radians). [1]"""
        phi, theta = np.broadcast_arrays(np.asarray(phi, float), np.asarray(theta, float))
        if self.power_w <= 0:
            return np.zeros(phi.shape)
        k = 2.0 * np.pi / self.wavelength_m
        af = np.exp(1j * k * np.multiply.outer(np.sin(theta), self.z_m)) @ self.moments
        const = (ETA0 * k / (4.0 * np.pi)) ** 2 / (2.0 * ETA0)
        u = const * np.abs(af * np.cos(theta)) ** 2 * self._factor(phi, theta, np.inf)
        return 4.0 * np.pi * u / self.power_w

    def power_density(self, points_enu) -> tuple[np.ndarray, np.ndarray]:
        """``|E_rms|^2 / eta0`` of the coherent sum at field points, and the assessable mask
        (see :meth:`fields`)."""
        s_e, _, ok = self.fields(points_enu)
        return s_e, ok

    def fields(self, points_enu) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Plane-wave-equivalent densities of the E and H fields of the coherent sum.

        Parameters
        ----------
        points_enu : array_like, shape (..., 3)
            Field points in the site frame (east, north, up). [m]

        Returns
        -------
        s_e_w_m2 : ndarray, shape (...)
            ``F |E_rms|^2 / eta0``; NaN where not assessable. [W/m^2]
        s_h_w_m2 : ndarray, shape (...)
            ``F eta0 |H_rms|^2``; NaN where not assessable. [W/m^2]
        assessable : ndarray of bool, shape (...)
            False within ``lambda/(2 pi)`` of the column.

        Notes
        -----
        With ``R`` the distance from element ``n`` (moment ``p_n``) and ``c = cos``,
        ``s = sin`` of its polar angle (Balanis eqs. 4-8a, 4-10a, 4-10b)::

            E_r = eta p_n c / (2 pi R^2) (1 + 1/(j k R)) exp(-j k R)
            E_t = j eta k p_n s / (4 pi R) (1 + 1/(j k R) - 1/(k R)^2) exp(-j k R)
            E_rho = sum_n (E_r s + E_t c),   E_z = sum_n (E_r c - E_t s)
            H_phi = sum_n j k p_n s / (4 pi R) (1 + 1/(j k R)) exp(-j k R)
            S = F e(phi, el) C(el)^beta(r) (|E_rho|^2 + |E_z|^2) / (2 eta)
            S_H = F e(phi, el) C(el)^beta(r) eta |H_phi|^2 / 2

        ``phi``, ``el`` are the pattern angles of the point seen from the radiation centre
        (the element factor is common to all elements of the column).
        """
        pts = np.asarray(points_enu, dtype=float)
        shape = pts.shape[:-1]
        d = pts.reshape(-1, 3) - self.position_m
        xa, ya, za = to_antenna_frame(d, self.azimuth_deg, self.mechanical_tilt_deg)
        from siteexposure.physics.array_kernel import fused_power_density

        fused = fused_power_density(self, xa, ya, za) if self.power_w > 0 else None
        if fused is not None:
            s_e, s_h = self._shadow_floor(xa, ya, za, fused[0], fused[2])
            return s_e.reshape(shape), s_h.reshape(shape), fused[1].reshape(shape)
        r, phi, theta = antenna_angles(xa, ya, za)
        rho = np.hypot(xa, ya)
        z_near = np.clip(za, self.z_m[0], self.z_m[-1])
        near_column = np.hypot(rho, za - z_near) < self.column_clearance_m
        ok = (r >= self.reactive_radius_m) & ~near_column & np.isfinite(r)
        s = np.full(r.shape, np.nan)
        s_h = np.full(r.shape, np.nan)
        idx = np.flatnonzero(ok)
        step = max(1, _CHUNK_ELEMENTS // self.z_m.size)
        for i0 in range(0, idx.size, step):
            sel = idx[i0 : i0 + step]
            e = self._factor(phi[sel], theta[sel], r[sel])
            d_e, d_h = self._density(rho[sel], za[sel])
            s[sel] = d_e * e
            s_h[sel] = d_h * e
        f = self.reflection_factor
        s, s_h = self._shadow_floor(xa, ya, za, s * f, s_h * f)
        return s.reshape(shape), s_h.reshape(shape), ok.reshape(shape)

    def _shadow_floor(self, xa, ya, za, s_e, s_h):
        """Close to the column, the element factor's suppression (the back and sides of a
        panel) is not allowed below ``(lambda / (2 pi d))^2`` of the bare column's density,
        ``d`` the distance from the column: within a wavelength or so of a reflector its shadow
        has not formed (method-of-moments panels of tests/data/nec: behind the reflector at
        0.2-1 lambda the element factor alone left the model down to -4.2 dB; with this floor
        -3.8 dB). The floor is this project's own rule, set on those references (the square of
        the reactive-to-radiating ratio ``1/(k d)`` of a small source; not a published method).
        Only points within :data:`SHADOW_FLOOR_WL` wavelengths are recomputed. Returns
        ``(s_e, s_h)``. [W/m^2]"""
        rho = np.hypot(xa, ya)
        dz = za - np.clip(za, self.z_m[0], self.z_m[-1])
        d = np.hypot(rho, dz)
        lam = self.wavelength_m
        near = (d < SHADOW_FLOOR_WL * lam) & np.isfinite(s_e)
        if self.power_w <= 0 or not near.any():
            return s_e, s_h
        d_e, d_h = self._density(rho[near], za[near])
        fl = np.minimum(1.0, (lam / (2.0 * np.pi * np.maximum(d[near], 1e-12))) ** 2)
        fl = fl * self.reflection_factor
        s_e, s_h = np.array(s_e, dtype=float), np.array(s_h, dtype=float)
        s_e[near] = np.fmax(s_e[near], d_e * fl)
        s_h[near] = np.fmax(s_h[near], d_h * fl)
        return s_e, s_h

    def _density(self, rho, za) -> tuple[np.ndarray, np.ndarray]:
        """E- and H-field densities of the column without the element factor at cylindrical
        (rho, z). [W/m^2]

        The coherent sum runs in :func:`siteexposure.physics.array_kernel.column_density`
        (compiled when numba is installed, its numpy reference otherwise).
        """
        from siteexposure.physics.array_kernel import column_density

        return column_density(rho, za, self.z_m, self.moments, self.wavelength_m, with_h=True)


def _lookup(table, phi, theta, other=None):
    """Bilinear interpolation of a (360, 181) table on 1 deg steps, periodic in phi. [1]

    With ``other`` (a second table of the same grid) returns both interpolations.
    """
    n_phi, n_el = table.shape
    x = np.mod(np.rad2deg(np.asarray(phi, dtype=float)), 360.0) / _AZ_STEP_DEG
    y = np.clip(np.rad2deg(np.asarray(theta, dtype=float)), -90.0, 90.0) + 90.0
    i0 = np.floor(x).astype(np.int64)
    j0 = np.minimum(np.floor(y).astype(np.int64), n_el - 2)
    tx, ty = x - i0, y - j0
    i0 %= n_phi
    i1 = (i0 + 1) % n_phi
    k00, k10 = i0 * n_el + j0, i1 * n_el + j0
    w00, w01, w10, w11 = (1 - tx) * (1 - ty), (1 - tx) * ty, tx * (1 - ty), tx * ty

    def at(flat):
        return w00 * flat[k00] + w01 * flat[k00 + 1] + w10 * flat[k10] + w11 * flat[k10 + 1]

    if other is None:
        return at(table.ravel())
    return at(table.ravel()), at(other.ravel())


@functools.lru_cache(maxsize=32)
def _gauss_legendre(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Gauss-Legendre nodes and weights on [-1, 1] (memoised).

    ``scipy.special.roots_legendre``: the same nodes as ``numpy.polynomial.legendre.leggauss``
    (to 2e-16) without its ``n x n`` eigenvalue problem (0.5 s and n^2 memory at n = 2000).
    """
    from scipy.special import roots_legendre

    return roots_legendre(n)


def _radiated_power(w, z, k, table) -> tuple[float, float]:
    """Radiated power and peak radiation intensity (numerical integration over the sphere).

    Gauss-Legendre in ``u = sin(el)`` (so that ``dOmega = du dphi``) and the periodic
    trapezoidal rule in azimuth on the element table's 1 deg grid, for the far field
    ``E = j eta k / (4 pi r) cos(el) AF sqrt(e)``. Returns ``(P [W], U_max [W/sr])``.
    """
    n_u = int(max(256, 6 * k * (z.max() - z.min() + 1e-12)))
    u, wu = _gauss_legendre(n_u)
    el = np.concatenate([np.arcsin(u), np.deg2rad(np.arange(-90.0, 90.0 + 1e-9, 0.05))])
    af = np.exp(1j * k * np.outer(np.sin(el), z)) @ w
    const = (ETA0 * k / (4.0 * np.pi)) ** 2 / (2.0 * ETA0)
    vert = const * np.cos(el) ** 2 * np.abs(af) ** 2
    phi = np.deg2rad(np.arange(table.shape[0]) * _AZ_STEP_DEG)
    e = _lookup(table, phi[:, None], el[None, :])  # (n_phi, n_el)
    ring = e[:, :n_u].mean(axis=0) * 2.0 * np.pi
    p = float(np.sum(wu * ring * vert[:n_u]))
    return p, float(np.max(e * vert[None, :]))



def _column_shape(pattern, frequency_hz: float, h: float, electrical_tilt_deg: float,
                  cache=None) -> tuple:
    """The orientation- and power-independent part of an array model, memoised.

    Antennas that share a pattern, frequency, aperture height and tilt (the sectors of one
    operator's band, or the same antenna type on many sites of a batch) share one taper fit
    and one sphere integral; only position, orientation and power differ, and those are
    applied afterwards. The memo lives in the engine's
    :class:`~siteexposure.physics.cache.ModelCache` and is keyed by the pattern object and,
    behind it, by the values the fit reads (the element tables and front cut of
    :func:`_element_table`, the tilt in the data): the same pattern read again from another
    file, or written inline twice, is fitted once. Returns ``(z_m, unit_moments,
    element_table, element_table_far, vertical_correction, p_unit, u_peak, tilt)``.
    """
    from siteexposure.physics.cache import ModelCache, content_key

    cache = cache if cache is not None else ModelCache()

    def build():
        table, table_far, el, g_v = _element_table(pattern)
        tilt_data = float(getattr(pattern, "electrical_tilt_deg", 0.0) or 0.0)
        # a table pattern carries its own tilt; a parametric one is built with the radiator's
        tilt = tilt_data if hasattr(pattern, "h_angle_deg") else float(electrical_tilt_deg)
        ckey = content_key((table, table_far, el, g_v), tilt_data, tilt, frequency_hz, h)
        return cache.get("column-shape-content", ckey, lambda: _fit_column_shape(
            table, table_far, el, g_v, tilt_data, tilt, frequency_hz, h))

    key = (id(pattern), frequency_hz, h, electrical_tilt_deg)
    return cache.get("column-shape", key, build, hold=(pattern,))


def _fit_column_shape(table, table_far, el, g_v, tilt_data: float, tilt: float,
                      frequency_hz: float, h: float) -> tuple:
    """:func:`_column_shape` from the element tables and front cut of the pattern."""
    lam = C0 / frequency_hz
    k = 2.0 * np.pi / lam
    n = n_sub_sources(h, lam)
    d = h / n
    z = (np.arange(n) + 0.5) * d - 0.5 * h
    tr = np.deg2rad(tilt_data)
    amp, kk = _fit_taper(z, k, el, g_v, tr)
    if main_beam_misfit_db(z, k, el, g_v, tr, amp, kk) > MAIN_BEAM_MISFIT_DB:
        # an envelope the column cannot radiate (ITU-R F.1336: a side-lobe floor no real
        # column has): with equal weights the fit raised its level to meet the floor and left
        # the main beam far too strong (a 14 dBi omni on 20 m at 600 MHz: +27 dB, so that the
        # near field radiated 60x the input power); match the main beam first
        amp, kk = _fit_taper(z, k, el, g_v, tr, main_weight=MAIN_BEAM_WEIGHT)
    amp, kk = _fit_quadratic_phase(z, k, el, g_v, np.deg2rad(tilt_data), amp, kk)
    corr = np.ones(181)
    if abs(tilt - tilt_data) < 1e-9:  # fit residual on the front cut, 1 deg steps
        el1 = np.deg2rad(np.arange(-90.0, 90.5, 1.0))
        af = np.exp(1j * k * np.outer(np.sin(el1) + np.sin(np.deg2rad(tilt_data)), z)) @ amp
        fit_db = _db(kk * np.cos(el1) ** 2 * np.abs(af) ** 2)
        res = np.interp(el1, el, _db(g_v)) - np.maximum(fit_db, _db(g_v).max() - FIT_FLOOR_DB)
        corr = 10.0 ** (res / 10.0)
    # unit moments: far-field gain 4 pi U / (1 W) = K cos^2 |AF_A|^2
    const = (ETA0 * k / (4.0 * np.pi)) ** 2 / (2.0 * ETA0)
    unit = amp * np.sqrt(kk / (4.0 * np.pi * const))
    unit = unit * np.exp(1j * k * z * np.sin(np.deg2rad(tilt)))
    p_unit, u_peak = _radiated_power(unit, z, k, table_far * corr[None, :])
    return (z, unit, table, table_far, corr, p_unit, u_peak, tilt)

def array_power_density(rad: Radiator, points_enu) -> tuple[np.ndarray, np.ndarray]:
    """Array-synthesis density of one radiator at field points.

    Parameters
    ----------
    rad : Radiator
        The antenna (needs ``aperture_height_m``). The column is built at every call: the
        engine builds it once per antenna through :class:`ArrayModel`.
    points_enu : array_like, shape (..., 3)
        Field points in the site frame. [m]

    Returns
    -------
    s_w_m2, assessable : ndarray
        See :meth:`ArraySynthesis.power_density`. [W/m^2], [bool]
    """
    return ArraySynthesis.from_radiator(rad).power_density(points_enu)


class ArrayModel:
    """Field-model face (:mod:`siteexposure.physics.fieldmodels`) of array synthesis.

    Two builds behind one word: a vertical column of vertical current elements
    (:class:`ArraySynthesis`: dipoles, collinears, vertically polarised panels, at least
    :data:`COLUMN_MIN_WL` wavelengths tall) and, for every other body and polarisation, the
    equivalent-source lattice of :mod:`siteexposure.physics.lattice` (horizontal, slant and
    circular elements, loops, end-fire Yagis and log-periodic arrays, short dipoles,
    monopoles on a ground plane). Validated against the method-of-moments references of
    tests/data/nec from the stand-off of the body outwards (accuracy table in the README).
    """

    word = "array"
    model_id = "array-synthesis"

    def __init__(self, rad: Radiator, built) -> None:
        self.rad = rad
        self.built = built
        notes = []
        layout = getattr(built, "layout", None)
        if layout:
            notes.append(f"lattice of {layout}")
        ratio = float(built.radiated_power_ratio)
        if ratio > 1.001:
            notes.append(f"its far field is held at the pattern's stated peak gain, so it "
                         f"radiates {100.0 * (ratio - 1.0):.1f} % more than the input power "
                         "(the pattern's 3-D gain integrates to more than 4 pi; conservative)")
        self.notes = tuple(notes)

    @staticmethod
    def uses_column(rad: Radiator) -> bool:
        """True when the vertical column (:class:`ArraySynthesis`) models ``rad``."""
        from siteexposure.physics.lattice import (
            ENDFIRE_DEPTH_RATIO,
            ENDFIRE_DEPTH_WL,
            SMALL_BODY_WL,
        )

        lam = rad.wavelength_m
        h = float(rad.aperture_height_m or 0.0)
        depth = float(rad.aperture_depth_m or 0.0)
        body = rad.body
        endfire = depth >= ENDFIRE_DEPTH_WL * lam and depth >= ENDFIRE_DEPTH_RATIO * max(
            h, float(rad.aperture_width_m or 0.0))
        small = body.largest_dimension_m < SMALL_BODY_WL * lam
        return (rad.polarization == "vertical" and not rad.ground_plane and not endfire
                and h >= COLUMN_MIN_WL * lam and not small)

    @classmethod
    def from_radiator(cls, rad: Radiator, cache=None) -> ArrayModel:
        if cls.uses_column(rad):
            return cls(rad, ArraySynthesis.from_radiator(rad, cache))
        from siteexposure.physics.lattice import SourceLattice

        return cls(rad, SourceLattice.from_radiator(rad, cache))

    def fields(self, points_enu):
        from siteexposure.physics.fieldmodels import Fields

        if isinstance(self.built, ArraySynthesis):
            s_e, s_h, ok = self.built.fields(points_enu)
            return Fields(np.where(ok, s_e, np.nan), np.where(ok, s_h, np.nan))
        s_e, s_h = self.built.fields(points_enu)
        return Fields(s_e, s_h)

    def validated(self, points_ant, body_distance_m=None) -> np.ndarray:
        """Beyond ``lambda/(2 pi)`` from the body; a single thin wire of known current (a
        short dipole, a monopole) from the stand-off on (method-of-moments validation:
        tests/data/nec, short_dipole and monopole_mf). ``body_distance_m``: the points'
        distances from the body, when the caller has them. [m]"""
        from siteexposure.physics.regions import reactive_zone_m

        p = np.asarray(points_ant, dtype=float)
        if getattr(self.built, "thin_wire", False):
            return np.ones(p.shape[:-1], dtype=bool)
        zone = reactive_zone_m(self.rad.wavelength_m) * (1.0 - 1e-9)
        d = self.rad.body.distance_m(p) if body_distance_m is None else body_distance_m
        return np.asarray(d) >= zone
