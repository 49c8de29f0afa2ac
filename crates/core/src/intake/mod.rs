//! Data intake: from pasted or loaded text to a validated data set, keeping every row.
//!
//! [`read_table`] takes the text of a table (CSV, tab-, semicolon- or whitespace-separated, with
//! or without a header, `#` comments, UTF-8 BOM, CRLF, quoted cells, spreadsheet pastes) and
//! [`IntakeOptions`] (explicit choices that override detection), and returns a [`DataSet`]:
//! every data row with its status (usable, excluded with a reason, or excluded by the user with
//! the user's reason), the column roles and units that were understood and where each came from,
//! and [`Diagnostic`]s. Nothing is dropped silently: each input line is a data row, the header, a
//! comment, a blank line, or a title line reported in the diagnostics.
//!
//! Three kinds of table ([`DataKind`]): level energies (v, E), spacings (v, ΔG_{v+½}, keyed by
//! the lower level v) and bands (v′, v″, ν). Usable rows convert to the clean types of
//! [`crate::data`], all energies as vacuum wavenumbers in cm⁻¹.
//!
//! Row numbers in every message are line numbers of the input text (1-based, counting comments,
//! blank lines and the header) — the row numbers a spreadsheet shows for a pasted range starting
//! at its first row. Column numbers are 1-based.

mod cell;
mod header;
mod table;

use std::collections::HashMap;

use serde::{Deserialize, Serialize};

use crate::data::{Band, Level, Spacing};
use crate::error::{Error, Result};
use crate::units::{Medium, Unit, UnitText};
use cell::{NumError, parse_number};
use header::{HeaderInfo, HeaderRole};
pub use table::{Delimiter, decode};

/// Fewest usable levels (of one isotopologue) for any analysis.
///
/// The simplest analysis of vibrational data is a linear Birge–Sponer line ΔG_{v+½} = a − b(v+½)
/// (giving ωe, ωexe and a first dissociation estimate). It needs two spacings, which take three
/// levels — or three bands of one progression. Fewer rows support no analysis at all.
pub const MIN_LEVELS: usize = 3;
/// Fewest usable spacings (of one isotopologue) for any analysis: two, for the straight
/// Birge–Sponer line (see [`MIN_LEVELS`]).
pub const MIN_SPACINGS: usize = 2;
/// Fewest usable bands (of one isotopologue) for any analysis: three, which in one progression
/// give the two spacings of a Birge–Sponer line (see [`MIN_LEVELS`]).
pub const MIN_BANDS: usize = 3;
/// Largest accepted vibrational quantum number. No diatomic potential holds more than a few
/// hundred bound levels [common practice, no source]; larger numbers are taken as a column mix-up.
pub const MAX_V: u32 = 1000;
/// Largest plausible |level energy| or band position, cm⁻¹ (≈ 62 eV): well above any molecular
/// binding or first ionisation energy (helium's, the largest, is ≈ 198 311 cm⁻¹, from memory).
/// A converted value beyond it means a wrong unit.
pub const MAX_ABS_ENERGY_CM1: f64 = 500_000.0;
/// Largest plausible vibrational spacing, cm⁻¹: ten times the largest there is (H₂, ΔG_{½} ≈
/// 4161 cm⁻¹, from memory), rounded up.
pub const MAX_SPACING_CM1: f64 = 50_000.0;
/// Largest plausible rotational constant B, cm⁻¹ (H₂, the largest, has Be ≈ 61 cm⁻¹, from memory).
pub const MAX_B_CM1: f64 = 100.0;

/// What a table holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum DataKind {
    /// Level energies G(v) or T(v): columns v and E.
    Levels,
    /// Spacings ΔG_{v+½} = G(v+1) − G(v): columns v (lower level) and ΔG.
    Spacings,
    /// Band positions ν(v′, v″): columns v′, v″ and ν.
    Bands,
}

