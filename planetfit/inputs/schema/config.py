"""The whole config file, and the checks that need more than one block."""

from typing import Annotated, Optional

from pydantic import BeforeValidator, Field, model_validator

from planetfit.core.names import file_stem

from ..fits import is_fits
from ..priors import LogUniform
from ..timesystems import NEEDS_COORDINATES
from .base import Block
from .datasets import AnyPhotometryBlock, SharedGP, VelocitiesBlock, _OwnGP
from .dynamics import Dynamics
from .fields import fail
from .planets import AnyPlanetBlock, StarBlock
from .settings import Climate, McmcSettings, NoTrend, RvActivity, RvTrend, SamplingBlock

#: Default activity amplitude of each spectrograph when an ``rv_activity`` block is given, m/s.
ACTIVITY_AMPLITUDE_DEFAULT = LogUniform(0.01, 50.0)


def _empty_is_default(value):
    """A key written with no value (``photometry:``) means the default."""
    return [] if value is None else value


def _seed(value):
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value


class ConfigFile(Block):
    """A planetfit config: the star, its planets, the datasets and the settings of the run."""

    system: Optional[str] = None
    seed: Annotated[int, BeforeValidator(_seed), Field(ge=0)] = 0
    output: Optional[str] = None
    star: StarBlock
    planets: Annotated[dict[str, AnyPlanetBlock], Field(min_length=1)]
    photometry: Annotated[list[AnyPhotometryBlock], BeforeValidator(_empty_is_default)] = []
    velocities: Annotated[list[VelocitiesBlock], BeforeValidator(_empty_is_default)] = []
    rv_trend: RvTrend = NoTrend()
    rv_activity: Optional[RvActivity] = None
    climate: Annotated[Climate, BeforeValidator(lambda v: {} if v is None else v)] = Climate()
    sampling: Annotated[SamplingBlock, BeforeValidator(lambda v: {} if v is None else v)] = McmcSettings()
    dynamics: Annotated[Dynamics, BeforeValidator(lambda v: {} if v is None else v)] = Dynamics()

    @model_validator(mode="after")
    def _cross_checks(self):
        for name, planet in self.planets.items():
            planet._name = str(name)
        _check_dataset_names(self)
        _check_shared_gps(self.photometry)
        _check_planet_light(self)
        _check_rv_blocks(self)
        _check_data_present(self)
        for section, items in (("photometry", self.photometry), ("velocities", self.velocities)):
            for i, d in enumerate(items):
                if d.time_system in NEEDS_COORDINATES and (self.star.ra_deg is None or self.star.dec_deg is None):
                    fail(
                        f"{d.time_system} times need the star's sky position to become BJD_TDB.",
                        "add 'ra_deg' and 'dec_deg' (ICRS, degrees) to the 'star' block.",
                        key=f"/{section}[{i}].time_system",
                    )
        for i, d in enumerate(self.photometry):
            files = [d.file] if isinstance(d.file, str) else d.file
            if any(is_fits(f) for f in files):
                for key in ("time_system", "select", "header"):
                    if key in d.model_fields_set:
                        fail(
                            f"'{key}' applies to text tables; FITS light curves carry their columns and time "
                            "system (TIMESYS) in their headers.",
                            f"remove '{key}'.",
                            key=f"/photometry[{i}].{key}",
                        )
        return self


def _check_dataset_names(config):
    seen, stems = set(), {}
    for section, items in (("photometry", config.photometry), ("velocities", config.velocities)):
        for i, d in enumerate(items):
            if d.name in seen:
                fail(
                    f"the dataset name '{d.name}' is used twice.",
                    "give every dataset its own name.",
                    key=f"/{section}[{i}].name",
                )
            if "/" in d.name:  # the group separator of posterior.nc (netCDF) and of file paths
                fail(
                    f"the dataset name '{d.name}' holds '/', which cannot be part of a file or posterior.nc name.",
                    f"write e.g. '{d.name.replace('/', '-')}'.",
                    key=f"/{section}[{i}].name",
                )
            other = stems.setdefault(file_stem(d.name), d.name)
            if other != d.name:
                fail(
                    f"the datasets '{other}' and '{d.name}' would write the same figure files "
                    f"('{file_stem(d.name)}': characters other than letters, digits, '-' and '_' become '_').",
                    "give them names that differ in letters, digits, '-' or '_'.",
                    key=f"/{section}[{i}].name",
                )
            if d.name in config.planets:
                fail(
                    f"'{d.name}' names both a planet and a dataset.",
                    "rename the dataset (e.g. 'camera-1').",
                    key=f"/{section}[{i}].name",
                )
            seen.add(d.name)


