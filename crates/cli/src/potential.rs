//! `rungs potential`: RKR and Morse turning points from vibration–rotation constants.
//!
//! Glue only: the arguments become a core [`DiatomicConstants`]; core builds the RKR and Morse
//! curves and solves the RKR curve back (closing the loop); this module prints the result.

use std::process::ExitCode;

use clap::{Args, ValueEnum};
use rungs_core::potential::{DiatomicConstants, MAX_V_MAX, OuterWall, potential_from_constants};
use serde_json::json;

/// Output format of `potential` and `levels`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned plain text.
    Text,
    /// JSON.
    Json,
}

/// Print a command's output, or its error with exit code 2.
pub fn finish(result: Result<String, String>) -> ExitCode {
    match result {
        Ok(text) => crate::output::emit(&text).map_or_else(|code| code, |()| ExitCode::SUCCESS),
        Err(message) => {
            crate::output::complain(&format!("rungs: {message}"));
            ExitCode::from(2)
        }
    }
}

/// Arguments of `rungs potential`.
#[derive(Debug, Args)]
pub struct PotentialArgs {
    /// ωe, cm⁻¹.
    #[arg(allow_hyphen_values = true, long = "we")]
    pub we: f64,
    /// ωexe, cm⁻¹.
    #[arg(allow_hyphen_values = true, long = "wexe")]
    pub wexe: f64,
    /// ωeye, cm⁻¹.
    #[arg(allow_hyphen_values = true, long = "weye", default_value_t = 0.0)]
    pub weye: f64,
    /// ωeze, cm⁻¹.
    #[arg(allow_hyphen_values = true, long = "weze", default_value_t = 0.0)]
    pub weze: f64,
    /// Y00, cm⁻¹ (shifts v_min away from −½).
    #[arg(allow_hyphen_values = true, long = "y00", default_value_t = 0.0)]
    pub y00: f64,
    /// Be, cm⁻¹.
    #[arg(allow_hyphen_values = true, long = "be")]
    pub be: f64,
    /// αe, cm⁻¹.
    #[arg(allow_hyphen_values = true, long = "alphae")]
    pub alphae: f64,
    /// γe, cm⁻¹.
    #[arg(allow_hyphen_values = true, long = "gammae", default_value_t = 0.0)]
    pub gammae: f64,
    /// Reduced mass μ, u.
    #[arg(allow_hyphen_values = true, long = "mu")]
    pub mu: f64,
    /// Highest v for the turning points (default: the last v where G′ is still ≥ 10 % of ωe).
    #[arg(allow_negative_numbers = true, long = "v-max", value_parser = clap::value_parser!(u32).range(0..=i64::from(MAX_V_MAX)))]
    pub v_max: Option<u32>,
    /// Dissociation limit above the minimum, cm⁻¹, for the outer wall of the RKR curve.
    #[arg(allow_hyphen_values = true, long = "limit")]
    pub limit: Option<f64>,
    /// Long-range power n of the outer tail (with --limit; default: exponential approach).
    #[arg(allow_negative_numbers = true, long = "tail-n", requires = "limit")]
    pub tail_n: Option<u32>,
    /// C_n in cm⁻¹ Åⁿ (with --tail-n).
    #[arg(allow_hyphen_values = true, long = "cn", requires = "tail_n")]
    pub cn: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
}

