//! Fuzzing intake with proptest: arbitrary text and mutated valid tables never panic, and the
//! invariants of intake hold on whatever is read.
//!
//! Invariants (our own design rules, common practice, no source): a row is usable exactly when
//! it has a clean observation and neither intake nor the user excluded it; usable values are
//! finite, within the plausible ranges and with σ > 0; every input line with content is a data
//! row, the header, a comment, part of a multi-line quoted cell, or a reported title line; the
//! resolved options read the text back to the same rows.
//!
//! Bounded in `scripts/test` at 3000 cases per property; more on demand:
//! `PROPTEST_CASES=100000 cargo test -p rungs-core --test intake_fuzz`.

use std::collections::BTreeSet;

use proptest::prelude::*;
use rungs_core::intake::{
    BandPositions, DataKind, DataSet, Delimiter, IntakeOptions, MAX_ABS_ENERGY_CM1,
    MAX_SPACING_CM1, Observation, read_table,
};
use rungs_core::units::{ALL_UNITS, Unit};

const VALID: [&str; 8] = [
    "v,E,sigma\n0,0,0.1\n1,2885.97,0.2\n2,5668.04,0.3\n3,8347.0,0.3\n",
    "# SYNTHETIC molecule\nv'\tv''\tnu (cm-1)\tσ\n0\t0\t20000.5\t0.05\n1\t0\t20510.25\t0.05\n2\t0\t21005\t0.1\n0\t1\t19500\t0.1\n",
    "# v  dG  sigma\n0 2885.9 0.1\n1 2782.0 0.1\n2 2680.1 0.1\n",
    "\u{feff}v;E (eV);unc\r\n0;0,0000;0,0001\r\n1;0,3578;0,0001\r\n2;0,7028;0,0002\r\n",
    "iso,v,E\n\"1H-35Cl\",0,0\n\"1H-35Cl\",1,2885.97(2)\n\"1H-35Cl\",2,5668.04(3)\n\"2H-35Cl\",0,0\n\"2H-35Cl\",1,2091.0 ± 0.1\n",
    "Table 1\nv'\tv''\tlambda_air/nm\thead\n0\t0\t589.0\n1\t0\t580.0\n2\t0\t571.5\n",
    "0 0 20000 0.5\n1 0 20500 0.5\n2 0 21000 0.5\n3 0 21490 0.5\n",
    "v+1/2,ΔG_{v+1/2} (cm-1),B\n0.5,2000,10\n1.5,1950,9.8\n2.5,1900,9.6\n",
];

fn split_lines(text: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let b = text.as_bytes();
    let (mut start, mut i) = (0, 0);
    while i < b.len() {
        if b[i] == b'\n' || b[i] == b'\r' {
            out.push(&text[start..i]);
            if b[i] == b'\r' && b.get(i + 1) == Some(&b'\n') {
                i += 1;
            }
            start = i + 1;
        }
        i += 1;
    }
    if start < b.len() {
        out.push(&text[start..]);
    }
    out
}

fn has_content(line: &str) -> bool {
    line.chars()
        .any(|c| !(c.is_whitespace() || matches!(c, ',' | ';' | '"' | '\u{feff}' | '\u{200b}')))
}

