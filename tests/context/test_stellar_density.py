"""The stellar density check: the posterior's shift from the prior in prior sigma, and its warning."""

from types import SimpleNamespace

import numpy as np
import pytest

from planetfit.context.derived import bulk_density_gcc
from planetfit.context.stellar_density import density_check
from planetfit.core.units import M_SUN_KG, R_SUN_M
from planetfit.inputs.priors import Fixed, Normal


def _case(posterior_scale, transits=True, eccentric=False, n=20000):
    star = SimpleNamespace(mass_msun=Normal(1.0, 0.05), radius_rsun=Normal(1.0, 0.03))
    rng = np.random.default_rng(5)
    rho = bulk_density_gcc(star.mass_msun.sample(rng, n) * M_SUN_KG, star.radius_rsun.sample(rng, n) * R_SUN_M)
    planet = SimpleNamespace(name="b", transits=transits, orbit=SimpleNamespace(eccentric=eccentric))
    derived = {"star": {"density_gcc": rho * posterior_scale}, "prior_only": {"star": set()}}
    return SimpleNamespace(star=star), SimpleNamespace(planets=[planet]), derived


def test_posterior_equal_to_prior_has_no_tension():
    block, warnings = density_check(*_case(1.0), np.random.default_rng(1))
    assert block["density_tension_sigma"] < 0.1
    assert warnings == []


def test_a_denser_posterior_warns_with_causes_and_keys():
    # common practice, no published source: ln rho has sd sqrt(0.05^2 + (3 * 0.03)^2) = 0.103 here, so a factor
    # 1.5 (ln 1.5 = 0.405) is about 3.9 prior sigma
    block, warnings = density_check(*_case(1.5), np.random.default_rng(1))
    assert block["density_tension_sigma"] == pytest.approx(0.405 / 0.103, rel=0.05)
    assert len(warnings) == 1 and "denser" in warnings[0]
    assert "orbit: eccentric" in warnings[0] and "dilution" in warnings[0]


def test_no_transit_no_check():
    block, warnings = density_check(*_case(2.0, transits=False), np.random.default_rng(1))
    assert block["density_tension_sigma"] is None and warnings == []


def test_a_fixed_star_has_no_check_and_no_warning():
    # common practice, no published source: with mass and radius fixed the model's density is fixed too, so the
    # shift in prior sigma is 0 / 0; it once came out as "by nan prior sigma" in a warning
    config, model, derived = _case(1.0)
    config.star = SimpleNamespace(mass_msun=Fixed(1.0), radius_rsun=Fixed(1.0))
    derived["star"]["density_gcc"] = np.full(1000, bulk_density_gcc(M_SUN_KG, R_SUN_M))
    block, warnings = density_check(config, model, derived, np.random.default_rng(1))
    assert block["density_tension_sigma"] is None and warnings == []
