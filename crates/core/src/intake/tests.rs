//! Unit tests of intake on small tables written here (expected values are the numbers typed
//! into the tables, converted with the closed-form factors checked in the units tests).

use super::*;

fn read(text: &str) -> DataSet {
    read_table(text, &IntakeOptions::default()).unwrap_or_else(|e| panic!("{e}\n{text}"))
}

fn read_with(text: &str, options: &IntakeOptions) -> DataSet {
    read_table(text, options).unwrap_or_else(|e| panic!("{e}\n{text}"))
}

fn roles(d: &DataSet) -> Vec<Role> {
    d.columns.iter().map(|c| c.role).collect()
}

#[test]
fn simple_level_csv() {
    let d = read("v,E,sigma\n0,1000.5,0.1\n1,2950.25,0.2\n2,4850,0.3\n");
    assert_eq!(d.kind, DataKind::Levels);
    assert_eq!(d.kind_from, Provenance::Detected);
    assert_eq!(roles(&d), vec![Role::V, Role::Energy, Role::Sigma]);
    assert_eq!(d.header_row, Some(1));
    let levels = d.levels().expect("levels");
    assert_eq!(levels.len(), 3);
    assert_eq!(levels[1].v, 1);
    assert_eq!(levels[1].energy_cm1, 2950.25);
    assert_eq!(levels[1].sigma_cm1, Some(0.2));
    assert_eq!(d.rows[2].line, 4);
}

#[test]
fn units_from_header_and_sigma_inherits() {
    let d = read("v\tE (eV)\tσ\n0\t0.1\t0.001\n1\t0.3\t0.001\n2\t0.5\t0.002\n");
    assert_eq!(d.delimiter, Delimiter::Tab);
    let c = &d.columns[1];
    assert_eq!(
        (c.unit, c.unit_from),
        (Some(Unit::ElectronVolt), Some(Provenance::Header))
    );
    let s = &d.columns[2];
    assert_eq!(
        (s.unit, s.unit_from),
        (Some(Unit::ElectronVolt), Some(Provenance::ValueColumn))
    );
    let l = d.levels().expect("levels");
    let f = Unit::ElectronVolt.cm1_per_unit().expect("f");
    assert_eq!(l[0].energy_cm1, 0.1 * f);
    assert_eq!(l[2].sigma_cm1, Some(0.002 * f));
}

#[test]
fn bands_in_air_wavelength() {
    let text = "v', v'', lambda_air/nm\n0,0,589.0\n1,0,580.0\n2,0,571.5\n";
    let d = read(text);
    assert_eq!(d.kind, DataKind::Bands);
    assert_eq!(d.columns[2].unit, Some(Unit::Nanometre(Medium::Air)));
    assert_eq!(d.band_positions, Some(BandPositions::Origins));
    assert_eq!(d.band_positions_from, Some(Provenance::Assumed));
    let b = d.bands().expect("bands");
    let expect = 1e8 / crate::units::air_to_vacuum_angstrom(5890.0).expect("air");
    assert!((b[0].position_cm1 - expect).abs() < 1e-9);
}

#[test]
fn wavelength_without_medium_is_a_column_error() {
    let e =
        read_table("v',v'',lambda (nm)\n0,0,500\n", &IntakeOptions::default()).expect_err("medium");
    assert!(matches!(e, Error::Column { index: 3, .. }), "{e}");
    assert!(e.to_string().contains("air or in vacuum"), "{e}");
    let opts = IntakeOptions {
        unit: Some(Unit::Nanometre(Medium::Vacuum)),
        ..Default::default()
    };
    let d = read_with("v',v'',lambda (nm)\n0,0,500\n1,0,490\n2,0,480\n", &opts);
    assert_eq!(d.columns[2].unit, Some(Unit::Nanometre(Medium::Vacuum)));
    assert!((d.bands().expect("b")[0].position_cm1 - 20_000.0).abs() < 1e-8);
}

#[test]
fn spacings_and_v_half() {
    let d = read("v+1/2  ΔG\n0.5 2000\n1.5 1950\n");
    assert_eq!(d.kind, DataKind::Spacings);
    let s = d.spacings().expect("spacings");
    assert_eq!((s[0].v_lower, s[1].v_lower), (0, 1));
    let d = read("v+1/2  ΔG\n0.5 2000\n1 1950\n2.5 1900\n");
    assert_eq!(d.rows[1].problems[0].code, ProblemCode::VNotInteger);
}

