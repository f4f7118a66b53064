"""Cold equations of state for the three layers of a differentiated planet.

Every phase is a room-temperature (300 K) isotherm taken from a published fit
(Vinet or third-order Birch–Murnaghan) or, for water above 28 GPa, from
density-functional points and a Thomas–Fermi–Dirac-limited fit; no thermal term
is added, i.e. a cold structure: real planets are hotter and a few per cent larger.
A :class:`Material` is a sequence of phases, each stable up to a pressure;
density as a function of pressure comes from a table built once per material
by inverting P(rho) on a dense log-pressure grid.

Parameters are written as (reference density or molar volume, K0, K0').
Zero-pressure densities given as molar mass / molar volume use the molar
masses Mg2SiO4 140.69, MgSiO3 100.39 and H2O 18.015 g/mol.
"""

from dataclasses import dataclass

import numpy as np

from planetfit.core.units import KG_M3_TO_G_CM3, PA_TO_GPA

# Table range for the density inversion, GPa. The upper end lies far above
# the central pressure of a 30 Earth-mass iron planet (~1e4 GPa).
_TABLE_P_MIN_GPA = 1e-4
_TABLE_P_MAX_GPA = 1e7
_TABLE_POINTS = 6000


def vinet_pressure_gpa(eta, k0_gpa, k0_prime):
    """Vinet equation of state (Vinet et al. 1987, J. Geophys. Res. 92, 9319).

    Parameters
    ----------
    eta : ndarray
        Compression rho / rho0.
    k0_gpa, k0_prime : float
        Zero-pressure bulk modulus (GPa) and its pressure derivative.

    Returns
    -------
    ndarray
        Pressure in GPa.
    """
    x = eta ** (-1.0 / 3.0)
    return 3.0 * k0_gpa * (1.0 - x) / x**2 * np.exp(1.5 * (k0_prime - 1.0) * (1.0 - x))


def birch_murnaghan3_pressure_gpa(eta, k0_gpa, k0_prime):
    """Third-order Birch–Murnaghan equation of state (Birch 1947, Phys. Rev. 71, 809).

    Parameters
    ----------
    eta : ndarray
        Compression rho / rho0.
    k0_gpa, k0_prime : float
        Zero-pressure bulk modulus (GPa) and its pressure derivative.

    Returns
    -------
    ndarray
        Pressure in GPa.
    """
    e23 = eta ** (2.0 / 3.0)
    return 1.5 * k0_gpa * (eta ** (7.0 / 3.0) - eta ** (5.0 / 3.0)) * (1.0 + 0.75 * (k0_prime - 4.0) * (e23 - 1.0))


@dataclass(frozen=True)
class Phase:
    """One solid phase: an isotherm P(rho) with its published parameters."""

    name: str
    rho0_g_cm3: float
    k0_gpa: float
    k0_prime: float
    law: object  # vinet_pressure_gpa or birch_murnaghan3_pressure_gpa

    def pressure_gpa(self, rho_kg_m3):
        """Pressure (GPa) at density ``rho_kg_m3``."""
        eta = np.asarray(rho_kg_m3, dtype=float) * KG_M3_TO_G_CM3 / self.rho0_g_cm3
        return self.law(eta, self.k0_gpa, self.k0_prime)

    def density_kg_m3(self, pressure_gpa):
        """Density (kg m^-3) at ``pressure_gpa`` >= 0, by bisection on ln(eta)."""
        p = np.asarray(pressure_gpa, dtype=float)
        lo = np.zeros_like(p)
        hi = np.full_like(p, np.log(200.0))
        for _ in range(70):
            mid = 0.5 * (lo + hi)
            above = self.law(np.exp(mid), self.k0_gpa, self.k0_prime) > p
            hi = np.where(above, mid, hi)
            lo = np.where(above, lo, mid)
        return np.exp(0.5 * (lo + hi)) * self.rho0_g_cm3 / KG_M3_TO_G_CM3


