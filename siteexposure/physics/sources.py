"""Per-antenna dispatcher: which field model runs, its density, and keep-out distances.

The engine calls :func:`choose_model` once per antenna and :func:`power_density` on
chunks of points; the result records the :class:`ModelChoice` (model id and why).

``auto`` picks, per antenna type, the model whose validation shows the best agreement:

* a dish (``diameter_m`` given) -> ``oet65-aperture``;
* a line source (``aperture_height_m`` given) -> ``array-synthesis`` when
  :mod:`siteexposure.physics.array` is installed, else ``oet65-cylindrical``;
* no aperture size -> ``far-field-friis`` (the only model that needs nothing more).

Points closer than the reactive-near-field radius ``max(lambda/(2 pi), 0.62
sqrt(D^3/lambda))`` are NaN with ``assessable = False``, as are any points a model
declares out of its domain: never a silent pass.

Keep-out distances
    Measured from the radiation centre along six directions a worker would measure
    with a tape: ``front`` and ``behind`` along the HORIZONTAL boresight azimuth (not
    along the tilted beam), ``left`` and ``right`` horizontally at right angles to it
    (left as seen from behind the antenna looking along boresight), ``above`` and
    ``below`` along the true vertical. Along each ray the model itself is marched
    outward on a log-spaced grid and the outermost crossing of the limit is refined on
    successively finer grids; points the model cannot assess are counted as exceeding (a distance is
    never shortened by not knowing). 0 where the limit is never reached outside the
    reactive radius.
"""

from __future__ import annotations

import importlib.util
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from siteexposure.errors import InputError
from siteexposure.physics.farfield import (
    far_field_distance_for_density_m,
    farfield_power_density,
    reactive_near_field_radius_m,
)

if TYPE_CHECKING:
    from siteexposure.physics.radiator import Radiator

