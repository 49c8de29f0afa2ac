//! `rungs levels POTENTIAL.csv`: bound levels of a pointwise potential curve.
//!
//! Glue only: reads the file, hands its text to core (two-column reader, spline curve with wall
//! extensions, Numerov level solver) and prints the levels.

use std::path::PathBuf;

use clap::{Args, ValueEnum};
use rungs_core::potential::{
    EnergyUnit, LengthUnit, OuterWall, PointwisePotential, Potential, SolverSettings,
    parse_two_column, solve_levels,
};
use serde_json::json;

use crate::potential::Format;

/// Distance unit of the file's first column.
#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum RUnit {
    /// Ångström.
    Angstrom,
    /// Bohr.
    Bohr,
}

/// Energy unit of the file's second column.
#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum VUnit {
    /// cm⁻¹.
    Cm1,
    /// Hartree.
    Hartree,
    /// eV.
    Ev,
    /// kJ/mol.
    KjPerMol,
}

/// Arguments of `rungs levels`.
#[derive(Debug, Args)]
pub struct LevelsArgs {
    /// Two-column table r, V (comma, semicolon, tab or blank separated; `#` comments; one
    /// optional header line); or, with `--mlr`, a Morse/long-range curve as JSON or an analysis
    /// document (`rungs analyze --format json`) whose fitted potential is used.
    pub file: PathBuf,
    /// The file is a Morse/long-range curve (JSON) or an analysis document with a fitted potential.
    #[arg(long)]
    pub mlr: bool,
    /// Reduced mass μ, u.
    #[arg(allow_hyphen_values = true, long = "mu")]
    pub mu: f64,
    /// Rotational quantum number J.
    #[arg(allow_negative_numbers = true, long = "j", default_value_t = 0)]
    pub j: u32,
    /// Unit of r in the file.
    #[arg(long = "r-unit", value_enum, default_value_t = RUnit::Angstrom)]
    pub r_unit: RUnit,
    /// Unit of V in the file.
    #[arg(long = "v-unit", value_enum, default_value_t = VUnit::Cm1)]
    pub v_unit: VUnit,
    /// Dissociation limit on the file's energy scale (converted like V), for the outer wall.
    #[arg(allow_hyphen_values = true, long = "limit")]
    pub limit: Option<f64>,
    /// Long-range power n of the outer tail (with --limit; default: exponential approach).
    #[arg(allow_negative_numbers = true, long = "tail-n", requires = "limit")]
    pub tail_n: Option<u32>,
    /// Highest energy of interest, cm⁻¹ above the minimum (needed when the curve has no limit).
    #[arg(allow_hyphen_values = true, long = "energy-max")]
    pub energy_max: Option<f64>,
    /// Target accuracy of the level energies, cm⁻¹.
    #[arg(allow_hyphen_values = true, long = "tolerance", default_value_t = 1e-3)]
    pub tolerance: f64,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
}

