//! Tables as CSV: every table of an analysis, for spreadsheets and scripts.
//!
//! Numbers are written in full (shortest round-trip form), energies in cm⁻¹, with the unit in
//! each column name; a missing number is an empty cell. The input-rows table lists every row of
//! the input, used or not, with its reason, so excluded rows travel with every export.
//! The page and the command line write the same bytes through [`table_csv`].

use crate::intake::{DataSet, Observation, RowStatus};
use crate::pipeline::Analysis;
use crate::report::Report;
use crate::{Error, Result};

/// Tables an analysis offers, `(id, title)`, in display order.
pub fn tables(analysis: &Analysis) -> Vec<(String, String)> {
    let mut t: Vec<(String, String)> =
        vec![("rows".into(), "Every input row with its status".into())];
    let single = |r: &Report, prefix: &str, who: &str, t: &mut Vec<(String, String)>| {
        for (id, title) in [
            ("estimates", "Dissociation limit by every method"),
            ("constants", "Vibrational constants"),
            ("levels", "Levels used"),
            ("spacings", "Spacings ΔG"),
            ("order-selection", "Order selection for G(v)"),
            ("residuals", "Residuals of the selected fit"),
        ] {
            t.push((format!("{prefix}{id}"), format!("{who}{title}")));
        }
        if r.potential.is_some() {
            t.push((
                format!("{prefix}obs-calc"),
                format!("{who}Observed − calculated levels of the RKR potential"),
            ));
            t.push((
                format!("{prefix}turning-points"),
                format!("{who}RKR turning points"),
            ));
        }
    };
    match analysis {
        Analysis::Levels(r) => single(r, "", "", &mut t),
        Analysis::Bands(b) => {
            t.push(("band-array".into(), "Band array cells with flags".into()));
            t.push((
                "band-residuals".into(),
                "Residuals of the global band fit".into(),
            ));
            t.push(("term-values".into(), "Term values of both states".into()));
            t.push(("numbering".into(), "Numbering offsets".into()));
            if let Some(u) = &b.states.upper {
                single(u, "upper:", "Upper state: ", &mut t);
            }
            if let Some(l) = &b.states.lower {
                single(l, "lower:", "Lower state: ", &mut t);
            }
        }
    }
    t
}

/// A CSV writer that turns numbers into text the same way everywhere (also used by the batch
/// summary, [`crate::summary`]).
pub(crate) struct Sheet {
    w: csv::Writer<Vec<u8>>,
}

/// One cell.
pub(crate) enum C<'a> {
    S(&'a str),
    O(String),
    F(Option<f64>),
    U(Option<u64>),
}

impl Sheet {
    pub(crate) fn new(header: &[&str]) -> Result<Sheet> {
        let mut w = csv::Writer::from_writer(Vec::new());
        w.write_record(header.iter().map(|h| text_cell(h)))
            .map_err(csv_err)?;
        Ok(Sheet { w })
    }