fn check_invariants(text: &str, d: &DataSet) {
    for row in &d.rows {
        let usable =
            row.problems.is_empty() && row.user_reason.is_none() && row.observation.is_some();
        assert_eq!(row.is_usable(), usable, "row {}", row.line);
        if !row.problems.is_empty() {
            for p in &row.problems {
                let located = d.locate(row, p);
                assert!(
                    located.starts_with(&format!("row {}", row.line)),
                    "{located}"
                );
                assert!(p.column.is_none_or(|c| c >= 1 && c <= d.columns.len()));
            }
        }
        if usable {
            let (value, sigma) = match row.observation.as_ref().expect("usable") {
                Observation::Level(l) => {
                    assert!(l.energy_cm1.abs() <= MAX_ABS_ENERGY_CM1);
                    (l.energy_cm1, l.sigma_cm1)
                }
                Observation::Spacing(s) => {
                    assert!(s.spacing_cm1 > 0.0 && s.spacing_cm1 <= MAX_SPACING_CM1);
                    (s.spacing_cm1, s.sigma_cm1)
                }
                Observation::Band(b) => {
                    assert!(b.position_cm1 > 0.0 && b.position_cm1 <= MAX_ABS_ENERGY_CM1);
                    (b.position_cm1, b.sigma_cm1)
                }
            };
            assert!(value.is_finite());
            assert!(sigma.is_none_or(|s| s.is_finite() && s > 0.0));
        }
    }
    assert_eq!(d.usable_count(), d.observations().len());
    // Nothing silently dropped.
    let mut covered = BTreeSet::new();
    for row in &d.rows {
        let span = row
            .cells
            .iter()
            .map(|c| c.matches('\n').count())
            .sum::<usize>();
        covered.extend(row.line..=row.line + span);
    }
    covered.extend(d.header_row);
    for diag in &d.diagnostics {
        if diag.message.contains("title line") {
            covered.extend(diag.row);
        }
        // "a quoted cell runs from line A to line B (…)": lines A..=B belong to one record.
        if let Some(rest) = diag.message.strip_prefix("a quoted cell runs from line ") {
            let nums: Vec<usize> = rest
                .split(|c: char| !c.is_ascii_digit())
                .filter(|t| !t.is_empty())
                .take(2)
                .map(|t| t.parse().expect("line number"))
                .collect();
            covered.extend(nums[0]..=nums[1]);
        }
    }
    let lines = split_lines(text.strip_prefix('\u{feff}').unwrap_or(text));
    let mut quoted_until = 0;
    for (i, line) in lines.iter().enumerate() {
        let n = i + 1;
        // Intake counts a byte-order mark or zero-width space as blank space (a stray BOM
        // where two files were pasted together), so a line starting with one then `#` is a comment.
        let comment = line
            .trim_start_matches(|c: char| c.is_whitespace() || matches!(c, '\u{feff}' | '\u{200b}'))
            .starts_with('#');
        if covered.contains(&n) {
            // A record that spans lines covers its continuation lines too.
            if let Some(row) = d.rows.iter().find(|r| r.line == n) {
                let span = row
                    .cells
                    .iter()
                    .map(|c| c.matches('\n').count())
                    .sum::<usize>();
                quoted_until = quoted_until.max(n + span);
            }
            continue;
        }
        if comment || !has_content(line) || n <= quoted_until {
            continue;
        }
        panic!("line {n} ({line:?}) is neither data, header, comment nor title:\n{text:?}");
    }
    // Resolved options reproduce the reading.
    let again = read_table(text, &d.resolved_options()).expect("resolved options read again");
    assert_eq!(again.rows, d.rows, "resolved options changed the rows");
    let _ = d.check_usable();
    let _ = match d.kind {
        DataKind::Levels => d.levels().map(|v| v.len()),
        DataKind::Spacings => d.spacings().map(|v| v.len()),
        DataKind::Bands => d.bands().map(|v| v.len()),
    };
    serde_json::to_string(d).expect("a data set serialises");
}

fn run(text: &str, options: &IntakeOptions) {
    if let Ok(d) = read_table(text, options) {
        check_invariants(text, &d);
    }
}

fn options() -> impl Strategy<Value = IntakeOptions> {
    (
        prop::option::of(prop_oneof![
            Just(DataKind::Levels),
            Just(DataKind::Spacings),
            Just(DataKind::Bands)
        ]),
        prop::option::of(any::<bool>()),
        prop::option::of(prop_oneof![
            Just(Delimiter::Comma),
            Just(Delimiter::Tab),
            Just(Delimiter::Semicolon),
            Just(Delimiter::Whitespace)
        ]),
        prop::option::of(prop::sample::select(ALL_UNITS.to_vec())),
        prop::option::of(prop_oneof![
            Just(BandPositions::Origins),
            Just(BandPositions::Heads)
        ]),
        prop::collection::vec((1usize..6, "[a-z ]{0,8}"), 0..3),
    )
        .prop_map(|(kind, header, delimiter, unit, band_positions, excl)| {
            let mut o = IntakeOptions {
                kind,
                header,
                delimiter,
                unit,
                band_positions,
                ..Default::default()
            };
            for (row, why) in excl {
                o.exclude(row, why);
            }
            o
        })
}

