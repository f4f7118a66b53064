"""The ``photometry`` and ``velocities`` dataset blocks.

A photometric dataset is one of eight variants by its baseline and noise:
``baseline: constant``, ``linear``, ``polynomial`` or ``{regressors: [...]}`` (white noise), or ``baseline: gp``
with its own damped-oscillator (``gp_kernel: sho``), Matern-3/2 or quasi-periodic rotation
kernel, or with the kernel of another dataset (``gp_shared_with``).
"""

import math
from pathlib import Path
from typing import Annotated, Literal, Optional, Union

from pydantic import BeforeValidator, Field, PrivateAttr, WithJsonSchema, model_validator

from ..files import MAX_TABLE_MB
from ..priors import Fixed, LogUniform, Uniform
from ..timesystems import TIME_SYSTEMS
from .base import Block, Given, variants
from .fields import (
    Column,
    Count,
    HarmonicFraction,
    NonNegativePrior,
    Number,
    PositiveNumber,
    PriorSpec,
    fail,
    positive_prior,
    prior_within,
)
from .light import PlanetLightBlock

#: Quality factor of a stochastically driven damped oscillator whose power spectrum resembles
#: granulation-type variability (Foreman-Mackey et al. 2017, AJ 154, 220, section 4.1).
SHO_QUALITY_DEFAULT = 1 / math.sqrt(2)
BASELINES = Literal["constant", "linear", "polynomial", "gp"]
GP_KERNELS = Literal["sho", "matern32", "rotation"]
#: The flux of a mission light-curve product: the corrected one (PDCSAP) or the simple-aperture one (SAP).
MISSION_FLUXES = Literal["pdcsap", "sap"]
#: The ``quality_column`` value that turns quality filtering off, also for mission products.
NO_QUALITY = "none"
#: Response tables any light curve may name by ``band_response: <name>`` (planetfit/data/bands/<name>.csv).
BUILT_IN_BANDS = ("kepler", "tess", "cheops", "spitzer-3.6", "spitzer-4.5")
BANDS_FOLDER = Path(__file__).resolve().parents[2] / "data" / "bands"
#: Endings of a response table's file name (a ``band_response`` without one, and no folder, names a band).
TABLE_SUFFIXES = (".csv", ".txt", ".dat", ".tsv", ".ecsv", ".tbl")

NonNegativeJitter = prior_within(0.0, math.inf, "a jitter cannot be negative.", "use a lower bound of 0 or above.")
UnitInterval = prior_within(0.0, 1.0, "Kipping's q1 and q2 live in [0, 1].", "keep the prior inside [0, 1].")


class QuadraticLaw(Block):
    """Quadratic limb darkening, sampled as Kipping's (2013) q1, q2."""


def _law(value):
    if value == "quadratic":
        return QuadraticLaw()
    if isinstance(value, QuadraticLaw):
        return value
    fail(f"'{value}' is not a limb-darkening law planetfit knows.", "use 'limb_darkening: quadratic'.")


LimbDarkeningLaw = Annotated[QuadraticLaw, BeforeValidator(_law), WithJsonSchema({"enum": ["quadratic"]})]


class Columns(Block):
    """Which file column holds each quantity (header names, or 1-based numbers with ``header: false``)."""

    time: Column = "time"
    error: Column = "error"


class PhotometryColumns(Columns):
    flux: Column = "flux"


class VelocityColumns(Columns):
    rv: Column = "rv"


