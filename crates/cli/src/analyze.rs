//! `rungs analyze FILE`: the full vibrational analysis, printed as a readable report or as the
//! JSON document the page exports.
//!
//! Glue only: the file becomes a session (`input.rs`), the options below become analysis
//! settings, and `rungs_core::analyze_session` does all the work.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Args, ValueEnum};
use rungs_core::settings::{BandRotation, IsotopologueMasses, MassSpec, StateRotation};

use crate::input::{ReadArgs, open_session};

/// Output format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// A readable plain-text report.
    Text,
    /// The analysis document (rungs-analysis JSON), the same the page exports.
    Json,
}

/// Arguments of `rungs analyze`.
#[derive(Debug, Args)]
pub struct AnalyzeArgs {
    /// Table file (levels, spacings or bands), a session document, or an exported analysis;
    /// several files with --summary.
    #[arg(required = true, num_args = 1.., value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// Analyse every file and write one summary row per file (recommended D0, its interval,
    /// constants with σ, method, warnings; or the message of a file that failed) as CSV to
    /// this file (`-`: standard output). The reports themselves are not printed then; exit
    /// code 2 when a file failed, after the whole summary is written.
    #[arg(long, value_name = "CSV")]
    pub summary: Option<PathBuf>,
    /// How to read the table.
    #[command(flatten)]
    pub read: ReadArgs,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
    /// Monte Carlo samples (0 disables Monte Carlo).
    #[arg(allow_negative_numbers = true, long, value_name = "N")]
    pub mc: Option<u32>,
    /// Monte Carlo seed.
    #[arg(allow_negative_numbers = true, long, value_name = "S")]
    pub seed: Option<u64>,
    /// Long-range exponent n of the near-dissociation (LeRoy–Bernstein) fit.
    #[arg(allow_hyphen_values = true, long, value_name = "N")]
    pub n: Option<f64>,
    /// Reduced mass in u.
    #[arg(
        allow_hyphen_values = true,
        long,
        value_name = "MU",
        conflicts_with = "masses"
    )]
    pub mu: Option<f64>,
    /// The two atoms as nuclide labels, e.g. `1H,35Cl` (masses from AME 2020).
    #[arg(long, value_name = "A,B")]
    pub masses: Option<String>,
    /// Use this polynomial order for G(v) instead of the recommended one.
    #[arg(allow_negative_numbers = true, long, value_name = "K")]
    pub order: Option<u32>,
    /// Highest polynomial order tried for G(v) (default 6).
    #[arg(allow_negative_numbers = true, long, value_name = "K")]
    pub max_order: Option<u32>,
    /// Number of top levels used by the near-dissociation fit.
    #[arg(allow_negative_numbers = true, long, value_name = "N")]
    pub lb_top: Option<u32>,
    /// The dissociation asymptote on the data's energy scale, when known (e.g. from atomic
    /// data): adds a near-dissociation fit with the asymptote held there (cm⁻¹).
    #[arg(allow_hyphen_values = true, long, value_name = "E")]
    pub asymptote: Option<f64>,
    /// Theoretical C_n in cm⁻¹Åⁿ: adds the near-dissociation fits with C_n held fixed (needs μ).
    #[arg(allow_hyphen_values = true, long, value_name = "C")]
    pub cn: Option<f64>,
    /// Equilibrium distance r_e in Å, held fixed in the direct potential fit (default: from the
    /// B column of the lowest levels).
    #[arg(allow_hyphen_values = true, long, value_name = "Å")]
    pub re: Option<f64>,
    /// Leave out the direct fit of a potential curve to the levels (faster).
    #[arg(long)]
    pub no_potential_fit: bool,
    /// Bands: the two atoms of an isotopologue tag, e.g. `main=29.0,29.0` or `HCl=1H,35Cl`
    /// (nuclide labels, or masses in u with a decimal point); repeatable.
    #[arg(long = "isotopologue", value_name = "TAG=A,B")]
    pub isotopologues: Vec<String>,
    /// Bands: predict levels and band positions of this isotopologue (a tag); repeatable.
    #[arg(long = "predict", value_name = "TAG")]
    pub predict: Vec<String>,
    /// Bands: the reference isotopologue (default: the one with the most bands).
    #[arg(long, value_name = "TAG")]
    pub reference: Option<String>,
    /// Bands: excitation energy (cm⁻¹) of the upper state's atomic asymptote above the lower
    /// state's, for D0″ = T00 + D0′ − E_atom.
    #[arg(allow_hyphen_values = true, long, value_name = "E")]
    pub atomic_excitation: Option<f64>,
    /// Bands: upper-state rotational constants `Be[,αe]` in cm⁻¹ (with --b-lower: heads → origins).
    #[arg(
        allow_hyphen_values = true,
        long,
        value_name = "BE[,ALPHA]",
        requires = "b_lower"
    )]
    pub b_upper: Option<String>,
    /// Bands: lower-state rotational constants `Be[,αe]` in cm⁻¹.
    #[arg(
        allow_hyphen_values = true,
        long,
        value_name = "BE[,ALPHA]",
        requires = "b_upper"
    )]
    pub b_lower: Option<String>,
    /// Bands: σ (cm⁻¹) added to heads used as origins without rotational constants.
    #[arg(allow_hyphen_values = true, long, value_name = "S")]
    pub head_sigma: Option<f64>,
    /// Bands: force the order of the upper state's G′(v).
    #[arg(allow_negative_numbers = true, long, value_name = "K")]
    pub upper_order: Option<u32>,
    /// Bands: force the order of the lower state's G″(v).
    #[arg(allow_negative_numbers = true, long, value_name = "K")]
    pub lower_order: Option<u32>,
    /// Also write every figure as SVG into this folder (created if missing).
    #[arg(long, value_name = "DIR")]
    pub figures: Option<PathBuf>,
    /// Also write every table as CSV into this folder (created if missing).
    #[arg(long, value_name = "DIR")]
    pub tables: Option<PathBuf>,
    /// Energy unit of the figures (cm-1, eV, kJ/mol, …).
    #[arg(long, value_name = "U", default_value = "cm-1")]
    pub figure_unit: String,
}

