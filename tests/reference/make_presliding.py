#!/usr/bin/env python3
"""Pre-sliding (elastoplastic spring-slider) reference logs with known truth, for swingfit's tests.

Independent of swingfit's closed form: the friction F is integrated here as a third state,

    theta'  = omega
    omega'  = -omega_n^2 sin(theta - theta_eq) - b1 omega - F
    F'      = sigma * omega      while the spring holds (|F| < b0, or F opposes the motion)
    F'      = 0, F = b0 sgn omega while sliding

with scipy.integrate.solve_ivp (DOP853, rtol 1e-12, atol 1e-14), one segment per mode, terminal
events at omega = 0 (reversal: back to the spring mode) and at F = dir*b0 (spring saturates:
sliding mode). Released moving, the friction starts saturated at F = b0 sgn omega0.
(Dahl 1968 [memory], i = 0; elastoplastic element of Dupont et al. 2002 [memory].)

Writes tests/data/presliding/<case>.json (params, swingfit's params format), <case>.csv
(time_s,angle_rad: truth plus seeded Gaussian noise) and <case>.truth.csv (time_s,angle_rad
without noise). Run from the repository root: python3 tests/reference/make_presliding.py
"""

import json
import math
import os

import numpy as np
import scipy
from scipy.integrate import solve_ivp

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "data", "presliding")
RTOL, ATOL = 1e-12, 1e-14


def simulate(p, times):
    wn2 = p["omega_n"] ** 2
    b1, b0, sig = p.get("viscous", 0.0), p["coulomb"], p.get("presliding", 0.0)
    eq = p.get("equilibrium", 0.0)
    t0, t_end = times[0], times[-1]
    th, om = p["initial_angle"], p["initial_velocity"]
    d = math.copysign(1.0, om)
    F = d * b0
    sliding = True
    out = np.full(len(times), np.nan)
    t = t0
    while t < t_end:
        if sliding or sig <= 0.0:
            def rhs(_t, y, d=d):
                return [y[1], -wn2 * math.sin(y[0] - eq) - b1 * y[1] - d * b0]

            def stop(_t, y, d=d):
                return d * y[1]
            stop.terminal, stop.direction = True, -1
            sol = solve_ivp(rhs, (t, t_end), [th, om], method="DOP853", rtol=RTOL, atol=ATOL,
                            dense_output=True, events=[stop])
            F_end = d * b0
        else:
            def rhs(_t, y):
                return [y[1], -wn2 * math.sin(y[0] - eq) - b1 * y[1] - y[2], sig * y[1]]

            def stop(_t, y, d=d):
                return d * y[1]
            stop.terminal, stop.direction = True, -1

            def sat(_t, y, d=d):
                return d * y[2] - b0
            sat.terminal, sat.direction = True, 1
            sol = solve_ivp(rhs, (t, t_end), [th, om, F], method="DOP853", rtol=RTOL, atol=ATOL,
                            dense_output=True, events=[stop, sat])
        t1 = sol.t[-1]
        mask = (times >= t) & (times <= t1)
        out[mask] = sol.sol(times[mask])[0]
        y = sol.y[:, -1]
        th, om = y[0], y[1]
        if sol.status == 1 and len(sol.t_events[0]) > 0:
            # velocity zero: reverse; the spring holds the friction it had
            F = F_end if (sliding or sig <= 0.0) else y[2]
            om = 0.0
            a = -wn2 * math.sin(th - eq) - F
            if a == 0.0 or (sig <= 0.0 and abs(wn2 * math.sin(th - eq)) <= b0):
                out[times > t1] = th
                break
            d = math.copysign(1.0, a)
            sliding = sig <= 0.0
        elif sol.status == 1:
            F = d * b0
            sliding = True
        t = t1
    return out


CASES = {
    # b0/sigma = 6.25e-3 rad: sliding swings from 8.6 deg down into the spring range.
    "presliding_truth": {
        "params": {"omega_n": 5.0, "viscous": 0.01, "coulomb": 0.05, "presliding": 8.0,
                   "equilibrium": 0.002, "initial_angle": 0.15, "initial_velocity": 0.05},
        "duration": 30.0, "rate": 200.0, "noise": 2e-5, "seed": 11,
    },
    # Plain viscous + Coulomb, same rig, stopped before the stick: pre-sliding must not be chosen.
    "plain_viscous_coulomb": {
        "params": {"omega_n": 5.0, "viscous": 0.02, "coulomb": 0.02,
                   "equilibrium": -0.001, "initial_angle": 0.15, "initial_velocity": 0.05},
        "duration": 30.0, "rate": 200.0, "noise": 2e-5, "seed": 12,
    },
}


def main():
    os.makedirs(OUT, exist_ok=True)
    head = (f"# made by tests/reference/make_presliding.py (scipy {scipy.__version__}, "
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
        print(name, len(times), "samples")


if __name__ == "__main__":
    main()
