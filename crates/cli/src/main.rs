//! # rungs: command line over rungs-core
//!
//! Thin glue: reads files, calls core, prints text or JSON. Nothing is computed here; every
//! number comes from rungs-core, exactly as in the page.
//!
//! Exit codes: 0 success, 1 internal failure, 2 unusable input or bad arguments.

use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};

mod levels;
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
    /// RKR and Morse turning points from ωe, ωexe, Be, αe, … (and the RKR curve solved back).
    Potential(potential::PotentialArgs),
    /// Bound levels of a pointwise potential curve (r, V table).
    Levels(levels::LevelsArgs),
}

/// Output format of a report.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned plain text.
    Text,
    /// JSON.
    Json,
}

/// Print a command's output, or its error with exit code 2.
fn finish(result: Result<String, String>) -> ExitCode {
    match result {
        Ok(text) => {
            print!("{text}");
            ExitCode::SUCCESS
        }
        Err(message) => {
            eprintln!("rungs: {message}");
            ExitCode::from(2)
        }
    }
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Version => {
            println!(
                "rungs {} (constants: CODATA {})",
                rungs_core::VERSION,
                rungs_core::constants::CODATA_YEAR
            );
            ExitCode::SUCCESS
        }
        Command::Potential(args) => finish(potential::run(&args)),
        Command::Levels(args) => finish(levels::run(&args)),
    }
}
