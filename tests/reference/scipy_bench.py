#!/usr/bin/env python3
"""Benchmark and optimum check of `mucurve fit`'s engine against scipy.optimize.least_squares.

One run does it all:
  1. `mucurve bench --sweeps N --points P --export LOT.json` times our engine on a synthetic
     lot of spin + wall (debye + lorentz) spectra and writes the lot, the primary start of each
     sweep (the start our engine reads from the data first) and our optima;
  2. this script fits the same residual from the same starts with
     least_squares(method="lm", x_scale="jac") — MINPACK's LM with its own column scaling,
     default tolerances and the default 2-point Jacobian, as a scipy user would call it;
  3. it prints both fit times, their ratio, and every sweep where our optimum (full pipeline or
     the single run from the same start) has a higher cost than scipy's;
  4. it writes tests/reference/scipy_bench.json (scipy's optimum per sweep, versions, timings,
     when and under what machine load they were measured), which tests/fit_engine.rs reads to
     check, without Python, that our pipeline never ends at a worse optimum than scipy on any
     sweep of the lot, and which `mucurve bench --scipy tests/reference/scipy_bench.json` reads
     to print the ratio of scipy's recorded fit time to its own whole-process time.

Timings depend on the machine and on what else runs on it: the JSON records the UTC time and
the 1-minute load average before and after the scipy fits, and the fits are timed as the median
of --runs passes over the lot.

The residual (relative complex error, real parts then imaginary parts, internal coordinates
ln Δμ, ln f_r, ln d) is the one of tests/reference/scipy_lm.py, imported from there.

Run from the crate folder:
    python3 tests/reference/scipy_bench.py [--mucurve PATH] [--sweeps 200] [--points 1601]
"""
import argparse
import datetime
import json
import os
import pathlib
import subprocess
import sys
import tempfile
import time

import numpy as np
import scipy
from scipy.optimize import least_squares

HERE = pathlib.Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
from scipy_lm import residuals, unpack, flat_external  # noqa: E402

# A cost counts as worse only beyond rounding: relative 1e-9 of the cost.
COST_RTOL = 1e-9


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--mucurve", default=None, help="path of the mucurve binary (default: cargo run --release)")
    ap.add_argument("--sweeps", type=int, default=200)
    ap.add_argument("--points", type=int, default=1601)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--noise", type=float, default=0.005)
    ap.add_argument("--runs", type=int, default=5, help="passes over the lot; the median time is recorded")
    args = ap.parse_args()

    with tempfile.TemporaryDirectory() as tmp:
        lot_path = pathlib.Path(tmp) / "lot.json"
        bench = ["bench", "--sweeps", str(args.sweeps), "--points", str(args.points),
                 "--seed", str(args.seed), "--noise", str(args.noise), "--runs", str(args.runs),
                 "--export", str(lot_path)]
        cmd = [args.mucurve] + bench if args.mucurve else ["cargo", "run", "--release", "--quiet", "--"] + bench
        out = subprocess.run(cmd, check=True, capture_output=True, text=True, cwd=HERE.parent.parent)
        print(out.stdout, end="")
        lot = json.loads(lot_path.read_text())

    kinds = lot["kinds"]
    free = lot["free_mu_inf"]
    mu_inf_fixed = lot["mu_inf_fixed"]
    f = np.array(lot["freq_hz"])
    sweeps = [(np.array(s["mu_re"]) + 1j * np.array(s["mu_im"]), np.array(s["start_internal"]))
              for s in lot["sweeps"]]
    load_before = os.getloadavg()[0]
    measured_utc = datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
    passes = []
    for _ in range(max(1, args.runs)):
        t_pass = 0.0
        results = []
        for mu, u0 in sweeps:
            t0 = time.perf_counter()
            res = least_squares(residuals, u0, method="lm", x_scale="jac", args=(kinds, free, mu_inf_fixed, f, mu))
            t_pass += time.perf_counter() - t0
            results.append(res)
        passes.append(t_pass)
    load_after = os.getloadavg()[0]
    t_scipy = sorted(passes)[len(passes) // 2]
    rows = []
    for s, res in zip(lot["sweeps"], results):
        mu_inf_fit, terms_fit = unpack(kinds, free, mu_inf_fixed, res.x)
        rows.append({
            "scipy_cost": float(res.cost),
            "scipy_external": flat_external(kinds, mu_inf_fit, terms_fit),
            "scipy_nfev": int(res.nfev),
            "scipy_status": int(res.status),
            "ours_pipeline_cost": s["ours_pipeline"]["cost"],
            "ours_same_start_cost": s["ours_same_start"]["cost"],
            "first_mu": [s["mu_re"][0], s["mu_im"][0]],
        })

    n = len(rows)
    timing = lot["timing_s"]
    worse_pipe = [i for i, r in enumerate(rows) if r["ours_pipeline_cost"] > r["scipy_cost"] * (1 + COST_RTOL)]
    worse_same = [i for i, r in enumerate(rows) if r["ours_same_start_cost"] > r["scipy_cost"] * (1 + COST_RTOL)]
    lower_pipe = sum(1 for r in rows if r["ours_pipeline_cost"] < r["scipy_cost"] * (1 - 1e-6))
    print(f"scipy {scipy.__version__} least_squares(method='lm', x_scale='jac'), same residual, same starts:")
    print(f"  {n} fits in {t_scipy:.3f} s ({1e3 * t_scipy / n:.3f} ms per fit; median of {len(passes)} passes, "
          f"load average {load_before:.2f} before, {load_after:.2f} after), "
          f"{np.mean([r['scipy_nfev'] for r in rows]):.1f} evaluations per fit")
    print(f"  ratio scipy / ours, single-start fits, one thread:       {t_scipy / timing['same_start_sequential']:.1f}x")
    print(f"  ratio scipy / ours, full-pipeline fits, one thread:      {t_scipy / timing['pipeline_sequential']:.1f}x")
    print(f"  ratio scipy / ours, whole process, {timing['threads']} threads:            {t_scipy / timing['whole_process_parallel']:.1f}x")
    print(f"  our full pipeline ends at a higher cost than scipy on {len(worse_pipe)} of {n} sweeps {worse_pipe[:10]}")
    print(f"  our single run from the same start ends higher on {len(worse_same)} of {n} sweeps {worse_same[:10]}")
    print(f"  our full pipeline ends at a clearly lower cost (by > 1e-6 relative) on {lower_pipe} of {n} sweeps")

    doc = {
        "generator": "tests/reference/scipy_bench.py",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "python_version": sys.version.split()[0],
        "method": "scipy.optimize.least_squares(method='lm', x_scale='jac'), default tolerances, 2-point Jacobian",
        "lot": {"sweeps": n, "points": args.points, "seed": args.seed, "noise_rel": args.noise, "kinds": kinds},
        "measured_utc": measured_utc,
        "load_average_1min": {"before": load_before, "after": load_after},
        "timing_s": {"scipy_fits": t_scipy, "scipy_passes": passes, **timing},
        "sweeps": rows,
    }
    (HERE / "scipy_bench.json").write_text(json.dumps(doc, indent=0) + "\n")
    print(f"wrote {HERE / 'scipy_bench.json'}")
    return 1 if worse_pipe else 0


if __name__ == "__main__":
    sys.exit(main())
