//! Column roles and units: header detection, kind detection, positional roles for tables
//! without a header, and the unit of each value, σ and B column.

use std::collections::HashMap;

use super::*;

pub(super) fn non_empty(cells: &[String]) -> usize {
    cells.iter().filter(|c| !c.is_empty()).count()
}

pub(super) fn shorten(s: &str) -> String {
    let mut out: String = s.chars().take(40).collect();
    if s.chars().count() > 40 {
        out.push('…');
    }
    out
}

/// Most common number of cells per record (ties: the larger).
pub(super) fn mode_width(records: &[table::Record]) -> usize {
    let mut counts: HashMap<usize, usize> = HashMap::new();
    for r in records.iter().take(1000) {
        *counts.entry(r.cells.len()).or_default() += 1;
    }
    counts
        .into_iter()
        .max_by_key(|&(w, n)| (n, w))
        .map_or(0, |(w, _)| w)
}

pub(super) fn is_numeric(cell: &str) -> bool {
    !matches!(parse_number(cell, true), Err(NumError::NotANumber))
}

pub(super) fn text_cells(cells: &[String]) -> usize {
    cells
        .iter()
        .filter(|c| !c.is_empty() && !is_numeric(c))
        .count()
}

/// The first record is a header when it holds text and either names a known column or holds
/// more text cells than the next record.
pub(super) fn looks_like_header(records: &[table::Record]) -> bool {
    let first = &records[0].cells;
    let text = text_cells(first);
    if text == 0 {
        return false;
    }
    let known = first
        .iter()
        .any(|c| !matches!(header::analyse(c).role, HeaderRole::Unrecognised));
    let next_text = records.get(1).map_or(0, |r| text_cells(&r.cells));
    let mostly_text = text * 2 > non_empty(first);
    known || (mostly_text && (text > next_text || records.len() == 1))
}

/// In a whitespace-separated header, units and medium words written apart from their name
/// (`E (cm-1)`, `E / eV`, `lambda air (nm)`) become cells of their own; join them back onto
/// the name before them.
pub(super) fn merge_header_words(cells: Vec<String>) -> Vec<String> {
    let mut out: Vec<String> = Vec::with_capacity(cells.len());
    for cell in cells {
        let lower = cell.to_lowercase();
        let attach = cell.starts_with(['(', '[', '/'])
            || matches!(lower.as_str(), "air" | "vac" | "vacuum" | "in")
            || out
                .last()
                .is_some_and(|p| p.ends_with('/') || p.to_lowercase().ends_with(" in"));
        match out.last_mut() {
            Some(prev) if attach => {
                prev.push(' ');
                prev.push_str(&cell);
            }
            _ => out.push(cell),
        }
    }
    out
}

/// A comment line right above the first data row whose words name the columns.
pub(super) fn comment_header(
    raw: &table::RawTable,
    records: &[table::Record],
) -> Option<(usize, Vec<String>)> {
    let first = &records[0];
    let (line, text) = raw.comments.iter().rev().find(|(l, _)| *l < first.line)?;
    // Only comments directly above (blank lines allowed, no other record in between).
    if raw
        .records
        .iter()
        .any(|r| r.line > *line && r.line < first.line)
    {
        return None;
    }
    let cells: Vec<String> = match raw.delimiter {
        Delimiter::Whitespace => {
            let words: Vec<String> = text.split_whitespace().map(str::to_string).collect();
            if words.len() > first.cells.len() {
                merge_header_words(words)
            } else {
                words
            }
        }
        d => {
            let sep = match d {
                Delimiter::Comma => ',',
                Delimiter::Tab => '\t',
                _ => ';',
            };
            text.split(sep).map(|c| c.trim().to_string()).collect()
        }
    };
    let known = cells
        .iter()
        .filter(|c| {
            matches!(
                header::analyse(c).role,
                HeaderRole::Role(_) | HeaderRole::Value
            )
        })
        .count();
    (cells.len() == first.cells.len() && known >= 2).then_some((*line, cells))
}

