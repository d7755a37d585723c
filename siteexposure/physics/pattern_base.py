"""The interface every antenna gain pattern offers to the field models.

A pattern answers the numeric (linear) power gain relative to an isotropic radiator
in any direction of the antenna frame (see :mod:`siteexposure.physics.orientation`).
Decibels stay at the edges: readers convert dBi to linear gain at once.
"""

from __future__ import annotations

from typing import Protocol, runtime_checkable

import numpy as np


@runtime_checkable
class GainPattern(Protocol):
    """Directional power gain of an antenna in its own frame.

    Attributes
    ----------
    name : str
        Short label for reports (the model id or the file's ``name``).
    peak_gain_dbi : float
        Maximum gain over the sphere. [dBi]
    electrical_tilt_deg : float
        Electrical downtilt contained in :meth:`gain` (positive = down). [deg]
    source : str
        Where the pattern comes from: the citation of a parametric model or the file path.
    """

    name: str
    peak_gain_dbi: float
    electrical_tilt_deg: float
    source: str

    def gain(self, phi, theta) -> np.ndarray:
        """Numeric power gain (relative to isotropic) at pattern angles ``phi``, ``theta``. [1]

        Both arguments broadcast; angles in radians as defined in
        :func:`siteexposure.physics.orientation.antenna_angles`.
        """
        ...


def dbi_to_linear(gain_dbi):
    """Decibels relative to isotropic to numeric gain, ``10**(G/10)``. [1]"""
    return np.power(10.0, np.asarray(gain_dbi, dtype=float) / 10.0)


def linear_to_dbi(gain):
    """Numeric gain to dBi, ``10*log10(G)``; zero gain gives -inf. [dBi]"""
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(np.asarray(gain, dtype=float))
