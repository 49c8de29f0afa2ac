//! Session documents round-trip exactly (property test), and a saved session reproduces the
//! data set it was made from.
//!
//! SOURCE: the round-trip property is our own design rule (common practice, no source); exact
//! float round trips rely on serde_json's `float_roundtrip` feature.

use proptest::prelude::*;
use rungs_core::intake::{
    ALL_ROLES, BandPositions, ColumnOverride, DataKind, Delimiter, IntakeOptions, Role, SigmaEdit,
    UserExclusion, read_table,
};
use rungs_core::session::Session;
use rungs_core::settings::{
    AnalysisSettings, BandRotation, BandSettings, IsotopologueMasses, MassSpec, SigmaScaling,
    StateRotation,
};
use rungs_core::units::ALL_UNITS;

fn finite_f64() -> impl Strategy<Value = f64> {
    prop_oneof![
        any::<f64>().prop_filter("finite", |x| x.is_finite()),
        Just(0.0),
        Just(-0.0),
        Just(f64::MIN_POSITIVE),
        Just(5e-324),
        Just(f64::MAX),
        Just(0.1 + 0.2),
    ]
}

fn band_settings() -> impl Strategy<Value = BandSettings> {
    let rotation =
        (finite_f64(), finite_f64(), finite_f64(), finite_f64()).prop_map(|(bu, au, bl, al)| {
            BandRotation {
                upper: StateRotation {
                    be_cm1: bu,
                    alpha_e_cm1: au,
                },
                lower: StateRotation {
                    be_cm1: bl,
                    alpha_e_cm1: al,
                },
            }
        });
    (
        prop::option::of(rotation),
        finite_f64(),
        prop::option::of(finite_f64()),
        prop::collection::vec(
            (any::<String>(), any::<String>(), any::<String>())
                .prop_map(|(tag, a, b)| IsotopologueMasses { tag, a, b }),
            0..3,
        ),
        prop::collection::vec(any::<String>(), 0..3),
        prop::option::of(any::<String>()),
        prop::option::of(any::<u32>()),
        prop::option::of(any::<u32>()),
    )
        .prop_map(
            |(
                rotation,
                head_sigma_cm1,
                atomic_excitation_cm1,
                isotopologues,
                predict,
                reference,
                upper_order,
                lower_order,
            )| BandSettings {
                rotation,
                head_sigma_cm1,
                atomic_excitation_cm1,
                isotopologues,
                predict,
                reference,
                upper_order,
                lower_order,
            },
        )
}

fn settings() -> impl Strategy<Value = AnalysisSettings> {
    (
        (
            any::<u32>(),
            any::<u64>(),
            finite_f64(),
            prop::option::of(any::<u32>()),
            prop::option::of(any::<u32>()),
            prop::option::of(prop_oneof![
                finite_f64().prop_map(|mu_u| MassSpec::ReducedMass { mu_u }),
                (any::<String>(), any::<String>()).prop_map(|(a, b)| MassSpec::Nuclides { a, b }),
            ]),
        ),
        (
            any::<u32>(),
            any::<bool>(),
            prop::option::of(finite_f64()),
            prop_oneof![
                Just(SigmaScaling::Never),
                Just(SigmaScaling::WhenAboveOne),
                Just(SigmaScaling::Always)
            ],
            finite_f64(),
            finite_f64(),
            finite_f64(),
            prop::option::of(finite_f64()),
        ),
        band_settings(),
        (any::<bool>(), prop::option::of(finite_f64())),
    )
        .prop_map(
            |(
                (mc_samples, seed, lb_n, lb_top_levels, order, mass),
                (
                    max_order,
                    lb_fit_n_free,
                    lb_cn_cm1_an,
                    sigma_scaling,
                    curved_max_extrapolation,
                    near_dissociation_coverage,
                    outlier_threshold,
                    asymptote_cm1,
                ),
                bands,
                (potential_fit, re_angstrom),
            )| AnalysisSettings {
                mc_samples,
                seed,
                lb_n,
                lb_top_levels,
                order,
                mass,
                max_order,
                lb_fit_n_free,
                lb_cn_cm1_an,
                sigma_scaling,
                curved_max_extrapolation,
                near_dissociation_coverage,
                outlier_threshold,
                asymptote_cm1,
                potential_fit,
                re_angstrom,
                bands,
            },
        )
}

