#!/usr/bin/env python3
"""Oracle: exact bound levels (J = 0) of SYNTHETIC potentials for the D0 coverage benchmark.

Writes tests/coverage/<name>.json. All potentials and parameters are SYNTHETIC, invented for this
project (not fitted to any molecule). Energies go to 0 at r -> infinity.

Method: Colbert & Miller sinc-DVR on a uniform grid (J. Chem. Phys. 96, 1982 (1992)), dense
scipy.linalg.eigh; convergence = |difference| between two runs with different step and box.
C_u = h/(8 pi^2 c u A^2) from scipy.constants (CODATA 2022 in SciPy >= 1.15).
Morse cross-check: full-line closed form G(v) = we(v+1/2) - wexe(v+1/2)^2.
Tang-Toennies damping f_n(x) = 1 - exp(-x) sum_{k<=n} x^k/k! (Tang & Toennies, J. Chem. Phys. 80,
3726 (1984), from memory), computed as the regularised lower incomplete gamma P(n+1, x).

Run: python3 scripts/oracles/coverage_levels.py   (numpy, scipy)
"""
import json
import os
import platform
import time

import numpy as np
import scipy
import scipy.constants as sc
import scipy.linalg as sl
import scipy.optimize as so
import scipy.special as ss

C_U = sc.h / (8 * np.pi**2 * sc.c * sc.atomic_mass * 1e-20) / 100.0  # cm^-1 u A^2
OUT = os.path.join(os.path.dirname(__file__), "..", "..", "tests", "coverage")


def dvr(v, mu, r_lo, r_hi, dx):
    n = int(round((r_hi - r_lo) / dx)) + 1
    r = r_lo + dx * np.arange(n)
    i = np.arange(n)
    d = i[:, None] - i[None, :]
    with np.errstate(divide="ignore"):
        t = (C_U / (mu * dx * dx)) * np.where(
            d == 0, np.pi**2 / 3.0, 2.0 * (-1.0) ** d / np.where(d == 0, 1, d) ** 2)
    return sl.eigh(t + np.diag(v(r)), eigvals_only=True, subset_by_value=(-np.inf, 0.0), driver="evr")


# 1. Morse (SYNTHETIC): we = 520, wexe = 4.9 cm^-1, mu = 8 u, re = 2.2 A.
MO = {"we_cm1": 520.0, "wexe_cm1": 4.9, "re_angstrom": 2.2}
MO_MU = 8.0
MO["de_cm1"] = MO["we_cm1"] ** 2 / (4 * MO["wexe_cm1"])
MO["a_per_angstrom"] = float(np.sqrt(MO["wexe_cm1"] * MO_MU / C_U))


def v_morse(r):
    return MO["de_cm1"] * ((1 - np.exp(-MO["a_per_angstrom"] * (r - MO["re_angstrom"]))) ** 2 - 1)


# 2. dispersion_deep (SYNTHETIC): Born-Mayer + Tang-Toennies-damped C6, C8, C10; A set for depth 4500.
DD = {"b_per_angstrom": 3.0, "c6_cm1_a6": 1.0e7, "c8_cm1_a8": 2.0e8, "c10_cm1_a10": 5.0e9}
DD_MU = 15.0


def v_tt(r, a, p):
    x = p["b_per_angstrom"] * r
    att = sum(ss.gammainc(n + 1, x) * p[f"c{n}_cm1_a{n}"] / r**n for n in (6, 8, 10))
    return a * np.exp(-x) - att


def depth_of(a, p):
    res = so.minimize_scalar(lambda r: v_tt(r, a, p), bounds=(1.5, 10.0), method="bounded",
                             options={"xatol": 1e-10})
    return -res.fun, res.x


DD["a_cm1"] = float(so.brentq(lambda a: depth_of(a, DD)[0] - 4500.0, 1e6, 1e12, xtol=1e-6, rtol=1e-14))