#[test]
fn every_row_kept_with_reasons() {
    let text = "v,E,sigma\n0,0,0.1\n1,abc,0.1\n2,nan,0.1\n3,3000,-1\n2.5,3500,0.1\n-1,10,0.1\n4,4000,0.1\n4,4001,0.1\n,5000,0.1\n";
    let d = read(text);
    let codes: Vec<Vec<ProblemCode>> = d
        .rows
        .iter()
        .map(|r| r.problems.iter().map(|p| p.code).collect())
        .collect();
    use ProblemCode::*;
    assert_eq!(
        codes,
        vec![
            vec![],
            vec![NotANumber],
            vec![NotFinite],
            vec![SigmaNotPositive],
            vec![VNotInteger],
            vec![VNegative],
            vec![],
            vec![Duplicate],
            vec![Missing],
        ]
    );
    assert_eq!(d.usable_count(), 2);
    let e = d.check_usable().expect_err("too few");
    assert_eq!(
        e,
        Error::TooFewPoints {
            what: "a level list".into(),
            have: 2,
            need: 3
        }
    );
    let dup = &d.rows[7];
    assert_eq!(
        d.locate(dup, &dup.problems[0]),
        "row 9: duplicate of row 8 (same v = 4)"
    );
    let nan = &d.rows[2];
    assert_eq!(
        d.locate(nan, &nan.problems[0]),
        "row 4, column 2 ('E'): the level energy is not a finite number: 'nan'"
    );
}

#[test]
fn user_exclusion_frees_a_duplicate() {
    let text = "v,E\n0,0\n1,100\n1,101\n2,200\n";
    let mut opts = IntakeOptions::default();
    let d = read_with(text, &opts);
    assert_eq!(d.rows[2].status(), RowStatus::Excluded);
    opts.exclude(3, "misprint in the source");
    let d = read_with(text, &opts);
    assert_eq!(d.rows[1].status(), RowStatus::ExcludedByUser);
    assert_eq!(
        d.rows[1].user_reason.as_deref(),
        Some("misprint in the source")
    );
    assert_eq!(d.rows[2].status(), RowStatus::Usable);
    assert_eq!(
        d.levels()
            .expect("l")
            .iter()
            .map(|l| l.energy_cm1)
            .collect::<Vec<_>>(),
        vec![0.0, 101.0, 200.0]
    );
    assert_eq!(d.resolved_options().exclusions, opts.exclusions);
}

#[test]
fn headerless_positional() {
    let d = read("0 1000\n1 2900\n2 4700\n");
    assert_eq!(d.kind, DataKind::Levels);
    assert_eq!(roles(&d), vec![Role::V, Role::Energy]);
    assert!(
        d.diagnostics
            .iter()
            .any(|x| x.message.contains("no header"))
    );
    let d = read("0 0 20000 0.5\n1 0 20500 0.5\n2 0 21000 0.5\n");
    assert_eq!(d.kind, DataKind::Bands);
    assert_eq!(
        roles(&d),
        vec![Role::VUpper, Role::VLower, Role::Position, Role::Sigma]
    );
    let opts = IntakeOptions {
        kind: Some(DataKind::Spacings),
        ..Default::default()
    };
    let d = read_with("0 2000\n1 1950\n", &opts);
    assert_eq!(roles(&d), vec![Role::V, Role::Spacing]);
    let d = read("HCl 0 1000\nHCl 1 2900\nDCl 0 700\n");
    assert_eq!(roles(&d), vec![Role::Isotopologue, Role::V, Role::Energy]);
}

#[test]
fn header_in_comment_and_titles() {
    let d = read("# v  E  sigma\n0 0 0.1\n1 100 0.1\n2 200 0.1\n");
    assert!(d.header_in_comment);
    assert_eq!(d.header_row, Some(1));
    assert_eq!(roles(&d), vec![Role::V, Role::Energy, Role::Sigma]);
    let d = read("Table 3\nv\tE\n0\t0\n1\t100\n2\t200\n");
    assert_eq!(d.header_row, Some(2));
    assert!(d.diagnostics.iter().any(|x| x.message.contains("title")));
}

