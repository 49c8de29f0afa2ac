#!/usr/bin/env python3
"""Oracle fixtures for the band-position analysis (Deslandres arrays, term values, global fit,
numbering, isotopologues).

Every expected number written here comes from closed forms (Morse oscillator levels, domain.md
§2.1; the Morse constants of a given potential and mass, §1.8), from numpy least squares, from
periodictable masses, or from the handbook values quoted in domain.md §3.1 — never from Rungs.
All molecules and constants invented here are SYNTHETIC.

Regenerate (a second or two):

    python3 scripts/oracles/bands.py

Writes tests/bands/*.json. Needs numpy, scipy (CODATA 2022 constants) and periodictable.
"""

import json
import math
import os

import numpy as np
import periodictable
import scipy
import scipy.constants as sc
from scipy.optimize import minimize_scalar

ROOT = os.path.normpath(os.path.join(os.path.dirname(__file__), "..", ".."))
OUT = os.path.join(ROOT, "tests", "bands")

U_KG = sc.physical_constants["atomic mass constant"][0]
C_U = sc.h / (8 * math.pi**2 * sc.c * 100.0 * U_KG * 1e-20)  # cm^-1 u A^2 (domain.md §0)

META = {
    "generator": "scripts/oracles/bands.py",
    "numpy": np.__version__,
    "scipy": scipy.__version__,
    "periodictable": periodictable.__version__,
    "c_u_cm1_u_a2": C_U,
}


def write(name, payload):
    os.makedirs(OUT, exist_ok=True)
    with open(os.path.join(OUT, name), "w") as f:
        json.dump({"meta": META, **payload}, f, indent=1)
        f.write("\n")
    print("wrote", name)


def g_morse(we, wexe, v):
    """Closed-form Morse term value above the minimum (domain.md §2.1)."""
    x = v + 0.5
    return we * x - wexe * x * x


def mu(a, b):
    return a * b / (a + b)


# ---------------------------------------------------------------------------------------------
# 1. Two-state Morse bands with Gaussian noise, many seeds (SYNTHETIC constants).
# ---------------------------------------------------------------------------------------------
LOWER = {"we": 1580.0, "wexe": 12.0}
UPPER = {"te": 49000.0, "we": 710.0, "wexe": 10.5}
SIGMA = 0.05
CELLS = [(vu, vl) for vu in range(0, 13) for vl in range(0, 7) if (vu + 2 * vl) % 5 != 3]


def nu_true(vu, vl, upper=UPPER, lower=LOWER):
    return upper["te"] + g_morse(upper["we"], upper["wexe"], vu) - g_morse(lower["we"], lower["wexe"], vl)


