//! # rungs (Python): the native module `rungs._rungs` over rungs-core
//!
//! Thin glue, like the command line and the wasm crate: tables are read by core's intake,
//! analyses run through `rungs_core::analyze_session`, the document is core's JSON, figures
//! come from rungs-plot, tables and the batch summary from core's CSV writers. Nothing here
//! computes a number. The Python layer (`python/rungs/__init__.py`) wraps these functions in
//! the user-facing `read`, `analyze` and `analyze_many`.
//!
//! Values cross as JSON text (read on the Python side by the standard `json` module) or as
//! the two handles [`Table`] and [`Analysed`], so no document is built twice.
//!
//! Every entry point runs inside [`guard`]: a Rust panic becomes `rungs.InternalError` and
//! never unwinds into Python; every user-provokable failure is `rungs.RungsError` carrying
//! core's message, the same words the page and the command line show.

use pyo3::create_exception;
use pyo3::exceptions::PyException;
use pyo3::prelude::*;
use rungs_core::intake::{BandPositions, DataKind, DataSet, Delimiter, Role, RowStatus};
use rungs_core::pipeline::Analysis;
use rungs_core::session::Session;
use rungs_core::summary::SummaryRow;
use rungs_core::units::Unit;
use serde::Deserialize;

create_exception!(
    rungs,
    RungsError,
    PyException,
    "The input or a setting cannot be used; the message says which row, column or setting, \
     in the words the Rungs page and command line use."
);
create_exception!(
    rungs,
    InternalError,
    RungsError,
    "Rungs itself failed (a bug, not a problem with your data): the call was stopped safely."
);

/// Runs `f`, turning a panic into `InternalError` so that it never crosses into Python.
fn guard<T>(f: impl FnOnce() -> PyResult<T>) -> PyResult<T> {
    match std::panic::catch_unwind(std::panic::AssertUnwindSafe(f)) {
        Ok(result) => result,
        Err(payload) => {
            let detail = payload
                .downcast_ref::<&str>()
                .map(|s| (*s).to_string())
                .or_else(|| payload.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "no detail".to_string());
            Err(InternalError::new_err(format!(
                "Rungs stopped this call because of an internal error ({detail}); your data \
                 are not at fault. Please report it with the input that caused it."
            )))
        }
    }
}

fn user_err(e: impl std::fmt::Display) -> PyErr {
    RungsError::new_err(e.to_string())
}

/// Reading choices from Python's keyword arguments (already checked for names there).
#[derive(Deserialize, Default)]
#[serde(default)]
struct ReadChoices {
    kind: Option<String>,
    unit: Option<String>,
    heads: bool,
    header: Option<bool>,
    delimiter: Option<String>,
    /// `(column number, role or None, unit or None)`.
    columns: Vec<(usize, Option<String>, Option<String>)>,
    /// `(row, reason)`.
    exclude: Vec<(usize, String)>,
}

/// A table as read: the session (text, reading choices, settings) and the data set.
#[pyclass(frozen, module = "rungs._rungs")]
struct Table {
    session: Session,
    data: Result<DataSet, String>,
}

#[pymethods]
impl Table {
    /// The session document (JSON text): the table exactly as given, how it is read, settings.
    fn session_json(&self) -> PyResult<String> {
        guard(|| self.session.to_json().map_err(user_err))
    }

    /// How the table was read, as JSON text: kind, delimiter, header row, columns, every row
    /// with its status and reasons, notes, and whether the table is usable (and why not).
    fn view_json(&self) -> PyResult<String> {
        guard(|| {
            let data = match &self.data {
                Ok(d) => d,
                Err(message) => {
                    return Ok(serde_json::json!({
                        "name": self.session.input.name,
                        "readable": false,
                        "usable": false,
                        "problem": message,
                        "rows": [],
                        "columns": [],
                        "notes": [],
                    })
                    .to_string());
                }
            };
            let rows: Vec<_> = data
                .rows
                .iter()
                .map(|r| {
                    let reasons: Vec<String> = match r.status() {
                        RowStatus::Usable => Vec::new(),
                        RowStatus::Excluded => {
                            r.problems.iter().map(|p| data.locate(r, p)).collect()
                        }
                        RowStatus::ExcludedByUser => {
                            vec![r.user_reason.clone().unwrap_or_default()]
                        }
                    };
                    serde_json::json!({
                        "row": r.line,
                        "cells": r.cells,
                        "status": r.status(),
                        "reasons": reasons,
                        "note": r.note,
                    })
                })
                .collect();
            let columns: Vec<_> = data
                .columns
                .iter()
                .map(|c| {
                    serde_json::json!({
                        "column": c.index,
                        "name": c.name,
                        "role": c.role.name(),
                        "role_label": c.role.label(),
                        "unit": c.unit.map(|u| u.token()),
                        "note": c.note,
                    })
                })
                .collect();
            let notes: Vec<&str> = data
                .diagnostics
                .iter()
                .map(|d| d.message.as_str())
                .collect();
            let usable = data.check_usable();
            Ok(serde_json::json!({
                "name": self.session.input.name,
                "readable": true,
                "kind": data.kind.name(),
                "delimiter": data.delimiter.name(),
                "header_row": data.header_row,
                "columns": columns,
                "rows": rows,
                "notes": notes,
                "usable": usable.is_ok(),
                "problem": usable.err().map(|e| e.to_string()),
            })
            .to_string())
        })
    }
}

