"""Hydrostatic structure of a cold, fully differentiated planet of up to three layers.

The equations of hydrostatic equilibrium and mass continuity are integrated in
the mass coordinate m from the centre outward, with u = r^3 so that the centre
is regular:

    du/dm = 3 / (4 pi rho(P)),      dP/dm = -G m / (4 pi u^(4/3)),

and the central pressure is found by root finding (Brent's method) so that
P = 0 at the total mass. Because layers are defined by mass fraction, the layer
boundaries sit at known masses and each layer is one integration segment with
its own equation of state (no events are needed); phase changes inside the
silicate mantle are density jumps at fixed pressure handled by the adaptive
step of ``solve_ivp``.
"""

from dataclasses import dataclass

import numpy as np
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from planetfit.context.interior.eos import IRON, SILICATE, WATER
from planetfit.core.units import G_SI, M_EARTH_KG, PA_TO_GPA, R_EARTH_M

# Scaled units: mass in Earth masses, u = (r / R_earth)^3, pressure in GPa.
_DU_DM = 3.0 * M_EARTH_KG / (4.0 * np.pi * R_EARTH_M**3)  # times 1/rho[kg m^-3]
_DP_DM_GPA = G_SI * M_EARTH_KG**2 / (4.0 * np.pi * R_EARTH_M**4) * PA_TO_GPA

_RTOL = 1e-7  # integration tolerance (radius good to ~1e-5)
_START_MASS_FRACTION = 1e-9  # first mass shell, started from the central series
LAYER_NAMES = ("core", "mantle", "water")


@dataclass(frozen=True)
class Structure:
    """Solution of :func:`solve_structure` (Earth units, GPa).

    Attributes
    ----------
    radius_earth : float
        Planet radius.
    central_pressure_gpa : float
    central_density_kg_m3 : float
    boundary_radii_earth : dict
        Outer radius of each layer present (``core``, ``mantle``, ``water``).
    boundary_pressures_gpa : dict
        Pressure at the outer edge of each layer present.
    """

    mass_earth: float
    iron_fraction: float
    water_fraction: float
    radius_earth: float
    central_pressure_gpa: float
    central_density_kg_m3: float
    boundary_radii_earth: dict
    boundary_pressures_gpa: dict


def layer_masses_earth(mass_earth, iron_fraction, water_fraction):
    """Masses of (core, mantle, water) in Earth masses.

    ``iron_fraction`` is the iron share of the refractory interior
    (core / (core + mantle)); ``water_fraction`` is the water share of the
    whole planet. With no water the iron fraction is the core mass fraction.
    """
    interior = mass_earth * (1.0 - water_fraction)
    core = interior * iron_fraction
    return core, interior - core, mass_earth * water_fraction


def _rhs(material):
    def rhs(m, y):
        u, p = y
        return [_DU_DM / material.density_kg_m3(p), -_DP_DM_GPA * m / max(u, 1e-300) ** (4.0 / 3.0)]

    return rhs


def _integrate(central_pressure_gpa, layers, record=False):
    """Integrate outward; return the pressure at the surface (and profile ends)."""
    material0 = layers[0][0]
    rho_c = material0.density_kg_m3(central_pressure_gpa)
    m0 = _START_MASS_FRACTION * layers[-1][2]
    u0 = _DU_DM * m0 / rho_c
    # central series for uniform density rho_c: P = Pc - (3/2) B m^2 / u^(4/3)
    p0 = central_pressure_gpa - 1.5 * _DP_DM_GPA * m0**2 / u0 ** (4.0 / 3.0)
    y = [u0, p0]
    m_start = m0
    ends = []
    for material, _, m_end in layers:
        sol = solve_ivp(
            _rhs(material), (m_start, m_end), y, method="RK45", rtol=_RTOL, atol=[1e-14, 1e-9 * central_pressure_gpa]
        )
        y = sol.y[:, -1]
        m_start = m_end
        ends.append((y[0] ** (1.0 / 3.0), y[1]))
    return (y[1], ends, rho_c) if record else y[1]


def solve_structure(mass_earth, iron_fraction, water_fraction=0.0):
    """Radius and internal structure of a cold differentiated planet.

    Parameters
    ----------
    mass_earth : float
        Total mass in Earth masses.
    iron_fraction : float
        Iron core mass as a fraction of the iron + silicate interior, 0..1.
    water_fraction : float
        Water mass (liquid, ice VI, VII, X: see :mod:`~planetfit.context.interior.eos`) as a fraction of the
        total mass, 0..1.

    Returns
    -------
    Structure
    """
    if not mass_earth > 0:
        raise ValueError(f"mass_earth must be positive, got {mass_earth}")
    if not (0.0 <= iron_fraction <= 1.0 and 0.0 <= water_fraction < 1.0):
        raise ValueError("iron_fraction must lie in [0, 1] and water_fraction in [0, 1)")
    masses = layer_masses_earth(mass_earth, iron_fraction, water_fraction)
    materials = (IRON, SILICATE, WATER)
    layers, m_lo = [], 0.0
    for name, material, dm in zip(LAYER_NAMES, materials, masses):
        if dm > 0:
            layers.append((material, name, m_lo + dm))
            m_lo += dm
    layers[-1] = (layers[-1][0], layers[-1][1], mass_earth)

    def surface_pressure(log_pc):
        pc = np.exp(log_pc)
        return _integrate(pc, layers) / pc

    # Bracket from a uniform-sphere estimate, P_c ~ G M^2 / R^4 with R ~ M^(1/3.7).
    guess = np.log(_DP_DM_GPA * mass_earth ** (2.0 - 4.0 / 3.7) * 0.5)
    lo, hi = guess - 2.0, guess + 2.0
    while surface_pressure(lo) > 0:
        lo -= 2.0
    while surface_pressure(hi) < 0:
        hi += 2.0
    log_pc = brentq(surface_pressure, lo, hi, xtol=1e-12, rtol=1e-12)
    pc = float(np.exp(log_pc))
    _, ends, rho_c = _integrate(pc, layers, record=True)
    names = [name for _, name, _ in layers]
    return Structure(
        mass_earth=float(mass_earth),
        iron_fraction=float(iron_fraction),
        water_fraction=float(water_fraction),
        radius_earth=float(ends[-1][0]),
        central_pressure_gpa=pc,
        central_density_kg_m3=float(rho_c),
        boundary_radii_earth={n: float(r) for n, (r, _) in zip(names, ends)},
        boundary_pressures_gpa={n: float(max(p, 0.0)) for n, (_, p) in zip(names, ends)},
    )
