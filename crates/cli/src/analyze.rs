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
    /// Table file (levels, spacings or bands), a session document, or an exported analysis.
    pub file: PathBuf,
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
    let (mut session, _) = match open_session(&args.file, &args.read) {
        Ok(x) => x,
        Err(message) => return fail(message),
    };
    let s = &mut session.settings;
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
            return fail(format!(
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
            return fail(format!(
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
            (Err(e), _) | (_, Err(e)) => return fail(e),
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
    let report = match rungs_core::analyze_session(&session, &mut |_, _| {}) {
        Ok(r) => r,
        Err(e) => return fail(format!("{}: {e}", args.file.display())),
    };
    if let Some(dir) = &args.tables
        && let Err(message) = write_tables(&report, &session, dir)
    {
        return fail(message);
    }
    if let Some(dir) = &args.figures
        && let Err(message) = write_figures(&report, dir, &args.figure_unit)
    {
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
