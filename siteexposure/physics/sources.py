"""Per-antenna dispatcher: which field model runs, where, and what happens where none holds.

The engine calls :func:`choose_model` once per antenna and :func:`field_densities` (or
:func:`power_density`) on chunks of points; the result records the :class:`ModelChoice`
(model id and why). Models come from the registry of :mod:`siteexposure.physics.fieldmodels`.

``auto`` picks, per antenna, the model whose method-of-moments validation shows the best
agreement for that antenna type:

* a dish (``diameter_m`` given) -> ``circular-aperture``;
* any other body (``height_m``, ``width_m`` or ``depth_m`` given) -> ``array-synthesis``;
* no body -> ``far-field-friis``, with a body inferred from the pattern's beamwidths
  (:func:`siteexposure.physics.body.inferred_body`) to place its far-field range.

and, per point, uses that model where its validation holds (``model.validated``); everywhere
else the larger of the model and the conservative bound of :mod:`siteexposure.physics.bound`,
so that an unvalidated point never gets less than the bound. A model the user requests by name runs everywhere outside the
stand-off, as requested (the record says so).

Not assessable: only points within the stand-off ``lambda/(2 pi)`` of the antenna's body
(:func:`siteexposure.physics.regions.standoff_m`), and below the ground plane of a monopole.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from siteexposure.errors import InputError
from siteexposure.physics.body import Body, inferred_body, to_antenna_frame_points
from siteexposure.physics.fieldmodels import REGISTRY, Fields, model_class
from siteexposure.physics.regions import standoff_m

if TYPE_CHECKING:
    from siteexposure.physics.cache import ModelCache
    from siteexposure.physics.radiator import Radiator

MODEL_IDS = {
    "far-field": "far-field-friis",
    "cylindrical": "oet65-cylindrical",
    "array": "array-synthesis",
    "aperture": "circular-aperture",
}
MODEL_WORDS = ("auto", *REGISTRY)
BOUND_ID = "envelope-bound"


@dataclass(frozen=True)
class ModelChoice:
    """The model that runs for one antenna and why.

    Attributes
    ----------
    word : str
        Model word of the site file: far-field | cylindrical | array | aperture.
    model_id : str
        Model name that says where it comes from (``MODEL_IDS[word]``).
    reason : str
        One sentence for the report: requested, or why ``auto`` chose it.
    auto : bool
        Chosen by ``auto``: the model runs where validated, the bound elsewhere.
    cache : ModelCache or None
        The engine's cache of work shared between antennas.
    prepared : dict
        The built model and bound of this antenna (filled on first use, keyed by
        ``"model"``, holding ``(radiator, model, bound, body)``). Not part of equality.
    """

    word: str
    model_id: str
    reason: str
    auto: bool = False
    cache: object = field(default=None, compare=False, repr=False)
    prepared: dict = field(default_factory=dict, compare=False, repr=False)


def array_model_available() -> bool:
    """True: the array-synthesis model is part of the package (kept for callers)."""
    return True


def _has(value) -> bool:
    return value is not None and float(value) > 0.0


def choose_model(rad: Radiator, requested: str = "auto", cache: ModelCache | None = None
                 ) -> ModelChoice:
    """Pick the field model for one antenna.

    Parameters
    ----------
    rad : siteexposure.physics.radiator.Radiator
        The antenna.
    requested : str
        ``auto`` or one of ``far-field``, ``cylindrical``, ``array``, ``aperture``.
    cache : ModelCache, optional
        Shared work between antennas (the engine's); a private one when omitted.

    Raises
    ------
    InputError
        Unknown word, or a model the antenna cannot use (``aperture`` without a
        diameter, ``cylindrical`` without an aperture height, ``array`` without a body).
    """
    from siteexposure.physics.cache import ModelCache

    cache = cache if cache is not None else ModelCache()
    word = str(requested).strip().lower()
    if word not in MODEL_WORDS:
        raise InputError(f"antenna model: {requested!r}; expected one of {', '.join(MODEL_WORDS)}")
    dish = _has(rad.diameter_m)
    box = any(_has(v) for v in (rad.aperture_height_m, rad.aperture_width_m,
                                rad.aperture_depth_m)) and not dish
    if word == "auto":
        if dish:
            return ModelChoice("aperture", MODEL_IDS["aperture"],
                               f"auto: dish of diameter {rad.diameter_m:g} m -> circular-aperture "
                               "model (tapered illumination, ring integral) in front of the "
                               "aperture plane, the envelope bound behind it", True, cache)
        if box:
            b = rad.body
            return ModelChoice("array", MODEL_IDS["array"],
                               f"auto: body {b.height_m:g} x {b.width_m:g} x {b.depth_m:g} m "
                               f"(height x width x depth), {rad.polarization} elements -> array "
                               "synthesis (best agreement with the method-of-moments "
                               "validation)", True, cache)
        inferred = inferred_body(rad.pattern, rad.wavelength_m)
        return ModelChoice("far-field", MODEL_IDS["far-field"],
                           "auto: no body given -> far-field formula with the pattern gain "
                           "beyond the far-field range of a body inferred from the beamwidths "
                           f"({inferred.height_m:.2f} m high, {inferred.width_m:.2f} m wide), "
                           "the envelope bound closer in; give aperture sizes for a near-field "
                           "model", True, cache)
    if word == "aperture" and not dish:
        raise InputError(
            f"antenna model: 'aperture' needs aperture.diameter_m > 0, got {rad.diameter_m!r}"
        )
    if word == "cylindrical" and not _has(rad.aperture_height_m):
        raise InputError(
            f"antenna model: 'cylindrical' needs aperture.height_m > 0, got "
            f"{rad.aperture_height_m!r}"
        )
    if word == "array" and not box:
        raise InputError(
            "antenna model: 'array' needs the antenna's body (aperture.height_m, width_m or "
            f"depth_m > 0), got height {rad.aperture_height_m!r}"
        )
    return ModelChoice(word, MODEL_IDS[word],
                       f"requested: model = {word!r} (used everywhere outside the stand-off, "
                       "also where it is not validated)", False, cache)


def standoff_distance_m(rad: Radiator) -> float:
    """Stand-off from the body inside which nothing is assessed, ``lambda/(2 pi)``. [m]"""
    return float(standoff_m(rad.wavelength_m))


def _prepared(rad: Radiator, choice: ModelChoice):
    """(model, bound, body) of ``rad``, built once and kept on ``choice``."""
    entry = choice.prepared.get("model")
    if entry is None or entry[0] is not rad:
        from siteexposure.physics.bound import EnvelopeBound

        cls = model_class(choice.word)
        body = rad.body  # the stand-off is kept from the body as given
        if choice.word == "far-field" and body.is_point:
            # no body given: the far-field range and the bound take one inferred from the
            # beamwidths (a conservative guess); the stand-off stays about the centre
            guess = inferred_body(rad.pattern, rad.wavelength_m)
            model = cls.from_radiator(rad, choice.cache, body=guess)
        else:
            guess = body
            model = cls.from_radiator(rad, choice.cache)
        bound = EnvelopeBound.from_radiator(rad, choice.cache, body=guess) if choice.auto else None
        entry = (rad, model, bound, body)
        choice.prepared["model"] = entry
    return entry[1], entry[2], entry[3]


def model_notes(rad: Radiator, choice: ModelChoice) -> tuple[str, ...]:
    """Sentences the built model adds to its record (e.g. radiated power above the input)."""
    model, _, _ = _prepared(rad, choice)
    return tuple(getattr(model, "notes", ()))


def ground_z_m(rad: Radiator) -> float | None:
    """Height of a monopole's ground plane in the antenna frame (None without one). [m]"""
    if not rad.ground_plane:
        return None
    c, half = rad.body.box()
    return float(c[2] - half[2])


@dataclass(frozen=True)
class FieldEstimate:
    """What :func:`field_densities` returns for one antenna at points.

    Attributes
    ----------
    fields : Fields
        E- and H-field densities, NaN where not assessable. [W/m^2]
    assessable : ndarray of bool
        False within the stand-off of the body (or below a monopole's ground plane).
    bounded : ndarray of bool
        True where no model is validated, so that the value is at least the envelope bound.
    """

    fields: Fields
    assessable: np.ndarray
    bounded: np.ndarray


def field_densities(rad: Radiator, choice: ModelChoice, points_enu: ArrayLike) -> FieldEstimate:
    """E- and H-field densities of one antenna at site-frame points (see module docstring).

    Parameters
    ----------
    rad : Radiator
    choice : ModelChoice
        From :func:`choose_model`.
    points_enu : array_like, shape (n, 3)
        Field points (east, north, up) in the site frame. [m]
    """
    pts = np.asarray(points_enu, dtype=float).reshape(-1, 3)
    model, bound, body = _prepared(rad, choice)
    ant = to_antenna_frame_points(pts, rad.position_m, rad.azimuth_deg, rad.mechanical_tilt_deg)
    clearance = body_clearance_m(rad, body, ant)
    ok = clearance >= standoff_distance_m(rad) * (1.0 - 1e-9)
    g = ground_z_m(rad)
    if g is not None:
        ok &= ant[:, 2] >= g
    s_e = np.full(len(pts), np.nan)
    s_h = np.full(len(pts), np.nan)
    if ok.any():  # the model only where it is asked (within the stand-off nothing is)
        f = model.fields(pts if ok.all() else pts[ok])
        s_e[ok] = np.asarray(f.s_e, dtype=float).reshape(-1)
        s_h[ok] = np.asarray(f.s_h, dtype=float).reshape(-1)
    bounded = np.zeros(len(pts), dtype=bool)
    if bound is not None:
        valid = model.validated(ant, body_distance_m=clearance if body is rad.body else None)
        use = ok & ~(np.asarray(valid, dtype=bool) & np.isfinite(s_e) & np.isfinite(s_h))
        if use.any():
            b = bound.density(ant[use])
            s_e[use] = np.fmax(s_e[use], b)  # never less than the bound where unvalidated
            s_h[use] = np.fmax(s_h[use], b)
        bounded = use
    ok &= np.isfinite(s_e) & np.isfinite(s_h)
    return FieldEstimate(Fields(np.where(ok, s_e, np.nan), np.where(ok, s_h, np.nan)), ok,
                         bounded & ok)


def body_clearance_m(rad: Radiator, body: Body, points_ant) -> np.ndarray:
    """Distance of antenna-frame points from the body (and from its image below a ground
    plane, which is the same body mirrored: for points above the plane the body is nearer). [m]
    """
    return body.distance_m(points_ant)


def power_density(rad: Radiator, choice: ModelChoice, points_enu: ArrayLike
                  ) -> tuple[np.ndarray, np.ndarray]:
    """``max(S_E, S_H)`` of one antenna at site-frame points, and the assessable mask.

    Returns
    -------
    s_w_m2 : ndarray, shape (n,)
        Power density; NaN where not assessable. [W/m^2]
    assessable : ndarray of bool, shape (n,)
    """
    est = field_densities(rad, choice, points_enu)
    return est.fields.s, est.assessable


def pattern_note(pattern) -> str | None:
    """A sentence for the model record where the pattern's 3-D gain is not synthesised from
    its cuts (a pattern file with a full-sphere table), else None."""
    from siteexposure.physics.sphere_table import SPHERE_SYNTHESIS

    if getattr(pattern, "synthesis", None) == SPHERE_SYNTHESIS:
        return "3-D gain from the pattern file's full-sphere table"
    return None
