//! thermosieve-queue: the [`Queue`] trait that moves a screen's chunks (the job of
//! `thermosieve-model`) from the front to the workers, with two backends.
//!
//! It owns delivery semantics: at-least-once delivery, acknowledgement after the worker says its
//! results are durable, reclaiming of abandoned entries, dead-lettering, per-batch counters and
//! state. It must not compute chemistry, read input tables or write result files: the worker and
//! the front do that. It imports only the model, never the front, the worker or the engine.
//!
//! # Layout
//! - [`delivery`]: what the queue hands out and reports: [`Delivery`], [`Finalized`], [`QueueStats`].
//! - [`memory`]: the in-process backend (embedded mode and unit tests).
//! - [`redis_streams`]: the Redis Streams backend (one stream, consumer group `workers`).

pub mod delivery;
pub mod memory;
pub mod redis_streams;

pub use delivery::*;
pub use memory::MemoryQueue;
pub use redis_streams::{RedisConfig, RedisQueue};

use std::time::Duration;
use thermosieve_model::{BatchSpec, BatchState, Chunk, ChunkReport, Progress};

/// Why a queue operation failed. `retryable` says whether the same call may succeed later.
#[derive(Debug, thiserror::Error)]
pub enum QueueError {
    #[error("redis: {0}")]
    Redis(#[from] redis::RedisError),
    #[error("queue entry {entry_id} is not a task: {reason}")]
    BadEntry { entry_id: String, reason: String },
    #[error("consumer group {group:?} is missing on stream {stream:?}: redis lost its data (restart without persistence?); batches in flight cannot complete")]
    GroupMissing { stream: String, group: String },
    #[error("batch {0} is not known to the queue (expired, or lost when redis restarted)")]
    UnknownBatch(String),
    #[error("batch {batch_id} is {state}, so it cannot take {what}")]
    WrongState {
        batch_id: String,
        state: &'static str,
        what: &'static str,
    },
    #[error("the queue holds {depth} entries, at its limit")]
    Full { depth: u64 },
    #[error("encoding a task: {0}")]
    Encode(#[from] serde_json::Error),
}

impl QueueError {
    /// Whether retrying the same call later can succeed (connection trouble), as opposed to a
    /// state that will not change by itself.
    pub fn retryable(&self) -> bool {
        match self {
            QueueError::Redis(e) => e.is_io_error() || e.is_timeout() || e.is_connection_dropped() || e.is_connection_refusal(),
            _ => false,
        }
    }
}

/// The message of a batch failed by [`Queue::expire_receiving`].
pub const ABANDONED: &str = "the submission was abandoned (no cases arrived for longer than the front's receiving timeout; the front or client went away); resubmit it";

/// The queue between the front and the workers.
///
/// Delivery is at least once: a task stays pending from [`Queue::poll`] until it is completed,
/// and [`Queue::reclaim`] hands a task pending longer than an idle timeout to another consumer.
/// Completion is idempotent per chunk (`seq`), so a chunk computed twice counts once.
#[async_trait::async_trait]
pub trait Queue: Send + Sync {
    /// Record a new batch in state `receiving`.
    ///
    /// # Errors
    /// Backend errors.
    async fn create_batch(&self, spec: &BatchSpec) -> Result<(), QueueError>;

    /// The options of a batch, `None` when unknown.
    ///
    /// # Errors
    /// Backend errors.
    async fn batch_spec(&self, batch_id: &str) -> Result<Option<BatchSpec>, QueueError>;

    /// Add one chunk, unless the queue already holds `max_depth` entries or more (checked and
    /// added in one atomic step, so concurrent submitters cannot overshoot the limit); counts
    /// its chunk and cases into the batch totals. Adding a chunk again (same `seq`, after a
    /// reply was lost) changes nothing, so a retry is safe.
    ///
    /// # Errors
    /// `Full` (nothing added; retry later), `UnknownBatch`, `WrongState` (the batch is not
    /// receiving), backend errors.
    async fn enqueue(&self, chunk: &Chunk, max_depth: u64) -> Result<(), QueueError>;

    /// The batch has received all its chunks: move it to `running` (or straight to finalizing
    /// when every chunk is already done, e.g. an empty batch).
    ///
    /// # Errors
    /// `UnknownBatch`, `WrongState`, backend errors.
    async fn seal(&self, batch_id: &str) -> Result<(), QueueError>;

    /// Entries waiting or in flight, over all batches (for backpressure).
    ///
    /// # Errors
    /// Backend errors.
    async fn depth(&self) -> Result<u64, QueueError>;

    /// What the queue holds now, for monitoring: tasks waiting and in flight, dead letters,
    /// and batches by state (over every batch whose state is kept). Costs a pass over the
    /// batches: for scrapes, not for hot paths.
    ///
    /// # Errors
    /// Backend errors.
    async fn stats(&self) -> Result<QueueStats, QueueError>;

    /// The next new task for `consumer`, waiting up to `block` for one.
    ///
    /// # Errors
    /// `GroupMissing` when the backend lost its state, backend errors, `BadEntry`.
    async fn poll(&self, consumer: &str, block: Duration) -> Result<Option<Delivery>, QueueError>;

    /// Take over up to `max` tasks that other consumers have held longer than `min_idle`
    /// without completing them (crashed or stuck workers). Each returned delivery carries its
    /// delivery count; the caller dead-letters those delivered too often.
    ///
    /// # Errors
    /// As for `poll`.
    async fn reclaim(&self, consumer: &str, min_idle: Duration, max: usize) -> Result<Vec<Delivery>, QueueError>;

    /// Renew `consumer`'s hold on a task it is still working on (a lease): its idle time starts
    /// again, so [`Queue::reclaim`] does not hand a healthy slow task to another consumer.
    ///
    /// # Errors
    /// Backend errors.
    async fn keep(&self, delivery: &Delivery, consumer: &str) -> Result<(), QueueError>;

    /// Record a chunk task as done (its parts are durable) and acknowledge it. When it was the
    /// batch's last chunk and the batch is sealed, a finalize task is enqueued.
    ///
    /// # Errors
    /// `UnknownBatch` (the entry is still acknowledged), backend errors.
    async fn complete_chunk(&self, delivery: &Delivery, seq: u64, report: ChunkReport) -> Result<(), QueueError>;

    /// Copy a task to the dead-letter store with the reason (the caller then writes its cases
    /// as error rows and completes it with `dead_lettered`).
    ///
    /// # Errors
    /// Backend errors.
    async fn dead_letter(&self, delivery: &Delivery, reason: &str) -> Result<(), QueueError>;

    /// Record the outcome of a finalize task and acknowledge it: `done`, or `failed` with the
    /// outcome's message. The batch's state keys then expire after the backend's retention.
    ///
    /// # Errors
    /// Backend errors.
    async fn complete_finalize(&self, delivery: &Delivery, outcome: Finalized) -> Result<(), QueueError>;

    /// Acknowledge a task without recording anything (its batch is cancelled or unknown).
    ///
    /// # Errors
    /// Backend errors.
    async fn discard(&self, delivery: &Delivery) -> Result<(), QueueError>;

    /// State and counters of a batch, `None` when unknown.
    ///
    /// # Errors
    /// Backend errors.
    async fn progress(&self, batch_id: &str) -> Result<Option<Progress>, QueueError>;

    /// Mark a batch failed (e.g. its submission broke off) or cancelled, unless it is already
    /// in a final state. Returns the state after the call.
    ///
    /// # Errors
    /// `UnknownBatch`, backend errors.
    async fn stop_batch(&self, batch_id: &str, state: BatchState, message: &str) -> Result<BatchState, QueueError>;

    /// Fail every batch still `receiving` that took no chunk for `idle` (its submitter is gone:
    /// a front that crashed mid-submit). Returns their ids.
    ///
    /// # Errors
    /// Backend errors.
    async fn expire_receiving(&self, idle: Duration) -> Result<Vec<String>, QueueError>;

    /// Recreate backend structures after `GroupMissing` so new batches can run.
    ///
    /// # Errors
    /// Backend errors.
    async fn recover(&self) -> Result<(), QueueError>;
}
