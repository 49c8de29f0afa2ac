//! From a session document to a report: the one path both the page and the command line take.
//!
//! A [`Session`] holds the input text, how it is read, and every setting. [`analyze_session`]
//! reads the table, resolves the mass, dispatches on the kind of data, and returns an
//! [`Analysis`]: the single-state [`Report`] for levels and spacings, the two-state
//! [`BandReport`](crate::bands::BandReport) for band lists. Either carries the session and the
//! fate of every input row, so an exported document can be re-imported and shows the rows that
//! were left out and why.

use crate::Result;
use crate::analysis::{analyze_levels_with_progress, analyze_spacings_with_progress};
use crate::bands::analyze_bands_with_progress;
use crate::intake::{BandPositions, DataKind, DataSet, Observation, RowStatus};
use crate::masses::reduced_mass_of;
use crate::report::{ExcludedRow, Report, RowsSummary};
use crate::session::Session;

pub use crate::document::Analysis;

/// Reduced mass (u) from the session's mass setting, when one is given.
pub fn session_mu_u(session: &Session) -> Result<Option<f64>> {
    session
        .settings
        .mass
        .as_ref()
        .map(reduced_mass_of)
        .transpose()
}

/// The rows of a data set that were not used, with reasons, as the report lists them.
pub fn rows_summary(data: &DataSet) -> RowsSummary {
    let excluded = data
        .rows
        .iter()
        .filter_map(|r| match r.status() {
            RowStatus::Usable => None,
            RowStatus::Excluded => Some(ExcludedRow {
                row: r.line,
                by: "input".into(),
                reason: r
                    .problems
                    .iter()
                    .map(|p| data.locate(r, p))
                    .collect::<Vec<_>>()
                    .join("; "),
            }),
            RowStatus::ExcludedByUser => Some(ExcludedRow {
                row: r.line,
                by: "user".into(),
                reason: r.user_reason.clone().unwrap_or_default(),
            }),
        })
        .collect();
    RowsSummary {
        total: data.rows.len(),
        used: data.usable_count(),
        excluded,
    }
}

fn plain(text: &str) -> String {
    crate::words::in_plain_words(text)
}

/// The analyses' messages that people read, with method ids written as names (the ids stay in
/// the fields made for programs, such as `Estimate::method`).
fn in_plain_words(r: &mut Report) {
    r.warnings = r.warnings.iter().map(|w| plain(w)).collect();
    r.uncertainty.note = plain(&r.uncertainty.note);
    r.recommended.reason = plain(&r.recommended.reason);
    r.monte_carlo.note = plain(&r.monte_carlo.note);
    for e in &mut r.estimates {
        e.reason = plain(&e.reason);
        e.defensible_reason = plain(&e.defensible_reason);
        // An order the user forced is not one the data selected.
        if r.fit.forced {
            e.label = e
                .label
                .replace("the selected order", "the order forced by the settings");
        }
    }
}

/// One warning naming the rows whose σ intake assumed (see [`crate::intake::Row::note`]), so the
/// report says what the analyses were given.
fn row_notes_warning(data: &DataSet) -> Option<String> {
    let noted: Vec<_> = data
        .usable_rows()
        .filter_map(|r| r.note.as_ref().map(|n| (r.line, n)))
        .collect();
    let (_, note) = noted.first()?;
    let lines = noted
        .iter()
        .map(|(l, _)| l.to_string())
        .collect::<Vec<_>>()
        .join(", ");
    let what = if noted.len() == 1 { "row" } else { "rows" };
    Some(format!("{what} {lines}: {note}"))
}

/// The input row of each point far outside the rest, so a user can exclude it by its row.
fn far_point_rows(report: &mut Report, data: &DataSet) {
    for f in &mut report.far_points {
        f.row = data
            .usable_rows()
            .find(|r| match &r.observation {
                Some(Observation::Level(l)) => f64::from(l.v) == f.v,
                Some(Observation::Spacing(s)) => f64::from(s.v_lower) == f.v,
                _ => false,
            })
            .map(|r| r.line);
    }
}