fn rotation(text: &str, flag: &str) -> Result<StateRotation, String> {
    let (be, alpha) = match text.split_once(',') {
        Some((b, a)) => (b, Some(a)),
        None => (text, None),
    };
    let num = |t: &str| {
        t.trim()
            .parse::<f64>()
            .map_err(|_| format!("{flag} '{text}': write Be or Be,alpha_e in cm-1"))
    };
    Ok(StateRotation {
        be_cm1: num(be)?,
        alpha_e_cm1: alpha.map(num).transpose()?.unwrap_or(0.0),
    })
}

fn fail(message: impl std::fmt::Display) -> ExitCode {
    crate::output::complain(&format!("rungs analyze: {message}"));
    ExitCode::from(2)
}

/// Runs `rungs analyze`.
pub fn run(args: &AnalyzeArgs) -> ExitCode {
    if let Some(path) = &args.summary {
        return run_batch(args, path);
    }
    let [file] = args.files.as_slice() else {
        return fail(format!(
            "{} files given: several files need --summary FILE (one summary row per file)",
            args.files.len()
        ));
    };
    let report = match analyze_one(file, args) {
        Ok(r) => r,
        Err(message) => return fail(message),
    };
    if let Err(message) = write_outputs(&report, args, None) {
        return fail(message);
    }
    let text = match args.format {
        Format::Text => report.render_text(),
        Format::Json => match report.to_json() {
            Ok(json) => json + "\n",
            Err(e) => {
                crate::output::complain(&format!("rungs analyze: {e}"));
                return ExitCode::from(1);
            }
        },
    };
    crate::output::emit(&text).map_or_else(|code| code, |()| ExitCode::SUCCESS)
}

