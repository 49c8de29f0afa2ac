#!/usr/bin/env python3
"""The NumPy/SciPy notebook a practitioner would otherwise write, run on the benchmark problems of
scripts/bench beside Rungs, with agreement checks: a speed figure only counts when both sides give
the same answer, so any disagreement beyond the stated tolerances fails loudly (exit status 1).

The reference side is written the way a careful scientist writes a notebook, with plain NumPy and
SciPy (no pandas): numpy.loadtxt for the table; numpy.polynomial.Polynomial.fit for the weighted
G(v) fits and nested F-tests with scipy.stats.f; scipy.optimize.curve_fit for the LeRoy-Bernstein
near-dissociation fits and again for EACH of the 2000 Monte Carlo redraws; a dense sinc-DVR
(Colbert & Miller 1992) diagonalised by scipy.linalg.eigh, on the coarsest grid that matches the
accuracy Rungs' level solver delivers; RKR turning points by scipy.integrate.quad (algebraic
end-point weight for the inverse-square-root singularity of the Klein integrals).

Problems (all SYNTHETIC, shared with crates/core/benches/common/mod.rs):
  table    100 000-row generated band table (written here, read by both sides)
  analysis the page's demo data set, Qz2 levels v = 0..38 (crates/core/data/demo/qz2-levels.csv)
  solver   all 40 levels of the Lennard-Jones (12,6) well of scripts/oracles/lj_dvr.py
  rkr      turning points to v = 40 of we = 1000, wexe = 10, Be = 0.42, ae = 0.003 cm-1, mu = 10 u

Usage (scripts/bench runs it):
  bench_reference.py write-table PATH
  bench_reference.py compare --rust VALUES.json --criterion DIR [--page PAGE.json] [--out PREFIX]
"""
import argparse
import glob
import json
import math
import os
import platform
import statistics
import sys
import time
import warnings

import numpy as np
import scipy
import scipy.constants as sc
from numpy.polynomial import Polynomial
from scipy import integrate, linalg, optimize, stats