class Dataset(Block):
    """What every dataset has: a name, a table and how to read it."""

    name: str
    file: Union[str, Annotated[list[str], Field(min_length=1)]]
    time_offset_days: Number = 0.0
    time_system: Literal[TIME_SYSTEMS] = "BJD_TDB"
    header: bool = True
    select: Optional[Annotated[dict[Column, Union[str, int, float]], Field(min_length=1)]] = None
    #: Largest file (MB) read without being asked: a bigger table takes several times its size in memory.
    max_file_mb: PositiveNumber = MAX_TABLE_MB
    _files: list = PrivateAttr(default_factory=list)
    _section: str = PrivateAttr("")

    @property
    def files(self):
        """Every file of the dataset, as absolute paths."""
        return self._files

    @property
    def path(self):
        """The (first) file, for messages."""
        return self._files[0]

    @property
    def section(self):
        """The dataset's dotted config key, e.g. ``velocities[0]``."""
        return self._section

    def resolve(self, folder, section):
        """Set the files relative to ``folder`` and the dataset's config key (after validation)."""
        names = [self.file] if isinstance(self.file, str) else self.file
        self._files = [(Path(folder) / n).resolve() for n in names]
        self._section = section

    def columns_used(self):
        """(key, column) of every file column the dataset names."""
        out = [(f"columns.{k}", v) for k, v in self.columns.model_dump().items()]
        return out + [(f"select.{k}", k) for k in (self.select or {})]

    @model_validator(mode="after")
    def _columns_fit_header(self):
        for key, column in self.columns_used():
            by_number = isinstance(column, int) and not isinstance(column, bool)
            if self.header and by_number:
                fail(
                    f"columns are named by the file's header here, got {column}.",
                    "write the header's name, or set 'header: false' to give columns by number (1 = first field).",
                    key=key,
                )
            if not self.header and not (by_number and column >= 1):
                fail(
                    f"with 'header: false' columns are given by number (1 = the first field of a row), got '{column}'.",
                    f"write e.g. '{key.rpartition('.')[2]}: 1', or remove 'header: false' if the "
                    "file has a header line.",
                    key=key,
                )
        return self


#: Most sub-exposures per exposure a config may ask for (8 kB per data point and evaluation).
MAX_SUPERSAMPLE = 1000


