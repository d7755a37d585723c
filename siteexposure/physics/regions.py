"""Field-region formulas in one place: stand-off, Fresnel boundary, far-field range.

Every field model and the engine take these distances from here.

References
----------
.. [1] C. A. Balanis, "Antenna Theory: Analysis and Design", 4th ed., Wiley, 2016,
   sec. 2.2.4 (field regions: 0.62 sqrt(D^3/lambda) and 2 D^2/lambda), sec. 4.2 (the
   infinitesimal dipole: its near and far terms are equal in size at k r = 1, i.e.
   r = lambda/(2 pi)); equation numbers from memory.
.. [2] IEEE Std 145-2013, "IEEE Standard for Definitions of Terms for Antennas": the
   reactive near-field region is where the reactive (stored-energy) field predominates;
   for arrays of resonant elements it lies within a fraction of a wavelength of each
   element (from memory).
"""

from __future__ import annotations

import numpy as np

#: Stand-off from the antenna's body, in wavelengths over 2 pi: closer than
#: ``STANDOFF_FACTOR * lambda / (2 pi)`` to the body no model here is assessed (the
#: method-of-moments validation of tests/data/nec measures the models from there out). [1]
STANDOFF_FACTOR = 1.0


def standoff_m(wavelength_m: float) -> float:
    """Distance from the antenna's body inside which nothing is assessed, ``lambda/(2 pi)``. [m]

    Points closer than this to the conductors are in the reactive field of the nearest
    element itself, which depends on construction details (element shape, radome, feed)
    that no screening input carries.
    """
    return STANDOFF_FACTOR * float(wavelength_m) / (2.0 * np.pi)


def fresnel_boundary_m(largest_dimension_m: float, wavelength_m: float) -> float:
    """``0.62 sqrt(D^3/lambda)``: where the Fresnel (second-order phase) approximation of the
    radiation integral starts to hold (Balanis sec. 2.2.4). [m]

    Informational only: it is not where stored energy dominates and not a refusal rule.
    """
    d, lam = float(largest_dimension_m), float(wavelength_m)
    return 0.62 * np.sqrt(d**3 / lam) if d > 0 else 0.0


def far_field_range_m(wavelength_m: float, largest_dimension_m: float) -> float:
    """Start of the far field ``max(2 L^2/lambda, 3 lambda, 5 L)``. [m]

    ``L`` is the largest dimension of the antenna's body, its depth included.

    References
    ----------
    Balanis, Antenna Theory, 4th ed., sec. 2.2.4 (2 D^2/lambda); the 3 lambda and 5 L
    minimums are common practice for small antennas.
    """
    lam, big = float(wavelength_m), float(largest_dimension_m)
    return max(2.0 * big**2 / lam, 3.0 * lam, 5.0 * big)