def two_state():
    exact = [nu_true(vu, vl) for vu, vl in CELLS]
    seeds = []
    for seed in range(60):
        rng = np.random.default_rng(seed)
        noisy = np.array(exact) + rng.normal(0.0, SIGMA, len(exact))
        seeds.append([float(x) for x in noisy])
    d0 = lambda we, wexe: (we - wexe) ** 2 / (4 * wexe)  # Morse D0 from v = 0 (domain.md §1.8)
    t00 = nu_true(0, 0)
    # numpy oracle for the term-value fit of seed 0: nu = T'(v') - T''(v''), T''(0) = 0.
    ups = sorted({c[0] for c in CELLS})
    lows = sorted({c[1] for c in CELLS})
    X = np.zeros((len(CELLS), len(ups) + len(lows) - 1))
    for r, (vu, vl) in enumerate(CELLS):
        X[r, ups.index(vu)] = 1.0
        if vl != lows[0]:
            X[r, len(ups) + lows.index(vl) - 1] = -1.0
    w = 1.0 / SIGMA**2
    y = np.array(seeds[0])
    cov = np.linalg.inv(X.T @ X * w)
    theta = cov @ (X.T @ y * w)
    chi2 = float(((y - X @ theta) ** 2).sum() * w)
    # numpy oracle for the global fit of seed 0 at orders (2, 2):
    # nu = T00 + [P'(x') - P'(1/2)] - [P''(x'') - P''(1/2)], P(x) = Y1 x + Y2 x^2, x = v + 1/2.
    G = np.array([[1.0, (vu + 0.5) - 0.5, (vu + 0.5) ** 2 - 0.25, -((vl + 0.5) - 0.5), -((vl + 0.5) ** 2 - 0.25)]
                  for vu, vl in CELLS])
    gcov = np.linalg.inv(G.T @ G * w)
    beta = gcov @ (G.T @ y * w)
    gchi2 = float(((y - G @ beta) ** 2).sum() * w)
    # Te = T00 - G'(0) + G''(0) with G(0) = Y1/2 + Y2/4: a linear combination of beta.
    gte = np.array([1.0, -0.5, -0.25, 0.5, 0.25])
    write("morse_two_state.json", {
        "source": "closed-form Morse term values (domain.md §2.1) of invented constants; Gaussian noise numpy default_rng(seed).normal(0, sigma), seeds 0..59; SYNTHETIC",
        "lower": LOWER, "upper": UPPER, "sigma_cm1": SIGMA,
        "cells": CELLS,
        "exact_cm1": exact,
        "noisy_cm1": seeds,
        "expected": {
            "t00_cm1": t00,
            "te_cm1": UPPER["te"],
            "d0_upper_cm1": d0(UPPER["we"], UPPER["wexe"]),
            "d0_lower_cm1": d0(LOWER["we"], LOWER["wexe"]),
            "zero_point_upper_cm1": g_morse(UPPER["we"], UPPER["wexe"], 0),
            "zero_point_lower_cm1": g_morse(LOWER["we"], LOWER["wexe"], 0),
            "upper_limit_cm1": t00 + d0(UPPER["we"], UPPER["wexe"]),
        },
        "misassigned": {
            "source": "seed-0 data with one cell shifted by +3.0 cm^-1 (60 sigma), as a typo would",
            "cell": [5, 2],
            "shift_cm1": 3.0,
        },
        "numpy_seed0": {
            "source": "numpy.linalg.inv(X^T W X) and its normal-equation solution, W = 1/sigma^2",
            "upper_v": ups, "lower_v": lows,
            "terms_cm1": [float(t) for t in theta],
            "terms_sigma_cm1": [float(math.sqrt(cov[i, i])) for i in range(len(theta))],
            "terms_cov_01": float(cov[0, 1]),
            "terms_chi2": chi2,
            "global_we_upper": float(beta[1]), "global_wexe_upper": float(-beta[2]),
            "global_we_lower": float(beta[3]), "global_wexe_lower": float(-beta[4]),
            "global_sigma_we_upper": float(math.sqrt(gcov[1, 1])),
            "global_sigma_wexe_lower": float(math.sqrt(gcov[4, 4])),
            "global_t00": float(beta[0]), "global_sigma_t00": float(math.sqrt(gcov[0, 0])),
            "global_te": float(gte @ beta), "global_sigma_te": float(math.sqrt(gte @ gcov @ gte)),
            "global_chi2": gchi2,
        },
    })


# ---------------------------------------------------------------------------------------------
# 2. Isotope shifts: closed-form Morse levels of one potential for two masses (domain.md §1.8:
#    wexe = a^2 C_u / mu, we = 2 sqrt(De wexe)); SYNTHETIC potential, real masses.
# ---------------------------------------------------------------------------------------------
def morse_constants(de, a, m):
    wexe = a * a * C_U / m
    return 2.0 * math.sqrt(de * wexe), wexe


def isotope_shifts():
    m1 = mu(periodictable.C[12].mass, periodictable.O[16].mass)
    m2 = mu(periodictable.C[13].mass, periodictable.O[18].mass)
    lower = {"de": 90000.0, "a": 2.3}
    upper = {"te": 65000.0, "de": 25000.0, "a": 1.9}
    cases = []
    for tag, m in (("12C-16O", m1), ("13C-18O", m2)):
        weu, wexeu = morse_constants(upper["de"], upper["a"], m)
        wel, wexel = morse_constants(lower["de"], lower["a"], m)
        cases.append({"tag": tag, "mu_u": m, "we_upper": weu, "wexe_upper": wexeu, "we_lower": wel, "wexe_lower": wexel})
    grid = [(vu, vl) for vu in (0, 1, 4, 9, 17) for vl in (0, 2, 7)]

    def nu(c, vu, vl):
        return upper["te"] + g_morse(c["we_upper"], c["wexe_upper"], vu) - g_morse(c["we_lower"], c["wexe_lower"], vl)

    shifts = [{"v_upper": vu, "v_lower": vl, "shift_cm1": nu(cases[1], vu, vl) - nu(cases[0], vu, vl)} for vu, vl in grid]
    write("isotope_shift.json", {
        "source": "closed-form Morse levels of one invented potential (domain.md §1.8, §2.1) for the reduced masses of 12C16O and 13C18O from periodictable; the shift is the difference of the two closed forms (SYNTHETIC potential)",
        "potential": {"lower": lower, "upper": upper},
        "isotopologues": cases,
        "rho": math.sqrt(m1 / m2),
        "shifts": shifts,
    })


