//! thermosieve-model: what a screen is, shared by the front, the queue and the worker.
//!
//! It owns the job (a batch's options, its cases and their process conditions, the chunks a
//! batch is cut into, its state and progress) and the results folder's layout (batch folders,
//! part files, the table file names). Plain data: no I/O beyond building paths, no async, no
//! chemistry; it imports nothing of the project.
//!
//! # Layout
//! - [`job`]: [`CaseInput`], [`Conditions`] (declared once in [`condition_fields!`]),
//!   [`BatchSpec`], [`Chunk`], [`Task`], [`BatchState`], [`Progress`], [`ChunkReport`].
//! - [`layout`]: [`Table`], [`batch_dir`], [`part_path`].

pub mod job;
pub mod layout;

pub use job::*;
pub use layout::{batch_dir, part_path, BadBatchId, Table};
