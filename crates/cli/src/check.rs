//! `rungs check FILE`: shows what intake understood of a table, and whether it is usable.
//!
//! Glue only: reading the file and printing. Every decision (kind, roles, units, exclusions,
//! the usable-row minimum) is made by `rungs_core::intake`. A session document
//! (`rungs-session`) may be given instead of a table: its stored table and choices are used, with
//! the options below applied on top.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;
use rungs_core::intake::{BandPositions, DataSet, Provenance, Role, RowStatus, Severity};

use crate::input::{ReadArgs, open_session};
use crate::output::emit;

/// `println!` into the report text (writing to a `String` cannot fail).
macro_rules! outln {
    ($out:expr, $($arg:tt)*) => {{
        $out.push_str(&format!($($arg)*));
        $out.push('\n');
    }};
}

/// Most excluded rows listed before the rest are counted.
const MAX_LISTED: usize = 50;

/// Arguments of `rungs check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Table file (CSV, tab-, semicolon- or whitespace-separated), or a session document.
    pub file: PathBuf,
    /// How to read the table.
    #[command(flatten)]
    pub read: ReadArgs,
}

fn bad_argument(message: String) -> ExitCode {
    crate::output::complain(&format!("rungs check: {message}"));
    ExitCode::from(2)
}

fn provenance(p: Provenance) -> &'static str {
    match p {
        Provenance::Override => "chosen",
        Provenance::Header => "from the header",
        Provenance::Detected => "detected",
        Provenance::DefaultUnit => "from --unit",
        Provenance::ValueColumn => "as its value column",
        Provenance::Assumed => "assumed",
    }
}

fn print_report(out: &mut String, name: &str, d: &DataSet) {
    outln!(out, "rungs check: {name}");
    let kind_how = match d.kind_from {
        Provenance::Override => "chosen",
        _ => "detected from the columns",
    };
    outln!(out, "  kind:      {} ({kind_how})", d.kind.name());
    if let (Some(p), Some(from)) = (d.band_positions, d.band_positions_from) {
        let what = match p {
            BandPositions::Origins => "band origins",
            BandPositions::Heads => "band heads",
        };
        outln!(out, "  positions: {what} ({})", provenance(from));
    }
    let header = match (d.header_row, d.header_in_comment) {
        (Some(l), false) => format!("header on line {l}"),
        (Some(l), true) => format!("column names from the comment on line {l}"),
        (None, _) => "no header".to_string(),
    };
    outln!(
        out,
        "  table:     {}-separated, {header}, {} data rows",
        d.delimiter.name(),
        d.rows.len()
    );
    outln!(out, "  columns:");
    let width = d
        .columns
        .iter()
        .map(|c| c.name.chars().count())
        .max()
        .unwrap_or(0)
        .max(4);
    for c in &d.columns {
        let name = if c.name.is_empty() {
            "-".to_string()
        } else {
            c.name.clone()
        };
        let pad = width - name.chars().count();
        let mut line = format!("    {:>2}  {name}{}  ", c.index, " ".repeat(pad));
        if c.role == Role::Ignore {
            line.push_str(c.note.as_deref().unwrap_or("not read"));
        } else {
            line.push_str(&format!("{}, {}", c.role.label(), provenance(c.role_from)));
            if let (Some(u), Some(from)) = (c.unit, c.unit_from) {
                line.push_str(&format!("; unit {}, {}", u.label(), provenance(from)));
            }
            if let Some(note) = &c.note {
                line.push_str(&format!("; {note}"));
            }
        }
        outln!(out, "{line}");
    }
    let usable = d.usable_count();
    let excluded: Vec<_> = d.excluded_rows().collect();
    outln!(
        out,
        "  rows:      {usable} usable, {} excluded",
        excluded.len()
    );
    for r in excluded.iter().take(MAX_LISTED) {
        match r.status() {
            RowStatus::ExcludedByUser => outln!(
                out,
                "    row {}: excluded by the user: {}",
                r.line,
                r.user_reason.as_deref().unwrap_or("")
            ),
            _ => {
                for p in &r.problems {
                    outln!(out, "    {}", d.locate(r, p));
                }
            }
        }
    }
    if excluded.len() > MAX_LISTED {
        outln!(
            out,
            "    … and {} more excluded rows",
            excluded.len() - MAX_LISTED
        );
    }
    // Notes already shown beside their column are not repeated.
    let notes: Vec<_> = d
        .diagnostics
        .iter()
        .filter(|n| {
            !n.column
                .and_then(|c| c.checked_sub(1))
                .and_then(|i| d.columns.get(i))
                .is_some_and(|c| {
                    c.note
                        .as_ref()
                        .is_some_and(|note| n.message.ends_with(note.as_str()))
                })
        })
        .collect();
    if !notes.is_empty() {
        outln!(out, "  notes:");
        for n in notes {
            let tag = match n.severity {
                Severity::Info => "info",
                Severity::Warning => "warning",
            };
            outln!(out, "    {tag}: {}", n.message);
        }
    }
    outln!(
        out,
        "  constants: CODATA {}",
        rungs_core::constants::CODATA_YEAR
    );
}

/// Runs `rungs check`: exit 0 when the table is usable, 2 when it is not (or cannot be read).
pub fn run(args: &CheckArgs) -> ExitCode {
    let name = args.file.display().to_string();
    let (session, encoding) = match open_session(&args.file, &args.read) {
        Ok(x) => x,
        Err(message) => return bad_argument(message),
    };
    let data = match session.data() {
        Ok(d) => d,
        Err(e) => return bad_argument(format!("{name}: {e}")),
    };
    let mut out = String::new();
    print_report(&mut out, &name, &data);
    if encoding != "UTF-8" {
        outln!(out, "  encoding:  {encoding}");
    }
    match data.check_usable() {
        Ok(()) => {
            outln!(
                out,
                "  usable:    yes — {} {} (the simplest analysis needs {})",
                data.usable_count(),
                data.kind.name(),
                data.kind.min_usable()
            );
            emit(&out).map_or_else(|code| code, |()| ExitCode::SUCCESS)
        }
        Err(e) => {
            outln!(out, "  usable:    no");
            if let Err(code) = emit(&out) {
                return code;
            }
            crate::output::complain(&format!("rungs check: {name}: not usable: {e}"));
            ExitCode::from(2)
        }
    }
}
