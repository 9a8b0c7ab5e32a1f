#!/usr/bin/env python3
"""Generate the committed SciPy reference trajectories in tests/data/reference/.

For every case this writes
  <case>.json         the parameters, in swingfit's params format (what `simulate --params` reads)
  <case>.csv          the trajectory at the case's sample times: one '#' line naming this script
                      and the scipy/numpy versions, header time_s,angle_rad,velocity_rad_s, %.17g
  <case>.events.json  turning points and the stick event (time, angle) with the stick-test
                      margin, for tests that want them

Run from the repository root:  python3 tests/reference/make_reference.py
The Rust build and tests never run this; they read the committed outputs.
"""

import json
import math
import os
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import pendulum_ref as ref  # noqa: E402

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "data", "reference")
DEG = math.pi / 180.0
# Smallest relative distance between |gravity accel| and the static level at any event: keeps
# every stick/reverse decision far from the threshold, so a correct integrator cannot flip it.
MIN_MARGIN = 0.02


def uniform(duration, rate, t0=0.0):
    n = int(round(duration * rate)) + 1
    return t0 + np.arange(n) / rate


def jittered(duration, rate, jitter, drops, seed, t0=0.0):
    """Nominal rate with uniform jitter of +-jitter/rate, and [start, end) windows dropped."""
    rng = np.random.default_rng(seed)
    n = int(round(duration * rate)) + 1
    t = t0 + (np.arange(n) + rng.uniform(-jitter, jitter, n)) / rate
    t[0] = t0
    keep = np.ones(n, dtype=bool)
    for a, b in drops:
        keep &= ~((t >= t0 + a) & (t < t0 + b))
    t = t[keep]
    assert np.all(np.diff(t) > 0)
    return t


CASES = {
    # Viscous damping only, small release, uniform 100 Hz.
    "viscous_only": (
        {"omega_n": 4.2, "viscous": 0.08, "equilibrium": 0.02, "initial_angle": 0.52},
        uniform(25.0, 100.0),
    ),
    # Coulomb friction only: decays linearly and sticks near t = 8 s; 12 s of resting tail.
    "coulomb_rest": (
        {"omega_n": 5.0, "coulomb": 0.3, "equilibrium": -0.03, "initial_angle": 0.3},
        uniform(20.0, 200.0),
    ),
    # Quadratic damping only, released at -80 deg (below the equilibrium side).
    "quadratic_large": (
        {"omega_n": 3.5, "quadratic": 0.06, "initial_angle": -80.0 * DEG},
        uniform(20.0, 100.0),
    ),
    # All three terms, 120 deg release, equilibrium off zero.
    "all_three_120": (
        {"omega_n": 4.0, "viscous": 0.03, "coulomb": 0.05, "quadratic": 0.02,
         "equilibrium": 0.05, "initial_angle": 0.05 + 120.0 * DEG},
        uniform(30.0, 100.0),
    ),
    # Undamped, released at 170 deg: period 2.439 T0 (docs/checks.md §2).
    "undamped_170": (
        {"omega_n": 3.0, "initial_angle": 170.0 * DEG},
        uniform(15.0, 200.0),
    ),
    # Non-uniform timestamps (+-30 % jitter at 250 Hz) with three dropped stretches, a start time
    # off zero, an initial velocity, all three terms; the stick falls inside a dropped stretch.
    "nonuniform_gaps": (
        {"omega_n": 6.0, "viscous": 0.05, "coulomb": 0.4, "quadratic": 0.03,
         "equilibrium": 0.01, "initial_angle": 0.4, "initial_velocity": -0.8},
        None,  # filled below once the stick time is known
    ),
    # Static (breakaway) friction three times the kinetic level: sticks at a larger amplitude.
    "breakaway": (
        {"omega_n": 5.0, "coulomb": 0.2, "breakaway": 0.6, "equilibrium": 0.0,
         "initial_angle": 0.25},
        uniform(15.0, 200.0),
    ),
}


def check_margins(name, events):
    for e in events:
        if e["static"] > 0.0:
            m = abs(e["gravity"] - e["static"]) / e["static"]
            if m < MIN_MARGIN:
                raise SystemExit(f"{name}: event at t={e['t']} too close to the stick threshold ({m:.3g})")


def main():
    os.makedirs(OUT, exist_ok=True)
    comment = f"made by tests/reference/make_reference.py, {ref.versions()}"
    # nonuniform_gaps: find the stick time first on a fine grid, then drop a window around it.
    p, _ = CASES["nonuniform_gaps"]
    t0 = 1.25
    probe = ref.Reference(ref_params(p), t0, t0 + 30.0)
    assert probe.stuck is not None, "nonuniform_gaps must stick"
    ts = probe.stuck[0] - t0
    drops = [(2.0, 2.6), (5.1, 5.35), (ts - 0.3, ts + 0.4)]
    CASES["nonuniform_gaps"] = (p, jittered(20.0, 250.0, 0.3, drops, seed=20240603, t0=t0))

    for name, (params, times) in CASES.items():
        q = ref_params(params)
        th, om, events = ref.simulate(q, times)
        check_margins(name, events)
        with open(os.path.join(OUT, f"{name}.json"), "w") as f:
            json.dump(params, f, indent=2)
            f.write("\n")
        ref.write_csv(os.path.join(OUT, f"{name}.csv"), times, th, om, comment)
        side = {
            "made_by": comment,
            "solver": {"method": "DOP853", "rtol": ref.RTOL, "atol": ref.ATOL},
            "samples": int(len(times)),
            "events": [{"kind": e["kind"], "t": e["t"], "angle": e["angle"]} for e in events],
        }
        with open(os.path.join(OUT, f"{name}.events.json"), "w") as f:
            json.dump(side, f, indent=2)
            f.write("\n")
        kinds = [e["kind"] for e in events]
        stick = next((e for e in events if e["kind"] == "stick"), None)
        print(f"{name}: {len(times)} samples, {kinds.count('reversal')} reversals, "
              + (f"stuck at t={stick['t']:.4f} s, angle={stick['angle']:.6f}" if stick else "no stick"))


def ref_params(params):
    """Fill defaults as the params format says (absent terms zero, breakaway = coulomb)."""
    import tempfile
    with tempfile.NamedTemporaryFile("w", suffix=".json", delete=False) as f:
        json.dump(params, f)
        path = f.name
    try:
        return ref.read_params(path)
    finally:
        os.unlink(path)


if __name__ == "__main__":
    main()
