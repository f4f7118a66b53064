"""Habitable-zone figure: insolation against stellar Teff with Kopparapu et al. (2014) limits."""

import numpy as np

from planetfit.context.climate import HZ_TEFF_RANGE_K, hz_insolation_earth
from planetfit.core.units import T_EFF_SUN_K
from planetfit.report import style
from planetfit.report.figures import solar_system
from planetfit.report.figures.common import contours

# (inner limit, outer limit, legend text, colour, opacity); Kopparapu et al. (2014) names.
ZONES = (
    ("recent_venus", "early_mars", "optimistic HZ", style.GREEN, 0.18),
    ("runaway_greenhouse_1_earth_mass", "maximum_greenhouse", "conservative HZ", style.GREEN, 0.4),
)
PLANET_COLOURS = (style.BLUE, style.PURPLE, style.VERMILLION)
_SOLAR_SYSTEM = ("Mercury", "Venus", "Earth", "Mars")


def _solar_system(ax):
    """The Solar System's planets at the Sun's Teff and their insolation, labelled."""
    for name in _SOLAR_SYSTEM:
        a_au = solar_system.PLANETS[name][2]
        ax.plot(a_au**-2, T_EFF_SUN_K, "o", color=style.GREY, mec=style.BLACK, mew=0.4, ms=3.5, zorder=5)
        ax.annotate(name, (a_au**-2, T_EFF_SUN_K), xytext=(0, 5), textcoords="offset points", fontsize=6, ha="center")


def habitable_zone_figure(derived, planets):
    """Each planet's insolation and host Teff posterior (1 and 2 sigma contours) over the HZ bands.

    Insolation decreases to the right, as distance from the star grows.

    Parameters
    ----------
    derived : dict
        Output of :func:`planetfit.context.derived.derive` after context (with ``insolation_earth``).
    planets : list of PlanetConfig

    Returns
    -------
    matplotlib.figure.Figure
        One axes.
    """
    teff_grid = np.linspace(*HZ_TEFF_RANGE_K, 200)
    limits = hz_insolation_earth(teff_grid)
    teff = derived["star"]["teff_k"]
    s_hi, s_lo = 2.5, 0.2
    t_lo, t_hi = HZ_TEFF_RANGE_K
    with style.style():
        fig = style.new_figure(style.COLUMN_WIDTH_IN, 2.9)
        ax = fig.subplots()
        for inner, outer, text, colour, alpha in ZONES:
            ax.fill_betweenx(teff_grid, limits[inner], limits[outer], color=colour, alpha=alpha, lw=0, label=text)
        for k, p in enumerate(planets):
            s = derived["planets"][p.name]["insolation_earth"]
            ok = np.isfinite(s) & (s > 0) & np.isfinite(teff)
            colour = PLANET_COLOURS[k % len(PLANET_COLOURS)]
            contours(ax, s[ok], teff[ok], colour, ("log", "linear"))
            ax.plot([], [], "s", color=colour, label=f"planet {p.name}")
            s_hi, s_lo = max(s_hi, np.percentile(s[ok], 99.5) * 1.5), min(s_lo, np.percentile(s[ok], 0.5) / 1.5)
            t_lo = min(t_lo, np.percentile(teff[ok], 0.5) - 100)
            t_hi = max(t_hi, np.percentile(teff[ok], 99.5) + 100)
        _solar_system(ax)
        ax.set_xscale("log")
        ax.set_xlim(s_hi, s_lo)
        ax.set_ylim(t_lo, t_hi)
        ax.set_xlabel(r"Insolation [$S_\oplus$]")
        ax.set_ylabel(r"Stellar $T_\mathrm{eff}$ [K]")
        ax.legend(loc="lower left")
    return fig
