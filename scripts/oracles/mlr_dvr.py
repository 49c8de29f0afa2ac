#!/usr/bin/env python3
"""Oracle: bound levels of two SYNTHETIC Morse/long-range (MLR) wells by a dense sinc-DVR in SciPy.

Writes tests/potential/mlr_dvr.json, used by crates/core/tests/direct_fit.rs: the Rust MLR form
is checked point by point against this script's own implementation, and the direct potential
fit must recover the parameters from these levels.

MLR form: Le Roy, Huang & Jary, J. Chem. Phys. 125, 164310 (2006):
  V(r) = De [1 - (u(r)/u(re)) exp(-beta(r) y_p^eq(r))]^2,  u(r) = sum_m C_m / r^m,
  y_p^x(r) = (r^p - x^p)/(r^p + x^p),
  beta(r) = beta_inf y_p^ref(r) + (1 - y_p^ref(r)) sum_i beta_i y_q^ref(r)^i,
  beta_inf = ln(2 De / u(re)).
Levels: Colbert & Miller sinc-DVR on a uniform grid (J. Chem. Phys. 96, 1982 (1992)), dense
scipy.linalg.eigh; converged by comparing two grid steps (the difference is written out).
Independent of the Rust code (different discretisation, different eigensolver).
C_u = h/(8 pi^2 c u A^2) from scipy.constants.

Noise: Gaussian, numpy default_rng(seed) as stated per set.
Run: python3 scripts/oracles/mlr_dvr.py   (numpy, scipy).
"""
import json
import os

import numpy as np
import scipy
import scipy.constants as sc
import scipy.linalg as sl

C_U = sc.h / (8 * np.pi**2 * sc.c * sc.atomic_mass * 1e-20) / 100.0  # cm^-1 u A^2

# SYNTHETIC wells of our own choosing (not any real molecule).
WELLS = [
    {
        "name": "mlr-c6",
        "de_cm1": 5000.0, "re_angstrom": 3.0, "p": 5, "q": 3, "r_ref_angstrom": 3.6,
        "beta": [0.55, -0.25, 0.08], "tail": [[6, 2.0e6]], "mu_u": 20.0,
        "top_fraction": 0.92, "r_lo": 1.9, "r_hi": 14.0,
    },
    {
        "name": "mlr-c4",
        "de_cm1": 3000.0, "re_angstrom": 2.6, "p": 4, "q": 2, "r_ref_angstrom": 3.2,
        "beta": [0.35, -0.12], "tail": [[4, 1.5e5]], "mu_u": 12.0,
        "top_fraction": 0.90, "r_lo": 1.6, "r_hi": 16.0,
    },
]
NOISE_SIGMA = 0.02
SEED = 20261204


def mlr(w, r):
    de, re, p, q, rr = w["de_cm1"], w["re_angstrom"], w["p"], w["q"], w["r_ref_angstrom"]
    u = lambda x: sum(c / x**m for m, c in w["tail"])
    ue = u(re)
    yp_eq = (r**p - re**p) / (r**p + re**p)
    yp_ref = (r**p - rr**p) / (r**p + rr**p)
    yq_ref = (r**q - rr**q) / (r**q + rr**q)
    binf = np.log(2 * de / ue)
    poly = sum(b * yq_ref**i for i, b in enumerate(w["beta"]))
    beta = binf * yp_ref + (1 - yp_ref) * poly
    return de * (1 - u(r) / ue * np.exp(-beta * yp_eq)) ** 2


def dvr(w, dx):
    r = np.arange(w["r_lo"], w["r_hi"] + 0.5 * dx, dx)
    n = len(r)
    k = C_U / (w["mu_u"] * dx * dx)
    i = np.arange(n)
    d = i[:, None] - i[None, :]
    with np.errstate(divide="ignore"):
        t = np.where(d == 0, k * np.pi**2 / 3, k * 2.0 * (-1.0) ** d / np.where(d == 0, 1, d) ** 2)
    h = t + np.diag(mlr(w, r))
    e = sl.eigh(h, eigvals_only=True, subset_by_value=(-np.inf, w["top_fraction"] * w["de_cm1"]))
    return e


def main():
    rng = np.random.default_rng(SEED)
    out = {
        "source": "scripts/oracles/mlr_dvr.py: sinc-DVR (Colbert & Miller 1992) with scipy.linalg.eigh "
                  f"(SciPy {scipy.__version__}, NumPy {np.__version__}) on SYNTHETIC MLR wells "
                  "(form of Le Roy, Huang & Jary 2006)",
        "c_u_cm1_u_a2": C_U,
        "noise_sigma_cm1": NOISE_SIGMA,
        "seed": SEED,
        "wells": [],
    }
    for w in WELLS:
        e1 = dvr(w, 0.004)
        e2 = dvr(w, 0.003)
        m = min(len(e1), len(e2))
        conv = float(np.max(np.abs(e1[:m] - e2[:m])))
        e = e2[:m]
        noisy = e + rng.normal(0.0, NOISE_SIGMA, m)
        rs = np.linspace(0.8 * w["re_angstrom"], 6.0 * w["re_angstrom"], 25)
        out["wells"].append({
            **{k: w[k] for k in ("name", "de_cm1", "re_angstrom", "p", "q", "r_ref_angstrom", "beta", "tail", "mu_u")},
            "levels_cm1": e.tolist(),
            "noisy_levels_cm1": noisy.tolist(),
            "dvr_step_difference_cm1": conv,
            "curve": [[float(x), float(mlr(w, x))] for x in rs],
        })
        print(w["name"], m, "levels below", w["top_fraction"], "of De; step difference", conv,
              "top", e[-1], "D0", w["de_cm1"] - e[0])
    path = os.path.join(os.path.dirname(__file__), "..", "..", "tests", "potential", "mlr_dvr.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
