//! # rungs-wasm: the page's window into core
//!
//! Architecture invariant: this is the only crate that knows `JsValue`. It holds no numerics:
//! every number comes from rungs-core and every figure from rungs-plot.
//!
//! Two handles, one per thread of the page:
//! - [`Workbench`] lives in the Web Worker: it owns the session (input text, reading choices,
//!   settings), reads tables and runs analyses, and hands out plain data-transfer objects;
//! - figures are drawn on the main thread (a canvas needs the DOM); see `figures.rs`.
//!
//! Errors cross as JS `Error`s carrying core's readable message.

use rungs_core::intake::{self, DataSet, IntakeOptions, Role, RowStatus};
use rungs_core::pipeline::Analysis;
use rungs_core::report::{ExcludedRow, LevelOut, PlotData, Report, ResidualOut, SpacingOut};
use rungs_core::session::Session;
use rungs_core::units::Unit;
use serde::{Deserialize, Serialize};
use wasm_bindgen::prelude::*;

mod figures;
pub use figures::Chart;

/// Install the panic hook once, so a bug shows a readable message in the console.
#[wasm_bindgen(start)]
pub fn start() {
    console_error_panic_hook::set_once();
}

/// Version of the numerics compiled into this module.
#[wasm_bindgen]
pub fn version() -> String {
    rungs_core::VERSION.to_string()
}

/// Year of the CODATA constants set used by every computation.
#[wasm_bindgen]
pub fn codata_year() -> u32 {
    rungs_core::constants::CODATA_YEAR
}

/// Longest session document the module reads, in bytes (the share link's inflating limit must
/// agree with it).
#[wasm_bindgen]
pub fn session_max_bytes() -> usize {
    rungs_core::session::MAX_DOCUMENT_BYTES
}

/// The built-in SYNTHETIC examples: `[{id, title, description, file_name}]`.
#[wasm_bindgen]
pub fn examples() -> Result<JsValue, JsError> {
    #[derive(Serialize)]
    struct E {
        id: &'static str,
        title: &'static str,
        description: &'static str,
        file_name: &'static str,
    }
    let list: Vec<E> = rungs_core::examples::EXAMPLES
        .iter()
        .map(|e| E {
            id: e.id,
            title: e.title,
            description: e.description,
            file_name: e.file_name,
        })
        .collect();
    to_js(&list)
}

/// Energy units a result can be shown in: `[{token, label}]` (cm⁻¹ first).
#[wasm_bindgen]
pub fn energy_units() -> Result<JsValue, JsError> {
    let list: Vec<(&str, &str)> = rungs_core::units::ALL_UNITS
        .iter()
        .filter(|u| u.cm1_per_unit().is_some())
        .map(|u| (u.token(), u.label()))
        .collect();
    to_js(&list)
}

/// Every unit a column can be given in (energies and wavelengths): `[{token, label}]`.
#[wasm_bindgen]
pub fn input_units() -> Result<JsValue, JsError> {
    let list: Vec<(&str, &str)> = rungs_core::units::ALL_UNITS
        .iter()
        .map(|u| (u.token(), u.label()))
        .collect();
    to_js(&list)
}

/// Every column role: `[{name, label}]`.
#[wasm_bindgen]
pub fn column_roles() -> Result<JsValue, JsError> {
    let list: Vec<(&str, &str)> = intake::ALL_ROLES
        .iter()
        .map(|r| (r.name(), r.label()))
        .collect();
    to_js(&list)
}

/// Convert an energy from cm⁻¹ to the display unit `unit` (a token from [`energy_units`]).
#[wasm_bindgen]
pub fn energy_from_cm1(value_cm1: f64, unit: &str) -> Result<f64, JsError> {
    let u = Unit::parse(unit).map_err(js_err)?;
    if u.cm1_per_unit().is_none() {
        return Err(js_err(format!("'{unit}' is not an energy unit")));
    }
    u.from_cm1(value_cm1).map_err(js_err)
}

/// An energy (and its σ) given in cm⁻¹, converted to `unit` and rounded for display: σ to two
/// significant digits and the value to match (see `rungs_core::format`). Returns
/// `[value, sigma]` strings (sigma null when not given).
#[wasm_bindgen]
pub fn format_energy(
    value_cm1: f64,
    sigma_cm1: Option<f64>,
    unit: &str,
) -> Result<JsValue, JsError> {
    let v = energy_from_cm1(value_cm1, unit)?;
    let s = sigma_cm1.map(|s| energy_from_cm1(s, unit)).transpose()?;
    to_js(&rungs_core::format::value_sigma(v, s, 7))
}