ROOT = os.path.normpath(os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
C_U = sc.h / (8 * np.pi**2 * sc.c * sc.atomic_mass * 1e-20) / 100.0  # cm-1 u A^2 (CODATA via SciPy)

TABLE_ROWS = 100_000
MC_SAMPLES = 2000
SEED = 20261201
LB_N = 6.0


def median_time(fn, repeats):
    ts = []
    out = None
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        ts.append(time.perf_counter() - t0)
    return statistics.median(ts), out


# ----------------------------------------------------------------------------------------------
# 1. The table
# ----------------------------------------------------------------------------------------------
def table_text(rows=TABLE_ROWS):
    """Same text as bands_table() in crates/core/benches/common/mod.rs (integer thousandths)."""
    out = ["# SYNTHETIC band table generated for the parsing benchmark (not a real molecule)\n",
           "v_upper,v_lower,wavenumber_cm1,sigma_cm1\n"]
    for i in range(rows):
        vu, vl = divmod(i, 1000)
        milli = 20_000_000 + 150_123 * vu - 12_345 * vl + (7919 * i) % 1000
        out.append(f"{vu},{vl},{milli // 1000}.{milli % 1000:03d},0.{i % 50 + 1:03d}\n")
    return "".join(out)


def read_table(path):
    return np.loadtxt(path, delimiter=",", skiprows=2)


# ----------------------------------------------------------------------------------------------
# 2. The full analysis (notebook version)
# ----------------------------------------------------------------------------------------------
def lb_model_fixed(p):
    def f(v, d, vd, x0):
        return d - x0 * np.clip(vd - v, 1e-12, None) ** p
    return f


def lb_model_free(v, d, vd, x0, n):
    return d - x0 * np.clip(vd - v, 1e-12, None) ** (2 * n / (n - 2))


def lb_start(v, e, sig, ns):
    """Profile scan: for each (n, v_D) on a grid, D and X0 by weighted linear least squares."""
    best = None
    deltas = 1e-4 * 10 ** (np.arange(121) / 15.0)
    w = 1 / sig
    for n in ns:
        p = 2 * n / (n - 2)
        for vd in v.max() + deltas:
            a = np.column_stack([np.ones_like(v), -(vd - v) ** p]) * w[:, None]
            coef, *_ = np.linalg.lstsq(a, e * w, rcond=None)
            chi2 = np.sum((a @ coef - e * w) ** 2)
            if coef[1] > 0 and (best is None or chi2 < best[0]):
                best = (chi2, [coef[0], vd, coef[1]] + ([n] if len(ns) > 1 else []))
    return best[1]


def first_maximum(poly, v_lo, v_hi):
    """First v > v_lo where dG/dv crosses zero downward (None when it does not, below v_hi)."""
    d1 = poly.deriv()
    if d1(v_lo) <= 0:
        return None
    roots = d1.roots()
    real = np.sort(roots[np.abs(roots.imag) < 1e-9].real)
    for r in real:
        if v_lo < r <= v_hi and poly.deriv(2)(r) < 0:
            return float(r)
    return None


def notebook_analysis(v, e, sig, mc=MC_SAMPLES, seed=SEED, n_lb=LB_N, max_order=6):
    out = {"methods": {}}
    n_pts = len(v)
    # G(v) fits of orders 1..cap and nested F-tests: the lowest order no higher order beats.
    cap = min(n_pts - 2, max_order)
    fits, chi2 = {}, {}
    for k in range(1, cap + 1):
        fits[k] = Polynomial.fit(v, e, k, w=1 / sig)
        chi2[k] = float(np.sum(((e - fits[k](v)) / sig) ** 2))
    order = cap
    for lo in range(1, cap + 1):
        beaten = False
        for hi in range(lo + 1, cap + 1):
            dof = n_pts - (hi + 1)
            f = max(0.0, ((chi2[lo] - chi2[hi]) / (hi - lo)) / (chi2[hi] / dof))
            if stats.f.sf(f, hi - lo, dof) < 0.05:
                beaten = True
                break
        if not beaten:
            order = lo
            break
    out["order"] = order
    # σ scaling, per method (scipy's absolute_sigma=False convention, floored at 1): each
    # estimate's draws are widened by √χ²_ν of its own fit; the observed sum has no fit.
    def own_scale(chi2_value, dof):
        return math.sqrt(max(chi2_value / dof, 1.0)) if dof > 0 else 1.0

    out["scale_factor"] = own_scale(chi2[order], n_pts - order - 1)
    scales = {"observed-sum": 1.0}
    v_lo, v_hi = float(v.min()), float(v.max())
    span = max(v_hi - v_lo, 1.0)
    assert v_lo == 0.0, "this notebook handles data that include v = 0"

    def e0_of(ee):
        return ee[0]

    # Nominal estimates.
    nominal = {}
    nominal["observed-sum"] = {"d0": float(e[-1] - e[0])}
    lin = fits[2]
    scales["birge-sponer-linear"] = own_scale(chi2[2], n_pts - 3)
    vd = first_maximum(lin, v_lo, np.inf)
    nominal["birge-sponer-linear"] = None if vd is None or vd < v_hi else {
        "d0": float(lin(vd) - lin(0.0)), "v_d": vd}
    k_c = max(order, 3)
    cur = fits[k_c] if k_c in fits else Polynomial.fit(v, e, k_c, w=1 / sig)
    scales["birge-sponer-curved"] = own_scale(float(np.sum(((e - cur(v)) / sig) ** 2)), n_pts - k_c - 1)
    vd = first_maximum(cur, v_lo, v_hi + max(10 * span, 10))
    nominal["birge-sponer-curved"] = None if (vd is None or vd < v_hi or vd > v_hi + span) else {
        "d0": float(cur(vd) - cur(0.0)), "v_d": vd}
    k_top = min(max(4, math.ceil(n_pts / 3)), n_pts)
    k_alt = min(n_pts, k_top + max(k_top // 2, 2)) if n_pts > k_top else k_top - 1
    lb_specs = {
        "leroy-bernstein": (k_top, False),
        "leroy-bernstein-n-free": (max(k_top, 5), True),
        "leroy-bernstein-alt-levels": (k_alt, False),
    }
    p_fixed = 2 * n_lb / (n_lb - 2)
    for name, (k, free) in lb_specs.items():
        vv, ee, ss = v[-k:], e[-k:], sig[-k:]
        if free:
            ns = [2.5, 3.0, 3.5, 4.0, 4.5, 5.0, 5.5, 6.0, 7.0, 8.0, 9.0, 10.0, 12.0, 14.0, 16.0, 20.0]
            p0 = lb_start(vv, ee, ss, ns)
            model = lb_model_free
        else:
            p0 = lb_start(vv, ee, ss, [n_lb])
            model = lb_model_fixed(p_fixed)
        popt, _ = optimize.curve_fit(model, vv, ee, p0=p0, sigma=ss, absolute_sigma=True,
                                     xtol=1e-13, ftol=1e-13, gtol=1e-13, maxfev=100000)
        nominal[name] = {"d0": float(popt[0] - e0_of(e)), "v_d": float(popt[1]), "theta": popt,
                         "k": k, "model": model, "n": float(popt[3]) if free else n_lb}
        scales[name] = own_scale(float(np.sum(((ee - model(vv, *popt)) / ss) ** 2)), k - len(popt))
    out["scales"] = scales
    out["nominal"] = nominal

    # Monte Carlo: redraw the levels, refit every model (curve_fit on each draw, warm start).
    rng = np.random.default_rng(seed)
    draws = {name: [] for name, val in nominal.items() if val is not None}
    for _ in range(mc):
        z = sig * rng.standard_normal(n_pts)
        if "observed-sum" in draws:
            draws["observed-sum"].append((e[-1] + z[-1]) - (e[0] + z[0]))
        for name, k in (("birge-sponer-linear", 2), ("birge-sponer-curved", k_c)):
            if name not in draws:
                continue
            es = e + scales[name] * z
            pf = Polynomial.fit(v, es, k, w=1 / sig)
            end = np.inf if k == 2 else v_hi + max(10 * span, 10)
            r = first_maximum(pf, v_lo, end)
            if r is None:
                draws[name].append(np.inf)
            elif r < v_hi:
                draws[name].append(np.nan)
            else:
                d0 = pf(r) - pf(0.0)
                draws[name].append(d0 if d0 > 0 else np.nan)
        for name in lb_specs:
            nom = nominal[name]
            k = nom["k"]
            es = e + scales[name] * z
            e0 = e0_of(e + z)  # G(0) is an observed level: it keeps the data σ
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    popt, _ = optimize.curve_fit(nom["model"], v[-k:], es[-k:], p0=nom["theta"],
                                                 sigma=sig[-k:], absolute_sigma=True)
            except RuntimeError:
                draws[name].append(np.nan)
                continue
            if popt[1] - v_hi > 1e4:
                draws[name].append(np.inf)
                continue
            d0 = popt[0] - e0
            draws[name].append(d0 if d0 > 0 else np.nan)
    out["monte_carlo"] = {}
    for name, vals in draws.items():
        a = np.asarray(vals, float)
        ok = a[~np.isnan(a)]
        with np.errstate(invalid="ignore"):  # draws without a limit are +inf
            p16, med, p84 = np.percentile(ok, [16, 50, 84]) if len(ok) else (np.nan,) * 3
        out["monte_carlo"][name] = {"median": float(med), "p16": float(p16), "p84": float(p84),
                                    "finite": int(np.sum(np.isfinite(ok))),
                                    "no_limit": int(np.sum(np.isinf(ok))),
                                    "failed": int(np.sum(np.isnan(a)))}
    return out


def demo_levels():
    path = os.path.join(ROOT, "crates", "core", "data", "demo", "qz2-levels.csv")
    a = np.loadtxt(path, delimiter=",", comments="#", skiprows=5)
    return a[:, 0], a[:, 1], a[:, 2]


# ----------------------------------------------------------------------------------------------
# 3. Dense sinc-DVR for the Lennard-Jones well (as scripts/oracles/lj_dvr.py)
# ----------------------------------------------------------------------------------------------
LJ_DE, LJ_RE, LJ_MU, LJ_RMIN = 1500.0, 4.0, 20.0, 2.9


def dvr_levels(r_hi, dx):
    n = int(round((r_hi - LJ_RMIN) / dx)) + 1
    r = LJ_RMIN + dx * np.arange(n)
    i = np.arange(n)
    d = i[:, None] - i[None, :]
    with np.errstate(divide="ignore"):
        t = np.where(d == 0, np.pi**2 / 3.0, 2.0 * (-1.0) ** d / np.where(d == 0, 1, d) ** 2)
    x = (LJ_RE / r) ** 6
    h = (C_U / (LJ_MU * dx * dx)) * t + np.diag(LJ_DE * (x * x - 2.0 * x))
    return -linalg.eigh(h, eigvals_only=True, subset_by_value=(-np.inf, 0.0), driver="evr"), n


def coarsest_dvr(ref, target):
    """The dense DVR with the fewest points that matches `ref` within `target` on every level but
    the last (the last one, bound by ~0.01 cm-1, needs a box far beyond the well)."""
    cands = [(int(round((rh - LJ_RMIN) / dx)) + 1, dx, rh)
             for dx in (0.09, 0.08, 0.07, 0.06, 0.055, 0.05, 0.045, 0.04, 0.035, 0.03, 0.025, 0.02)
             for rh in (20.0, 25.0, 30.0, 35.0, 40.0, 50.0, 60.0)]
    for npts, dx, rh in sorted(cands):
        w, _ = dvr_levels(rh, dx)
        if len(w) >= len(ref) - 1:
            err = float(np.max(np.abs(w[: len(ref) - 1] - ref[: len(ref) - 1])))
            if err <= target:
                return {"dx_angstrom": dx, "r_max_angstrom": rh, "points": npts, "max_error_cm1": err}
    return None


# ----------------------------------------------------------------------------------------------
# 4. RKR by quadrature
# ----------------------------------------------------------------------------------------------
RKR_G = [0.0, 1000.0, -10.0]   # Y_k0, G(x) = sum Y_k0 x^k, x = v + 1/2
RKR_B = [0.42, -0.003]
RKR_MU = 10.0


def rkr_points(vs):
    g = Polynomial(RKR_G)
    b = Polynomial(RKR_B)
    x_min = 0.0  # G(x_min) = 0 with Y00 = 0
    out = []
    for v in vs:
        x = v + 0.5
        # (G(x) - G(x'))/(x - x') as a polynomial in x' (exact division), so the integrand is
        # smooth times the weight (x - x')^(-1/2) that quad's QAWS rule integrates exactly.
        q, _ = divmod(Polynomial([g(x)]) - g, Polynomial([x, -1.0]))
        i_f, _ = integrate.quad(lambda y: 1.0 / np.sqrt(q(y)), x_min, x, weight="alg", wvar=(0.0, -0.5),
                                epsabs=0.0, epsrel=1e-12)
        i_g, _ = integrate.quad(lambda y: b(y) / np.sqrt(q(y)), x_min, x, weight="alg", wvar=(0.0, -0.5),
                                epsabs=0.0, epsrel=1e-12)
        f = math.sqrt(C_U / RKR_MU) * i_f
        gg = math.sqrt(RKR_MU / C_U) * i_g
        root = math.sqrt(f * f + f / gg)
        out.append((root - f, root + f))
    return np.array(out)


# ----------------------------------------------------------------------------------------------
# Comparison
# ----------------------------------------------------------------------------------------------
class Checks:
    def __init__(self):
        self.failures = []
        self.lines = []

    def check(self, ok, what):
        self.lines.append(("ok  " if ok else "FAIL") + "  " + what)
        if not ok:
            self.failures.append(what)


def criterion_medians(directory):
    """{benchmark id: median seconds} from criterion's JSON output."""
    out = {}
    for bench in glob.glob(os.path.join(directory, "**", "new", "benchmark.json"), recursive=True):
        with open(bench) as f:
            meta = json.load(f)
        with open(os.path.join(os.path.dirname(bench), "estimates.json")) as f:
            est = json.load(f)
        out[meta["full_id"]] = est["median"]["point_estimate"] * 1e-9
    return out


def fmt_t(s):
    return f"{s * 1e3:.3g} ms" if s >= 1e-3 else f"{s * 1e6:.3g} µs"


def fmt_ratio(r):
    """How many times faster Rungs is; below 1 it is slower (shown as a fraction)."""
    return f"{r:.0f}×" if r >= 10 else f"{r:.2g}×"


def compare(args):
    with open(args.rust) as f:
        rust = json.load(f)
    crit = criterion_medians(args.criterion)
    need = {
        "table": "read_table, 100000-row band table",
        "analysis": "full analysis, Qz2 demo (39 levels), 2000 MC samples",
        "solver": "lj40_all_levels_0.01cm1",
        "rkr": "rkr_curve_to_v40",
    }
    missing = [v for v in need.values() if v not in crit]
    if missing:
        sys.exit(f"bench_reference: criterion results missing for {missing} in {args.criterion}")
    checks = Checks()
    rows = []

    # 1. table
    t_py, a = median_time(lambda: read_table(args.table), 5)
    rt = rust["table"]
    checks.check(rt["identical_to_benchmark_input"], "table: the file both sides read is the benchmark's input")
    checks.check(rt["usable_bands"] == a.shape[0] == TABLE_ROWS,
                 f"table: {rt['usable_bands']} usable band rows (Rungs) = {a.shape[0]} rows (NumPy) = {TABLE_ROWS}")
    for key, col in (("sum_wavenumber_cm1", 2), ("sum_sigma_cm1", 3)):
        py = float(np.sum(a[:, col]))
        checks.check(abs(py - rt[key]) <= 1e-12 * abs(py),
                     f"table: {key} {rt[key]:.6f} vs {py:.6f} (tolerance 1e-12 relative)")
    rows.append(("Read a 100 000-row table", crit[need["table"]], t_py,
                 "numpy.loadtxt (Rungs also detects delimiter, header, roles, units, kind and validates every row)"))

    # 2. analysis
    v, e, sig = demo_levels()
    t_nb, nb = median_time(lambda: notebook_analysis(v, e, sig), 3)
    ra = rust["analysis"]["qz2_demo"]
    checks.check(ra["n_levels"] == len(v), f"analysis: {len(v)} levels on both sides")
    checks.check(ra["mc_samples"] == MC_SAMPLES and ra["mc_ran"], "analysis: Rungs ran 2000 Monte Carlo draws")
    checks.check(ra["order"] == nb["order"], f"analysis: selected order {ra['order']} (Rungs) vs {nb['order']} (notebook)")
    checks.check(abs(ra["scale_factor"] - nb["scale_factor"]) <= 1e-6 * nb["scale_factor"],
                 f"analysis: σ scale factor √χ²_ν {ra['scale_factor']:.6f} vs {nb['scale_factor']:.6f} (1e-6 relative)")
    for name, sc in nb["scales"].items():
        got = (ra["methods"].get(name) or {}).get("sigma_scale")
        checks.check(got is not None and abs(got - sc) <= 1e-6 * sc,
                     f"analysis: {name}: σ scale √χ²_ν of its own fit {got} vs {sc:.6f} (1e-6 relative)")
    for name, val in nb["nominal"].items():
        rm = ra["methods"].get(name)
        if rm is None:
            checks.check(False, f"analysis: Rungs has no method {name}")
            continue
        if val is None or rm["d0_cm1"] is None:
            checks.check(val is None and rm["d0_cm1"] is None,
                         f"analysis: {name}: no limit on both sides (Rungs {rm['d0_cm1']}, notebook {val and val['d0']})")
            continue
        # Tolerance: 1 % of the statistical σ (a difference far below what the data resolve),
        # and at least 1e-9 relative.
        tol = max(0.01 * (rm["d0_sigma_cm1"] or 0.0), 1e-9 * abs(val["d0"]))
        d = rm["d0_cm1"] - val["d0"]
        checks.check(abs(d) <= tol, f"analysis: {name}: D0 {rm['d0_cm1']:.4f} vs {val['d0']:.4f} cm⁻¹ "
                                    f"(Δ {d:+.2e}, tolerance {tol:.2e} = 1 % of σ)")
        mr, mp = rm["monte_carlo"], nb["monte_carlo"].get(name)
        if mr is None or mp is None:
            checks.check(False, f"analysis: {name}: Monte Carlo missing on one side")
            continue
        # Independent random streams: the two medians and widths differ by sampling noise only.
        # With 2000 draws the median's standard error is ~0.03 of the half-width and the
        # half-width's ~0.025 of itself (normal theory, common practice): the tolerances below
        # are about four of those standard errors for the difference of two independent runs.
        # When draws without a limit make the upper percentile unbounded, the lower half is used.
        if mr["median"] is None or mr["p16"] is None or not math.isfinite(mp["median"]):
            checks.check((mr["median"] is None) == (not math.isfinite(mp["median"])),
                         f"analysis: {name}: MC median unbounded on both sides")
            continue
        bounded = mr["p84"] is not None and math.isfinite(mp["p84"])
        hw_r = 0.5 * (mr["p84"] - mr["p16"]) if bounded else mr["median"] - mr["p16"]
        hw_p = 0.5 * (mp["p84"] - mp["p16"]) if bounded else mp["median"] - mp["p16"]
        what = "half-width (σ)" if bounded else "median − 16th percentile"
        checks.check(abs(mr["median"] - mp["median"]) <= 0.15 * hw_r,
                     f"analysis: {name}: MC median {mr['median']:.4f} vs {mp['median']:.4f} (tolerance 0.15 × {hw_r:.4f})")
        checks.check(abs(hw_p / hw_r - 1.0) <= 0.10,
                     f"analysis: {name}: MC {what} {hw_r:.4f} vs {hw_p:.4f} (tolerance 10 %)")
        bad_r = (mr["failed"] + mr["no_limit"]) / MC_SAMPLES
        bad_p = (mp["failed"] + mp["no_limit"]) / MC_SAMPLES
        checks.check(abs(bad_r - bad_p) <= 0.02,
                     f"analysis: {name}: draws without a finite D0 {bad_r:.3f} vs {bad_p:.3f} (tolerance 0.02)")
    rows.append(("Full analysis, 2000 Monte Carlo draws (Qz2 demo, 39 levels)", crit[need["analysis"]], t_nb,
                 "polyfit + F-tests, curve_fit for each LeRoy–Bernstein fit and each of 2000 × 3 refits"))

    # 3. solver
    with open(os.path.join(ROOT, "tests", "potential", "lj_dvr.json")) as f:
        ref = np.array([lvl["binding_cm1"] for lvl in json.load(f)["levels"]])
    rs = rust["solver"]
    rust_b = np.array([lvl["binding_cm1"] for lvl in rs["levels"]])
    checks.check(len(rust_b) == len(ref) == 40, f"solver: {len(rust_b)} levels (Rungs), {len(ref)} (reference DVR)")
    err_rust = float(np.max(np.abs(rust_b[:-1] - ref[:-1])))
    err_last = float(abs(rust_b[-1] - ref[-1]))
    checks.check(err_rust <= rs["tolerance_cm1"] and err_last <= rs["tolerance_cm1"],
                 f"solver: Rungs within its {rs['tolerance_cm1']} cm⁻¹ setting of the converged reference DVR "
                 f"(max error {err_rust:.2e} cm⁻¹, last level {err_last:.2e})")
    grid = coarsest_dvr(ref, err_rust)
    checks.check(grid is not None, f"solver: a dense DVR reaches Rungs' accuracy {err_rust:.2e} cm⁻¹")
    if grid is not None:
        t_dvr, (w, _) = median_time(lambda: dvr_levels(grid["r_max_angstrom"], grid["dx_angstrom"]), 7)
        agree = float(np.max(np.abs(w[:39] - rust_b[:39])))
        checks.check(agree <= 2 * err_rust,
                     f"solver: Rungs and the DVR agree within {agree:.2e} cm⁻¹ on v = 0..38 (tolerance 2 × {err_rust:.2e})")
        rows.append((f"Level solver, all 40 levels of a Lennard-Jones well (equal accuracy, {err_rust:.1e} cm⁻¹)",
                     crit[need["solver"]], t_dvr,
                     f"dense sinc-DVR + scipy.linalg.eigh, {grid['points']} points (dx {grid['dx_angstrom']} Å, r ≤ {grid['r_max_angstrom']} Å)"))

    # 4. RKR
    rk = rust["rkr"]
    vs = np.array([p["v"] for p in rk["points"]])
    r_rust = np.array([[p["r_inner_angstrom"], p["r_outer_angstrom"]] for p in rk["points"]])
    t_rkr, r_py = median_time(lambda: rkr_points(vs), 3)
    d_rkr = float(np.max(np.abs(r_py - r_rust)))
    checks.check(d_rkr <= 1e-7, f"rkr: {len(vs)} turning-point pairs agree within {d_rkr:.2e} Å (tolerance 1e-7 Å)")
    rows.append((f"RKR turning points to v = 40 ({len(vs)} pairs)", crit[need["rkr"]], t_rkr,
                 "scipy.integrate.quad (QAWS weight) for both Klein integrals at each v"))

    page = None
    if args.page:
        with open(args.page) as f:
            page = json.load(f)
        rec = ra["recommended"]
        page_rec = page["recommended"]["method"]
        checks.check(page_rec == rec and abs(page["recommended"]["d0_cm1"] - ra["recommended_d0_cm1"]) <= 1e-9 * ra["recommended_d0_cm1"],
                     f"page: the wasm module recommends {page_rec} D0 {page['recommended']['d0_cm1']:.4f} (native {rec} {ra['recommended_d0_cm1']:.4f}, 1e-9 relative)")

    # Report
    print()
    print("Agreement checks")
    for line in checks.lines:
        print("  " + line)
    print()
    print(f"{'problem':<78} {'Rungs':>10} {'NumPy/SciPy':>12} {'ratio':>8}")
    for name, t_r, t_p, how in rows:
        print(f"{name:<78} {fmt_t(t_r):>10} {fmt_t(t_p):>12} {fmt_ratio(t_p / t_r):>8}")
        print(f"    reference: {how}")
    if page:
        print()
        print(f"Page (Chromium {page['browser']}, demo {page['example']}):")
        print(f"  navigation → first result      {page['first_result_ms']['median']:.0f} ms (median of {page['loads']} fresh loads)")
        print(f"  analysis shown by the page     first {page['page_analysis_ms']['first_median']:.0f} ms, "
              f"steady {page['page_analysis_ms']['steady_median']:.0f} ms (analysis + report + tables + figures)")
        print(f"  wasm analysis call alone       first {page['wasm_analysis_ms']['first']:.0f} ms, "
              f"steady {page['wasm_analysis_ms']['steady_median']:.0f} ms")
        print(f"  wasm size                      {page['wasm_bytes']['raw'] / 1024:.0f} KiB raw, {page['wasm_bytes']['gzip9'] / 1024:.0f} KiB gzip (Node zlib, level 9)")
    goals = [("full analysis ≥ 20× faster than the notebook", rows[1][2] / rows[1][1] >= 20)]
    if grid is not None:
        goals.append(("level solver ≥ 30× faster than dense DVR at equal accuracy", rows[2][2] / rows[2][1] >= 30))
    if page:
        goals.append(("analysis in the page ≤ 50 ms (wasm call, steady state)", page["wasm_analysis_ms"]["steady_median"] <= 50))
    print()
    print("Goals (speed figures vary from run to run on a shared machine)")
    for g, ok in goals:
        print(f"  {'met   ' if ok else 'MISSED'}  {g}")

    # The README's table (Markdown), for pasting under "## Speed".
    md = ["| problem | Rungs (native) | NumPy/SciPy notebook | Rungs faster by |", "|---|---|---|---|"]
    for name, t_r, t_p, how in rows:
        md.append(f"| {name} | {fmt_t(t_r)} | {fmt_t(t_p)} ({how}) | {fmt_ratio(t_p / t_r)} |")
    if page:
        md += ["", "| in the page (headless Chromium) | |", "|---|---|",
               f"| navigation → first result (demo analysed and drawn) | {page['first_result_ms']['median']:.0f} ms |",
               f"| analysis of the demo, wasm call (2000 Monte Carlo draws) | first {page['wasm_analysis_ms']['first']:.0f} ms, then {page['wasm_analysis_ms']['steady_median']:.0f} ms |",
               f"| analysis as the page shows it (with report, tables, figures) | first {page['page_analysis_ms']['first_median']:.0f} ms, then {page['page_analysis_ms']['steady_median']:.0f} ms |",
               f"| wasm module | {page['wasm_bytes']['raw'] / 1024:.0f} KiB, {page['wasm_bytes']['gzip9'] / 1024:.0f} KiB gzip (Node zlib, level 9) |"]
    if args.out:
        with open(args.out + ".md", "w") as f:
            f.write("\n".join(md) + "\n")
        print()
        print(f"Markdown table written to {args.out}.md")

    result = {
        "environment": {"python": platform.python_version(), "numpy": np.__version__, "scipy": scipy.__version__,
                        "machine": platform.machine(), "cpus": os.cpu_count(), "load_average_1min": os.getloadavg()[0]},
        "rows": [{"problem": n, "rungs_s": r, "reference_s": p, "ratio": p / r, "reference": h} for n, r, p, h in rows],
        "page": page, "checks": checks.lines, "failures": checks.failures,
        "goals": [{"goal": g, "met": ok} for g, ok in goals],
    }
    if args.out:
        with open(args.out + ".json", "w") as f:
            json.dump(result, f, indent=1)
    if checks.failures:
        print()
        print(f"bench: {len(checks.failures)} agreement check(s) FAILED — the speed figures above do not count:")
        for fl in checks.failures:
            print("  " + fl)
        sys.exit(1)
    print()
    print(f"all {len(checks.lines)} agreement checks passed")


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = ap.add_subparsers(dest="cmd", required=True)
    w = sub.add_parser("write-table")
    w.add_argument("path")
    c = sub.add_parser("compare")
    c.add_argument("--rust", required=True)
    c.add_argument("--criterion", required=True)
    c.add_argument("--table", required=True)
    c.add_argument("--page")
    c.add_argument("--out")
    args = ap.parse_args()
    if args.cmd == "write-table":
        with open(args.path, "w") as f:
            f.write(table_text())
    else:
        compare(args)


if __name__ == "__main__":
    main()
