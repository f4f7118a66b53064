"""One figure style for every planetfit figure.

Sized for a journal column (3.4 in) or a full page width (7.1 in) with
8-pt text; colours from the Okabe & Ito (2008, "Color Universal Design")
palette, distinguishable with the common colour-vision deficiencies.
Figures are built on :class:`matplotlib.figure.Figure` directly (Agg
canvas, no pyplot state), so many can be drawn in one process without
leaking memory or needing a display.
"""

import io
from pathlib import Path

import matplotlib
from matplotlib.figure import Figure

matplotlib.use("Agg")

COLUMN_WIDTH_IN = 3.4
PAGE_WIDTH_IN = 7.1
PNG_DPI = 200
#: Figures whose SVG is larger than this are kept as PNG only (scatter-heavy panels draw slowly as vectors).
MAX_SVG_BYTES = 400_000

# Okabe & Ito (2008) colour-blind-safe palette.
BLACK = "#000000"
ORANGE = "#E69F00"
SKY_BLUE = "#56B4E9"
GREEN = "#009E73"
YELLOW = "#F0E442"
BLUE = "#0072B2"
VERMILLION = "#D55E00"
PURPLE = "#CC79A7"
GREY = "#8C8C8C"

#: Order for series that need distinct colours (instruments, planets); vermillion is kept for models.
CYCLE = (BLUE, GREEN, PURPLE, SKY_BLUE, ORANGE, YELLOW)
#: Marker per series, so series differ without colour too.
MARKERS = ("o", "s", "D", "^", "v", "P")

MODEL_COLOUR = VERMILLION
DATA_COLOUR = BLACK
RAW_COLOUR = GREY
BAND_ALPHA = 0.3

RC = {
    "font.family": "sans-serif",
    "font.sans-serif": ["DejaVu Sans"],
    "mathtext.fontset": "dejavusans",
    "font.size": 8,
    "axes.labelsize": 8,
    "axes.titlesize": 8,
    "xtick.labelsize": 7,
    "ytick.labelsize": 7,
    "legend.fontsize": 6.5,
    "legend.frameon": False,
    "axes.linewidth": 0.6,
    "lines.linewidth": 1.0,
    "lines.markersize": 3,
    "errorbar.capsize": 0,
    "xtick.direction": "in",
    "ytick.direction": "in",
    "xtick.top": True,
    "ytick.right": True,
    "xtick.minor.visible": True,
    "ytick.minor.visible": True,
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "xtick.minor.width": 0.4,
    "ytick.minor.width": 0.4,
    "axes.prop_cycle": matplotlib.cycler(color=list(CYCLE)),
    "axes.formatter.useoffset": False,
    "pdf.fonttype": 42,
    "savefig.dpi": PNG_DPI,
}


#: Corner plots: no minor or mirrored ticks (clearer small panels, and half the drawing time).
CORNER_RC = {"xtick.minor.visible": False, "ytick.minor.visible": False, "xtick.top": False, "ytick.right": False}


def style(overrides=None):
    """Context manager applying the planetfit style (drawing and saving inside it)."""
    return matplotlib.rc_context({**RC, **(overrides or {})})


def new_figure(width_in=COLUMN_WIDTH_IN, height_in=None):
    """An empty :class:`Figure` of the given size (height defaults to 3/4 of the width)."""
    height_in = width_in * 0.75 if height_in is None else height_in
    return Figure(figsize=(width_in, height_in), layout="constrained")


def save_figure(fig, folder, name):
    """Write ``name.png`` and ``name.pdf`` into ``folder``, and ``name.svg`` when under :data:`MAX_SVG_BYTES`.

    PDF and SVG metadata carry no date, so a redraw gives the same bytes.
    SVG text is drawn as paths (matplotlib's default), so it needs no fonts.
    Returns the paths written.
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    paths = [folder / f"{name}.png", folder / f"{name}.pdf"]
    svg = io.BytesIO()
    with style():
        fig.savefig(paths[0], dpi=PNG_DPI)
        fig.savefig(paths[1], metadata={"CreationDate": None})
        fig.savefig(svg, format="svg", metadata={"Date": None})
    svg_path = folder / f"{name}.svg"
    if svg.tell() <= MAX_SVG_BYTES:
        svg_path.write_bytes(svg.getvalue())
        paths.append(svg_path)
    else:
        svg_path.unlink(missing_ok=True)  # a redraw must not leave an earlier, smaller drawing behind
    return tuple(paths)