/// Analyse a session: read its table, resolve the mass, run the analysis for its kind of data.
///
/// `progress(done, total)` is called as the Monte Carlo draws advance.
pub fn analyze_session(
    session: &Session,
    progress: &mut dyn FnMut(usize, usize),
) -> Result<Analysis> {
    let data = session.data()?;
    data.check_usable()?;
    let mu_u = session_mu_u(session)?;
    let settings = &session.settings;
    let single = |mut report: Report| {
        report.rows = Some(rows_summary(&data));
        far_point_rows(&mut report, &data);
        report.session = Some(session.clone());
        Analysis::Levels(Box::new(report))
    };
    let mut analysis = match data.kind {
        DataKind::Levels => {
            let levels = data.levels()?;
            // Binding energies put the asymptote at 0 (unless another was given).
            let with_asymptote;
            let settings = if data.binding_energies() && settings.asymptote_cm1.is_none() {
                with_asymptote = crate::settings::AnalysisSettings {
                    asymptote_cm1: Some(0.0),
                    ..settings.clone()
                };
                &with_asymptote
            } else {
                settings
            };
            let mut report = analyze_levels_with_progress(&levels, None, mu_u, settings, progress)?;
            let rkr = crate::closing::close_the_loop(&report, &levels, mu_u);
            match crate::closing::close_with_fitted_potential(&report, &levels, mu_u) {
                Some(Ok(fitted)) => {
                    report.potential = Some(fitted);
                    report.potential_comparison = rkr.ok();
                }
                other => {
                    if let Some(Err(why)) = other {
                        report.warnings.push(format!(
                            "the fitted potential could not be solved again for the comparison with the data: {why}"
                        ));
                    }
                    match rkr {
                        Ok(p) => report.potential = Some(p),
                        Err(why) => report.potential_note = Some(why),
                    }
                }
            }
            single(report)
        }
        DataKind::Spacings => single(analyze_spacings_with_progress(
            &data.spacings()?,
            None,
            mu_u,
            settings,
            progress,
        )?),
        DataKind::Bands => {
            let positions = data.band_positions.unwrap_or(BandPositions::Origins);
            let mut report =
                analyze_bands_with_progress(&data.bands()?, positions, mu_u, settings, progress)?;
            report.rows = Some(rows_summary(&data));
            report.session = Some(session.clone());
            Analysis::Bands(Box::new(report))
        }
    };
    if let Some(w) = row_notes_warning(&data) {
        match &mut analysis {
            Analysis::Levels(r) => r.warnings.push(w),
            Analysis::Bands(b) => b.warnings.push(w),
        }
    }
    match &mut analysis {
        Analysis::Levels(r) => in_plain_words(r),
        Analysis::Bands(b) => {
            b.warnings = b.warnings.iter().map(|w| plain(w)).collect();
            for r in [&mut b.states.upper, &mut b.states.lower]
                .into_iter()
                .flatten()
            {
                in_plain_words(r);
            }
        }
    }
    let methods = crate::methods::methods(&analysis);
    let hash = crate::methods::sha256_hex(&session.input.text);
    match &mut analysis {
        Analysis::Levels(r) => {
            r.methods = Some(methods);
            r.input_sha256 = Some(hash);
        }
        Analysis::Bands(b) => {
            b.methods = Some(methods);
            b.input_sha256 = Some(hash);
        }
    }
    Ok(analysis)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::intake::IntakeOptions;
    use crate::settings::AnalysisSettings;

    /// The pipeline reports excluded rows with reasons and embeds the session (common practice,
    /// no source: nothing is dropped silently).
    #[test]
    fn excluded_rows_travel_with_the_report() {
        let text = "v,E,sigma\n0,0,0.1\n1,990,0.1\n2,1960,0.1\n3,2910,0.1\n4,abc,0.1\n5,4750,0.1\n";
        let mut intake = IntakeOptions::default();
        intake.exclude(4, "suspected blend");
        let settings = AnalysisSettings {
            mc_samples: 0,
            ..Default::default()
        };
        let session = Session::new(text, None, intake, settings);
        let analysis = analyze_session(&session, &mut |_, _| {}).unwrap();
        let report = analysis.as_levels().unwrap();
        let rows = report.rows.as_ref().unwrap();
        assert_eq!((rows.total, rows.used), (6, 4));
        assert_eq!(rows.excluded.len(), 2);
        assert_eq!(
            (rows.excluded[0].row, rows.excluded[0].by.as_str()),
            (4, "user")
        );
        assert_eq!(rows.excluded[0].reason, "suspected blend");
        assert_eq!(
            (rows.excluded[1].row, rows.excluded[1].by.as_str()),
            (6, "input")
        );
        assert!(
            rows.excluded[1].reason.contains("abc") || rows.excluded[1].reason.contains("number")
        );
        assert_eq!(report.session.as_ref(), Some(&session));
        assert_eq!(report.levels.len(), 4);
    }

    /// One empty σ cell among given σ must not stop the analysis (issue 14): the row uses the
    /// median of the given σ and the report's warnings name it.
    #[test]
    fn one_missing_sigma_does_not_stop_the_analysis() {
        let text = "v,E,sigma\n0,0,0.1\n1,980.3,0.3\n2,1939.8,0.2\n3,2880.2,\n4,3799.9,0.5\n5,4700.1,0.4\n";
        let settings = AnalysisSettings {
            mc_samples: 0,
            ..Default::default()
        };
        let session = Session::new(text, None, IntakeOptions::default(), settings);
        let analysis = analyze_session(&session, &mut |_, _| {}).expect("the analysis runs");
        let report = analysis.as_levels().unwrap();
        assert_eq!(report.rows.as_ref().unwrap().used, 6);
        assert!(
            report
                .warnings
                .iter()
                .any(|w| w.contains("row 5") && w.contains("median")),
            "{:?}",
            report.warnings
        );
    }
}