class Material:
    """A layer material: phases in order of pressure, with transition pressures.

    Parameters
    ----------
    name : str
    phases : sequence of Phase
    transitions_gpa : sequence of float
        Pressure where phase ``i`` gives way to phase ``i + 1``
        (one fewer than ``phases``).
    """

    def __init__(self, name, phases, transitions_gpa=()):
        if len(transitions_gpa) != len(phases) - 1:
            raise ValueError("need one transition pressure between each pair of phases")
        self.name = name
        self.phases = tuple(phases)
        self.transitions_gpa = tuple(transitions_gpa)
        self._p_table, self._rho_table = self._build_table()

    def _build_table(self):
        p_grid = np.concatenate([[0.0], np.geomspace(_TABLE_P_MIN_GPA, _TABLE_P_MAX_GPA, _TABLE_POINTS)])
        edges = (0.0,) + self.transitions_gpa + (np.inf,)
        p_parts, rho_parts = [], []
        for phase, lo, hi in zip(self.phases, edges[:-1], edges[1:]):
            inside = p_grid[(p_grid > lo) & (p_grid < hi)]
            p = np.concatenate([[lo], inside, [hi]]) if np.isfinite(hi) else np.concatenate([[lo], inside])
            p_parts.append(p)
            rho_parts.append(phase.density_kg_m3(p))
        return np.concatenate(p_parts), np.concatenate(rho_parts)

    def density_kg_m3(self, pressure_gpa):
        """Density (kg m^-3) at ``pressure_gpa``; negative pressures give the
        zero-pressure density of the lowest phase."""
        return np.interp(pressure_gpa, self._p_table, self._rho_table)


# --- iron core ---------------------------------------------------------------
# epsilon (hcp) iron, Vinet fit to room-temperature diamond-cell data to 330 GPa:
# Anderson, Dubrovinsky, Saxena & LeBihan 2001, Geophys. Res. Lett. 28, 399,
# as tabulated in Seager, Kuchner, Hier-Majumder & Militzer 2007, ApJ 669, 1279,
# Table 3: rho0 = 8.30 g/cm^3, K0 = 156.2 GPa, K0' = 6.08.
IRON_EPSILON = Phase("epsilon-Fe", 8.30, 156.2, 6.08, vinet_pressure_gpa)

# --- silicate mantle -----------------------------------------------------------
# Mg end-members, third-order finite-strain (Birch–Murnaghan) parameters of
# Stixrude & Lithgow-Bertelloni 2011, Geophys. J. Int. 184, 1180, Table A1
# (V0 in cm^3/mol, K0 in GPa, K0').
FORSTERITE = Phase("forsterite (olivine)", 140.69 / 43.60, 128.0, 4.2, birch_murnaghan3_pressure_gpa)
WADSLEYITE = Phase("wadsleyite", 140.69 / 40.52, 169.0, 4.3, birch_murnaghan3_pressure_gpa)
RINGWOODITE = Phase("ringwoodite", 140.69 / 39.49, 185.0, 4.2, birch_murnaghan3_pressure_gpa)
PEROVSKITE = Phase("MgSiO3 perovskite (bridgmanite)", 100.39 / 24.45, 251.0, 4.1, birch_murnaghan3_pressure_gpa)
POST_PEROVSKITE = Phase("MgSiO3 post-perovskite", 100.39 / 24.42, 231.0, 4.0, birch_murnaghan3_pressure_gpa)

# Transition pressures: olivine -> wadsleyite 13.5 GPa and wadsleyite ->
# ringwoodite 18 GPa (Katsura & Ito 1989, J. Geophys. Res. 94, 15663; the 410 and
# 520 km discontinuities); ringwoodite -> perovskite 23 GPa (Ito & Takahashi
# 1989, J. Geophys. Res. 94, 10637; the 660 km discontinuity); perovskite ->
# post-perovskite 120 GPa (Murakami, Hirose, Kawamura, Sata & Ohishi 2004,
# Science 304, 855).
IRON = Material("iron", [IRON_EPSILON])
SILICATE = Material(
    "silicate", [FORSTERITE, WADSLEYITE, RINGWOODITE, PEROVSKITE, POST_PEROVSKITE], [13.5, 18.0, 23.0, 120.0]
)

# --- water ---------------------------------------------------------------------
# A cold (300 K) water layer, piece by piece with pressure. Transition pressures
# at 300 K: liquid -> ice VI at 0.95 GPa and ice VI -> ice VII at 2.2 GPa (value
# from memory: the ice VI melting curve of Wagner, Riethmann, Feistel & Harvey
# 2011, J. Phys. Chem. Ref. Data 40, 043103, and the VI-VII boundary near 2.2 GPa).
#
# Liquid water at 300 K: Vinet fit made for planetfit to the IAPWS-95 formulation
# (Wagner & Pruss 2002, J. Phys. Chem. Ref. Data 31, 387) along the 300 K isotherm
# from 0.1 MPa to 1 GPa: rho0 = 0.99656 g/cm^3 (IAPWS-95 at 300 K and 1 atm),
# K0 = 2.099 GPa, K0' = 7.49; densities within 0.1 % of IAPWS-95 (checked in
# tests/context/test_water_eos.py).
LIQUID_WATER = Phase("liquid water (300 K)", 0.99656, 2.099, 7.49, vinet_pressure_gpa)
# Ice VI, third-order Birch-Murnaghan: Bezacier et al. 2014, J. Chem. Phys. 141,
# 104505: V0 = 14.17 cm^3/mol, K0 = 14.05 GPa, K0' = 4 (value as transcribed in a
# public EOS compilation; the paper's table was not read).
ICE_VI = Phase("ice VI", 18.015 / 14.17, 14.05, 4.0, birch_murnaghan3_pressure_gpa)
# Ice VII, Vinet fit to room-temperature diamond-cell data to 60 GPa: Frank, Fei &
# Hu 2004, Geochim. Cosmochim. Acta 68, 2781: V0 = 12.4 cm^3/mol, K0 = 21.1 GPa,
# K0' = 4.4.
ICE_VII = Phase("ice VII", 18.015 / 12.4, 21.1, 4.4, vinet_pressure_gpa)