/// `--summary`: every file analysed in turn; a file that fails becomes a row with its message.
fn run_batch(args: &AnalyzeArgs, path: &std::path::Path) -> ExitCode {
    use rungs_core::summary::{SummaryRow, summary_csv};
    let several = args.files.len() > 1;
    let mut rows = Vec::with_capacity(args.files.len());
    let mut failed = 0usize;
    for file in &args.files {
        let name = file.display().to_string();
        let outcome = analyze_one(file, args).and_then(|analysis| {
            // With several files, each file's tables and figures go into a folder of its own.
            let sub = several
                .then(|| file.file_stem().map(PathBuf::from))
                .flatten();
            write_outputs(&analysis, args, sub.as_deref()).map(|()| analysis)
        });
        match outcome {
            Ok(analysis) => rows.push(SummaryRow::of(&name, &analysis)),
            Err(message) => {
                failed += 1;
                crate::output::complain(&format!("rungs analyze: {message}"));
                rows.push(SummaryRow::failed(&name, message));
            }
        }
    }
    let csv = match summary_csv(&rows) {
        Ok(csv) => csv,
        Err(e) => return fail(e),
    };
    if path.as_os_str() == "-" {
        if let Err(code) = crate::output::emit(&csv) {
            return code;
        }
    } else if let Err(e) = std::fs::write(path, csv) {
        return fail(format!("{}: cannot write the summary: {e}", path.display()));
    }
    if failed > 0 {
        ExitCode::from(2)
    } else {
        ExitCode::SUCCESS
    }
}

/// Tables and figures of one analysis, when asked for (into `DIR/sub` when `sub` is given).
fn write_outputs(
    report: &rungs_core::Analysis,
    args: &AnalyzeArgs,
    sub: Option<&std::path::Path>,
) -> Result<(), String> {
    let place = |dir: &std::path::Path| sub.map_or_else(|| dir.to_path_buf(), |s| dir.join(s));
    if let Some(dir) = &args.tables {
        let session = report
            .session()
            .ok_or_else(|| "the analysis has no session to list its rows".to_string())?;
        write_tables(report, session, &place(dir))?;
    }
    if let Some(dir) = &args.figures {
        write_figures(report, &place(dir), &args.figure_unit)?;
    }
    Ok(())
}

/// One file: read it, apply the options, analyse. The error is the message to show.
fn analyze_one(file: &std::path::Path, args: &AnalyzeArgs) -> Result<rungs_core::Analysis, String> {
    let (mut session, _) = open_session(file, &args.read)?;
    apply_settings(args, &mut session.settings)?;
    rungs_core::analyze_session(&session, &mut |_, _| {})
        .map_err(|e| format!("{}: {e}", file.display()))
}