#[test]
fn overrides_win() {
    let text = "a;b;c\n0;1,5;0,1\n1;3,5;0,1\n2;5,5;0,1\n";
    let e = read_table(text, &IntakeOptions::default()).expect_err("unknown columns");
    assert!(e.to_string().contains("needs a v column"), "{e}");
    let mut opts = IntakeOptions::default();
    opts.set_column(1, Some(Role::V), None);
    opts.set_column(2, Some(Role::Energy), Some(Unit::MilliElectronVolt));
    opts.set_column(3, Some(Role::Sigma), None);
    let d = read_with(text, &opts);
    assert_eq!(d.delimiter, Delimiter::Semicolon);
    assert_eq!(d.columns[1].role_from, Provenance::Override);
    let f = Unit::MilliElectronVolt.cm1_per_unit().expect("f");
    assert_eq!(d.levels().expect("l")[0].energy_cm1, 1.5 * f);
    assert_eq!(d.levels().expect("l")[0].sigma_cm1, Some(0.1 * f));
    // Resolved options reproduce the same reading.
    let again = read_with(text, &d.resolved_options());
    assert_eq!(again.rows, d.rows);
    assert_eq!(
        again
            .columns
            .iter()
            .map(|c| (c.role, c.unit))
            .collect::<Vec<_>>(),
        d.columns
            .iter()
            .map(|c| (c.role, c.unit))
            .collect::<Vec<_>>()
    );
}

#[test]
fn concise_uncertainty_and_absurd_unit() {
    let d = read("v,E\n0,0.0000(10)\n1,2885.97(2)\n2,5668.04(3)\n");
    let l = d.levels().expect("l");
    assert!((l[1].sigma_cm1.expect("s") - 0.02).abs() < 1e-15);
    let d = read("v,E (eV)\n0,0\n1,2885.9\n2,5668.0\n");
    assert_eq!(d.rows[1].problems[0].code, ProblemCode::Magnitude);
    assert!(
        d.diagnostics
            .iter()
            .any(|x| x.message.contains("is the unit right"))
    );
}

#[test]
fn heads_flag_from_header_and_override() {
    let d = read("v',v'',head\n0,0,100\n1,0,200\n2,0,300\n");
    assert_eq!(d.band_positions, Some(BandPositions::Heads));
    assert_eq!(d.band_positions_from, Some(Provenance::Header));
    let opts = IntakeOptions {
        band_positions: Some(BandPositions::Origins),
        ..Default::default()
    };
    assert_eq!(
        read_with("v',v'',head\n0,0,100\n", &opts).band_positions,
        Some(BandPositions::Origins)
    );
}

#[test]
fn isotopologue_groups_count_separately() {
    let d = read("iso,v,E\nHCl,0,0\nHCl,1,100\nDCl,0,0\nDCl,1,70\n");
    let e = d.check_usable().expect_err("two per group");
    assert!(e.to_string().contains("of one isotopologue"), "{e}");
    let d = read("iso,v,E\nHCl,0,0\nHCl,1,100\nDCl,0,0\nDCl,1,70\nHCl,1,101\n");
    assert_eq!(d.rows[4].problems[0].code, ProblemCode::Duplicate);
    assert!(d.rows[4].problems[0].message.contains("isotopologue 'HCl'"));
}

#[test]
fn whitespace_header_with_separate_units() {
    let d = read("v   E (eV)   sigma\n0 0 0.001\n1 0.3 0.001\n2 0.5 0.001\n");
    assert_eq!(d.columns.len(), 3);
    assert_eq!(d.columns[1].name, "E (eV)");
    assert_eq!(d.columns[1].unit, Some(Unit::ElectronVolt));
    let d = read("# v'  v''  lambda air (nm)\n0 0 589.0\n1 0 580.0\n2 0 571.5\n");
    assert_eq!(d.columns[2].unit, Some(Unit::Nanometre(Medium::Air)));
    let d = read("v E / eV\n0 0\n1 0.3\n2 0.5\n");
    assert_eq!(d.columns[1].unit, Some(Unit::ElectronVolt));
}

