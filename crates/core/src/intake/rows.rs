//! Reading rows: each record becomes a row with its observation or its reasons for
//! exclusion; then user exclusions, duplicates and remarks about the whole table.

use std::collections::HashMap;

use super::*;

/// Column indices (0-based) and units used to read rows.
pub(super) struct Plan {
    kind: DataKind,
    v: usize,
    v_half: bool,
    v_lower: Option<usize>,
    value: (usize, Unit),
    sigma: Option<(usize, Unit)>,
    b: Option<(usize, Unit)>,
    iso: Option<usize>,
}

impl Plan {
    pub(super) fn new(kind: DataKind, columns: &[Column]) -> Result<Plan> {
        let find = |r: Role| columns.iter().position(|c| c.role == r);
        let unit_of = |i: usize| columns[i].unit.unwrap_or(Unit::Cm1);
        let internal = |what: &str| Error::Input {
            message: format!("internal: no {what} column"),
        };
        let (v, v_half, v_lower) = match kind {
            DataKind::Bands => (
                find(Role::VUpper).ok_or_else(|| internal("v′"))?,
                false,
                Some(find(Role::VLower).ok_or_else(|| internal("v″"))?),
            ),
            _ => match find(Role::V) {
                Some(i) => (i, false, None),
                None => (find(Role::VHalf).ok_or_else(|| internal("v"))?, true, None),
            },
        };
        let vi = columns
            .iter()
            .position(|c| c.role.is_value())
            .ok_or_else(|| internal("value"))?;
        Ok(Plan {
            kind,
            v,
            v_half,
            v_lower,
            value: (vi, unit_of(vi)),
            sigma: find(Role::Sigma).map(|i| (i, unit_of(i))),
            b: find(Role::B).map(|i| (i, unit_of(i))),
            iso: find(Role::Isotopologue),
        })
    }

