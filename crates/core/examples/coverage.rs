//! The coverage benchmark: how often the stated interval of the recommendation contains the true
//! dissociation energy, on exact levels of synthetic potentials (`tests/coverage/*.json`, from
//! the SciPy oracle `scripts/oracles/coverage_levels.py`), truncated at 50 … 99.5 % of D0 and
//! cut to their last levels, with seeded noise (see `tests/coverage_support`).
//!
//! Reports per class and overall: the fraction of sets whose truth lies in the interval, the
//! median error, the median interval width as a multiple of the extrapolated part, the
//! bound-level hit rate, and for near-threshold sets the fraction within 2σ.
//!
//! Usage: `cargo run --release -p rungs-core --example coverage -- [--with-cn] [--sets] [--mc N]
//! [--json PATH]` (or `scripts/coverage`). Not a timed test.
#![allow(clippy::unwrap_used, clippy::expect_used)]

#[path = "../tests/coverage_support/mod.rs"]
mod coverage_support;

use coverage_support::{Case, Knowledge, Outcome, SetKind, cases, load_all, run};
use serde_json::json;

/// Median of a list (NaN when empty).
fn median(mut x: Vec<f64>) -> f64 {
    if x.is_empty() {
        return f64::NAN;
    }
    x.sort_by(f64::total_cmp);
    let m = x.len() / 2;
    if x.len() % 2 == 1 {
        x[m]
    } else {
        0.5 * (x[m - 1] + x[m])
    }
}

/// One row of the summary table.
fn summary(label: &str, rows: &[(Case, Outcome)]) -> serde_json::Value {
    let n = rows.len();
    let frac = |f: &dyn Fn(&(Case, Outcome)) -> bool| {
        rows.iter().filter(|r| f(r)).count() as f64 / n.max(1) as f64
    };
    let coverage = frac(&|(_, o)| o.covered);
    let two_sigma = frac(&|(_, o)| o.within_two_sigma);
    let bound = frac(&|(_, o)| o.bound_hit);
    let failed = rows
        .iter()
        .filter(|(_, o)| o.estimate_cm1.is_none())
        .count();
    let err = median(
        rows.iter()
            .filter_map(|(c, o)| o.relative_error(c.true_d0_cm1))
            .collect(),
    );
    let width = median(
        rows.iter()
            .filter_map(|(_, o)| o.width_over_extrapolated())
            .collect(),
    );
    println!(
        "{label:<22} {n:>4} {:>8.1} {:>9.3} {:>10.2} {:>8.1} {:>7.1} {failed:>6}",
        100.0 * coverage,
        100.0 * err,
        width,
        100.0 * bound,
        100.0 * two_sigma,
    );
    json!({
        "class": label, "sets": n, "coverage": coverage, "median_error_of_d0": err,
        "median_width_over_extrapolated": width, "bound_level_hit_rate": bound,
        "within_two_sigma": two_sigma, "no_estimate": failed,
    })
}

fn print_set(c: &Case, o: &Outcome, detail: bool) {
    let f = |x: Option<f64>| x.map_or("—".to_string(), |x| format!("{x:.3}"));
    println!(
        "{:<16} {:<18} σ={:<5} {:<28} est {:>12} [{:>12}, {:>12}] true {:>12.3} {} n_bound {:?}/{} {}",
        c.potential,
        c.kind.class(),
        c.noise_cm1,
        o.method.as_deref().unwrap_or("—"),
        f(o.estimate_cm1),
        f(o.low_cm1),
        f(o.high_cm1),
        o.truth_cm1,
        if o.covered { "in " } else { "OUT" },
        o.n_bound,
        c.true_bound_levels,
        o.error.as_deref().unwrap_or(""),
    );
    if detail {
        for (m, v, ok, why) in &o.estimates {
            let v = v.map_or("—".to_string(), |x| format!("{x:.3}"));
            println!(
                "    {:<28} {v:>12} {} {why}",
                m,
                if *ok { "IN " } else { "out" }
            );
        }
    }
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let knowledge = if args.iter().any(|a| a == "--with-cn") {
        Knowledge::WithCn
    } else {
        Knowledge::ExponentOnly
    };
    let detail = args.iter().any(|a| a == "--detail");
    let show_sets = detail || args.iter().any(|a| a == "--sets");
    let value_of = |flag: &str| {
        args.iter()
            .position(|a| a == flag)
            .and_then(|i| args.get(i + 1).cloned())
    };
    let mc: u32 = value_of("--mc").map_or(400, |s| s.parse().expect("--mc N"));
    let only = value_of("--only");

    let mut rows: Vec<(Case, Outcome)> = Vec::new();
    for p in load_all() {
        if only.as_ref().is_some_and(|o| !p.name.contains(o.as_str())) {
            continue;
        }
        for c in cases(&p) {
            let o = run(&c, knowledge, mc);
            if show_sets {
                print_set(&c, &o, detail);
            }
            rows.push((c, o));
        }
    }

    println!(
        "\n{:<22} {:>4} {:>8} {:>9} {:>10} {:>8} {:>7} {:>6}",
        "class", "sets", "cover %", "med err %", "width/extr", "bound %", "2σ %", "no est"
    );
    let mut table = Vec::new();
    let mut classes: Vec<SetKind> = Vec::new();
    for (c, _) in &rows {
        if !classes.contains(&c.kind) {
            classes.push(c.kind);
        }
    }
    for k in &classes {
        let sel: Vec<(Case, Outcome)> =
            rows.iter().filter(|(c, _)| c.kind == *k).cloned().collect();
        table.push(summary(&k.class(), &sel));
    }
    let truncated: Vec<(Case, Outcome)> = rows
        .iter()
        .filter(|(c, _)| matches!(c.kind, SetKind::Truncated(_)))
        .cloned()
        .collect();
    table.push(summary("all truncations", &truncated));
    table.push(summary("all sets", &rows));
    println!();
    let mut names: Vec<String> = rows.iter().map(|(c, _)| c.potential.clone()).collect();
    names.dedup();
    for name in &names {
        let sel: Vec<(Case, Outcome)> = rows
            .iter()
            .filter(|(c, _)| &c.potential == name)
            .cloned()
            .collect();
        table.push(summary(name, &sel));
    }
    if let Some(path) = value_of("--json") {
        let sets: Vec<serde_json::Value> = rows
            .iter()
            .map(|(c, o)| {
                json!({
                    "potential": c.potential, "class": c.kind.class(), "noise_cm1": c.noise_cm1,
                    "seed": c.seed, "method": o.method, "estimate_cm1": o.estimate_cm1,
                    "low_cm1": o.low_cm1, "high_cm1": o.high_cm1, "truth_cm1": o.truth_cm1,
                    "covered": o.covered, "n_bound": o.n_bound,
                    "true_bound_levels": c.true_bound_levels, "error": o.error,
                })
            })
            .collect();
        let doc = json!({
            "knowledge": format!("{knowledge:?}"), "mc_samples": mc,
            "summary": table, "sets": sets,
        });
        std::fs::write(&path, serde_json::to_string_pretty(&doc).unwrap()).expect("write --json");
    }
}
