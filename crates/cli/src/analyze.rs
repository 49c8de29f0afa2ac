//! `rungs analyze FILE`: the full vibrational analysis, printed as a readable report or as the
//! JSON document the page exports.
//!
//! Glue only: the file becomes a session (`input.rs`), the options below become analysis
//! settings, and `rungs_core::analyze_session` does all the work.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Args, ValueEnum};
use rungs_core::settings::MassSpec;

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
    /// Table file (levels or spacings), a session document, or an exported analysis.
    pub file: PathBuf,
    /// How to read the table.
    #[command(flatten)]
    pub read: ReadArgs,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
    /// Monte Carlo samples (0 disables Monte Carlo).
    #[arg(long, value_name = "N")]
    pub mc: Option<u32>,
    /// Monte Carlo seed.
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// Long-range exponent n of the near-dissociation (LeRoy–Bernstein) fit.
    #[arg(long, value_name = "N")]
    pub n: Option<f64>,
    /// Reduced mass in u.
    #[arg(long, value_name = "MU", conflicts_with = "masses")]
    pub mu: Option<f64>,
    /// The two atoms as nuclide labels, e.g. `1H,35Cl` (masses from AME 2020).
    #[arg(long, value_name = "A,B")]
    pub masses: Option<String>,
    /// Use this polynomial order for G(v) instead of the recommended one.
    #[arg(long, value_name = "K")]
    pub order: Option<u32>,
    /// Number of top levels used by the near-dissociation fit.
    #[arg(long, value_name = "N")]
    pub lb_top: Option<u32>,
    /// Also write every figure as SVG into this folder (created if missing).
    #[arg(long, value_name = "DIR")]
    pub figures: Option<PathBuf>,
    /// Energy unit of the figures (cm-1, eV, kJ/mol, …).
    #[arg(long, value_name = "U", default_value = "cm-1")]
    pub figure_unit: String,
}

fn fail(message: impl std::fmt::Display) -> ExitCode {
    eprintln!("rungs analyze: {message}");
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
    if let Some(t) = args.lb_top {
        s.lb_top_levels = Some(t);
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
    let report = match rungs_core::analyze_session(&session, &mut |_, _| {}) {
        Ok(r) => r,
        Err(e) => return fail(format!("{}: {e}", args.file.display())),
    };
    if let Some(dir) = &args.figures
        && let Err(message) = write_figures(&report, dir, &args.figure_unit)
    {
        return fail(message);
    }
    match args.format {
        Format::Text => print!("{}", rungs_core::render_text(&report)),
        Format::Json => match report.to_json() {
            Ok(json) => println!("{json}"),
            Err(e) => {
                eprintln!("rungs analyze: {e}");
                return ExitCode::from(1);
            }
        },
    }
    ExitCode::SUCCESS
}

/// Writes every figure of `report` as `DIR/<id>.svg`.
fn write_figures(
    report: &rungs_core::Report,
    dir: &std::path::Path,
    unit: &str,
) -> Result<(), String> {
    use rungs_plot::figures::{EnergyScale, FIGURES, figure};
    let unit = rungs_core::units::Unit::parse(unit).map_err(|e| e.to_string())?;
    let scale = EnergyScale::of(unit)
        .ok_or_else(|| format!("--figure-unit: {} is not an energy unit", unit.token()))?;
    std::fs::create_dir_all(dir).map_err(|e| format!("{}: {e}", dir.display()))?;
    for (id, _) in FIGURES {
        if let Some(chart) = figure(report, id, scale) {
            let svg = rungs_plot::to_svg(&chart, 900, 560).map_err(|e| e.to_string())?;
            let path = dir.join(format!("{id}.svg"));
            std::fs::write(&path, svg).map_err(|e| format!("{}: {e}", path.display()))?;
        }
    }
    Ok(())
}
