"""Physical constants and unit conversions, in one place.

Every value is taken from :mod:`astropy.constants` (IAU 2015 nominal values and
CODATA); no other module keeps its own copy of G, R_earth, M_jup or au.
Names carry their units.
"""

import math as _math

from astropy import constants as _c
from astropy import units as _u

G_SI = _c.G.si.value  # m^3 kg^-1 s^-2
SIGMA_SB_SI = _c.sigma_sb.si.value  # W m^-2 K^-4
K_B_SI = _c.k_B.si.value  # J K^-1
M_U_SI = _c.u.si.value  # kg, atomic mass unit
H_SI = _c.h.si.value  # J s, Planck constant
C_SI = _c.c.si.value  # m s^-1, speed of light

M_SUN_KG = _c.M_sun.si.value
R_SUN_M = _c.R_sun.si.value
L_SUN_W = _c.L_sun.si.value
M_EARTH_KG = _c.M_earth.si.value
R_EARTH_M = _c.R_earth.si.value
M_JUP_KG = _c.M_jup.si.value
R_JUP_M = _c.R_jup.si.value
AU_M = _c.au.si.value

SECONDS_PER_DAY = (1 * _u.day).to_value(_u.s)
HOURS_PER_DAY = (1 * _u.day).to_value(_u.hour)
MINUTES_PER_DAY = (1 * _u.day).to_value(_u.min)
PPM = 1e-6  # parts per million, dimensionless
KG_M3_TO_G_CM3 = (1 * _u.kg / _u.m**3).to_value(_u.g / _u.cm**3)
PA_TO_GPA = (1 * _u.Pa).to_value(_u.GPa)

# Solar effective temperature from the IAU 2015 nominal luminosity and radius
# (Resolution B3): L = 4 pi R^2 sigma T^4.
T_EFF_SUN_K = (L_SUN_W / (4 * _math.pi * R_SUN_M**2 * SIGMA_SB_SI)) ** 0.25
# Solar constant at 1 au from the nominal luminosity, W m^-2.
S_EARTH_W_M2 = L_SUN_W / (4 * _math.pi * AU_M**2)
