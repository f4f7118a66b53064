"""Writing the built-in band-response tables (``planetfit/data/bands/``) from the packages that carry the curves.

``python -m planetfit.inputs.band_tables`` rewrites them; planetfit itself
only reads the tables (:mod:`planetfit.inputs.bands`), so neither package
is needed to run it. Kepler, TESS and the two warm-Spitzer IRAC channels
are the tabulated curves of pyphot's filter library (pyphot 2.1.1, file
``libs/new_filters.hd5``), on their own wavelength grids. CHEOPS is in no
package we know of as a tabulated curve: its table is tynt's (0.1.2)
reconstruction of the SVO Filter Profile Service curve ``CHEOPS/CHEOPS.band``
from the stored leading Fourier terms, an approximation (see
:data:`CHEOPS_NOTE`).
"""

import sys
from pathlib import Path

import numpy as np

FOLDER = Path(__file__).resolve().parents[1] / "data" / "bands"
#: Built-in band name -> pyphot library name.
PYPHOT_NAMES = {
    "kepler": "KEPLER_Kp",
    "tess": "TESS",
    "spitzer-3.6": "SPITZER_IRAC_36",
    "spitzer-4.5": "SPITZER_IRAC_45",
}
CHEOPS_NOTE = (
    "tynt keeps a few Fourier terms of each SVO curve; for the Kepler and TESS curves the same reconstruction "
    "differs from pyphot's tabulated curve by up to 14 and 24 percent of the peak at a wavelength, moves the "
    "effective wavelength by 0.003-0.005 um and brightness temperatures of 1200-2500 K planets by 6-8 K"
)


def _write(name, wavelength_um, throughput, source):
    """One table: comment lines naming the source, then wavelength_um,throughput (peak scaled to 1)."""
    keep = throughput > 0
    keep[1:] |= keep[:-1]  # a zero on each side of the band
    keep[:-1] |= keep[1:]
    lam, thr = wavelength_um[keep], throughput[keep] / throughput.max()
    lines = [f"# {line}" for line in source] + ["wavelength_um,throughput"]
    lines += [f"{a:.5f},{b:.5f}" for a, b in zip(lam, thr)]
    (FOLDER / f"{name}.csv").write_text("\n".join(lines) + "\n")


def write_tables():
    """Write every built-in band's table into :data:`FOLDER`."""
    from pyphot import get_library
    from tynt import FilterGenerator

    FOLDER.mkdir(parents=True, exist_ok=True)
    library = get_library()
    for name, theirs in PYPHOT_NAMES.items():
        band = library[theirs]
        lam = np.asarray(band.wavelength.to("um").value, dtype=float)
        source = [
            f"Built-in band '{name}': the response curve '{theirs}' of pyphot 2.1.1's filter library",
            "(libs/new_filters.hd5), on its own wavelength grid; throughput scaled to a peak of 1.",
            "Read as a photon-counting response (band flux = integral of lambda x throughput x B_lambda).",
        ]
        _write(name, lam, np.asarray(band.transmit, dtype=float), source)
    cheops = FilterGenerator().reconstruct("CHEOPS/CHEOPS.band")
    source = [
        "Built-in band 'cheops': tynt 0.1.2's reconstruction of the SVO Filter Profile Service curve",
        "'CHEOPS/CHEOPS.band' from its stored Fourier terms; throughput scaled to a peak of 1.",
        f"APPROXIMATE: {CHEOPS_NOTE}.",
    ]
    lam = np.asarray(cheops.wavelength.to("um").value, dtype=float)
    _write("cheops", lam, np.clip(np.asarray(cheops.transmittance, dtype=float), 0.0, None), source)


if __name__ == "__main__":
    write_tables()
    sys.exit(0)
