//! `thermosieve`: the command line of the screening service.
//!
//! # Layout
//! - `eval`: one reaction for a human (balanced equation, thermodynamics over temperature,
//!   species data sources, cautions).

use clap::{Parser, Subcommand};
use std::process::ExitCode;

mod eval;

/// Thermochemical screening of candidate reactions: balance, thermodynamics over temperature,
/// heat budgets. Results are screening estimates; confirm by calorimetry before scale-up.
#[derive(Parser, Debug)]
#[command(name = "thermosieve", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Evaluate one reaction and print it for a human.
    Eval(eval::EvalArgs),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Eval(args) => eval::run(&args),
    }
}
