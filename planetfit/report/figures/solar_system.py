"""Solar System planets as reference points in the mass–radius and habitable-zone figures.

Masses and equatorial radii in Earth units, semi-major axes in au.
value from memory: NASA Planetary Fact Sheet (D. R. Williams, NSSDCA),
"ratio to Earth" columns and orbital semi-major axes.
"""

#: name -> (mass_earth, radius_earth, semi_major_axis_au)
PLANETS = {
    "Mercury": (0.0553, 0.383, 0.387),
    "Venus": (0.815, 0.949, 0.723),
    "Earth": (1.0, 1.0, 1.0),
    "Mars": (0.107, 0.532, 1.524),
    "Uranus": (14.5, 4.01, 19.19),
    "Neptune": (17.1, 3.88, 30.07),
}
ROCKY = ("Mercury", "Venus", "Earth", "Mars")
ICE_GIANTS = ("Uranus", "Neptune")