class PhotometryBlock(Dataset):
    """A light curve (text table or FITS), its cleaning, limb darkening, baseline level, jitter and dilution."""

    columns: PhotometryColumns = PhotometryColumns()
    exposure_min: Optional[PositiveNumber] = None
    mission_flux: MISSION_FLUXES = "pdcsap"
    supersample: Optional[Count] = None
    band: Optional[str] = None
    limb_darkening: LimbDarkeningLaw = "quadratic"
    limb_darkening_q1: Annotated[PriorSpec, UnitInterval] = Uniform(0, 1)
    limb_darkening_q2: Annotated[PriorSpec, UnitInterval] = Uniform(0, 1)
    flux_level: PriorSpec = Uniform(0.9, 1.1)
    jitter_ppm: Annotated[PriorSpec, NonNegativeJitter] = Fixed(0.0)
    dilution: Annotated[
        PriorSpec,
        prior_within(
            0.0,
            1.0 - 1e-12,
            "the contaminating flux fraction must lie in [0, 1).",
            "give e.g. 0.05, or '{uniform: [0, 0.2]}'.",
        ),
    ] = Fixed(0.0)
    normalise: bool = True
    quality_column: Optional[Column] = None
    quality_keep_bits: list[Annotated[int, Field(ge=1, le=32)]] = []
    clip_sigma: Annotated[Number, Field(ge=0)] = 5.0
    clip_window_days: PositiveNumber = 0.5
    segment_gap_days: PositiveNumber = 0.5
    near_transits_hours: Optional[PositiveNumber] = None
    baseline: BASELINES = "constant"
    planet_light: dict[str, PlanetLightBlock] = {}
    band_wavelength_um: Optional[PositiveNumber] = None
    band_response: Optional[str] = None
    _band_response_path: Optional[Path] = PrivateAttr(None)

    def columns_used(self):
        named = self.named_quality_column
        return super().columns_used() + ([("quality_column", named)] if named is not None else [])

    @property
    def quality_off(self):
        """Whether quality filtering is turned off (``quality_column: none``)."""
        return isinstance(self.quality_column, str) and self.quality_column.lower() == NO_QUALITY

    @property
    def named_quality_column(self):
        """The quality column the config names (None: the mission product's own, or filtering off)."""
        return None if self.quality_off else self.quality_column

    @property
    def simple_aperture(self):
        """Whether a mission product's simple-aperture flux (SAP) is fitted instead of the corrected one."""
        return self.mission_flux == "sap"

    @property
    def regressor_columns(self):
        """File columns the baseline is linear in (none but for ``baseline: {regressors: [...]}``)."""
        return []

    def column_given(self, ours):
        """Whether the config names the file column of ``ours`` (else a mission product's column is used)."""
        return ours in self.columns.model_fields_set

    @model_validator(mode="after")
    def _supersample_fits_in_memory(self):
        """Each model evaluation computes ``supersample`` times per point: 8 bytes each."""
        n = self.supersample or 1
        if n > MAX_SUPERSAMPLE:
            fail(
                f"{n} sub-exposures per exposure take {8 * n / 2**30:.3g} GiB per data point at every model "
                f"evaluation ({8 * n / 2**30 * 1000:.3g} GiB for a thousand points).",
                f"give at most {MAX_SUPERSAMPLE}, or remove 'supersample' to have it chosen for the data's errors.",
                key="supersample",
            )
        return self

    @model_validator(mode="after")
    def _keep_bits_need_a_column(self):
        if self.quality_keep_bits and self.quality_off:
            fail(
                "bits to keep need a quality column, and 'quality_column: none' turns quality filtering off.",
                "remove 'quality_keep_bits', or name the quality column (mission products find their own).",
                key="quality_keep_bits",
            )
        return self

    @model_validator(mode="after")
    def _band_is_known(self):
        name = self.band_response
        if name is None or name.lower() in BUILT_IN_BANDS:
            return self
        if "/" not in name and "\\" not in name and not name.lower().endswith(TABLE_SUFFIXES):
            fail(
                f"'{name}' is not a band planetfit knows, nor a response table's file name.",
                f"use one of the built-in bands ({', '.join(BUILT_IN_BANDS)}), or give a table's path "
                "(columns wavelength_um, throughput).",
                key="band_response",
            )
        return self

    def resolve(self, folder, section):
        super().resolve(folder, section)
        if self.built_in_band is not None:
            self._band_response_path = BANDS_FOLDER / f"{self.built_in_band}.csv"
        elif self.band_response is not None:
            self._band_response_path = (Path(folder) / self.band_response).resolve()

    @property
    def built_in_band(self):
        """The built-in band named by ``band_response`` (lower case), or None for a table of the user's."""
        name = (self.band_response or "").lower()
        return name if name in BUILT_IN_BANDS else None

    @property
    def band_response_path(self):
        """The band-response table, as an absolute path (None without one)."""
        return self._band_response_path

    @property
    def band_name(self):
        """The band whose limb darkening this dataset shares (its own name unless ``band`` is given)."""
        return self.band or self.name


class ConstantBaselineBlock(PhotometryBlock):
    variant = {"baseline": "constant"}


class LinearBaselineBlock(PhotometryBlock):
    variant = {"baseline": "linear"}
    baseline: BASELINES
    slope_per_day: PriorSpec = Uniform(-0.01, 0.01)


class PolynomialBaselineBlock(PhotometryBlock):
    """F0 + sum_k a_k dt^k (k = 1 to ``degree``; dt days from the middle), a_k of prior ``polynomial_coefficient``."""

    variant = {"baseline": "polynomial"}
    baseline: BASELINES
    degree: Annotated[int, Field(ge=1, le=5)]
    polynomial_coefficient: PriorSpec = Uniform(-0.01, 0.01)


class Regressors(Block):
    """Observing conditions the flux level follows linearly (columns of the file), and a polynomial in time.

    Each regressor is standardised (its mean removed, divided by its standard deviation), so a coefficient is
    the relative flux change per standard deviation of the regressor.
    """

    regressors: Annotated[list[Column], Field(min_length=1)]
    time_degree: Annotated[int, Field(ge=0, le=3)] = 0
    coefficient: PriorSpec = Uniform(-0.1, 0.1)