# ---------------------------------------------------------------------------------------------
# 3. Handbook isotopologue pairs (domain.md §3.1).
# ---------------------------------------------------------------------------------------------
def handbook():
    pairs = [
        {
            "name": "H2 -> HT", "reference": "1H-1H", "other": "1H-3H",
            "reference_constants": {"we": 4401.21, "be": 60.853},
            "other_constants": {"we": 3597.05, "be": 40.595},
            "source": "Huber & Herzberg (1979) via domain.md §3.1: H2 ωe, Be [M]; HT ωe, Be [V-src]",
        },
        {
            "name": "H35Cl -> D35Cl", "reference": "1H-35Cl", "other": "2H-35Cl",
            "reference_constants": {"we": 2990.946},
            "other_constants": {"we": 2145.16},
            "source": "Huber & Herzberg (1979) via domain.md §3.1: HCl ωe [M], DCl ωe 2145.16 [M]",
        },
    ]
    for p in pairs:
        (a1, b1), (a2, b2) = [tuple(t.split("-")) for t in (p["reference"], p["other"])]

        def m(label):
            n = int("".join(c for c in label if c.isdigit()))
            sym = "".join(c for c in label if c.isalpha())
            return getattr(periodictable, sym)[n].mass

        p["rho_periodictable"] = math.sqrt(mu(m(a1), m(b1)) / mu(m(a2), m(b2)))
    write("handbook_isotopes.json", {
        "tolerance_relative": 1e-3,
        "tolerance_source": "domain.md §3.1: use 0.1 % for hydrides (Born–Oppenheimer breakdown and definition effects)",
        "pairs": pairs,
    })