MODEL_IDS = {
    "far-field": "far-field-friis",
    "cylindrical": "oet65-cylindrical",
    "array": "array-synthesis",
    "aperture": "oet65-aperture",
}
MODEL_WORDS = ("auto", *MODEL_IDS)
KEEP_OUT_DIRECTIONS = ("front", "behind", "left", "right", "above", "below")
_MARCH_SAMPLES = 480
_REFINE_SAMPLES = 65
_REFINE_ROUNDS = 4


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
    prepared : dict
        Work a model does once per antenna and reuses on every chunk of points (the
        array-synthesis column); filled by :func:`power_density`, keyed by model word and
        holding ``(radiator, model)`` so that it is never reused for another antenna.
        Not part of equality or the repr.
    """

    word: str
    model_id: str
    reason: str
    prepared: dict = field(default_factory=dict, compare=False, repr=False)


def array_model_available() -> bool:
    """True when the array-synthesis model (:mod:`siteexposure.physics.array`) is installed."""
    return importlib.util.find_spec("siteexposure.physics.array") is not None


def _has(value) -> bool:
    return value is not None and float(value) > 0.0


def choose_model(rad: Radiator, requested: str = "auto") -> ModelChoice:
    """Pick the field model for one antenna.

    Parameters
    ----------
    rad : siteexposure.physics.radiator.Radiator
        The antenna.
    requested : str
        ``auto`` or one of ``far-field``, ``cylindrical``, ``array``, ``aperture``.

    Returns
    -------
    ModelChoice

    Raises
    ------
    InputError
        Unknown word, or a model the antenna cannot use (``aperture`` without a
        diameter, ``cylindrical`` or ``array`` without an aperture height, ``array``
        when the array model is not installed).
    """
    word = str(requested).strip().lower()
    if word not in MODEL_WORDS:
        raise InputError(f"antenna model: {requested!r}; expected one of {', '.join(MODEL_WORDS)}")
    dish = _has(rad.diameter_m)
    line = _has(rad.aperture_height_m)
    if word == "auto":
        if dish:
            return ModelChoice(
                "aperture",
                MODEL_IDS["aperture"],
                f"auto: dish of diameter {rad.diameter_m:g} m -> OET-65 aperture model "
                "(near-field, transition and far-field regions)",
            )
        if line and array_model_available():
            return ModelChoice(
                "array",
                MODEL_IDS["array"],
                f"auto: line source of aperture height {rad.aperture_height_m:g} m -> array "
                "synthesis (best agreement with the method-of-moments validation)",
            )
        if line:
            return ModelChoice(
                "cylindrical",
                MODEL_IDS["cylindrical"],
                f"auto: line source of aperture height {rad.aperture_height_m:g} m -> OET-65 "
                "cylindrical near-field model joined to the far field",
            )
        return ModelChoice(
            "far-field",
            MODEL_IDS["far-field"],
            "auto: no aperture size given -> far-field formula with the pattern gain "
            "(overstates the main beam in the near field)",
        )
    if word == "aperture" and not dish:
        raise InputError(
            f"antenna model: 'aperture' needs aperture.diameter_m > 0, got {rad.diameter_m!r}"
        )
    if word in ("cylindrical", "array") and not line:
        raise InputError(
            f"antenna model: {word!r} needs aperture.height_m > 0, got {rad.aperture_height_m!r}"
        )
    if word == "array" and not array_model_available():
        raise InputError(
            "antenna model: 'array' requested but the array-synthesis model is not "
            "installed (siteexposure.physics.array); expected one of far-field, "
            "cylindrical, aperture, auto"
        )
    return ModelChoice(word, MODEL_IDS[word], f"requested: model = {word!r}")


def reactive_radius_m(rad: Radiator) -> float:
    """Reactive-near-field radius ``max(lambda/(2 pi), 0.62 sqrt(D^3/lambda))``. [m]

    ``D`` is the largest aperture dimension (0 when none is given, leaving lambda/2pi).

    References
    ----------
    Balanis, Antenna Theory, 3rd ed., Sec. 2.2.4 (see
    :func:`siteexposure.physics.farfield.reactive_near_field_radius_m`).
    """
    return float(reactive_near_field_radius_m(rad.largest_dimension_m, rad.wavelength_m))


def power_density(
    rad: Radiator, choice: ModelChoice, points_enu: ArrayLike
) -> tuple[np.ndarray, np.ndarray]:
    """Power density of one antenna at site-frame points with the chosen model.

    Parameters
    ----------
    rad : siteexposure.physics.radiator.Radiator
        The antenna.
    choice : ModelChoice
        From :func:`choose_model`.
    points_enu : array_like, shape (n, 3)
        Field points (east, north, up) in the site frame. [m]

    Returns
    -------
    s_w_m2 : ndarray, shape (n,)
        Power density; NaN where not assessable. [W/m^2]
    assessable : ndarray of bool, shape (n,)
        False inside the reactive near field and wherever the model is out of its
        domain.
    """
    pts = np.asarray(points_enu, dtype=float).reshape(-1, 3)
    word = choice.word
    if word == "far-field":
        s = farfield_power_density(rad, pts)
        ok = np.ones(len(pts), dtype=bool)
    elif word == "cylindrical":
        from siteexposure.physics.cylindrical import cylindrical_power_density

        s = cylindrical_power_density(rad, pts)
        ok = np.ones(len(pts), dtype=bool)
    elif word == "aperture":
        from siteexposure.physics.aperture import aperture_power_density

        s = aperture_power_density(rad, pts)
        ok = np.ones(len(pts), dtype=bool)
    elif word == "array":
        s, ok = _prepared_array(rad, choice).power_density(pts)
        s = np.asarray(s, dtype=float)
        ok = np.asarray(ok, dtype=bool)
    else:
        raise InputError(f"model choice: {word!r}; expected one of {', '.join(MODEL_IDS)}")
    d = pts - np.asarray(rad.position_m, dtype=float)
    r = np.sqrt(np.einsum("ij,ij->i", d, d))
    ok = ok & (r >= reactive_radius_m(rad)) & np.isfinite(s)
    return np.where(ok, s, np.nan), ok


def _prepared_array(rad, choice: ModelChoice):
    """The array-synthesis column of ``rad``, built once and kept on ``choice``."""
    entry = choice.prepared.get("array")
    if entry is None or entry[0] is not rad:
        from siteexposure.physics.array import ArraySynthesis

        entry = (rad, ArraySynthesis.from_radiator(rad))
        choice.prepared["array"] = entry
    return entry[1]


def pattern_note(pattern) -> str | None:
    """A sentence for the model record where the pattern's 3-D gain is not synthesised from
    its cuts (a pattern file with a full-sphere table), else None."""
    from siteexposure.physics.sphere_table import SPHERE_SYNTHESIS

    if getattr(pattern, "synthesis", None) == SPHERE_SYNTHESIS:
        return "3-D gain from the pattern file's full-sphere table"
    return None


def power_floor_note(choice: ModelChoice) -> str | None:
    """A sentence for the model record where an array model, once built, radiates more than
    the input power to keep the pattern's stated peak gain (see
    :class:`siteexposure.physics.array.ArraySynthesis`), else None."""
    entry = choice.prepared.get("array")
    ratio = float(entry[1].radiated_power_ratio) if entry is not None else 1.0
    if ratio <= 1.001:
        return None
    return (f"its far field is held at the pattern's stated peak gain, so it radiates "
            f"{100.0 * (ratio - 1.0):.1f} % more than the input power (the pattern's 3-D gain "
            "integrates to more than 4 pi; conservative)")


def keep_out_directions_enu(azimuth_deg: float) -> dict[str, np.ndarray]:
    """Unit vectors (east, north, up) of the six keep-out directions of an antenna. [1]"""
    a = np.deg2rad(float(azimuth_deg))
    front = np.array([np.sin(a), np.cos(a), 0.0])
    left = np.array([-np.cos(a), np.sin(a), 0.0])
    up = np.array([0.0, 0.0, 1.0])
    return {
        "front": front,
        "behind": -front,
        "left": left,
        "right": -left,
        "above": up,
        "below": -up,
    }


def _outermost_crossing(rad, choice, direction, limit, r0, r_max) -> float:
    radii = np.geomspace(r0 * (1.0 + 1e-9), r_max, _MARCH_SAMPLES)  # just outside the mask
    for round_ in range(_REFINE_ROUNDS + 1):
        s, _ = power_density(rad, choice, rad.position_m + radii[:, None] * direction)
        over = ~(s < limit)  # NaN (not assessable) counts as exceeding
        if not over.any():
            # first pass: never exceeded; refinement passes: the crossing is at radii[0]
            return 0.0 if round_ == 0 else float(radii[0])
        i = int(np.flatnonzero(over)[-1])
        if i == len(radii) - 1:
            return float(radii[-1])
        lo, hi = radii[i], radii[i + 1]
        if hi - lo <= 1e-9 * hi:
            break
        radii = np.linspace(lo, hi, _REFINE_SAMPLES)
    return float(0.5 * (lo + hi))


def keep_out_distances(rad: Radiator, choice: ModelChoice, limit_w_m2: float) -> dict[str, float]:
    """Compliance distances of one antenna along six worker-measured directions.

    Parameters
    ----------
    rad : siteexposure.physics.radiator.Radiator
        The antenna.
    choice : ModelChoice
        The model to use (the same one as the area evaluation).
    limit_w_m2 : float
        Power-density limit to fall below. [W/m^2]

    Returns
    -------
    dict
        ``front``, ``behind``, ``left``, ``right``, ``above``, ``below``: distance from
        the radiation centre beyond which the model's density stays below the limit;
        0 where it never exceeds the limit outside the reactive radius. [m]

    Notes
    -----
    The march runs from the reactive radius to a range where even the peak gain in
    the far-field formula (measured from the far end of the aperture) gives less than
    the limit; every model here is bounded by that value there.
    """
    limit = float(limit_w_m2)
    if not np.isfinite(limit) or limit <= 0.0:
        raise InputError(f"power-density limit: {limit_w_m2!r}; expected a positive number")
    r0 = reactive_radius_m(rad)
    g_peak = 10.0 ** (float(rad.pattern.peak_gain_dbi) / 10.0)
    r_far = float(
        far_field_distance_for_density_m(rad.power_w * g_peak, limit, rad.reflection_factor)
    )
    r_max = max(1.5 * r_far + 2.0 * rad.largest_dimension_m, 4.0 * r0)
    dirs = keep_out_directions_enu(rad.azimuth_deg)
    return {
        name: _outermost_crossing(rad, choice, vec, limit, r0, r_max) for name, vec in dirs.items()
    }
