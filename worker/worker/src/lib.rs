//! thermosieve-worker: turns queued chunks into result tables.
//!
//! It owns running the engine on cases (one engine thread per core, each with its own species
//! cache), the mapping from engine results to table rows (in one module, [`rows`]), atomic part
//! files with deterministic names, and the finalizer that concatenates parts into
//! `cases.parquet`, `trends.parquet`, `routes.parquet`, `species.parquet` and `manifest.json`.
//! It must not parse input tables, speak gRPC or decide chunking: the front does that. It
//! imports the queue and the engine, never the front.
//!
//! # Layout
//! - [`rows`]: `Screened` → case, trend, species and route rows → polars frames (column names, units).
//! - [`process`]: the engine over a chunk's cases, with a screener cache per grid.
//! - [`parts`]: batch folders, part paths, atomic writes, Parquet I/O.
//! - [`mod@finalize`]: part files → batch tables + manifest.
//! - [`mod@concat`]: part files → one Parquet file by copying compressed pages.
//! - [`route_table`]: the chunks' routes parts → `routes.parquet`, ranked, in bounded memory.
//! - [`fault`]: named crash points of finalization, for the crash tests only.
//! - [`mod@run`]: the worker loop (poll, compute, write, acknowledge, reclaim, dead-letter, stop).

pub mod concat;
pub mod fault;
pub mod finalize;
pub mod metrics;
pub mod parts;
pub mod process;
pub mod route_table;
pub mod rows;
pub mod run;

pub use finalize::{finalize, Manifest};
pub use run::{run, WorkerConfig, WorkerStats};

use std::path::PathBuf;

/// Why a worker step failed.
#[derive(Debug, thiserror::Error)]
pub enum WorkerError {
    #[error("{path}: {source}")]
    Io { path: PathBuf, source: std::io::Error },
    #[error("parquet: {0}")]
    Polars(#[from] polars::prelude::PolarsError),
    #[error("{0}")]
    Queue(#[from] thermosieve_queue::QueueError),
    #[error("{0}")]
    BadBatchId(#[from] thermosieve_model::BadBatchId),
    #[error("batch {batch_id}: chunk {seq} has no committed {table} part")]
    MissingPart { batch_id: String, seq: u64, table: &'static str },
    #[error("manifest: {0}")]
    Json(#[from] serde_json::Error),
    #[error("{path}: cannot copy into the table: {reason}")]
    Concat { path: PathBuf, reason: String },
    #[error("engine thread could not start: {0}")]
    Spawn(std::io::Error),
    #[error("engine thread stopped")]
    EngineGone,
}

impl WorkerError {
    /// Whether the same task may succeed if tried again soon (the queue was unreachable).
    pub fn retryable(&self) -> bool {
        matches!(self, WorkerError::Queue(q) if q.retryable())
    }
}
