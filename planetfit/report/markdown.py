"""summary.md: the parameter table of table.tex as Markdown, plus the run's context in words."""

from planetfit.inputs.schema import SamplingMethod
from planetfit.report.rounding import number_text, value_text
from planetfit.report.tables import NOTE_TEXT, prior_text, star_note

_HEADER = ["| Parameter | Prior | Value | Unit | summary.json key |", "|---|---|---|---|---|"]


def _row(row):
    prior = prior_text(row.prior) if row.prior is not None else "-"
    value = value_text(row.stat) if row.key else number_text(row.stat["median"])
    key = f"`{row.key}`" if row.key else "(fixed)"
    return f"| {row.label} | {prior} | {value} | {row.quantity.unit_text} | {key} |"


def _table(rows):
    out = []
    for row in rows:
        if row.quantity is None:
            level = "##" if row.heading.endswith("parameters") else "###"
            out += ["", f"{level} {row.heading}"]
            continue
        if out[-1].startswith("#"):
            out += [""] + _HEADER
        out.append(_row(row))
    return out


def _pct(x):
    return "n/a" if x is None else f"{x:.0%}"


def _context(name, planet):
    out = ["", f"### Planet {name}"]
    comp = planet.get("composition")
    if comp:
        out += ["", f"Composition: {comp['verdict']}"]
        if comp.get("star_iron_verdict"):
            out += ["", f"From the star: {comp['star_iron_verdict']}"]
    clim = planet.get("climate")
    if clim:
        out += [
            "",
            f"Habitable zone (Kopparapu et al. 2014): probability {_pct(clim['p_conservative_hz'])} "
            f"inside the conservative limits, {_pct(clim['p_optimistic_hz'])} inside the optimistic ones; "
            f"grey-greenhouse surface temperature {value_text(clim['surface_temp_k'])} K.",
        ]
    atm = planet.get("atmosphere")
    if atm:
        out += [
            "",
            f"Atmosphere: scale height {value_text(atm['scale_height_km'])} km, transmission signal "
            f"{value_text(atm['transmission_signal_ppm'])} ppm, TSM {value_text(atm['tsm'])}, "
            f"ESM {value_text(atm['esm'])} (Kempton et al. 2018).",
        ]
    if "ttv_chi2" in planet:
        out += [
            "",
            f"Transit times: {planet['transit_epochs']} transits, O-C rms {planet['ttv_rms_minutes']:.2f} min; "
            f"linear ephemeris chi2 {planet['ttv_chi2']:.1f} for {planet['ttv_dof']} dof, "
            f"p = {planet['ttv_p_value']:.2g}.",
        ]
    if planet.get("note"):
        out += ["", f"Note: {planet['note']}."]
    return out


def _dynamics(d):
    text = f"Hill stable (Gladman 1993): {_pct(d['p_hill_stable'])}; orbits crossing: {_pct(d['p_orbits_cross'])}"
    if "p_megno_stable" in d:
        text += f"; regular in N-body integrations (MEGNO < {d['megno_stable_below']:g}): {_pct(d['p_megno_stable'])}"
    return ["", "## Dynamics", "", f"{text} of {d['samples']} samples. Assumptions: {d['assumptions']}."]


def sampling_text(s):
    """One sentence of the sampling facts: emcee's walkers and autocorrelation, or nested sampling's evidence."""
    converged = f"converged: {'yes' if s['converged'] else 'NO (see the warnings)'}; {s['seconds']:.0f} s."
    if SamplingMethod.of_facts(s).weighted:
        z = s["ln_evidence"]
        return (
            f"nested sampling (dynesty), {s['live_points']} live points, {s['iterations']} iterations, "
            f"{s['likelihood_calls']} likelihood calls; ln Z = {z['value']:.2f} +- {z['error']:.2f}; evidence left "
            f"in the live points {s['dlogz']:.3f}; {s['effective_samples']} effective samples; " + converged
        )
    return (
        f"{s['walkers']} walkers x {s['steps']} steps; autocorrelation time {s['autocorr_steps']:.1f} steps; "
        f"{s['independent_samples']} independent samples; acceptance fraction {s['acceptance_fraction']:.3f}; "
        + (f"smallest bulk effective sample size {s['min_bulk_ess']}; " if "min_bulk_ess" in s else "")
        + (
            f"R-hat max {s['rhat_max']:.3f} (diagnostic), arviz bulk ESS min {s['ess_bulk_min']}; "
            if "rhat_max" in s
            else ""
        )
        + converged
    )


def summary_markdown(summary, rows):
    """Markdown text of a run.

    Parameters
    ----------
    summary : dict
        summary.json content.
    rows : list of Row
        :func:`planetfit.report.tables.table_rows`, the rows of table.tex.
    """
    out = [f"# {summary['system']}"]
    out += _table(rows)
    out += ["", f"{NOTE_TEXT} {star_note(summary)}".strip(), "", "## Context"]
    for name, planet in summary["planets"].items():
        out += _context(name, planet)
    if summary.get("dynamics"):
        out += _dynamics(summary["dynamics"])
    s = summary["sampling"]
    out += ["", "## Sampling", "", sampling_text(s)]
    if s.get("warnings"):
        out += ["", "Warnings:", ""] + [f"- {w}" for w in s["warnings"]]
    return "\n".join(out) + "\n"
