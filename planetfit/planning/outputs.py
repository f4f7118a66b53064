"""plan.json, plan.md and plan.png/pdf: the follow-up plan for scripts, for people and as a figure."""

from pathlib import Path

from matplotlib.ticker import NullLocator

from planetfit.report.files import write_text_atomic
from planetfit.report.style import BAND_ALPHA, BLUE, GREY, PAGE_WIDTH_IN, VERMILLION, new_figure, save_figure, style
from planetfit.report.summary import write_summary_json


def write_plan(out_dir, plan):
    """Write plan.json, plan.md and the figure (PNG, PDF, and SVG when small) into ``out_dir``; return their paths."""
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    write_summary_json(out_dir / "plan.json", plan)
    write_text_atomic(out_dir / "plan.md", plan_markdown(plan))
    figures = save_figure(plan_figure(plan), out_dir, "plan")
    return [out_dir / "plan.json", out_dir / "plan.md", *figures]


def _pct(x):
    return "-" if x is None else f"{100 * x:.0f}%"


def _band(s):
    return "-" if s is None else f"{100 * s['median']:.1f}% ({100 * s['lower']:.1f}-{100 * s['upper']:.1f})"


def _planet_markdown(name, p):
    now = p["now"]
    lines = [
        f"## Planet {name}",
        "",
        f"Now: mass precision {_pct(now['mass_precision'])}, p_rocky "
        + ("-" if now["p_rocky"] is None else f"{now['p_rocky']:.2f}" + (" (decisive)" if now["decisive"] else ""))
        + ".",
        "",
        "| new RVs | sigma_M / M, median (16-84%) | sigma_K m/s | p_rocky median (16-84%) | P(decisive) |",
        "|---|---|---|---|---|",
    ]
    for row in p["counts"]:
        k = row["sigma_k_ms"]
        pr = row.get("p_rocky")
        lines.append(
            f"| {row['n_rvs']} | {_band(row['mass_precision'])} | "
            + ("-" if k is None else f"{k['median']:.2f}")
            + " | "
            + ("-" if pr is None else f"{pr['median']:.2f} ({pr['lower']:.2f}-{pr['upper']:.2f})")
            + f" | {_pct(row.get('p_decisive'))} |"
        )
    target, needed = p["target_precision"], p["n_rvs_for_target"]
    lines.append("")
    if p.get("p_decisive_mass_known") is not None:
        lines += [
            f"If the mass were known exactly (the limit of many RVs; the radius as it is), the verdict would be "
            f"decisive with probability {_pct(p['p_decisive_mass_known'])}.",
            "",
        ]
    if needed is None:
        lines.append(
            f"A median mass precision of {_pct(target)} is not reached with up to {p['searched_up_to']} new RVs "
            "in this window (the star's mass uncertainty, the radius or the noise may set a floor)."
        )
    else:
        lines.append(f"New RVs for a median mass precision of {_pct(target)}: **{needed}**.")
    return lines + [""]


def plan_markdown(plan):
    """plan.md: settings, one table per planet, the method's assumptions and every warning."""
    s = plan["settings"]
    lines = [
        f"# Follow-up plan for {plan['system']}",
        "",
        f"Run: `{plan['run']}`. New RVs from one new spectrograph: error {s['rv_error_ms']:g} m/s, jitter "
        f"{s['jitter_ms']:g} m/s, BJD_TDB {s['window_bjd'][0]:.2f} to {s['window_bjd'][1]:.2f}, at most "
        f"{s['per_night']} per night; {s['draws']} parameter sets drawn from the posterior.",
        "",
        "P(decisive): the probability that the expected posterior gives p_rocky > 0.95 or < 0.05. Columns are "
        "medians and 16th-84th percentiles over the parameter sets drawn from the posterior (each taken as the truth).",
        "",
    ]
    for name, p in plan["planets"].items():
        lines += _planet_markdown(name, p)
    lines += ["## Assumptions and limits", ""] + [f"- {a}" for a in plan["assumptions"]]
    if plan["warnings"]:
        lines += ["", "## Warnings", ""] + [f"- {w}" for w in plan["warnings"]]
    return "\n".join(lines) + "\n"


