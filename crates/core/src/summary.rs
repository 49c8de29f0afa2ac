//! The batch summary: one row per analysed file, for a folder of spectra.
//!
//! Each row holds what a person compares across files — the recommended D0 with its
//! statistical and model σ and its interval, the vibrational constants with σ, the method and
//! the number of warnings — or, for a file that could not be analysed, its message. The command
//! line (`rungs analyze A.csv B.csv … --summary FILE`) and the Python package build the rows
//! with [`SummaryRow::of`] / [`SummaryRow::failed`] and write them with [`summary_csv`], so both
//! give the same bytes. Text cells are guarded against spreadsheet formulas as in every other
//! CSV export ([`crate::export`]).
//!
//! For a band list the row describes the lower state (the state whose D0″ the band analysis
//! leads to); the warnings count is the band analysis's own plus both states'.

use serde::{Deserialize, Serialize};

use crate::Result;
use crate::export::{C, Sheet};
use crate::pipeline::Analysis;
use crate::report::{Constant, Report};

/// One file of a batch. Energies in cm⁻¹; a missing number is `None`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SummaryRow {
    /// The file as the user named it.
    pub file: String,
    /// `"ok"` when the file was analysed, `"failed"` when not.
    pub status: String,
    /// Why the file could not be analysed (empty when it was).
    pub message: String,
    /// Kind of data: `levels`, `spacings` or `bands`.
    pub kind: String,
    /// The state the numbers describe: empty for one state, `"lower"` for a band list.
    pub state: String,
    /// Short name of the method giving the recommended value.
    pub method: String,
    /// Recommended D0.
    pub d0_cm1: Option<f64>,
    /// Its statistical σ.
    pub d0_sigma_stat_cm1: Option<f64>,
    /// Its model σ (spread of the methods).
    pub d0_sigma_model_cm1: Option<f64>,
    /// Lower end of the interval for D0.
    pub d0_low_cm1: Option<f64>,
    /// Upper end of the interval for D0.
    pub d0_high_cm1: Option<f64>,
    /// ωe.
    pub we_cm1: Option<f64>,
    /// σ of ωe.
    pub we_sigma_cm1: Option<f64>,
    /// ωexe.
    pub wexe_cm1: Option<f64>,
    /// σ of ωexe.
    pub wexe_sigma_cm1: Option<f64>,
    /// ωeye.
    pub weye_cm1: Option<f64>,
    /// σ of ωeye.
    pub weye_sigma_cm1: Option<f64>,
    /// ωeze.
    pub weze_cm1: Option<f64>,
    /// σ of ωeze.
    pub weze_sigma_cm1: Option<f64>,
    /// Number of warnings of the analysis.
    pub warnings: usize,
}

/// Column names of the summary, in order.
pub const SUMMARY_COLUMNS: [&str; 20] = [
    "file",
    "status",
    "message",
    "kind",
    "state",
    "method",
    "d0_cm1",
    "d0_sigma_stat_cm1",
    "d0_sigma_model_cm1",
    "d0_low_cm1",
    "d0_high_cm1",
    "we_cm1",
    "we_sigma_cm1",
    "wexe_cm1",
    "wexe_sigma_cm1",
    "weye_cm1",
    "weye_sigma_cm1",
    "weze_cm1",
    "weze_sigma_cm1",
    "warnings",
];

impl SummaryRow {
    fn empty(file: &str) -> SummaryRow {
        SummaryRow {
            file: file.to_string(),
            status: String::new(),
            message: String::new(),
            kind: String::new(),
            state: String::new(),
            method: String::new(),
            d0_cm1: None,
            d0_sigma_stat_cm1: None,
            d0_sigma_model_cm1: None,
            d0_low_cm1: None,
            d0_high_cm1: None,
            we_cm1: None,
            we_sigma_cm1: None,
            wexe_cm1: None,
            wexe_sigma_cm1: None,
            weye_cm1: None,
            weye_sigma_cm1: None,
            weze_cm1: None,
            weze_sigma_cm1: None,
            warnings: 0,
        }
    }

    /// The row of a file that could not be analysed, with its message.
    pub fn failed(file: &str, message: impl Into<String>) -> SummaryRow {
        SummaryRow {
            status: "failed".into(),
            message: message.into(),
            ..SummaryRow::empty(file)
        }
    }