# ---------------------------------------------------------------------------------------------
# 4. Numbering: two isotopologues with the upper numbering given two units too low.
# ---------------------------------------------------------------------------------------------
def numbering():
    iso = [
        {"tag": "iso-a", "a": "10.0", "b": "10.0"},
        {"tag": "iso-b", "a": "10.0", "b": "11.0"},
    ]
    mus = [mu(float(i["a"]), float(i["b"])) for i in iso]
    rhos = [math.sqrt(mus[0] / m) for m in mus]
    lower = {"we": 1200.0, "wexe": 9.0}
    upper = {"te": 30000.0, "we": 800.0, "wexe": 7.0}
    true_offset = 2  # v'_true = v'_file + 2
    sigma = 0.02
    rng = np.random.default_rng(7)
    rows = []
    for tag, rho in zip([i["tag"] for i in iso], rhos):
        for vf in range(0, 9):
            for vl in range(0, 4):
                vu = vf + true_offset
                x = upper["te"] + g_morse(upper["we"] * rho, upper["wexe"] * rho**2, vu) \
                    - g_morse(lower["we"] * rho, lower["wexe"] * rho**2, vl)
                rows.append({"tag": tag, "rho": rho, "v_upper": vf, "v_lower": vl,
                             "position_cm1": float(x + rng.normal(0.0, sigma))})
    # numpy chi2 of the joint fit at orders (2, 2) for each trial offset.
    chi2 = {}
    for k in range(-3, 4):
        if k < 0:
            continue  # v' = 0 in the file: negative offsets are impossible
        G = []
        y = []
        for r in rows:
            xu = r["rho"] * (r["v_upper"] + k + 0.5)
            xl = r["rho"] * (r["v_lower"] + 0.5)
            G.append([1.0, xu - 0.5, xu**2 - 0.25, -(xl - 0.5), -(xl**2 - 0.25)])
            y.append(r["position_cm1"])
        G = np.array(G) / sigma
        y = np.array(y) / sigma
        beta, *_ = np.linalg.lstsq(G, y, rcond=None)
        chi2[str(k)] = float(((y - G @ beta) ** 2).sum())
    write("numbering.json", {
        "source": "closed-form Morse levels with mass-scaled constants (ωe ρ, ωexe ρ², common Te; domain.md §1.11) of invented constants and invented masses, file v' = true v' - 2; noise numpy default_rng(7).normal(0, sigma); χ² per offset from numpy.linalg.lstsq of the same model; SYNTHETIC",
        "isotopologues": iso,
        "rho": rhos,
        "lower": lower, "upper": upper,
        "true_offset": true_offset,
        "sigma_cm1": sigma,
        "rows": rows,
        "numpy_chi2_by_offset": chi2,
    })
    # Prediction: exact bands of iso-a in the true numbering; closed-form iso-b bands and levels.
    ref_rows = []
    for vu in range(0, 11):
        for vl in range(0, 5):
            x = upper["te"] + g_morse(upper["we"], upper["wexe"], vu) - g_morse(lower["we"], lower["wexe"], vl)
            ref_rows.append({"v_upper": vu, "v_lower": vl, "position_cm1": x})
    rb = rhos[1]
    other = [{"v_upper": vu, "v_lower": vl,
              "position_cm1": upper["te"] + g_morse(upper["we"] * rb, upper["wexe"] * rb**2, vu)
              - g_morse(lower["we"] * rb, lower["wexe"] * rb**2, vl)}
             for vu, vl in [(0, 0), (3, 1), (7, 4), (10, 0)]]
    write("prediction.json", {
        "source": "closed-form Morse levels with mass-scaled constants (domain.md §1.11, §2.1) of the invented constants of numbering.json; SYNTHETIC",
        "reference": iso[0], "other": iso[1],
        "reference_rows": ref_rows,
        "other_bands": other,
        "other_levels_upper": [{"v": v, "energy_cm1": g_morse(upper["we"] * rb, upper["wexe"] * rb**2, v)} for v in (0, 5, 10)],
        "other_levels_lower": [{"v": v, "energy_cm1": g_morse(lower["we"] * rb, lower["wexe"] * rb**2, v)} for v in (0, 2, 4)],
        "other_t00_cm1": upper["te"] + g_morse(upper["we"] * rb, upper["wexe"] * rb**2, 0) - g_morse(lower["we"] * rb, lower["wexe"] * rb**2, 0),
    })


# ---------------------------------------------------------------------------------------------
# 5. Band heads: the turning point of each band's branch found numerically (scipy bounded
#    minimisation of the line position over continuous m), for the noise-free Morse bands.
# ---------------------------------------------------------------------------------------------
def heads():
    rot = {"upper": {"be_cm1": 0.82, "alpha_e_cm1": 0.012}, "lower": {"be_cm1": 1.44, "alpha_e_cm1": 0.016}}
    rows = []
    for vu, vl in CELLS:
        bu = rot["upper"]["be_cm1"] - rot["upper"]["alpha_e_cm1"] * (vu + 0.5)
        bl = rot["lower"]["be_cm1"] - rot["lower"]["alpha_e_cm1"] * (vl + 0.5)
        origin = nu_true(vu, vl)
        line = lambda m: origin + (bu + bl) * m + (bu - bl) * m * m  # domain.md §1.2
        if bu < bl:  # R head: a maximum at m > 0
            res = minimize_scalar(lambda m: -line(m), bounds=(0.0, 1000.0), method="bounded",
                                  options={"xatol": 1e-10})
        else:
            res = minimize_scalar(line, bounds=(-1000.0, 0.0), method="bounded", options={"xatol": 1e-10})
        rows.append({"v_upper": vu, "v_lower": vl, "head_cm1": float(line(res.x)), "origin_cm1": origin,
                     "side": "r" if bu < bl else "p"})
    write("heads.json", {
        "source": "band heads as the turning point of ν(m) = ν0 + (B′+B″)m + (B′−B″)m² (domain.md §1.2), located by scipy.optimize.minimize_scalar (bounded, xatol 1e-10) for the noise-free bands of morse_two_state.json and invented B_v = Be − αe(v+½); SYNTHETIC",
        "rotation": rot,
        "rows": rows,
    })


if __name__ == "__main__":
    two_state()
    isotope_shifts()
    handbook()
    numbering()
    heads()