impl DataKind {
    /// Name for the command line and JSON (`levels`, `spacings`, `bands`).
    pub fn name(self) -> &'static str {
        match self {
            DataKind::Levels => "levels",
            DataKind::Spacings => "spacings",
            DataKind::Bands => "bands",
        }
    }

    /// What a table of this kind is, for messages ("a level list").
    pub fn what(self) -> &'static str {
        match self {
            DataKind::Levels => "a level list",
            DataKind::Spacings => "a spacing list",
            DataKind::Bands => "a band list",
        }
    }

    /// Fewest usable rows of one isotopologue for any analysis ([`MIN_LEVELS`] etc.).
    pub fn min_usable(self) -> usize {
        match self {
            DataKind::Levels => MIN_LEVELS,
            DataKind::Spacings => MIN_SPACINGS,
            DataKind::Bands => MIN_BANDS,
        }
    }

    /// Reads `levels`, `spacings` or `bands` (singular forms too).
    pub fn parse(text: &str) -> Result<DataKind> {
        match text.trim().to_ascii_lowercase().as_str() {
            "levels" | "level" | "terms" | "term" => Ok(DataKind::Levels),
            "spacings" | "spacing" | "dg" => Ok(DataKind::Spacings),
            "bands" | "band" => Ok(DataKind::Bands),
            other => Err(Error::parameter(
                "kind",
                format!("'{other}' is not a kind of data: use levels, spacings or bands"),
            )),
        }
    }
}

/// Whether band positions are band origins or band heads (needed by the later analyses:
/// heads are offset from origins by a rotational amount that drifts along a progression).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BandPositions {
    /// Band origins ν0 (the default).
    Origins,
    /// Band heads.
    Heads,
}

/// The role of a column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    /// Vibrational quantum number v (of a level, or the lower level of a spacing).
    V,
    /// Upper-state v′ of a band.
    VUpper,
    /// Lower-state v″ of a band.
    VLower,
    /// v + ½ of a spacing (half-integers 0.5, 1.5, …).
    VHalf,
    /// Level energy G(v) or T(v).
    Energy,
    /// Spacing ΔG_{v+½}.
    Spacing,
    /// Band position (origin or head), as wavenumber, frequency, energy or wavelength.
    Position,
    /// One-standard-deviation uncertainty of the value.
    Sigma,
    /// Isotopologue tag.
    Isotopologue,
    /// Rotational constant B_v.
    B,
    /// Not read.
    Ignore,
}

impl Role {
    /// Name for the command line and JSON.
    pub fn name(self) -> &'static str {
        match self {
            Role::V => "v",
            Role::VUpper => "v_upper",
            Role::VLower => "v_lower",
            Role::VHalf => "v_half",
            Role::Energy => "energy",
            Role::Spacing => "spacing",
            Role::Position => "position",
            Role::Sigma => "sigma",
            Role::Isotopologue => "isotopologue",
            Role::B => "b",
            Role::Ignore => "ignore",
        }
    }

    /// Description for people.
    pub fn label(self) -> &'static str {
        match self {
            Role::V => "v",
            Role::VUpper => "v′ (upper)",
            Role::VLower => "v″ (lower)",
            Role::VHalf => "v + ½",
            Role::Energy => "level energy",
            Role::Spacing => "spacing ΔG",
            Role::Position => "band position",
            Role::Sigma => "uncertainty σ",
            Role::Isotopologue => "isotopologue",
            Role::B => "rotational constant B",
            Role::Ignore => "not read",
        }
    }

    /// Reads a role name (as [`Role::name`], or a header spelling such as `v'`, `E`, `sigma`).
    pub fn parse(text: &str) -> Result<Role> {
        let t = text.trim().to_ascii_lowercase();
        for r in ALL_ROLES {
            if r.name() == t {
                return Ok(r);
            }
        }
        if matches!(t.as_str(), "none" | "skip") {
            return Ok(Role::Ignore);
        }
        match header::analyse(text).role {
            HeaderRole::Role(r) => Ok(r),
            _ => Err(Error::parameter(
                "role",
                format!(
                    "'{}' is not a column role: use one of {}",
                    text.trim(),
                    ALL_ROLES
                        .iter()
                        .map(|r| r.name())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            )),
        }
    }

    fn is_value(self) -> bool {
        matches!(self, Role::Energy | Role::Spacing | Role::Position)
    }
}