/// The analysis options of the command line, applied to `s`.
fn apply_settings(
    args: &AnalyzeArgs,
    s: &mut rungs_core::settings::AnalysisSettings,
) -> Result<(), String> {
    if let Some(n) = args.mc {
        s.mc_samples = n;
    }
    if let Some(seed) = args.seed {
        s.seed = seed;
    }
    if let Some(n) = args.n {
        s.lb_n = n;
    }
    if let Some(k) = args.order {
        s.order = Some(k);
    }
    if let Some(k) = args.max_order {
        s.max_order = k;
    }
    if let Some(t) = args.lb_top {
        s.lb_top_levels = Some(t);
    }
    if let Some(d) = args.asymptote {
        s.asymptote_cm1 = Some(d);
    }
    if let Some(c) = args.cn {
        s.lb_cn_cm1_an = Some(c);
    }
    if let Some(re) = args.re {
        s.re_angstrom = Some(re);
    }
    if args.no_potential_fit {
        s.potential_fit = false;
    }
    if let Some(mu_u) = args.mu {
        s.mass = Some(MassSpec::ReducedMass { mu_u });
    }
    if let Some(pair) = &args.masses {
        let Some((a, b)) = pair.split_once(',') else {
            return Err(format!(
                "--masses '{pair}': write two nuclide labels, e.g. 1H,35Cl"
            ));
        };
        s.mass = Some(MassSpec::Nuclides {
            a: a.trim().into(),
            b: b.trim().into(),
        });
    }
    let b = &mut s.bands;
    for spec in &args.isotopologues {
        let parsed = spec
            .split_once('=')
            .and_then(|(t, ab)| ab.split_once(',').map(|(a, b)| (t, a, b)));
        let Some((tag, a, bb)) = parsed else {
            return Err(format!(
                "--isotopologue '{spec}': write TAG=A,B, e.g. DCl=2H,35Cl"
            ));
        };
        b.isotopologues.push(IsotopologueMasses {
            tag: tag.trim().into(),
            a: a.trim().into(),
            b: bb.trim().into(),
        });
    }
    b.predict.extend(args.predict.iter().cloned());
    if let Some(t) = &args.reference {
        b.reference = Some(t.clone());
    }
    if let Some(e) = args.atomic_excitation {
        b.atomic_excitation_cm1 = Some(e);
    }
    if let (Some(u), Some(l)) = (&args.b_upper, &args.b_lower) {
        match (rotation(u, "--b-upper"), rotation(l, "--b-lower")) {
            (Ok(upper), Ok(lower)) => b.rotation = Some(BandRotation { upper, lower }),
            (Err(e), _) | (_, Err(e)) => return Err(e),
        }
    }
    if let Some(h) = args.head_sigma {
        b.head_sigma_cm1 = h;
    }
    if let Some(k) = args.upper_order {
        b.upper_order = Some(k);
    }
    if let Some(k) = args.lower_order {
        b.lower_order = Some(k);
    }
    Ok(())
}

/// Writes every figure of `analysis` as `DIR/<id>.svg`.
fn write_figures(
    analysis: &rungs_core::Analysis,
    dir: &std::path::Path,
    unit: &str,
) -> Result<(), String> {
    use rungs_plot::figures::{EnergyScale, analysis_figure, analysis_figures};
    let unit = rungs_core::units::Unit::parse(unit).map_err(|e| e.to_string())?;
    let scale = EnergyScale::of(unit)
        .ok_or_else(|| format!("--figure-unit: {} is not an energy unit", unit.token()))?;
    for (id, _) in analysis_figures(analysis) {
        if let Some(chart) = analysis_figure(analysis, &id, scale) {
            let svg = rungs_plot::to_svg(&chart, 900, 560).map_err(|e| e.to_string())?;
            // A band analysis's per-state figures go into `upper/` and `lower/`.
            let path = dir.join(format!("{}.svg", id.replace(':', "/")));
            if let Some(parent) = path.parent() {
                std::fs::create_dir_all(parent)
                    .map_err(|e| format!("{}: {e}", parent.display()))?;
            }
            std::fs::write(&path, svg).map_err(|e| format!("{}: {e}", path.display()))?;
        }
    }
    Ok(())
}

/// Writes every table of `analysis` as `DIR/<id>.csv` (`upper:` / `lower:` become folders).
fn write_tables(
    analysis: &rungs_core::pipeline::Analysis,
    session: &rungs_core::session::Session,
    dir: &std::path::Path,
) -> Result<(), String> {
    let data = session.data().map_err(|e| e.to_string())?;
    for (id, _) in rungs_core::export::tables(analysis) {
        let csv =
            rungs_core::export::table_csv(analysis, Some(&data), &id).map_err(|e| e.to_string())?;
        let path = dir.join(format!("{}.csv", id.replace(':', "/")));
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent).map_err(|e| format!("{}: {e}", parent.display()))?;
        }
        std::fs::write(&path, csv).map_err(|e| format!("{}: {e}", path.display()))?;
    }
    Ok(())
}
