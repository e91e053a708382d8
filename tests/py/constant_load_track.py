"""Independent integration of the constant-normal-force track (Nordmark & Essén, Eur. J. Phys. 31
(2010) 1307), to check loopwright's `profile` family.

Usage: python3 tests/py/constant_load_track.py STATIONS.csv N_G V0_M_S TOLERANCE_M

STATIONS.csv has columns pitch_rad,x_m,z_m (heartline, entry at the origin, pitch from 0 to 2π).
For a frictionless track with constant normal load n (in g) the track is the solution of
    dx/dθ = cos θ · v²/(g(n − cos θ)),  dz/dθ = sin θ · v²/(g(n − cos θ)),
    d(v²)/dθ = −2g sin θ · v²/(g(n − cos θ)),
integrated here with scipy.integrate.solve_ivp (DOP853, tight tolerances) from θ = 0 with
v² = v0², x = z = 0. It shares no code with loopwright. Prints the worst position difference and
exits non-zero above the tolerance.
"""
import csv
import sys

import numpy as np
from scipy.integrate import solve_ivp

G = 9.80665  # standard gravity, m/s²


def main():
    rows = list(csv.DictReader(open(sys.argv[1])))
    n, v0, tol = float(sys.argv[2]), float(sys.argv[3]), float(sys.argv[4])
    th = np.array([float(r["pitch_rad"]) for r in rows])
    x = np.array([float(r["x_m"]) for r in rows])
    z = np.array([float(r["z_m"]) for r in rows])

    def rhs(t, y):
        ds = y[2] / (G * (n - np.cos(t)))
        return [np.cos(t) * ds, np.sin(t) * ds, -2 * G * np.sin(t) * ds]

    sol = solve_ivp(rhs, (0, th.max()), [0.0, 0.0, v0 * v0], method="DOP853", rtol=1e-12, atol=1e-12, dense_output=True)
    ref = sol.sol(th)
    worst = float(np.max(np.hypot(ref[0] - x, ref[1] - z)))
    print(f"constant-load track: {len(th)} stations, worst |Δposition| = {worst:.3e} m (tolerance {tol} m)")
    if worst > tol:
        sys.exit(1)


if __name__ == "__main__":
    main()