def v_damped(r, a, p, ns):
    """A exp(-b r) - sum_n f_n(b r) C_n / r^n with Tang-Toennies damping f_n."""
    x = p["b_per_angstrom"] * r
    att = sum(ss.gammainc(n + 1, x) * p[f"c{n}_cm1_a{n}"] / r**n for n in ns)
    return a * np.exp(-x) - att


def depth_of_damped(a, p, ns, r_lo):
    res = so.minimize_scalar(lambda r: v_damped(r, a, p, ns), bounds=(r_lo, r_lo + 8.0),
                             method="bounded", options={"xatol": 1e-10})
    return -res.fun


def set_depth(p, ns, depth, r_lo):
    p["a_cm1"] = float(so.brentq(lambda a: depth_of_damped(a, p, ns, r_lo) - depth, 1e4, 1e14,
                                 xtol=1e-6, rtol=1e-14))


# 3. ion_c4 (SYNTHETIC): Born-Mayer + damped C4 (charge-induced dipole) and C6, depth 2500.
IC = {"b_per_angstrom": 3.2, "c4_cm1_a4": 8.0e4, "c6_cm1_a6": 3.0e5}
IC_MU = 6.0
set_depth(IC, (4, 6), 2500.0, 1.0)

# 4. resonant_c3 (SYNTHETIC): Born-Mayer + damped C3 (resonant dipole) and C6, depth 3000.
RC = {"b_per_angstrom": 2.6, "c3_cm1_a3": 1.5e5, "c6_cm1_a6": 2.0e6}
RC_MU = 10.0
set_depth(RC, (3, 6), 3000.0, 1.0)

# 5. valence_deep (SYNTHETIC): extended Rydberg well -De (1 + a1 p + a2 p^2 + a3 p^3) exp(-a1 p),
# p = r - re, plus a Tang-Toennies-damped C6 tail, so the long range is -C6/r^6.
VD = {"de_ryd_cm1": 20000.0, "re_angstrom": 1.6, "a1_per_angstrom": 3.0, "a2_per_angstrom2": 2.0,
      "a3_per_angstrom3": 0.5, "b_per_angstrom": 2.0, "c6_cm1_a6": 1.0e6}
VD_MU = 7.0


def v_valence(r):
    p = r - VD["re_angstrom"]
    poly = 1 + VD["a1_per_angstrom"] * p + VD["a2_per_angstrom2"] * p**2 + VD["a3_per_angstrom3"] * p**3
    ryd = -VD["de_ryd_cm1"] * poly * np.exp(-VD["a1_per_angstrom"] * p)
    return ryd - ss.gammainc(7, VD["b_per_angstrom"] * r) * VD["c6_cm1_a6"] / r**6


def box_for(vfun, mu, n, cn, r_lo, dx, r_hi0):
    """Outer edge for two converged runs: a first run on [r_lo, r_hi0] gives the last level's
    binding eps; the box reaches its outer turning point (cn/eps)^(1/n) plus 14 decay lengths
    1/kappa, kappa = sqrt(eps mu / C_u) (the wavefunction is below 1e-6 there)."""
    w = dvr(vfun, mu, r_lo, r_hi0, dx)
    eps = -w[-1]
    r_t = (cn / eps) ** (1.0 / n)
    return max(r_hi0, r_t + 14.0 / np.sqrt(eps * mu / C_U))


