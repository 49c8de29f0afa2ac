#!/usr/bin/env python3
"""Oracle: Franck-Condon factors of displaced harmonic oscillators, written to tests/potential/fcf_harmonic.json.

Equal frequencies w, displacement d, reduced mass mu: with S = mu w d^2/(4 C_u) (the Huang-Rhys
factor; gamma = mu w/(2 C_u) is the Gaussian exponent of the ground state), for v' >= v''
  |<v'|v''>|^2 = exp(-S) S^(v'-v'') (v''!/v'!) [L_{v''}^{(v'-v'')}(S)]^2
(generalised Laguerre polynomials; standard displaced-oscillator result, e.g. textbooks of
molecular spectroscopy; from memory), symmetric in v', v''. For v'' = 0 it is the Poisson
distribution exp(-S) S^v'/v'!. Unequal frequencies, ground states only:
  |<0'|0''>|^2 = 2 sqrt(g1 g2)/(g1 + g2) * exp(-g1 g2 d^2/(g1 + g2))  (Gaussian overlap).
Evaluated with scipy.special.eval_genlaguerre; C_u from scipy.constants (CODATA 2022).

Run: python3 scripts/oracles/fcf_harmonic.py
"""
import json
import math
import os

import numpy as np
import scipy.constants as sc
from scipy.special import eval_genlaguerre

C_U = sc.h / (8 * np.pi**2 * sc.c * sc.atomic_mass * 1e-20) / 100.0


def fcf(vp, vpp, s):
    if vp < vpp:
        vp, vpp = vpp, vp
    k = vp - vpp
    return math.exp(-s) * s**k * math.factorial(vpp) / math.factorial(vp) * eval_genlaguerre(vpp, k, s) ** 2


def main():
    mu, we, re_lower, re_upper = 10.0, 1000.0, 3.0, 3.1
    d = re_upper - re_lower
    s = mu * we * d * d / (4 * C_U)
    n = 8
    table = [[fcf(vp, vpp, s) for vpp in range(n)] for vp in range(n)]
    w1, w2 = 1000.0, 700.0
    g1, g2 = mu * w1 / (2 * C_U), mu * w2 / (2 * C_U)
    d2 = 0.08
    ground = 2 * math.sqrt(g1 * g2) / (g1 + g2) * math.exp(-g1 * g2 * d2 * d2 / (g1 + g2))
    out = {
        "SOURCE": "scripts/oracles/fcf_harmonic.py (displaced-oscillator closed forms; scipy.special.eval_genlaguerre; C_u CODATA 2022)",
        "equal_frequencies": {"mu_u": mu, "we_cm1": we, "re_lower_angstrom": re_lower,
                              "re_upper_angstrom": re_upper, "huang_rhys_s": s,
                              "factors_upper_lower": table},
        "unequal_ground": {"mu_u": mu, "we_upper_cm1": w1, "we_lower_cm1": w2,
                           "re_lower_angstrom": re_lower, "re_upper_angstrom": re_lower + d2,
                           "factor_00": ground},
    }
    path = os.path.join(os.path.dirname(__file__), "..", "..", "tests", "potential", "fcf_harmonic.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")
    print("wrote", os.path.normpath(path), "S =", s)


if __name__ == "__main__":
    main()
