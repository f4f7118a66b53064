"""Corner plots (corner package, Foreman-Mackey 2016, JOSS 1, 24): physical and sampled parameters."""

import corner
import numpy as np
from matplotlib.figure import Figure
from matplotlib.ticker import ScalarFormatter

from planetfit.core import quantities as q
from planetfit.core.stats import LOWER_PERCENTILE, UPPER_PERCENTILE
from planetfit.report import style
from planetfit.report.figures.common import LEVELS_2D, offset_for_display
from planetfit.report.rounding import number_text

#: Enough points for smooth 2D histograms; more only costs time.
MAX_POINTS = 4000
#: Panel size of the physical corner (up to a page width) and its margin, inches.
PHYSICAL_PANEL_IN = 1.0
PHYSICAL_MARGIN_IN = 0.8
#: Panel size of the diagnostic corner and its margin for names and ticks, inches.
PANEL_IN = 0.6
NAME_MARGIN_IN = 1.7

_TRANSITING = ("mass_earth", "radius_earth", "density_gcc", "radius_ratio", "impact", "rv_amplitude_ms")
_RV_ONLY = ("mass_earth", "period_days", "rv_amplitude_ms")


def thin_rows(n, limit=MAX_POINTS):
    """Evenly spaced indices of at most ``limit`` of ``n`` samples."""
    return np.unique(np.linspace(0, n - 1, min(n, limit)).astype(int))


def _corner(columns, labels, width_in, margin_in, tick_size, **options):
    """corner.corner on thinned samples in a square figure with margins given in inches."""
    data = np.column_stack(columns)
    fig = Figure(figsize=(width_in, width_in))
    corner.corner(
        data[thin_rows(len(data))],
        labels=labels,
        fig=fig,
        bins=20,
        levels=LEVELS_2D,
        color=style.BLUE,
        plot_datapoints=False,
        quiet=True,
        labelpad=0.08,
        **options,
    )
    for ax in fig.axes:
        ax.tick_params(labelsize=tick_size)
        for axis in (ax.xaxis, ax.yaxis):
            # No "1e-5" multiplier text: it lands on the neighbouring panel.
            if isinstance(axis.get_major_formatter(), ScalarFormatter):
                axis.get_major_formatter().set_powerlimits((-99, 99))
    lo, hi = margin_in / width_in, 1 - 0.1 / width_in
    fig.subplots_adjust(left=lo, bottom=lo, right=hi, top=hi, wspace=0.07, hspace=0.07)
    return fig


def _shifted(x, label):
    """Values with a display offset removed and the label saying so."""
    off = offset_for_display(x)
    return (x - off, f"{label} $-$ {number_text(off)}") if off else (x, label)


def physical_corner(derived, planet):
    """Corner of a planet's mass, radius and density with its main fitted parameters.

    Planets seen only in RVs get minimum mass, period and semi-amplitude;
    eccentric orbits add the eccentricity; quantities without spread are left out.

    Returns
    -------
    matplotlib.figure.Figure
        n x n axes, labels with units.
    """
    values = derived["planets"][planet.name]
    keys = list(_TRANSITING if planet.transits else _RV_ONLY)
    if planet.orbit.eccentric:
        keys.append("eccentricity")
    # A quantity held fixed (K = 0 in a transit-only fit, and the mass with it) has nothing to show.
    keys = [k for k in keys if np.all(np.isfinite(values[k])) and np.ptp(values[k]) > 0]
    columns, labels = zip(*(_shifted(values[k], q.planet_quantity(k, planet.transits).axis_label()) for k in keys))
    with style.style(style.CORNER_RC):
        width_in = min(
            style.PAGE_WIDTH_IN, max(style.COLUMN_WIDTH_IN, PHYSICAL_MARGIN_IN + PHYSICAL_PANEL_IN * len(keys))
        )
        return _corner(
            columns,
            labels,
            width_in,
            PHYSICAL_MARGIN_IN,
            6.5,
            smooth=1.0,
            fill_contours=True,
            max_n_ticks=3,
            quantiles=(LOWER_PERCENTILE / 100, 0.5, UPPER_PERCENTILE / 100),
        )


def sampled_corner(derived):
    """Corner of every sampled parameter (physical values), for diagnosis.

    Returns
    -------
    matplotlib.figure.Figure
        n x n axes for the n free parameters, labelled with their names.
    """
    names = derived["parameter_names"]
    columns, labels = zip(*(_shifted(derived["parameters"][n], n) for n in names))
    with style.style(style.CORNER_RC):
        # Contour lines only: hundreds of panels, drawn for a look at shapes, not for print.
        fig = _corner(
            columns,
            labels,
            NAME_MARGIN_IN + PANEL_IN * len(names),
            NAME_MARGIN_IN,
            5,
            plot_density=False,
            no_fill_contours=True,
            max_n_ticks=2,
            label_kwargs={"fontsize": 6.5, "rotation": 90},
        )
        for ax in fig.axes:
            if ax.get_ylabel():
                ax.yaxis.label.set(rotation=0, ha="right", va="center")
        return fig