/// Every role, in display order.
pub const ALL_ROLES: [Role; 11] = [
    Role::V,
    Role::VUpper,
    Role::VLower,
    Role::VHalf,
    Role::Energy,
    Role::Spacing,
    Role::Position,
    Role::Sigma,
    Role::Isotopologue,
    Role::B,
    Role::Ignore,
];

/// Where a decision about the table came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Provenance {
    /// Set explicitly in [`IntakeOptions`].
    Override,
    /// Read from the header (column name or unit written with it).
    Header,
    /// Inferred from the columns present (the kind) or from column order (no header).
    Detected,
    /// The default unit of [`IntakeOptions::unit`].
    DefaultUnit,
    /// An uncertainty takes the unit of its value column.
    ValueColumn,
    /// Nothing said: cm⁻¹ assumed.
    Assumed,
}

/// An explicit choice for one column.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ColumnOverride {
    /// 1-based column number.
    pub column: usize,
    /// Role, if chosen.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub role: Option<Role>,
    /// Unit, if chosen.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unit: Option<Unit>,
}

/// A row the user excluded, with the user's reason.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UserExclusion {
    /// Row number (line number of the input).
    pub row: usize,
    /// Why (free text, shown in reports).
    pub reason: String,
}

/// Explicit choices that override what intake would detect. The default detects everything.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(default)]
pub struct IntakeOptions {
    /// Kind of data.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub kind: Option<DataKind>,
    /// For bands: origins or heads.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub band_positions: Option<BandPositions>,
    /// Whether the first row is a header.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub header: Option<bool>,
    /// Cell delimiter.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub delimiter: Option<Delimiter>,
    /// Unit of value columns whose header names none (and of B, if a non-wavelength unit).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub unit: Option<Unit>,
    /// Per-column roles and units.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub columns: Vec<ColumnOverride>,
    /// Rows excluded by the user.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub exclusions: Vec<UserExclusion>,
}

impl IntakeOptions {
    /// Excludes a row (replacing an earlier reason for the same row).
    pub fn exclude(&mut self, row: usize, reason: impl Into<String>) {
        self.include(row);
        self.exclusions.push(UserExclusion {
            row,
            reason: reason.into(),
        });
        self.exclusions.sort_by_key(|e| e.row);
    }

    /// Takes back a user exclusion of a row.
    pub fn include(&mut self, row: usize) {
        self.exclusions.retain(|e| e.row != row);
    }

    /// Sets the role and/or unit of a column (1-based), keeping choices already made for it.
    pub fn set_column(&mut self, column: usize, role: Option<Role>, unit: Option<Unit>) {
        if let Some(c) = self.columns.iter_mut().find(|c| c.column == column) {
            if role.is_some() {
                c.role = role;
            }
            if unit.is_some() {
                c.unit = unit;
            }
        } else {
            self.columns.push(ColumnOverride { column, role, unit });
            self.columns.sort_by_key(|c| c.column);
        }
    }
}

/// One column as understood.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Column {
    /// 1-based column number.
    pub index: usize,
    /// Header text (empty without a header).
    pub name: String,
    /// Role.
    pub role: Role,
    /// Where the role came from.
    pub role_from: Provenance,
    /// Unit of the cells (value, σ and B columns).
    pub unit: Option<Unit>,
    /// Where the unit came from.
    pub unit_from: Option<Provenance>,
    /// Why a column is not read, or how it was reinterpreted.
    pub note: Option<String>,
}

impl Column {
    /// `2 ('E (eV)')`, or `2` without a header name.
    pub fn label(&self) -> String {
        column_label(self.index, &self.name)
    }
}

fn column_label(index: usize, name: &str) -> String {
    if name.is_empty() {
        format!("{index}")
    } else {
        format!("{index} ('{name}')")
    }
}

