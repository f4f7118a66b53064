"""Every human-facing output of a run: summary.md, table.tex and figures (PNG + PDF)."""

import logging
import time
from pathlib import Path

from . import tables
from .figures import figure_builders
from .files import write_text_atomic
from .markdown import summary_markdown
from .style import save_figure

log = logging.getLogger("planetfit")


def write_all(run_dir, checked, posterior, samples, derived, summary, figures=True):
    """Write table.tex, summary.md and every figure into ``run_dir`` and ``run_dir/figures``.

    Parameters
    ----------
    run_dir : Path
    checked : pipeline.Checked
    posterior : JointPosterior
    samples : ndarray, shape (n, ndim)
        Flat posterior samples (burn-in discarded, thinned).
    derived : dict
        :func:`planetfit.physics.derive` output after context.
    summary : dict
        summary.json content.
    figures : bool
        Draw the figures (tables are always written).
    """
    run_dir = Path(run_dir)
    priors = {**posterior.layout.priors, **tables.star_priors(checked.config)}
    rows = tables.table_rows(summary, priors)
    write_text_atomic(run_dir / "table.tex", tables.latex_table(summary, rows))
    write_text_atomic(run_dir / "summary.md", summary_markdown(summary, rows))
    if not figures:
        return
    for name, build in figure_builders(run_dir, checked, posterior, samples, derived, summary):
        start = time.perf_counter()
        save_figure(build(), run_dir / "figures", name)
        log.info("figure %s written (%.1f s)", name, time.perf_counter() - start)
