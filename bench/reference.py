#!/usr/bin/env python3
"""Independent reference fit for swingfit's speed and accuracy comparison (numpy + scipy only).

Fits the same model to the same log(s) as `swingfit fit`, with general-purpose tools:
scipy.optimize.least_squares (trust-region reflective, bounds, finite-difference Jacobian) on
the trajectory residuals model - measured, the model integrated by solve_ivp (DOP853) with the
same true stick-slip events as tests/reference/pendulum_ref.py (a terminal event at every
velocity zero, then the stick test |wn^2 sin(theta - theta_eq)| <= b0).

Same problem as swingfit: the same parameters (omega_n, the chosen damping terms, per run
theta_eq, theta0, omega0), THE SAME START VECTOR (read from `swingfit fit --json`'s
"vector.start", in "correlation.names" order) and the same continuation over the record
(windows of 3, 9, 27, ... periods from each run's start, then the whole record), so the two
programs solve the same sequence of problems from the same point.

Usage:
  reference.py --fit-json FIT.json [--counts-per-rev N] [--rtol R] [--atol A] [--out OUT.json] LOG...

Prints and writes (with --out) a JSON document: names, estimates, standard errors
(s^2 (J^T J)^-1 at the minimum), RSS, evaluations, the wall time of the fit alone and of the
whole script, and the RSS this reference model gives at swingfit's own fitted vector
("vector.fitted"; evaluated after the timing stops).
"""

import argparse
import json
import math
import os
import sys
import time

T_SCRIPT = time.perf_counter()

import numpy as np  # noqa: E402
import scipy  # noqa: E402
from scipy.optimize import least_squares  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "reference"))
import pendulum_ref as ref  # noqa: E402

TIME_UNITS = {"s": 1.0, "ms": 1e-3, "us": 1e-6}
ANGLE_UNITS = {"rad": 1.0, "deg": math.pi / 180.0}


def unit_of(name):
    """Unit from a header name: its last `_`-separated token, or the whole name."""
    n = name.strip().lower()
    return n.rsplit("_", 1)[-1] if "_" in n else n


def load_log(path, counts_per_rev):
    """Read a two-column swingfit log (# comment lines, header with unit suffixes) in SI."""
    with open(path) as f:
        lines = [ln for ln in f if ln.strip() and not ln.lstrip().startswith("#")]
    header = [h.strip() for h in lines[0].split(",")]
    data = np.loadtxt(lines[1:], delimiter=",", ndmin=2)
    tu, au = unit_of(header[0]), unit_of(header[1])
    t = data[:, 0] * TIME_UNITS.get(tu, 1.0)
    if au == "counts":
        if not counts_per_rev:
            raise SystemExit(f"{path}: angle in counts: give --counts-per-rev")
        y = data[:, 1] * (2.0 * math.pi / counts_per_rev)
    else:
        y = data[:, 1] * ANGLE_UNITS.get(au, 1.0)
    return t, y


def trajectory(p, times):
    """Angle at `times` with true stick-slip (pendulum_ref.Reference), dense output evaluated
    one segment at a time (vectorised)."""
    r = ref.Reference(p, float(times[0]), float(times[-1]))
    out = np.empty(len(times))
    done = 0
    if r.stuck is not None:
        stuck_from = np.searchsorted(times, r.stuck[0], side="left")
        out[stuck_from:] = r.stuck[1]
    else:
        stuck_from = len(times)
    for k, (_t0, t1, sol) in enumerate(r.segments):
        last = k == len(r.segments) - 1
        stop = stuck_from if last else min(stuck_from, np.searchsorted(times, t1, side="right"))
        if stop > done:
            out[done:stop] = sol(times[done:stop])[0]
            done = stop
    return out


class Problem:
    """Residuals of every run for one continuation window."""

    def __init__(self, terms, runs):
        self.terms = terms
        self.runs = runs  # list of (times, angles)
        self.evals = 0

    def params(self, x, k):
        p = {"omega_n": x[0], "viscous": 0.0, "coulomb": 0.0, "quadratic": 0.0}
        for i, t in enumerate(self.terms):
            p[t] = x[1 + i]
        o = 1 + len(self.terms) + 3 * k
        p["breakaway"] = p["coulomb"]
        p["equilibrium"], p["initial_angle"], p["initial_velocity"] = x[o], x[o + 1], x[o + 2]
        return p

    def residuals(self, x):
        self.evals += 1
        parts = []
        for k, (t, y) in enumerate(self.runs):
            try:
                parts.append(trajectory(self.params(x, k), t) - y)
            except Exception:  # a trial point the integrator cannot follow
                parts.append(np.full(len(t), 1e3))
        return np.concatenate(parts)