/// Run the command; `Err` carries a message for exit code 2.
pub fn run(args: &PotentialArgs) -> Result<String, String> {
    let constants = DiatomicConstants {
        y00_cm1: args.y00,
        we_cm1: args.we,
        wexe_cm1: args.wexe,
        weye_cm1: args.weye,
        weze_cm1: args.weze,
        be_cm1: args.be,
        alphae_cm1: args.alphae,
        gammae_cm1: args.gammae,
    };
    let input = constants.rkr_input(args.mu);
    let v_max = match args.v_max {
        Some(v) => v,
        None => input.default_v_max().map_err(|e| e.to_string())?,
    };
    let outer = match (args.limit, args.tail_n) {
        (Some(limit_cm1), Some(n)) => OuterWall::LongRange {
            limit_cm1,
            n,
            c_n: args.cn,
        },
        (Some(limit), None) => OuterWall::Exponential {
            limit_cm1: Some(limit),
        },
        _ => OuterWall::Automatic,
    };
    let result =
        potential_from_constants(&constants, args.mu, v_max, outer).map_err(|e| e.to_string())?;
    Ok(match args.format {
        Format::Json => {
            let levels: Vec<_> = result
                .levels
                .iter()
                .map(|l| {
                    json!({
                        "v": l.v,
                        "energy_cm1": l.energy_cm1,
                        "b_v_cm1": l.b_v_cm1,
                        "r_inner_angstrom": l.r_inner_angstrom,
                        "r_outer_angstrom": l.r_outer_angstrom,
                        "morse_r_inner_angstrom": l.morse_turning_points_angstrom.map(|t| t.0),
                        "morse_r_outer_angstrom": l.morse_turning_points_angstrom.map(|t| t.1),
                        "solved_energy_cm1": l.solved_energy_cm1,
                        "solved_b_v_cm1": l.solved_b_v_cm1,
                    })
                })
                .collect();
            let doc = json!({
                "rungs_version": rungs_core::VERSION,
                "codata": rungs_core::constants::CODATA_YEAR,
                "constants": constants,
                "mu_u": result.mu_u,
                "v_min": result.v_min,
                "re_angstrom": result.re_angstrom,
                "morse": result.morse,
                "levels": levels,
                "warnings": result.warnings,
            });
            serde_json::to_string_pretty(&doc).map_err(|e| e.to_string())? + "\n"
        }
        Format::Text => {
            let mut out = String::new();
            out.push_str(&format!(
                "RKR (first order) and Morse turning points; μ = {} u, v_min = {:.6}, r_e = {:.6} Å\n",
                result.mu_u, result.v_min, result.re_angstrom
            ));
            if let Some(m) = &result.morse {
                out.push_str(&format!(
                    "Morse: D_e = {:.3} cm⁻¹, a = {:.6} Å⁻¹, r_e = {:.6} Å\n",
                    m.de_cm1, m.a_per_angstrom, m.re_angstrom
                ));
            }
            out.push_str(&format!(
                "{:>4} {:>13} {:>11} {:>10} {:>10} {:>10} {:>10} {:>11}\n",
                "v",
                "G(v)/cm-1",
                "B(v)/cm-1",
                "RKR r-/A",
                "RKR r+/A",
                "Morse r-",
                "Morse r+",
                "solved-G"
            ));
            for l in &result.levels {
                let (mi, mo) = l
                    .morse_turning_points_angstrom
                    .map_or(("-".to_string(), "-".to_string()), |(a, b)| {
                        (format!("{a:.6}"), format!("{b:.6}"))
                    });
                let solved = l
                    .solved_energy_cm1
                    .map_or("-".to_string(), |e| format!("{:.4}", e - l.energy_cm1));
                out.push_str(&format!(
                    "{:>4} {:>13.4} {:>11.6} {:>10.6} {:>10.6} {:>10} {:>10} {:>11}\n",
                    l.v,
                    l.energy_cm1,
                    l.b_v_cm1,
                    l.r_inner_angstrom,
                    l.r_outer_angstrom,
                    mi,
                    mo,
                    solved
                ));
            }
            out.push_str(
                "solved-G: level of the RKR curve (Numerov solver) minus the G(v) it was built \
                 from. Consistent G and B typically give 0.01-0.1 cm-1; larger values mean the \
                 constants (often a too simple B(v)) do not describe one potential this well.\n",
            );
            for w in &result.warnings {
                out.push_str(&format!("warning: {w}\n"));
            }
            out
        }
    })
}
