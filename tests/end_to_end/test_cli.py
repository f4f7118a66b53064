"""The command line as a user runs it: check on the demo, and the two what-if commands."""

import json
from pathlib import Path

import pytest

from planetfit.cli import main

ROOT = Path(__file__).resolve().parents[2]


def test_check_on_the_demo_config(capsys):
    # common practice, no published source: the shipped demo config and data must stay in step
    assert main(["check", str(ROOT / "configs" / "demo.yaml")]) == 0
    out = capsys.readouterr().out
    assert "config OK" in out and "camera-2min" in out and "spectrograph-b" in out


def test_interior_command_json_contract(capsys):
    # source: NASA planetary fact sheet, Earth: 1 M_earth, 1 R_earth is rocky and close to the Earth-like curve
    assert main(["interior", "--mass", "1.0", "0.02", "--radius", "1.0", "0.01", "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    for key in (
        "p_rocky",
        "p_volatile_rich",
        "p_denser_than_earth_like",
        "iron_fraction",
        "reference_radii_earth",
        "verdict",
    ):
        assert key in result
    assert result["p_rocky"] > 0.9
    assert set(result["reference_radii_earth"]) == {"iron", "earth_like", "silicate", "water_world"}
    assert result["reference_radii_earth"]["earth_like"] == pytest.approx(1.0, abs=0.03)


def test_climate_command_for_the_earth(capsys):
    # source: NASA planetary fact sheet, Earth: Bond albedo 0.306, mean surface temperature 288 K;
    # tau = 0.94 is the trade's effective grey optical depth for Earth
    assert (
        main(
            [
                "climate",
                "--teff",
                "5772",
                "--radius-rsun",
                "1.0",
                "--a-au",
                "1.0",
                "--albedo",
                "0.306",
                "--tau",
                "0.94",
                "--json",
            ]
        )
        == 0
    )
    result = json.loads(capsys.readouterr().out)
    assert result["surface_temp_k"] == pytest.approx(288.0, rel=0.05)
    assert result["p_conservative_hz"] == 1.0


def test_bad_command_line_is_an_input_error(capsys):
    # common practice, no published source: usage mistakes exit 2 without a traceback
    assert main(["interior", "--mass", "-1", "0.1", "--radius", "1", "0.1"]) == 2
    assert "Traceback" not in capsys.readouterr().err


def test_climate_command_default_is_earth_calibrated(capsys):
    # source: NASA Earth fact sheet, mean surface temperature 288 K; the default tau is calibrated to it
    assert main(["climate", "--teff", "5772", "--radius-rsun", "1", "--a-au", "1", "--albedo", "0.3"]) == 0
    out = capsys.readouterr().out
    surface = float(next(line for line in out.splitlines() if "surface_temp_k" in line).split(":")[1])
    assert surface == pytest.approx(288.0, abs=1.0)
    assert "calibrated to Earth's 288 K" in out


def test_interior_command_with_an_equilibrium_temperature(capsys):
    # source: Zeng et al. 2019 (cold 50 % water world of 10 Earth masses: 2.27 Earth radii) and Aguichine et al.
    # 2021 (at 700 K: ~2.62 Earth radii)
    assert main(["interior", "--mass", "10", "1", "--radius", "2.2", "0.05"]) == 0
    cold = capsys.readouterr().out
    assert "gas envelope is required" not in cold and "water-rich interior" in cold
    assert main(["interior", "--mass", "10", "1", "--radius", "2.2", "0.05", "--teq-k", "700"]) == 0
    warm = capsys.readouterr().out
    assert "Aguichine et al. (2021)" in warm and "700 K" in warm and "p_needs_envelope = 0.000" in warm
    assert main(["interior", "--mass", "10", "1", "--radius", "2.2", "0.05", "--teq-k", "-5"]) == 2