def _precision_panel(ax, name, p, colour):
    rows = p["counts"]
    n = [r["n_rvs"] for r in rows]
    med = [100 * r["mass_precision"]["median"] for r in rows]
    lo = [100 * r["mass_precision"]["lower"] for r in rows]
    hi = [100 * r["mass_precision"]["upper"] for r in rows]
    ax.fill_between(n, lo, hi, color=colour, alpha=BAND_ALPHA, lw=0)
    label = f"{name} (M sin i)" if p["mass_is_minimum"] else name
    ax.plot(n, med, "o-", color=colour, label=f"{label}: median, 16-84% band")
    if p["now"]["mass_precision"] is not None:
        now = 100 * p["now"]["mass_precision"]
        ax.axhline(now, color=colour, ls=":", lw=0.8, label=f"{name}: now ({now:.0f}%)")
        hi = hi + [now]
    ax.set_ylim(0, max(ax.get_ylim()[1], 1.08 * max(hi)))


def plan_figure(plan):
    """Mass precision (left) and the probability of a decisive verdict (right) against the number of new RVs."""
    with style():
        fig = new_figure(PAGE_WIDTH_IN, 3.4)
        left, right = fig.subplots(1, 2)
        colours = (BLUE, VERMILLION, GREY)
        for (name, p), colour in zip(plan["planets"].items(), colours * 4):
            _precision_panel(left, name, p, colour)
            if p["transits"]:
                rows = p["counts"]
                n = [r["n_rvs"] for r in rows]
                right.plot(
                    n, [r["p_decisive"] for r in rows], "o-", color=colour, label=f"{name}: p_rocky > 0.95 or < 0.05"
                )
                if p.get("p_decisive_mass_known") is not None:
                    right.axhline(
                        p["p_decisive_mass_known"], color=colour, ls="-.", lw=0.7, label=f"{name}: mass known exactly"
                    )
                for key, marker, text in (("rocky", "^--", "> 0.95"), ("volatile", "v:", "< 0.05")):
                    right.plot(
                        n,
                        [r[f"p_decisive_{key}"] for r in rows],
                        marker,
                        color=colour,
                        lw=0.7,
                        label=f"{name}: p_rocky {text}",
                    )
        target = next(iter(plan["planets"].values()))["target_precision"]
        left.axhline(100 * target, color="black", lw=0.6, ls="--", label=f"target {100 * target:.0f}%")
        left.set_ylim(0, 1.1 * max(left.get_ylim()[1], 100 * target))
        if not right.lines:
            right.text(0.5, 0.5, "no transiting planet:\nno composition verdict", ha="center", va="center")
        for ax in (left, right):
            ax.set_xscale("log")
            ax.set_xlabel("new RVs")
            if ax.lines:
                ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.2), ncols=2)
        left.set_ylabel(r"expected $\sigma_M / M$ (%)")
        right.set_ylabel("probability of a decisive verdict")
        right.set_ylim(-0.02, 1.02)
        counts = [r["n_rvs"] for r in next(iter(plan["planets"].values()))["counts"]]
        for ax in (left, right):
            ax.set_xticks(counts, [str(c) for c in counts])
            ax.xaxis.set_minor_locator(NullLocator())
        fig.suptitle(f"{plan['system']}: RV follow-up plan ({plan['settings']['rv_error_ms']:g} m/s per RV)")
    return fig


def assumptions(mass_source, noise_text):
    """The plan's assumptions and limits, as sentences for plan.json and plan.md."""
    return [
        f"Masses before the new RVs: {mass_source}.",
        f"Noise of the new RVs: {noise_text}.",
        "Fisher-information approximation: the expected posterior is Gaussian around each drawn parameter set "
        "(the run's posterior covariance inverted, plus the new RVs' information); strongly non-Gaussian "
        "posteriors (a semi-amplitude near zero, several modes) make it approximate.",
        "The new RVs come from one new spectrograph with its own zero point (a free offset); no activity-indicator "
        "terms; the jitter is taken as known.",
        "Scheduling: random nights of the window, at most the given number per night, spread over an "
        "8-hour night; no weather, moon, airmass or visibility constraints.",
        "p_rocky is the interior model's verdict (planetfit.context.interior): the run's own samples weighted by "
        "the simulated RVs' likelihood while enough of them keep weight (effective sample size >= 200; the share "
        "of draws is 'verdict_reweighted_fraction'), else Gaussian (mass, radius) samples of the expected "
        "posterior; the interior model's own assumptions (cold, differentiated, no atmosphere) apply.",
    ]
