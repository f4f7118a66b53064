"""Built-in band responses (``band_response: kepler | tess | cheops | spitzer-3.6 | spitzer-4.5``)."""

from pathlib import Path
from types import SimpleNamespace

import pytest
import yaml

from planetfit import pipeline
from planetfit.context.light import brightness_temp_k
from planetfit.core.errors import InputError
from planetfit.demo import hot_giant
from planetfit.inputs.bands import band_of
from planetfit.inputs.config import load_config
from planetfit.inputs.schema.datasets import BANDS_FOLDER, BUILT_IN_BANDS

INDEPENDENT_IRAC_45 = Path(__file__).parent / "data" / "irac_4.5_svo_fourier.csv"


def _table(path):
    return band_of(SimpleNamespace(band_response=path.name, band_response_path=path, section="photometry[0]"))


# value from memory: Kepler 0.42-0.90 um (Kepler Instrument Handbook), TESS 0.6-1.0 um centred near Cousins I
# (TESS Science Handbook), CHEOPS 0.33-1.1 um (Benz et al. 2021, Exp. Astron. 51, 109), IRAC channels 1 and 2
# at 3.55 and 4.49 um (IRAC Instrument Handbook). The photon-weighted mean wavelength of a flat spectrum lies
# inside each band, near its centre.
EXPECTED_UM = {"kepler": (0.60, 0.70), "tess": (0.78, 0.84), "cheops": (0.60, 0.75)}
EXPECTED_UM |= {"spitzer-3.6": (3.50, 3.62), "spitzer-4.5": (4.44, 4.56)}


@pytest.mark.parametrize("name", BUILT_IN_BANDS)
def test_built_in_band_sits_in_the_missions_band(name):
    band = _table(BANDS_FOLDER / f"{name}.csv")
    lo, hi = EXPECTED_UM[name]
    assert lo < band.effective_wavelength_um < hi
    assert "Built-in band" in (BANDS_FOLDER / f"{name}.csv").read_text().splitlines()[0]  # its source is named


def test_hot_giant_brightness_temperatures_match_an_independent_irac_table(tmp_path):
    # The hot-giant example names 'band_response: spitzer-4.5'. At its injected eclipse depth and nightside flux
    # (the posterior's medians agree with them, tests/end_to_end/test_planet_light_injection.py), the built-in
    # table and an independently processed curve of the same channel (SVO's, through tynt's Fourier terms) give
    # the same brightness temperatures.
    # common practice, no published source: two tabulations of one band agree to a few kelvin.
    hot_giant.write(tmp_path)
    config = yaml.safe_load(hot_giant.CONFIG.read_text())
    assert config["photometry"][0]["band_response"] == "spitzer-4.5"
    (tmp_path / "config.yaml").write_text(yaml.safe_dump(config))
    model = pipeline.check(tmp_path / "config.yaml").log_probability.model
    built_in = model.lights["camera", "b"].response
    independent = _table(INDEPENDENT_IRAC_45)
    truth = hot_giant.TRUTH
    k, teff = truth["b"]["radius_ratio"], truth["star"]["teff_k"]
    for key in ("eclipse_depth_ppm", "nightside_ppm"):
        ours, theirs = (brightness_temp_k(truth["light"][key] * 1e-6, k, teff, b) for b in (built_in, independent))
        assert abs(float(ours) - float(theirs)) < 5.0, (key, ours, theirs)


def test_unknown_band_name_is_refused(tmp_path):
    config = yaml.safe_load(hot_giant.CONFIG.read_text())
    config["photometry"][0]["band_response"] = "spitzer-5.8"
    config["photometry"][0]["file"] = str(hot_giant.FOLDER / "photometry.csv")
    config["velocities"][0]["file"] = str(hot_giant.FOLDER / "rv.txt")
    (tmp_path / "config.yaml").write_text(yaml.safe_dump(config))
    with pytest.raises(InputError, match="not a band planetfit knows") as err:
        load_config(tmp_path / "config.yaml")
    assert "band_response" in str(err.value) and "spitzer-4.5" in str(err.value)