/// Roles by column order for a table without a header. Returns the kind (guessed unless
/// given) and a note saying what was assumed.
pub(super) fn positional_roles(
    data: &[table::Record],
    cands: &mut [(HeaderRole, Provenance)],
    kind: Option<DataKind>,
    decimal_comma: bool,
) -> (DataKind, String) {
    let sample = &data[..data.len().min(200)];
    let ncols = cands.len();
    let mut numeric = vec![0usize; ncols];
    let mut integer = vec![0usize; ncols];
    let mut filled = vec![0usize; ncols];
    for r in sample {
        for (i, c) in r.cells.iter().enumerate().take(ncols) {
            if c.is_empty() {
                continue;
            }
            filled[i] += 1;
            if let Ok(n) = parse_number(c, decimal_comma) {
                numeric[i] += 1;
                if n.value >= 0.0 && n.value.fract() == 0.0 && n.inline_sigma.is_none() {
                    integer[i] += 1;
                }
            }
        }
    }
    let is_text = |i: usize| filled[i] > 0 && numeric[i] * 2 < filled[i];
    let free: Vec<usize> = (0..ncols)
        .filter(|&i| cands[i].1 != Provenance::Override && !is_text(i))
        .collect();
    let has_role = |cands: &[(HeaderRole, Provenance)], r: Role| {
        cands.iter().any(|c| c.0 == HeaderRole::Role(r))
    };
    let kind = kind.unwrap_or_else(|| {
        if has_role(cands, Role::VUpper) || has_role(cands, Role::VLower) {
            DataKind::Bands
        } else if has_role(cands, Role::Spacing) || has_role(cands, Role::VHalf) {
            DataKind::Spacings
        } else if free.len() >= 3
            && free[..2]
                .iter()
                .all(|&i| filled[i] > 0 && integer[i] * 10 >= filled[i] * 9)
        {
            DataKind::Bands
        } else {
            DataKind::Levels
        }
    });
    let sequence: &[Role] = match kind {
        DataKind::Levels => &[Role::V, Role::Energy, Role::Sigma, Role::B],
        DataKind::Spacings => &[Role::V, Role::Spacing, Role::Sigma],
        DataKind::Bands => &[Role::VUpper, Role::VLower, Role::Position, Role::Sigma],
    };
    let mut pending = sequence
        .iter()
        .copied()
        .filter(|r| !has_role(cands, *r))
        .collect::<Vec<_>>()
        .into_iter();
    let mut assigned = Vec::new();
    for i in 0..ncols {
        if cands[i].1 == Provenance::Override {
            continue;
        }
        if is_text(i) {
            let role = if has_role(cands, Role::Isotopologue) {
                Role::Ignore
            } else {
                Role::Isotopologue
            };
            cands[i] = (HeaderRole::Role(role), Provenance::Detected);
            assigned.push(role.name());
            continue;
        }
        match pending.next() {
            Some(r) => {
                cands[i] = (HeaderRole::Role(r), Provenance::Detected);
                assigned.push(r.name());
            }
            None => {
                cands[i] = (HeaderRole::Role(Role::Ignore), Provenance::Detected);
                assigned.push(Role::Ignore.name());
            }
        }
    }
    let note = format!(
        "no header: read as {} with columns by position ({}); name the columns or choose the \
         kind and roles to change this",
        kind.name(),
        assigned.join(", ")
    );
    (kind, note)
}

pub(super) fn detect_kind(
    cands: &[(HeaderRole, Provenance)],
    names: &[String],
) -> Result<DataKind> {
    let has = |r: Role| cands.iter().any(|c| c.0 == HeaderRole::Role(r));
    if has(Role::VUpper) && has(Role::VLower) {
        return Ok(DataKind::Bands);
    }
    if has(Role::Spacing) || has(Role::VHalf) {
        return Ok(DataKind::Spacings);
    }
    if has(Role::Energy) || has(Role::Position) || cands.iter().any(|c| c.0 == HeaderRole::Value) {
        return Ok(DataKind::Levels);
    }
    Err(Error::Input {
        message: format!(
            "cannot tell what the table holds: no column is named like an energy (E, G, T, \
             energy), a spacing (ΔG, dG, spacing) or a band position (ν, wavenumber, position); \
             columns: {}. Rename them or choose the kind and column roles",
            describe_names(names)
        ),
    })
}