/// Machine-readable reason a row is excluded.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ProblemCode {
    /// A needed cell is empty (or a placeholder such as `—`).
    Missing,
    /// A cell is not a number.
    NotANumber,
    /// NaN or infinity.
    NotFinite,
    /// σ ≤ 0.
    SigmaNotPositive,
    /// v is not a whole number (or v + ½ not a half-integer).
    VNotInteger,
    /// v < 0.
    VNegative,
    /// v > [`MAX_V`].
    VTooLarge,
    /// Same v (or v′, v″) and isotopologue as an earlier usable row.
    Duplicate,
    /// Value implausible for its unit (likely a wrong unit).
    Magnitude,
    /// A spacing or band position ≤ 0, or B ≤ 0.
    NotPositive,
    /// The unit conversion is not defined for this value (e.g. air wavelength below 200 nm).
    Conversion,
    /// More cells than columns.
    FieldCount,
}

/// Why a row cannot be used.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RowProblem {
    /// 1-based column number, when one column is at fault.
    pub column: Option<usize>,
    /// Machine-readable reason.
    pub code: ProblemCode,
    /// Readable reason (without the row/column location).
    pub message: String,
}

/// A clean observation of one usable row.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Observation {
    /// A level energy.
    Level(Level),
    /// A spacing.
    Spacing(Spacing),
    /// A band position.
    Band(Band),
}

impl Observation {
    fn isotopologue(&self) -> Option<&str> {
        match self {
            Observation::Level(l) => l.isotopologue.as_deref(),
            Observation::Spacing(s) => s.isotopologue.as_deref(),
            Observation::Band(b) => b.isotopologue.as_deref(),
        }
    }

    fn key(&self) -> (u32, u32) {
        match self {
            Observation::Level(l) => (l.v, 0),
            Observation::Spacing(s) => (s.v_lower, 0),
            Observation::Band(b) => (b.v_upper, b.v_lower),
        }
    }

    fn describe_key(&self) -> String {
        match self {
            Observation::Level(l) => format!("v = {}", l.v),
            Observation::Spacing(s) => format!("v = {}", s.v_lower),
            Observation::Band(b) => format!("v′ = {}, v″ = {}", b.v_upper, b.v_lower),
        }
    }
}

/// Status of a row.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RowStatus {
    /// Used by the analyses.
    Usable,
    /// Excluded by intake (see [`Row::problems`]).
    Excluded,
    /// Excluded by the user (see [`Row::user_reason`]).
    ExcludedByUser,
}

/// One data row of the input, whatever its fate.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Row {
    /// Row number: the line of the input where the row starts (1-based).
    pub line: usize,
    /// The cells as written (trimmed).
    pub cells: Vec<String>,
    /// The clean observation, when every needed cell could be read.
    pub observation: Option<Observation>,
    /// Why intake excludes the row (empty when it does not).
    pub problems: Vec<RowProblem>,
    /// The user's reason, when the user excluded the row.
    pub user_reason: Option<String>,
}

impl Row {
    /// Status: intake's problems first, then the user's choice.
    pub fn status(&self) -> RowStatus {
        if !self.problems.is_empty() {
            RowStatus::Excluded
        } else if self.user_reason.is_some() {
            RowStatus::ExcludedByUser
        } else {
            RowStatus::Usable
        }
    }

    /// True when the analyses use this row.
    pub fn is_usable(&self) -> bool {
        self.status() == RowStatus::Usable && self.observation.is_some()
    }
}

/// How serious a diagnostic is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// What was assumed or inferred.
    Info,
    /// Something the user should look at.
    Warning,
}

/// A remark about the table as a whole, a column or a row (not a reason for exclusion).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Diagnostic {
    /// Severity.
    pub severity: Severity,
    /// Row (line) concerned, if one.
    pub row: Option<usize>,
    /// Column concerned (1-based), if one.
    pub column: Option<usize>,
    /// Readable text.
    pub message: String,
}

