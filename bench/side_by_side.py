#!/usr/bin/env python3
"""Run `swingfit fit` (release build) and the SciPy reference (bench/reference.py) on the same
log(s) in one go; print the time ratio and the agreement of the estimates.

Both run pinned to one core (taskset -c CORE; RAYON_NUM_THREADS=1 for swingfit). swingfit runs
first (--json gives the reference its start vector), REPEAT times, and its median wall time is
taken; the reference runs once. For each parameter the table shows both estimates, their
relative difference, the difference in units of swingfit's standard error, and, when the truth
is known, each program's error in units of swingfit's standard error. Accuracy is also judged
under the reference's own model: the RSS the reference integrator gives at swingfit's estimate
against the RSS at its own.

Usage (from the repository root):
  python3 bench/side_by_side.py [--damping TERMS] [--core N] [--repeat N] [CASE...]
A CASE is LOG[,LOG...][:OPTIONS] with OPTIONS passed to both (e.g. "--counts-per-rev 10000").
Default cases: the 120,000-sample LR-9 log (made by bench/make_long_log.py on first use) and
the two BA-7 demo logs.
Also records peak memory (/usr/bin/time -v, maximum resident set) of swingfit on each case.
"""

import argparse
import json
import math
import os
import re
import resource
import shlex
import statistics
import subprocess
import sys
import tempfile
import time

