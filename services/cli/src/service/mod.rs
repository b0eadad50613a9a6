//! The service commands. `anyhow` lives here (binary start-up and reporting) and nowhere below.
//!
//! # Layout
//! - this file: the command enum, exit codes, and what the commands share (input opening,
//!   shutdown signal, thread count).
//! - `args`: the arguments of every service command.
//! - `server`: `run`, `serve`, `work`.
//! - `client`: `submit`, `watch`, `fetch`.

use anyhow::{bail, Context};
use indicatif::{ProgressBar, ProgressStyle};
use std::net::SocketAddr;
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::Arc;
use std::time::Duration;
use thermosieve_cli::input::{self, Format};
use thermosieve_front::auth::{Bearer, Tokens};
use thermosieve_front::ingest::{BatchOptions, IngestLimits};
use thermosieve_front::{convert, Access, Front, FrontConfig};
use thermosieve_model::Table;
use thermosieve_proto::v1 as pb;
use thermosieve_proto::v1::screening_client::ScreeningClient;
use thermosieve_queue::{Queue, RedisConfig, RedisQueue};
use thermosieve_worker::WorkerConfig;

mod args;
mod client;
mod server;

pub use args::*;
use client::{fetch, submit, watch};
use server::{run, serve, work};

/// Exit code: the batch ended failed or cancelled.
const EXIT_BATCH_FAILED: u8 = 4;

pub enum Cmd {
    Run(RunArgs),
    Serve(ServeArgs),
    Work(WorkArgs),
    Submit(SubmitArgs),
    Watch(WatchArgs),
    Fetch(FetchArgs),
}

/// An error that means "you asked for something invalid" (exit 2) rather than "it broke" (exit 1).
#[derive(Debug)]
struct Usage(String);

impl std::fmt::Display for Usage {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for Usage {}

/// The batch ended failed or cancelled (exit 4).
#[derive(Debug)]
struct BatchEnded(String);

impl std::fmt::Display for BatchEnded {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for BatchEnded {}

pub fn main(cmd: Cmd) -> ExitCode {
    let logs = tracing_subscriber::fmt()
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_env("THERMOSIEVE_LOG").unwrap_or_else(|_| tracing_subscriber::EnvFilter::new("info")),
        )
        .with_writer(std::io::stderr);
    // THERMOSIEVE_LOG_FORMAT=json: one JSON object per line, for log collectors.
    if std::env::var("THERMOSIEVE_LOG_FORMAT").is_ok_and(|f| f.eq_ignore_ascii_case("json")) {
        logs.json().init();
    } else {
        logs.init();
    }
    let rt = match tokio::runtime::Builder::new_multi_thread().enable_all().build() {
        Ok(rt) => rt,
        Err(e) => {
            eprintln!("error: cannot start the async runtime: {e}");
            return ExitCode::FAILURE;
        }
    };
    let r = rt.block_on(async move {
        match cmd {
            Cmd::Run(a) => run(a).await,
            Cmd::Serve(a) => serve(a).await,
            Cmd::Work(a) => work(a).await,
            Cmd::Submit(a) => submit(a).await,
            Cmd::Watch(a) => watch(a).await,
            Cmd::Fetch(a) => fetch(a).await,
        }
    });
    match r {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            if e.downcast_ref::<Usage>().is_some() {
                ExitCode::from(2)
            } else if e.downcast_ref::<BatchEnded>().is_some() {
                ExitCode::from(EXIT_BATCH_FAILED)
            } else {
                ExitCode::FAILURE
            }
        }
    }
}

fn format_arg(f: &Option<String>) -> anyhow::Result<Option<Format>> {
    match f {
        None => Ok(None),
        Some(s) => Format::parse(s)
            .map(Some)
            .ok_or_else(|| Usage(format!("--format {s:?}: expected csv, tsv, jsonl or parquet")).into()),
    }
}

fn open_input(path: &std::path::Path, format: &Option<String>) -> anyhow::Result<input::Cases> {
    input::open(path, format_arg(format)?).map_err(|e| Usage(e.to_string()).into())
}

async fn shutdown_signal() {
    let ctrl_c = tokio::signal::ctrl_c();
    #[cfg(unix)]
    {
        let mut term = match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(s) => s,
            Err(e) => {
                tracing::warn!(error = %e, "cannot listen for SIGTERM; only ctrl-c stops this process");
                let _ = ctrl_c.await;
                return;
            }
        };
        tokio::select! {
            _ = ctrl_c => {}
            _ = term.recv() => {}
        }
    }
    #[cfg(not(unix))]
    let _ = ctrl_c.await;
    tracing::info!("shutdown requested");
}

fn threads(t: Option<usize>) -> usize {
    t.unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()))
        .max(1)
}