#[test]
fn a_bad_first_row_is_not_taken_for_a_header() {
    let d = read("0 abc\n1 100\n2 200\n3 300\n");
    assert_eq!(d.header_row, None);
    assert_eq!(d.rows[0].problems[0].code, ProblemCode::NotANumber);
    assert_eq!(d.usable_count(), 3);
}

/// A σ typed by the user replaces the table's σ, in the value column's unit (here eV, converted
/// with the CODATA 2022 factor 1 eV = 8065.543937 cm⁻¹, scipy.constants), survives the resolved
/// options, and a non-positive one makes the row unusable with a reason.
#[test]
fn sigma_edits_replace_the_table_sigma() {
    let text = "v,E (eV),sigma\n0,0,0.001\n1,0.25,0.001\n2,0.49,0.001\n3,0.72,0.001\n";
    let mut o = IntakeOptions::default();
    o.set_sigma(3, 0.002);
    o.set_sigma(4, -1.0);
    let d = read_table(text, &o).unwrap();
    let levels = d.levels().unwrap();
    let l1 = levels.iter().find(|l| l.v == 1).unwrap();
    assert!((l1.sigma_cm1.unwrap() - 0.002 * 8_065.543_937_349).abs() < 1e-9);
    let l0 = levels.iter().find(|l| l.v == 0).unwrap();
    assert!((l0.sigma_cm1.unwrap() - 0.001 * 8_065.543_937_349).abs() < 1e-9);
    let row4 = d.rows.iter().find(|r| r.line == 4).unwrap();
    assert!(!row4.is_usable() && row4.problems[0].message.contains("positive"));
    assert_eq!(d.sigma_edits.len(), 2);
    let again = read_table(text, &d.resolved_options()).unwrap();
    assert_eq!(again.rows, d.rows);
    o.clear_sigma(4);
    assert!(
        read_table(text, &o)
            .unwrap()
            .rows
            .iter()
            .all(|r| r.is_usable())
    );
}

/// One empty σ cell among given σ: that row takes the median of the given σ (the rule of this
/// tool, no source), is noted as such, and the reading warns naming the row. The median of
/// 0.1, 0.3, 0.2, 0.5, 0.4 is 0.3, typed here.
#[test]
fn one_missing_sigma_takes_the_median_of_the_given_ones() {
    let d = read(
        "v,E,sigma\n0,0,0.1\n1,980.3,0.3\n2,1939.8,0.2\n3,2880.2,\n4,3799.9,0.5\n5,4700.1,0.4\n",
    );
    assert_eq!(d.usable_count(), 6);
    let row = d.rows.iter().find(|r| r.line == 5).expect("row 5");
    assert!(row.is_usable());
    let levels = d.levels().expect("levels");
    let l3 = levels.iter().find(|l| l.v == 3).expect("v = 3");
    assert_eq!(l3.sigma_cm1, Some(0.3));
    let note = row.note.as_deref().expect("a note on the row");
    assert!(note.contains("median"), "{note}");
    assert!(
        d.diagnostics.iter().any(|g| g.row == Some(5)
            && g.severity == Severity::Warning
            && g.message.contains("row 5")),
        "{:?}",
        d.diagnostics
    );
    // The rows with σ keep their own and carry no note.
    assert!(
        d.rows
            .iter()
            .filter(|r| r.line != 5)
            .all(|r| r.note.is_none())
    );
    assert_eq!(
        levels.iter().find(|l| l.v == 1).unwrap().sigma_cm1,
        Some(0.3)
    );
    assert_eq!(
        levels.iter().find(|l| l.v == 2).unwrap().sigma_cm1,
        Some(0.2)
    );
}

/// A σ the user types for the row wins over the median, and then no note is made.
#[test]
fn a_typed_sigma_replaces_the_median() {
    let mut o = IntakeOptions::default();
    o.set_sigma(5, 0.7);
    let d = read_with(
        "v,E,sigma\n0,0,0.1\n1,980.3,0.3\n2,1939.8,0.2\n3,2880.2,\n4,3799.9,0.5\n5,4700.1,0.4\n",
        &o,
    );
    let row = d.rows.iter().find(|r| r.line == 5).unwrap();
    assert_eq!(row.note, None);
    let l3 = d.levels().unwrap().into_iter().find(|l| l.v == 3).unwrap();
    assert_eq!(l3.sigma_cm1, Some(0.7));
}
