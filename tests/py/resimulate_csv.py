"""Independent re-simulation of a loopwright loads table (CSV) from its own heartline x/z columns.

Usage: python3 tests/py/resimulate_csv.py LOADS.csv REPORT.json [TOLERANCE_G]

It shares no code with loopwright. From the x, z columns alone it rebuilds the path with scipy
(PyPI): arc length from chord lengths, pitch θ from a cubic spline of the points, curvature as dθ/ds,
then integrates the energy equation with losses,
    d(v²)/ds = −2g·sinθ − 2μ·g·|n| − (ρ·CdA/m)·v²,   n = v²κ/g + cosθ,
with scipy.integrate.solve_ivp (RK45, tight tolerances), and compares n with the table's normal_g.
Rows at a curvature step (two rows with the same s) are split into separate smooth pieces, as a
spline through a kink would smear it. Exits non-zero if any row differs by more than the tolerance.
"""
import csv
import json
import sys

import numpy as np
from scipy.integrate import solve_ivp
from scipy.interpolate import CubicSpline

G = 9.80665  # standard gravity, m/s²


def main():
    rows = list(csv.DictReader(open(sys.argv[1])))
    report = json.load(open(sys.argv[2]))
    tol = float(sys.argv[3]) if len(sys.argv) > 3 else 0.05
    brief = report["brief"]
    mu = brief["rolling_resistance"]
    k = brief["air_density_kg_m3"] * brief["drag_area_m2"] / brief["mass_kg"]
    x = np.array([float(r["x_m"]) for r in rows])
    z = np.array([float(r["z_m"]) for r in rows])
    n_table = np.array([float(r["normal_g"]) for r in rows])
    v_table = np.array([float(r["speed_m_s"]) for r in rows])
    # Split into smooth pieces at repeated points (curvature steps).
    d = np.hypot(np.diff(x), np.diff(z))
    cuts = [0] + [i + 1 for i in np.nonzero(d < 1e-9)[0]] + [len(x)]
    v2 = v_table[0] ** 2
    worst = 0.0
    for a, b in zip(cuts[:-1], cuts[1:]):
        px, pz = x[a:b], z[a:b]
        s = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(px), np.diff(pz)))])
        sx, sz = CubicSpline(s, px), CubicSpline(s, pz)
        theta = lambda t: np.unwrap(np.atleast_1d(np.arctan2(sz(t, 1), sx(t, 1))))
        def kappa(t):
            dx, dz, ddx, ddz = sx(t, 1), sz(t, 1), sx(t, 2), sz(t, 2)
            return (dx * ddz - dz * ddx) / (dx * dx + dz * dz) ** 1.5

        def rhs(t, u):
            th = np.arctan2(sz(t, 1), sx(t, 1))
            n = u[0] * kappa(t) / G + np.cos(th)
            return [-2 * G * np.sin(th) - 2 * mu * G * abs(n) - k * u[0]]

        sol = solve_ivp(rhs, (0, s[-1]), [v2], t_eval=s, rtol=1e-10, atol=1e-10, method="RK45")
        u = sol.y[0]
        n = u * kappa(s) / G + np.cos(theta(s))
        err = np.abs(n - n_table[a:b])
        worst = max(worst, float(err.max()))
        v2 = u[-1]
    print(f"independent re-simulation: {len(rows)} rows, worst |Δnormal_g| = {worst:.5f} g (tolerance {tol} g)")
    if worst > tol:
        sys.exit(1)


if __name__ == "__main__":
    main()
