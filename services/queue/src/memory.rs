//! The in-process backend: the same semantics as Redis Streams (pending entries, reclaim after
//! an idle time, idempotent completion per chunk) in a mutex-guarded struct. Used by the
//! embedded `run` mode and by unit tests.

use crate::delivery::*;
use crate::{Queue, QueueError};
use std::collections::{BTreeMap, HashMap, HashSet, VecDeque};
use std::sync::Mutex;
use std::time::{Duration, Instant};
use thermosieve_model::*;
use tokio::sync::Notify;

struct Pending {
    task: Task,
    deliveries: u64,
    delivered_at: Instant,
}

struct BatchRecord {
    spec: BatchSpec,
    progress: Progress,
    done: HashSet<u64>,
    /// When it was created or last took a chunk.
    last_activity: Instant,
    /// Chunks below this seq were added already: adding one again is a retry, not a chunk.
    next_seq: u64,
}

#[derive(Default)]
struct Inner {
    next_id: u64,
    ready: VecDeque<(u64, Task, u64)>,
    pending: BTreeMap<u64, Pending>,
    batches: HashMap<String, BatchRecord>,
    dead: Vec<(Task, String)>,
}

impl Inner {
    fn push(&mut self, task: Task) {
        self.next_id += 1;
        self.ready.push_back((self.next_id, task, 0));
    }

    fn maybe_finalize(&mut self, batch_id: &str) {
        let Some(b) = self.batches.get_mut(batch_id) else { return };
        if b.progress.state == BatchState::Running && b.progress.chunks_done >= b.progress.chunks_total {
            b.progress.state = BatchState::Finalizing;
            self.push(Task::Finalize {
                batch_id: batch_id.to_string(),
            });
        }
    }

    fn ack(&mut self, entry_id: &str) {
        if let Ok(id) = entry_id.parse::<u64>() {
            self.pending.remove(&id);
        }
    }
}

/// In-process queue. A `std::sync::Mutex` and not a Tokio mutex: no await happens while it is
/// held; waiting consumers sleep on a [`Notify`].
#[derive(Default)]
pub struct MemoryQueue {
    inner: Mutex<Inner>,
    wake: Notify,
    /// Notified whenever a batch reaches a final state ([`MemoryQueue::wait_final`]).
    ended: Notify,
}

