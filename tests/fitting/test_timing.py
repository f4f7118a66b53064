"""Individual transit times as a model part: the trend-free basis, the epochs found in the data, bad settings."""

import numpy as np
import pytest
import yaml

from planetfit.core.errors import InputError
from planetfit.core.units import MINUTES_PER_DAY
from planetfit.fitting.components.timing import IndividualTransitTimes, observed_epochs, trend_free_basis
from planetfit.pipeline import check
from tests.synthetic import write_tiny_system


def test_basis_is_orthonormal_and_free_of_a_line():
    # source: linear algebra: offsets orthogonal to 1 and E leave the least-squares line of the times unchanged
    epochs = np.array([0, 1, 2, 4, 7, 8, 11])
    q = trend_free_basis(epochs)
    assert q.shape == (7, 5)
    np.testing.assert_allclose(q.T @ q, np.eye(5), atol=1e-12)
    np.testing.assert_allclose(q.T @ np.column_stack([np.ones(7), epochs]), 0.0, atol=1e-12)
    times = 100.0 + 3.0 * epochs + q @ np.linspace(-0.01, 0.02, 5)
    np.testing.assert_allclose(np.polyfit(epochs, times, 1), [3.0, 100.0], rtol=1e-12)


def test_point_offsets_follow_each_epoch():
    # common practice, no published source: each point gets the offset of its nearest transit, 0 without one
    timing = IndividualTransitTimes("b", np.array([0, 1, 3]), 0.01)
    values = {timing.parameters[0].name: 0.005}
    offsets = timing.offsets_days(values)
    times = np.array([-0.1, 1.05, 2.0, 3.0, 9.0])
    np.testing.assert_allclose(
        timing.point_offsets_days(values, times, 1.0, 0.0), [offsets[0], offsets[1], 0.0, offsets[2], 0.0]
    )


def test_epochs_need_points_near_the_predicted_transit():
    # common practice, no published source
    times = np.concatenate(
        [np.linspace(-0.05, 0.05, 10), 6 + np.linspace(-0.05, 0.05, 3), 9.1 + np.linspace(0, 0.2, 50)]
    )
    assert list(observed_epochs([times], 3.0, 0.0, 0.06)) == [0]


def _tiny(tmp_path, **planet):
    path = write_tiny_system(tmp_path)
    raw = yaml.safe_load(path.read_text())
    raw["planets"]["b"].update(planet)
    path.write_text(yaml.safe_dump(raw))
    return path


def test_free_times_of_the_tiny_system(tmp_path):
    # common practice, no published source: three observed transits leave one free coordinate, half-width as given
    log_prob = check(_tiny(tmp_path, transit_times="free", transit_time_halfwidth_min=12.0)).log_probability
    timing = log_prob.model.planets[0].timing
    assert list(timing.epochs) == [0, 1, 2]
    assert log_prob.layout.free[-1] == "spec.jitter_ms" and "b.transit_time_mode_1_days" in log_prob.layout.free
    assert timing.parameters[0].prior.bounds == pytest.approx((-12 / MINUTES_PER_DAY, 12 / MINUTES_PER_DAY))


def test_too_few_transits_is_an_input_error(tmp_path):
    path = _tiny(tmp_path, transit_times="free", period_days={"uniform": [5.99, 6.01]})
    with pytest.raises(InputError, match="at least 3") as err:
        check(path)
    assert err.value.key == "planets.b.transit_times"


def test_timing_keys_need_free_times(tmp_path):
    with pytest.raises(InputError, match="transit_times: free"):
        check(_tiny(tmp_path, transit_time_halfwidth_min=10.0))
