//! The catalogue of hostile command-line inputs (`tests/hostile/cli_cases.json`): each case is
//! run through the built `rungs` with a time and an address-space limit, and its outcome is
//! checked against the class the catalogue expects. Every case: no panic, not killed, in time.
#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use std::collections::BTreeMap;
use std::fs::File;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use serde_json::{Value, json};

/// Words of the JSON reader and of Rust that a plain message never holds, and the way settings
/// were once named by their keys ("parameter 'lb_n': …") (common practice, no source: messages
/// in the user's terms).
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

fn catalogue() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../../tests/hostile/cli_cases.json"
    );
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn demo(name: &str) -> String {
    format!("{}/../core/data/demo/{name}", env!("CARGO_MANIFEST_DIR"))
}

/// A SYNTHETIC two-column curve r/Å, V/cm⁻¹ on 1.45 … 9.44 Å.
fn curve(path: &Path, v: impl Fn(f64) -> f64) {
    let mut text = String::from("r,V\n");
    for i in 0..800 {
        let r = 1.45 + 0.01 * f64::from(i);
        text.push_str(&format!("{r},{}\n", v(r)));
    }
    std::fs::write(path, text).unwrap();
}

/// Sets (or, with `None`, removes) the value at the dotted `path` of `doc`.
fn put(doc: &mut Value, path: &str, value: Option<Value>) {
    let (parents, last) = path.rsplit_once('.').map_or(("", path), |(p, l)| (p, l));
    let mut target = doc;
    for key in parents.split('.').filter(|k| !k.is_empty()) {
        target = &mut target[key];
    }
    if target.is_null() {
        *target = json!({});
    }
    let object = target.as_object_mut().unwrap();
    match value {
        Some(v) => {
            object.insert(last.to_string(), v);
        }
        None => {
            object.remove(last);
        }
    }
}

/// The bytes of a case's file.
fn file_bytes(spec: &Value, base_table: &str) -> Vec<u8> {
    if let Some(t) = spec["text"].as_str() {
        return t.as_bytes().to_vec();
    }
    if let Some(r) = spec.get("repeat") {
        let times = usize::try_from(r["times"].as_u64().unwrap()).unwrap();
        let mut text = r["head"].as_str().unwrap().to_string();
        text.push_str(&r["line"].as_str().unwrap().repeat(times));
        return text.into_bytes();
    }
    if let Some(h) = spec["hex"].as_str() {
        return (0..h.len())
            .step_by(2)
            .map(|i| u8::from_str_radix(&h[i..i + 2], 16).unwrap())
            .collect();
    }
    if let Some(t) = spec["utf16le"].as_str() {
        let mut out = vec![0xff, 0xfe];
        for unit in t.encode_utf16() {
            out.extend(unit.to_le_bytes());
        }
        return out;
    }
    let s = &spec["session"];
    assert!(s.is_object(), "unknown file kind: {spec}");
    let mut doc = json!({
        "schema": "rungs-session", "version": 1, "written_by": "hostile catalogue",
        "codata_year": 2022, "input": {"name": "t.csv", "text": base_table},
        "intake": {}, "settings": {"mc_samples": 0}
    });
    if let Some(path) = s["remove"].as_str() {
        put(&mut doc, path, None);
    }
    if let Some(path) = s["set"].as_str() {
        let value = match s["list_of"].as_str() {
            Some(template) => {
                let count = s["count"].as_u64().unwrap();
                let entries: Vec<String> = (0..count)
                    .map(|i| template.replace("{i}", &i.to_string()))
                    .collect();
                serde_json::from_str(&format!("[{}]", entries.join(","))).unwrap()
            }
            None => s["value"].clone(),
        };
        put(&mut doc, path, Some(value));
    }
    let mut text = doc.to_string();
    text.push_str(spec["append"].as_str().unwrap_or(""));
    text.into_bytes()
}

/// What one run gave.
struct Outcome {
    code: Option<i32>,
    stdout: String,
    stderr: String,
    elapsed: Duration,
    timed_out: bool,
}

fn run(args: &[String], dir: &Path, time_limit: Duration, memory_mib: u64) -> Outcome {
    let out_path = dir.join("stdout");
    let err_path = dir.join("stderr");
    let mut child = Command::new("sh")
        .arg("-c")
        .arg(format!(
            "ulimit -v {}; exec \"$0\" \"$@\"",
            memory_mib * 1024
        ))
        .arg(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .stdin(Stdio::null())
        .stdout(File::create(&out_path).unwrap())
        .stderr(File::create(&err_path).unwrap())
        .spawn()
        .unwrap();
    let start = Instant::now();
    let mut timed_out = false;
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break s;
        }
        if start.elapsed() > time_limit {
            timed_out = true;
            child.kill().ok();
            break child.wait().unwrap();
        }
        std::thread::sleep(Duration::from_millis(10));
    };
    let read = |p: &Path| String::from_utf8_lossy(&std::fs::read(p).unwrap()).into_owned();
    Outcome {
        code: status.code(),
        stdout: read(&out_path),
        stderr: read(&err_path),
        elapsed: start.elapsed(),
        timed_out,
    }
}