    /// Reads one record; returns the row and the number of decimal commas read.
    pub(super) fn read_row(
        &self,
        rec: &table::Record,
        ncols: usize,
        decimal_comma: bool,
        sigma_edit: Option<f64>,
        diagnostics: &mut Vec<Diagnostic>,
    ) -> (Row, usize) {
        let mut problems = Vec::new();
        let mut commas = 0;
        let cell = |i: usize| rec.cells.get(i).map_or("", String::as_str);
        let extra = rec
            .cells
            .iter()
            .skip(ncols)
            .filter(|c| !c.is_empty())
            .count();
        if extra > 0 {
            problems.push(RowProblem {
                column: None,
                code: ProblemCode::FieldCount,
                message: format!(
                    "the row has {} cells but the table has {ncols} columns",
                    ncols + extra
                ),
            });
        }
        let (v_name, v_lower_name) = match self.kind {
            DataKind::Bands => ("v′ (upper v)", "v″ (lower v)"),
            _ if self.v_half => ("v + ½", ""),
            _ => ("v", ""),
        };
        let v = read_v(cell(self.v), v_name, self.v_half, self.kind, decimal_comma)
            .map_err(|(code, message)| {
                problems.push(RowProblem {
                    column: Some(self.v + 1),
                    code,
                    message,
                })
            })
            .ok();
        let v_lower = self.v_lower.and_then(|i| {
            read_v(cell(i), v_lower_name, false, self.kind, decimal_comma)
                .map_err(|(code, message)| {
                    problems.push(RowProblem {
                        column: Some(i + 1),
                        code,
                        message,
                    })
                })
                .ok()
        });

        // Value.
        let (vi, vunit) = self.value;
        let what = match self.kind {
            DataKind::Levels => "level energy",
            DataKind::Spacings => "spacing",
            DataKind::Bands => "band position",
        };
        let mut inline_sigma = None;
        let mut value_raw = None;
        let value = match parse_number(cell(vi), decimal_comma) {
            Ok(n) => {
                commas += usize::from(n.decimal_comma);
                inline_sigma = n.inline_sigma;
                value_raw = Some(n.value);
                match vunit.to_cm1(n.value) {
                    Ok(x) => check_magnitude(self.kind, x, n.value, vunit)
                        .map_err(|(code, m)| {
                            problems.push(RowProblem {
                                column: Some(vi + 1),
                                code,
                                message: m,
                            })
                        })
                        .ok(),
                    Err(e) => {
                        problems.push(RowProblem {
                            column: Some(vi + 1),
                            code: ProblemCode::Conversion,
                            message: strip_parameter(e),
                        });
                        None
                    }
                }
            }
            Err(e) => {
                problems.push(number_problem(vi, e, cell(vi), what));
                None
            }
        };

        // σ: the σ column, else an uncertainty written in the value cell.
        let mut sigma_cm1 = None;
        // A σ typed by the user wins over the table; it is in the value column's unit.
        let sigma_source = if let Some(s) = sigma_edit {
            Some((self.sigma.map_or(vi, |(si, _)| si), vunit, s))
        } else {
            match self.sigma {
                Some((si, su)) => match parse_number(cell(si), decimal_comma) {
                    Ok(n) => {
                        commas += usize::from(n.decimal_comma);
                        if let Some(inl) = inline_sigma
                            && (inl - n.value).abs() > 1e-12 * n.value.abs()
                        {
                            diagnostics.push(Diagnostic {
                                severity: Severity::Warning,
                                row: Some(rec.line),
                                column: Some(si + 1),
                                message: format!(
                                    "row {}: the value cell gives σ = {inl} but the σ column {}; the σ column is used",
                                    rec.line, n.value
                                ),
                            });
                        }
                        Some((si, su, n.value))
                    }
                    Err(NumError::Missing) => inline_sigma.map(|s| (vi, vunit, s)),
                    Err(e) => {
                        problems.push(number_problem(si, e, cell(si), "uncertainty"));
                        None
                    }
                },
                None => inline_sigma.map(|s| (vi, vunit, s)),
            }
        };
        if let Some((si, su, s)) = sigma_source {
            if s <= 0.0 {
                problems.push(RowProblem {
                    column: Some(si + 1),
                    code: ProblemCode::SigmaNotPositive,
                    message: format!("the uncertainty σ must be positive (got {s})"),
                });
            } else if let Some(raw) = value_raw {
                match su.sigma_to_cm1(raw, s) {
                    Ok(x) if x.is_finite() && x <= MAX_ABS_ENERGY_CM1 => sigma_cm1 = Some(x),
                    Ok(x) => problems.push(RowProblem {
                        column: Some(si + 1),
                        code: ProblemCode::Magnitude,
                        message: format!(
                            "σ = {x:.6e} cm⁻¹ (from {s} {}) is implausibly large: check the unit",
                            su.token()
                        ),
                    }),
                    Err(e) => problems.push(RowProblem {
                        column: Some(si + 1),
                        code: ProblemCode::Conversion,
                        message: strip_parameter(e),
                    }),
                }
            }
        }

        // B.
        let mut b_cm1 = None;
        if let Some((bi, bu)) = self.b {
            match parse_number(cell(bi), decimal_comma) {
                Ok(n) => {
                    commas += usize::from(n.decimal_comma);
                    let x = n.value * bu.cm1_per_unit().unwrap_or(1.0);
                    if x <= 0.0 {
                        problems.push(RowProblem {
                            column: Some(bi + 1),
                            code: ProblemCode::NotPositive,
                            message: format!("B must be positive (got {})", n.value),
                        });
                    } else if x > MAX_B_CM1 {
                        problems.push(RowProblem {
                            column: Some(bi + 1),
                            code: ProblemCode::Magnitude,
                            message: format!(
                                "B = {x} cm⁻¹ is above {MAX_B_CM1} cm⁻¹ (H₂ has ≈ 61): check the unit"
                            ),
                        });
                    } else {
                        b_cm1 = Some(x);
                    }
                }
                Err(NumError::Missing) => {}
                Err(e) => problems.push(number_problem(bi, e, cell(bi), "B")),
            }
        }
        let isotopologue = self
            .iso
            .map(|i| cell(i).to_string())
            .filter(|s| !s.is_empty());

        let observation = if problems.is_empty() {
            match (self.kind, v, value) {
                (DataKind::Levels, Some(v), Some(energy_cm1)) => Some(Observation::Level(Level {
                    v,
                    energy_cm1,
                    sigma_cm1,
                    b_cm1,
                    isotopologue,
                })),
                (DataKind::Spacings, Some(v), Some(spacing_cm1)) => {
                    Some(Observation::Spacing(Spacing {
                        v_lower: v,
                        spacing_cm1,
                        sigma_cm1,
                        isotopologue,
                    }))
                }
                (DataKind::Bands, Some(v_upper), Some(position_cm1)) => v_lower.map(|v_lower| {
                    Observation::Band(Band {
                        v_upper,
                        v_lower,
                        position_cm1,
                        sigma_cm1,
                        isotopologue,
                    })
                }),
                _ => None,
            }
        } else {
            None
        };
        (
            Row {
                line: rec.line,
                cells: rec.cells.clone(),
                observation,
                problems,
                user_reason: None,
                note: None,
            },
            commas,
        )
    }
}