pub(super) fn describe_names(names: &[String]) -> String {
    names
        .iter()
        .enumerate()
        .map(|(i, n)| {
            if n.is_empty() {
                format!("{}", i + 1)
            } else {
                format!("{} '{}'", i + 1, n)
            }
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// Picks the columns the kind needs and gives every column its final role (with a note for
/// columns not read or reinterpreted).
pub(super) fn select_columns(
    kind: DataKind,
    cands: &[(HeaderRole, Provenance)],
    names: &[String],
    diagnostics: &mut Vec<Diagnostic>,
) -> Result<Vec<(Role, Option<String>)>> {
    let n = cands.len();
    let mut out: Vec<(Role, Option<String>)> = vec![(Role::Ignore, None); n];
    let find = |r: HeaderRole| (0..n).find(|&i| cands[i].0 == r);
    let role = |r: Role| find(HeaderRole::Role(r));
    let missing = |what: &str| Error::Input {
        message: format!(
            "{} needs {what}; columns: {}. Name the column (e.g. {}) or assign its role",
            kind.what(),
            describe_names(names),
            match kind {
                DataKind::Levels => "v, E (cm-1), sigma",
                DataKind::Spacings => "v, dG (cm-1), sigma",
                DataKind::Bands => "v', v'', nu (cm-1), sigma",
            }
        ),
    };
    let note = |i: usize, text: String, diagnostics: &mut Vec<Diagnostic>| {
        diagnostics.push(Diagnostic {
            severity: Severity::Info,
            row: None,
            column: Some(i + 1),
            message: text.clone(),
        });
        text
    };

    // v columns.
    match kind {
        DataKind::Bands => {
            let (Some(u), Some(l)) = (role(Role::VUpper), role(Role::VLower)) else {
                return Err(missing("a v′ (upper v) column and a v″ (lower v) column"));
            };
            out[u].0 = Role::VUpper;
            out[l].0 = Role::VLower;
        }
        DataKind::Levels | DataKind::Spacings => {
            let order: &[Role] = if kind == DataKind::Levels {
                &[Role::V, Role::VUpper, Role::VLower]
            } else {
                &[Role::V, Role::VLower, Role::VHalf, Role::VUpper]
            };
            let Some((i, r)) = order.iter().find_map(|&r| role(r).map(|i| (i, r))) else {
                return Err(missing("a v column"));
            };
            let target = if r == Role::VHalf {
                Role::VHalf
            } else {
                Role::V
            };
            out[i].0 = target;
            if r != target {
                out[i].1 = Some(note(
                    i,
                    format!("column {} ({}) read as v", i + 1, r.label()),
                    diagnostics,
                ));
            }
        }
    }
    // Value column.
    let (target, order): (Role, &[HeaderRole]) = match kind {
        DataKind::Levels => (
            Role::Energy,
            &[
                HeaderRole::Role(Role::Energy),
                HeaderRole::Role(Role::Position),
                HeaderRole::Value,
            ],
        ),
        DataKind::Spacings => (
            Role::Spacing,
            &[
                HeaderRole::Role(Role::Spacing),
                HeaderRole::Value,
                HeaderRole::Role(Role::Energy),
                HeaderRole::Role(Role::Position),
            ],
        ),
        DataKind::Bands => (
            Role::Position,
            &[
                HeaderRole::Role(Role::Position),
                HeaderRole::Value,
                HeaderRole::Role(Role::Energy),
            ],
        ),
    };
    let Some((vi, found)) = order.iter().find_map(|&r| find(r).map(|i| (i, r))) else {
        return Err(missing(match kind {
            DataKind::Levels => "a level-energy column",
            DataKind::Spacings => "a spacing column",
            DataKind::Bands => "a band-position column",
        }));
    };
    out[vi].0 = target;
    if found != HeaderRole::Role(target) && found != HeaderRole::Value {
        let from = match found {
            HeaderRole::Role(r) => r.label(),
            _ => "value",
        };
        out[vi].1 = Some(note(
            vi,
            format!("column {} ({from}) read as {}", vi + 1, target.label()),
            diagnostics,
        ));
    }
    // Optional columns.
    for opt in [Role::Sigma, Role::Isotopologue, Role::B] {
        if opt == Role::B && kind != DataKind::Levels {
            continue;
        }
        if let Some(i) = role(opt)
            && out[i].0 == Role::Ignore
        {
            out[i].0 = opt;
        }
    }
    // Everything else is not read: say why.
    for i in 0..n {
        if out[i].0 != Role::Ignore || out[i].1.is_some() {
            continue;
        }
        let why = match cands[i].0 {
            HeaderRole::Role(Role::Ignore) => continue,
            HeaderRole::Role(Role::B) => "not read: B is used with level lists only".to_string(),
            HeaderRole::Role(r) => format!("not read: a second {} column", r.label()),
            HeaderRole::Value => "not read: a second value column".to_string(),
            HeaderRole::Skip => "not read: calculated values or residuals".to_string(),
            HeaderRole::Unrecognised if names[i].is_empty() => {
                if cands[i].1 == Provenance::Header {
                    "not read: no column name".to_string()
                } else {
                    continue;
                }
            }
            HeaderRole::Unrecognised => "not read: name not recognised".to_string(),
        };
        let sev = if matches!(cands[i].0, HeaderRole::Role(_) | HeaderRole::Value) {
            Severity::Warning
        } else {
            Severity::Info
        };
        diagnostics.push(Diagnostic {
            severity: sev,
            row: None,
            column: Some(i + 1),
            message: format!("column {}: {why}", column_label(i + 1, &names[i])),
        });
        out[i].1 = Some(why);
    }
    Ok(out)
}

pub(super) fn column_error(c: &Column, message: String) -> Error {
    Error::Column {
        index: c.index,
        name: c.name.clone(),
        message,
    }
}

/// Gives the value, σ and B columns their units (see [`IntakeOptions::unit`]).
pub(super) fn resolve_units(
    kind: DataKind,
    columns: &mut [Column],
    infos: &[HeaderInfo],
    overrides: &[Option<&ColumnOverride>],
    default: Option<Unit>,
    diagnostics: &mut Vec<Diagnostic>,
) -> Result<()> {
    let override_unit = |i: usize| overrides[i].and_then(|o| o.unit);
    for c in columns.iter() {
        let i = c.index - 1;
        if infos[i].medium_conflict && c.role != Role::Ignore {
            return Err(column_error(c, "the name says both air and vacuum".into()));
        }
        if matches!(
            c.role,
            Role::V | Role::VUpper | Role::VLower | Role::VHalf | Role::Isotopologue
        ) && override_unit(i).is_some()
        {
            diagnostics.push(Diagnostic {
                severity: Severity::Warning,
                row: None,
                column: Some(c.index),
                message: format!(
                    "column {}: a unit was chosen for a column without units; ignored",
                    c.label()
                ),
            });
        }
    }
    let default_medium = default.and_then(|u| match u {
        Unit::Nanometre(m) | Unit::Angstrom(m) => Some(m),
        _ => None,
    });
    let with_medium = |angstrom: bool, m: Medium| {
        if angstrom {
            Unit::Angstrom(m)
        } else {
            Unit::Nanometre(m)
        }
    };
    let no_medium_error = |c: &Column, angstrom: bool| {
        let u = if angstrom { "A" } else { "nm" };
        column_error(
            c,
            format!(
                "wavelengths must say whether they were measured in air or in vacuum: write e.g. \
                 '{} ({u}, air)' or choose the unit {u}-air or {u}-vac",
                match c.name.split(['(', '[', '/']).next().map(str::trim) {
                    Some(n) if !n.is_empty() => n,
                    _ => "lambda",
                }
            ),
        )
    };
    let Some(vi) = columns.iter().position(|c| c.role.is_value()) else {
        return Err(Error::Input {
            message: "no value column".into(),
        });
    };
    // Value column.
    let (vunit, vfrom) = {
        let c = &columns[vi];
        let info = &infos[vi];
        let chosen = if let Some(u) = override_unit(vi) {
            (u, Provenance::Override)
        } else if let Some(UnitText::Unit(u)) = info.unit {
            (u, Provenance::Header)
        } else if let Some(UnitText::WavelengthNoMedium { angstrom }) = info.unit {
            match (info.medium, default_medium) {
                (Some(m), _) => (with_medium(angstrom, m), Provenance::Header),
                (None, Some(m)) => (with_medium(angstrom, m), Provenance::DefaultUnit),
                (None, None) => return Err(no_medium_error(c, angstrom)),
            }
        } else if let Some(u) = default {
            if let Some(bad) = &info.unknown_unit {
                diagnostics.push(Diagnostic {
                    severity: Severity::Warning,
                    row: None,
                    column: Some(c.index),
                    message: format!(
                        "column {}: unit '{bad}' not known; the chosen unit {} is used",
                        c.label(),
                        u.token()
                    ),
                });
            }
            (u, Provenance::DefaultUnit)
        } else if let Some(bad) = &info.unknown_unit {
            return Err(column_error(
                c,
                format!(
                    "'{bad}' is not a unit Rungs knows; known units: {}",
                    crate::units::unit_list()
                ),
            ));
        } else if info.wavelength_name {
            return Err(column_error(
                c,
                "the name says wavelength but no unit is given: write e.g. 'lambda (nm, air)' or \
                 choose the unit"
                    .into(),
            ));
        } else {
            diagnostics.push(Diagnostic {
                severity: Severity::Info,
                row: None,
                column: Some(c.index),
                message: format!("column {}: no unit given, read as cm⁻¹", c.label()),
            });
            (Unit::Cm1, Provenance::Assumed)
        };
        if chosen.0.is_wavelength() && kind != DataKind::Bands {
            return Err(column_error(
                c,
                format!(
                    "a wavelength unit ({}) fits band positions only; {} needs an energy or \
                     wavenumber unit",
                    chosen.0.label(),
                    kind.what()
                ),
            ));
        }
        chosen
    };
    columns[vi].unit = Some(vunit);
    columns[vi].unit_from = Some(vfrom);
    // σ and B.
    for i in 0..columns.len() {
        let role = columns[i].role;
        if role != Role::Sigma && role != Role::B {
            continue;
        }
        let c = &columns[i];
        let info = &infos[i];
        let (u, from) = if let Some(u) = override_unit(i) {
            (u, Provenance::Override)
        } else if let Some(UnitText::Unit(u)) = info.unit {
            (u, Provenance::Header)
        } else if let Some(UnitText::WavelengthNoMedium { angstrom }) = info.unit {
            let m = info.medium.or(match vunit {
                Unit::Nanometre(m) | Unit::Angstrom(m) => Some(m),
                _ => None,
            });
            match m {
                Some(m) => (with_medium(angstrom, m), Provenance::Header),
                None => return Err(no_medium_error(c, angstrom)),
            }
        } else if let Some(bad) = &info.unknown_unit {
            return Err(column_error(
                c,
                format!(
                    "'{bad}' is not a unit Rungs knows; known units: {}",
                    crate::units::unit_list()
                ),
            ));
        } else if role == Role::Sigma {
            (vunit, Provenance::ValueColumn)
        } else if let Some(d) = default.filter(|d| !d.is_wavelength()) {
            (d, Provenance::DefaultUnit)
        } else {
            (Unit::Cm1, Provenance::Assumed)
        };
        if u.is_wavelength() && (role == Role::B || u != vunit) {
            return Err(column_error(
                c,
                if role == Role::B {
                    "B needs an energy or wavenumber unit, not a wavelength".to_string()
                } else {
                    format!(
                        "an uncertainty in {} needs its value column in the same unit (it is in {})",
                        u.label(),
                        vunit.label()
                    )
                },
            ));
        }
        columns[i].unit = Some(u);
        columns[i].unit_from = Some(from);
    }
    Ok(())
}