fn apply_choices(session: &mut Session, choices: &ReadChoices) -> rungs_core::Result<()> {
    let o = &mut session.intake;
    if let Some(u) = &choices.unit {
        o.unit = Some(Unit::parse(u)?);
    }
    if let Some(k) = &choices.kind {
        o.kind = Some(DataKind::parse(k)?);
    }
    if choices.heads {
        o.band_positions = Some(BandPositions::Heads);
    }
    if let Some(h) = choices.header {
        o.header = Some(h);
    }
    if let Some(d) = &choices.delimiter {
        o.delimiter = Some(Delimiter::parse(d)?);
    }
    for (index, role, unit) in &choices.columns {
        let role = role.as_deref().map(Role::parse).transpose()?;
        let unit = unit.as_deref().map(Unit::parse).transpose()?;
        o.set_column(*index, role, unit);
    }
    for (row, reason) in &choices.exclude {
        o.exclude(*row, reason.trim());
    }
    Ok(())
}

/// Reads a table, a session document or an exported analysis from the bytes of a file or of
/// a text, applying the reading choices (JSON text) on top.
#[pyfunction]
#[pyo3(signature = (data, name, choices_json))]
fn read(data: &[u8], name: Option<String>, choices_json: &str) -> PyResult<Table> {
    guard(|| {
        let choices: ReadChoices = serde_json::from_str(choices_json).map_err(user_err)?;
        let (mut session, _) = Session::open_bytes(name, data).map_err(user_err)?;
        apply_choices(&mut session, &choices).map_err(user_err)?;
        let data = session.data().map_err(|e| e.to_string());
        if let Ok(d) = &data {
            for (row, _) in &choices.exclude {
                if let Some(message) = d.no_data_row(*row) {
                    return Err(user_err(format!("exclude {row}: {message}")));
                }
            }
        }
        Ok(Table { session, data })
    })
}

/// An analysis: core's document, and what can be drawn and exported from it.
#[pyclass(frozen, module = "rungs._rungs")]
struct Analysed {
    analysis: Analysis,
}

#[pymethods]
impl Analysed {
    /// The analysis document as JSON text, exactly as `rungs analyze --format json` prints it
    /// (without the final newline).
    fn to_json(&self) -> PyResult<String> {
        guard(|| self.analysis.to_json().map_err(user_err))
    }

    /// The plain-text report of `rungs analyze`.
    fn text(&self) -> PyResult<String> {
        guard(|| Ok(self.analysis.render_text()))
    }

    /// Figures this analysis offers: `[(id, title)]`.
    fn figures(&self) -> PyResult<Vec<(String, String)>> {
        guard(|| Ok(rungs_plot::figures::analysis_figures(&self.analysis)))
    }

    /// One figure as SVG text, energies in `unit`.
    #[pyo3(signature = (id, unit, width, height))]
    fn figure_svg(&self, id: &str, unit: &str, width: u32, height: u32) -> PyResult<String> {
        guard(|| {
            use rungs_plot::figures::{EnergyScale, analysis_figure};
            let u = Unit::parse(unit).map_err(user_err)?;
            let scale = EnergyScale::of(u)
                .ok_or_else(|| user_err(format!("unit '{}': not an energy unit", u.token())))?;
            let chart = analysis_figure(&self.analysis, id, scale)
                .ok_or_else(|| user_err(format!("no figure '{id}' in this analysis")))?;
            rungs_plot::to_svg(&chart, width, height).map_err(user_err)
        })
    }

    /// Tables this analysis offers: `[(id, title)]`.
    fn tables(&self) -> PyResult<Vec<(String, String)>> {
        guard(|| Ok(rungs_core::export::tables(&self.analysis)))
    }