class RegressorBaselineBlock(PhotometryBlock):
    """A ground-based light curve: F0 (1 + sum_j c_j z_j + sum_k p_k dt^k), z_j the standardised regressors."""

    variant = {"baseline": Given("<regressors: [...]>", dict)}
    baseline: Regressors

    def columns_used(self):
        return super().columns_used() + [("baseline.regressors", c) for c in self.baseline.regressors]

    @property
    def regressor_columns(self):
        return list(self.baseline.regressors)

    @model_validator(mode="after")
    def _regressors_are_other_columns(self):
        for column in self.baseline.regressors:
            if column in self.columns.model_dump().values():
                fail(
                    f"'{column}' is already the time, flux or error column.",
                    "name columns of observing conditions (e.g. airmass, fwhm, x, y).",
                    key="baseline.regressors",
                )
        return self


class _OwnGP(PhotometryBlock):
    baseline: BASELINES
    gp_kernel: GP_KERNELS = "sho"
    gp_sigma_ppm: Annotated[PriorSpec, positive_prior("gp_sigma_ppm")] = LogUniform(1.0, 1e5)


class _TimescaleGP(_OwnGP):
    gp_rho_days: Annotated[PriorSpec, positive_prior("gp_rho_days")] = LogUniform(0.1, 50.0)


class OscillatorGP(_TimescaleGP):
    """Variability as a stochastically driven damped oscillator (Foreman-Mackey et al. 2017, eq. 20)."""

    variant = {"baseline": "gp", "gp_kernel": "sho"}
    gp_quality: Annotated[PriorSpec, positive_prior("the quality factor")] = Fixed(SHO_QUALITY_DEFAULT)


class Matern32GP(_TimescaleGP):
    """Variability as a Matern-3/2 process (celerite2's approximation)."""

    variant = {"baseline": "gp", "gp_kernel": "matern32"}
    gp_kernel: GP_KERNELS


class RotationGP(_OwnGP):
    """Spot modulation of a rotating star: oscillators at the rotation period and half of it (celerite2 RotationTerm).

    ``gp_period_days`` has no default: give a prior around the rotation period seen in the light curve.
    """

    variant = {"baseline": "gp", "gp_kernel": "rotation"}
    gp_kernel: GP_KERNELS
    gp_period_days: Annotated[PriorSpec, positive_prior("gp_period_days")]
    gp_quality: Annotated[PriorSpec, positive_prior("the quality factor")] = LogUniform(0.5, 50.0)
    gp_quality_difference: Annotated[PriorSpec, NonNegativePrior] = Fixed(1.0)
    gp_mix: Annotated[PriorSpec, HarmonicFraction] = Fixed(0.5)


class SharedGP(PhotometryBlock):
    """The GP kernel and hyperparameters of another dataset (same star and band); own level and jitter."""

    variant = {"baseline": "gp", "gp_shared_with": Given("<another dataset>")}
    baseline: BASELINES
    gp_shared_with: str


_WHITE_NOISE = (ConstantBaselineBlock, LinearBaselineBlock, PolynomialBaselineBlock, RegressorBaselineBlock)
#: SharedGP before the own kernels: a block giving both ``gp_shared_with`` and ``gp_kernel`` is a shared one.
PHOTOMETRY_VARIANTS = (*_WHITE_NOISE, SharedGP, OscillatorGP, Matern32GP, RotationGP)
AnyPhotometryBlock = variants(*PHOTOMETRY_VARIANTS)


class VelocitiesBlock(Dataset):
    """One spectrograph's RVs: offset, jitter, activity-indicator coefficients and activity amplitude."""

    columns: VelocityColumns = VelocityColumns()
    offset_ms: PriorSpec
    jitter_ms: Annotated[PriorSpec, NonNegativeJitter] = Fixed(0.0)
    decorrelate: dict[Column, PriorSpec] = {}
    activity_amplitude_ms: Optional[Annotated[PriorSpec, positive_prior("the activity amplitude")]] = None

    def columns_used(self):
        return super().columns_used() + [(f"decorrelate.{c}", c) for c in self.decorrelate]

    @model_validator(mode="after")
    def _indicators_are_other_columns(self):
        for column in self.decorrelate:
            if column in self.columns.model_dump().values():
                fail(
                    "this column is already the time, RV or error column.",
                    "name an activity-indicator column of the file (e.g. line width or bisector span).",
                    key=f"decorrelate.{column}",
                )
        return self
