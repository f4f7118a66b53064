"""Interior benchmark: verdict speed, agreement with Zeng et al. (2016) and (2019), Solar-System checks.

Run with ``python benchmarks/interior_speed.py``; prints figures, asserts nothing.
"""

import time

import numpy as np

from planetfit.context.interior import composition, quick_verdict, reference_radius_earth, solve_structure


def classify_speed(n=100_000):
    rng = np.random.default_rng(0)
    mass = rng.normal(4.0, 0.6, n)
    radius = rng.normal(1.6, 0.08, n)
    composition(mass[:100], radius[:100])  # load the grid outside the timing
    start = time.perf_counter()
    result = composition(mass, radius)
    seconds = time.perf_counter() - start
    print(f"composition() on {n:,} samples: {seconds:.3f} s  (p_rocky = {result['p_rocky']:.3f})")
    teq = rng.normal(700.0, 30.0, n)
    start = time.perf_counter()
    warm = composition(mass, radius, teq_k=teq)
    warm_seconds = time.perf_counter() - start
    print(
        f"composition() with per-sample T_eq on {n:,} samples: {warm_seconds:.3f} s "
        f"({warm_seconds / seconds:.2f}x; p_water_rich_consistent = {warm['p_water_rich_consistent']:.3f})"
    )


def water_world_table():
    # source: Zeng et al. 2019, PNAS 116, 9723, 50 % water world at 300 K (authors' table, log-log interpolated)
    zeng = {1.0: 1.241, 4.0: 1.805, 10.0: 2.271, 20.0: 2.664, 30.0: 2.899}
    print("\n50 % water world (Earth-like interior) vs Zeng et al. 2019, 300 K")
    print("  M_E   Zeng    solver  grid    deviation  water-base GPa  CPU s")
    for mass, radius in zeng.items():
        start = time.process_time()
        s = solve_structure(mass, 0.325, 0.5)
        cpu = time.process_time() - start
        grid = float(reference_radius_earth("water_world", mass))
        print(
            f"  {mass:4.1f}  {radius:.3f}  {s.radius_earth:.3f}   {grid:.3f}   {s.radius_earth / radius - 1.0:+.2%}"
            f"     {s.boundary_pressures_gpa['mantle']:7.0f}        {cpu:.2f}"
        )


def zeng_table():
    print("\nsolver vs Zeng, Sasselov & Jacobsen 2016 eq. 10, R = (1.07 - 0.21 CMF) M^(1/3.7)")
    print("  M_E    CMF   ours    Zeng    deviation")
    worst = 0.0
    for mass in (1.0, 2.0, 4.0, 8.0):
        for cmf in (0.0, 0.1, 0.2, 0.3, 0.4):
            ours = solve_structure(mass, cmf).radius_earth
            zeng = (1.07 - 0.21 * cmf) * mass ** (1.0 / 3.7)
            worst = max(worst, abs(ours / zeng - 1.0))
            print(f"  {mass:4.1f}  {cmf:4.2f}  {ours:.4f}  {zeng:.4f}  {ours / zeng - 1.0:+.2%}")
    print(f"  largest |deviation|: {worst:.2%}")


def solar_system():
    print("\nSolar System (2 % mass, 1 % radius uncertainty)")
    earth = solve_structure(1.0, 0.325)
    print(
        f"  Earth-like at 1 M_E: R = {earth.radius_earth:.4f} R_E, core radius "
        f"{earth.boundary_radii_earth['core']:.3f} R_E, P_c = {earth.central_pressure_gpa:.0f} GPa"
    )
    for name, mass, radius in (("Earth", 1.0, 1.0), ("Venus", 0.815, 0.950), ("Mercury", 0.0553, 0.383)):
        r = quick_verdict(mass, 0.02 * mass, radius, 0.01 * radius, seed=1)
        iron = r["iron_fraction"]
        print(
            f"  {name:8s} p_rocky {r['p_rocky']:.3f}  p_denser_than_earth_like "
            f"{r['p_denser_than_earth_like']:.3f}  iron fraction {iron['median']:.3f} "
            f"({iron['lower']:.3f}-{iron['upper']:.3f})  earth_like R "
            f"{reference_radius_earth('earth_like', mass):.4f}"
        )
    print(f"  verdict (Venus): {quick_verdict(0.815, 0.0163, 0.950, 0.0095, seed=1)['verdict']}")


if __name__ == "__main__":
    classify_speed()
    zeng_table()
    water_world_table()
    solar_system()
