"""Analytic stability of a pair of adjacent planets: Gladman's (1993) Hill criterion and orbit crossing.

Both take arrays (one value per posterior sample) and assume coplanar
orbits; masses are in any one unit (they enter as ratios), semi-major axes
in any one unit.
"""

import numpy as np


def hill_margin(m_star, m_inner, m_outer, a_inner, a_outer, e_inner, e_outer):
    """Gladman's (1993) Hill-stability ratio of two planets; the pair is Hill stable where it exceeds 1.

    Gladman (1993, Icarus 106, 247, eq. 21): two planets of masses m1, m2
    around a star m3 can never exchange order (their orbits can never come
    close) if

        -2 M c^2 h / (G^2 M_*^3) > 1 + 3^(4/3) m1 m2 / (m3^(2/3) (m1 + m2)^(4/3)),

    with M = m1 + m2 + m3, M_* = m1 m2 + m1 m3 + m2 m3, total energy h and
    angular momentum c. For coplanar orbits around the star (astrocentric
    elements, to leading order in the planet masses),
    h = -G m3 (m1 / 2 a1 + m2 / 2 a2) and
    c = sqrt(G m3) (m1 sqrt(a1 (1 - e1^2)) + m2 sqrt(a2 (1 - e2^2))).
    For circular orbits the boundary is the familiar separation of
    2 sqrt(3) mutual Hill radii.

    Returns
    -------
    ndarray
        Left side over right side of the inequality.
    """
    m1, m2, m3 = (np.asarray(x, dtype=float) for x in (m_inner, m_outer, m_star))
    total = m1 + m2 + m3
    pairs = m1 * m2 + m1 * m3 + m2 * m3
    energy = m1 / a_inner + m2 / a_outer  # -2 h / (G m3)
    momentum = m1 * np.sqrt(a_inner * (1 - e_inner**2)) + m2 * np.sqrt(a_outer * (1 - e_outer**2))  # c / sqrt(G m3)
    left = total * m3**2 * energy * momentum**2 / pairs**3
    right = 1 + 3 ** (4 / 3) * m1 * m2 / (m3 ** (2 / 3) * (m1 + m2) ** (4 / 3))
    return left / right


def orbits_cross(a_inner, a_outer, e_inner, e_outer):
    """Whether the inner planet's apoastron reaches the outer one's periastron.

    With coplanar orbits whose apsides can line up (they precess), that is
    when the two orbits can intersect.
    """
    return np.asarray(a_inner) * (1 + np.asarray(e_inner)) >= np.asarray(a_outer) * (1 - np.asarray(e_outer))