def main(argv):
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("logs", nargs="+")
    ap.add_argument("--fit-json", required=True, help="swingfit fit --json output (start vector, names, damping)")
    ap.add_argument("--counts-per-rev", type=float, default=None)
    ap.add_argument("--rtol", type=float, default=1e-12, help="DOP853 rtol (default 1e-12, as pendulum_ref)")
    ap.add_argument("--atol", type=float, default=1e-14, help="DOP853 atol (default 1e-14, as pendulum_ref)")
    ap.add_argument("--out", default=None)
    a = ap.parse_args(argv[1:])
    ref.RTOL, ref.ATOL = a.rtol, a.atol

    with open(a.fit_json) as f:
        doc = json.load(f)
    terms = list(doc["damping"])
    names = list(doc["correlation"]["names"])
    x0 = np.array(doc["vector"]["start"], dtype=float)
    x_swingfit = np.array(doc["vector"]["fitted"], dtype=float)
    n_phys = 1 + len(terms)
    if len(names) != n_phys + 3 * len(a.logs) or len(x0) != len(names):
        raise SystemExit(f"{a.fit_json}: parameter vector does not match {len(a.logs)} log(s) and damping {terms}")
    logs = [load_log(p, a.counts_per_rev) for p in a.logs]

    lo = np.full(len(x0), -np.inf)
    hi = np.full(len(x0), np.inf)
    lo[0] = 1e-9
    lo[1:n_phys] = 0.0
    # least_squares needs a strictly feasible start.
    finite = np.isfinite(lo)
    x = x0.copy()
    x[finite] = np.maximum(x0[finite], lo[finite] + 1e-12)

    t_fit = time.perf_counter()
    period = 2.0 * math.pi / x0[0]
    longest = max(t[-1] - t[0] for t, _ in logs)
    horizon = 3.0 * period
    stages = []
    while True:
        last = horizon >= longest
        runs = []
        for t, y in logs:
            n = len(t) if last else max(int(np.searchsorted(t - t[0], horizon, side="right")), 20)
            runs.append((t[:n], y[:n]))
        prob = Problem(terms, runs)
        sol = least_squares(prob.residuals, x, bounds=(lo, hi), method="trf", x_scale="jac",
                            ftol=1e-12, xtol=1e-10, gtol=1e-10, max_nfev=2000)
        x = sol.x
        stages.append({"samples": int(sum(len(r[0]) for r in runs)), "nfev": int(sol.nfev),
                       "njev": int(sol.njev or 0), "status": int(sol.status), "evaluations": prob.evals})
        if last:
            break
        horizon *= 3.0
    fit_seconds = time.perf_counter() - t_fit
    script_seconds = time.perf_counter() - T_SCRIPT

    r = sol.fun
    jac = sol.jac
    n_obs, p = jac.shape
    rss = float(r @ r)
    s2 = rss / (n_obs - p)
    try:
        cov = s2 * np.linalg.inv(jac.T @ jac)
        std = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    except np.linalg.LinAlgError:
        std = np.full(p, np.nan)
    rss_at_swingfit = float(np.sum(Problem(terms, logs).residuals(x_swingfit) ** 2))

    out = {
        "program": "bench/reference.py",
        "versions": ref.versions(),
        "rtol": a.rtol,
        "atol": a.atol,
        "logs": a.logs,
        "names": names,
        "start": x0.tolist(),
        "estimate": x.tolist(),
        "std": std.tolist(),
        "rss": rss,
        "rss_at_swingfit_estimate": rss_at_swingfit,
        "samples": int(n_obs),
        "stages": stages,
        "fit_seconds": fit_seconds,
        "script_seconds": script_seconds,
        "message": sol.message,
    }
    text = json.dumps(out, indent=1)
    if a.out:
        with open(a.out, "w") as f:
            f.write(text + "\n")
    print(text)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