pub(super) fn strip_parameter(e: Error) -> String {
    match e {
        Error::Parameter { message, .. } => message,
        other => other.to_string(),
    }
}

pub(super) fn number_problem(col: usize, e: NumError, text: &str, what: &str) -> RowProblem {
    let (code, message) = match e {
        NumError::Missing if text.is_empty() => {
            (ProblemCode::Missing, format!("the {what} is missing"))
        }
        NumError::Missing => (
            ProblemCode::Missing,
            format!("the {what} is missing ('{}')", shorten(text)),
        ),
        NumError::NotANumber => (
            ProblemCode::NotANumber,
            format!("the {what} is not a number: '{}'", shorten(text)),
        ),
        NumError::NotFinite => (
            ProblemCode::NotFinite,
            format!("the {what} is not a finite number: '{}'", shorten(text)),
        ),
    };
    RowProblem {
        column: Some(col + 1),
        code,
        message,
    }
}

pub(super) fn read_v(
    text: &str,
    name: &str,
    half: bool,
    kind: DataKind,
    decimal_comma: bool,
) -> std::result::Result<u32, (ProblemCode, String)> {
    let n = match parse_number(text, decimal_comma) {
        Ok(n) => n,
        Err(NumError::Missing) => {
            let msg = if kind == DataKind::Bands {
                format!("{name} is missing: a band needs both v′ and v″")
            } else {
                format!("{name} is missing")
            };
            return Err((ProblemCode::Missing, msg));
        }
        Err(NumError::NotANumber) => {
            return Err((
                ProblemCode::NotANumber,
                format!("{name} is not a number: '{}'", shorten(text)),
            ));
        }
        Err(NumError::NotFinite) => {
            return Err((
                ProblemCode::NotFinite,
                format!("{name} is not a finite number: '{}'", shorten(text)),
            ));
        }
    };
    if n.inline_sigma.is_some() {
        return Err((
            ProblemCode::NotANumber,
            format!("{name} cannot carry an uncertainty: '{}'", shorten(text)),
        ));
    }
    let x = if half { n.value - 0.5 } else { n.value };
    if (x - x.round()).abs() > 1e-9 {
        let msg = if half {
            format!(
                "{name} must be a half-integer such as 0.5 or 1.5 (got {})",
                n.value
            )
        } else {
            format!("{name} must be a whole number (got {})", n.value)
        };
        return Err((ProblemCode::VNotInteger, msg));
    }
    if x < -1e-9 {
        return Err((
            ProblemCode::VNegative,
            format!("{name} must not be negative (got {})", n.value),
        ));
    }
    if x > f64::from(MAX_V) {
        return Err((
            ProblemCode::VTooLarge,
            format!(
                "{name} = {} is above {MAX_V}: is this the right column?",
                n.value
            ),
        ));
    }
    Ok(x.round() as u32)
}

