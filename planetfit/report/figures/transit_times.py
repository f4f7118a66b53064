"""O-C figure: a planet's individual transit times minus its linear ephemeris, against epoch."""

import numpy as np

from planetfit.context.transit_times import sinusoid_design
from planetfit.core.units import MINUTES_PER_DAY
from planetfit.report import style


def o_minus_c_figure(timing):
    """O-C (minutes) of each transit with 1-sigma errors; the linear ephemeris at 0; the sinusoid fit if made.

    Parameters
    ----------
    timing : TransitTimes
        One planet's (:mod:`planetfit.context.transit_times`).
    """
    oc, err = timing.o_minus_c_minutes, timing.sigma_days * MINUTES_PER_DAY
    with style.style():
        fig = style.new_figure(style.COLUMN_WIDTH_IN, 2.8)
        ax = fig.subplots()
        ax.axhline(0.0, color=style.GREY, lw=0.8, label="linear ephemeris")
        if timing.sinusoid is not None:
            s = timing.sinusoid
            grid = np.linspace(timing.epochs.min(), timing.epochs.max(), 400)
            phase, amplitude = s["phase_rad"], s["amplitude_minutes"]
            coef = [
                amplitude * np.cos(phase),
                amplitude * np.sin(phase),
                s["offset_minutes"],
                s["slope_minutes_per_epoch"],
            ]
            ax.plot(
                grid,
                sinusoid_design(grid, s["period_epochs"]) @ coef,
                color=style.MODEL_COLOUR,
                lw=1,
                label=f"sinusoid, {amplitude:.1f} min, {s['period_days']:.1f} d",
            )
        ax.errorbar(timing.epochs, oc, yerr=err, fmt="o", ms=3, color=style.DATA_COLOUR, lw=0.8, label="transits")
        ax.set_xlabel("Epoch")
        ax.set_ylabel("O - C [min]")
        ax.set_title(
            f"planet {timing.planet}: rms {np.sqrt(np.mean(oc**2)):.2f} min, "
            f"$\\chi^2$ {timing.chi2:.1f} ({timing.dof} dof)",
            fontsize=7,
        )
        ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.22), ncol=3, frameon=False, fontsize=6)
    return fig