/// A table as understood: every row with its status, the columns, and the remarks.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DataSet {
    /// Kind of data.
    pub kind: DataKind,
    /// Whether the kind was chosen or detected.
    pub kind_from: Provenance,
    /// For bands: origins or heads (`None` for other kinds).
    pub band_positions: Option<BandPositions>,
    /// Whether `band_positions` was chosen, read from the header, or assumed.
    pub band_positions_from: Option<Provenance>,
    /// Cell delimiter.
    pub delimiter: Delimiter,
    /// Line of the header row, if any.
    pub header_row: Option<usize>,
    /// True when the header was read from a `#` comment line just above the data.
    pub header_in_comment: bool,
    /// Columns, in order.
    pub columns: Vec<Column>,
    /// Every data row, in input order.
    pub rows: Vec<Row>,
    /// Remarks.
    pub diagnostics: Vec<Diagnostic>,
}

impl DataSet {
    /// Rows the analyses use.
    pub fn usable_rows(&self) -> impl Iterator<Item = &Row> {
        self.rows.iter().filter(|r| r.is_usable())
    }

    /// Number of usable rows.
    pub fn usable_count(&self) -> usize {
        self.usable_rows().count()
    }

    /// Rows excluded by intake or by the user.
    pub fn excluded_rows(&self) -> impl Iterator<Item = &Row> {
        self.rows.iter().filter(|r| !r.is_usable())
    }

    /// The column with a role, if any.
    pub fn column_with(&self, role: Role) -> Option<&Column> {
        self.columns.iter().find(|c| c.role == role)
    }

    /// "row 5, column 2 ('E (eV)'): not a number: 'x'" for a problem of a row.
    pub fn locate(&self, row: &Row, problem: &RowProblem) -> String {
        match problem.column {
            Some(c) => {
                let name = self.columns.get(c - 1).map_or("", |col| col.name.as_str());
                format!(
                    "row {}, column {}: {}",
                    row.line,
                    column_label(c, name),
                    problem.message
                )
            }
            None => format!("row {}: {}", row.line, problem.message),
        }
    }

    /// Usable observations, in input order.
    pub fn observations(&self) -> Vec<Observation> {
        self.usable_rows()
            .filter_map(|r| r.observation.clone())
            .collect()
    }

    /// Succeeds when the data support at least the simplest analysis: the largest group of
    /// usable rows of one isotopologue holds at least [`DataKind::min_usable`] rows.
    pub fn check_usable(&self) -> Result<()> {
        let mut groups: HashMap<Option<&str>, usize> = HashMap::new();
        for r in self.usable_rows() {
            if let Some(o) = &r.observation {
                *groups.entry(o.isotopologue()).or_default() += 1;
            }
        }
        let need = self.kind.min_usable();
        let best = groups
            .iter()
            .max_by_key(|(k, n)| (**n, std::cmp::Reverse(**k)))
            .map(|(k, n)| (*k, *n));
        let have = best.map_or(0, |b| b.1);
        if have >= need {
            return Ok(());
        }
        let what = if groups.len() > 1 {
            let tag = match best.and_then(|b| b.0) {
                Some(t) => format!("'{t}'"),
                None => "rows without a tag".to_string(),
            };
            format!(
                "{} of one isotopologue (largest group: {tag})",
                self.kind.what()
            )
        } else {
            self.kind.what().to_string()
        };
        Err(Error::TooFewPoints { what, have, need })
    }

    /// The usable levels (checked with [`DataSet::check_usable`]); an error for other kinds.
    pub fn levels(&self) -> Result<Vec<Level>> {
        self.expect_kind(DataKind::Levels)?;
        Ok(self
            .observations()
            .into_iter()
            .filter_map(|o| match o {
                Observation::Level(l) => Some(l),
                _ => None,
            })
            .collect())
    }

    /// The usable spacings (checked with [`DataSet::check_usable`]); an error for other kinds.
    pub fn spacings(&self) -> Result<Vec<Spacing>> {
        self.expect_kind(DataKind::Spacings)?;
        Ok(self
            .observations()
            .into_iter()
            .filter_map(|o| match o {
                Observation::Spacing(s) => Some(s),
                _ => None,
            })
            .collect())
    }

