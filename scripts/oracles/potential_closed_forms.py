#!/usr/bin/env python3
"""Oracle: closed-form answers for the potential module, written to tests/potential/closed_forms.json.

Every number here comes from a formula outside Rungs, evaluated with numpy/scipy (CODATA 2022
constants from scipy.constants):
- Morse levels G(v) = we(v+1/2) - wexe(v+1/2)^2 (domain.md 2.1, vectors A and B) and Morse
  turning-point half-widths f = artanh(sqrt(G/De))/a (domain.md 2.2), a = sqrt(mu*wexe/C_u)
  (domain.md 1.8);
- harmonic levels we(v+1/2) and RKR half-widths f = 2 sqrt(C_u (v+1/2)/(mu we)) (domain.md 2.3);
- Lennard-Jones (12,6) regression values quoted in domain.md 2.4(b) (copied, not computed).

Run: python3 scripts/oracles/potential_closed_forms.py
"""
import json
import os

import numpy as np
import scipy.constants as sc

C_U = sc.h / (8 * np.pi**2 * sc.c * sc.atomic_mass * 1e-20) / 100.0  # cm^-1 u A^2


def morse_case(name, we, wexe, mu, re, source):
    de = we * we / (4 * wexe)
    a = np.sqrt(mu * wexe / C_U)
    vd = we / (2 * wexe) - 0.5
    n = int(np.floor(vd)) + 1
    x = np.arange(n) + 0.5
    g = we * x - wexe * x * x
    f = np.arctanh(np.sqrt(g / de)) / a
    return {
        "name": name, "SOURCE": source, "we_cm1": we, "wexe_cm1": wexe, "mu_u": mu,
        "re_angstrom": re, "de_cm1": de, "a_per_angstrom": a, "level_count": n,
        "levels_cm1": g.tolist(), "half_widths_angstrom": f.tolist(),
    }


def main():
    out = {
        "SOURCE": "scripts/oracles/potential_closed_forms.py (numpy, scipy.constants CODATA 2022)",
        "c_u_cm1_u_a2": C_U,
        "morse": [
            morse_case("vector A", 1000.0, 10.0, 10.0, 2.0,
                       "domain.md 2.1 vector A (we, wexe, mu); re = 2 A chosen here (a*re = 4.9)"),
            morse_case("vector B (H2-like)", 4401.21, 121.33, 0.503912516, 0.7414,
                       "domain.md 2.1 vector B; re = 0.7414 A (H2, from memory)"),
        ],
        "harmonic": {
            "SOURCE": "domain.md 2.3: levels we(v+1/2); RKR f = 2 sqrt(C_u (v+1/2)/(mu we)), r+ r- = re^2 for constant B",
            "we_cm1": 1000.0, "mu_u": 10.0, "re_angstrom": 3.0, "energy_max_cm1": 15000.0,
            "levels_cm1": [1000.0 * (v + 0.5) for v in range(15)],
            "rkr_v": [0.0, 1.0, 2.5, 7.0, 14.0],
            "rkr_half_widths_angstrom": [2 * np.sqrt(C_U * (v + 0.5) / (10.0 * 1000.0)) for v in [0.0, 1.0, 2.5, 7.0, 14.0]],
        },
        "lennard_jones_regression": {
            "SOURCE": "domain.md 2.4(b) (sinc-DVR r 2.8-70 A, 5000 points, computed there); values quoted to 4 decimals",
            "de_cm1": 500.0, "re_angstrom": 4.0, "mu_u": 20.0, "level_count": 23,
            "g0_cm1": 30.2425, "d0_cm1": 469.757,
            "top_levels_cm1": {"19": 497.7182, "20": 499.1026, "21": 499.7713},
        },
    }
    path = os.path.join(os.path.dirname(__file__), "..", "..", "tests", "potential", "closed_forms.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print("wrote", os.path.normpath(path))


if __name__ == "__main__":
    main()
