"""Convergence figure: autocorrelation time against steps, and walker traces."""

import emcee
import numpy as np

from planetfit.report import style

N_TRACES = 3
#: Steps drawn per walker trace (longer chains are thinned for display only).
MAX_TRACE_POINTS = 1500


def physical_chain(raw, layout):
    """The chain (steps, walkers, ndim) of sampler coordinates in physical values."""
    values = layout.values(raw.reshape(-1, raw.shape[-1]))
    chain = np.stack([np.broadcast_to(values[n], raw.shape[0] * raw.shape[1]) for n in layout.free], axis=-1)
    return chain.reshape(raw.shape)


def convergence_figure(history, chain, names, discard, target_factor):
    """Autocorrelation estimate against steps, and traces of the slowest-mixing parameters.

    Parameters
    ----------
    history : ndarray, shape (k, 2)
        (step, largest autocorrelation time) rows.
    chain : ndarray, shape (steps, walkers, ndim)
    names : list of str
    discard : int
        Burn-in steps left out of the posterior (marked on the traces).
    target_factor : float
        The stopping rule wants the chain longer than this many autocorrelation times.

    Returns
    -------
    matplotlib.figure.Figure
        1 + min(3, ndim) axes: autocorrelation, then one trace per parameter
        (its name written in the panel).
    """
    steps = chain.shape[0]
    tau = emcee.autocorr.integrated_time(chain, tol=0)
    slowest = np.argsort(tau)[::-1][:N_TRACES]
    stride = max(1, steps // MAX_TRACE_POINTS)
    x = np.arange(0, steps, stride)
    with style.style():
        fig = style.new_figure(style.COLUMN_WIDTH_IN, 1.4 + 1.0 * len(slowest))
        axes = fig.subplots(1 + len(slowest), 1, height_ratios=[1.6] + [1] * len(slowest))
        ax = axes[0]
        ax.plot([0, steps], [0, steps / target_factor], "--", color=style.GREY, label=f"steps / {target_factor:g}")
        top = steps / target_factor
        if history.size:
            ax.plot(history[:, 0], history[:, 1], "o-", color=style.BLUE, ms=2.5, label=r"largest $\hat\tau$")
            top = max(top, np.nanmax(history[:, 1]))
        ax.set_xlim(0, steps)
        ax.set_ylim(0, 1.15 * top)
        ax.set_xlabel("Step")
        ax.set_ylabel("Autocorrelation\ntime [steps]")
        ax.legend(loc="upper left")
        for ax, j in zip(axes[1:], slowest):
            _trace(ax, x, chain[::stride, :, j], discard, steps, names[j], tau[j])
        axes[-1].set_xlabel("Step (dashed: end of burn-in)")
        for ax in axes[1:-1]:
            ax.tick_params(labelbottom=False)
    return fig


def _trace(ax, x, walkers, discard, steps, name, tau):
    """One parameter's walker traces, the end of burn-in, its name and autocorrelation time, on ``ax``."""
    ax.plot(x, walkers, color=style.BLUE, lw=0.3, alpha=0.25, rasterized=True)
    ax.axvline(discard, color=style.VERMILLION, lw=0.8, ls="--")
    ax.set_xlim(0, steps)
    ax.ticklabel_format(axis="y", style="plain", useOffset=False)  # a BJD as it is, not x 1e6
    # Names are too long for a y label of a short panel: written inside it.
    box = {"facecolor": "white", "edgecolor": "none", "alpha": 0.8, "pad": 1.0}
    ax.text(0.01, 0.95, name, transform=ax.transAxes, ha="left", va="top", fontsize=6.5, bbox=box)
    ax.text(
        0.99, 0.95, rf"$\hat\tau$ = {tau:.0f}", transform=ax.transAxes, ha="right", va="top", fontsize=6.5, bbox=box
    )