    /// The usable bands (checked with [`DataSet::check_usable`]); an error for other kinds.
    pub fn bands(&self) -> Result<Vec<Band>> {
        self.expect_kind(DataKind::Bands)?;
        Ok(self
            .observations()
            .into_iter()
            .filter_map(|o| match o {
                Observation::Band(b) => Some(b),
                _ => None,
            })
            .collect())
    }

    fn expect_kind(&self, kind: DataKind) -> Result<()> {
        if self.kind != kind {
            return Err(Error::parameter(
                "kind",
                format!("the table holds {}, not {}", self.kind.name(), kind.name()),
            ));
        }
        self.check_usable()
    }

    /// Every decision made, as explicit options: reading the same text with them gives the same
    /// rows, roles and units even if detection rules change. The header is left to detection
    /// when it was read from a comment line.
    pub fn resolved_options(&self) -> IntakeOptions {
        IntakeOptions {
            kind: Some(self.kind),
            band_positions: self.band_positions,
            header: if self.header_in_comment {
                None
            } else {
                Some(self.header_row.is_some())
            },
            delimiter: Some(self.delimiter),
            unit: None,
            columns: self
                .columns
                .iter()
                .map(|c| ColumnOverride {
                    column: c.index,
                    role: Some(c.role),
                    unit: c.unit,
                })
                .collect(),
            exclusions: self
                .rows
                .iter()
                .filter_map(|r| {
                    r.user_reason.as_ref().map(|why| UserExclusion {
                        row: r.line,
                        reason: why.clone(),
                    })
                })
                .collect(),
        }
    }
}