impl MemoryQueue {
    pub fn new() -> MemoryQueue {
        MemoryQueue::default()
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, Inner> {
        // A panic while holding the lock leaves plain data behind; keep serving it.
        self.inner.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// The progress of a batch once it is final (done, failed or cancelled); `None` for a batch
    /// the queue does not know. Woken by the change itself, not by polling: a one-case embedded
    /// run lost up to a polling interval here.
    pub async fn wait_final(&self, batch_id: &str) -> Option<Progress> {
        loop {
            // Registered before the state is read, so a change in between still wakes this.
            let ended = self.ended.notified();
            tokio::pin!(ended);
            ended.as_mut().enable();
            let progress = self.lock().batches.get(batch_id).map(|b| b.progress.clone())?;
            if progress.state.is_final() {
                return Some(progress);
            }
            ended.await;
        }
    }

    /// Tasks dead-lettered so far, with their reasons (for tests and the embedded report).
    pub fn dead_letters(&self) -> Vec<(Task, String)> {
        self.lock().dead.clone()
    }
}

#[async_trait::async_trait]
impl Queue for MemoryQueue {
    async fn create_batch(&self, spec: &BatchSpec) -> Result<(), QueueError> {
        let progress = Progress {
            state: BatchState::Receiving,
            chunks_total: 0,
            chunks_done: 0,
            chunks_dead: 0,
            cases_total: 0,
            cases_done: 0,
            cases_error: 0,
            message: String::new(),
            created_unix_ms: spec.created_unix_ms,
            finished_unix_ms: None,
        };
        self.lock().batches.insert(
            spec.batch_id.clone(),
            BatchRecord {
                spec: spec.clone(),
                progress,
                done: HashSet::new(),
                last_activity: Instant::now(),
                next_seq: 0,
            },
        );
        Ok(())
    }

    async fn batch_spec(&self, batch_id: &str) -> Result<Option<BatchSpec>, QueueError> {
        Ok(self.lock().batches.get(batch_id).map(|b| b.spec.clone()))
    }

    async fn enqueue(&self, chunk: &Chunk, max_depth: u64) -> Result<(), QueueError> {
        {
            let mut g = self.lock();
            let depth = (g.ready.len() + g.pending.len()) as u64;
            if depth >= max_depth {
                return Err(QueueError::Full { depth });
            }
            let b = g
                .batches
                .get_mut(&chunk.batch_id)
                .ok_or_else(|| QueueError::UnknownBatch(chunk.batch_id.clone()))?;
            if b.progress.state != BatchState::Receiving {
                return Err(QueueError::WrongState {
                    batch_id: chunk.batch_id.clone(),
                    state: b.progress.state.as_str(),
                    what: "chunks",
                });
            }
            if chunk.seq < b.next_seq {
                return Ok(());
            }
            b.next_seq = chunk.seq + 1;
            b.last_activity = Instant::now();
            b.progress.chunks_total += 1;
            b.progress.cases_total += chunk.cases.len() as u64;
            g.push(Task::Chunk(chunk.clone()));
        }
        self.wake.notify_one();
        Ok(())
    }

    async fn seal(&self, batch_id: &str) -> Result<(), QueueError> {
        {
            let mut g = self.lock();
            let b = g
                .batches
                .get_mut(batch_id)
                .ok_or_else(|| QueueError::UnknownBatch(batch_id.to_string()))?;
            if b.progress.state != BatchState::Receiving {
                return Err(QueueError::WrongState {
                    batch_id: batch_id.to_string(),
                    state: b.progress.state.as_str(),
                    what: "a seal",
                });
            }
            b.progress.state = BatchState::Running;
            g.maybe_finalize(batch_id);
        }
        self.wake.notify_one();
        Ok(())
    }

    async fn depth(&self) -> Result<u64, QueueError> {
        let g = self.lock();
        Ok((g.ready.len() + g.pending.len()) as u64)
    }

    async fn stats(&self) -> Result<QueueStats, QueueError> {
        let g = self.lock();
        let mut stats = QueueStats {
            waiting: g.ready.len() as u64,
            in_flight: g.pending.len() as u64,
            dead_letters: g.dead.len() as u64,
            batches: Vec::new(),
        };
        stats.count_batches(g.batches.values().map(|b| b.progress.state));
        Ok(stats)
    }

    async fn poll(&self, _consumer: &str, block: Duration) -> Result<Option<Delivery>, QueueError> {
        let deadline = tokio::time::Instant::now() + block;
        loop {
            // Register interest before looking, so a push between the look and the wait wakes us.
            let notified = self.wake.notified();
            {
                let mut g = self.lock();
                if let Some((id, task, prior)) = g.ready.pop_front() {
                    let deliveries = prior + 1;
                    g.pending.insert(
                        id,
                        Pending {
                            task: task.clone(),
                            deliveries,
                            delivered_at: Instant::now(),
                        },
                    );
                    let more = !g.ready.is_empty();
                    drop(g);
                    if more {
                        self.wake.notify_one();
                    }
                    return Ok(Some(Delivery {
                        entry_id: id.to_string(),
                        task,
                        deliveries,
                    }));
                }
            }
            if tokio::time::timeout_at(deadline, notified).await.is_err() {
                return Ok(None);
            }
        }
    }

    async fn reclaim(&self, _consumer: &str, min_idle: Duration, max: usize) -> Result<Vec<Delivery>, QueueError> {
        let mut g = self.lock();
        let now = Instant::now();
        let mut out = Vec::new();
        for (id, p) in g.pending.iter_mut() {
            if out.len() >= max {
                break;
            }
            if now.duration_since(p.delivered_at) >= min_idle {
                p.deliveries += 1;
                p.delivered_at = now;
                out.push(Delivery {
                    entry_id: id.to_string(),
                    task: p.task.clone(),
                    deliveries: p.deliveries,
                });
            }
        }
        Ok(out)
    }

    async fn expire_receiving(&self, idle: Duration) -> Result<Vec<String>, QueueError> {
        let mut g = self.lock();
        let now = Instant::now();
        let mut out = Vec::new();
        for (id, b) in g.batches.iter_mut() {
            if b.progress.state == BatchState::Receiving && now.duration_since(b.last_activity) >= idle {
                b.progress.state = BatchState::Failed;
                b.progress.message = crate::ABANDONED.to_string();
                b.progress.finished_unix_ms = Some(now_unix_ms());
                out.push(id.clone());
            }
        }
        drop(g);
        if !out.is_empty() {
            self.ended.notify_waiters();
        }
        Ok(out)
    }

    async fn keep(&self, delivery: &Delivery, _consumer: &str) -> Result<(), QueueError> {
        if let Ok(id) = delivery.entry_id.parse::<u64>() {
            if let Some(p) = self.lock().pending.get_mut(&id) {
                p.delivered_at = Instant::now();
            }
        }
        Ok(())
    }

    async fn complete_chunk(&self, delivery: &Delivery, seq: u64, report: ChunkReport) -> Result<(), QueueError> {
        let batch_id = delivery.task.batch_id().to_string();
        {
            let mut g = self.lock();
            g.ack(&delivery.entry_id);
            let b = g
                .batches
                .get_mut(&batch_id)
                .ok_or_else(|| QueueError::UnknownBatch(batch_id.clone()))?;
            if b.done.insert(seq) {
                b.progress.chunks_done += 1;
                b.progress.cases_done += report.cases;
                b.progress.cases_error += report.errors;
                b.progress.chunks_dead += u64::from(report.dead_lettered);
            }
            g.maybe_finalize(&batch_id);
        }
        self.wake.notify_one();
        Ok(())
    }

    async fn dead_letter(&self, delivery: &Delivery, reason: &str) -> Result<(), QueueError> {
        self.lock().dead.push((delivery.task.clone(), reason.to_string()));
        Ok(())
    }

    async fn complete_finalize(&self, delivery: &Delivery, outcome: Finalized) -> Result<(), QueueError> {
        let mut g = self.lock();
        g.ack(&delivery.entry_id);
        if let Some(b) = g.batches.get_mut(delivery.task.batch_id()) {
            if !b.progress.state.is_final() {
                let (state, message) = outcome.state_and_message();
                b.progress.state = state;
                if state == BatchState::Failed {
                    b.progress.message = message;
                }
                b.progress.finished_unix_ms = Some(now_unix_ms());
            }
        }
        drop(g);
        self.ended.notify_waiters();
        Ok(())
    }

    async fn discard(&self, delivery: &Delivery) -> Result<(), QueueError> {
        self.lock().ack(&delivery.entry_id);
        Ok(())
    }

    async fn progress(&self, batch_id: &str) -> Result<Option<Progress>, QueueError> {
        Ok(self.lock().batches.get(batch_id).map(|b| b.progress.clone()))
    }

    async fn stop_batch(&self, batch_id: &str, state: BatchState, message: &str) -> Result<BatchState, QueueError> {
        let mut g = self.lock();
        let b = g
            .batches
            .get_mut(batch_id)
            .ok_or_else(|| QueueError::UnknownBatch(batch_id.to_string()))?;
        if !b.progress.state.is_final() {
            b.progress.state = state;
            b.progress.message = message.to_string();
            b.progress.finished_unix_ms = Some(now_unix_ms());
        }
        let state = b.progress.state;
        drop(g);
        self.ended.notify_waiters();
        Ok(state)
    }

    async fn recover(&self) -> Result<(), QueueError> {
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The state machine (chunks, reclaim, finalize, final states, depth limit, lease) is
    // checked against both backends in tests/e2e/queue_conformance.rs.

    /// The embedded run waits on this instead of polling: a state change that did not notify
    /// would leave the waiter asleep, and this test timed out.
    #[tokio::test]
    async fn a_waiter_wakes_when_its_batch_ends_and_not_before() {
        let q = std::sync::Arc::new(MemoryQueue::new());
        let id = "a".repeat(32);
        let spec = BatchSpec {
            batch_id: id.clone(),
            temperatures_k: vec![298.15],
            default_conditions: Conditions::default(),
            chunk_size: 10,
            label: String::new(),
            created_unix_ms: 0,
            tenant: String::new(),
        };
        q.create_batch(&spec).await.unwrap();
        assert!(q.wait_final(&"b".repeat(32)).await.is_none(), "an unknown batch is not waited for");
        let waiter = tokio::spawn({
            let (q, id) = (q.clone(), id.clone());
            async move { q.wait_final(&id).await }
        });
        // Still receiving: the waiter must not have returned.
        tokio::time::sleep(Duration::from_millis(50)).await;
        assert!(!waiter.is_finished(), "woke before the batch ended");
        q.stop_batch(&id, BatchState::Cancelled, "stopped by the test").await.unwrap();
        let progress = tokio::time::timeout(Duration::from_secs(10), waiter)
            .await
            .expect("the waiter is woken by the change, not left asleep")
            .unwrap()
            .unwrap();
        assert_eq!(progress.state, BatchState::Cancelled);
        assert_eq!(progress.message, "stopped by the test");
    }

    #[test]
    fn conditions_with_an_unknown_key_are_refused() {
        let e = serde_json::from_str::<Conditions>(r#"{"scale_mol": 1.0, "scale_kmol": 2.0}"#).unwrap_err();
        assert!(e.to_string().contains("unknown field `scale_kmol`"), "{e}");
    }

    #[test]
    fn row_conditions_win_over_defaults() {
        let row = Conditions {
            scale_mol: Some(2.0),
            ..Default::default()
        };
        let d = Conditions {
            scale_mol: Some(9.0),
            pressure_bar: Some(1.5),
            ..Default::default()
        };
        let c = row.or_defaults(&d);
        assert_eq!((c.scale_mol, c.pressure_bar), (Some(2.0), Some(1.5)));
    }
}