/// Run the command; `Err` carries a message for exit code 2.
pub fn run(args: &LevelsArgs) -> Result<String, String> {
    // A file longer than any table may be is not loaded into memory.
    let limit = rungs_core::intake::MAX_TABLE_BYTES;
    if let Ok(meta) = std::fs::metadata(&args.file)
        && meta.len() > limit as u64
    {
        return Err(format!(
            "{}: the file is {} MiB long, more than the {} MiB a table may have; it is not read",
            args.file.display(),
            meta.len() / 1_048_576,
            limit / 1_048_576
        ));
    }
    let text =
        std::fs::read_to_string(&args.file).map_err(|e| format!("{}: {e}", args.file.display()))?;
    if args.mlr {
        return mlr_levels(args, &text);
    }
    let r_unit = match args.r_unit {
        RUnit::Angstrom => LengthUnit::Angstrom,
        RUnit::Bohr => LengthUnit::Bohr,
    };
    let v_unit = match args.v_unit {
        VUnit::Cm1 => EnergyUnit::Cm1,
        VUnit::Hartree => EnergyUnit::Hartree,
        VUnit::Ev => EnergyUnit::Ev,
        VUnit::KjPerMol => EnergyUnit::KjPerMol,
    };
    let points = parse_two_column(&text, r_unit, v_unit)
        .map_err(|e| format!("{}: {e}", args.file.display()))?;
    let limit = args.limit.map(|l| l * v_unit.to_cm1());
    let outer = match (limit, args.tail_n) {
        (Some(limit_cm1), Some(n)) => OuterWall::LongRange {
            limit_cm1,
            n,
            c_n: None,
        },
        (Some(limit), None) => OuterWall::Exponential {
            limit_cm1: Some(limit),
        },
        _ => OuterWall::Automatic,
    };
    let pot = PointwisePotential::new(&points, outer).map_err(|e| e.to_string())?;
    let settings = solver_settings(args);
    let set = solve_levels(&pot, args.mu, &settings).map_err(|e| e.to_string())?;
    let min = pot.minimum();
    Ok(match args.format {
        Format::Json => {
            let levels: Vec<_> = set
                .levels
                .iter()
                .map(|l| {
                    json!({
                        "v": l.v,
                        "energy_cm1": l.energy_cm1,
                        "b_v_cm1": l.b_v_cm1,
                        "r_inner_angstrom": l.r_inner_angstrom,
                        "r_outer_angstrom": l.r_outer_angstrom,
                        "binding_cm1": l.binding_cm1,
                        "error_estimate_cm1": l.error_estimate_cm1,
                        "boundary_limited": l.boundary_limited,
                    })
                })
                .collect();
            let doc = json!({
                "rungs_version": rungs_core::VERSION,
                "codata": rungs_core::constants::CODATA_YEAR,
                "file": args.file.display().to_string(),
                "points": points.len(),
                "mu_u": args.mu,
                "j": args.j,
                "minimum": min,
                "limit_cm1": set.limit_cm1,
                "inner_wall": pot.inner_wall(),
                "outer_wall": pot.outer_wall(),
                "grid": set.grid,
                "converged": set.converged,
                "levels": levels,
                "notes": set.notes,
            });
            serde_json::to_string_pretty(&doc).map_err(|e| e.to_string())? + "\n"
        }
        Format::Text => {
            let mut out = format!(
                "{} points; minimum {:.6} cm-1 at r_e = {:.6} Å; μ = {} u, J = {}\n",
                points.len(),
                min.energy_cm1,
                min.r_angstrom,
                args.mu,
                args.j
            );
            match set.limit_cm1 {
                Some(l) => out.push_str(&format!(
                    "dissociation limit {l:.4} cm-1 above the minimum\n"
                )),
                None => out.push_str("no dissociation limit (levels up to --energy-max)\n"),
            }
            out.push_str(&format!(
                "{:>4} {:>14} {:>12} {:>11} {:>11} {:>10}\n",
                "v", "E/cm-1", "B_v/cm-1", "r-/A", "r+/A", "±est"
            ));
            for l in &set.levels {
                out.push_str(&format!(
                    "{:>4} {:>14.4} {:>12.7} {:>11.6} {:>11.6} {:>10.1e}{}\n",
                    l.v,
                    l.energy_cm1,
                    l.b_v_cm1,
                    l.r_inner_angstrom,
                    l.r_outer_angstrom,
                    l.error_estimate_cm1,
                    if l.boundary_limited {
                        "  (box-limited)"
                    } else {
                        ""
                    }
                ));
            }
            out.push_str("E from the potential minimum; ±est: the solver's error estimate.\n");
            for n in &set.notes {
                out.push_str(&format!("note: {n}\n"));
            }
            out
        }
    })
}

/// The solver settings the arguments ask for (no wavefunctions: only levels are printed).
fn solver_settings(args: &LevelsArgs) -> SolverSettings {
    SolverSettings {
        j: args.j,
        energy_max_cm1: args.energy_max,
        tolerance_cm1: args.tolerance,
        wavefunction_points: 0,
        ..Default::default()
    }
}

/// Levels of a Morse/long-range curve read from JSON (see [`LevelsArgs::file`]).
fn mlr_levels(args: &LevelsArgs, text: &str) -> Result<String, String> {
    let curve = rungs_core::potential::mlr::curve_from_json(text)
        .map_err(|e| format!("{}: {e}", args.file.display()))?;
    let settings = solver_settings(args);
    let set = solve_levels(&curve, args.mu, &settings).map_err(|e| e.to_string())?;
    Ok(match args.format {
        Format::Json => {
            let doc = json!({
                "rungs_version": rungs_core::VERSION,
                "codata": rungs_core::constants::CODATA_YEAR,
                "file": args.file.display().to_string(),
                "curve": curve,
                "mu_u": args.mu,
                "j": args.j,
                "limit_cm1": set.limit_cm1,
                "grid": set.grid,
                "converged": set.converged,
                "levels": set.levels,
                "notes": set.notes,
            });
            serde_json::to_string_pretty(&doc).map_err(|e| e.to_string())? + "\n"
        }
        Format::Text => {
            let mut out = format!(
                "Morse/long-range curve: De = {:.4} cm-1, r_e = {:.6} Å, {} β terms; μ = {} u, J = {}\n",
                curve.de_cm1,
                curve.re_angstrom,
                curve.beta.len(),
                args.mu,
                args.j
            );
            out.push_str(&format!(
                "{:>4} {:>14} {:>12} {:>14}\n",
                "v", "E/cm-1", "B_v/cm-1", "De-E/cm-1"
            ));
            for l in &set.levels {
                out.push_str(&format!(
                    "{:>4} {:>14.4} {:>12.7} {:>14.4}\n",
                    l.v,
                    l.energy_cm1,
                    l.b_v_cm1,
                    curve.de_cm1 - l.energy_cm1
                ));
            }
            out.push_str("E from the potential minimum.\n");
            for n in &set.notes {
                out.push_str(&format!("note: {n}\n"));
            }
            out
        }
    })
}
