"""Mass–radius grid of cold (300 K) three-layer planets, and the named reference curves.

The shipped file ``planetfit/data/interior_grid.npz`` holds the radius (Earth
radii) computed by :func:`planetfit.context.interior.structure.solve_structure` on

* mass 0.01–30 Earth masses, 40 log-spaced values;
* iron fraction (iron core / iron + silicate interior) 0–1 in steps of 0.05,
  plus 0.325 (Earth-like);
* water mass fraction 0–0.5 in steps of 0.05.

Regenerate it (about 20 CPU minutes, i.e. 10 minutes on 2 idle cores) with::

    python -m planetfit.context.interior.grid [--processes N]

Between grid masses the radius is interpolated linearly in log mass and log
radius; outside the mass range nothing is extrapolated (NaN).
"""

import argparse
import functools
import multiprocessing
import time
from pathlib import Path

import numpy as np

from planetfit.context.interior.structure import solve_structure

GRID_PATH = Path(__file__).resolve().parents[2] / "data" / "interior_grid.npz"

EARTH_LIKE_IRON_FRACTION = 0.325  # source: Earth's core mass fraction, as in the issue brief

GRID_MASS_EARTH = np.geomspace(0.01, 30.0, 40)
GRID_IRON_FRACTION = np.unique(np.round(np.r_[np.linspace(0.0, 1.0, 21), EARTH_LIKE_IRON_FRACTION], 6))
GRID_WATER_FRACTION = np.round(np.linspace(0.0, 0.5, 11), 6)

# name -> (iron fraction of the interior, water mass fraction); all lie on grid nodes.
REFERENCE_CURVES = {
    "iron": (1.0, 0.0),
    "earth_like": (EARTH_LIKE_IRON_FRACTION, 0.0),
    "silicate": (0.0, 0.0),
    "water_world": (EARTH_LIKE_IRON_FRACTION, 0.5),
}


class MassRadiusGrid:
    """Radius on a (mass, iron fraction, water fraction) grid.

    Parameters
    ----------
    mass_earth, iron_fraction, water_fraction : ndarray
        Grid axes (mass increasing, log-spaced).
    radius_earth : ndarray
        Radii, shape (n_mass, n_iron, n_water).
    """

    def __init__(self, mass_earth, iron_fraction, water_fraction, radius_earth):
        self.mass_earth = np.asarray(mass_earth, dtype=float)
        self.iron_fraction = np.asarray(iron_fraction, dtype=float)
        self.water_fraction = np.asarray(water_fraction, dtype=float)
        self.radius_earth = np.asarray(radius_earth, dtype=float)
        self._log_mass = np.log(self.mass_earth)
        self._log_radius = np.log(self.radius_earth)

    @property
    def mass_range_earth(self):
        """(lowest, highest) grid mass."""
        return float(self.mass_earth[0]), float(self.mass_earth[-1])

    def inside(self, mass_earth):
        """True where ``mass_earth`` lies within the grid's mass range."""
        m = np.asarray(mass_earth, dtype=float)
        lo, hi = self.mass_range_earth
        return np.isfinite(m) & (m >= lo) & (m <= hi)

    def radius_at_mass(self, mass_earth, iron_index=slice(None), water_index=slice(None)):
        """Radii at each mass for the selected composition nodes.

        Parameters
        ----------
        mass_earth : array_like
            Masses, shape (n,).
        iron_index, water_index : int or slice
            Composition nodes to return.

        Returns
        -------
        ndarray
            Shape (n, ...) with the selected node axes appended; NaN where
            the mass is outside the grid.
        """
        m = np.atleast_1d(np.asarray(mass_earth, dtype=float))
        ok = self.inside(m)
        x = np.log(np.where(ok, m, self.mass_earth[0]))
        i = np.clip(np.searchsorted(self._log_mass, x) - 1, 0, len(self._log_mass) - 2)
        t = (x - self._log_mass[i]) / (self._log_mass[i + 1] - self._log_mass[i])
        table = self._log_radius[:, iron_index, water_index]
        shape = (-1,) + (1,) * (table.ndim - 1)
        log_r = table[i] * (1.0 - t).reshape(shape) + table[i + 1] * t.reshape(shape)
        r = np.exp(log_r)
        r[~ok] = np.nan
        return r

    def node_index(self, iron_fraction, water_fraction):
        """Indices of the grid nodes equal to the given fractions."""
        i = int(np.flatnonzero(np.isclose(self.iron_fraction, iron_fraction))[0])
        j = int(np.flatnonzero(np.isclose(self.water_fraction, water_fraction))[0])
        return i, j


def _radius(point):
    return solve_structure(*point).radius_earth


def compute_grid(mass_earth, iron_fraction, water_fraction, processes=1):
    """Solve the structure at every grid point.

    Returns
    -------
    ndarray
        Radii in Earth radii, shape (len(mass), len(iron), len(water)).
    """
    points = [(float(m), float(f), float(w)) for m in mass_earth for f in iron_fraction for w in water_fraction]
    if processes > 1:
        with multiprocessing.Pool(processes) as pool:
            radii = pool.map(_radius, points, chunksize=16)
    else:
        radii = [_radius(p) for p in points]
    return np.reshape(radii, (len(mass_earth), len(iron_fraction), len(water_fraction)))


@functools.lru_cache(maxsize=1)
def load_grid():
    """The shipped :class:`MassRadiusGrid` (read once)."""
    with np.load(GRID_PATH) as data:
        return MassRadiusGrid(data["mass_earth"], data["iron_fraction"], data["water_fraction"], data["radius_earth"])


def reference_radius_earth(curve_name, mass_earth):
    """Radius of a named reference curve at the given masses (NaN off the grid).

    Parameters
    ----------
    curve_name : {"iron", "earth_like", "silicate", "water_world"}
    mass_earth : array_like

    Returns
    -------
    ndarray
        Same shape as ``mass_earth``.
    """
    if curve_name not in REFERENCE_CURVES:
        raise KeyError(f"unknown reference curve {curve_name!r}; choose one of {', '.join(REFERENCE_CURVES)}")
    grid = load_grid()
    i, j = grid.node_index(*REFERENCE_CURVES[curve_name])
    m = np.asarray(mass_earth, dtype=float)
    return grid.radius_at_mass(m.ravel(), i, j).reshape(m.shape)


def reference_curve(curve_name, n=200):
    """``(mass_earth, radius_earth)`` of a named curve over the grid's mass range, for plots."""
    mass = np.geomspace(*load_grid().mass_range_earth, n)
    return mass, reference_radius_earth(curve_name, mass)


def main(argv=None):
    """Regenerate the shipped grid file."""
    parser = argparse.ArgumentParser(description="Regenerate planetfit's mass-radius grid.")
    parser.add_argument("--processes", type=int, default=2)
    parser.add_argument("--out", type=Path, default=GRID_PATH)
    args = parser.parse_args(argv)
    start = time.perf_counter()
    radius = compute_grid(GRID_MASS_EARTH, GRID_IRON_FRACTION, GRID_WATER_FRACTION, args.processes)
    args.out.parent.mkdir(parents=True, exist_ok=True)
    np.savez_compressed(
        args.out,
        mass_earth=GRID_MASS_EARTH,
        iron_fraction=GRID_IRON_FRACTION,
        water_fraction=GRID_WATER_FRACTION,
        radius_earth=radius,
    )
    print(f"wrote {args.out} ({radius.size} models, {time.perf_counter() - start:.0f} s)")


if __name__ == "__main__":
    main()
