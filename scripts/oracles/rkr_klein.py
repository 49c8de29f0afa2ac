#!/usr/bin/env python3
"""Oracle: first-order RKR turning points by 30-digit quadrature, written to tests/potential/rkr_klein.json.

Klein integrals (domain.md 1.9), energies from the potential minimum, x = v + 1/2:
  f(v) = sqrt(C_u/mu) * int_{vmin}^{v} dv' / sqrt(G(v) - G(v'))
  g(v) = sqrt(mu/C_u) * int_{vmin}^{v} B(v') dv' / sqrt(G(v) - G(v'))
  r+- = sqrt(f^2 + f/g) +- f,  G(vmin) = 0.
Evaluated with mpmath.quad (tanh-sinh, which handles the inverse-square-root end point) at 30
digits, and G(vmin) = 0 with mpmath.findroot: independent of the Rust code (no substitution, no
divided differences). Constants: C_u from scipy.constants (CODATA 2022). SYNTHETIC constants.

Run: python3 scripts/oracles/rkr_klein.py
"""
import json
import os

import mpmath as mp
import numpy as np
import scipy.constants as sc

mp.mp.dps = 30
C_U = sc.h / (8 * np.pi**2 * sc.c * sc.atomic_mass * 1e-20) / 100.0

CASES = [
    {"name": "anharmonic with weye and gammae (SYNTHETIC)",
     "g_cm1": [0.0, 1000.0, -10.0, 0.05], "b_cm1": [0.42, -0.003, 1.0e-5], "mu_u": 10.0,
     "v": [0.0, 1.0, 5.0, 10.0, 20.0, 30.0]},
    {"name": "with Y00 (SYNTHETIC)",
     "g_cm1": [1.5, 250.0, -1.2, -0.004], "b_cm1": [0.11, -0.0008], "mu_u": 30.0,
     "v": [0.0, 3.0, 12.0, 25.0]},
]


def poly(c, x):
    return sum(mp.mpf(ci) * x**k for k, ci in enumerate(c))


def main():
    out_cases = []
    for case in CASES:
        g = lambda x: poly(case["g_cm1"], x)
        b = lambda x: poly(case["b_cm1"], x)
        x0 = mp.findroot(g, -mp.mpf(case["g_cm1"][0]) / case["g_cm1"][1])
        mu = mp.mpf(case["mu_u"])
        cu = mp.mpf(C_U)
        pts = []
        for v in case["v"]:
            x = mp.mpf(v) + mp.mpf(1) / 2
            gx = g(x)
            i_f = mp.quad(lambda y: 1 / mp.sqrt(gx - g(y)), [x0, x])
            i_g = mp.quad(lambda y: b(y) / mp.sqrt(gx - g(y)), [x0, x])
            f = mp.sqrt(cu / mu) * i_f
            gg = mp.sqrt(mu / cu) * i_g
            root = mp.sqrt(f * f + f / gg)
            pts.append({"v": v, "energy_cm1": float(gx), "f_angstrom": float(f),
                        "g_per_angstrom": float(gg), "r_inner_angstrom": float(root - f),
                        "r_outer_angstrom": float(root + f)})
        out_cases.append({**case, "v_min": float(x0 - mp.mpf(1) / 2), "points": pts})
    out = {"SOURCE": "scripts/oracles/rkr_klein.py (mpmath.quad tanh-sinh, 30 digits; C_u CODATA 2022 via scipy.constants)",
           "c_u_cm1_u_a2": C_U, "cases": out_cases}
    path = os.path.join(os.path.dirname(__file__), "..", "..", "tests", "potential", "rkr_klein.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")
    print("wrote", os.path.normpath(path))


if __name__ == "__main__":
    main()