/// Reads a table from text. See the module documentation.
///
/// Errors are for the table as a whole (nothing readable, no column for a needed role, a unit
/// that cannot be used); problems of single rows are kept in the [`DataSet`]. Call
/// [`DataSet::check_usable`] to learn whether enough rows are usable.
pub fn read_table(text: &str, options: &IntakeOptions) -> Result<DataSet> {
    let raw = table::read_records(text, options.delimiter)?;
    let mut diagnostics = Vec::new();
    let decimal_comma_allowed = raw.delimiter != Delimiter::Comma;
    let mut records: &[table::Record] = &raw.records;
    if records.is_empty() {
        return Err(Error::Input {
            message: "the input holds no table rows (it is empty, or only comments)".into(),
        });
    }
    for r in &raw.records {
        if r.last_line > r.line {
            diagnostics.push(Diagnostic {
                severity: Severity::Warning,
                row: Some(r.line),
                column: None,
                message: format!(
                    "a quoted cell runs from line {} to line {} (a missing closing quote?)",
                    r.line, r.last_line
                ),
            });
        }
    }

    // Title lines: leading single-cell text rows in front of a wider table.
    let widest = mode_width(records);
    if widest >= 2 {
        let titles = records
            .iter()
            .take_while(|r| non_empty(&r.cells) == 1 && parse_number(&r.cells[0], true).is_err())
            .count();
        for r in &records[..titles] {
            diagnostics.push(Diagnostic {
                severity: Severity::Info,
                row: Some(r.line),
                column: None,
                message: format!(
                    "line {} skipped as a title line: '{}'",
                    r.line,
                    shorten(&r.cells[0])
                ),
            });
        }
        records = &records[titles..];
        if records.is_empty() {
            return Err(Error::Input {
                message: "the input holds only title lines".into(),
            });
        }
    }

    // Header.
    let mut header_in_comment = false;
    let header: Option<(usize, Vec<String>)> = match options.header {
        Some(true) => Some((records[0].line, records[0].cells.clone())),
        Some(false) => None,
        None => {
            if looks_like_header(records) {
                Some((records[0].line, records[0].cells.clone()))
            } else if let Some(h) = comment_header(&raw, records) {
                header_in_comment = true;
                diagnostics.push(Diagnostic {
                    severity: Severity::Info,
                    row: Some(h.0),
                    column: None,
                    message: format!("column names read from the comment on line {}", h.0),
                });
                Some(h)
            } else {
                None
            }
        }
    };
    let data: &[table::Record] = if header.is_some() && !header_in_comment {
        &records[1..]
    } else {
        records
    };
    let header = header.map(|(line, cells)| {
        if raw.delimiter == Delimiter::Whitespace && cells.len() > mode_width(data) {
            (line, merge_header_words(cells))
        } else {
            (line, cells)
        }
    });
    let ncols = match &header {
        Some((_, cells)) => cells.len().max(1),
        None => mode_width(data).max(1),
    };
    if data.is_empty() {
        return Err(Error::Input {
            message: "the table has a header but no data rows".into(),
        });
    }

    // Column candidates.
    let names: Vec<String> = (0..ncols)
        .map(|i| {
            header
                .as_ref()
                .and_then(|(_, c)| c.get(i).cloned())
                .unwrap_or_default()
        })
        .collect();
    let infos: Vec<HeaderInfo> = names.iter().map(|n| header::analyse(n)).collect();
    let mut overrides: Vec<Option<&ColumnOverride>> = vec![None; ncols];
    for o in &options.columns {
        if o.column == 0 || o.column > ncols {
            return Err(Error::parameter(
                "columns",
                format!(
                    "column {} does not exist: the table has {ncols} columns",
                    o.column
                ),
            ));
        }
        overrides[o.column - 1] = Some(o);
    }
    let mut cands: Vec<(HeaderRole, Provenance)> = (0..ncols)
        .map(|i| match overrides[i].and_then(|o| o.role) {
            Some(r) => (HeaderRole::Role(r), Provenance::Override),
            None if header.is_some() => (infos[i].role, Provenance::Header),
            None => (HeaderRole::Unrecognised, Provenance::Detected),
        })
        .collect();

    let mut kind = options.kind;
    let mut kind_from = Provenance::Override;
    if header.is_none() {
        let (k, note) = positional_roles(data, &mut cands, kind, decimal_comma_allowed);
        if kind.is_none() {
            kind = Some(k);
            kind_from = Provenance::Detected;
        }
        diagnostics.push(Diagnostic {
            severity: Severity::Warning,
            row: None,
            column: None,
            message: note,
        });
    }
    let kind = match kind {
        Some(k) => k,
        None => {
            kind_from = Provenance::Detected;
            detect_kind(&cands, &names)?
        }
    };

    let plan_roles = select_columns(kind, &cands, &names, &mut diagnostics)?;
    let mut columns: Vec<Column> = (0..ncols)
        .map(|i| Column {
            index: i + 1,
            name: names[i].clone(),
            role: plan_roles[i].0,
            role_from: cands[i].1,
            unit: None,
            unit_from: None,
            note: plan_roles[i].1.clone(),
        })
        .collect();
    resolve_units(
        kind,
        &mut columns,
        &infos,
        &overrides,
        options.unit,
        &mut diagnostics,
    )?;

    let (band_positions, band_positions_from) = if kind == DataKind::Bands {
        match options.band_positions {
            Some(p) => (Some(p), Some(Provenance::Override)),
            None => {
                let from_header = columns
                    .iter()
                    .zip(&infos)
                    .find(|(c, _)| c.role == Role::Position)
                    .and_then(|(_, i)| i.positions);
                match from_header {
                    Some(p) => (Some(p), Some(Provenance::Header)),
                    None => {
                        diagnostics.push(Diagnostic {
                            severity: Severity::Info,
                            row: None,
                            column: None,
                            message: "band positions are taken as band origins; say so if they \
                                      are band heads"
                                .into(),
                        });
                        (Some(BandPositions::Origins), Some(Provenance::Assumed))
                    }
                }
            }
        }
    } else {
        (None, None)
    };

    let plan = Plan::new(kind, &columns)?;
    let mut rows = Vec::with_capacity(data.len());
    let mut decimal_commas = 0usize;
    for rec in data {
        let (row, commas) = plan.read_row(rec, ncols, decimal_comma_allowed, &mut diagnostics);
        decimal_commas += commas;
        rows.push(row);
    }
    if decimal_commas > 0 {
        diagnostics.push(Diagnostic {
            severity: Severity::Info,
            row: None,
            column: None,
            message: format!(
                "{decimal_commas} cells with a decimal comma were read as decimal numbers"
            ),
        });
    }

    apply_user_exclusions(&mut rows, &options.exclusions, &mut diagnostics);
    mark_duplicates(&mut rows);
    table_remarks(kind, &columns, &rows, &mut diagnostics);

    Ok(DataSet {
        kind,
        kind_from,
        band_positions,
        band_positions_from,
        delimiter: raw.delimiter,
        header_row: header.map(|h| h.0),
        header_in_comment,
        columns,
        rows,
        diagnostics,
    })
}

