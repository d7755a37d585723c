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

#: The reactive zone of an element, in wavelengths over 2 pi: beyond
#: ``REACTIVE_FACTOR * lambda / (2 pi)`` from the body the near-field models are validated
#: against the method-of-moments references of tests/data/nec for every antenna class. [1]
REACTIVE_FACTOR = 1.0
#: Nothing is assessed closer than this to an antenna's body, whatever the frequency: below
#: about 48 MHz, where lambda/(2 pi) exceeds it, the zone between this and lambda/(2 pi) is
#: assessed by a model validated there (thin wires of known current) or by the conservative
#: bound; within it, construction details (feed, insulators, tuning units) and contact
#: currents, not field strength, decide (common practice: such conductors are fenced). [m]
MIN_STANDOFF_M = 1.0


def reactive_zone_m(wavelength_m: float) -> float:
    """``lambda/(2 pi)``: within this of the body the field of the nearest element itself
    dominates (Balanis sec. 4.2: near and far terms of a small dipole are equal at k r = 1). [m]
    """
    return REACTIVE_FACTOR * float(wavelength_m) / (2.0 * np.pi)


def standoff_m(wavelength_m: float) -> float:
    """Distance from the antenna's body inside which nothing is assessed,
    ``min(lambda/(2 pi), MIN_STANDOFF_M)``. [m]

    Closer than ``lambda/(2 pi)`` the field depends on construction details (element shape,
    radome, feed) that no screening input carries, so above about 48 MHz nothing is assessed
    there; at lower frequencies, where that zone is metres wide (48 m at 1 MHz: a whole
    broadcast-tower fence line), points from :data:`MIN_STANDOFF_M` out are assessed, by a
    model where the method-of-moments validation covers it and by the conservative bound
    elsewhere (:mod:`siteexposure.physics.sources`).
    """
    return min(reactive_zone_m(wavelength_m), MIN_STANDOFF_M)


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
