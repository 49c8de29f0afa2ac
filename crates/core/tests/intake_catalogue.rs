//! The bad-input catalogue: every file under tests/intake/bad must give the expected message
//! fragment at the expected row (line) and column.
//!
//! SOURCE: tests/intake/catalogue.json — hand-written SYNTHETIC bad inputs; what is wrong with
//! each is common practice, no source. The expected row and column are where the fault was
//! typed into the file.

use std::path::PathBuf;

use rungs_core::Error;
use rungs_core::intake::{IntakeOptions, decode, read_table};
use serde_json::Value;

fn dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../tests/intake")
}

/// What the catalogue expects: where (`error`, `row` or `too_few`), a message fragment, and the
/// row and column (`None` where the message is about the whole table, a whole row or column).
struct Expected {
    expect: String,
    fragment: String,
    row: Option<usize>,
    column: Option<usize>,
}

fn location(e: &Error) -> (Option<usize>, Option<usize>) {
    match e {
        Error::Parse { line, .. } => (Some(*line), None),
        Error::Column { index, .. } => (None, Some(*index)),
        Error::Cell { row, .. } => (Some(*row), None),
        _ => (None, None),
    }
}

fn check(input: &[u8], options: Option<&Value>, expected: &Expected) -> Result<(), String> {
    let (text, _) = decode(input);
    let options: IntakeOptions = match options {
        None => IntakeOptions::default(),
        Some(v) => match serde_json::from_value(v.clone()) {
            Ok(o) => o,
            Err(e) => {
                let msg = e.to_string();
                return if expected.expect == "error" && msg.contains(&expected.fragment) {
                    Ok(())
                } else {
                    Err(format!("options did not read: {msg}"))
                };
            }
        },
    };
    let result = read_table(&text, &options);
    match expected.expect.as_str() {
        "error" => {
            let e = result
                .err()
                .ok_or("expected an error, the table was read")?;
            let msg = e.to_string();
            let loc = location(&e);
            if msg.contains(&expected.fragment) && loc == (expected.row, expected.column) {
                Ok(())
            } else {
                Err(format!("got error {msg:?} at {loc:?}"))
            }
        }
        "row" => {
            let d = result.map_err(|e| format!("unexpected error: {e}"))?;
            let row = expected.row.ok_or("row cases need a row")?;
            let r = d
                .rows
                .iter()
                .find(|r| r.line == row)
                .ok_or(format!("no data row {row}"))?;
            let hit = r
                .problems
                .iter()
                .any(|p| p.column == expected.column && p.message.contains(&expected.fragment));
            // Every other row of a catalogue file is clean, so the fault is found where typed.
            let others = d
                .rows
                .iter()
                .filter(|o| o.line != row && !o.problems.is_empty())
                .count();
            if hit && others == 0 && !r.is_usable() {
                Ok(())
            } else {
                let all: Vec<String> = d
                    .rows
                    .iter()
                    .flat_map(|r| r.problems.iter().map(|p| d.locate(r, p)))
                    .collect();
                Err(format!("problems: {all:?}"))
            }
        }
        "too_few" => {
            let d = result.map_err(|e| format!("unexpected error: {e}"))?;
            let e = d
                .check_usable()
                .err()
                .ok_or("expected too few usable rows")?;
            let msg = e.to_string();
            if msg.contains(&expected.fragment) && matches!(e, Error::TooFewPoints { .. }) {
                Ok(())
            } else {
                Err(format!("got {msg:?}"))
            }
        }
        other => Err(format!("unknown expectation '{other}'")),
    }
}

#[test]
fn bad_input_catalogue() {
    let manifest: Value = serde_json::from_str(
        &std::fs::read_to_string(dir().join("catalogue.json")).expect("catalogue.json"),
    )
    .expect("catalogue JSON");
    let cases = manifest["cases"].as_array().expect("cases");
    assert!(
        cases.len() >= 30,
        "the catalogue must hold at least 30 cases"
    );
    let mut failures = Vec::new();
    for case in cases {
        let file = case["file"].as_str().expect("file");
        let bytes = std::fs::read(dir().join(file)).expect(file);
        let expected = Expected {
            expect: case["expect"].as_str().expect("expect").to_string(),
            fragment: case["fragment"].as_str().expect("fragment").to_string(),
            row: case["row"].as_u64().map(|r| r as usize),
            column: case["column"].as_u64().map(|c| c as usize),
        };
        if let Err(why) = check(&bytes, case.get("options"), &expected) {
            failures.push(format!(
                "{file}: expected {:?} at row {:?}, column {:?}; {why}",
                expected.fragment, expected.row, expected.column
            ));
        }
    }
    assert!(
        failures.is_empty(),
        "{} of {} cases failed:\n{}",
        failures.len(),
        cases.len(),
        failures.join("\n")
    );
}

/// Every file under tests/intake/bad is listed in the catalogue (none silently left out).
#[test]
fn every_bad_file_is_listed() {
    let manifest = std::fs::read_to_string(dir().join("catalogue.json")).expect("catalogue");
    for entry in std::fs::read_dir(dir().join("bad")).expect("bad dir") {
        let name = entry
            .expect("entry")
            .file_name()
            .to_string_lossy()
            .to_string();
        assert!(
            manifest.contains(&format!("bad/{name}")),
            "{name} is not in catalogue.json"
        );
    }
}
