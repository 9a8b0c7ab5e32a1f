#!/usr/bin/env python3
"""Make the two bundled demo logs of the invented BA-7 bracket arm (see data/README.md).

The trajectories come from the independent SciPy reference integrator
(tests/reference/pendulum_ref.py, DOP853 with true stick-slip), not from swingfit, so a
fit of these logs is a check of swingfit against physics it did not produce.
Run from the repository root:  python3 data/make_demo.py
"""

import math
import os
import sys

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "reference"))
import pendulum_ref as ref  # noqa: E402

DEG = math.pi / 180.0

# True physics of the invented article on the invented rig.
M, D, J, G = 2.40, 0.215, 0.1650, 9.80665
OMEGA_N = math.sqrt(M * G * D / J)
B1, B0, B2 = 0.030, 0.020, 0.015
SEED_COUNTS = 7060
SEED_DEG = 7015
TAIL_S = 5.0


def physics(eq, angle):
    return {"omega_n": OMEGA_N, "viscous": B1, "coulomb": B0, "quadratic": B2, "breakaway": B0,
            "equilibrium": eq, "initial_angle": angle, "initial_velocity": 0.0}


def write_true(name, p):
    """The true parameters in swingfit's params format (for `simulate --params`)."""
    import json
    q = {k: v for k, v in p.items() if k != "breakaway"}  # breakaway = coulomb: left out
    with open(os.path.join(HERE, f"{name}_true.json"), "w") as f:
        json.dump(q, f, indent=2)
        f.write("\n")


def release60_counts():
    """250 Hz encoder log in counts, jittered timestamps in ms (stamped to the microsecond)."""
    rng = np.random.default_rng(SEED_COUNTS)
    eq = 3.7 * DEG
    p = physics(eq, eq + 60.0 * DEG)
    write_true("ba7_release60", p)
    probe = ref.Reference(p, 0.0, 400.0)
    assert probe.stuck is not None, "the article must come to rest within 400 s"
    t_end = probe.stuck[0] + TAIL_S
    n = int(t_end * 250.0) + 1
    # Logger period 4 ms with a random scheduling delay of 0-0.6 ms; the true sampling instant
    # is stamped, rounded to 1 us.
    t_ms = np.round(np.arange(n) * 4.0 + rng.uniform(0.0, 0.6, n), 3)
    t_ms[0] = 0.0
    assert np.all(np.diff(t_ms) > 0)
    th, _, events = ref.simulate(p, t_ms / 1000.0)
    cpr = 10000
    q = 2.0 * math.pi / cpr
    noisy = th + rng.normal(0.0, 0.005 * DEG, n)
    counts = np.round(noisy / q).astype(np.int64)
    path = os.path.join(HERE, "ba7_release60_counts.csv")
    with open(path, "w") as f:
        f.write(f"# BA-7 bracket arm on swing stand SS-2, release 60 deg; made by data/make_demo.py "
                f"(seed {SEED_COUNTS}), {ref.versions()}\n")
        f.write("t_ms,counts\n")
        for t, c in zip(t_ms, counts):
            f.write(f"{t:.3f},{c}\n")
    return n, probe.stuck, len([e for e in events if e["kind"] == "reversal"])


def release15_deg():
    """100 Hz log in degrees, about 90 s."""
    rng = np.random.default_rng(SEED_DEG)
    eq = -0.4 * DEG
    p = physics(eq, eq + 15.0 * DEG)
    write_true("ba7_release15", p)
    n = 9001
    t = np.arange(n) / 100.0
    th, _, events = ref.simulate(p, t)
    deg = (th + rng.normal(0.0, 0.01 * DEG, n)) / DEG
    path = os.path.join(HERE, "ba7_release15_deg.csv")
    with open(path, "w") as f:
        f.write(f"# BA-7 bracket arm on swing stand SS-2, release 15 deg; made by data/make_demo.py "
                f"(seed {SEED_DEG}), {ref.versions()}\n")
        f.write("time_s,angle_deg\n")
        for ti, a in zip(t, deg):
            f.write(f"{ti:.2f},{a:.6f}\n")
    stick = next((e for e in events if e["kind"] == "stick"), None)
    return n, stick


if __name__ == "__main__":
    print(f"omega_n = {OMEGA_N:.12g} rad/s, T0 = {2 * math.pi / OMEGA_N:.12g} s")
    n, stuck, rev = release60_counts()
    print(f"ba7_release60_counts.csv: {n} samples, {rev} reversals, stuck at t = {stuck[0]:.4f} s, "
          f"rest angle {stuck[1] / DEG:.5f} deg")
    n, stick = release15_deg()
    print(f"ba7_release15_deg.csv: {n} samples, " + (f"stuck at {stick['t']:.3f} s" if stick else "still moving at the end"))