pub(super) fn check_magnitude(
    kind: DataKind,
    x_cm1: f64,
    raw: f64,
    unit: Unit,
) -> std::result::Result<f64, (ProblemCode, String)> {
    let from = if unit == Unit::Cm1 {
        String::new()
    } else {
        format!(" (from {raw} {})", unit.token())
    };
    match kind {
        DataKind::Levels if x_cm1.abs() > MAX_ABS_ENERGY_CM1 => Err((
            ProblemCode::Magnitude,
            format!(
                "{x_cm1:.6e} cm⁻¹{from} is outside the plausible range of a level energy \
                 (|E| ≤ {MAX_ABS_ENERGY_CM1} cm⁻¹): check the unit"
            ),
        )),
        DataKind::Spacings | DataKind::Bands if x_cm1 <= 0.0 => Err((
            ProblemCode::NotPositive,
            format!(
                "a {} must be positive (got {raw})",
                if kind == DataKind::Bands {
                    "band position"
                } else {
                    "spacing"
                }
            ),
        )),
        DataKind::Spacings if x_cm1 > MAX_SPACING_CM1 => Err((
            ProblemCode::Magnitude,
            format!(
                "{x_cm1:.6e} cm⁻¹{from} is outside the plausible range of a vibrational spacing \
                 (≤ {MAX_SPACING_CM1} cm⁻¹): check the unit"
            ),
        )),
        DataKind::Bands if x_cm1 > MAX_ABS_ENERGY_CM1 => Err((
            ProblemCode::Magnitude,
            format!(
                "{x_cm1:.6e} cm⁻¹{from} is outside the plausible range of a band position \
                 (≤ {MAX_ABS_ENERGY_CM1} cm⁻¹): check the unit"
            ),
        )),
        _ => Ok(x_cm1),
    }
}

pub(super) fn apply_user_exclusions(
    rows: &mut [Row],
    exclusions: &[UserExclusion],
    diagnostics: &mut Vec<Diagnostic>,
) {
    if exclusions.is_empty() {
        return;
    }
    let by_line: HashMap<usize, usize> =
        rows.iter().enumerate().map(|(i, r)| (r.line, i)).collect();
    for e in exclusions {
        match by_line.get(&e.row) {
            Some(&i) => rows[i].user_reason = Some(e.reason.clone()),
            None => diagnostics.push(Diagnostic {
                severity: Severity::Warning,
                row: Some(e.row),
                column: None,
                message: format!("the exclusion of row {} matches no data row", e.row),
            }),
        }
    }
}

/// Excludes later rows with the same key (v, or v′ and v″) and isotopologue as an earlier
/// usable row. Rows the user excluded take no part, so excluding one of a pair frees the other.
pub(super) fn mark_duplicates(rows: &mut [Row]) {
    let mut seen: HashMap<(Option<String>, u32, u32), usize> = HashMap::new();
    for row in rows.iter_mut() {
        if row.status() != RowStatus::Usable {
            continue;
        }
        let Some(o) = &row.observation else { continue };
        let key = (o.isotopologue().map(str::to_string), o.key().0, o.key().1);
        if let Some(first) = seen.get(&key) {
            let iso = o
                .isotopologue()
                .map(|s| format!(", isotopologue '{s}'"))
                .unwrap_or_default();
            let message = format!("duplicate of row {first} (same {}{iso})", o.describe_key());
            row.problems.push(RowProblem {
                column: None,
                code: ProblemCode::Duplicate,
                message,
            });
        } else {
            seen.insert(key, row.line);
        }
    }
}

