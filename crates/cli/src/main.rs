//! # rungs: command line over rungs-core
//!
//! Thin glue: reads files, calls core, prints text or JSON. Nothing is computed here; every
//! number comes from rungs-core, exactly as in the page.
//!
//! Exit codes: 0 success, 1 internal failure, 2 unusable input or bad arguments.

use std::process::ExitCode;

use clap::{Parser, Subcommand};

mod analyze;
mod check;
mod input;
mod levels;
mod output;
mod potential;

/// Vibrational analysis of diatomic molecules: constants, numbering, dissociation limits.
#[derive(Debug, Parser)]
#[command(name = "rungs", version, about)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Print the version of the numerics and the constants set.
    Version,
    /// Show how a table is read (kind, column roles, units, rows used and excluded) and
    /// whether it is usable; exit 0 when usable, 2 when not.
    Check(check::CheckArgs),
    /// Analyse levels or spacings (one state) or band positions (both states: Deslandres
    /// array, term values, global fit, numbering check, isotopologues): vibrational constants,
    /// order selection, and the dissociation limit by every method, with statistical and model
    /// uncertainty.
    Analyze(Box<analyze::AnalyzeArgs>),
    /// RKR and Morse turning points from ωe, ωexe, Be, αe, … (and the RKR curve solved back).
    Potential(potential::PotentialArgs),
    /// Bound levels of a pointwise potential curve (r, V table).
    Levels(levels::LevelsArgs),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Version => {
            let text = format!(
                "rungs {} (constants: CODATA {})\n",
                rungs_core::VERSION,
                rungs_core::constants::CODATA_YEAR
            );
            output::emit(&text).map_or_else(|code| code, |()| ExitCode::SUCCESS)
        }
        Command::Check(args) => check::run(&args),
        Command::Analyze(args) => analyze::run(&args),
        Command::Potential(args) => potential::finish(potential::run(&args)),
        Command::Levels(args) => potential::finish(levels::run(&args)),
    }
}
