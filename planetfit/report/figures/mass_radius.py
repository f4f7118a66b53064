"""Mass–radius diagram: posterior contours over the interior composition curves."""

import numpy as np
from matplotlib.ticker import FixedLocator, FormatStrFormatter, NullFormatter

from planetfit.context.interior import REFERENCE_CURVES, reference_curve
from planetfit.report import style
from planetfit.report.figures import solar_system
from planetfit.report.figures.common import contours

CURVE_STYLES = {  # name -> (legend text, colour, line style)
    "iron": ("100% iron", style.BLACK, "-"),
    "earth_like": ("Earth-like (32.5% iron)", style.GREEN, "--"),
    "silicate": ("100% silicate", style.ORANGE, "-."),
    "water_world": ("50% water", style.SKY_BLUE, ":"),
}
PLANET_COLOURS = (style.BLUE, style.PURPLE, style.VERMILLION)
_MASS_RANGE = (0.04, 30.0)
_RADIUS_RANGE = (0.3, 5.0)
_MASS_TICKS = (0.01, 0.03, 0.1, 0.3, 1, 3, 10, 30, 100, 300, 1000, 3000)
_RADIUS_TICKS = (0.2, 0.3, 0.5, 1, 2, 3, 5, 10, 20)
# Label offsets (points) and alignment, so close pairs (Venus-Earth, Uranus-Neptune) stay apart.
_LABEL_PLACES = {
    "Mercury": ((4, -2), "left"),
    "Venus": ((-4, 2), "right"),
    "Earth": ((4, -5), "left"),
    "Mars": ((4, -2), "left"),
    "Uranus": ((-4, 0), "right"),
    "Neptune": ((3, -7), "left"),
}


def _solar_system(ax):
    """The Solar System's rocky planets and ice giants, labelled."""
    for name in solar_system.ROCKY + solar_system.ICE_GIANTS:
        mass, radius, _ = solar_system.PLANETS[name]
        ax.plot(mass, radius, "o", color=style.GREY, mec=style.BLACK, mew=0.4, ms=3.5, zorder=5)
        offset, align = _LABEL_PLACES[name]
        ax.annotate(name, (mass, radius), xytext=offset, textcoords="offset points", fontsize=6, ha=align, va="center")


def mass_radius_figure(derived, planets):
    """The transiting planets' mass–radius posteriors (1 and 2 sigma contours) on log axes.

    With the four reference compositions of :mod:`planetfit.context.interior` and
    the Solar System's rocky planets and ice giants.

    Parameters
    ----------
    derived : dict
        Output of :func:`planetfit.context.derived.derive`.
    planets : list of PlanetConfig
        Transiting planets only (the others have no radius).

    Returns
    -------
    matplotlib.figure.Figure
        One axes.
    """
    with style.style():
        fig = style.new_figure(style.COLUMN_WIDTH_IN, 2.9)
        ax = fig.subplots()
        for name in REFERENCE_CURVES:
            text, colour, ls = CURVE_STYLES[name]
            ax.plot(*reference_curve(name), color=colour, ls=ls, lw=1.0, label=text)
        lo_m, hi_m = _MASS_RANGE
        lo_r, hi_r = _RADIUS_RANGE
        for k, p in enumerate(planets):
            m = derived["planets"][p.name]["mass_earth"]
            r = derived["planets"][p.name]["radius_earth"]
            ok = (m > 0) & (r > 0) & np.isfinite(m) & np.isfinite(r)
            m, r = m[ok], r[ok]
            colour = PLANET_COLOURS[k % len(PLANET_COLOURS)]
            contours(ax, m, r, colour, ("log", "log"))
            ax.plot([], [], "s", color=colour, label=f"planet {p.name}")
            lo_m, hi_m = min(lo_m, np.percentile(m, 0.5) / 1.5), max(hi_m, np.percentile(m, 99.5) * 1.5)
            lo_r, hi_r = min(lo_r, np.percentile(r, 0.5) / 1.2), max(hi_r, np.percentile(r, 99.5) * 1.2)
        _solar_system(ax)
        ax.set_xscale("log")
        ax.set_yscale("log")
        ax.set_xlim(lo_m, hi_m)
        ax.set_ylim(lo_r, hi_r)
        for axis, ticks in ((ax.xaxis, _MASS_TICKS), (ax.yaxis, _RADIUS_TICKS)):
            axis.set_major_locator(FixedLocator(ticks))
            axis.set_major_formatter(FormatStrFormatter("%g"))
            axis.set_minor_formatter(NullFormatter())
        ax.set_xlabel(r"Mass [$M_\oplus$]")
        ax.set_ylabel(r"Radius [$R_\oplus$]")
        ax.legend(loc="upper left")
    return fig
