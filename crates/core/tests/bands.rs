//! Outside-reference checks of the band-position analysis (issue 5).
//!
//! Every expected number comes from a fixture under `tests/bands/`, written by the committed
//! oracle script `scripts/oracles/bands.py` from closed forms (Morse levels, mass scaling of a
//! Morse potential), numpy least squares, scipy minimisation, periodictable masses, or the
//! handbook values of domain.md §3.1; the SOURCE of each is named beside the check, with its
//! tolerance.

use rungs_core::bands::array::CellFlag;
use rungs_core::bands::isotopes;
use rungs_core::bands::numbering::Verdict;
use rungs_core::data::Band;
use rungs_core::intake::{BandPositions, IntakeOptions};
use rungs_core::session::Session;
use rungs_core::settings::{
    AnalysisSettings, BandRotation, IsotopologueMasses, SigmaScaling, StateRotation,
};
use rungs_core::{Analysis, BandReport, analyze_bands, analyze_session, render_band_text};
use serde_json::Value;

fn fixture(name: &str) -> Value {
    let text = match name {
        "morse_two_state" => include_str!("../../../tests/bands/morse_two_state.json"),
        "isotope_shift" => include_str!("../../../tests/bands/isotope_shift.json"),
        "handbook_isotopes" => include_str!("../../../tests/bands/handbook_isotopes.json"),
        "numbering" => include_str!("../../../tests/bands/numbering.json"),
        "prediction" => include_str!("../../../tests/bands/prediction.json"),
        "heads" => include_str!("../../../tests/bands/heads.json"),
        _ => panic!("no fixture {name}"),
    };
    serde_json::from_str(text).expect("fixture parses")
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

fn u(v: &Value) -> u32 {
    v.as_u64().unwrap_or_else(|| panic!("not an integer: {v}")) as u32
}

/// One check, absolute tolerance, with a message.
fn check(what: &str, got: f64, expected: f64, tol: f64) {
    assert!(
        (got - expected).abs() <= tol,
        "{what}: got {got:.12}, expected {expected:.12} (tol {tol:e}, off by {:.3e})",
        (got - expected).abs()
    );
}

fn settings(orders: Option<(u32, u32)>, policy: SigmaScaling) -> AnalysisSettings {
    let mut s = AnalysisSettings {
        mc_samples: 0,
        sigma_scaling: policy,
        ..AnalysisSettings::default()
    };
    if let Some((a, b)) = orders {
        s.bands.upper_order = Some(a);
        s.bands.lower_order = Some(b);
    }
    s
}

fn two_state_bands(values: &Value, sigma: Option<f64>) -> Vec<Band> {
    let fx = fixture("morse_two_state");
    fx["cells"]
        .as_array()
        .expect("cells")
        .iter()
        .zip(values.as_array().expect("values"))
        .map(|(c, x)| Band {
            v_upper: u(&c[0]),
            v_lower: u(&c[1]),
            position_cm1: f(x),
            sigma_cm1: sigma,
            isotopologue: None,
        })
        .collect()
}

fn sig(c: &Option<rungs_core::report::Constant>) -> (f64, f64) {
    let c = c.as_ref().expect("constant");
    (c.value, c.sigma.expect("sigma"))
}

// ---------------------------------------------------------------------------------------------
// Two-state Morse bands with noise
// ---------------------------------------------------------------------------------------------

/// SOURCE: closed-form Morse term values of invented constants (domain.md §2.1) with Gaussian
/// noise σ = 0.05 cm⁻¹, 60 seeds (numpy default_rng), scripts/oracles/bands.py. For a correct
/// linear model with known σ every pull (estimate − truth)/σ is standard normal, so:
/// at most 2 of 60 pulls per quantity outside 3σ (P ≈ 1.2 % for 2 or more by chance), and the
/// mean squared pull within [0.6, 1.5] (its 60-sample spread is about ±0.18; a σ off by 25 %
/// fails). Checked for ωe, ωexe of both states and Te from the global fit, and for ωe, ωexe of
/// both states from the single-state analyses of the term values (this tests that the term
/// values' covariance is handed on correctly).
#[test]
fn morse_constants_recovered_within_their_sigma_over_many_seeds() {
    let fx = fixture("morse_two_state");
    let lo = &fx["lower"];
    let up = &fx["upper"];
    let truth = [
        ("ωe′ global", f(&up["we"])),
        ("ωexe′ global", f(&up["wexe"])),
        ("ωe″ global", f(&lo["we"])),
        ("ωexe″ global", f(&lo["wexe"])),
        ("Te global", f(&up["te"])),
        ("ωe′ levels", f(&up["we"])),
        ("ωexe′ levels", f(&up["wexe"])),
        ("ωe″ levels", f(&lo["we"])),
        ("ωexe″ levels", f(&lo["wexe"])),
    ];
    let sigma = f(&fx["sigma_cm1"]);
    let seeds = fx["noisy_cm1"].as_array().expect("seeds");
    let mut pulls: Vec<Vec<f64>> = vec![Vec::new(); truth.len()];
    for values in seeds {
        let r = analyze_bands(
            &two_state_bands(values, Some(sigma)),
            BandPositions::Origins,
            None,
            &settings(Some((2, 2)), SigmaScaling::Never),
        )
        .expect("analysis");
        let g = &r.global_fit;
        let upper = &r.states.upper.as_ref().expect("upper").constants;
        let lower = &r.states.lower.as_ref().expect("lower").constants;
        let est = [
            sig(&g.upper.as_ref().expect("u").we_cm1),
            sig(&g.upper.as_ref().expect("u").wexe_cm1),
            sig(&g.lower.as_ref().expect("l").we_cm1),
            sig(&g.lower.as_ref().expect("l").wexe_cm1),
            (r.te_cm1.value, r.te_cm1.sigma.expect("te sigma")),
            sig(&upper.we_cm1),
            sig(&upper.wexe_cm1),
            sig(&lower.we_cm1),
            sig(&lower.wexe_cm1),
        ];
        for (k, (v, s)) in est.iter().enumerate() {
            pulls[k].push((v - truth[k].1) / s);
        }
    }
    for (k, (name, _)) in truth.iter().enumerate() {
        let outside = pulls[k].iter().filter(|z| z.abs() > 3.0).count();
        let msq = pulls[k].iter().map(|z| z * z).sum::<f64>() / pulls[k].len() as f64;
        assert!(
            outside <= 2,
            "{name}: {outside} of 60 outside 3σ: {:?}",
            pulls[k]
        );
        assert!(
            (0.6..=1.5).contains(&msq),
            "{name}: mean squared pull {msq:.3} (σ miscalibrated)"
        );
    }
}

/// SOURCE: numpy (scripts/oracles/bands.py): the term-value fit and the order-(2, 2) global fit
/// of seed 0 by the normal equations, Cov = (XᵀWX)⁻¹. Tolerances 1e-7 cm⁻¹ on values, 1e-9
/// relative on σ and χ² (different but exact algorithms, rounding only).
#[test]
fn term_values_and_global_fit_match_numpy() {
    let fx = fixture("morse_two_state");
    let np = &fx["numpy_seed0"];
    let r = analyze_bands(
        &two_state_bands(&fx["noisy_cm1"][0], Some(f(&fx["sigma_cm1"]))),
        BandPositions::Origins,
        None,
        &settings(Some((2, 2)), SigmaScaling::Never),
    )
    .expect("analysis");
    let t = &r.term_values[0];
    let terms: Vec<f64> = np["terms_cm1"]
        .as_array()
        .expect("terms")
        .iter()
        .map(f)
        .collect();
    let sigmas: Vec<f64> = np["terms_sigma_cm1"]
        .as_array()
        .expect("sigma")
        .iter()
        .map(f)
        .collect();
    let nu = t.upper.len();
    for (i, l) in t.upper.iter().enumerate() {
        check(&format!("T′({})", l.v), l.energy_cm1, terms[i], 1e-7);
    }
    for (i, l) in t.lower.iter().enumerate().skip(1) {
        check(
            &format!("T″({})", l.v),
            l.energy_cm1,
            terms[nu + i - 1],
            1e-7,
        );
    }
    // σ: the term fit's χ²_ν < 1 here, so with policy "never" the scale factor is 1.
    assert_eq!(t.scale_factor, Some(1.0));
    for (i, l) in t.upper.iter().enumerate() {
        let s = l.sigma_cm1.expect("σ");
        check(&format!("σ T′({})", l.v), s, sigmas[i], 1e-9 * sigmas[i]);
    }
    check(
        "cov(T′0, T′1)",
        t.covariance[0][1],
        f(&np["terms_cov_01"]),
        1e-9 * f(&np["terms_cov_01"]).abs(),
    );
    check("term χ²", t.chi2, f(&np["terms_chi2"]), 1e-9 * t.chi2);
    let g = &r.global_fit;
    let (we_u, swe_u) = sig(&g.upper.as_ref().expect("u").we_cm1);
    check("ωe′", we_u, f(&np["global_we_upper"]), 1e-8);
    check(
        "σ ωe′",
        swe_u,
        f(&np["global_sigma_we_upper"]),
        1e-9 * swe_u,
    );
    check(
        "ωexe′",
        sig(&g.upper.as_ref().expect("u").wexe_cm1).0,
        f(&np["global_wexe_upper"]),
        1e-9,
    );
    check(
        "ωe″",
        sig(&g.lower.as_ref().expect("l").we_cm1).0,
        f(&np["global_we_lower"]),
        1e-8,
    );
    let (wexe_l, swexe_l) = sig(&g.lower.as_ref().expect("l").wexe_cm1);
    check("ωexe″", wexe_l, f(&np["global_wexe_lower"]), 1e-9);
    check(
        "σ ωexe″",
        swexe_l,
        f(&np["global_sigma_wexe_lower"]),
        1e-9 * swexe_l,
    );
    check("T00", r.t00_cm1.value, f(&np["global_t00"]), 1e-7);
    check(
        "σ T00",
        r.t00_cm1.sigma.expect("σ"),
        f(&np["global_sigma_t00"]),
        1e-9,
    );
    check("Te", r.te_cm1.value, f(&np["global_te"]), 1e-7);
    check(
        "σ Te",
        r.te_cm1.sigma.expect("σ"),
        f(&np["global_sigma_te"]),
        1e-9,
    );
    check("global χ²", g.chi2, f(&np["global_chi2"]), 1e-9 * g.chi2);
}

/// SOURCE: closed forms for Morse levels (domain.md §2.1, §1.7, §1.8): with exact bands both
/// states' linear Birge–Sponer D0 = (ωe − ωexe)²/(4ωexe), T00 = Te + G′(0) − G″(0), the zero
/// points ωe/2 − ωexe/4, and the energy cycle: with E_atom = E_lim − D0″ (both closed form) the
/// cycle returns D0″. Tolerances 1e-6 cm⁻¹ (levels), 1e-5 cm⁻¹ (D0, an extrapolation ×4 in v).
#[test]
fn exact_bands_give_closed_form_limits_for_both_states() {
    let fx = fixture("morse_two_state");
    let e = &fx["expected"];
    let e_atom = f(&e["upper_limit_cm1"]) - f(&e["d0_lower_cm1"]);
    let mut s = settings(None, SigmaScaling::WhenAboveOne);
    s.bands.atomic_excitation_cm1 = Some(e_atom);
    let r = analyze_bands(
        &two_state_bands(&fx["exact_cm1"], Some(0.05)),
        BandPositions::Origins,
        None,
        &s,
    )
    .expect("analysis");
    check("T00", r.t00_cm1.value, f(&e["t00_cm1"]), 1e-6);
    check("Te", r.te_cm1.value, f(&e["te_cm1"]), 1e-6);
    let g = &r.global_fit;
    assert_eq!(
        (g.order_upper, g.order_lower),
        (2, 2),
        "{:?}",
        g.order_selection.reason
    );
    check(
        "G′(0)",
        g.upper.as_ref().expect("u").zero_point_cm1.value,
        f(&e["zero_point_upper_cm1"]),
        1e-6,
    );
    check(
        "G″(0)",
        g.lower.as_ref().expect("l").zero_point_cm1.value,
        f(&e["zero_point_lower_cm1"]),
        1e-6,
    );
    for (state, key) in [
        (&r.states.upper, "d0_upper_cm1"),
        (&r.states.lower, "d0_lower_cm1"),
    ] {
        let rep = state.as_ref().expect("state analysed");
        let bs = rep
            .estimates
            .iter()
            .find(|x| x.method == "birge-sponer-linear")
            .expect("linear BS");
        check(key, bs.d0_cm1.expect("D0"), f(&e[key]), 1e-5);
    }
    let c = &r.convergence;
    assert_eq!(c.d0_upper_method.as_deref(), Some("birge-sponer-linear"));
    check(
        "E_lim = T00 + D0′",
        c.upper_limit_cm1.as_ref().expect("limit").value,
        f(&e["upper_limit_cm1"]),
        1e-5,
    );
    check(
        "D0″ by the energy cycle",
        c.d0_lower_cm1.as_ref().expect("D0″").value,
        f(&e["d0_lower_cm1"]),
        1e-5,
    );
    // Numbering with one isotopologue: undecidable, χ² equal for every possible offset.
    assert_eq!(r.numbering.verdict, Verdict::CannotBeDecided);
    assert_eq!(
        r.numbering.verdict_text,
        "cannot be decided from these data"
    );
}

// ---------------------------------------------------------------------------------------------
// Deslandres array
// ---------------------------------------------------------------------------------------------

/// SOURCE: seed-0 bands of the closed-form Morse set (scripts/oracles/bands.py) with one cell
/// shifted by +3 cm⁻¹ (60 σ, as a typo would): that cell — and only that cell — is flagged as
/// breaking two chains; the unshifted set has no flagged cell (domain.md §1.2: a cell breaking
/// two difference chains is a misassignment). The row and column differences at the cell must
/// disagree with the consensus by about the shift.
#[test]
fn injected_misassignment_is_flagged_and_nothing_else() {
    let fx = fixture("morse_two_state");
    let sigma = f(&fx["sigma_cm1"]);
    let clean = analyze_bands(
        &two_state_bands(&fx["noisy_cm1"][0], Some(sigma)),
        BandPositions::Origins,
        None,
        &settings(None, SigmaScaling::WhenAboveOne),
    )
    .expect("clean");
    assert!(
        clean.arrays[0].flagged.is_empty(),
        "false alarm: {:?}",
        clean.arrays[0].flagged
    );
    let cell = &fx["misassigned"]["cell"];
    let (cu, cl) = (u(&cell[0]), u(&cell[1]));
    let shift = f(&fx["misassigned"]["shift_cm1"]);
    let mut bands = two_state_bands(&fx["noisy_cm1"][0], Some(sigma));
    let b = bands
        .iter_mut()
        .find(|b| b.v_upper == cu && b.v_lower == cl)
        .expect("cell present");
    b.position_cm1 += shift;
    let r = analyze_bands(
        &bands,
        BandPositions::Origins,
        None,
        &settings(None, SigmaScaling::WhenAboveOne),
    )
    .expect("shifted");
    let a = &r.arrays[0];
    let flagged: Vec<(u32, u32, CellFlag)> = a
        .flagged
        .iter()
        .map(|x| (x.v_upper, x.v_lower, x.flag))
        .collect();
    assert_eq!(flagged, vec![(cu, cl, CellFlag::BreaksTwoChains)]);
    let c = a
        .cells
        .iter()
        .flatten()
        .flatten()
        .find(|c| c.v_upper == cu && c.v_lower == cl)
        .expect("cell");
    check(
        "residual of the bad cell",
        c.residual_cm1.expect("res"),
        shift,
        0.2,
    );
    assert!(c.chain_breaks >= 2 && c.chain_breaks <= 4);
    let row_d = a
        .upper_differences
        .iter()
        .find(|d| d.v_upper == cu && d.v_lower == cl)
        .expect("ΔG′ from the cell to its right");
    check(
        "ΔG′ deviation",
        row_d.value_cm1 - row_d.consensus_cm1.expect("consensus"),
        -shift,
        0.2,
    );
    assert!(row_d.discrepant);
    assert!(
        r.warnings
            .iter()
            .any(|w| w.contains("breaks two difference chains"))
    );
}

/// Closed form: ΔG′ along a row equals G′(v′+1) − G′(v′) and ΔG″ down a column equals
/// G″(v″+1) − G″(v″) for exact Morse bands (domain.md §1.2, §2.1: ΔG_{v+½} = ωe − 2ωexe(v+1)),
/// σ = √2·σ_band. Tolerance 1e-8 cm⁻¹.
#[test]
fn difference_chains_of_exact_bands_are_the_spacings() {
    let fx = fixture("morse_two_state");
    let r = analyze_bands(
        &two_state_bands(&fx["exact_cm1"], Some(0.05)),
        BandPositions::Origins,
        None,
        &settings(None, SigmaScaling::Never),
    )
    .expect("analysis");
    let a = &r.arrays[0];
    let (weu, wexeu) = (f(&fx["upper"]["we"]), f(&fx["upper"]["wexe"]));
    let (wel, wexel) = (f(&fx["lower"]["we"]), f(&fx["lower"]["wexe"]));
    assert!(!a.upper_differences.is_empty() && !a.lower_differences.is_empty());
    for d in &a.upper_differences {
        let v = f64::from(d.v_upper);
        check("ΔG′", d.value_cm1, weu - 2.0 * wexeu * (v + 1.0), 1e-8);
        check("σ ΔG′", d.sigma_cm1.expect("σ"), 0.05 * 2f64.sqrt(), 1e-12);
    }
    for d in &a.lower_differences {
        let v = f64::from(d.v_lower);
        check("ΔG″", d.value_cm1, wel - 2.0 * wexel * (v + 1.0), 1e-8);
    }
    assert!(a.dense);
    assert_eq!(a.v_upper, (0..=12).collect::<Vec<u32>>());
    assert_eq!(a.v_lower, (0..=6).collect::<Vec<u32>>());
    // Gaps of the fixture's pattern are null cells.
    assert!(a.cells[0][3].is_none(), "(v′ = 3, v″ = 0) is a gap");
}

/// A band linked to the rest by no chain is reported, not silently used (our design rule).
#[test]
fn unconnected_band_is_flagged() {
    let mut bands: Vec<Band> = Vec::new();
    for (vu, vl, x) in [
        (0, 0, 100.0),
        (1, 0, 190.0),
        (0, 1, 50.0),
        (1, 1, 140.0),
        (2, 0, 275.0),
    ] {
        bands.push(Band {
            v_upper: vu,
            v_lower: vl,
            position_cm1: x,
            sigma_cm1: None,
            isotopologue: None,
        });
    }
    bands.push(Band {
        v_upper: 5,
        v_lower: 4,
        position_cm1: 10.0,
        sigma_cm1: None,
        isotopologue: None,
    });
    let r = analyze_bands(
        &bands,
        BandPositions::Origins,
        None,
        &settings(None, SigmaScaling::WhenAboveOne),
    )
    .expect("analysis");
    let a = &r.arrays[0];
    assert_eq!(a.connected_parts, 2);
    assert!(
        a.flagged
            .iter()
            .any(|x| (x.v_upper, x.v_lower, x.flag) == (5, 4, CellFlag::NotConnected))
    );
    assert!(!a.dense || a.v_upper.len() == 6);
}

// ---------------------------------------------------------------------------------------------
// Heads
// ---------------------------------------------------------------------------------------------

/// SOURCE: band heads located numerically by scipy (bounded minimisation of the branch
/// ν(m) = ν0 + (B′+B″)m + (B′−B″)m², domain.md §1.2) for the exact Morse bands; corrected with
/// the same B_v the origins come back to 1e-6 cm⁻¹ and the global fit returns the closed-form
/// T00 to 1e-6 cm⁻¹. Every head is an R head here (B′ < B″). Without B the σ are widened by the
/// documented amount and a warning is given.
#[test]
fn heads_are_corrected_to_origins_with_rotational_constants() {
    let fx = fixture("heads");
    let rot = &fx["rotation"];
    let bands: Vec<Band> = fx["rows"]
        .as_array()
        .expect("rows")
        .iter()
        .map(|r| Band {
            v_upper: u(&r["v_upper"]),
            v_lower: u(&r["v_lower"]),
            position_cm1: f(&r["head_cm1"]),
            sigma_cm1: Some(0.05),
            isotopologue: None,
        })
        .collect();
    let mut s = settings(None, SigmaScaling::WhenAboveOne);
    s.bands.rotation = Some(BandRotation {
        upper: StateRotation {
            be_cm1: f(&rot["upper"]["be_cm1"]),
            alpha_e_cm1: f(&rot["upper"]["alpha_e_cm1"]),
        },
        lower: StateRotation {
            be_cm1: f(&rot["lower"]["be_cm1"]),
            alpha_e_cm1: f(&rot["lower"]["alpha_e_cm1"]),
        },
    });
    let r = analyze_bands(&bands, BandPositions::Heads, None, &s).expect("heads");
    assert!(r.input.heads_corrected);
    for row in fx["rows"].as_array().expect("rows") {
        let (vu, vl) = (u(&row["v_upper"]), u(&row["v_lower"]));
        let cell = r.arrays[0]
            .cells
            .iter()
            .flatten()
            .flatten()
            .find(|c| (c.v_upper, c.v_lower) == (vu, vl))
            .expect("cell");
        check("origin", cell.position_cm1, f(&row["origin_cm1"]), 1e-6);
        let h = cell.head.expect("head applied");
        assert_eq!(
            serde_json::to_value(h.side).expect("side"),
            row["side"],
            "head side"
        );
    }
    let t00 = f(&fixture("morse_two_state")["expected"]["t00_cm1"]);
    check("T00 from corrected heads", r.t00_cm1.value, t00, 1e-6);

    // Without rotational constants: σ widened by head_sigma_cm1 in quadrature, and a warning.
    let r = analyze_bands(
        &bands,
        BandPositions::Heads,
        None,
        &settings(None, SigmaScaling::WhenAboveOne),
    )
    .expect("heads, no B");
    assert!(!r.input.heads_corrected);
    assert_eq!(r.input.head_sigma_added_cm1, 1.0);
    let c = r.arrays[0].cells[0][0].as_ref().expect("cell");
    check(
        "widened σ",
        c.sigma_cm1.expect("σ"),
        0.05f64.hypot(1.0),
        1e-12,
    );
    assert!(
        r.warnings
            .iter()
            .any(|w| w.contains("heads used as origins"))
    );
}

// ---------------------------------------------------------------------------------------------
// Isotopologues
// ---------------------------------------------------------------------------------------------

/// SOURCE: closed-form Morse levels of one potential for two masses (12C16O and 13C18O from
/// periodictable; ωexe = a²C_u/μ, ωe = 2√(De ωexe), domain.md §1.8) — their difference against
/// the isotope-shift formula of domain.md §1.3 with ρ from Rungs' own masses and tags.
/// Tolerances: ρ 1e-8 relative (AME 2020 table vs periodictable, domain.md §3.2: ≤ 1.2e-6 u in a
/// mass); shift 1e-6 cm⁻¹ (the formula is exact for Morse levels).
#[test]
fn isotope_shift_formula_matches_closed_form_morse_levels() {
    let fx = fixture("isotope_shift");
    let isos = fx["isotopologues"].as_array().expect("isos");
    let r1 = isotopes::resolve(isos[0]["tag"].as_str().expect("tag"), &[]).expect("tag 1");
    let r2 = isotopes::resolve(isos[1]["tag"].as_str().expect("tag"), &[]).expect("tag 2");
    let rho = isotopes::rho(r1.mu_u, r2.mu_u).expect("rho");
    check("ρ", rho, f(&fx["rho"]), 1e-8);
    let c = &isos[0];
    let yu = [f(&c["we_upper"]), -f(&c["wexe_upper"])];
    let yl = [f(&c["we_lower"]), -f(&c["wexe_lower"])];
    for s in fx["shifts"].as_array().expect("shifts") {
        let got = isotopes::isotope_shift_cm1(
            &yu,
            &yl,
            f(&fx["rho"]),
            f(&s["v_upper"]),
            f(&s["v_lower"]),
        );
        check("isotope shift", got, f(&s["shift_cm1"]), 1e-6);
    }
    // The mass-scaled constants of the second isotopologue are its closed-form constants.
    let scaled = isotopes::scale_dunham(&yu, f(&fx["rho"]));
    check("ωe′ scaled", scaled[0], f(&isos[1]["we_upper"]), 1e-9);
    check("ωexe′ scaled", -scaled[1], f(&isos[1]["wexe_upper"]), 1e-9);
}

/// SOURCE: Huber & Herzberg (1979) constants via domain.md §3.1 (H2 → HT: ωe, Be; H35Cl →
/// D35Cl: ωe), tolerance 0.1 % (domain.md: Born–Oppenheimer breakdown and definition effects in
/// hydrides); ρ against periodictable to 1e-8 relative.
#[test]
fn handbook_isotopologue_pairs_scale_within_tolerance() {
    let fx = fixture("handbook_isotopes");
    let tol = f(&fx["tolerance_relative"]);
    for p in fx["pairs"].as_array().expect("pairs") {
        let name = p["name"].as_str().expect("name");
        let a = isotopes::resolve(p["reference"].as_str().expect("ref"), &[]).expect("ref tag");
        let b = isotopes::resolve(p["other"].as_str().expect("other"), &[]).expect("other tag");
        let rho = isotopes::rho(a.mu_u, b.mu_u).expect("rho");
        check(&format!("{name} ρ"), rho, f(&p["rho_periodictable"]), 1e-8);
        let rc = &p["reference_constants"];
        let oc = &p["other_constants"];
        let we = isotopes::scale_dunham(&[f(&rc["we"])], rho)[0];
        let want = f(&oc["we"]);
        check(&format!("{name} ωe"), we, want, tol * want);
        if let (Some(be), Some(want)) = (rc["be"].as_f64(), oc["be"].as_f64()) {
            // Be ∝ ρ² (Y01 ρ^{0+2}, domain.md §1.11).
            check(&format!("{name} Be"), be * rho * rho, want, tol * want);
        }
    }
}

fn numbering_bands(fx: &Value, only: Option<&str>) -> Vec<Band> {
    fx["rows"]
        .as_array()
        .expect("rows")
        .iter()
        .filter(|r| only.is_none_or(|t| r["tag"].as_str() == Some(t)))
        .map(|r| Band {
            v_upper: u(&r["v_upper"]),
            v_lower: u(&r["v_lower"]),
            position_cm1: f(&r["position_cm1"]),
            sigma_cm1: Some(f(&fx["sigma_cm1"])),
            isotopologue: r["tag"].as_str().map(str::to_string),
        })
        .collect()
}

fn listed(fx: &Value) -> Vec<IsotopologueMasses> {
    fx["isotopologues"]
        .as_array()
        .expect("isos")
        .iter()
        .map(|i| IsotopologueMasses {
            tag: i["tag"].as_str().expect("tag").into(),
            a: i["a"].as_str().expect("a").into(),
            b: i["b"].as_str().expect("b").into(),
        })
        .collect()
}

/// SOURCE: two isotopologues of closed-form Morse levels with mass-scaled constants, the upper
/// numbering written two units too low (scripts/oracles/bands.py); χ² per trial offset from
/// numpy.linalg.lstsq of the same model (tolerance 1e-6 relative). The true offset +2 must win
/// with a decisive Δχ² (≥ 9); negative offsets are impossible (v′ = 0 in the file). With one
/// isotopologue the same bands cannot decide (χ² equal for all offsets to 1e-9 relative).
#[test]
fn numbering_offset_is_recovered_from_isotope_shifts() {
    let fx = fixture("numbering");
    let mut s = settings(Some((2, 2)), SigmaScaling::WhenAboveOne);
    s.bands.isotopologues = listed(&fx);
    let r = analyze_bands(
        &numbering_bands(&fx, None),
        BandPositions::Origins,
        None,
        &s,
    )
    .expect("analysis");
    let n = &r.numbering;
    assert_eq!(n.isotopologues, 2);
    let truth = fx["true_offset"].as_i64().expect("offset") as i32;
    assert_eq!(n.best_offset, Some(truth), "{}", n.why);
    assert_eq!(n.verdict, Verdict::FixedByIsotopeShifts);
    assert_eq!(n.verdict_text, "numbering fixed by isotope shifts");
    assert!(n.delta_chi2.expect("Δχ²") >= 9.0);
    for row in &n.offsets {
        match fx["numpy_chi2_by_offset"].get(row.offset.to_string()) {
            Some(want) => {
                let got = row.chi2.expect("χ²");
                check(
                    &format!("χ² at offset {}", row.offset),
                    got,
                    f(want),
                    1e-6 * f(want),
                );
            }
            None => assert!(!row.possible, "offset {} should be impossible", row.offset),
        }
    }
    assert!(
        r.warnings.iter().any(|w| w.contains("v′ → v′ +2")),
        "{:?}",
        r.warnings
    );

    let one = analyze_bands(
        &numbering_bands(&fx, Some("iso-a")),
        BandPositions::Origins,
        None,
        &s,
    )
    .expect("one isotopologue");
    let n = &one.numbering;
    assert_eq!(n.verdict, Verdict::CannotBeDecided);
    assert_eq!(n.verdict_text, "cannot be decided from these data");
    assert!(n.why.contains("one isotopologue"));
    let chi: Vec<f64> = n.offsets.iter().filter_map(|o| o.chi2).collect();
    assert_eq!(chi.len(), 4);
    for c in &chi {
        check("equal χ²", *c, chi[0], 1e-9 * chi[0]);
    }
}

/// SOURCE: closed-form Morse levels with mass-scaled constants (domain.md §1.11, §2.1) for an
/// isotopologue that was not measured: exact bands of the reference predict its band origins,
/// levels (above the minimum) and T00 to 1e-6 cm⁻¹.
#[test]
fn unmeasured_isotopologue_is_predicted() {
    let fx = fixture("prediction");
    let bands: Vec<Band> = fx["reference_rows"]
        .as_array()
        .expect("rows")
        .iter()
        .map(|r| Band {
            v_upper: u(&r["v_upper"]),
            v_lower: u(&r["v_lower"]),
            position_cm1: f(&r["position_cm1"]),
            sigma_cm1: Some(0.01),
            isotopologue: fx["reference"]["tag"].as_str().map(str::to_string),
        })
        .collect();
    let mut s = settings(Some((2, 2)), SigmaScaling::WhenAboveOne);
    for iso in [&fx["reference"], &fx["other"]] {
        s.bands.isotopologues.push(IsotopologueMasses {
            tag: iso["tag"].as_str().expect("tag").into(),
            a: iso["a"].as_str().expect("a").into(),
            b: iso["b"].as_str().expect("b").into(),
        });
    }
    let other = fx["other"]["tag"].as_str().expect("tag").to_string();
    s.bands.predict = vec![other.clone()];
    let r = analyze_bands(&bands, BandPositions::Origins, None, &s).expect("analysis");
    let p = &r.predictions[0];
    assert_eq!(p.isotopologue.tag.as_deref(), Some(other.as_str()));
    check("T00", p.t00_cm1.value, f(&fx["other_t00_cm1"]), 1e-6);
    for b in fx["other_bands"].as_array().expect("bands") {
        let (vu, vl) = (u(&b["v_upper"]), u(&b["v_lower"]));
        let got = p
            .bands
            .iter()
            .find(|x| (x.v_upper, x.v_lower) == (vu, vl))
            .expect("band predicted");
        check("band", got.position_cm1, f(&b["position_cm1"]), 1e-6);
    }
    for (levels, key) in [
        (&p.upper_levels, "other_levels_upper"),
        (&p.lower_levels, "other_levels_lower"),
    ] {
        for l in fx[key].as_array().expect("levels") {
            let got = levels
                .iter()
                .find(|x| x.v == u(&l["v"]))
                .expect("level predicted");
            check(key, got.energy_cm1, f(&l["energy_cm1"]), 1e-6);
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Pipeline, document, text
// ---------------------------------------------------------------------------------------------

/// The session pipeline detects a band list and returns the band document with both states;
/// JSON has `t00_cm1`, `te_cm1` (each {value, sigma}), `states.upper/lower` with the
/// single-state content, and the numbering verdict; it reads back to the same value (our design
/// rule, no source). The single-state JSON is unchanged by the wrapper.
#[test]
fn session_pipeline_returns_the_band_document() {
    let fx = fixture("morse_two_state");
    let mut text = String::from("v',v'',nu_cm1,sigma_cm1\n");
    for (c, x) in fx["cells"]
        .as_array()
        .expect("cells")
        .iter()
        .zip(fx["noisy_cm1"][0].as_array().expect("values"))
    {
        text.push_str(&format!("{},{},{},0.05\n", u(&c[0]), u(&c[1]), f(x)));
    }
    text.push_str("7,9,abc,0.05\n");
    let session = Session::new(
        text,
        Some("bands.csv".into()),
        IntakeOptions::default(),
        settings(None, SigmaScaling::WhenAboveOne),
    );
    let a = analyze_session(&session, &mut |_, _| {}).expect("analysis");
    let r: &BandReport = a.as_bands().expect("band document");
    assert_eq!(r.rows.as_ref().expect("rows").excluded.len(), 1);
    assert_eq!(r.session.as_ref(), Some(&session));
    let j: Value = serde_json::from_str(&a.to_json().expect("json")).expect("valid JSON");
    assert_eq!(j["format"], "rungs-band-analysis");
    for key in ["t00_cm1", "te_cm1"] {
        assert!(
            j[key]["value"].is_f64() && j[key]["sigma"].is_f64(),
            "{key}"
        );
    }
    for st in ["upper", "lower"] {
        let s = &j["states"][st];
        for k in ["levels", "constants", "estimates", "recommended"] {
            assert!(!s[k].is_null(), "states.{st}.{k}");
        }
        assert_eq!(s["format"], "rungs-analysis");
    }
    assert_eq!(
        j["numbering"]["verdict_text"],
        "cannot be decided from these data"
    );
    assert!(j["arrays"][0]["cells"][0][0]["position_cm1"].is_f64());
    let back: Analysis = serde_json::from_value(j).expect("reads back");
    assert_eq!(back, a);
    let text = render_band_text(r);
    assert!(text.contains("UPPER STATE") && text.contains("LOWER STATE"));
    assert!(text.contains("Deslandres array"));

    // Single-state documents serialise exactly as the report itself.
    let levels = Session::new(
        "v,E,sigma\n0,0,0.1\n1,990,0.1\n2,1960,0.1\n3,2910,0.1\n",
        None,
        IntakeOptions::default(),
        settings(None, SigmaScaling::WhenAboveOne),
    );
    let a = analyze_session(&levels, &mut |_, _| {}).expect("levels");
    let rep = a.as_levels().expect("levels report");
    assert_eq!(
        serde_json::to_value(&a).expect("a"),
        serde_json::to_value(rep).expect("r")
    );
    let back: Analysis =
        serde_json::from_str(&a.to_json().expect("json")).expect("levels read back");
    assert!(back.as_levels().is_some());
}

/// The built-in SYNTHETIC demo band list (two invented isotopologues of Qz2) runs end to end
/// through the session stored beside it; its generator (scripts/make_band_demo.py) put the true
/// upper numbering in the file, so the isotope shifts must fix offset 0, and the true model
/// constants it states must lie within 3σ of the global fit (SOURCE: the generator's closed-form
/// Morse upper state and DVR lower state, noise σ as stated there).
#[test]
fn demo_band_list_runs_end_to_end() {
    let doc = include_str!("../data/demo/qz2-bands.session.json");
    let session = Session::from_json(doc).expect("demo session");
    let a = analyze_session(&session, &mut |_, _| {}).expect("demo analysis");
    let r = a.as_bands().expect("bands");
    assert_eq!(r.numbering.best_offset, Some(0), "{}", r.numbering.why);
    assert_eq!(r.numbering.verdict, Verdict::FixedByIsotopeShifts);
    assert!(r.states.upper.is_some() && r.states.lower.is_some());
    assert!(r.convergence.d0_lower_cm1.is_some());
    assert!(!r.predictions.is_empty());
    let truth: Value =
        serde_json::from_str(include_str!("../data/demo/qz2-bands.truth.json")).expect("truth");
    let (we, s) = sig(&r.global_fit.upper.as_ref().expect("u").we_cm1);
    check("demo ωe′", we, f(&truth["upper_we_cm1"]), 3.0 * s);
    check(
        "demo Te",
        r.te_cm1.value,
        f(&truth["te_cm1"]),
        3.0 * r.te_cm1.sigma.expect("σ"),
    );
}

/// SOURCE: closed form. For an upper state with G′(x) = ωe x + c x² (x = v + ½, c > 0: spacings
/// widening upwards), renumbering by k puts the lowest slope of the downward extrapolation at
/// dG/dx = ωe − 2ck, so the zero-point test (G′ rising from v = −½ to the lowest observed level)
/// passes exactly for k < ωe/(2c) (domain.md §1.3). Here ωe = 20, c = 5: offsets 0 and 1 pass,
/// 2 and 3 fail.
#[test]
fn zero_point_test_rules_out_offsets_that_turn_g_over() {
    let (we, c) = (20.0, 5.0);
    let g_up = |v: f64| we * (v + 0.5) + c * (v + 0.5).powi(2);
    let g_lo = |v: f64| 900.0 * (v + 0.5) - 5.0 * (v + 0.5).powi(2);
    let mut bands = Vec::new();
    for vu in 0..7u32 {
        for vl in 0..3u32 {
            bands.push(Band {
                v_upper: vu,
                v_lower: vl,
                position_cm1: 15000.0 + g_up(f64::from(vu)) - g_lo(f64::from(vl)),
                sigma_cm1: Some(0.01),
                isotopologue: None,
            });
        }
    }
    let r = analyze_bands(
        &bands,
        BandPositions::Origins,
        None,
        &settings(Some((2, 2)), SigmaScaling::WhenAboveOne),
    )
    .expect("analysis");
    for o in r.numbering.offsets.iter().filter(|o| o.possible) {
        let expect = f64::from(o.offset) < we / (2.0 * c);
        assert_eq!(o.zero_point_ok, Some(expect), "offset {}", o.offset);
    }
}

mod property {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(24))]
        /// SOURCE: closed-form Morse terms (domain.md §2.1). For any invented two-state system
        /// and any pattern of gaps that keeps at least three levels per state, exact bands give
        /// back ωe, ωexe of both states, T00 and Te (tolerance 1e-6 relative), whatever the
        /// order in which the bands are listed, and shifting every band by a constant moves T00
        /// and Te by that constant only.
        #[test]
        fn exact_morse_bands_give_back_their_constants(
            weu in 100.0f64..2000.0, xu in 0.002f64..0.02,
            wel in 100.0f64..3000.0, xl in 0.002f64..0.02,
            te in 5000.0f64..60000.0,
            gaps in prop::collection::vec(any::<bool>(), 40),
            shift in -500.0f64..500.0,
            rotate in 0usize..40,
        ) {
            let (wexeu, wexel) = (weu * xu, wel * xl);
            let g = |we: f64, wexe: f64, v: f64| we * (v + 0.5) - wexe * (v + 0.5).powi(2);
            let mut bands = Vec::new();
            for vu in 0..8u32 {
                for vl in 0..5u32 {
                    let k = (vu * 5 + vl) as usize;
                    // Keep the diagonal-ish cells so every level is present.
                    if gaps[k] && vu != vl && vu != vl + 3 {
                        continue;
                    }
                    bands.push(Band {
                        v_upper: vu,
                        v_lower: vl,
                        position_cm1: te + g(weu, wexeu, f64::from(vu)) - g(wel, wexel, f64::from(vl)),
                        sigma_cm1: Some(0.05),
                        isotopologue: None,
                    });
                }
            }
            let n = bands.len();
            bands.rotate_left(rotate % n);
            let s = settings(Some((2, 2)), SigmaScaling::WhenAboveOne);
            let r = analyze_bands(&bands, BandPositions::Origins, None, &s).expect("analysis");
            let gf = &r.global_fit;
            let rel = |a: f64, b: f64| (a - b).abs() <= 1e-6 * b.abs().max(1.0);
            prop_assert!(rel(gf.upper.as_ref().unwrap().we_cm1.as_ref().unwrap().value, weu));
            prop_assert!(rel(gf.upper.as_ref().unwrap().wexe_cm1.as_ref().unwrap().value, wexeu));
            prop_assert!(rel(gf.lower.as_ref().unwrap().we_cm1.as_ref().unwrap().value, wel));
            prop_assert!(rel(gf.lower.as_ref().unwrap().wexe_cm1.as_ref().unwrap().value, wexel));
            prop_assert!(rel(r.te_cm1.value, te));
            let t00 = te + g(weu, wexeu, 0.0) - g(wel, wexel, 0.0);
            prop_assert!(rel(r.t00_cm1.value, t00));
            for b in bands.iter_mut() {
                b.position_cm1 += shift;
            }
            let r2 = analyze_bands(&bands, BandPositions::Origins, None, &s).expect("shifted");
            prop_assert!((r2.t00_cm1.value - r.t00_cm1.value - shift).abs() < 1e-6);
            prop_assert!((r2.te_cm1.value - r.te_cm1.value - shift).abs() < 1e-6);
        }
    }
}

/// Bands left out of the joint fit are counted and named where the count is shown: the demo band
/// list read without the isotopologue atoms (its invented tags name no real nuclides).
#[test]
fn bands_left_out_of_the_joint_fit_are_counted_and_named() {
    let text = include_str!("../data/demo/qz2-bands.csv");
    // The count to expect, read from the file itself: rows tagged 29Qz31Qz.
    let tagged = text
        .lines()
        .filter(|l| !l.starts_with('#') && l.trim_end().ends_with(",29Qz31Qz"))
        .count();
    assert!(tagged > 0);
    let s = Session::new(
        text,
        None,
        IntakeOptions::default(),
        AnalysisSettings {
            mc_samples: 0,
            ..AnalysisSettings::default()
        },
    );
    let Analysis::Bands(r) = analyze_session(&s, &mut |_, _| {}).unwrap() else {
        panic!("a band report")
    };
    let g = &r.global_fit;
    assert_eq!(g.left_out.len(), 1, "{:?}", g.left_out);
    assert_eq!(g.left_out[0].isotopologue, "'29Qz31Qz'");
    assert_eq!(g.left_out[0].n_bands, tagged);
    assert_eq!(g.n_bands + tagged, r.input.n_bands);
    assert!(g.left_out[0].reason.contains("two atoms"));
    let line = render_band_text(&r)
        .lines()
        .find(|l| l.starts_with("Global fit"))
        .unwrap()
        .to_string();
    assert!(
        line.contains(&format!("{} bands of {}", g.n_bands, r.input.n_bands))
            && line.contains(&format!("'29Qz31Qz', {tagged} bands")),
        "{line}"
    );
}

/// A single-state order forced on a band list is answered in words, not with settings paths
/// (common practice, no source: messages in the user's terms).
#[test]
fn a_forced_single_state_order_on_bands_is_explained_in_words() {
    let s = Session::new(
        include_str!("../data/demo/qz2-bands.csv"),
        None,
        IntakeOptions::default(),
        AnalysisSettings {
            mc_samples: 0,
            order: Some(3),
            ..AnalysisSettings::default()
        },
    );
    let Analysis::Bands(r) = analyze_session(&s, &mut |_, _| {}).unwrap() else {
        panic!("a band report")
    };
    let w = r
        .warnings
        .iter()
        .find(|w| w.contains("does not apply to band lists"))
        .expect("a warning");
    assert!(!w.contains("bands.") && !w.contains("_order"), "{w}");
    assert!(w.contains("--upper-order"), "{w}");
}