    /// The row of an analysed file (copied from the analysis; nothing is computed).
    pub fn of(file: &str, analysis: &Analysis) -> SummaryRow {
        let mut row = SummaryRow {
            status: "ok".into(),
            ..SummaryRow::empty(file)
        };
        let report: Option<&Report> = match analysis {
            Analysis::Levels(r) => {
                row.warnings = r.warnings.len();
                Some(r)
            }
            Analysis::Bands(b) => {
                row.kind = "bands".into();
                row.state = "lower".into();
                let states = [b.states.upper.as_ref(), b.states.lower.as_ref()];
                row.warnings = b.warnings.len()
                    + states
                        .iter()
                        .flatten()
                        .map(|r| r.warnings.len())
                        .sum::<usize>();
                b.states.lower.as_ref()
            }
        };
        let Some(r) = report else {
            return row;
        };
        if row.kind.is_empty() {
            row.kind = match r.input.kind {
                crate::dunham::DataKind::Levels => "levels",
                crate::dunham::DataKind::Spacings => "spacings",
            }
            .to_string();
        }
        let rec = &r.recommended;
        row.method = rec
            .method
            .as_deref()
            .map(crate::words::method_name)
            .unwrap_or_default()
            .to_string();
        row.d0_cm1 = rec.d0_cm1;
        row.d0_sigma_stat_cm1 = rec.sigma_stat_cm1;
        row.d0_sigma_model_cm1 = rec.sigma_model_cm1;
        row.d0_low_cm1 = rec.d0_low_cm1;
        row.d0_high_cm1 = rec.d0_high_cm1;
        let vs = |c: &Option<Constant>| {
            (
                c.as_ref().map(|c| c.value),
                c.as_ref().and_then(|c| c.sigma),
            )
        };
        let k = &r.constants;
        (row.we_cm1, row.we_sigma_cm1) = vs(&k.we_cm1);
        (row.wexe_cm1, row.wexe_sigma_cm1) = vs(&k.wexe_cm1);
        (row.weye_cm1, row.weye_sigma_cm1) = vs(&k.weye_cm1);
        (row.weze_cm1, row.weze_sigma_cm1) = vs(&k.weze_cm1);
        row
    }
}

/// The summary as CSV text: a header of [`SUMMARY_COLUMNS`], then one line per row.
pub fn summary_csv(rows: &[SummaryRow]) -> Result<String> {
    let mut s = Sheet::new(&SUMMARY_COLUMNS)?;
    for r in rows {
        s.row(&[
            C::S(&r.file),
            C::S(&r.status),
            C::S(&r.message),
            C::S(&r.kind),
            C::S(&r.state),
            C::S(&r.method),
            C::F(r.d0_cm1),
            C::F(r.d0_sigma_stat_cm1),
            C::F(r.d0_sigma_model_cm1),
            C::F(r.d0_low_cm1),
            C::F(r.d0_high_cm1),
            C::F(r.we_cm1),
            C::F(r.we_sigma_cm1),
            C::F(r.wexe_cm1),
            C::F(r.wexe_sigma_cm1),
            C::F(r.weye_cm1),
            C::F(r.weye_sigma_cm1),
            C::F(r.weze_cm1),
            C::F(r.weze_sigma_cm1),
            C::U(Some(r.warnings as u64)),
        ])?;
    }
    s.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_failed_row_keeps_its_message_and_formula_like_text_is_neutralised() {
        // The leading-apostrophe convention is the one every CSV export of core uses.
        let rows = [SummaryRow::failed(
            "=cmd.csv",
            "row 3, column 'E': not a number",
        )];
        let csv = summary_csv(&rows).expect("csv");
        let mut lines = csv.lines();
        assert_eq!(lines.next(), Some(SUMMARY_COLUMNS.join(",").as_str()));
        let line = lines.next().expect("a row");
        assert!(line.starts_with("'=cmd.csv,failed,"), "{line}");
        assert!(line.contains("row 3, column 'E': not a number"), "{line}");
        assert!(line.ends_with(",0"), "{line}");
    }
}