/// A plain number rounded to its σ (no unit conversion): `[value, sigma]` strings.
#[wasm_bindgen]
pub fn format_number(value: f64, sigma: Option<f64>, digits: usize) -> Result<JsValue, JsError> {
    to_js(&rungs_core::format::value_sigma(value, sigma, digits))
}

pub(crate) fn js_err(e: impl std::fmt::Display) -> JsError {
    JsError::new(&e.to_string())
}

pub(crate) fn to_js<T: Serialize>(value: &T) -> Result<JsValue, JsError> {
    let ser = serde_wasm_bindgen::Serializer::json_compatible();
    value.serialize(&ser).map_err(js_err)
}

/// Summary of how a table was read (everything but the rows themselves).
#[derive(Serialize)]
struct ReadingDto<'a> {
    name: Option<&'a str>,
    kind: &'static str,
    kind_from: &'a intake::Provenance,
    band_positions: &'a Option<intake::BandPositions>,
    delimiter: &'static str,
    header_row: Option<usize>,
    columns: Vec<ColumnDto>,
    n_rows: usize,
    n_usable: usize,
    n_excluded: usize,
    n_excluded_by_user: usize,
    diagnostics: &'a [intake::Diagnostic],
    usable_error: Option<String>,
}

#[derive(Serialize)]
struct ColumnDto {
    index: usize,
    name: String,
    role: &'static str,
    role_label: &'static str,
    role_from: intake::Provenance,
    unit: Option<&'static str>,
    unit_label: Option<&'static str>,
    note: Option<String>,
}

/// One row for the data table.
#[derive(Serialize)]
struct RowDto<'a> {
    line: usize,
    cells: &'a [String],
    status: RowStatus,
    reasons: Vec<String>,
    observation: &'a Option<intake::Observation>,
    /// σ the user typed for this row (value column's unit), if any.
    sigma_edited: Option<f64>,
    /// What intake assumed for the row (such as a σ taken from the others), if anything.
    note: Option<&'a str>,
}

/// A change to how the table is read, sent by the page.
#[derive(Deserialize)]
#[serde(rename_all = "snake_case")]
enum ReadingChange {
    Kind {
        kind: Option<String>,
    },
    Unit {
        unit: Option<String>,
    },
    Header {
        header: Option<bool>,
    },
    Delimiter {
        delimiter: Option<String>,
    },
    BandPositions {
        heads: Option<bool>,
    },
    Column {
        column: usize,
        role: Option<String>,
        unit: Option<String>,
    },
    Exclude {
        row: usize,
        reason: String,
    },
    Include {
        row: usize,
    },
    Sigma {
        row: usize,
        sigma: Option<f64>,
    },
}

/// The worker-side handle: one session, its reading, and its latest analysis.
#[wasm_bindgen]
pub struct Workbench {
    session: Option<Session>,
    data: Option<DataSet>,
    report: Option<Analysis>,
    /// The full analysis document of `report`, kept for export.
    report_json: Option<String>,
}

/// Longest list kept in the on-screen view of a report (the export keeps everything).
const VIEW_LIST_MAX: usize = 2000;

/// The report as the page's tables need it: without the embedded session, the plot series (the
/// worker builds figures itself) and with long lists cut, so a huge table does not freeze the
/// page while its report is parsed. Counts stay exact (`input.n_points`, `rows.total/used`).
/// The parts left out are moved aside and put back after writing, not copied: with a 100 000-row
/// table a copy of the analysis would double the worker's memory for a moment.
fn view_json(analysis: &mut Analysis) -> rungs_core::Result<String> {
    let (session, excluded, tails) = match analysis {
        Analysis::Levels(r) => (None, Vec::new(), vec![Tail::take(r)]),
        Analysis::Bands(b) => (
            b.session.take(),
            b.rows
                .as_mut()
                .map(|r| cut(&mut r.excluded))
                .unwrap_or_default(),
            [b.states.upper.as_mut(), b.states.lower.as_mut()]
                .into_iter()
                .flatten()
                .map(Tail::take)
                .collect(),
        ),
    };
    let json = analysis.to_json();
    let mut tails = tails.into_iter();
    match analysis {
        Analysis::Levels(r) => {
            if let Some(t) = tails.next() {
                t.restore(r);
            }
        }
        Analysis::Bands(b) => {
            b.session = session;
            if let Some(rows) = b.rows.as_mut() {
                rows.excluded.extend(excluded);
            }
            for r in [b.states.upper.as_mut(), b.states.lower.as_mut()]
                .into_iter()
                .flatten()
            {
                if let Some(t) = tails.next() {
                    t.restore(r);
                }
            }
        }
    }
    json
}

