"""The iron fraction of a rocky planet made of its star's Fe, Mg and Si, and the planet's own against it."""

from types import SimpleNamespace

import numpy as np
import pytest

from planetfit.context.interior.abundances import (
    iron_fraction_from_abundances,
    planet_iron_fractions,
    star_iron_block,
    star_iron_samples,
)
from planetfit.context.interior.grid import reference_radius_earth
from planetfit.inputs.priors import Normal


def _star(feh=0.0, mgh=0.0, sih=0.0, sd=0.02):
    return SimpleNamespace(feh_dex=Normal(feh, sd), mgh_dex=Normal(mgh, sd), sih_dex=Normal(sih, sd))


def test_the_suns_composition_gives_an_earth_like_iron_fraction():
    # source: solar abundances Asplund et al. (2009, ARA&A 47, 481) Table 1 (value from memory: Fe 7.50, Mg 7.60,
    # Si 7.51); Earth's iron mass fraction about
    # 0.32-0.33 (McDonough 2003, Treatise on Geochemistry 2, 547: bulk Earth 32 wt% Fe; value from memory),
    # the 0.33 the issue names
    assert iron_fraction_from_abundances(0.0, 0.0, 0.0) == pytest.approx(0.332, abs=0.002)
    draws = star_iron_samples(_star(sd=0.0001), np.random.default_rng(1), 20000)
    spread = np.std(draws)  # the model's stated spread: Asplund et al.'s solar uncertainties propagated
    assert 0.01 < spread < 0.05
    assert abs(np.median(draws) - 0.33) < spread


def test_more_iron_in_the_star_makes_a_more_iron_rich_planet():
    # source: the model's stoichiometry (Dorn et al. 2015; Adibekyan et al. 2021): f rises with Fe/(Mg + Si)
    assert iron_fraction_from_abundances(0.2, 0.0, 0.0) > iron_fraction_from_abundances(0.0, 0.0, 0.0)
    assert iron_fraction_from_abundances(0.0, 0.2, 0.2) < iron_fraction_from_abundances(0.0, 0.0, 0.0)
    # scaling every element together leaves the ratios, and f, unchanged
    assert iron_fraction_from_abundances(-0.5, -0.5, -0.5) == pytest.approx(iron_fraction_from_abundances(0, 0, 0))


@pytest.mark.parametrize("curve, above", [("iron", 1.0), ("silicate", 0.0)])
def test_planet_on_a_reference_curve_lies_above_or_below_its_star(curve, above):
    # source: the interior grid's own reference curves (iron fraction 1 and 0); the star's is ~0.33
    rng = np.random.default_rng(2)
    mass = np.full(4000, 2.0)
    radius = reference_radius_earth(curve, mass) * (0.999 if curve == "iron" else 0.9999)
    block = star_iron_block(_star(), mass, radius, rng)
    assert block["p_iron_above_star"] == pytest.approx(above, abs=0.01)
    assert block["p_iron_below_star"] == pytest.approx(1.0 - above, abs=0.01)
    assert 0.28 < block["star_iron_fraction"]["median"] < 0.38


def test_water_rich_samples_have_no_rocky_iron_fraction_and_no_abundances_no_keys():
    radius = reference_radius_earth("water_world", np.array([3.0]))
    assert np.isnan(planet_iron_fractions([3.0], radius)[0])
    star = SimpleNamespace(feh_dex=Normal(0, 0.1), mgh_dex=None, sih_dex=Normal(0, 0.1))
    assert star_iron_block(star, [1.0], [1.0], np.random.default_rng(0)) == {}
