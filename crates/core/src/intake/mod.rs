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
mod columns;
mod header;
mod rows;
mod table;

use std::collections::HashMap;

use serde::{Deserialize, Serialize};

use crate::data::{Band, Level, Spacing};
use crate::error::{Error, Result};
use crate::sorting::sort_by_key;
use crate::units::{Medium, Unit, UnitText};
use cell::{NumError, parse_number};
use columns::*;
use header::{HeaderInfo, HeaderRole};
use rows::*;
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
/// Longest table read, in bytes of text: 16 MiB, four times a 200 000-line table of four
/// numbers a row. Checked before the table is read, so what a table makes the reader allocate
/// (about a hundred times its text, every cell kept) stays bounded.
pub const MAX_TABLE_BYTES: usize = 16 * 1024 * 1024;
/// Most lines in a table: 200 000, twice the 100 000-row table of the speed benchmarks and
/// forty times the largest band list analysed ([`crate::bands::MAX_BANDS`]). Checked before the
/// table is read.
pub const MAX_TABLE_LINES: usize = 200_000;
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
    #[serde(
        skip_serializing_if = "Vec::is_empty",
        deserialize_with = "crate::reading::at_most_names"
    )]
    pub columns: Vec<ColumnOverride>,
    /// Rows excluded by the user.
    #[serde(
        skip_serializing_if = "Vec::is_empty",
        deserialize_with = "crate::reading::at_most_row_choices"
    )]
    pub exclusions: Vec<UserExclusion>,
    /// Uncertainties set by the user, replacing what the table says.
    #[serde(
        skip_serializing_if = "Vec::is_empty",
        deserialize_with = "crate::reading::at_most_row_choices"
    )]
    pub sigmas: Vec<SigmaEdit>,
}

/// A σ the user typed for one row, in the unit of that row's value column (as the table shows
/// the value), replacing the table's σ for the analyses. The table text itself is never changed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SigmaEdit {
    /// Row number (line number of the input).
    pub row: usize,
    /// The new one-standard-deviation uncertainty, in the value column's unit (> 0).
    pub sigma: f64,
}

impl IntakeOptions {
    /// Excludes a row (replacing an earlier reason for the same row).
    pub fn exclude(&mut self, row: usize, reason: impl Into<String>) {
        self.include(row);
        self.exclusions.push(UserExclusion {
            row,
            reason: reason.into(),
        });
        sort_by_key(&mut self.exclusions, |e| e.row);
    }

    /// Sets the σ of a row (in its value column's unit), replacing an earlier edit of that row.
    pub fn set_sigma(&mut self, row: usize, sigma: f64) {
        self.clear_sigma(row);
        self.sigmas.push(SigmaEdit { row, sigma });
        sort_by_key(&mut self.sigmas, |e| e.row);
    }

    /// Takes back a σ edit of a row (the table's σ applies again).
    pub fn clear_sigma(&mut self, row: usize) {
        self.sigmas.retain(|e| e.row != row);
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
            sort_by_key(&mut self.columns, |c| c.column);
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
    /// What intake assumed for a usable row (such as a σ taken from the other rows), if anything.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
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
    /// σ values the user typed (applied to the rows that exist).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub sigma_edits: Vec<SigmaEdit>,
}

impl DataSet {
    /// Rows the analyses use.
    pub fn usable_rows(&self) -> impl Iterator<Item = &Row> {
        self.rows.iter().filter(|r| r.is_usable())
    }