/// The one rule for a table where some usable rows give σ and others do not: each row without σ
/// uses the median of the given σ (in cm⁻¹), so one empty cell never stops the analyses. Every
/// such row gets a note and a warning naming it, and the table a warning counting them.
pub(super) fn fill_missing_sigma(rows: &mut [Row], diagnostics: &mut Vec<Diagnostic>) {
    let mut given: Vec<f64> = rows
        .iter()
        .filter(|r| r.is_usable())
        .filter_map(sigma_of)
        .collect();
    let missing: Vec<usize> = rows
        .iter()
        .enumerate()
        .filter(|(_, r)| r.is_usable() && sigma_of(r).is_none())
        .map(|(i, _)| i)
        .collect();
    if given.is_empty() || missing.is_empty() {
        return;
    }
    crate::sorting::sort_by(&mut given, f64::total_cmp);
    let n = given.len();
    let median_cm1 = if n % 2 == 1 {
        given[n / 2]
    } else {
        0.5 * (given[n / 2 - 1] + given[n / 2])
    };
    let shown = crate::format::significant(median_cm1, 3);
    let note = format!("no σ given: the median of the given σ, {shown} cm⁻¹, is used");
    let mut lines = Vec::with_capacity(missing.len());
    for i in missing {
        let row = &mut rows[i];
        match row.observation.as_mut() {
            Some(Observation::Level(l)) => l.sigma_cm1 = Some(median_cm1),
            Some(Observation::Spacing(s)) => s.sigma_cm1 = Some(median_cm1),
            Some(Observation::Band(b)) => b.sigma_cm1 = Some(median_cm1),
            None => continue,
        }
        row.note = Some(note.clone());
        lines.push(row.line);
        diagnostics.push(Diagnostic {
            severity: Severity::Warning,
            row: Some(row.line),
            column: None,
            message: format!("row {}: {note}", row.line),
        });
    }
    let list = lines
        .iter()
        .map(usize::to_string)
        .collect::<Vec<_>>()
        .join(", ");
    let (rows_word, use_word) = if lines.len() == 1 {
        ("row", "uses")
    } else {
        ("rows", "use")
    };
    diagnostics.push(Diagnostic {
        severity: Severity::Warning,
        row: None,
        column: None,
        message: format!(
            "{} of {} usable rows have no uncertainty σ while the others do: {rows_word} {list}              {use_word} the median of the given σ, {shown} cm⁻¹",
            lines.len(),
            lines.len() + n
        ),
    });
}

/// Remarks about the table as a whole.
pub(super) fn table_remarks(
    kind: DataKind,
    columns: &[Column],
    rows: &[Row],
    diagnostics: &mut Vec<Diagnostic>,
) {
    let Some(vc) = columns.iter().find(|c| c.role.is_value()) else {
        return;
    };
    let magnitude = rows
        .iter()
        .filter(|r| {
            r.problems
                .iter()
                .any(|p| p.code == ProblemCode::Magnitude && p.column == Some(vc.index))
        })
        .count();
    if magnitude > 0 && magnitude * 2 >= rows.len() {
        diagnostics.push(Diagnostic {
            severity: Severity::Warning,
            row: None,
            column: Some(vc.index),
            message: format!(
                "{magnitude} of {} values in column {} are implausible in {}: is the unit right?",
                rows.len(),
                vc.label(),
                vc.unit.map_or("cm⁻¹", Unit::label)
            ),
        });
    }
    let values: Vec<f64> = rows
        .iter()
        .filter_map(|r| match &r.observation {
            Some(Observation::Level(l)) => Some(l.energy_cm1),
            Some(Observation::Spacing(s)) => Some(s.spacing_cm1),
            Some(Observation::Band(b)) => Some(b.position_cm1),
            None => None,
        })
        .collect();
    if vc.unit_from == Some(Provenance::Assumed)
        && !values.is_empty()
        && values.iter().all(|x| x.abs() < 50.0)
    {
        diagnostics.push(Diagnostic {
            severity: Severity::Warning,
            row: None,
            column: Some(vc.index),
            message: format!(
                "all values of column {} are below 50 and no unit was given, so they were read \
                 as cm⁻¹; if they are eV or another unit, say so",
                vc.label()
            ),
        });
    }
    // A table with σ on some rows only was completed by `fill_missing_sigma`.
    let with_sigma = rows
        .iter()
        .filter(|r| r.is_usable())
        .filter(|r| sigma_of(r).is_some())
        .count();
    let usable = rows.iter().filter(|r| r.is_usable()).count();
    if with_sigma == 0 && usable > 0 {
        diagnostics.push(Diagnostic {
            severity: Severity::Info,
            row: None,
            column: None,
            message: format!(
                "no uncertainties given: the {} will be weighted equally",
                kind.name()
            ),
        });
    }
}

pub(super) fn sigma_of(r: &Row) -> Option<f64> {
    match r.observation.as_ref()? {
        Observation::Level(l) => l.sigma_cm1,
        Observation::Spacing(s) => s.sigma_cm1,
        Observation::Band(b) => b.sigma_cm1,
    }
}
