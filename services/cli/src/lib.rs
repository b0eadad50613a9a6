//! thermosieve-cli: the client side of the service, beside the `thermosieve` binary.
//!
//! It owns what only clients need: reading input tables into cases, the submission messages,
//! and the embedded mode (front logic, an in-process queue and workers in one process). The
//! binary's commands (`src/main.rs`) use it, and so do the bench and the end-to-end tests.
//!
//! # Layout
//! - [`input`]: CSV / TSV / JSON Lines / Parquet → cases, with per-row error messages.
//! - [`submit`]: cases → `SubmitBatchRequest` messages.
//! - [`embedded`]: the whole pipeline in one process (no Redis).

pub mod embedded;
pub mod input;
pub mod submit;
