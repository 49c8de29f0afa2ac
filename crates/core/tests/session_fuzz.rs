//! Fuzzing the session reader with proptest: mutated documents and documents with any value at
//! any key never panic, every refusal is in plain words, and whatever is read writes back and
//! reads again to the same session. More cases on demand: `PROPTEST_CASES=100000 cargo test -p
//! rungs-core --test session_fuzz`.
#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use proptest::prelude::*;
use rungs_core::intake::IntakeOptions;
use rungs_core::session::Session;
use rungs_core::settings::AnalysisSettings;

/// Words of the JSON reader and of Rust that a message never holds (common practice, no source).
const INTERNALS: [&str; 8] = [
    "parameter '",
    "invalid type",
    "unknown variant",
    "missing field",
    "expected u32",
    "expected f64",
    "at line 1 column",
    "`",
];

fn valid() -> String {
    let mut s = Session::new(
        "v,E,sigma\n0,495,0.1\n1,1465,0.1\n2,2415,0.2\n3,3345,0.2\n",
        Some("t.csv".into()),
        IntakeOptions::default(),
        AnalysisSettings::default(),
    );
    s.intake.exclude(3, "perturbed");
    s.intake.set_sigma(4, 0.5);
    s.intake
        .set_column(3, Some(rungs_core::intake::Role::Sigma), None);
    s.to_json().unwrap()
}

/// Every key a session document has, as a dotted place.
const KEYS: [&str; 24] = [
    "schema",
    "version",
    "written_by",
    "codata_year",
    "input",
    "input.name",
    "input.text",
    "intake",
    "intake.kind",
    "intake.header",
    "intake.delimiter",
    "intake.unit",
    "intake.columns",
    "intake.exclusions",
    "intake.sigmas",
    "settings",
    "settings.mc_samples",
    "settings.seed",
    "settings.lb_n",
    "settings.order",
    "settings.mass",
    "settings.max_order",
    "settings.sigma_scaling",
    "settings.bands",
];

fn any_json() -> impl Strategy<Value = serde_json::Value> {
    use serde_json::json;
    let leaf = prop_oneof![
        Just(json!(null)),
        any::<bool>().prop_map(|b| json!(b)),
        any::<i64>().prop_map(|n| json!(n)),
        any::<u64>().prop_map(|n| json!(n)),
        prop::sample::select(vec![0.0, -0.0, 1e300, -1e300, 5e-324, 0.5, -1.0])
            .prop_map(|x| json!(x)),
        prop::sample::select(vec![
            "",
            "levels",
            "bands",
            "foo",
            "<script>alert(1)</script>",
            "=1+2",
            "cm-1",
            "reduced_mass",
            "nuclides",
            "rungs-session",
            "\u{0}",
            "é",
            "1H",
        ])
        .prop_map(|s| json!(s)),
    ];
    leaf.prop_recursive(3, 16, 4, |inner| {
        prop_oneof![
            prop::collection::vec(inner.clone(), 0..4).prop_map(serde_json::Value::Array),
            prop::collection::vec(
                (
                    prop::sample::select(vec![
                        "row", "reason", "sigma", "column", "role", "kind", "mu_u", "a", "b", "x"
                    ]),
                    inner
                ),
                0..4
            )
            .prop_map(|kv| {
                serde_json::Value::Object(kv.into_iter().map(|(k, v)| (k.to_string(), v)).collect())
            }),
        ]
    })
}

/// Cases per property: 512, or `PROPTEST_CASES` when set (a longer run on demand).
fn cases() -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(512)
}

/// Reads `text`; a refusal must be plain, a reading must survive writing and reading again.
fn check(text: &str) {
    match Session::from_json(text) {
        Err(e) => {
            let m = e.to_string();
            for w in INTERNALS {
                assert!(!m.contains(w), "'{w}' in: {m}");
            }
            assert!(!m.is_empty());
        }
        Ok(s) => {
            let _ = s.data();
            if let Ok(json) = s.to_json() {
                assert_eq!(Session::from_json(&json).unwrap(), s);
            }
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(cases()))]

    /// Bytes of a valid document replaced, deleted or inserted at random places.
    #[test]
    fn mutated_documents_never_panic(
        edits in prop::collection::vec((any::<prop::sample::Index>(), 0u8..3, prop::sample::select(
            vec!['{', '}', '[', ']', ',', ':', '"', '\\', '0', '9', '-', 'e', '.', 'x', ' ', '\u{0}', 'é'])), 1..6)
    ) {
        let mut text: Vec<char> = valid().chars().collect();
        for (at, op, c) in edits {
            if text.is_empty() { break; }
            let i = at.index(text.len());
            match op {
                0 => text[i] = c,
                1 => { text.remove(i); }
                _ => text.insert(i, c),
            }
        }
        let text: String = text.into_iter().collect();
        check(&text);
        let _ = Session::open(None, &text);
    }

    /// Any JSON value put at any key of a valid document.
    #[test]
    fn any_value_at_any_key_never_panics(key in prop::sample::select(KEYS.to_vec()), value in any_json()) {
        let mut doc: serde_json::Value = serde_json::from_str(&valid()).unwrap();
        let (parent, last) = key.rsplit_once('.').map_or(("", key), |(p, l)| (p, l));
        let mut target = &mut doc;
        for k in parent.split('.').filter(|k| !k.is_empty()) {
            target = &mut target[k];
        }
        if target.is_null() {
            *target = serde_json::json!({});
        }
        target.as_object_mut().unwrap().insert(last.to_string(), value);
        check(&doc.to_string());
    }
}
