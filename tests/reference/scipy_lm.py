#!/usr/bin/env python3
"""Reference fits by scipy.optimize.least_squares(method="lm") (MINPACK lmdif) for the Rust
Levenberg-Marquardt solver (tests/nist_strd.rs, `scipy_*` tests).

Synthetic permeability spectra are generated here, deterministically (fixed numpy seed), and
written out with the fits, so the Rust test needs neither Python nor this script.

Same problem as src/fit/problem.rs:
  mu(f) = mu_inf + sum of terms, x = f/f_r, mu = mu' - j mu'' convention
    debye      dmu / (1 + jx)
    cole-cole  dmu / (1 + (jx)^alpha)
    lorentz    dmu / (1 - x^2 + j d x)
  residual  r = (mu_model - mu_meas)/|mu_meas|, real parts of all points, then imaginary parts
  cost      1/2 sum r^2 (scipy's `cost` is defined the same way)
  parameters in internal coordinates: ln for delta_mu, f_hz, damping; logit for alpha, beta;
  mu_inf as is (only when it is free).

Run:  python3 tests/reference/scipy_lm.py   (writes tests/reference/scipy_lm.json)
"""
import json
import pathlib

import numpy as np
import scipy
from scipy.optimize import least_squares

SEED = 20240607
NOISE_REL = 0.005  # complex Gaussian noise, 0.5 % of |mu| per component
N_POINTS = 201
F_MIN, F_MAX = 1e5, 1e9

PARAM_NAMES = {
    "debye": ["delta_mu", "f_hz"],
    "cole-cole": ["delta_mu", "f_hz", "alpha"],
    "lorentz": ["delta_mu", "f_hz", "damping"],
}


def term_value(kind, p, f):
    x = f / p["f_hz"]
    jx = 1j * x
    if kind == "debye":
        return p["delta_mu"] / (1 + jx)
    if kind == "cole-cole":
        return p["delta_mu"] / (1 + jx ** p["alpha"])
    if kind == "lorentz":
        return p["delta_mu"] / (1 - x * x + 1j * p["damping"] * x)
    raise ValueError(kind)


def mu_model(kinds, mu_inf, terms, f):
    return mu_inf + sum(term_value(k, t, f) for k, t in zip(kinds, terms))


def to_internal(name, v):
    if name in ("delta_mu", "f_hz", "damping"):
        return float(np.log(v))
    if name in ("alpha", "beta"):
        return float(np.log(v / (1 - v)))
    return float(v)


def to_external(name, u):
    if name in ("delta_mu", "f_hz", "damping"):
        return float(np.exp(u))
    if name in ("alpha", "beta"):
        return float(1 / (1 + np.exp(-u)))
    return float(u)


def layout(kinds, free_mu_inf):
    names = (["mu_inf"] if free_mu_inf else []) + [n for k in kinds for n in PARAM_NAMES[k]]
    return names


def unpack(kinds, free_mu_inf, mu_inf_fixed, u):
    ext = [to_external(n, v) for n, v in zip(layout(kinds, free_mu_inf), u)]
    at = 0
    mu_inf = mu_inf_fixed
    if free_mu_inf:
        mu_inf, at = ext[0], 1
    terms = []
    for k in kinds:
        n = len(PARAM_NAMES[k])
        terms.append(dict(zip(PARAM_NAMES[k], ext[at:at + n])))
        at += n
    return mu_inf, terms


def residuals(u, kinds, free_mu_inf, mu_inf_fixed, f, mu_meas):
    mu_inf, terms = unpack(kinds, free_mu_inf, mu_inf_fixed, u)
    e = (mu_model(kinds, mu_inf, terms, f) - mu_meas) / np.abs(mu_meas)
    return np.concatenate([e.real, e.imag])


def flat_external(kinds, mu_inf, terms):
    return [mu_inf] + [t[n] for k, t in zip(kinds, terms) for n in PARAM_NAMES[k]]


CASES = [
    {
        "name": "debye+lorentz, mu_inf fixed at 1",
        "kinds": ["debye", "lorentz"],
        "free_mu_inf": False,
        "mu_inf": 1.0,
        "truth": [{"delta_mu": 600.0, "f_hz": 8e6}, {"delta_mu": 300.0, "f_hz": 40e6, "damping": 0.8}],
        "start": [{"delta_mu": 450.0, "f_hz": 12e6}, {"delta_mu": 400.0, "f_hz": 30e6, "damping": 0.5}],
    },
    {
        "name": "cole-cole, mu_inf free",
        "kinds": ["cole-cole"],
        "free_mu_inf": True,
        "mu_inf": 3.0,
        "start_mu_inf": 1.0,
        "truth": [{"delta_mu": 2000.0, "f_hz": 2e6, "alpha": 0.75}],
        "start": [{"delta_mu": 1500.0, "f_hz": 3e6, "alpha": 0.9}],
    },
]


def main():
    rng = np.random.default_rng(SEED)
    f = np.logspace(np.log10(F_MIN), np.log10(F_MAX), N_POINTS)
    out_cases = []
    for case in CASES:
        kinds = case["kinds"]
        free = case["free_mu_inf"]
        mu_true = mu_model(kinds, case["mu_inf"], case["truth"], f)
        noise = NOISE_REL * np.abs(mu_true) * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
        mu_meas = mu_true + noise
        mu_inf_fixed = case["mu_inf"] if not free else 1.0
        start_mu_inf = case.get("start_mu_inf", mu_inf_fixed)
        start_ext = flat_external(kinds, start_mu_inf, case["start"])
        names = layout(kinds, free)
        start_flat = start_ext if free else start_ext[1:]
        u0 = np.array([to_internal(n, v) for n, v in zip(names, start_flat)])
        res = least_squares(
            residuals, u0, method="lm", x_scale="jac", ftol=1e-15, xtol=1e-15, gtol=1e-15, max_nfev=20000,
            args=(kinds, free, mu_inf_fixed, f, mu_meas),
        )
        mu_inf_fit, terms_fit = unpack(kinds, free, mu_inf_fixed, res.x)
        out_cases.append({
            "name": case["name"],
            "model": "+".join(kinds),
            "free_mu_inf": free,
            "mu_inf_fixed": mu_inf_fixed,
            "freq_hz": f.tolist(),
            "mu_re": mu_meas.real.tolist(),
            "mu_im": mu_meas.imag.tolist(),
            "true_external": flat_external(kinds, case["mu_inf"], case["truth"]),
            "start_external": start_ext,
            "start_internal": u0.tolist(),
            "internal_names": names,
            "scipy_internal": res.x.tolist(),
            "scipy_external": flat_external(kinds, mu_inf_fit, terms_fit),
            "scipy_cost": float(res.cost),
            "scipy_nfev": int(res.nfev),
            "scipy_status": int(res.status),
            "scipy_message": res.message,
        })
    doc = {
        "generator": "tests/reference/scipy_lm.py",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "method": 'scipy.optimize.least_squares(method="lm", x_scale="jac", ftol=xtol=gtol=1e-15), 2-point Jacobian',
        "seed": SEED,
        "noise_rel": NOISE_REL,
        "external_order": "[mu_inf, term params in kind order: delta_mu, f_hz, alpha|damping]",
        "cases": out_cases,
    }
    path = pathlib.Path(__file__).with_name("scipy_lm.json")
    path.write_text(json.dumps(doc, indent=1) + "\n")
    for c in out_cases:
        print(c["name"], c["scipy_status"], c["scipy_cost"], c["scipy_external"])


if __name__ == "__main__":
    main()
