//! A 100 000-row pasted table: every row is read, the planted faults are found where planted,
//! and the values are the ones written (correctness only; timing is not asserted).
//!
//! SOURCE: the table is generated here from the closed form G(v) = ωe(v+½) − ωexe(v+½)²
//! (SYNTHETIC constants per isotopologue); expected values are the numbers printed into the text.

use rungs_core::intake::{DataKind, IntakeOptions, ProblemCode, RowStatus, read_table};

const ISOTOPOLOGUES: usize = 100;
const LEVELS: usize = 1000;

fn energy(iso: usize, v: usize) -> f64 {
    let we = 100.0 + iso as f64;
    let wexe = 0.04;
    let x = v as f64 + 0.5;
    we * x - wexe * x * x
}

#[test]
fn hundred_thousand_rows() {
    let mut text =
        String::from("# SYNTHETIC: 100 invented isotopologues\r\niso\tv\tE (cm-1)\tsigma\r\n");
    // Line 1 comment, line 2 header; row k (0-based) is on line k + 3.
    let mut planted = Vec::new();
    for k in 0..ISOTOPOLOGUES * LEVELS {
        let (iso, v) = (k / LEVELS, k % LEVELS);
        let line = k + 3;
        if k % 9973 == 17 {
            text.push_str(&format!("X{iso}\t{v}\tbad\t0.01\r\n"));
            planted.push(line);
        } else {
            text.push_str(&format!("X{iso}\t{v}\t{:.6}\t0.01\r\n", energy(iso, v)));
        }
    }
    let started = std::time::Instant::now();
    let d = read_table(&text, &IntakeOptions::default()).expect("read");
    let elapsed = started.elapsed();
    eprintln!("read 100 000 rows in {elapsed:?} (debug build unless run with --release)");

    assert_eq!(d.kind, DataKind::Levels);
    assert_eq!(d.rows.len(), ISOTOPOLOGUES * LEVELS);
    assert_eq!(d.header_row, Some(2));
    let excluded: Vec<usize> = d
        .rows
        .iter()
        .filter(|r| r.status() != RowStatus::Usable)
        .map(|r| r.line)
        .collect();
    assert_eq!(excluded, planted);
    for line in &planted {
        let r = &d.rows[line - 3];
        assert_eq!(r.problems[0].code, ProblemCode::NotANumber);
        assert_eq!(r.problems[0].column, Some(3));
    }
    d.check_usable().expect("usable");
    let levels = d.levels().expect("levels");
    assert_eq!(levels.len(), ISOTOPOLOGUES * LEVELS - planted.len());
    for k in [0usize, 1, 999, 1000, 54_321, 99_999] {
        let r = &d.rows[k];
        assert_eq!(r.line, k + 3);
        let rungs_core::intake::Observation::Level(l) = r.observation.as_ref().expect("usable")
        else {
            panic!("not a level")
        };
        let (iso, v) = (k / LEVELS, k % LEVELS);
        assert_eq!(l.v as usize, v);
        assert_eq!(l.isotopologue.as_deref(), Some(format!("X{iso}").as_str()));
        let printed: f64 = format!("{:.6}", energy(iso, v)).parse().expect("number");
        assert_eq!(l.energy_cm1, printed);
        assert_eq!(l.sigma_cm1, Some(0.01));
    }
}
