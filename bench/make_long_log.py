#!/usr/bin/env python3
"""Make the 120,000-sample log for the side-by-side comparison, with the SciPy reference
integrator (tests/reference/pendulum_ref.py), not with swingfit.

Invented article "LR-9 long arm" on the invented rig "SS-5": omega_n 5.2 rad/s, viscous
0.012 1/s, Coulomb 0.006 rad/s^2, quadratic 0.006 1/rad, equilibrium +1.5 deg, released from
rest 40 deg past it; 1 kHz for 120 s (120,000 samples, the article still swinging at the end);
Gaussian noise 0.005 deg from numpy default_rng(seed 9120); angle written in rad to 1e-9.

Usage: make_long_log.py OUT.csv   (also writes OUT.truth.json with the true parameters)
"""

import json
import math
import os
import sys

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "reference"))
import pendulum_ref as ref  # noqa: E402

DEG = math.pi / 180.0
SEED = 9120
N = 120_000


def main(argv):
    if len(argv) != 2:
        sys.stderr.write(__doc__)
        return 2
    eq = 1.5 * DEG
    p = {"omega_n": 5.2, "viscous": 0.012, "coulomb": 0.006, "quadratic": 0.006, "breakaway": 0.006,
         "equilibrium": eq, "initial_angle": eq + 40.0 * DEG, "initial_velocity": 0.0}
    t = np.arange(N) / 1000.0
    th, _, events = ref.simulate(p, t)
    if any(e["kind"] == "stick" for e in events):
        raise SystemExit("the article stuck: choose lighter damping")
    y = th + np.random.default_rng(SEED).normal(0.0, 0.005 * DEG, N)
    with open(argv[1], "w") as f:
        f.write(f"# LR-9 long arm on rig SS-5 (invented); made by bench/make_long_log.py (seed {SEED}), "
                f"{ref.versions()}\n")
        f.write("time_s,angle_rad\n")
        for ti, a in zip(t, y):
            f.write(f"{ti:.3f},{a:.9f}\n")
    with open(os.path.splitext(argv[1])[0] + ".truth.json", "w") as f:
        json.dump(p, f, indent=1)
        f.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
