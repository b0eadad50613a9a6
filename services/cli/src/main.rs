//! `thermosieve`: the command line of the screening service.
//!
//! # Layout
//! - `eval`: one reaction for a human (balanced equation, thermodynamics over temperature,
//!   species data sources, cautions).
//! - `service`: `run` (embedded), `serve` (front), `work` (worker), `submit`, `watch`, `fetch`.
//!
//! Exit codes: 0 success; 1 failure (I/O, connection, server error); 2 usage or invalid input;
//! 3 the engine rejected the reaction (`eval`); 4 the batch ended failed or cancelled.

use clap::{Parser, Subcommand};

/// Many small strings per case: mimalloc instead of the system allocator.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;
use std::process::ExitCode;

mod eval;
mod service;

/// Thermochemical screening of candidate reactions: balance, thermodynamics over temperature,
/// heat budgets. Results are screening estimates; confirm by calorimetry before scale-up.
///
/// Quick start: `thermosieve run examples/nightly_screen.csv --out results/`.
/// Every flag has a THERMOSIEVE_* environment variable behind it (shown in each --help).
#[derive(Parser, Debug)]
#[command(name = "thermosieve", version)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Evaluate one reaction and print it for a human.
    Eval(eval::EvalArgs),
    /// Screen an input table in this process (no Redis) and write the tables to --out.
    Run(service::RunArgs),
    /// Run the gRPC front (needs Redis).
    Serve(service::ServeArgs),
    /// Run a worker (needs Redis and the results folder shared with the front).
    Work(service::WorkArgs),
    /// Stream an input table to a front; prints the batch id.
    Submit(service::SubmitArgs),
    /// Show a batch's progress until it ends.
    Watch(service::WatchArgs),
    /// Download a finished batch's tables into a folder.
    Fetch(service::FetchArgs),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Eval(args) => eval::run(&args),
        Command::Run(a) => service::main(service::Cmd::Run(a)),
        Command::Serve(a) => service::main(service::Cmd::Serve(a)),
        Command::Work(a) => service::main(service::Cmd::Work(a)),
        Command::Submit(a) => service::main(service::Cmd::Submit(a)),
        Command::Watch(a) => service::main(service::Cmd::Watch(a)),
        Command::Fetch(a) => service::main(service::Cmd::Fetch(a)),
    }
}