    /// When `row` is not a data row of the table (asked to be excluded, say), what to tell the
    /// user: `"the table has no data row 40 (its data rows are lines 2 to 39)"`.
    pub fn no_data_row(&self, row: usize) -> Option<String> {
        if self.rows.iter().any(|r| r.line == row) {
            return None;
        }
        let range = match (self.rows.first(), self.rows.last()) {
            (Some(a), Some(b)) => format!("its data rows are lines {} to {}", a.line, b.line),
            _ => "it has no data rows".to_string(),
        };
        Some(format!("the table has no data row {row} ({range})"))
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
                let name = c
                    .checked_sub(1)
                    .and_then(|i| self.columns.get(i))
                    .map_or("", |col| col.name.as_str());
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

    /// Whether the level energies are binding energies below the asymptote (the energy column's
    /// header says so: `E_b`, `Eb`, `binding energy`).
    pub fn binding_energies(&self) -> bool {
        self.kind == DataKind::Levels
            && self
                .columns
                .iter()
                .any(|c| c.role == Role::Energy && header::analyse(&c.name).binding)
    }

    /// The usable levels (checked with [`DataSet::check_usable`]); an error for other kinds.
    /// Binding energies E_b below the asymptote come out as level energies E = −E_b, on a scale
    /// whose asymptote is 0.
    pub fn levels(&self) -> Result<Vec<Level>> {
        self.expect_kind(DataKind::Levels)?;
        let sign = if self.binding_energies() { -1.0 } else { 1.0 };
        Ok(self
            .observations()
            .into_iter()
            .filter_map(|o| match o {
                Observation::Level(l) => Some(Level {
                    energy_cm1: sign * l.energy_cm1,
                    ..l
                }),
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
            sigmas: self.sigma_edits.clone(),
        }
    }
}

/// Refuses a table over [`MAX_TABLE_BYTES`] or [`MAX_TABLE_LINES`] before anything of it is kept.
pub(crate) fn check_table_size(text: &str) -> Result<()> {
    if text.len() > MAX_TABLE_BYTES {
        return Err(Error::Input {
            message: format!(
                "the table is {:.1} MiB long, more than the limit of {} MiB; split it or keep \
                 the rows you need",
                text.len() as f64 / 1_048_576.0,
                MAX_TABLE_BYTES / 1_048_576
            ),
        });
    }
    // Lines end in LF, CRLF or a lone CR: the larger count of either byte is the line count.
    let (lf, cr) = text.bytes().fold((0usize, 0usize), |(lf, cr), b| {
        (lf + usize::from(b == b'\n'), cr + usize::from(b == b'\r'))
    });
    let ends_open = !text.is_empty() && !text.ends_with(['\n', '\r']);
    let lines = lf.max(cr) + usize::from(ends_open);
    if lines > MAX_TABLE_LINES {
        return Err(Error::Input {
            message: format!(
                "the table has {lines} lines, more than the limit of {MAX_TABLE_LINES}; split it \
                 or keep the rows you need"
            ),
        });
    }
    Ok(())
}

/// Reads a table from text. See the module documentation.
///
/// Errors are for the table as a whole (nothing readable, no column for a needed role, a unit
/// that cannot be used); problems of single rows are kept in the [`DataSet`]. Call
/// [`DataSet::check_usable`] to learn whether enough rows are usable.
pub fn read_table(text: &str, options: &IntakeOptions) -> Result<DataSet> {
    check_table_size(text)?;
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
            note: plan_roles[i].1.clone().or_else(|| {
                (kind == DataKind::Levels
                    && plan_roles[i].0 == Role::Energy
                    && header::analyse(&names[i]).binding)
                    .then(|| {
                        "binding energies below the asymptote: read as level energies E = −E_b, with the asymptote at 0"
                            .to_string()
                    })
            }),
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
        let edited = options
            .sigmas
            .iter()
            .find(|e| e.row == rec.line)
            .map(|e| e.sigma);
        let (row, commas) =
            plan.read_row(rec, ncols, decimal_comma_allowed, edited, &mut diagnostics);
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
    fill_missing_sigma(&mut rows, &mut diagnostics);
    table_remarks(kind, &columns, &rows, &mut diagnostics);

    Ok(DataSet {
        kind,
        kind_from,
        band_positions,
        band_positions_from,
        delimiter: raw.delimiter,
        header_row: header.map(|h| h.0),
        header_in_comment,
        sigma_edits: options
            .sigmas
            .iter()
            .filter(|e| rows.iter().any(|r| r.line == e.row))
            .cloned()
            .collect(),
        columns,
        rows,
        diagnostics,
    })
}

#[cfg(test)]
mod tests;
