"""summary.md: the run's numbers as Markdown tables for people."""


def _fmt(s):
    if s is None:
        return "n/a"
    med, lo, hi = s["median"], s["lower"], s["upper"]
    return f"{med:.6g} +{hi - med:.3g} -{med - lo:.3g}"


def summary_markdown(summary):
    """Markdown text of a summary.json dict."""
    out = [f"# {summary['system']}", "", "## Star", "", "| quantity | value |", "|---|---|"]
    out += [f"| {k} | {_fmt(v)} |" for k, v in summary["star"].items()]
    for name, p in summary["planets"].items():
        out += ["", f"## Planet {name}", "", "| quantity | value |", "|---|---|"]
        out += [f"| {k} | {_fmt(v)} |" for k, v in p.items() if isinstance(v, dict) and "median" in v]
        comp = p.get("composition")
        if comp:
            out += ["", f"Composition: {comp['verdict']}"]
    s = summary["sampling"]
    out += ["", "## Sampling", "", f"{s['walkers']} walkers x {s['steps']} steps, autocorrelation "
            f"{s['autocorr_steps']} steps, {s['independent_samples']} independent samples, acceptance "
            f"{s['acceptance_fraction']}, converged: {s['converged']}, {s['seconds']} s."]
    return "\n".join(out) + "\n"