    /// One table as CSV text (the bytes the page and `rungs analyze --tables` write).
    fn table_csv(&self, id: &str) -> PyResult<String> {
        guard(|| {
            let data = self
                .analysis
                .session()
                .map(Session::data)
                .transpose()
                .map_err(user_err)?;
            rungs_core::export::table_csv(&self.analysis, data.as_ref(), id).map_err(user_err)
        })
    }

    /// The batch-summary row of this analysis for `file`, as JSON text.
    fn summary_row(&self, file: &str) -> PyResult<String> {
        guard(|| serde_json::to_string(&SummaryRow::of(file, &self.analysis)).map_err(user_err))
    }
}

/// Analyses a table with settings given as JSON text (an object of setting names, as the
/// session document writes them; those not given keep the table's own).
#[pyfunction]
fn analyze(table: &Table, settings_json: &str) -> PyResult<Analysed> {
    guard(|| {
        let mut session = table.session.clone();
        let given: serde_json::Map<String, serde_json::Value> =
            serde_json::from_str(settings_json).map_err(user_err)?;
        let serde_json::Value::Object(mut merged) =
            serde_json::to_value(&session.settings).map_err(user_err)?
        else {
            return Err(InternalError::new_err("settings are not an object"));
        };
        for (key, value) in given {
            if !merged.contains_key(&key) {
                let mut known: Vec<&String> = merged.keys().collect();
                known.sort();
                let known: Vec<&str> = known.iter().map(|k| k.as_str()).collect();
                return Err(user_err(format!(
                    "there is no setting '{key}'; the settings are: {}, and mu or masses",
                    known.join(", ")
                )));
            }
            match (merged.get_mut(&key), value) {
                // Band settings given in part keep the others.
                (Some(serde_json::Value::Object(old)), serde_json::Value::Object(new))
                    if key == "bands" =>
                {
                    old.extend(new);
                }
                (_, value) => {
                    merged.insert(key, value);
                }
            }
        }
        let text = serde_json::Value::Object(merged).to_string();
        session.settings = rungs_core::session::settings_from_json(&text).map_err(user_err)?;
        let analysis = rungs_core::analyze_session(&session, &mut |_, _| {}).map_err(user_err)?;
        Ok(Analysed { analysis })
    })
}

/// The batch-summary row of a file that could not be analysed, as JSON text.
#[pyfunction]
fn failed_row(file: &str, message: &str) -> PyResult<String> {
    guard(|| serde_json::to_string(&SummaryRow::failed(file, message)).map_err(user_err))
}

/// The batch summary as CSV text from rows given as JSON text (a list of rows).
#[pyfunction]
fn summary_csv(rows_json: &str) -> PyResult<String> {
    guard(|| {
        let rows: Vec<SummaryRow> = serde_json::from_str(rows_json).map_err(user_err)?;
        rungs_core::summary::summary_csv(&rows).map_err(user_err)
    })
}

/// Column names of the batch summary, in order.
#[pyfunction]
fn summary_columns() -> Vec<&'static str> {
    rungs_core::summary::SUMMARY_COLUMNS.to_vec()
}

/// Version of the numerics and the year of the CODATA constants.
#[pyfunction]
fn version() -> (String, u32) {
    (
        rungs_core::VERSION.to_string(),
        rungs_core::constants::CODATA_YEAR,
    )
}

/// For the package's own tests only: panics inside the guard, to show that a panic arrives
/// as `InternalError` and not as a crash.
#[pyfunction]
fn _panic_for_test() -> PyResult<()> {
    guard(|| panic!("a deliberate panic for the test of the guard"))
}

/// The native module.
#[pymodule]
fn _rungs(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("RungsError", m.py().get_type::<RungsError>())?;
    m.add("InternalError", m.py().get_type::<InternalError>())?;
    m.add_class::<Table>()?;
    m.add_class::<Analysed>()?;
    m.add_function(wrap_pyfunction!(read, m)?)?;
    m.add_function(wrap_pyfunction!(analyze, m)?)?;
    m.add_function(wrap_pyfunction!(failed_row, m)?)?;
    m.add_function(wrap_pyfunction!(summary_csv, m)?)?;
    m.add_function(wrap_pyfunction!(summary_columns, m)?)?;
    m.add_function(wrap_pyfunction!(version, m)?)?;
    m.add_function(wrap_pyfunction!(_panic_for_test, m)?)?;
    Ok(())
}
