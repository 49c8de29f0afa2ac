//! Architecture check: the top-level modules of rungs-core depend on each other without a
//! circle (the dependency graph is acyclic, so the modules can be read bottom-up).
//!
//! An edge a → b is any `crate::b` path in the non-test code of module a (its file or folder),
//! comments and `#[cfg(test)]` blocks excluded. The check reads the sources, so it fails as soon
//! as a change introduces a circle, and names the modules on it.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

/// Top-level module of a source file (`src/analysis/stages.rs` → `analysis`).
fn module_of(rel: &Path) -> String {
    let first = rel.components().next().expect("a path").as_os_str();
    first.to_string_lossy().trim_end_matches(".rs").to_string()
}

/// The code of a file without comments and without its test module(s).
fn code_of(text: &str) -> String {
    let mut out = String::new();
    let mut skip_depth: Option<i64> = None;
    let mut depth: i64 = 0;
    let mut pending_cfg_test = false;
    for line in text.lines() {
        let code = match line.find("//") {
            Some(i) => &line[..i],
            None => line,
        };
        let t = code.trim();
        if t.starts_with("#[cfg(test)]") {
            pending_cfg_test = true;
            continue;
        }
        let opens = code.matches('{').count() as i64;
        let closes = code.matches('}').count() as i64;
        if pending_cfg_test && skip_depth.is_none() && opens > 0 {
            skip_depth = Some(depth);
        }
        if !t.is_empty() {
            pending_cfg_test = false;
        }
        depth += opens - closes;
        match skip_depth {
            Some(d) if depth <= d => skip_depth = None,
            Some(_) => {}
            None => {
                out.push_str(code);
                out.push('\n');
            }
        }
    }
    out
}

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for e in std::fs::read_dir(dir).expect("source folder") {
        let p = e.expect("entry").path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

fn graph() -> BTreeMap<String, BTreeSet<String>> {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let modules: BTreeSet<String> = files
        .iter()
        .map(|f| module_of(f.strip_prefix(&src).expect("under src")))
        .filter(|m| m != "lib")
        .collect();
    let mut g: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for f in &files {
        let from = module_of(f.strip_prefix(&src).expect("under src"));
        if from == "lib" {
            continue;
        }
        let code = code_of(&std::fs::read_to_string(f).expect("readable"));
        let deps = g.entry(from.clone()).or_default();
        // `crate::name` and `crate::{a, b::c}`.
        for (i, _) in code.match_indices("crate::") {
            let rest = &code[i + "crate::".len()..];
            let names: Vec<&str> = if let Some(inner) = rest.strip_prefix('{') {
                let end = inner.find('}').unwrap_or(inner.len());
                inner[..end]
                    .split(',')
                    .map(|s| s.trim().split("::").next().unwrap_or("").trim())
                    .collect()
            } else {
                vec![
                    rest.split(|c: char| !c.is_alphanumeric() && c != '_')
                        .next()
                        .unwrap_or(""),
                ]
            };
            for n in names {
                if n != from && modules.contains(n) {
                    deps.insert(n.to_string());
                }
            }
        }
    }
    g
}

/// A circle through the graph, if there is one (depth-first search with colours).
fn find_cycle(g: &BTreeMap<String, BTreeSet<String>>) -> Option<Vec<String>> {
    fn visit(
        v: &str,
        g: &BTreeMap<String, BTreeSet<String>>,
        state: &mut BTreeMap<String, u8>,
        stack: &mut Vec<String>,
    ) -> Option<Vec<String>> {
        state.insert(v.to_string(), 1);
        stack.push(v.to_string());
        for w in g.get(v).into_iter().flatten() {
            match state.get(w.as_str()).copied().unwrap_or(0) {
                1 => {
                    let start = stack.iter().position(|x| x == w).expect("on the stack");
                    let mut c = stack[start..].to_vec();
                    c.push(w.clone());
                    return Some(c);
                }
                0 => {
                    if let Some(c) = visit(w, g, state, stack) {
                        return Some(c);
                    }
                }
                _ => {}
            }
        }
        stack.pop();
        state.insert(v.to_string(), 2);
        None
    }
    let mut state = BTreeMap::new();
    for v in g.keys() {
        if state.get(v.as_str()).copied().unwrap_or(0) == 0 {
            let mut stack = Vec::new();
            if let Some(c) = visit(v, g, &mut state, &mut stack) {
                return Some(c);
            }
        }
    }
    None
}

#[test]
fn the_checker_finds_a_planted_circle() {
    // The checker itself must be able to fail: a → b → c → a is found, a → b, a → c is not.
    let mut g: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    g.entry("a".into()).or_default().insert("b".into());
    g.entry("a".into()).or_default().insert("c".into());
    assert_eq!(find_cycle(&g), None);
    g.entry("b".into()).or_default().insert("c".into());
    g.entry("c".into()).or_default().insert("a".into());
    assert_eq!(
        find_cycle(&g),
        Some(vec!["a".into(), "b".into(), "c".into(), "a".into()])
    );
    // Comments and test modules do not count as dependencies.
    let code = code_of(
        "use crate::x; // crate::y\n/// see crate::z\n#[cfg(test)]\nmod tests {\n    use crate::w;\n}\nfn f() {}\n",
    );
    assert!(code.contains("crate::x") && code.contains("fn f"));
    assert!(!code.contains("crate::y") && !code.contains("crate::z") && !code.contains("crate::w"));
}

#[test]
fn core_modules_have_no_circular_dependency() {
    let g = graph();
    assert!(g.len() > 10, "the source scan found too few modules: {g:?}");
    assert!(
        g["analysis"].contains("report"),
        "the scan must see analysis → report: {g:?}"
    );
    if let Some(c) = find_cycle(&g) {
        panic!("circular module dependency: {}", c.join(" → "));
    }
}
