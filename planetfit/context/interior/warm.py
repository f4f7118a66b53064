"""Water layers at the planet's temperature: when water stays condensed, and how large a warm water world is.

Below the runaway greenhouse limit a water layer can stay liquid or solid and the
cold (300 K) structure model applies. Above it, water cannot stay condensed
(Turbet et al. 2020, A&A 638, A41): it forms a supercritical layer under a steam
atmosphere, and a water world is much larger than a cold one. Its radius then
comes from the mass–radius fits for irradiated ocean planets of Aguichine,
Mousis, Deleuil & Marcq 2021, ApJ 914, 84, valid for irradiation temperatures
of 400–1300 K and, per composition and temperature, over the masses where
their model converged (about 0.86 or 1.1 to 15.7 or 20 Earth masses).
Between the runaway limit and 400 K, above 1300 K, and outside the fits'
masses, only bounds are known: the cold water world is always the smaller
one, and the 400 K relation bounds warmer-than-limit layers below 400 K
from above.
"""

import numpy as np

from planetfit.context.climate import HZ_COEFFICIENTS, equilibrium_temp_k

#: Runaway greenhouse limit as a zero-albedo, full-redistribution equilibrium temperature:
#: Kopparapu et al. 2014, ApJL 787, L29, runaway greenhouse for 1 Earth mass around a
#: Sun-like star, S_eff = 1.107 Earth insolation (about 285 K). Turbet et al. 2020 use this
#: limit for water-rich planets: beyond it water cannot stay liquid or solid.
RUNAWAY_GREENHOUSE_TEQ_K = float(equilibrium_temp_k(HZ_COEFFICIENTS["runaway_greenhouse_1_earth_mass"][0], 0.0))

#: Aguichine et al. (2021): log10 R = a log10 M + exp(-d (log10 M + c)) + b (Earth units) for
#: a 50 % water world; rows per irradiation temperature (K): a, b, d, c, lowest and highest
#: valid mass (Earth masses). Columns as released with the paper's fits (2024 update with the
#: mass range of each fit), transcribed from a public copy of that table.
#: value from memory: Aguichine et al. take the irradiation temperature as the planet's
#: equilibrium temperature; planetfit feeds them its zero-albedo, full-redistribution T_eq.
AGUICHINE_TEMPERATURES_K = np.arange(400.0, 1301.0, 100.0)
AGUICHINE_CORE_FRACTIONS = (0.3, 0.4)  # core / (core + mantle); Earth-like 0.325 is interpolated
_AGUICHINE_50PCT = np.array(
    [
        [  # core fraction 0.3
            [0.202130265229, 0.196448409997, 2.736118616554, 0.858441722849, 0.859007, 19.996351],
            [0.197129819539, 0.206322365933, 2.848591814714, 0.754227114922, 0.859296, 19.997080],
            [0.194928560065, 0.212183872922, 2.859558250679, 0.688285957672, 1.093947, 19.996622],
            [0.190588396587, 0.220979473612, 2.984743040000, 0.613218902361, 1.094262, 19.998672],
            [0.183303747128, 0.233769966363, 3.268170121106, 0.517186233563, 1.094884, 20.000755],
            [0.191795147470, 0.223005534369, 2.830586495021, 0.537242060998, 1.094804, 20.000747],
            [0.188281454168, 0.228819017621, 2.716234622615, 0.545450489619, 1.095231, 20.000628],
            [0.176390485173, 0.247984772369, 2.839683794342, 0.543179046067, 1.094964, 15.700365],
            [0.169293724187, 0.262325119640, 3.138535668908, 0.496801536729, 1.095448, 19.992269],
            [0.167395456684, 0.267836999564, 3.349676880053, 0.453876323620, 1.094905, 19.997429],
        ],
        [  # core fraction 0.4
            [0.201556258234, 0.193053510825, 2.724740539299, 0.864020233287, 0.858701, 19.997296],
            [0.196117127117, 0.203870279714, 2.870281969133, 0.753455081821, 0.859057, 19.986408],
            [0.195064898708, 0.208023779051, 2.831377731257, 0.696225426844, 1.093708, 19.999186],
            [0.189479384840, 0.218298509915, 2.989278514247, 0.616686800755, 1.093956, 19.999481],
            [0.183541890554, 0.229644101700, 3.254923858899, 0.521296983542, 1.094544, 19.999254],
            [0.192058070217, 0.218651454022, 2.814619195072, 0.541216938952, 1.094725, 19.992010],
            [0.187820546291, 0.225608897006, 2.717891025366, 0.547278410357, 1.094864, 19.998325],
            [0.178888740203, 0.240946852187, 2.787353462029, 0.549798861564, 1.095243, 19.998722],
            [0.168439183300, 0.259520923372, 3.144568104312, 0.499162778276, 1.095286, 19.998264],
            [0.166408910037, 0.264934638327, 3.349885680370, 0.457023369532, 1.095346, 19.988553],
        ],
    ]
)
WARM_RELATION = "Aguichine et al. (2021) irradiated-ocean-planet relation"

