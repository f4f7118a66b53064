"""The model-comparison table of ``planetfit compare``: comparison.json, comparison.md and comparison.tex.

Models are ordered by evidence, the best first. For each: its free
parameters, ln Z with its error, Delta ln Z = ln Z - ln Z_best, the Bayes
factor B = Z_best / Z of the best model over it, the reading of 2 ln B on
the scale of Kass & Raftery (1995, JASA 90, 773, sect. 3.2), and the
largest log-likelihood among its samples.
"""

import json
import math

from planetfit.report.files import write_text_atomic

#: Kass & Raftery (1995) sect. 3.2: (upper limit of 2 ln B, evidence against the model with the smaller Z).
KASS_RAFTERY = ((2.0, "not worth more than a bare mention"), (6.0, "positive"), (10.0, "strong"))
STRONGEST = "very strong"
SCALE = "Kass & Raftery (1995) scale of 2 ln B"
ASSUMPTIONS = (
    "The evidence depends on the priors: widening the prior of a parameter the data constrain lowers ln Z by the "
    "log of the widening. Models compared must fit the same data. Errors are dynesty's statistical ones "
    "(sqrt(H / live points)); they do not include any bias of the sampling method."
)


def reading(ln_b):
    """Kass & Raftery's words for the evidence of the better model when ln B = ``ln_b`` >= 0."""
    for limit, words in KASS_RAFTERY:
        if 2 * ln_b < limit:
            return words
    return STRONGEST


def comparison_rows(entries):
    """Table rows, best evidence first.

    Parameters
    ----------
    entries : list of dict
        Per model: ``model``, ``system``, ``run_dir``, ``free_parameters``, ``ln_evidence``,
        ``ln_evidence_error``, ``max_log_likelihood``, ``converged``.

    Returns
    -------
    list of dict
        The entries with ``delta_ln_evidence``, ``ln_bayes_factor`` (of the best over this one),
        ``bayes_factor`` and ``reading`` added.
    """
    rows = sorted(entries, key=lambda e: -e["ln_evidence"])
    best = rows[0]["ln_evidence"]
    out = []
    for i, row in enumerate(rows):
        ln_b = best - row["ln_evidence"]
        out.append(
            dict(
                row,
                delta_ln_evidence=-ln_b,
                ln_bayes_factor=ln_b,
                bayes_factor=math.exp(ln_b) if ln_b < 700 else math.inf,
                reading="best" if i == 0 else reading(ln_b),
            )
        )
    return out


def comparison_warnings(rows):
    """Sentences for models the evidence errors cannot tell from the best, and for runs not converged."""
    out = []
    best = rows[0]
    for row in rows[1:]:
        combined = math.hypot(best["ln_evidence_error"], row["ln_evidence_error"])
        if row["ln_bayes_factor"] < combined:
            out.append(
                f"{best['model']} and {row['model']} differ by Delta ln Z = {row['ln_bayes_factor']:.2f}, less than "
                f"their combined evidence error {combined:.2f}: the data do not tell them apart at this precision "
                "(more sampling.live_points shrink the errors)."
            )
    out += [
        f"{row['model']}: the nested-sampling run is not converged (see its summary.json); its ln Z is uncertain."
        for row in rows
        if not row["converged"]
    ]
    return out


def _bayes_text(row):
    return "1" if row["ln_bayes_factor"] == 0 else f"{row['bayes_factor']:.3g}"


def comparison_markdown(rows, warnings):
    """comparison.md: the table, the scale it reads, the assumptions and the warnings."""
    out = [
        "# Model comparison",
        "",
        "| model | free parameters | ln Z | Delta ln Z | Bayes factor (best / model) | reading | max ln L |",
        "|---|---|---|---|---|---|---|",
    ]
    out += [
        f"| {r['model']} | {r['free_parameters']} | {r['ln_evidence']:.2f} +- {r['ln_evidence_error']:.2f} | "
        f"{r['delta_ln_evidence']:.2f} | {_bayes_text(r)} | {r['reading']} | {r['max_log_likelihood']:.2f} |"
        for r in rows
    ]
    out += ["", f"Reading: {SCALE}, evidence for the best model over each other.", "", ASSUMPTIONS]
    if warnings:
        out += ["", "Warnings:", ""] + [f"- {w}" for w in warnings]
    return "\n".join(out) + "\n"


def _tex(text):
    return str(text).replace("\\", r"\textbackslash{}").replace("_", r"\_").replace("&", r"\&").replace("%", r"\%")


def comparison_latex(rows):
    """comparison.tex: the table as a LaTeX ``table`` (booktabs rules)."""
    body = [
        f"{_tex(r['model'])} & {r['free_parameters']} & ${r['ln_evidence']:.2f} \\pm {r['ln_evidence_error']:.2f}$ & "
        f"${r['delta_ln_evidence']:.2f}$ & {_tex(_bayes_text(r))} & {_tex(r['reading'])} & "
        f"${r['max_log_likelihood']:.2f}$ \\\\"
        for r in rows
    ]
    return "\n".join(
        [
            r"\begin{table}",
            r"\centering",
            r"\caption{Model comparison by Bayesian evidence (nested sampling). Reading: " + SCALE + ".}",
            r"\begin{tabular}{lrrrrlr}",
            r"\toprule",
            r"Model & $N_\mathrm{free}$ & $\ln Z$ & $\Delta \ln Z$ & $B$ & Reading & $\ln L_\mathrm{max}$ \\",
            r"\midrule",
            *body,
            r"\bottomrule",
            r"\end{tabular}",
            r"\end{table}",
            "",
        ]
    )


def write_comparison(folder, rows, warnings):
    """Write comparison.json, comparison.md and comparison.tex into ``folder``; return their paths."""
    paths = [folder / f"comparison.{ext}" for ext in ("json", "md", "tex")]
    document = {"scale": SCALE, "assumptions": ASSUMPTIONS, "models": rows, "warnings": warnings}
    write_text_atomic(paths[0], json.dumps(document, indent=2, default=str) + "\n")
    write_text_atomic(paths[1], comparison_markdown(rows, warnings))
    write_text_atomic(paths[2], comparison_latex(rows))
    return paths