/// The entries of `list` beyond [`VIEW_LIST_MAX`], removed from it.
fn cut<T>(list: &mut Vec<T>) -> Vec<T> {
    if list.len() > VIEW_LIST_MAX {
        list.split_off(VIEW_LIST_MAX)
    } else {
        Vec::new()
    }
}

/// What the on-screen view leaves out of one single-state report.
struct Tail {
    session: Option<Session>,
    plot: PlotData,
    levels: Vec<LevelOut>,
    spacings: Vec<SpacingOut>,
    residuals: Vec<ResidualOut>,
    excluded: Vec<ExcludedRow>,
}

impl Tail {
    fn take(r: &mut Report) -> Tail {
        Tail {
            session: r.session.take(),
            plot: std::mem::take(&mut r.plot),
            levels: cut(&mut r.levels),
            spacings: cut(&mut r.spacings),
            residuals: cut(&mut r.fit.residuals),
            excluded: r
                .rows
                .as_mut()
                .map(|rows| cut(&mut rows.excluded))
                .unwrap_or_default(),
        }
    }

    fn restore(self, r: &mut Report) {
        r.session = self.session;
        r.plot = self.plot;
        r.levels.extend(self.levels);
        r.spacings.extend(self.spacings);
        r.fit.residuals.extend(self.residuals);
        if let Some(rows) = r.rows.as_mut() {
            rows.excluded.extend(self.excluded);
        }
    }
}

impl Default for Workbench {
    fn default() -> Self {
        Self::new()
    }
}

#[wasm_bindgen]
impl Workbench {
    /// An empty workbench.
    #[wasm_bindgen(constructor)]
    pub fn new() -> Workbench {
        Workbench {
            session: None,
            data: None,
            report: None,
            report_json: None,
        }
    }

    /// Read a table from text; returns the reading summary. Settings of the current session
    /// (mass, Monte Carlo…) are kept; reading choices start fresh.
    pub fn load_text(&mut self, name: Option<String>, text: String) -> Result<JsValue, JsError> {
        let settings = self
            .session
            .as_ref()
            .map(|s| s.settings.clone())
            .unwrap_or_default();
        let session = Session::new(text, name, IntakeOptions::default(), settings);
        self.install(session)
    }

    /// Read a table from file bytes (UTF-8, UTF-16 with BOM, or Latin-1).
    pub fn load_bytes(&mut self, name: Option<String>, bytes: Vec<u8>) -> Result<JsValue, JsError> {
        let (text, _encoding) = intake::decode(&bytes);
        self.load_text(name, text)
    }

    /// Load built-in example `id` (with its reduced mass); returns the reading summary.
    pub fn load_example(&mut self, id: &str) -> Result<JsValue, JsError> {
        let example = rungs_core::examples::example(id)
            .ok_or_else(|| js_err(format!("no built-in example '{id}'")))?;
        self.install(example.session())
    }

    /// Open a file the user handed over: a table, a session document, or an exported analysis
    /// (its embedded session is restored). Returns the reading summary.
    pub fn open_file(&mut self, name: Option<String>, bytes: Vec<u8>) -> Result<JsValue, JsError> {
        let (text, _encoding) = intake::decode(&bytes);
        let session = Session::open(name, &text).map_err(js_err)?;
        self.install(session)
    }

    /// Restore a whole session from its JSON document.
    pub fn load_session(&mut self, json: &str) -> Result<JsValue, JsError> {
        let session = Session::from_json(json).map_err(js_err)?;
        self.install(session)
    }

    /// The session document as JSON (the same document the command line reads and writes).
    pub fn session_json(&self) -> Result<String, JsError> {
        self.session
            .as_ref()
            .ok_or_else(|| js_err("no data loaded"))?
            .to_json()
            .map_err(js_err)
    }

    /// The reading summary of the current table.
    pub fn reading(&self) -> Result<JsValue, JsError> {
        let (session, data) = self.current()?;
        let dto = ReadingDto {
            name: session.input.name.as_deref(),
            kind: data.kind.name(),
            kind_from: &data.kind_from,
            band_positions: &data.band_positions,
            delimiter: data.delimiter.name(),
            header_row: data.header_row,
            columns: data
                .columns
                .iter()
                .map(|c| ColumnDto {
                    index: c.index,
                    name: c.name.clone(),
                    role: c.role.name(),
                    role_label: c.role.label(),
                    role_from: c.role_from,
                    unit: c.unit.map(Unit::token),
                    unit_label: c.unit.map(Unit::label),
                    note: c.note.clone(),
                })
                .collect(),
            n_rows: data.rows.len(),
            n_usable: data.usable_count(),
            n_excluded: data
                .rows
                .iter()
                .filter(|r| r.status() == RowStatus::Excluded)
                .count(),
            n_excluded_by_user: data
                .rows
                .iter()
                .filter(|r| r.status() == RowStatus::ExcludedByUser)
                .count(),
            diagnostics: &data.diagnostics,
            usable_error: data.check_usable().err().map(|e| e.to_string()),
        };
        to_js(&dto)
    }

