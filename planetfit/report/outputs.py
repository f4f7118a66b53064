"""Every human-facing output of a run: summary.md, table.tex and figures."""

from .files import write_text_atomic
from .markdown import summary_markdown


def write_all(run_dir, checked, posterior, samples, derived, summary):
    """Write summary.md (and, when available, table.tex and figures) into ``run_dir``."""
    write_text_atomic(run_dir / "summary.md", summary_markdown(summary))
