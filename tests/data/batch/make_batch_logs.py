#!/usr/bin/env python3
"""Make the batch test logs (tests/data/batch/), with the independent SciPy reference integrator.

Everything is invented: three swings of the made-up "HX-2 hinge bracket" on the made-up
"PT-4 pendulum table", plus files that are bad on purpose. Run from the repository root:
    python3 tests/data/batch/make_batch_logs.py
Writes mixed/*.csv (good and bad logs), rejected/*.csv (a log that reads but cannot be fitted)
and truth.json (the physics of the good logs). Not used at build or test time.
"""

import json
import math
import os
import sys

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "..", "reference"))
import pendulum_ref as ref  # noqa: E402

DEG = math.pi / 180.0
SEED = 4417
RATE = 100.0
N = 2001  # 20 s at 100 Hz

GOOD = {
    # name: (omega_n, viscous, coulomb, equilibrium deg, release deg past equilibrium)
    "hx2_a.csv": (4.80, 0.040, 0.030, 0.5, 25.0),
    "hx2_b.csv": (5.10, 0.025, 0.050, -1.2, 30.0),
    "hx2_c.csv": (6.30, 0.060, 0.020, 2.0, 20.0),
}


def write(path, header, rows, comment):
    with open(path, "w") as f:
        f.write(f"# {comment}\n")
        f.write(header + "\n")
        for r in rows:
            f.write(r + "\n")


def main():
    rng = np.random.default_rng(SEED)
    t = np.arange(N) / RATE
    truth = {}
    comment = f"HX-2 hinge bracket on PT-4 table; made by tests/data/batch/make_batch_logs.py (seed {SEED}), {ref.versions()}"
    for name, (wn, b1, b0, eq, rel) in GOOD.items():
        p = {"omega_n": wn, "viscous": b1, "coulomb": b0, "quadratic": 0.0, "breakaway": b0,
             "equilibrium": eq * DEG, "initial_angle": (eq + rel) * DEG, "initial_velocity": 0.0}
        th, _, _ = ref.simulate(p, t)
        y = (th + rng.normal(0.0, 0.005 * DEG, N)) / DEG
        write(os.path.join(HERE, "mixed", name), "time_s,angle_deg",
              [f"{ti:.2f},{a:.6f}" for ti, a in zip(t, y)], comment)
        truth[name] = {k: p[k] for k in ("omega_n", "viscous", "coulomb", "equilibrium", "initial_angle")}
    # Bad on purpose: a text cell on line 6, time going backwards at line 8, too short, empty.
    rows = [f"{ti:.2f},{0.1 * math.cos(5 * ti):.6f}" for ti in t[:200]]
    bad = list(rows)
    bad[3] = "0.03,abc"
    write(os.path.join(HERE, "mixed", "bad_text.csv"), "time_s,angle_rad", bad, "invalid on purpose: text in the angle column")
    back = list(rows)
    back[5] = "0.01,0.1"
    write(os.path.join(HERE, "mixed", "bad_time.csv"), "time_s,angle_rad", back, "invalid on purpose: time goes backwards")
    write(os.path.join(HERE, "mixed", "bad_short.csv"), "time_s,angle_rad", rows[:10], "invalid on purpose: 10 samples")
    open(os.path.join(HERE, "mixed", "bad_empty.csv"), "w").close()
    # Reads fine, cannot be fitted: the article never swings (noise about a rest angle).
    flat = [f"{ti:.2f},{0.2 + 1e-5 * rng.standard_normal():.8f}" for ti in t[:600]]
    write(os.path.join(HERE, "rejected", "still.csv"), "time_s,angle_rad", flat, "never swings: noise about 0.2 rad")
    with open(os.path.join(HERE, "truth.json"), "w") as f:
        json.dump(truth, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
