"""Physical constants, all derived from :mod:`scipy.constants` (CODATA)."""

import math

from scipy import constants as _c

C0 = _c.c  #: speed of light in vacuum [m/s]
MU0 = _c.mu_0  #: vacuum permeability [H/m]
EPS0 = _c.epsilon_0  #: vacuum permittivity [F/m]
ETA0 = MU0 * C0  #: impedance of free space, eta0 = mu0 * c [ohm]
DBD_TO_DBI = 10.0 * math.log10(1.640922)  #: half-wave dipole gain 1.64 -> 2.15 dB (dBi = dBd + 2.15)
MHZ = 1.0e6  #: one megahertz [Hz]


def wavelength_m(frequency_hz):
    """Free-space wavelength ``lambda = c / f``. [m]"""
    return C0 / frequency_hz