class TabulatedPhase:
    """A phase given as (pressure, density) points, interpolated linearly in log-log.

    Below the first point the first segment's power law is continued (the pieces
    are joined where the lower phase's density meets it); above the last point
    the phase is not used (a higher-pressure piece takes over).
    """

    def __init__(self, name, pressure_gpa, density_g_cm3):
        self.name = name
        self._log_p = np.log(np.asarray(pressure_gpa, dtype=float))
        self._log_rho = np.log(np.asarray(density_g_cm3, dtype=float) / KG_M3_TO_G_CM3)

    @property
    def pressure_range_gpa(self):
        """(lowest, highest) tabulated pressure."""
        return float(np.exp(self._log_p[0])), float(np.exp(self._log_p[-1]))

    def density_kg_m3(self, pressure_gpa):
        """Density (kg m^-3) at ``pressure_gpa`` > 0."""
        x = np.log(np.maximum(np.asarray(pressure_gpa, dtype=float), 1e-30))
        slope = (self._log_rho[1] - self._log_rho[0]) / (self._log_p[1] - self._log_p[0])
        inside = np.interp(x, self._log_p, self._log_rho)
        below = self._log_rho[0] + slope * (x - self._log_p[0])
        return np.exp(np.where(x < self._log_p[0], below, inside))


class ModifiedPolytrope:
    """rho = rho0 + c P^n (SI units), the form fitted by Seager et al. 2007, ApJ 669, 1279."""

    def __init__(self, name, rho0_kg_m3, c, n):
        self.name, self.rho0_kg_m3, self.c, self.n = name, rho0_kg_m3, c, n

    def density_kg_m3(self, pressure_gpa):
        """Density (kg m^-3) at ``pressure_gpa`` >= 0."""
        p_pa = np.maximum(np.asarray(pressure_gpa, dtype=float), 0.0) / PA_TO_GPA
        return self.rho0_kg_m3 + self.c * p_pa**self.n


# Ice VII/X at high pressure: density-functional molecular dynamics of French,
# Mattsson, Nettelmann & Redmer 2009, Phys. Rev. B 79, 054107, as the points used
# by Zeng & Sasselov 2013, PASP 125, 227 for their water layer (pressure GPa,
# density g/cm^3; values as transcribed in a public EOS compilation, the papers'
# tables were not read). This is the piece that the 2 TPa base of a 30 Earth-mass
# water world needs; ice VII's fit extrapolated there is far too dense.
ICE_X_DFT = TabulatedPhase(
    "ice VII/X (DFT, French et al. 2009)",
    [37.3, 43.6, 140.0, 183.0, 234.0, 290.0, 587.0, 966.0, 1440.0, 2703.0, 4405.0, 6416.0, 8893.0],
    [2.45, 2.5, 3.25, 3.5, 3.75, 4.0, 5.0, 6.0, 7.0, 9.0, 11.0, 13.0, 15.0],
)
# Above the DFT table (8.9 TPa, as in Zeng & Sasselov 2013): Seager et al. 2007,
# ApJ 669, 1279, Table 3 modified-polytrope fit for H2O, whose high-pressure end
# follows Thomas-Fermi-Dirac theory (Salpeter & Zapolsky 1967, Phys. Rev. 158,
# 876): rho0 = 1460 kg/m^3, c = 0.00311, n = 0.513 (value from memory). No water
# layer of the grid reaches this pressure.
WATER_TFD = ModifiedPolytrope("H2O, Thomas-Fermi-Dirac limit (Seager et al. 2007 fit)", 1460.0, 0.00311, 0.513)
# Ice VII gives way to the DFT points where its density meets their power-law
# continuation (28.0 GPa, inside the 60 GPa of Frank et al.'s data).
ICE_VII_TO_X_GPA = 28.0
WATER = Material(
    "water",
    [LIQUID_WATER, ICE_VI, ICE_VII, ICE_X_DFT, WATER_TFD],
    [0.95, 2.2, ICE_VII_TO_X_GPA, ICE_X_DFT.pressure_range_gpa[1]],
)
