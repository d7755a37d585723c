"""One face for every field model: the protocol, the result type and the registry.

A field model turns one antenna (a :class:`~siteexposure.physics.radiator.Radiator`) into
the plane-wave-equivalent densities of its electric and magnetic fields at points. Each
model is one class that

* is built once per antenna by ``from_radiator(rad, cache)`` (work shared between antennas,
  such as a taper fit, goes through the engine's :class:`~siteexposure.physics.cache.ModelCache`);
* gives ``fields(points_enu) -> Fields``: ``s_e = |E_rms|^2 / eta0`` and
  ``s_h = eta0 |H_rms|^2`` [W/m^2], NaN where the model has nothing to say;
* says where its validation holds, ``validated(points_ant) -> bool`` (antenna-frame offsets
  from the radiation centre): the dispatcher (:mod:`siteexposure.physics.sources`) uses the
  conservative bound of :mod:`siteexposure.physics.bound` everywhere else under ``auto``;
* may add sentences for the model record in ``notes``.

Adding a model is one class with these members and one row in :data:`REGISTRY`; the
dispatcher, the stand-off, the bound, the keep-out search and the engine need nothing else.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass
from typing import Protocol

import numpy as np

#: model word of the site file -> "module:Class" (imported on first use)
REGISTRY: dict[str, str] = {
    "far-field": "siteexposure.physics.farfield:FarFieldModel",
    "cylindrical": "siteexposure.physics.cylindrical:CylindricalModel",
    "array": "siteexposure.physics.array:ArrayModel",
    "aperture": "siteexposure.physics.aperture:ApertureModel",
}


@dataclass(frozen=True)
class Fields:
    """Plane-wave-equivalent densities of the electric and magnetic field at points.

    Attributes
    ----------
    s_e : ndarray
        ``|E_rms|^2 / eta0``. [W/m^2]
    s_h : ndarray
        ``eta0 |H_rms|^2``; equal to ``s_e`` for models that give a plane-wave density. [W/m^2]
    """

    s_e: np.ndarray
    s_h: np.ndarray

    @classmethod
    def plane_wave(cls, s) -> Fields:
        s = np.asarray(s, dtype=float)
        return cls(s, s)

    @property
    def s(self) -> np.ndarray:
        """``max(s_e, s_h)`` (NaN where either is NaN). [W/m^2]"""
        return np.fmax(self.s_e, self.s_h) + 0.0 * (self.s_e + self.s_h)


class FieldModel(Protocol):
    """What the dispatcher needs of a field model (see the module docstring)."""

    word: str  #: site-file word
    model_id: str  #: name that says where the model comes from
    notes: tuple[str, ...]

    @classmethod
    def from_radiator(cls, rad, cache) -> FieldModel: ...

    def fields(self, points_enu) -> Fields: ...

    def validated(self, points_ant, body_distance_m=None) -> np.ndarray: ...


def model_class(word: str) -> type:
    """The class registered for ``word`` (imported on first use)."""
    module, _, name = REGISTRY[word].partition(":")
    return getattr(importlib.import_module(module), name)
