//! Reading the user's file and the command-line reading choices into a session.
//!
//! Glue only: what the file is (table, session document, exported report) is decided by
//! `rungs_core::session::Session::open`, how it is read by `rungs_core::intake`.

use std::path::Path;

use clap::Args;
use rungs_core::Error;
use rungs_core::intake::{BandPositions, DataKind, Delimiter, IntakeOptions, Role};
use rungs_core::session::Session;
use rungs_core::units::Unit;

/// Choices about how a table is read (each overrides what would be detected).
#[derive(Debug, Args)]
pub struct ReadArgs {
    /// Unit of value columns whose header names none: cm-1, eV, meV, GHz, MHz, THz, kJ/mol,
    /// kcal/mol, K, hartree, nm-air, nm-vac, A-air, A-vac.
    #[arg(long, value_name = "U")]
    pub unit: Option<String>,
    /// Kind of data: levels, spacings or bands.
    #[arg(long, value_name = "K")]
    pub kind: Option<String>,
    /// Band positions are band heads (default: origins).
    #[arg(long)]
    pub heads: bool,
    /// Whether the first row is a header: yes or no (default: detected).
    #[arg(long, value_name = "yes|no")]
    pub header: Option<String>,
    /// Cell delimiter: comma, tab, semicolon or whitespace (default: detected).
    #[arg(long, value_name = "D")]
    pub delimiter: Option<String>,
    /// Role and/or unit of one column, e.g. `2=energy:eV`, `3=sigma`, `4=:nm-air`; repeatable.
    #[arg(
        allow_hyphen_values = true,
        long = "column",
        value_name = "N=ROLE[:UNIT]"
    )]
    pub columns: Vec<String>,
    /// Exclude a row (its line number in the file), optionally with a reason: `12` or
    /// `12=perturbed`; repeatable.
    #[arg(
        allow_hyphen_values = true,
        long = "exclude",
        value_name = "ROW[=REASON]"
    )]
    pub exclude: Vec<String>,
}

/// Applies the command-line choices to `options`.
pub fn apply_arguments(args: &ReadArgs, options: &mut IntakeOptions) -> Result<(), Error> {
    if let Some(u) = &args.unit {
        options.unit = Some(Unit::parse(u)?);
    }
    if let Some(k) = &args.kind {
        options.kind = Some(DataKind::parse(k)?);
    }
    if args.heads {
        options.band_positions = Some(BandPositions::Heads);
    }
    if let Some(h) = &args.header {
        options.header = Some(match h.to_ascii_lowercase().as_str() {
            "yes" | "y" | "true" => true,
            "no" | "n" | "false" => false,
            other => {
                return Err(Error::parameter(
                    "--header",
                    format!("'{other}': use yes or no"),
                ));
            }
        });
    }
    if let Some(d) = &args.delimiter {
        options.delimiter = Some(Delimiter::parse(d)?);
    }
    for spec in &args.columns {
        let (n, rest) = spec.split_once('=').ok_or_else(|| {
            Error::parameter(
                "--column",
                format!("'{spec}': write N=ROLE, N=ROLE:UNIT or N=:UNIT"),
            )
        })?;
        let index: usize = n.trim().parse().map_err(|_| {
            Error::parameter(
                "--column",
                format!("'{spec}': '{n}' is not a column number"),
            )
        })?;
        let (role, unit) = match rest.split_once(':') {
            Some((r, u)) => (r, Some(u)),
            None => (rest, None),
        };
        let role = if role.trim().is_empty() {
            None
        } else {
            Some(Role::parse(role)?)
        };
        let unit = unit.map(Unit::parse).transpose()?;
        options.set_column(index, role, unit);
    }
    for spec in &args.exclude {
        let (n, reason) = spec
            .split_once('=')
            .unwrap_or((spec, "excluded on the command line"));
        let row: usize = n.trim().parse().map_err(|_| {
            Error::parameter("--exclude", format!("'{spec}': '{n}' is not a row number"))
        })?;
        options.exclude(row, reason.trim());
    }
    Ok(())
}

/// Reads `path` (a table, a session document or an exported report) and applies the
/// command-line reading choices on top. Returns the session and the text encoding found.
pub fn open_session(path: &Path, args: &ReadArgs) -> Result<(Session, &'static str), String> {
    let name = path.display().to_string();
    // Nothing longer than the longest document core reads is loaded into memory.
    let limit = rungs_core::session::MAX_REPORT_BYTES;
    if let Ok(meta) = std::fs::metadata(path)
        && meta.len() > limit as u64
    {
        return Err(format!(
            "{name}: the file is {} MiB long, more than the {} MiB any table or document may \
             have; it is not read",
            meta.len() / 1_048_576,
            limit / 1_048_576
        ));
    }
    let bytes = std::fs::read(path).map_err(|e| format!("{name}: cannot read the file: {e}"))?;
    let file_name = path.file_name().map(|n| n.to_string_lossy().into_owned());
    let (mut session, encoding) =
        Session::open_bytes(file_name, &bytes).map_err(|e| format!("{name}: {e}"))?;
    apply_arguments(args, &mut session.intake).map_err(|e| e.to_string())?;
    if !args.exclude.is_empty() {
        check_exclusions(&session, args)?;
    }
    Ok((session, encoding))
}

/// An `--exclude` of a row that is not a data row of the table is an error naming the row.
fn check_exclusions(session: &Session, args: &ReadArgs) -> Result<(), String> {
    let Ok(data) = session.data() else {
        return Ok(()); // the caller reports why the table cannot be read
    };
    let asked = args
        .exclude
        .iter()
        .filter_map(|spec| spec.split('=').next()?.trim().parse::<usize>().ok());
    for row in asked {
        if let Some(message) = data.no_data_row(row) {
            return Err(format!("--exclude {row}: {message}"));
        }
    }
    Ok(())
}
