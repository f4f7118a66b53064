"""A photometric band for brightness temperatures: one wavelength, or a response curve read from a table.

A band is wavelengths (microns) with photon-counting weights: a response
table's throughput times wavelength (a detector counts photons, so the
band flux is the integral of lambda x throughput x B_lambda, trapezoid
rule); one wavelength has the weight 1.
"""

import dataclasses

import numpy as np

from planetfit.core.errors import InputError
from planetfit.inputs.tables import read_table


@dataclasses.dataclass(frozen=True)
class Band:
    """Wavelengths (microns) and their weights in the band flux."""

    wavelength_um: np.ndarray
    weight: np.ndarray

    @property
    def effective_wavelength_um(self):
        """Weighted mean wavelength."""
        return float(np.sum(self.weight * self.wavelength_um) / np.sum(self.weight))


def band_of(block):
    """The band of a photometry block: from ``band_response`` if given, else ``band_wavelength_um``."""
    if block.band_response is None:
        return Band(np.array([block.band_wavelength_um]), np.array([1.0]))
    path, key = block.band_response_path, f"{block.section}.band_response"
    if not path.is_file():
        raise InputError(
            "band response file not found.",
            file=path,
            key=key,
            fix="check the 'band_response' path; relative paths are relative to the config file.",
        )
    table = read_table(path, {"wavelength_um": "wavelength_um", "throughput": "throughput"}, key_prefix="")
    lam, thr = (np.asarray(table.columns[k], dtype=float) for k in ("wavelength_um", "throughput"))
    ok = np.isfinite(lam) & np.isfinite(thr)
    lam, thr = lam[ok], thr[ok]
    order = np.argsort(lam)
    lam, thr = lam[order], thr[order]
    if lam.size < 2 or np.any(lam <= 0) or np.any(thr < 0) or not np.any(thr > 0) or np.any(np.diff(lam) <= 0):
        raise InputError(
            "a band response needs at least two distinct positive wavelengths and non-negative throughputs, "
            "not all zero.",
            file=path,
            key=key,
            fix="give columns 'wavelength_um' and 'throughput' (one row per wavelength).",
        )
    trapezoid = np.gradient(lam)  # (lambda[i+1] - lambda[i-1]) / 2 inside
    trapezoid[[0, -1]] = 0.5 * np.diff(lam)[[0, -1]]
    return Band(lam, thr * lam * trapezoid)
