//! What the queue hands out and reports: deliveries, finalize outcomes, monitoring snapshots.

use thermosieve_model::{BatchState, Task};

/// A task handed to one consumer; it stays pending until acknowledged.
#[derive(Clone, Debug, PartialEq)]
pub struct Delivery {
    /// The backend's entry id (a stream id for Redis).
    pub entry_id: String,
    pub task: Task,
    /// How many times this entry has been delivered, this delivery included.
    pub deliveries: u64,
}

/// A snapshot of the queue for monitoring ([`crate::Queue::stats`]).
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct QueueStats {
    /// Tasks no consumer has read yet.
    pub waiting: u64,
    /// Tasks read by a consumer and not yet acknowledged.
    pub in_flight: u64,
    /// Chunks dead-lettered so far (kept for inspection).
    pub dead_letters: u64,
    /// Batches whose state is kept, by state, in [`BatchState::ALL`] order.
    pub batches: Vec<(BatchState, u64)>,
}

impl QueueStats {
    /// Count `states` into [`QueueStats::batches`] (every state listed, zeros included).
    pub fn count_batches(&mut self, states: impl IntoIterator<Item = BatchState>) {
        let mut n = [0u64; BatchState::ALL.len()];
        for s in states {
            if let Some(i) = BatchState::ALL.iter().position(|&a| a == s) {
                n[i] += 1;
            }
        }
        self.batches = BatchState::ALL.into_iter().zip(n).collect();
    }
}

/// How a finalize task ended ([`crate::Queue::complete_finalize`]).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Finalized {
    /// The tables and the manifest are written: the batch becomes `done`.
    Done,
    /// They could not be written: the batch becomes `failed` with this message for its owner.
    Failed { message: String },
}

impl Finalized {
    /// The state the batch takes and the message it carries.
    pub fn state_and_message(self) -> (BatchState, String) {
        match self {
            Finalized::Done => (BatchState::Done, String::new()),
            Finalized::Failed { message } => (BatchState::Failed, message),
        }
    }
}