#: Water-layer states, per sample and for the verdict.
CONDENSED, WARM, BELOW_RELATION, ABOVE_RELATION = "condensed", "warm", "below_relation", "above_relation"


def _log_radius(row, log_mass):
    a, b, d, c = row[..., 0], row[..., 1], row[..., 2], row[..., 3]
    return a * log_mass + np.exp(-d * (log_mass + c)) + b


def warm_water_world_radius_earth(mass_earth, teq_k, iron_fraction=0.325):
    """Radius of a 50 % water world at equilibrium temperature ``teq_k`` (Aguichine et al. 2021).

    The fits' log radius is interpolated linearly in temperature between their
    100 K nodes and in the core fraction between 0.3 and 0.4.

    Parameters
    ----------
    mass_earth, teq_k : array_like
        Broadcast together; T_eq is the zero-albedo, full-redistribution value.
    iron_fraction : float
        Core share of the iron + silicate interior, 0.3 to 0.4.

    Returns
    -------
    ndarray
        Earth radii; NaN outside 400-1300 K or outside the fits' valid masses.
    """
    m, t = np.broadcast_arrays(np.asarray(mass_earth, dtype=float), np.asarray(teq_k, dtype=float))
    lo, hi = AGUICHINE_CORE_FRACTIONS
    w_core = (iron_fraction - lo) / (hi - lo)
    rows = (1.0 - w_core) * _AGUICHINE_50PCT[0] + w_core * _AGUICHINE_50PCT[1]
    low_mass = np.maximum(_AGUICHINE_50PCT[0, :, 4], _AGUICHINE_50PCT[1, :, 4])
    high_mass = np.minimum(_AGUICHINE_50PCT[0, :, 5], _AGUICHINE_50PCT[1, :, 5])
    nodes = AGUICHINE_TEMPERATURES_K
    inside_t = np.isfinite(t) & (t >= nodes[0]) & (t <= nodes[-1])
    k = np.clip(np.searchsorted(nodes, np.where(inside_t, t, nodes[0]), side="right") - 1, 0, len(nodes) - 2)
    w = np.clip((t - nodes[k]) / (nodes[k + 1] - nodes[k]), 0.0, 1.0)
    log_m = np.log10(np.where(m > 0, m, 1.0))
    log_r = (1.0 - w) * _log_radius(rows[k], log_m) + w * _log_radius(rows[k + 1], log_m)
    # every fit with a weight must be valid at this mass
    lowest = np.where(w > 0, np.maximum(low_mass[k], low_mass[k + 1]), low_mass[k])
    highest = np.where(w > 0, np.minimum(high_mass[k], high_mass[k + 1]), high_mass[k])
    lowest, highest = np.where(w == 1, low_mass[k + 1], lowest), np.where(w == 1, high_mass[k + 1], highest)
    ok = inside_t & (m >= lowest) & (m <= highest)
    return np.where(ok, 10.0**log_r, np.nan)


def water_layer_states(teq_k):
    """Per sample: ``condensed`` at or below the runaway greenhouse limit, ``warm`` inside the
    warm relation's 400-1300 K, ``below_relation`` between the limit and 400 K, ``above_relation``
    above 1300 K."""
    t = np.asarray(teq_k, dtype=float)
    lo, hi = AGUICHINE_TEMPERATURES_K[0], AGUICHINE_TEMPERATURES_K[-1]
    return np.select(
        [t <= RUNAWAY_GREENHOUSE_TEQ_K, t < lo, t <= hi], [CONDENSED, BELOW_RELATION, WARM], default=ABOVE_RELATION
    )


def water_world_bounds(mass_earth, cold_radius_earth, teq_k, iron_fraction=0.325):
    """Lower and upper bounds on the radius of a 50 % water world at each sample's temperature.

    Condensed water: both are the cold model's radius. Warm (400-1300 K, inside
    the fits' masses): both are the warm relation's radius. Between the runaway
    limit and 400 K: the cold radius and the 400 K relation's. Otherwise the
    lower bound is the cold radius (or the 1300 K relation's above 1300 K) and
    the upper bound is unknown (infinite).

    Returns
    -------
    lower, upper : ndarray
    """
    m = np.asarray(mass_earth, dtype=float)
    cold = np.asarray(cold_radius_earth, dtype=float)
    t = np.broadcast_to(np.asarray(teq_k, dtype=float), m.shape)
    states = water_layer_states(t)
    lo_t, hi_t = AGUICHINE_TEMPERATURES_K[0], AGUICHINE_TEMPERATURES_K[-1]
    warm = warm_water_world_radius_earth(m, np.clip(t, lo_t, hi_t), iron_fraction)
    has_warm = np.isfinite(warm)
    lower = np.where((states == WARM) & has_warm, warm, cold)
    lower = np.where((states == ABOVE_RELATION) & has_warm, np.maximum(warm, cold), lower)
    upper = np.where(states == CONDENSED, cold, np.inf)
    upper = np.where((states == WARM) & has_warm, warm, upper)
    upper = np.where((states == BELOW_RELATION) & has_warm, np.maximum(warm, cold), upper)
    return lower, upper
