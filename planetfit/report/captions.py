"""What each figure of a run shows, in words, and the order a reader meets them in report.html.

A figure is a :class:`Drawn` record (family, planet, dataset): its file
stem (``transit_b_camera-2min``) is built from them and its caption filled
with them, so nothing is parsed back from file names. A family this module
has no words for keeps its place after the known ones, with a caption that
names its file.
"""

import dataclasses

from planetfit.core.names import file_stem

#: (family, caption template) in reading order; ``{planet}`` and ``{dataset}`` are filled from the record.
FAMILIES = (
    (
        "transit",
        "Transits of planet {planet} in {dataset}, folded on the median ephemeris, with the other planets' "
        "transits, the baseline and any variability model divided out. Faint: every point; dark: binned points "
        "with standard errors; line and band: the model at the median parameters and the 68% band of posterior "
        "draws, integrated over the exposure as in the fit.",
    ),
    (
        "light_curve",
        "{dataset} against time: the data with the variability model added to the transit model, or the transit "
        "model times the baseline's trend in observing conditions (dashed: the removed trend) (top), and the light "
        "curve with them removed (bottom).",
    ),
    (
        "rv_phase",
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
        "corner",
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


_INDEX = {family: k for k, (family, _) in enumerate(FAMILIES)}
#: Figures for diagnosis, shown after every other one (including those this module does not know).
DIAGNOSTIC = ("corner_sampled", "convergence")


@dataclasses.dataclass(frozen=True)
class Drawn:
    """A figure of a run: its family (the start of its file stem), and the planet and dataset it shows, if any."""

    family: str
    planet: str = ""
    dataset: str = ""

    @property
    def stem(self):
        """The file name without extension: ``family[_planet][_dataset]``, names made file-safe."""
        return "_".join([self.family] + [file_stem(n) for n in (self.planet, self.dataset) if n])

    @property
    def caption(self):
        """What the figure shows, in words."""
        if self.family not in _INDEX:
            return f"Figure {self.stem} (see figures/{self.stem}.pdf)."
        return FAMILIES[_INDEX[self.family]][1].format(planet=self.planet, dataset=self.dataset)


def order(figures):
    """:class:`Drawn` figures in reading order: by family as in :data:`FAMILIES`, unknown ones next,
    :data:`DIAGNOSTIC` last."""
    return sorted(figures, key=lambda f: (f.family in DIAGNOSTIC, _INDEX.get(f.family, len(FAMILIES)), f.stem))