    /// Rows `start .. start + count` (for a scrolling table of any length).
    pub fn rows(&self, start: usize, count: usize) -> Result<JsValue, JsError> {
        let (_, data) = self.current()?;
        let end = start.saturating_add(count).min(data.rows.len());
        let rows: Vec<RowDto> = data.rows[start.min(end)..end]
            .iter()
            .map(|r| RowDto {
                line: r.line,
                cells: &r.cells,
                status: r.status(),
                reasons: r
                    .problems
                    .iter()
                    .map(|p| data.locate(r, p))
                    .chain(
                        r.user_reason
                            .iter()
                            .map(|u| format!("excluded by you: {u}")),
                    )
                    .collect(),
                observation: &r.observation,
                sigma_edited: data
                    .sigma_edits
                    .iter()
                    .find(|e| e.row == r.line)
                    .map(|e| e.sigma),
                note: r.note.as_deref(),
            })
            .collect();
        to_js(&rows)
    }

    /// Apply one change to how the table is read (kind, unit, column role/unit, exclusions…);
    /// returns the new reading summary.
    pub fn change_reading(&mut self, change_json: &str) -> Result<JsValue, JsError> {
        let change: ReadingChange = serde_json::from_str(change_json).map_err(js_err)?;
        let mut session = self.current()?.0.clone();
        let o = &mut session.intake;
        match change {
            ReadingChange::Kind { kind } => {
                o.kind = kind
                    .map(|k| intake::DataKind::parse(&k))
                    .transpose()
                    .map_err(js_err)?
            }
            ReadingChange::Unit { unit } => {
                o.unit = unit.map(|u| Unit::parse(&u)).transpose().map_err(js_err)?
            }
            ReadingChange::Header { header } => o.header = header,
            ReadingChange::Delimiter { delimiter } => {
                o.delimiter = delimiter
                    .map(|d| intake::Delimiter::parse(&d))
                    .transpose()
                    .map_err(js_err)?
            }
            ReadingChange::BandPositions { heads } => {
                o.band_positions = heads.map(|h| {
                    if h {
                        intake::BandPositions::Heads
                    } else {
                        intake::BandPositions::Origins
                    }
                })
            }
            ReadingChange::Column { column, role, unit } => {
                let role = role.map(|r| Role::parse(&r)).transpose().map_err(js_err)?;
                let unit = unit.map(|u| Unit::parse(&u)).transpose().map_err(js_err)?;
                o.set_column(column, role, unit);
            }
            ReadingChange::Exclude { row, reason } => o.exclude(row, reason),
            ReadingChange::Include { row } => o.include(row),
            ReadingChange::Sigma {
                row,
                sigma: Some(x),
            } => o.set_sigma(row, x),
            ReadingChange::Sigma { row, sigma: None } => o.clear_sigma(row),
        }
        self.install(session)
    }

    /// Replace the analysis settings, given as JSON text (missing fields take their defaults).
    /// Text, not a JS object: settings are read by the same serde_json code that reads session
    /// documents, so the module carries one deserialiser for them, not two.
    pub fn set_settings(&mut self, settings_json: &str) -> Result<(), JsError> {
        let settings = rungs_core::session::settings_from_json(settings_json).map_err(js_err)?;
        let session = self
            .session
            .as_mut()
            .ok_or_else(|| js_err("no data loaded"))?;
        session.settings = settings;
        Ok(())
    }

    /// Run the analysis of the current session. `progress(done, total)` is called as the Monte
    /// Carlo draws advance. Returns the on-screen view of the analysis document as JSON (long
    /// lists cut, see `view_of`); [`Workbench::analysis_json`] gives the whole document.
    pub fn analyze(&mut self, progress: &js_sys::Function) -> Result<String, JsError> {
        let (session, _) = self.current()?;
        let mut hook = |done: usize, total: usize| {
            let _ = progress.call2(&JsValue::NULL, &JsValue::from(done), &JsValue::from(total));
        };
        // The direct potential fit solves the radial equation hundreds of times (seconds in the
        // browser): until the page can show the rest first and run it after, the page analyses
        // without it (the command line runs it), and its document records that setting.
        let mut quick = session.clone();
        quick.settings.potential_fit = false;
        let mut report = rungs_core::analyze_session(&quick, &mut hook).map_err(js_err)?;
        self.report_json = Some(report.to_json().map_err(js_err)?);
        let view = view_json(&mut report).map_err(js_err)?;
        self.report = Some(report);
        Ok(view)
    }