def write(name, cls, pot, mu, n, cn, vfun, r_min, grids, extra=None):
    t0 = time.perf_counter()
    res = so.minimize_scalar(vfun, bounds=(r_min, r_min + 6.0), method="bounded", options={"xatol": 1e-10})
    de = -float(res.fun)
    w1 = dvr(vfun, mu, *grids[0])
    w2 = dvr(vfun, mu, *grids[1])
    m = min(len(w1), len(w2))
    levels = [{"v": v, "term_cm1": float(w2[v] - w2[0]), "binding_cm1": float(-w2[v]),
               "convergence_cm1": float(abs(w1[v] - w2[v])) if v < m else None} for v in range(len(w2))]
    out = {
        "SOURCE": f"scripts/oracles/coverage_levels.py: uniform sinc-DVR (Colbert-Miller 1992) with "
                  f"scipy.linalg.eigh, SYNTHETIC {name} potential, C_u from scipy.constants (CODATA 2022)",
        "name": name, "class": cls, "synthetic": True, "potential": pot, "mu_u": mu,
        "long_range": {"n": n, "cn_cm1_an": cn}, "de_cm1": de, "d0_cm1": float(-w2[0]),
        "bound_levels": len(w2), "levels": levels,
        "solver": {"method": "uniform sinc-DVR", "runs_r_lo_r_hi_dx_angstrom": grids,
                   "count_run1": len(w1), "count_run2": len(w2)},
        "environment": {"python": platform.python_version(), "numpy": np.__version__, "scipy": scipy.__version__},
    }
    if extra:
        out.update(extra(w2))
    with open(os.path.join(OUT, f"{name}.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    conv = [l["convergence_cm1"] for l in levels if l["convergence_cm1"] is not None]
    print(f"{name}: {len(w2)} levels (run1 {len(w1)}), D0 {-w2[0]:.6f}, last binding {-w2[-1]:.6g}, "
          f"worst convergence {max(conv):.2e}, {time.perf_counter() - t0:.1f} s")


def morse_extra(w):
    v = np.arange(len(w)) + 0.5
    exact = -MO["de_cm1"] + MO["we_cm1"] * v - MO["wexe_cm1"] * v**2
    dev = float(np.max(np.abs(w - exact)))
    print(f"morse: max deviation from closed form {dev:.2e} cm^-1")
    return {"closed_form_check": {"source": "Morse full-line closed form G(v) = we(v+1/2) - wexe(v+1/2)^2",
                                  "max_abs_deviation_cm1": dev}}


def main():
    t0 = time.perf_counter()
    write("morse", "Morse, exponential tail",
          {"form": "De*((1 - exp(-a (r - re)))^2 - 1)", **MO}, MO_MU, None, None, v_morse, 1.5,
          [(1.4, 14.0, 0.012), (1.3, 17.0, 0.009)], morse_extra)
    write("dispersion_deep", "dispersion C6+C8+C10 tail, deep",
          {"form": "A exp(-b r) - sum_{n=6,8,10} f_n(b r) C_n/r^n, f_n Tang-Toennies damping", **DD},
          DD_MU, 6, DD["c6_cm1_a6"], lambda r: v_tt(r, DD["a_cm1"], DD), 2.0,
          [(1.8, 60.0, 0.02), (1.7, 75.0, 0.016)])
    for name, cls, pot, mu, n, cn, vfun, r_lo, dx in (
        ("ion_c4", "ion-like C4 tail", {"form": "A exp(-b r) - sum_{n=4,6} f_n(b r) C_n/r^n", **IC},
         IC_MU, 4, IC["c4_cm1_a4"], lambda r: v_damped(r, IC["a_cm1"], IC, (4, 6)), 1.0, 0.02),
        ("resonant_c3", "resonant-dipole C3 tail", {"form": "A exp(-b r) - sum_{n=3,6} f_n(b r) C_n/r^n", **RC},
         RC_MU, 3, RC["c3_cm1_a3"], lambda r: v_damped(r, RC["a_cm1"], RC, (3, 6)), 1.0, 0.02),
        ("valence_deep", "deep valence well, C6 tail",
         {"form": "-De (1 + a1 p + a2 p^2 + a3 p^3) exp(-a1 p) - f_6(b r) C6/r^6, p = r - re", **VD},
         VD_MU, 6, VD["c6_cm1_a6"], v_valence, 0.9, 0.012),
    ):
        r_hi = box_for(vfun, mu, n, cn, r_lo, 1.5 * dx, 40.0)
        write(name, cls, pot, mu, n, cn, vfun, r_lo + 0.4,
              [(r_lo, r_hi, dx), (r_lo - 0.05, 1.2 * r_hi, 0.8 * dx)])
    print(f"total {time.perf_counter() - t0:.1f} s")


if __name__ == "__main__":
    main()