fn non_empty(cells: &[String]) -> usize {
    cells.iter().filter(|c| !c.is_empty()).count()
}

fn shorten(s: &str) -> String {
    let mut out: String = s.chars().take(40).collect();
    if s.chars().count() > 40 {
        out.push('…');
    }
    out
}

/// Most common number of cells per record (ties: the larger).
fn mode_width(records: &[table::Record]) -> usize {
    let mut counts: HashMap<usize, usize> = HashMap::new();
    for r in records.iter().take(1000) {
        *counts.entry(r.cells.len()).or_default() += 1;
    }
    counts
        .into_iter()
        .max_by_key(|&(w, n)| (n, w))
        .map_or(0, |(w, _)| w)
}

fn is_numeric(cell: &str) -> bool {
    !matches!(parse_number(cell, true), Err(NumError::NotANumber))
}

fn text_cells(cells: &[String]) -> usize {
    cells
        .iter()
        .filter(|c| !c.is_empty() && !is_numeric(c))
        .count()
}

/// The first record is a header when it holds text and either names a known column or holds
/// more text cells than the next record.
fn looks_like_header(records: &[table::Record]) -> bool {
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
fn merge_header_words(cells: Vec<String>) -> Vec<String> {
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
fn comment_header(
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
fn positional_roles(
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

fn detect_kind(cands: &[(HeaderRole, Provenance)], names: &[String]) -> Result<DataKind> {
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

fn describe_names(names: &[String]) -> String {
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
fn select_columns(
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

fn column_error(c: &Column, message: String) -> Error {
    Error::Column {
        index: c.index,
        name: c.name.clone(),
        message,
    }
}

/// Gives the value, σ and B columns their units (see [`IntakeOptions::unit`]).
fn resolve_units(
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

/// Column indices (0-based) and units used to read rows.
struct Plan {
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
    fn new(kind: DataKind, columns: &[Column]) -> Result<Plan> {
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
    fn read_row(
        &self,
        rec: &table::Record,
        ncols: usize,
        decimal_comma: bool,
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
        let sigma_source = match self.sigma {
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
            },
            commas,
        )
    }
}

fn strip_parameter(e: Error) -> String {
    match e {
        Error::Parameter { message, .. } => message,
        other => other.to_string(),
    }
}

fn number_problem(col: usize, e: NumError, text: &str, what: &str) -> RowProblem {
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

fn read_v(
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

fn check_magnitude(
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

fn apply_user_exclusions(
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
fn mark_duplicates(rows: &mut [Row]) {
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

/// Remarks about the table as a whole.
fn table_remarks(
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
    let with_sigma = rows
        .iter()
        .filter(|r| r.is_usable())
        .filter(|r| sigma_of(r).is_some())
        .count();
    let usable = rows.iter().filter(|r| r.is_usable()).count();
    if with_sigma > 0 && with_sigma < usable {
        diagnostics.push(Diagnostic {
            severity: Severity::Warning,
            row: None,
            column: None,
            message: format!(
                "{} of {usable} usable rows have no uncertainty σ while the others do",
                usable - with_sigma
            ),
        });
    }
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

fn sigma_of(r: &Row) -> Option<f64> {
    match r.observation.as_ref()? {
        Observation::Level(l) => l.sigma_cm1,
        Observation::Spacing(s) => s.sigma_cm1,
        Observation::Band(b) => b.sigma_cm1,
    }
}

#[cfg(test)]
mod tests;
