"""Every human-facing output of a run: summary.md, table.tex, figures (PNG + PDF, SVG when small) and report.html."""

import logging
import multiprocessing
import time

from planetfit.report import html, tables
from planetfit.report.figures import figure_builders
from planetfit.report.files import write_text_atomic
from planetfit.report.markdown import summary_markdown
from planetfit.report.style import save_figure

log = logging.getLogger("planetfit")


def write_all(run_dir, checked, log_prob, samples, derived, summary, figures=True, cores=1):
    """Write table.tex, summary.md, every figure (into ``run_dir/figures``) and then report.html.

    Parameters
    ----------
    run_dir : planetfit.rundir.RunDirectory
        The file names of the run.
    checked : pipeline.Checked
    log_prob : LogProbability
    samples : ndarray, shape (n, ndim)
        Flat posterior samples (burn-in discarded, thinned).
    derived : dict
        :func:`planetfit.context.derived.derive` output after context.
    summary : planetfit.report.summary_types.Summary
    figures : bool
        Draw the figures (tables are always written).
    cores : int
        Processes drawing figures (:func:`draw_figures`).
    """
    rows = tables.table_rows(summary, log_prob.model, checked.config.star)
    write_text_atomic(run_dir.table, tables.latex_table(summary, rows))
    write_text_atomic(run_dir.summary_md, summary_markdown(summary, rows))
    drawn = []
    if figures:
        builders = figure_builders(run_dir, checked, log_prob, samples, derived, summary)
        drawn = draw_figures(builders, run_dir.figures, cores)
    html.write_report(run_dir.report, summary, rows, run_dir.figures, drawn)


def draw_figures(builders, folder, cores=1):
    """Draw and save ``(Drawn record, builder)`` figures, shared out among ``cores`` forked processes.

    Each process takes the next undrawn figure until none is left, so the
    longest figure (listed first) runs beside all the others.

    Returns
    -------
    list of planetfit.report.captions.Drawn
        The records of the figures drawn (every one: a failed figure raises).
    """
    context = multiprocessing.get_context("fork")
    taken = context.Value("i", 0)

    def work():
        while True:
            with taken.get_lock():
                k = taken.value
                taken.value += 1
            if k >= len(builders):
                return
            drawn, build = builders[k]
            start = time.perf_counter()
            save_figure(build(), folder, drawn.stem)
            log.info("figure %s written (%.1f s)", drawn.stem, time.perf_counter() - start)

    helpers = [context.Process(target=work, daemon=True) for _ in range(min(cores, len(builders)) - 1)]
    for process in helpers:
        process.start()
    try:
        work()
    finally:
        for process in helpers:
            process.join()
    if any(process.exitcode for process in helpers):
        raise RuntimeError(f"a figure failed in a drawing process; the others are in {folder}")
    return [drawn for drawn, _ in builders]