#[derive(Debug, Clone)]
enum Mutation {
    Insert(usize, char),
    Delete(usize, usize),
    Replace(usize, char),
    DuplicateLine(usize),
    SwapLines(usize, usize),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    let interesting = prop::sample::select(vec![
        ',', ';', '\t', ' ', '\n', '\r', '"', '#', '\'', '-', '.', 'e', 'E', '(', ')', '±', '—',
        'ν', 'σ', '′', '″', '0', '1', '9', 'x', '\u{feff}', 'Å', '/', 'n', 'm', 'a', 'i', 'r',
    ]);
    prop_oneof![
        (any::<usize>(), interesting.clone()).prop_map(|(p, c)| Mutation::Insert(p, c)),
        (any::<usize>(), 1usize..6).prop_map(|(p, n)| Mutation::Delete(p, n)),
        (any::<usize>(), interesting).prop_map(|(p, c)| Mutation::Replace(p, c)),
        any::<usize>().prop_map(Mutation::DuplicateLine),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
    ]
}

fn apply(text: &str, m: &Mutation) -> String {
    let chars: Vec<char> = text.chars().collect();
    let n = chars.len().max(1);
    match *m {
        Mutation::Insert(p, c) => {
            let mut v = chars.clone();
            v.insert(p % (chars.len() + 1), c);
            v.into_iter().collect()
        }
        Mutation::Delete(p, k) => {
            let mut v = chars.clone();
            let start = p % n;
            let end = (start + k).min(v.len());
            if start < end {
                v.drain(start..end);
            }
            v.into_iter().collect()
        }
        Mutation::Replace(p, c) => {
            let mut v = chars.clone();
            if !v.is_empty() {
                v[p % n] = c;
            }
            v.into_iter().collect()
        }
        Mutation::DuplicateLine(p) => {
            let mut lines: Vec<&str> = text.split('\n').collect();
            let i = p % lines.len();
            lines.insert(i, lines[i]);
            lines.join("\n")
        }
        Mutation::SwapLines(a, b) => {
            let mut lines: Vec<&str> = text.split('\n').collect();
            let len = lines.len();
            lines.swap(a % len, b % len);
            lines.join("\n")
        }
    }
}

/// Cases per property: 3000, or `PROPTEST_CASES` when set (a longer run on demand).
fn cases() -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(3000)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: cases(), failure_persistence: None, ..ProptestConfig::default() })]

    /// Arbitrary Unicode text.
    #[test]
    fn arbitrary_text_never_panics(text in any::<String>(), opts in options()) {
        run(&text, &opts);
    }

    /// Text from the characters tables are made of.
    #[test]
    fn table_like_text_never_panics(
        text in "[0-9 ,;\t\r\n#\"'.eE+\\-()±σΔνλÅvVEGTBdnmairsigmauc/_\u{feff}]{0,400}",
        opts in options(),
    ) {
        run(&text, &opts);
    }

    /// Valid tables with a few random edits.
    #[test]
    fn mutated_tables_never_panic(
        which in 0usize..VALID.len(),
        edits in prop::collection::vec(mutation(), 1..6),
        opts in options(),
    ) {
        let mut text = VALID[which].to_string();
        for m in &edits {
            text = apply(&text, m);
        }
        run(&text, &opts);
        run(&text, &IntakeOptions::default());
    }
}

/// The valid tables really are valid (so that the mutations start from working input).
#[test]
fn valid_seeds_read_and_are_usable() {
    for (i, text) in VALID.iter().enumerate() {
        let d =
            read_table(text, &IntakeOptions::default()).unwrap_or_else(|e| panic!("seed {i}: {e}"));
        d.check_usable().unwrap_or_else(|e| panic!("seed {i}: {e}"));
        assert_eq!(d.excluded_rows().count(), 0, "seed {i}");
        check_invariants(text, &d);
    }
    // A unit for good measure: every unit token can be a default unit without panicking.
    for u in ALL_UNITS {
        let opts = IntakeOptions {
            unit: Some(u),
            ..Default::default()
        };
        run(VALID[0], &opts);
        assert_eq!(Unit::parse(u.token()).ok(), Some(u));
    }
}

/// Regression (found by the mutation test): a byte-order mark in the middle of the text, in
/// front of a `#` comment line, leaves that line a comment and loses nothing.
#[test]
fn stray_byte_order_mark_before_a_comment_is_still_a_comment() {
    let text = "v,E,sigma\n0,0,0.1\n\u{feff}# SYNTHETIC molecule\n1,990,0.1\n2,1960,0.1\n";
    let d = read_table(text, &IntakeOptions::default()).expect("reads");
    assert_eq!(d.usable_count(), 3);
    check_invariants(text, &d);
}