ROOT = os.path.abspath(os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
SWINGFIT = os.path.join(ROOT, "target", "release", "swingfit")
LONG = os.path.join(ROOT, "bench", "out", "lr9_120k.csv")

# True per-unit-inertia physics of the demo logs (data/README.md).
BA7 = {"omega_n": 5.537875864526858, "viscous": 0.030, "coulomb": 0.020, "quadratic": 0.015}
TRUTH = {
    "ba7_release15_deg.csv": dict(BA7, **{"run1.equilibrium": -0.4 * math.pi / 180}),
    "ba7_release60_counts.csv": dict(BA7, **{"run1.equilibrium": 3.7 * math.pi / 180}),
}


def truth_for(logs):
    if len(logs) != 1:
        return {}
    name = os.path.basename(logs[0])
    if name in TRUTH:
        return TRUTH[name]
    tj = os.path.splitext(logs[0])[0] + ".truth.json"
    if os.path.exists(tj):
        with open(tj) as f:
            p = json.load(f)
        return {"omega_n": p["omega_n"], "viscous": p["viscous"], "coulomb": p["coulomb"],
                "quadratic": p["quadratic"], "run1.equilibrium": p["equilibrium"],
                "run1.initial_angle": p["initial_angle"], "run1.initial_velocity": p["initial_velocity"]}
    return {}


def children_cpu():
    r = resource.getrusage(resource.RUSAGE_CHILDREN)
    return r.ru_utime + r.ru_stime


def pinned(core, cmd, env=None):
    """Run pinned to `core`; returns the completed process with its CPU seconds in `.cpu`."""
    c0 = children_cpu()
    r = subprocess.run(["taskset", "-c", str(core)] + cmd, env=env, capture_output=True, text=True)
    r.cpu = children_cpu() - c0
    return r


def max_rss_kb(core, cmd, env):
    r = subprocess.run(["/usr/bin/time", "-v", "taskset", "-c", str(core)] + cmd, env=env,
                       capture_output=True, text=True)
    m = re.search(r"Maximum resident set size \(kbytes\): (\d+)", r.stderr)
    return int(m.group(1)) if m else None


def run_case(logs, opts, damping, core, repeat, tmp):
    env = dict(os.environ, RAYON_NUM_THREADS="1")
    fit_json = os.path.join(tmp, "fit.json")
    cmd = [SWINGFIT, "fit", *logs, *opts, "--damping", damping, "--json", fit_json]
    times = []
    cpus = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        r = pinned(core, cmd, env)
        times.append(time.perf_counter() - t0)
        cpus.append(r.cpu)
        if r.returncode != 0:
            print(f"swingfit failed ({r.returncode}): {r.stderr.strip()}")
            return None
    rss = max_rss_kb(core, cmd, env)
    with open(fit_json) as f:
        doc = json.load(f)
    ref_out = os.path.join(tmp, "ref.json")
    counts = []
    if "--counts-per-rev" in opts:
        counts = ["--counts-per-rev", opts[opts.index("--counts-per-rev") + 1]]
    t0 = time.perf_counter()
    r = pinned(core, [sys.executable, os.path.join(ROOT, "bench", "reference.py"), "--fit-json", fit_json,
                      "--out", ref_out, *counts, *logs])
    ref_wall = time.perf_counter() - t0
    ref_cpu = r.cpu
    if r.returncode != 0:
        print(f"reference failed ({r.returncode}): {r.stderr.strip()[-2000:]}")
        return None
    with open(ref_out) as f:
        rd = json.load(f)
    return {"doc": doc, "ref": rd, "sw_wall": statistics.median(times), "sw_walls": times,
            "ref_wall": ref_wall, "sw_cpu": statistics.median(cpus), "ref_cpu": ref_cpu, "rss_kb": rss, "samples": doc["fit"]["samples"]}


def report(name, logs, res):
    doc, rd = res["doc"], res["ref"]
    names = doc["correlation"]["names"]
    x_sw = doc["vector"]["fitted"]
    std = {}
    for n in names:
        block = doc["normalized"].get(n)
        if block is not None:
            std[n] = block["std"]
    for k, run in enumerate(doc["runs"]):
        for field in ("equilibrium", "initial_angle", "initial_velocity"):
            std[f"run{k + 1}.{field}"] = run[field]["std"]
    truth = truth_for(logs)
    print(f"\n## {name}: {res['samples']} samples, damping {'+'.join(doc['damping'])}")
    print(f"swingfit: {res['sw_wall'] * 1e3:.1f} ms wall (median of {len(res['sw_walls'])}, process incl. load), "
          f"{doc['fit']['iterations_total']} iterations; peak RSS {res['rss_kb']} kB")
    print(f"reference: {rd['fit_seconds']:.2f} s fit, {res['ref_wall']:.2f} s wall; "
          f"{sum(s['nfev'] for s in rd['stages'])} residual evaluations + FD Jacobians; {rd['message']}")
    print(f"time ratio (reference wall / swingfit wall): {res['ref_wall'] / res['sw_wall']:.0f}x; "
          f"(reference fit only / swingfit wall): {rd['fit_seconds'] / res['sw_wall']:.0f}x")
    print(f"CPU time: swingfit {res['sw_cpu']:.3f} s (median), reference {res['ref_cpu']:.2f} s; "
          f"ratio {res['ref_cpu'] / res['sw_cpu']:.0f}x")
    print(f"RSS under the reference model: at its own estimate {rd['rss']:.6e}, at swingfit's {rd['rss_at_swingfit_estimate']:.6e} "
          f"(ratio {rd['rss_at_swingfit_estimate'] / rd['rss']:.6f}); swingfit's own RSS {doc['fit']['rss']:.6e}")
    hdr = f"{'parameter':<24}{'swingfit':>16}{'std':>11}{'reference':>16}{'rel diff':>11}{'diff/std':>10}"
    if truth:
        hdr += f"{'sw err/std':>12}{'ref err/std':>12}"
    print(hdr)
    rows = []
    for i, n in enumerate(names):
        a, b, s = x_sw[i], rd["estimate"][i], std.get(n, float("nan"))
        rel = (b - a) / abs(a) if a != 0 else float("nan")
        line = f"{n:<24}{a:>16.9g}{s:>11.3g}{b:>16.9g}{rel:>11.2e}{(b - a) / s:>10.3f}"
        row = {"name": n, "swingfit": a, "std": s, "reference": b, "rel_diff": rel, "diff_over_std": (b - a) / s}
        if truth:
            t = truth.get(n)
            if t is not None:
                line += f"{(a - t) / s:>12.3f}{(b - t) / s:>12.3f}"
                row.update({"truth": t, "sw_err_over_std": (a - t) / s, "ref_err_over_std": (b - t) / s})
        print(line)
        rows.append(row)
    return rows


def main(argv):
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("cases", nargs="*")
    ap.add_argument("--damping", default="viscous,coulomb,quadratic")
    ap.add_argument("--core", type=int, default=0)
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--json-out", default=None, help="write every figure as JSON")
    a = ap.parse_args(argv[1:])
    if not os.path.exists(SWINGFIT):
        subprocess.run(["cargo", "build", "--release", "--bin", "swingfit"], cwd=ROOT, check=True)
    cases = a.cases
    if not cases:
        if not os.path.exists(LONG):
            os.makedirs(os.path.dirname(LONG), exist_ok=True)
            subprocess.run([sys.executable, os.path.join(ROOT, "bench", "make_long_log.py"), LONG], check=True)
        cases = [LONG, os.path.join(ROOT, "data", "ba7_release15_deg.csv"),
                 os.path.join(ROOT, "data", "ba7_release60_counts.csv") + ":--counts-per-rev 10000"]
    print(f"machine: {os.cpu_count()} cores; pinned to core {a.core}")
    summary = []
    for case in cases:
        spec, _, opt = case.partition(":")
        logs = spec.split(",")
        opts = shlex.split(opt)
        with tempfile.TemporaryDirectory() as tmp:
            res = run_case(logs, opts, a.damping, a.core, a.repeat, tmp)
        name = ", ".join(os.path.basename(p) for p in logs)
        if res is None:
            summary.append({"case": name, "failed": True})
            continue
        rows = report(name, logs, res)
        summary.append({"case": name, "samples": res["samples"], "swingfit_wall_s": res["sw_wall"],
                        "reference_wall_s": res["ref_wall"], "reference_fit_s": res["ref"]["fit_seconds"],
                        "ratio": res["ref_wall"] / res["sw_wall"],
                        "swingfit_cpu_s": res["sw_cpu"], "reference_cpu_s": res["ref_cpu"],
                        "cpu_ratio": res["ref_cpu"] / res["sw_cpu"], "swingfit_max_rss_kb": res["rss_kb"],
                        "rss_ref_own": res["ref"]["rss"], "rss_ref_at_swingfit": res["ref"]["rss_at_swingfit_estimate"],
                        "parameters": rows})
    if a.json_out:
        with open(a.json_out, "w") as f:
            json.dump(summary, f, indent=1)
            f.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
