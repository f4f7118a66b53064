"""Corner plots (corner package, Foreman-Mackey 2016, JOSS 1, 24): physical and sampled parameters."""

import math

import corner
import numpy as np
from matplotlib.figure import Figure
from matplotlib.patches import Rectangle
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
NAME_MARGIN_IN = 2.1

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
    """Corner of every sampled parameter (physical values), for diagnosis, drawn in one axes.

    Each parameter is shown over its central 99% (0.5th to 99.5th
    percentile, written under its name); the pairs as 1- and 2-sigma
    contour lines (corner's ``hist2d``), each parameter's histogram on the
    diagonal. One axes instead of n x n: matplotlib's axes and ticks took
    most of the drawing time of 625 panels.

    Returns
    -------
    matplotlib.figure.Figure
        One axes, the grid in data units (panel j, i spans [j, j + 1] x [n - 1 - i, n - i]).
    """
    names = derived["parameter_names"]
    n = len(names)
    data = np.column_stack([derived["parameters"][k] for k in names])
    data = data[thin_rows(len(data))]
    lo, hi = np.percentile(data, [0.5, 99.5], axis=0)
    unit = (data - lo) / np.where(hi > lo, hi - lo, 1.0)  # each on [0, 1] over its central 99%
    width_in = NAME_MARGIN_IN + PANEL_IN * n
    fig = Figure(figsize=(width_in, width_in))
    margin = NAME_MARGIN_IN / width_in
    ax = fig.add_axes((margin, margin, 1 - margin - 0.1 / width_in, 1 - margin - 0.1 / width_in))
    for i in range(n):
        row = n - 1 - i
        for j in range(i):
            corner.hist2d(
                unit[:, j] + j,
                unit[:, i] + row,
                ax=ax,
                bins=20,
                range=[[j, j + 1], [row, row + 1]],
                levels=LEVELS_2D,
                color=style.BLUE,
                plot_datapoints=False,
                plot_density=False,
                no_fill_contours=True,
                quiet=True,
            )
        counts, edges = np.histogram(unit[:, i], bins=20, range=(0, 1))
        ax.stairs(row + 0.9 * counts / max(counts.max(), 1), edges + i, baseline=row, color=style.BLUE, lw=0.8)
        ax.add_patch(Rectangle((0, row), i + 1, 1, fill=False, lw=0.4, color="0.6"))
        _panel_labels(ax, i, n, names[i], lo[i], hi[i])
    ax.set(xlim=(0, n), ylim=(0, n))
    ax.set_axis_off()
    return fig


def _panel_labels(ax, i, n, name, lo, hi):
    """Name and central-99% range of parameter ``i`` under its column and left of its row."""
    spread = hi - lo
    places = max(0, 2 - math.floor(math.log10(spread))) if spread > 0 else 4  # three digits of the spread
    text = f"{name}\n{lo:.{places}f} to {hi:.{places}f}"
    ax.text(i + 0.5, -0.1, text, rotation=90, ha="center", va="top", fontsize=6.5)
    ax.text(-0.1, n - 0.5 - i, text, ha="right", va="center", fontsize=6.5)