    pub(crate) fn row(&mut self, cells: &[C<'_>]) -> Result<()> {
        let text: Vec<String> = cells
            .iter()
            .map(|c| match c {
                C::S(s) => text_cell(s),
                C::O(s) => text_cell(s),
                C::F(Some(x)) if x.is_finite() => format!("{x}"),
                C::F(_) => String::new(),
                C::U(Some(n)) => n.to_string(),
                C::U(None) => String::new(),
            })
            .collect();
        self.w.write_record(&text).map_err(csv_err)
    }

    pub(crate) fn finish(self) -> Result<String> {
        let bytes = self
            .w
            .into_inner()
            .map_err(|e| Error::numerical("CSV export", e.to_string()))?;
        String::from_utf8(bytes).map_err(|e| Error::numerical("CSV export", e.to_string()))
    }
}

/// A text cell as written: text a spreadsheet would run as a formula (it begins with `=`, `+`,
/// `-`, `@`, a tab or a carriage return) gets a leading `'`, which spreadsheets take as "this is
/// text" (common practice, no source: the spreadsheet formula-injection convention). A cell that
/// is a finite number (`-0.5`, `+3e2`) is left as it is, so numbers stay numbers.
fn text_cell(s: &str) -> String {
    let risky = s.starts_with(['=', '+', '-', '@', '\t', '\r']);
    let number = s.parse::<f64>().is_ok_and(f64::is_finite);
    if risky && !number {
        format!("'{s}")
    } else {
        s.to_string()
    }
}

fn csv_err(e: csv::Error) -> Error {
    Error::numerical("CSV export", e.to_string())
}

/// Table `id` (from [`tables`]) as CSV text. `data` is the data set the analysis read (needed for
/// the `rows` table).
pub fn table_csv(analysis: &Analysis, data: Option<&DataSet>, id: &str) -> Result<String> {
    if id == "rows" {
        let data =
            data.ok_or_else(|| Error::parameter("table", "the input rows are not available"))?;
        return rows_csv(data);
    }
    let unknown = || Error::parameter("table", format!("no table '{id}' in this analysis"));
    match analysis {
        Analysis::Levels(r) => single_csv(r, id)?.ok_or_else(unknown),
        Analysis::Bands(b) => {
            if let Some((state, rest)) = id.split_once(':') {
                let r = match state {
                    "upper" => b.states.upper.as_ref(),
                    "lower" => b.states.lower.as_ref(),
                    _ => None,
                }
                .ok_or_else(unknown)?;
                return single_csv(r, rest)?.ok_or_else(unknown);
            }
            match id {
                "band-array" => {
                    let mut s = Sheet::new(&[
                        "isotopologue",
                        "v_upper",
                        "v_lower",
                        "position_cm1",
                        "observed_cm1",
                        "sigma_cm1",
                        "term_value_residual_cm1",
                        "z",
                        "chain_breaks",
                        "chain_checks",
                        "flags",
                    ])?;
                    for a in &b.arrays {
                        for c in a.cells.iter().flatten().flatten() {
                            let flags: Vec<&str> = c.flags.iter().map(|f| f.describe()).collect();
                            s.row(&[
                                C::S(a.isotopologue.as_deref().unwrap_or("")),
                                C::U(Some(c.v_upper.into())),
                                C::U(Some(c.v_lower.into())),
                                C::F(Some(c.position_cm1)),
                                C::F(Some(c.observed_cm1)),
                                C::F(c.sigma_cm1),
                                C::F(c.residual_cm1),
                                C::F(c.z),
                                C::U(Some(c.chain_breaks.into())),
                                C::U(Some(c.chain_checks.into())),
                                C::O(flags.join("; ")),
                            ])?;
                        }
                    }
                    s.finish()
                }
                "band-residuals" => {
                    let mut s = Sheet::new(&[
                        "isotopologue",
                        "v_upper",
                        "v_lower",
                        "position_cm1",
                        "calculated_cm1",
                        "residual_cm1",
                        "sigma_cm1",
                        "studentized",
                        "outlier",
                    ])?;
                    for r in &b.global_fit.residuals {
                        s.row(&[
                            C::S(r.isotopologue.as_deref().unwrap_or("")),
                            C::U(Some(r.v_upper.into())),
                            C::U(Some(r.v_lower.into())),
                            C::F(Some(r.position_cm1)),
                            C::F(Some(r.calc_cm1)),
                            C::F(Some(r.residual_cm1)),
                            C::F(r.sigma_cm1),
                            C::F(r.studentized),
                            C::S(if r.outlier { "yes" } else { "no" }),
                        ])?;
                    }
                    s.finish()
                }
                "term-values" => {
                    let mut s =
                        Sheet::new(&["isotopologue", "state", "v", "energy_cm1", "sigma_cm1"])?;
                    for t in &b.term_values {
                        for (state, list) in [("upper", &t.upper), ("lower", &t.lower)] {
                            for l in list {
                                s.row(&[
                                    C::S(t.isotopologue.as_deref().unwrap_or("")),
                                    C::S(state),
                                    C::U(Some(l.v.into())),
                                    C::F(Some(l.energy_cm1)),
                                    C::F(l.sigma_cm1),
                                ])?;
                            }
                        }
                    }
                    s.finish()
                }
                "numbering" => {
                    let mut s = Sheet::new(&[
                        "offset",
                        "possible",
                        "chi2",
                        "chi2_reduced",
                        "delta_chi2",
                        "we_upper_cm1",
                        "wexe_upper_cm1",
                        "te_cm1",
                        "note",
                    ])?;
                    for o in &b.numbering.offsets {
                        s.row(&[
                            C::O(o.offset.to_string()),
                            C::S(if o.possible { "yes" } else { "no" }),
                            C::F(o.chi2),
                            C::F(o.chi2_reduced),
                            C::F(o.delta_chi2),
                            C::F(o.we_upper_cm1),
                            C::F(o.wexe_upper_cm1),
                            C::F(o.te_cm1),
                            C::O(o.note.clone()),
                        ])?;
                    }
                    s.finish()
                }
                _ => Err(unknown()),
            }
        }
    }
}

/// Every input row: line, status, the cells as written, the clean values, and the reason.
fn rows_csv(data: &DataSet) -> Result<String> {
    let mut header: Vec<String> = vec!["row".into(), "status".into()];
    header.extend(data.columns.iter().map(|c| {
        if c.name.is_empty() {
            format!("column {}", c.index)
        } else {
            format!("column {} ({})", c.index, c.name)
        }
    }));
    header.extend([
        "v_upper_or_v".into(),
        "v_lower".into(),
        "value_cm1".into(),
        "sigma_cm1".into(),
        "reason".into(),
    ]);
    let h: Vec<&str> = header.iter().map(String::as_str).collect();
    let mut s = Sheet::new(&h)?;
    for r in &data.rows {
        let status = match r.status() {
            RowStatus::Usable => "used",
            RowStatus::Excluded => "unusable",
            RowStatus::ExcludedByUser => "excluded by the user",
        };
        let reason = r
            .problems
            .iter()
            .map(|p| data.locate(r, p))
            .chain(r.user_reason.clone())
            .collect::<Vec<_>>()
            .join("; ");
        let (v1, v2, value, sigma) = match &r.observation {
            Some(Observation::Level(l)) => {
                (Some(l.v.into()), None, Some(l.energy_cm1), l.sigma_cm1)
            }
            Some(Observation::Spacing(x)) => (
                Some(x.v_lower.into()),
                None,
                Some(x.spacing_cm1),
                x.sigma_cm1,
            ),
            Some(Observation::Band(b)) => (
                Some(b.v_upper.into()),
                Some(b.v_lower.into()),
                Some(b.position_cm1),
                b.sigma_cm1,
            ),
            None => (None, None, None, None),
        };
        let mut cells: Vec<C<'_>> = vec![C::U(Some(r.line as u64)), C::S(status)];
        cells.extend(
            (0..data.columns.len()).map(|i| C::S(r.cells.get(i).map_or("", String::as_str))),
        );
        cells.extend([C::U(v1), C::U(v2), C::F(value), C::F(sigma), C::O(reason)]);
        s.row(&cells)?;
    }
    s.finish()
}

/// A single-state table, `None` when the id is not one of them.
fn single_csv(r: &Report, id: &str) -> Result<Option<String>> {
    let out = match id {
        "estimates" => {
            let mut s = Sheet::new(&[
                "method",
                "label",
                "d0_cm1",
                "d0_sigma_cm1",
                "de_cm1",
                "de_sigma_cm1",
                "v_d",
                "v_d_sigma",
                "n_bound",
                "extrapolated_fraction",
                "mc_median_d0_cm1",
                "mc_p16_d0_cm1",
                "mc_p84_d0_cm1",
                "in_recommendation",
                "reason",
            ])?;
            for e in &r.estimates {
                let mc = e.monte_carlo.as_ref().map(|m| &m.d0);
                s.row(&[
                    C::S(&e.method),
                    C::S(&e.label),
                    C::F(e.d0_cm1),
                    C::F(e.d0_sigma_cm1),
                    C::F(e.de_cm1),
                    C::F(e.de_sigma_cm1),
                    C::F(e.v_d),
                    C::F(e.v_d_sigma),
                    C::U(e.n_bound),
                    C::F(e.extrapolated_fraction),
                    C::F(mc.and_then(|m| m.median)),
                    C::F(mc.and_then(|m| m.p16)),
                    C::F(mc.and_then(|m| m.p84)),
                    C::S(if e.defensible { "yes" } else { "no" }),
                    C::O(format!("{}; {}", e.reason, e.defensible_reason)),
                ])?;
            }
            let rec = &r.recommended;
            s.row(&[
                C::S("recommended"),
                C::O(rec.method.clone().unwrap_or_default()),
                C::F(rec.d0_cm1),
                C::F(rec.sigma_stat_cm1),
                C::F(rec.de_cm1),
                C::F(None),
                C::F(None),
                C::F(None),
                C::U(None),
                C::F(None),
                C::F(None),
                C::F(None),
                C::F(None),
                C::S(""),
                C::O(format!(
                    "σ_model = {} cm⁻¹; {}",
                    rec.sigma_model_cm1.map_or("—".into(), |m| format!("{m}")),
                    rec.reason
                )),
            ])?;
            s.finish()?
        }
        "constants" => {
            let mut s = Sheet::new(&["name", "value_cm1", "sigma_cm1"])?;
            for d in &r.constants.dunham {
                s.row(&[
                    C::S(&d.name),
                    C::F(Some(d.constant.value)),
                    C::F(d.constant.sigma),
                ])?;
            }
            s.row(&[
                C::S("G(0)"),
                C::F(Some(r.constants.zero_point_cm1.value)),
                C::F(r.constants.zero_point_cm1.sigma),
            ])?;
            s.finish()?
        }
        "levels" => {
            let mut s = Sheet::new(&["v", "energy_cm1", "sigma_cm1", "derived"])?;
            for l in &r.levels {
                s.row(&[
                    C::U(Some(l.v.into())),
                    C::F(Some(l.energy_cm1)),
                    C::F(l.sigma_cm1),
                    C::S(if l.derived { "yes" } else { "no" }),
                ])?;
            }
            s.finish()?
        }
        "spacings" => {
            let mut s = Sheet::new(&[
                "v_lower",
                "x",
                "spacing_cm1",
                "sigma_cm1",
                "correlation_with_next",
            ])?;
            for x in &r.spacings {
                s.row(&[
                    C::U(Some(x.v_lower.into())),
                    C::F(Some(x.x)),
                    C::F(Some(x.spacing_cm1)),
                    C::F(x.sigma_cm1),
                    C::F(x.correlation_with_next),
                ])?;
            }
            s.finish()?
        }
        "order-selection" => {
            let mut s = Sheet::new(&[
                "order",
                "dof",
                "chi2",
                "chi2_reduced",
                "aicc",
                "bic",
                "f",
                "p_f",
                "top_significance",
                "selected",
            ])?;
            for o in &r.order_selection.rows {
                s.row(&[
                    C::U(Some(o.order as u64)),
                    C::U(Some(o.dof as u64)),
                    C::F(Some(o.chi2)),
                    C::F(o.chi2_reduced),
                    C::F(o.aicc),
                    C::F(o.bic),
                    C::F(o.f_statistic),
                    C::F(o.f_p_value),
                    C::F(o.top_significance),
                    C::S(if o.order == r.fit.order { "yes" } else { "" }),
                ])?;
            }
            s.finish()?
        }
        "residuals" => {
            let mut s = Sheet::new(&["v", "residual_cm1", "sigma_cm1", "studentized", "outlier"])?;
            for x in &r.fit.residuals {
                s.row(&[
                    C::F(Some(x.v)),
                    C::F(Some(x.residual_cm1)),
                    C::F(x.sigma_cm1),
                    C::F(x.studentized),
                    C::S(if x.outlier { "yes" } else { "no" }),
                ])?;
            }
            s.finish()?
        }
        "obs-calc" => {
            let Some(p) = &r.potential else {
                return Ok(None);
            };
            let mut s = Sheet::new(&[
                "v",
                "observed_cm1",
                "calculated_cm1",
                "residual_cm1",
                "sigma_cm1",
                "b_observed_cm1",
                "b_calculated_cm1",
                "b_residual_cm1",
            ])?;
            for x in &p.check.rows {
                s.row(&[
                    C::U(Some(x.v.into())),
                    C::F(Some(x.observed_cm1)),
                    C::F(Some(x.calculated_cm1)),
                    C::F(Some(x.residual_cm1)),
                    C::F(x.sigma_cm1),
                    C::F(x.b_observed_cm1),
                    C::F(Some(x.b_calculated_cm1)),
                    C::F(x.b_residual_cm1),
                ])?;
            }
            s.finish()?
        }
        "turning-points" => {
            let Some(p) = &r.potential else {
                return Ok(None);
            };
            let mut s = Sheet::new(&[
                "v",
                "energy_cm1",
                "b_cm1",
                "r_inner_angstrom",
                "r_outer_angstrom",
            ])?;
            for t in &p.turning_points {
                s.row(&[
                    C::F(Some(t.v)),
                    C::F(Some(t.energy_cm1)),
                    C::F(Some(t.b_cm1)),
                    C::F(Some(t.r_inner_angstrom)),
                    C::F(Some(t.r_outer_angstrom)),
                ])?;
            }
            s.finish()?
        }
        _ => return Ok(None),
    };
    Ok(Some(out))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::examples::example;
    use crate::pipeline::analyze_session;

    /// Text that a spreadsheet would run as a formula is written with a leading `'`; numbers,
    /// negative ones included, are written as they are (common practice, no source).
    #[test]
    fn formula_like_text_cells_are_neutralised() {
        let mut header = vec!["=HYPERLINK(\"x\")", "plain"];
        header.resize(11, "c");
        let mut sheet = Sheet::new(&header).unwrap();
        sheet
            .row(&[
                C::S("=1+2"),
                C::S("+cmd"),
                C::S("-2+3"),
                C::S("@SUM(A1)"),
                C::S("\tx"),
                C::S("\rx"),
                C::O("-0.5".into()),
                C::S("+3e2"),
                C::F(Some(-0.5)),
                C::S("a=b"),
                C::S("-inf"),
            ])
            .unwrap();
        let text = sheet.finish().unwrap();
        let mut rd = csv::ReaderBuilder::new()
            .has_headers(false)
            .from_reader(text.as_bytes());
        let rows: Vec<Vec<String>> = rd
            .records()
            .map(|r| r.unwrap().iter().map(str::to_string).collect())
            .collect();
        assert_eq!(rows[0][..2], ["'=HYPERLINK(\"x\")", "plain"]);
        let want = [
            "'=1+2",
            "'+cmd",
            "'-2+3",
            "'@SUM(A1)",
            "'\tx",
            "'\rx",
            "-0.5",
            "+3e2",
            "-0.5",
            "a=b",
            "'-inf",
        ];
        assert_eq!(rows[1], want);
    }

    /// A user's exclusion reason that looks like a formula reaches the rows table neutralised.
    #[test]
    fn an_exclusion_reason_formula_is_neutralised_in_the_rows_table() {
        let mut session = example("qz2-levels").unwrap().session();
        session.settings.mc_samples = 0;
        let third = session.data().unwrap().rows[2].line;
        session.intake.exclude(third, "=cmd|' /C calc'!A0");
        let data = session.data().unwrap();
        let analysis = analyze_session(&session, &mut |_, _| {}).unwrap();
        let text = table_csv(&analysis, Some(&data), "rows").unwrap();
        let mut rd = csv::Reader::from_reader(text.as_bytes());
        let records: Vec<_> = rd.records().map(|r| r.unwrap()).collect();
        let row = records.iter().find(|r| r[0] == third.to_string()).unwrap();
        let reason = &row[row.len() - 1];
        assert!(reason.contains("=cmd"), "{reason}");
        assert!(records.iter().flatten().all(|c| !c.starts_with('=')));
    }

    /// Every table of both demo kinds writes valid CSV that the `csv` crate reads back with a
    /// constant number of fields, and the rows table lists every input row (common practice, no
    /// source).
    #[test]
    fn every_table_is_rectangular_csv() {
        for id in ["qz2-levels", "qz2-bands"] {
            let mut session = example(id).unwrap().session();
            session.settings.mc_samples = 0;
            let third = session.data().unwrap().rows[2].line;
            session
                .intake
                .exclude(third, "checking that excluded rows travel");
            let data = session.data().unwrap();
            let analysis = analyze_session(&session, &mut |_, _| {}).unwrap();
            for (t, _) in tables(&analysis) {
                let text = table_csv(&analysis, Some(&data), &t).unwrap();
                let mut rd = csv::Reader::from_reader(text.as_bytes());
                let width = rd.headers().unwrap().len();
                let records: Vec<_> = rd.records().map(|r| r.unwrap()).collect();
                assert!(!records.is_empty(), "{id}/{t} has rows");
                assert!(
                    records.iter().all(|r| r.len() == width),
                    "{id}/{t} is rectangular"
                );
                if t == "rows" {
                    assert_eq!(records.len(), data.rows.len());
                    let r8 = records.iter().find(|r| r[0] == third.to_string()).unwrap();
                    assert_eq!(&r8[1], "excluded by the user");
                    assert!(r8[r8.len() - 1].contains("excluded rows travel"));
                }
            }
        }
    }
}