def _check_shared_gps(photometry):
    """Each ``gp_shared_with`` names another photometric dataset that has its own GP."""
    owners = {d.name: d for d in photometry if isinstance(d, _OwnGP)}
    for i, d in enumerate(photometry):
        if isinstance(d, SharedGP) and d.gp_shared_with not in owners:
            fail(
                f"'{d.gp_shared_with}' is not another photometric dataset with its own GP.",
                f"name one of: {', '.join(owners) or '(none: give a dataset baseline: gp and its own priors)'}.",
                key=f"/photometry[{i}].gp_shared_with",
            )


def _check_rv_blocks(config):
    """Activity amplitudes come with ``rv_activity``; trend and activity blocks need RVs."""
    for i, d in enumerate(config.velocities):
        if config.rv_activity is None and d.activity_amplitude_ms is not None:
            fail(
                "an activity amplitude needs the shared 'rv_activity' block.",
                "add a top-level 'rv_activity:' block, or remove this key.",
                key=f"/velocities[{i}].activity_amplitude_ms",
            )
        if config.rv_activity is not None and d.activity_amplitude_ms is None:
            d.activity_amplitude_ms = ACTIVITY_AMPLITUDE_DEFAULT
    for block, given in (
        ("rv_trend", not isinstance(config.rv_trend, NoTrend)),
        ("rv_activity", config.rv_activity is not None),
    ):
        if given and not config.velocities:
            fail(
                "this block models radial velocities, and none are given.",
                f"add a 'velocities' dataset or remove '{block}'.",
                key=f"/{block}",
            )


def _check_data_present(config):
    if not config.photometry and not config.velocities:
        fail(
            "the config has no data: neither 'photometry' nor 'velocities' lists a dataset.",
            "add at least one dataset (see README, config reference).",
            key="/photometry",
        )
    for name, p in config.planets.items():
        if p.transits and not config.photometry:
            fail(
                "a transiting planet needs photometry, and none is given.",
                "add a 'photometry' dataset, or set 'transits: false'.",
                key=f"/planets.{name}.transits",
            )
        if not config.velocities and p.rv_amplitude_ms is not None and not p.rv_amplitude_ms.fixed:
            fail(
                "no radial velocities are given to constrain it.",
                "remove 'rv_amplitude_ms' (a transit-only fit needs none: the mass is then not measured) or add a "
                "'velocities' dataset.",
                key=f"/planets.{name}.rv_amplitude_ms",
            )
        if config.velocities and p.rv_amplitude_ms is None:
            fail(
                "the planet has no RV semi-amplitude prior, and radial velocities are given.",
                "add e.g. 'rv_amplitude_ms: {uniform: [0, 50]}' (or 0 to leave the planet out of the RV model).",
                key=f"/planets.{name}.rv_amplitude_ms",
            )


def _check_planet_light(config):
    """Each ``planet_light`` names a transiting planet, once per band, and its band has a wavelength."""
    declared = {}
    for i, d in enumerate(config.photometry):
        for name in d.planet_light:
            key = f"/photometry[{i}].planet_light.{name}"
            planet = config.planets.get(name)
            if planet is None or not planet.transits:
                fail(
                    f"'{name}' is not a transiting planet of the 'planets' block.",
                    f"name one of: {', '.join(n for n, p in config.planets.items() if p.transits) or '(none)'}.",
                    key=key,
                )
            if (d.band_name, name) in declared:
                fail(
                    f"planet '{name}' already has its light declared for band '{d.band_name}' in dataset "
                    f"'{declared[d.band_name, name]}'; datasets of one band share these parameters.",
                    "declare it in one dataset of the band only.",
                    key=key,
                )
            declared[d.band_name, name] = d.name
        if d.planet_light and d.band_wavelength_um is None and d.band_response is None:
            fail(
                "the planet's light needs the band's wavelength for its brightness temperature.",
                "add 'band_response: <band>' with a built-in band (kepler, tess, cheops, spitzer-3.6, spitzer-4.5) "
                "or a table's path (columns wavelength_um, throughput), or 'band_wavelength_um: <microns>' (one "
                "wavelength: too crude for a broad optical band).",
                key=f"/photometry[{i}].band_wavelength_um",
            )
        if d.band_wavelength_um is not None and d.band_response is not None:
            fail(
                "give the band as one wavelength or as a response curve, not both.",
                "remove 'band_wavelength_um' or 'band_response'.",
                key=f"/photometry[{i}].band_response",
            )