/// Why `o` does not match `expect` (empty when it does).
fn judge(expect: &str, says: &[String], o: &Outcome) -> Vec<String> {
    let mut wrong = Vec::new();
    if o.timed_out {
        wrong.push(format!("still running after {:?}", o.elapsed));
    }
    if o.code.is_none() && !o.timed_out {
        wrong.push("killed by a signal (an abort, or the memory limit)".into());
    }
    if o.code == Some(101) || o.stderr.contains("panicked") {
        wrong.push("panicked".into());
    }
    let plain_refusal = |wrong: &mut Vec<String>| {
        if o.code != Some(2) {
            wrong.push(format!("exit {:?}, not 2", o.code));
        }
        if !o.stderr.starts_with("rungs") {
            wrong.push("no message from rungs on standard error".into());
        }
        for w in INTERNALS {
            if o.stderr.contains(w) {
                wrong.push(format!("parser words '{w}' in the message"));
            }
        }
    };
    match expect {
        "ok" => {
            if o.code != Some(0) {
                wrong.push(format!("exit {:?}, not 0", o.code));
            }
        }
        "stopped" => {
            if o.code != Some(0) {
                wrong.push(format!("exit {:?}, not 0", o.code));
            }
            if !(o.stdout.contains("note: stopped at") && o.stdout.contains("limit")) {
                wrong.push("no note naming the limit that stopped it".into());
            }
        }
        "refused" => plain_refusal(&mut wrong),
        "usage" => {
            if o.code != Some(2) {
                wrong.push(format!("exit {:?}, not 2", o.code));
            }
            if !(o.stderr.starts_with("error:") || o.stderr.contains("Usage:")) {
                wrong.push("no report of the argument reader".into());
            }
        }
        "ok_or_refused" => {
            if o.code != Some(0) {
                plain_refusal(&mut wrong);
            }
        }
        other => wrong.push(format!("unknown class '{other}'")),
    }
    let said = if matches!(expect, "refused" | "usage") {
        o.stderr.clone()
    } else {
        format!("{}{}", o.stdout, o.stderr)
    };
    for s in says {
        if !said.contains(s.as_str()) {
            wrong.push(format!("does not say '{s}'"));
        }
    }
    wrong
}

#[test]
fn every_hostile_input_meets_its_expected_outcome() {
    let cat = catalogue();
    let cases = cat["cases"].as_array().unwrap();
    assert!(
        cases.len() >= 100,
        "the catalogue holds {} cases",
        cases.len()
    );
    let time_limit = Duration::from_secs(cat["time_limit_s"].as_u64().unwrap());
    let memory_mib = cat["memory_limit_mib"].as_u64().unwrap();
    let base_table = cat["base_table"].as_str().unwrap();

    let root = std::env::temp_dir().join(format!("rungs-hostile-{}", std::process::id()));
    std::fs::create_dir_all(&root).unwrap();
    let morse = root.join("morse.csv");
    curve(&morse, |r| {
        25_000.0 * (1.0 - (-2.0 * (r - 2.0)).exp()).powi(2)
    });
    let harmonic = root.join("harmonic.csv");
    curve(&harmonic, |r| 5.0e5 * (r - 5.0) * (r - 5.0));

    let mut failures = Vec::new();
    let mut by_class: BTreeMap<String, usize> = BTreeMap::new();
    let mut names = std::collections::HashSet::new();
    for (n, case) in cases.iter().enumerate() {
        let name = case["name"].as_str().unwrap();
        assert!(names.insert(name), "two cases named '{name}'");
        let dir = root.join(format!("case-{n:03}"));
        std::fs::create_dir_all(&dir).unwrap();
        let mut file = PathBuf::new();
        if let Some(spec) = case.get("file") {
            let ext = spec["ext"].as_str().unwrap_or("csv");
            file = dir.join(format!("input.{ext}"));
            std::fs::write(&file, file_bytes(spec, base_table)).unwrap();
        }
        let missing = dir.join("no-such-file.csv");
        let fill = |t: &str| {
            t.replace("{file}", &file.display().to_string())
                .replace("{dir}", &dir.display().to_string())
                .replace("{missing}", &missing.display().to_string())
                .replace("{morse}", &morse.display().to_string())
                .replace("{harmonic}", &harmonic.display().to_string())
                .replace("{demo_levels}", &demo("qz2-levels.csv"))
                .replace("{demo_spacings}", &demo("qz2-spacings.csv"))
                .replace("{demo_bands}", &demo("qz2-bands.csv"))
        };
        let args: Vec<String> = case["args"]
            .as_array()
            .unwrap()
            .iter()
            .map(|a| fill(a.as_str().unwrap()))
            .collect();
        let says: Vec<String> = case["says"]
            .as_array()
            .map(|a| a.iter().map(|s| fill(s.as_str().unwrap())).collect())
            .unwrap_or_default();
        let expect = case["expect"].as_str().unwrap();
        let outcome = run(&args, &dir, time_limit, memory_mib);
        let class = match (expect, outcome.code) {
            ("ok_or_refused", Some(0)) => "ok_or_refused: ok".to_string(),
            ("ok_or_refused", _) => "ok_or_refused: refused".to_string(),
            (e, _) => e.to_string(),
        };
        *by_class.entry(class).or_default() += 1;
        let wrong = judge(expect, &says, &outcome);
        if !wrong.is_empty() {
            let first = |t: &str| t.chars().take(400).collect::<String>();
            failures.push(format!(
                "{name} ({expect}): {}\n    args: {args:?}\n    exit {:?} in {:?}\n    stderr: {}\n    stdout: {}",
                wrong.join("; "),
                outcome.code,
                outcome.elapsed,
                first(&outcome.stderr),
                first(&outcome.stdout)
            ));
        }
        std::fs::remove_dir_all(&dir).ok();
    }
    std::fs::remove_dir_all(&root).ok();
    println!(
        "{} hostile inputs run; by expected class: {by_class:?}",
        cases.len()
    );
    assert!(
        failures.is_empty(),
        "{} of {} cases failed:\n{}",
        failures.len(),
        cases.len(),
        failures.join("\n")
    );
}
