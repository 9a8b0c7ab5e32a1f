#!/usr/bin/env python3
"""Stribeck-friction reference logs with known truth, for swingfit's tests.

Independent of swingfit's integrators: the pendulum with a Stribeck friction curve

    theta'  = omega
    omega'  = -omega_n^2 sin(theta - theta_eq) - b1 omega - sgn(omega) (b0 + bs exp(-(omega/vs)^2))

is integrated with scipy.integrate.solve_ivp (DOP853, rtol 1e-12, atol 1e-14), one segment per
direction of motion, with a terminal event at omega = 0. There the article sticks for good when
|omega_n^2 sin(theta - theta_eq)| <= b0 + bs (the friction at rest, the static level of the
curve), and otherwise moves on the way gravity pulls. The curve is the exponential (Gaussian)
Stribeck form tau = sgn(v) (tau_c + (tau_s - tau_c) exp(-(v/v_s)^2)) of Armstrong-Helouvry
(1991) [memory], after Stribeck (1902) [memory]; per unit inertia bs = (tau_s - tau_c)/J.

Writes tests/data/stribeck/<case>.json (params, swingfit's params format), <case>.csv
(time_s,angle_rad: truth plus seeded Gaussian noise) and <case>.truth.csv (no noise).
Run from the repository root: python3 tests/reference/make_stribeck.py
"""

import json
import math
import os

import numpy as np
import scipy
from scipy.integrate import solve_ivp

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "data", "stribeck")
RTOL, ATOL = 1e-12, 1e-14


def simulate(p, times):
    wn2 = p["omega_n"] ** 2
    b1, b0 = p.get("viscous", 0.0), p["coulomb"]
    bs, vs = p.get("stribeck", 0.0), p.get("stribeck_velocity", 1.0)
    eq = p.get("equilibrium", 0.0)
    t_end = times[-1]
    th, om = p["initial_angle"], p["initial_velocity"]
    out = np.full(len(times), np.nan)
    t = times[0]
    d = math.copysign(1.0, om)
    while t < t_end:
        def rhs(_t, y, d=d):
            fr = b0 + bs * math.exp(-(y[1] / vs) ** 2)
            return [y[1], -wn2 * math.sin(y[0] - eq) - b1 * y[1] - d * fr]

        def stop(_t, y, d=d):
            return d * y[1]
        stop.terminal, stop.direction = True, -1
        sol = solve_ivp(rhs, (t, t_end), [th, om], method="DOP853", rtol=RTOL, atol=ATOL,
                        dense_output=True, events=[stop])
        t1 = sol.t[-1]
        mask = (times >= t) & (times <= t1)
        out[mask] = sol.sol(times[mask])[0]
        th, om = sol.y[0, -1], 0.0
        if sol.status == 1:
            a_g = -wn2 * math.sin(th - eq)
            if abs(a_g) <= b0 + bs:
                out[times > t1] = th
                break
            d = math.copysign(1.0, a_g)
        t = t1
    return out


CASES = {
    # Friction at rest 0.07 rad/s^2 falling to 0.03 above ~0.1 rad/s: the excess slows the
    # turning points, so the decay per swing grows as the swings shrink (docs/friction.md).
    "stribeck_truth": {
        "params": {"omega_n": 5.0, "viscous": 0.01, "coulomb": 0.03, "stribeck": 0.04,
                   "stribeck_velocity": 0.1, "equilibrium": 0.002, "initial_angle": 0.15,
                   "initial_velocity": 0.05},
        "duration": 30.0, "rate": 200.0, "noise": 2e-5, "seed": 21,
    },
}


def main():
    os.makedirs(OUT, exist_ok=True)
    head = (f"# made by tests/reference/make_stribeck.py (scipy {scipy.__version__}, "
            f"numpy {np.__version__}, DOP853 rtol {RTOL} atol {ATOL})")
    for name, c in CASES.items():
        n = int(round(c["duration"] * c["rate"]))
        times = np.arange(n + 1) / c["rate"]
        theta = simulate(c["params"], times)
        assert np.all(np.isfinite(theta)), name
        noisy = theta + np.random.default_rng(c["seed"]).normal(0.0, c["noise"], len(times))
        with open(os.path.join(OUT, name + ".json"), "w") as f:
            json.dump(c["params"], f, indent=1)
            f.write("\n")
        for suffix, y in ((".truth.csv", theta), (".csv", noisy)):
            with open(os.path.join(OUT, name + suffix), "w") as f:
                f.write(head + f" noise_rad={c['noise'] if suffix == '.csv' else 0} "
                        f"seed={c['seed']}\n")
                f.write("time_s,angle_rad\n")
                for t, v in zip(times, y):
                    f.write(f"{t:.17g},{v:.17g}\n")
        stuck = np.nonzero(np.diff(theta) == 0.0)[0]
        print(name, len(times), "samples; stuck from",
              times[stuck[0]] if len(stuck) else "never")


if __name__ == "__main__":
    main()