    /// The whole analysis document of the last analysis (the command line's `--format json`).
    pub fn analysis_json(&self) -> Result<String, JsError> {
        self.report_json
            .clone()
            .ok_or_else(|| js_err("no analysis yet"))
    }

    /// The figures the last analysis offers: `[[id, title, short label]]`.
    pub fn figure_list(&self) -> Result<JsValue, JsError> {
        let analysis = self
            .report
            .as_ref()
            .ok_or_else(|| js_err("no analysis yet"))?;
        let list: Vec<(String, String, String)> = rungs_plot::figures::analysis_figures(analysis)
            .into_iter()
            .map(|(id, title)| {
                let short = rungs_plot::figures::short_label(&id);
                (id, title, short)
            })
            .collect();
        to_js(&list)
    }

    /// Figure `id` of the last analysis, energies in `unit`, as a chart description (JSON) for
    /// the main thread's [`Chart`].
    pub fn figure(&self, id: &str, unit: &str) -> Result<String, JsError> {
        let analysis = self
            .report
            .as_ref()
            .ok_or_else(|| js_err("no analysis yet"))?;
        let u = Unit::parse(unit).map_err(js_err)?;
        let scale = rungs_plot::figures::EnergyScale::of(u)
            .ok_or_else(|| js_err(format!("'{unit}' is not an energy unit")))?;
        let chart = rungs_plot::figures::analysis_figure(analysis, id, scale)
            .ok_or_else(|| js_err(format!("no figure '{id}' for this analysis")))?;
        serde_json::to_string(&chart).map_err(js_err)
    }

    /// Tables of the last analysis that can be exported as CSV: `[[id, title]]`.
    pub fn table_list(&self) -> Result<JsValue, JsError> {
        let analysis = self
            .report
            .as_ref()
            .ok_or_else(|| js_err("no analysis yet"))?;
        to_js(&rungs_core::export::tables(analysis))
    }

    /// Table `id` of the last analysis as CSV text (energies in cm⁻¹, full precision).
    pub fn table_csv(&self, id: &str) -> Result<String, JsError> {
        let analysis = self
            .report
            .as_ref()
            .ok_or_else(|| js_err("no analysis yet"))?;
        rungs_core::export::table_csv(analysis, self.data.as_ref(), id).map_err(js_err)
    }

    /// The current analysis settings.
    pub fn settings(&self) -> Result<JsValue, JsError> {
        to_js(&self.current()?.0.settings)
    }
}

impl Workbench {
    fn current(&self) -> Result<(&Session, &DataSet), JsError> {
        match (&self.session, &self.data) {
            (Some(s), Some(d)) => Ok((s, d)),
            _ => Err(js_err("no data loaded")),
        }
    }

    fn install(&mut self, session: Session) -> Result<JsValue, JsError> {
        let data = session.data().map_err(js_err)?;
        self.report = None;
        self.report_json = None;
        self.session = Some(session);
        self.data = Some(data);
        self.reading()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The view cuts long lists and drops the session and plot series, and the analysis kept
    /// for figures and exports comes back unchanged (common practice, no source: a view must
    /// not alter what it shows).
    #[test]
    fn view_cuts_lists_and_leaves_the_analysis_whole() {
        let session = rungs_core::examples::example("qz2-levels")
            .expect("demo")
            .session();
        let mut analysis = rungs_core::analyze_session(&session, &mut |_, _| {}).expect("analysis");
        if let Analysis::Levels(r) = &mut analysis {
            let one = r.levels[0].clone();
            r.levels.resize(VIEW_LIST_MAX + 123, one);
        }
        let before = analysis.clone();
        let view: serde_json::Value =
            serde_json::from_str(&view_json(&mut analysis).expect("view")).expect("json");
        assert_eq!(analysis, before);
        assert_eq!(
            view["levels"].as_array().expect("levels").len(),
            VIEW_LIST_MAX
        );
        assert!(view["session"].is_null());
        assert!(
            view["plot"]["levels"]
                .as_array()
                .is_none_or(|a| a.is_empty())
        );
    }
}
