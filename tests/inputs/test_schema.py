"""The declared config schema: its JSON Schema for editors, its variants, and the messages of its checks."""

import json

import jsonschema
import pytest
import yaml
from synthetic import write_tiny_system

from planetfit.cli import main
from planetfit.core.errors import InputError
from planetfit.inputs.config import load_config
from planetfit.inputs.schema import Climate
from planetfit.inputs.schema.settings import EARTH_CALIBRATED_TAU

DEMO = "configs/demo.yaml"


@pytest.fixture(scope="module")
def schema(tmp_path_factory):
    """What ``planetfit schema`` prints, parsed."""
    import contextlib
    import io

    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        assert main(["schema"]) == 0
    return json.loads(out.getvalue())


def test_json_schema_accepts_the_demo_and_rejects_an_unknown_key(schema, request):
    # source: the jsonschema package, the reference validator of JSON Schema
    config = yaml.safe_load((request.config.rootpath / DEMO).read_text())
    jsonschema.validate(config, schema)
    config["planets"]["b"]["perod_days"] = config["planets"]["b"].pop("period_days")
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(config, schema)


def test_json_schema_tells_the_variants_apart(schema):
    # An eccentric RV-only planet fits exactly one planet variant; sqrt_e keys on a circular orbit fit none.
    planet = {
        "transits": False,
        "orbit": "eccentric",
        "period_days": 3.0,
        "transit_bjd": 2460000.0,
        "rv_amplitude_ms": {"uniform": [0, 10]},
    }
    validator = jsonschema.Draft202012Validator(schema)
    planet_schema = schema["properties"]["planets"]["additionalProperties"]
    assert validator.evolve(schema=planet_schema | {"$defs": schema["$defs"]}).is_valid(planet)
    circular = dict(planet, orbit="circular", sqrt_e_cos_w=0.1)
    assert not validator.evolve(schema=planet_schema | {"$defs": schema["$defs"]}).is_valid(circular)


def _with_climate(tmp_path, climate):
    path = write_tiny_system(tmp_path)
    raw = yaml.safe_load(path.read_text())
    raw["climate"] = climate
    path.write_text(yaml.safe_dump(raw))
    return path


@pytest.mark.parametrize(
    "climate, key",
    [
        ({"albedo": 1.2}, "climate.albedo"),
        ({"tau": [3.0, 1.0]}, "climate.tau"),
        ({"tau": -1.0}, "climate.tau"),
        ({"redistribution": "nightside"}, "climate.redistribution"),
        ({"redistribution": 0.9}, "climate.redistribution"),
        ({"mean_molecular_weight": "helium"}, "climate.mean_molecular_weight"),
        ({"albdeo": 0.3}, "climate.albdeo"),
    ],
)
def test_climate_settings_are_checked_with_the_config(tmp_path, climate, key):
    # common practice, no published source: every bad setting names its key and line, before any data is read
    with pytest.raises(InputError) as err:
        load_config(_with_climate(tmp_path, climate))
    assert err.value.key.startswith(key) and err.value.line and err.value.fix


def test_climate_words_become_numbers():
    # source: Cowan & Agol (2011, ApJ 729, 54): f = 1/4 for full redistribution, 1/2 for the dayside alone
    assert Climate(redistribution="full").redistribution_factor == 0.25
    assert Climate(redistribution="dayside").redistribution_factor == 0.5
    assert Climate(redistribution=0.4).redistribution_factor == 0.4
    # value from memory: mean molecular weights of N2 (28.0) and H2O (18.0), and of a solar H2/He mix (2.3)
    assert (Climate(mean_molecular_weight="n2").mu, Climate(mean_molecular_weight="water").mu) == (28.0, 18.0)
    # the default tau is calibrated to Earth's 288 K (0.850, see tests/context/test_climate.py)
    assert Climate(tau=[0.5, 2.0]).tau_range == (0.5, 2.0)
    assert Climate().tau_range == (EARTH_CALIBRATED_TAU, EARTH_CALIBRATED_TAU)


def test_defaults_and_variants_of_a_loaded_config(tmp_path):
    path = write_tiny_system(tmp_path, rv_trend="quadratic")
    config = load_config(path)
    (photometry,) = config.photometry
    assert photometry.band_name == "cam" and photometry.baseline == "constant"
    assert photometry.limb_darkening_q1.describe() == "U(0, 1)"
    assert type(config.rv_trend).__name__ == "QuadraticTrendBlock" and config.rv_trend.curvature_ms_per_day2.lo == -0.01
    assert config.planets[0].name == "b" and config.velocities[0].path == (tmp_path / "rv.txt").resolve()
    assert config.line("planets.b.period_days") > config.line("planets")