fn intake() -> impl Strategy<Value = IntakeOptions> {
    (
        prop::option::of(prop_oneof![
            Just(DataKind::Levels),
            Just(DataKind::Spacings),
            Just(DataKind::Bands)
        ]),
        prop::option::of(prop_oneof![
            Just(BandPositions::Origins),
            Just(BandPositions::Heads)
        ]),
        prop::option::of(any::<bool>()),
        prop::option::of(prop_oneof![
            Just(Delimiter::Comma),
            Just(Delimiter::Tab),
            Just(Delimiter::Semicolon),
            Just(Delimiter::Whitespace)
        ]),
        prop::option::of(prop::sample::select(ALL_UNITS.to_vec())),
        prop::collection::vec(
            (
                any::<usize>(),
                prop::option::of(prop::sample::select(ALL_ROLES.to_vec())),
                prop::option::of(prop::sample::select(ALL_UNITS.to_vec())),
            )
                .prop_map(|(column, role, unit)| ColumnOverride { column, role, unit }),
            0..5,
        ),
        prop::collection::vec(
            (any::<usize>(), any::<String>())
                .prop_map(|(row, reason)| UserExclusion { row, reason }),
            0..5,
        ),
        prop::collection::vec(
            (any::<usize>(), finite_f64()).prop_map(|(row, sigma)| SigmaEdit { row, sigma }),
            0..5,
        ),
    )
        .prop_map(
            |(kind, band_positions, header, delimiter, unit, columns, exclusions, sigmas)| {
                IntakeOptions {
                    kind,
                    band_positions,
                    header,
                    delimiter,
                    unit,
                    columns,
                    exclusions,
                    sigmas,
                }
            },
        )
}

fn session() -> impl Strategy<Value = Session> {
    (
        any::<String>(),
        prop::option::of(any::<String>()),
        intake(),
        settings(),
    )
        .prop_map(|(text, name, intake, settings)| Session::new(text, name, intake, settings))
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 2000, failure_persistence: None, ..ProptestConfig::default() })]

    /// write → read gives an equal session, and writing it again gives the same JSON text.
    #[test]
    fn round_trip_is_exact(s in session()) {
        let json = s.to_json().expect("write");
        let back = Session::from_json(&json).expect("read");
        prop_assert_eq!(&back, &s);
        // Bitwise equality of the floats (PartialEq would let 0.0 == -0.0 pass).
        prop_assert_eq!(back.settings.lb_n.to_bits(), s.settings.lb_n.to_bits());
        if let (Some(MassSpec::ReducedMass { mu_u: a }), Some(MassSpec::ReducedMass { mu_u: b })) =
            (&back.settings.mass, &s.settings.mass)
        {
            prop_assert_eq!(a.to_bits(), b.to_bits());
        }
        prop_assert_eq!(back.to_json().expect("write again"), json);
    }
}

/// A session made from a data set reads back to the same rows, roles and units.
#[test]
fn session_reproduces_the_data_set() {
    let text = "# SYNTHETIC\nv'\tv''\tlambda (nm, air)\tsigma\n0\t0\t589.0\t0.001\n1\t0\t580.0\t0.001\n2\t0\t571.5\t0.002\n2\t0\t571.6\t0.002\n";
    let d = read_table(text, &IntakeOptions::default()).expect("read");
    let mut s = Session::from_dataset(
        text,
        Some("bands.tsv".into()),
        &d,
        AnalysisSettings::default(),
    );
    s.intake.exclude(5, "blended with an atomic line");
    let back = Session::from_json(&s.to_json().expect("write")).expect("read");
    let d2 = back.data().expect("data");
    assert_eq!(
        d2.columns
            .iter()
            .map(|c| (c.role, c.unit))
            .collect::<Vec<_>>(),
        d.columns
            .iter()
            .map(|c| (c.role, c.unit))
            .collect::<Vec<_>>()
    );
    assert_eq!(
        d2.rows[2].user_reason.as_deref(),
        Some("blended with an atomic line")
    );
    // The duplicate on line 6 is freed by the user's exclusion of line 5.
    assert!(d2.rows[3].is_usable());
    assert_eq!(d2.usable_count(), 3);
    assert_eq!(d2.columns[2].role, Role::Position);
}

/// An exported analysis, opened again for its session and re-analysed, exports the same bytes:
/// exclusions with their reasons (one formula-like and one with markup), σ edits and settings
/// all survive (common practice, no source: a saved result must reproduce itself).
#[test]
fn exported_analysis_reopens_to_the_same_bytes() {
    // SYNTHETIC levels of an invented oscillator.
    let text = "v,E,sigma\n0,0,0.1\n1,980.3,0.3\n2,1939.8,0.2\n3,2880.2,0.2\n4,3799.9,0.5\n5,4700.1,0.4\n6,5580.2,0.4\n7,6440.0,0.5\n";
    let mut intake = IntakeOptions::default();
    intake.exclude(4, "=HYPERLINK(\"x\") suspected blend");
    intake.exclude(7, "<b>perturbed</b> & shifted");
    intake.set_sigma(5, 0.35);
    let settings = AnalysisSettings {
        mc_samples: 50,
        asymptote_cm1: Some(12000.0),
        ..AnalysisSettings::default()
    };
    let session = Session::new(text, Some("oscillator.csv".into()), intake, settings);
    let first = rungs_core::analyze_session(&session, &mut |_, _| {})
        .expect("analysis")
        .to_json()
        .expect("export");
    let reopened = Session::open(Some("export.json".into()), &first).expect("reopen");
    assert_eq!(reopened.intake.exclusions.len(), 2);
    assert_eq!(reopened.intake.sigmas.len(), 1);
    let second = rungs_core::analyze_session(&reopened, &mut |_, _| {})
        .expect("analysis again")
        .to_json()
        .expect("export again");
    assert!(first == second, "the re-export differs from the export");
}
