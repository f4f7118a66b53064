"""What each figure of a run shows, in words, and the order a reader meets them in report.html.

Figures are named by their file stems (``transit_b_camera-2min``); a
stem this module does not know keeps its place at the end with a caption
that names its file.
"""

from planetfit.core.names import file_stem

#: (file-stem prefix, caption template) in reading order; ``{planet}`` and ``{dataset}`` are filled from the stem.
FAMILIES = (
    (
        "transit_",
        "Transits of planet {planet} in {dataset}, folded on the median ephemeris, with the other planets' "
        "transits, the baseline and any variability model divided out. Faint: every point; dark: binned points "
        "with standard errors; line and band: the model at the median parameters and the 68% band of posterior "
        "draws, integrated over the exposure as in the fit.",
    ),
    (
        "light_curve_",
        "{dataset} against time: the data with the variability model added to the transit model, or the transit "
        "model times the baseline's trend in observing conditions (dashed: the removed trend) (top), and the light "
        "curve with them removed (bottom).",
    ),
    (
        "rv_phase_",
        "Radial velocities folded on planet {planet}'s period (phase 0 at inferior conjunction, the transit), "
        "with the offsets, the activity model and the other planets removed; error bars include each "
        "spectrograph's median jitter. Bottom: residuals.",
    ),
    (
        "rv_time",
        "All radial velocities against time with the summed model of every planet (and the activity model, "
        "when fitted); bottom: residuals.",
    ),
    (
        "corner_sampled",
        "Every sampled parameter against every other (physical values; 1 and 2 sigma contours), for diagnosis "
        "of correlations and multiple modes.",
    ),
    (
        "corner_",
        "Posterior of planet {planet}'s mass, radius and density with its main fitted parameters (1 and 2 "
        "sigma contours); for a planet seen only in RVs, its minimum mass M sin i with period, semi-amplitude "
        "and eccentricity.",
    ),
    (
        "mass_radius",
        "Mass and radius of the transiting planets (1 and 2 sigma contours) against the interior model's "
        "reference compositions (iron, Earth-like, silicate, water world) and the Solar System's rocky planets "
        "and ice giants.",
    ),
    (
        "habitable_zone",
        "Each planet's insolation and the host's effective temperature (1 and 2 sigma contours) over the "
        "habitable-zone limits of Kopparapu et al. (2014); insolation falls to the right.",
    ),
    (
        "convergence",
        "Top: the largest autocorrelation time estimate against steps, with the stopping rule's line (steps "
        "over sampling.autocorr_factor); below: every walker's trace of the slowest-mixing parameters, the dashed "
        "line marking the end of burn-in.",
    ),
)


def _family(stem):
    return next((k for k, (prefix, _) in enumerate(FAMILIES) if stem.startswith(prefix)), len(FAMILIES))


#: Figures for diagnosis, shown after every other one (including those this module does not know).
DIAGNOSTIC = ("corner_sampled", "convergence")


def order(stems):
    """File stems in reading order: by family as in :data:`FAMILIES`, unknown ones next, :data:`DIAGNOSTIC` last."""
    return sorted(stems, key=lambda s: (s in DIAGNOSTIC, _family(s), s))


def caption(stem, planets):
    """The caption of the figure with file stem ``stem``; ``planets`` are the run's planet names."""
    k = _family(stem)
    if k == len(FAMILIES):
        return f"Figure {stem} (see figures/{stem}.pdf)."
    prefix, text = FAMILIES[k]
    rest = stem[len(prefix) :]
    planet = next((p for p in planets if rest == file_stem(p) or rest.startswith(file_stem(p) + "_")), "")
    dataset = rest[len(file_stem(planet)) + 1 :] if planet and "{dataset}" in text and "{planet}" in text else rest
    return text.format(planet=planet or rest, dataset=dataset)
