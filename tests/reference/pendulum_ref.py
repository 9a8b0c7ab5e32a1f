#!/usr/bin/env python3
"""Independent reference integrator for swingfit (not used at build or test time).

Integrates the compound pendulum per unit inertia,

    theta'' = -omega_n^2 sin(theta - theta_eq) - b1 omega - b0 dir - b2 omega |omega|,

with scipy.integrate.solve_ivp (DOP853, rtol 1e-12, atol 1e-14) and TRUE stick-slip:
each segment between velocity reversals is integrated with the Coulomb direction `dir`
held fixed and a terminal event on omega = 0. At the event the stick test is applied:
if |omega_n^2 sin(theta - theta_eq)| <= static level (breakaway, default = coulomb) the
article is stuck for good (theta constant, omega = 0); otherwise integration restarts
with dir = sign of the gravity acceleration. The solution is read from the dense output
of each segment at arbitrary (non-uniform) sample times.

Usage:  pendulum_ref.py PARAMS.json TIMES.txt OUT.csv
  PARAMS.json  swingfit params format (see docs/simulate.md)
  TIMES.txt    one sample time per line [s]; the release is at the first time
  OUT.csv      written with header time_s,angle_rad,velocity_rad_s (%.17g)
"""

import json
import math
import sys

import numpy as np
import scipy
from scipy.integrate import solve_ivp

KEYS = {"omega_n", "viscous", "coulomb", "quadratic", "breakaway", "equilibrium",
        "initial_angle", "initial_velocity"}
RTOL = 1e-12
ATOL = 1e-14


def read_params(path):
    """Read and check a params JSON; returns a dict with every key filled in."""
    with open(path) as f:
        p = json.load(f)
    unknown = set(p) - KEYS
    if unknown:
        raise ValueError(f"{path}: unknown keys {sorted(unknown)}")
    for k in ("omega_n", "initial_angle"):
        if k not in p:
            raise ValueError(f"{path}: missing {k}")
    q = {
        "omega_n": float(p["omega_n"]),
        "viscous": float(p.get("viscous", 0.0)),
        "coulomb": float(p.get("coulomb", 0.0)),
        "quadratic": float(p.get("quadratic", 0.0)),
        "equilibrium": float(p.get("equilibrium", 0.0)),
        "initial_angle": float(p["initial_angle"]),
        "initial_velocity": float(p.get("initial_velocity", 0.0)),
    }
    q["breakaway"] = float(p.get("breakaway", q["coulomb"]))
    if q["breakaway"] < q["coulomb"]:
        raise ValueError(f"{path}: breakaway below coulomb")
    return q


class Reference:
    """Piecewise dense solution with stick-slip events."""

    def __init__(self, p, t0, t_end):
        self.p = p
        self.t0 = t0
        self.t_end = t_end
        self.segments = []  # (t_start, t_stop, dense OdeSolution)
        self.events = []    # dicts: kind, t, angle, gravity, static (stick margin data)
        self.stuck = None   # (t, angle) once stuck
        self._run()

    def gravity(self, theta):
        p = self.p
        return -p["omega_n"] ** 2 * math.sin(theta - p["equilibrium"])

    def _run(self):
        p = self.p
        w2 = p["omega_n"] ** 2
        b1, b0, b2, eq = p["viscous"], p["coulomb"], p["quadratic"], p["equilibrium"]
        static = p["breakaway"]
        t, th, om = self.t0, p["initial_angle"], p["initial_velocity"]
        if om != 0.0:
            direction = math.copysign(1.0, om)
        else:
            g = self.gravity(th)
            if abs(g) <= static:
                self.stuck = (t, th)
                self.events.append({"kind": "stick", "t": t, "angle": th,
                                    "gravity": abs(g), "static": static})
                return
            direction = math.copysign(1.0, g)
        while t < self.t_end:
            d = direction

            def rhs(_t, y, d=d):
                return [y[1], -w2 * math.sin(y[0] - eq) - b1 * y[1] - b0 * d - b2 * y[1] * abs(y[1])]

            def ev(_t, y):
                return y[1]

            ev.terminal = True
            # Moving with sign d, the velocity reaches zero going the other way.
            ev.direction = -d
            sol = solve_ivp(rhs, (t, self.t_end), [th, om], method="DOP853", rtol=RTOL,
                            atol=ATOL, dense_output=True, events=ev)
            if sol.status < 0:
                raise RuntimeError(sol.message)
            t_stop = sol.t[-1]
            self.segments.append((t, t_stop, sol.sol))
            if sol.status == 0:  # reached t_end
                return
            # Terminal event: velocity zero at t_stop.
            t = float(sol.t_events[0][0])
            th = float(sol.y_events[0][0][0])
            om = 0.0
            g = self.gravity(th)
            if abs(g) <= static:
                self.stuck = (t, th)
                self.events.append({"kind": "stick", "t": t, "angle": th,
                                    "gravity": abs(g), "static": static})
                return
            self.events.append({"kind": "reversal", "t": t, "angle": th,
                                "gravity": abs(g), "static": static})
            direction = math.copysign(1.0, g)

    def at(self, times):
        """Angle and velocity at each time (times >= t0, increasing)."""
        out_th = np.empty(len(times))
        out_om = np.empty(len(times))
        k = 0
        for i, t in enumerate(times):
            if self.stuck is not None and t >= self.stuck[0]:
                out_th[i], out_om[i] = self.stuck[1], 0.0
                continue
            while k + 1 < len(self.segments) and t > self.segments[k][1]:
                k += 1
            y = self.segments[k][2](t)
            out_th[i], out_om[i] = y[0], y[1]
        return out_th, out_om


def simulate(p, times):
    """Return (angle, velocity, events) at `times` (the release is at times[0])."""
    times = np.asarray(times, dtype=float)
    if not np.all(np.diff(times) > 0):
        raise ValueError("times must be strictly increasing")
    ref = Reference(p, float(times[0]), float(times[-1]))
    th, om = ref.at(times)
    return th, om, ref.events


def versions():
    """The scipy and numpy versions, for headers."""
    return f"scipy {scipy.__version__}, numpy {np.__version__}"


def write_csv(path, times, th, om, comment):
    """Write the reference CSV: one # comment line, header, %.17g values."""
    with open(path, "w") as f:
        f.write(f"# {comment}\n")
        f.write("time_s,angle_rad,velocity_rad_s\n")
        for t, a, w in zip(times, th, om):
            f.write(f"{t:.17g},{a:.17g},{w:.17g}\n")


def main(argv):
    if len(argv) != 4:
        sys.stderr.write(__doc__)
        return 2
    p = read_params(argv[1])
    times = np.loadtxt(argv[2], dtype=float, ndmin=1)
    th, om, _ = simulate(p, times)
    write_csv(argv[3], times, th, om, f"made by tests/reference/pendulum_ref.py, {versions()}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
