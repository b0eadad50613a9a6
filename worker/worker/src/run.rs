//! The worker loop: poll the queue, compute chunks on engine threads, write parts, acknowledge.
//!
//! Each of `threads` slots is an async task (polling, acknowledging, reclaiming) paired with an
//! OS thread that owns a [`ChunkProcessor`] (so the species cache survives from chunk to chunk)
//! and does the CPU work and the Parquet writing. The async side never blocks.
//!
//! On shutdown (the `shutdown` future completes, e.g. on SIGTERM) a slot finishes the chunk in
//! hand, commits it, and stops polling; a chunk read but not finished by a killed worker is
//! reclaimed by another after `reclaim_idle`.

use crate::finalize::{finalize, remove_parts, Manifest};
use crate::parts::write_part;
use crate::process::ChunkProcessor;
use crate::rows::{self, build_row, CaseError};
use crate::WorkerError;
use std::collections::HashMap;
use std::future::Future;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Duration, Instant};
use thermosieve_model::part_path;
use thermosieve_model::Table;
use thermosieve_model::{BatchSpec, BatchState, Chunk, ChunkReport, Progress, Task};
use thermosieve_queue::{Delivery, Finalized, Queue, QueueError};
use tokio::sync::{oneshot, watch};

/// Worker settings.
#[derive(Clone, Debug)]
pub struct WorkerConfig {
    /// Where batch folders are written (shared with the front).
    pub results_dir: PathBuf,
    /// Engine threads (and queue consumers) in this process.
    pub threads: usize,
    /// Consumer name prefix; slot `i` consumes as `<consumer>-<i>`. Unique per process.
    pub consumer: String,
    /// Longest a poll blocks (also the longest a shutdown waits for an idle slot).
    pub block: Duration,
    /// A task pending this long without completion is taken over by another consumer.
    pub reclaim_idle: Duration,
    /// A chunk delivered more often than this is dead-lettered: its cases become error rows.
    pub max_deliveries: u64,
    /// Keep the part files after finalizing (for debugging).
    pub keep_parts: bool,
}

impl WorkerConfig {
    pub fn new(results_dir: impl Into<PathBuf>) -> WorkerConfig {
        WorkerConfig {
            results_dir: results_dir.into(),
            threads: std::thread::available_parallelism().map_or(1, |n| n.get()),
            consumer: format!("worker-{}", std::process::id()),
            block: Duration::from_secs(2),
            reclaim_idle: Duration::from_secs(60),
            max_deliveries: 3,
            keep_parts: false,
        }
    }
}

/// What a worker did before it stopped.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct WorkerStats {
    pub chunks: u64,
    pub cases: u64,
    pub dead_lettered: u64,
    pub finalized: u64,
}

enum Job {
    Chunk {
        spec: Arc<BatchSpec>,
        chunk: Chunk,
        dead_reason: Option<String>,
        reply: oneshot::Sender<Result<ChunkReport, WorkerError>>,
    },
    Finalize {
        spec: Arc<BatchSpec>,
        progress: Progress,
        reply: oneshot::Sender<Result<Manifest, WorkerError>>,
    },
}

/// Compute a chunk and write its parts; returns what to report.
///
/// # Errors
/// I/O and Polars errors writing the parts.
pub fn commit_chunk(
    results_dir: &Path,
    processor: &mut ChunkProcessor,
    spec: &BatchSpec,
    chunk: &Chunk,
) -> Result<ChunkReport, WorkerError> {
    let cases = processor.screen_cases(spec, &chunk.cases);
    let m = crate::metrics::registry();
    let input_errors = chunk.cases.iter().filter(|c| c.input_error.is_some()).count() as u64;
    let errors = cases.iter().filter(|r| !r.ok).count() as u64;
    m.cases_ok.add(cases.len() as u64 - errors);
    m.errors_input.add(input_errors.min(errors));
    m.errors_engine.add(errors.saturating_sub(input_errors));
    m.process_errors
        .add(cases.iter().filter(|r| r.ok && r.process.process_error.is_some()).count() as u64);
    write_parts(results_dir, spec, chunk.seq, &cases, false)
}

/// Write a dead-lettered chunk: every case an error row with `reason`.
///
/// # Errors
/// I/O and Polars errors.
pub fn commit_dead_chunk(results_dir: &Path, spec: &BatchSpec, chunk: &Chunk, reason: &str) -> Result<ChunkReport, WorkerError> {
    let cases: Vec<rows::CaseRow> = chunk
        .cases
        .iter()
        .map(|c| build_row(c, &spec.default_conditions, Err(CaseError::DeadLettered(reason.to_string()))))
        .collect();
    crate::metrics::registry().errors_dead_letter.add(cases.len() as u64);
    write_parts(results_dir, spec, chunk.seq, &cases, true)
}

fn write_parts(results_dir: &Path, spec: &BatchSpec, seq: u64, cases: &[rows::CaseRow], dead: bool) -> Result<ChunkReport, WorkerError> {
    let errors = cases.iter().filter(|r| !r.ok).count() as u64;
    // Trends, species and routes first: the cases part is what the finalizer checks for, so it
    // lands last.
    write_part(
        &part_path(results_dir, &spec.batch_id, Table::Trends, seq)?,
        &rows::trends_frame(cases)?,
    )?;
    write_part(
        &part_path(results_dir, &spec.batch_id, Table::Species, seq)?,
        &rows::species_frame(cases)?,
    )?;
    write_part(
        &part_path(results_dir, &spec.batch_id, Table::Routes, seq)?,
        &rows::routes_frame(&rows::chunk_routes(cases))?,
    )?;
    write_part(
        &part_path(results_dir, &spec.batch_id, Table::Cases, seq)?,
        &rows::cases_frame(cases)?,
    )?;
    Ok(ChunkReport {
        cases: cases.len() as u64,
        errors,
        dead_lettered: dead,
    })
}

fn engine_thread(results_dir: PathBuf, jobs: std::sync::mpsc::Receiver<Job>) {
    let mut processor = ChunkProcessor::new();
    while let Ok(job) = jobs.recv() {
        match job {
            Job::Chunk {
                spec,
                chunk,
                dead_reason,
                reply,
            } => {
                let r = match dead_reason {
                    Some(reason) => commit_dead_chunk(&results_dir, &spec, &chunk, &reason),
                    None => commit_chunk(&results_dir, &mut processor, &spec, &chunk),
                };
                let _ = reply.send(r);
            }
            Job::Finalize { spec, progress, reply } => {
                let _ = reply.send(finalize(&results_dir, &spec, &progress));
            }
        }
    }
}

/// Parse the engine's bundled tables on two threads of their own, while the worker connects and
/// the first chunk is read: otherwise the first case parses them one after the other on its
/// engine thread (a one-case `run`: 60 of its 90 M instructions). A table still being parsed
/// when a case needs it is waited for (`OnceLock`); a thread that cannot start is no error, the
/// table is parsed on first use as before.
fn preload_tables() {
    let loads: [fn(); 2] = [
        || {
            thermosieve_engine::species::bundled();
        },
        || {
            thermosieve_engine::names::bundled();
            thermosieve_engine::structures::bundled();
        },
    ];
    for load in loads {
        let _ = std::thread::Builder::new().name("preload".into()).spawn(load);
    }
}

/// Run a worker until `shutdown` completes.
///
/// # Errors
/// `WorkerError::Spawn` when an engine thread cannot start. Queue errors while running are
/// logged and retried, not returned: a worker outlives a Redis restart.
pub async fn run(
    queue: Arc<dyn Queue>,
    cfg: WorkerConfig,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> Result<WorkerStats, WorkerError> {
    let (stop_tx, stop_rx) = watch::channel(false);
    tokio::spawn(async move {
        shutdown.await;
        let _ = stop_tx.send(true);
    });
    preload_tables();
    if !cfg.keep_parts {
        remove_leftovers(queue.as_ref(), &cfg.results_dir).await;
    }
    let mut slots = Vec::new();
    let mut threads = Vec::new();
    for i in 0..cfg.threads.max(1) {
        let (tx, rx) = std::sync::mpsc::channel::<Job>();
        let dir = cfg.results_dir.clone();
        let t = std::thread::Builder::new()
            .name(format!("engine-{i}"))
            .spawn(move || engine_thread(dir, rx))
            .map_err(WorkerError::Spawn)?;
        threads.push(t);
        let slot = Slot {
            queue: queue.clone(),
            cfg: cfg.clone(),
            consumer: format!("{}-{i}", cfg.consumer),
            jobs: tx,
            specs: HashMap::new(),
            stats: WorkerStats::default(),
        };
        slots.push(tokio::spawn(slot.run(stop_rx.clone())));
    }
    let mut stats = WorkerStats::default();
    for s in slots {
        if let Ok(s) = s.await {
            stats.chunks += s.chunks;
            stats.cases += s.cases;
            stats.dead_lettered += s.dead_lettered;
            stats.finalized += s.finalized;
        }
    }
    // The slots dropped their senders: the engine threads end after their last job.
    let _ = tokio::task::spawn_blocking(move || threads.into_iter().for_each(|t| drop(t.join()))).await;
    tracing::info!(chunks = stats.chunks, cases = stats.cases, "worker stopped");
    Ok(stats)
}

/// Remove what finished batches left in the results folder: the part files of a batch whose
/// worker was killed between recording DONE and removing them (or that failed while its chunks
/// ran), and the temporary files of a write cut short. Only batches the queue reports over
/// (DONE, FAILED, CANCELLED) are touched; nothing is done while the queue does not answer.
async fn remove_leftovers(queue: &dyn Queue, results_dir: &Path) {
    let dir = results_dir.to_path_buf();
    let candidates = tokio::task::spawn_blocking(move || leftover_candidates(&dir))
        .await
        .unwrap_or_default();
    let mut removed = 0usize;
    for id in candidates {
        match queue.progress(&id).await {
            Ok(Some(p)) if p.state.is_final() => {
                let dir = results_dir.to_path_buf();
                let _ = tokio::task::spawn_blocking(move || {
                    remove_parts(&dir, &id);
                    remove_temporaries(&dir, &id);
                })
                .await;
                removed += 1;
            }
            Ok(_) => {}
            Err(e) => {
                tracing::warn!(error = %e, "queue unreachable: leftover part files stay until the next start");
                return;
            }
        }
    }
    if removed > 0 {
        tracing::info!(
            batches = removed,
            "removed part and temporary files that finished batches left behind"
        );
    }
}

/// Batch folders holding part files or temporary files.
fn leftover_candidates(results_dir: &Path) -> Vec<String> {
    let Ok(entries) = std::fs::read_dir(results_dir) else {
        return Vec::new();
    };
    entries
        .flatten()
        .filter_map(|e| e.file_name().to_str().map(str::to_string))
        .filter(|id| thermosieve_model::batch_dir(results_dir, id).is_ok())
        .filter(|id| {
            let dir = results_dir.join(id);
            dir.join("parts").is_dir() || !temporaries(&dir).is_empty()
        })
        .collect()
}

/// Temporary files of [`crate::parts::write_atomic`] in a folder.
fn temporaries(dir: &Path) -> Vec<PathBuf> {
    std::fs::read_dir(dir)
        .map(|entries| {
            entries
                .flatten()
                .filter(|e| e.file_name().to_str().is_some_and(|n| n.starts_with('.') && n.contains(".tmp-")))
                .map(|e| e.path())
                .collect()
        })
        .unwrap_or_default()
}

fn remove_temporaries(results_dir: &Path, batch_id: &str) {
    for t in temporaries(&results_dir.join(batch_id)) {
        let _ = std::fs::remove_file(t);
    }
}

struct Slot {
    queue: Arc<dyn Queue>,
    cfg: WorkerConfig,
    consumer: String,
    jobs: std::sync::mpsc::Sender<Job>,
    specs: HashMap<String, Arc<BatchSpec>>,
    stats: WorkerStats,
}

impl Slot {
    async fn run(mut self, stop: watch::Receiver<bool>) -> WorkerStats {
        let mut last_reclaim = Instant::now();
        let mut backoff = Duration::from_millis(200);
        let mut stopping = stop.clone();
        while !*stop.borrow() {
            let reclaim_now = last_reclaim.elapsed() >= self.cfg.reclaim_idle / 2;
            if reclaim_now {
                last_reclaim = Instant::now();
            }
            let read = async {
                if reclaim_now {
                    match self.queue.reclaim(&self.consumer, self.cfg.reclaim_idle, 1).await {
                        Ok(mut v) if !v.is_empty() => {
                            tracing::warn!(consumer = %self.consumer, entry_id = %v[0].entry_id, deliveries = v[0].deliveries, "reclaimed an abandoned task");
                            Ok(v.pop())
                        }
                        Ok(_) => self.queue.poll(&self.consumer, self.cfg.block).await,
                        Err(e) => Err(e),
                    }
                } else {
                    self.queue.poll(&self.consumer, self.cfg.block).await
                }
            };
            // Shutdown ends a blocking read at once instead of after its block time. A task the
            // queue handed out in that instant stays pending and is reclaimed: at least once.
            let next = tokio::select! {
                biased;
                _ = stopping.wait_for(|s| *s) => break,
                r = read => r,
            };
            match next {
                Ok(Some(d)) => {
                    backoff = Duration::from_millis(200);
                    // While the queue is unreachable the task in hand is retried here, with
                    // backoff, rather than left pending: polling on would pull the backlog
                    // into this consumer's pending list, to be reclaimed one by one later.
                    let mut retry = Duration::from_millis(200);
                    loop {
                        match self.handle(d.clone()).await {
                            Ok(()) => break,
                            Err(e) if e.retryable() && !*stop.borrow() => {
                                tracing::warn!(consumer = %self.consumer, error = %e, "queue unreachable; retrying the task in hand");
                                tokio::select! {
                                    _ = tokio::time::sleep(retry) => {}
                                    _ = stopping.wait_for(|s| *s) => break,
                                }
                                retry = (retry * 2).min(Duration::from_secs(5));
                            }
                            Err(e) => {
                                tracing::error!(consumer = %self.consumer, error = %e, "task failed; it stays pending and will be retried");
                                break;
                            }
                        }
                    }
                }
                Ok(None) => {}
                Err(QueueError::GroupMissing { stream, group }) => {
                    tracing::error!(%stream, %group, "consumer group missing: redis lost its data; batches in flight are lost and will report as failed; recreating the group");
                    if let Err(e) = self.queue.recover().await {
                        tracing::error!(error = %e, "could not recreate the consumer group");
                    }
                    tokio::time::sleep(backoff).await;
                }
                Err(e) => {
                    tracing::warn!(error = %e, retryable = e.retryable(), "queue read failed; retrying");
                    tokio::time::sleep(backoff).await;
                    backoff = (backoff * 2).min(Duration::from_secs(5));
                }
            }
        }
        self.stats
    }

    async fn spec(&mut self, batch_id: &str) -> Result<Option<Arc<BatchSpec>>, WorkerError> {
        if let Some(s) = self.specs.get(batch_id) {
            return Ok(Some(s.clone()));
        }
        let Some(spec) = self.queue.batch_spec(batch_id).await? else {
            return Ok(None);
        };
        if self.specs.len() > 64 {
            self.specs.clear();
        }
        let spec = Arc::new(spec);
        self.specs.insert(batch_id.to_string(), spec.clone());
        Ok(Some(spec))
    }

    /// Wait for the engine thread's answer on `d`, renewing the lease on `d` every third of the
    /// reclaim time meanwhile: a healthy slow chunk is never taken over by another worker.
    async fn hold<T>(&self, d: &Delivery, mut rx: oneshot::Receiver<T>) -> Result<T, WorkerError> {
        let every = (self.cfg.reclaim_idle / 3).max(Duration::from_millis(50));
        loop {
            tokio::select! {
                r = &mut rx => return r.map_err(|_| WorkerError::EngineGone),
                _ = tokio::time::sleep(every) => {
                    if let Err(e) = self.queue.keep(d, &self.consumer).await {
                        tracing::warn!(consumer = %self.consumer, error = %e, "could not renew the lease on the task in hand");
                    }
                }
            }
        }
    }

    async fn handle(&mut self, d: Delivery) -> Result<(), WorkerError> {
        let batch_id = d.task.batch_id().to_string();
        let progress = self.queue.progress(&batch_id).await?;
        let spec = self.spec(&batch_id).await?;
        let (Some(progress), Some(spec)) = (progress, spec) else {
            tracing::error!(batch = batch_ref(&batch_id), entry_id = %d.entry_id, "task of a batch the queue does not know (expired or lost in a redis restart); discarding it");
            self.queue.discard(&d).await?;
            return Ok(());
        };
        if matches!(progress.state, BatchState::Cancelled | BatchState::Failed | BatchState::Done) {
            tracing::info!(
                batch = batch_ref(&batch_id),
                state = progress.state.as_str(),
                "skipping a task of a finished batch"
            );
            self.queue.discard(&d).await?;
            // A failed or cancelled batch gets no tables: the parts its chunks left are waste.
            if progress.state != BatchState::Done && !self.cfg.keep_parts {
                let (dir, id) = (self.cfg.results_dir.clone(), batch_id.clone());
                let _ = tokio::task::spawn_blocking(move || remove_parts(&dir, &id)).await;
            }
            return Ok(());
        }
        match &d.task {
            Task::Chunk(chunk) => {
                let dead_reason = (d.deliveries > self.cfg.max_deliveries).then(|| {
                    format!(
                        "not computed: chunk {} was delivered {} times without completing (a worker crashed or timed out on it) and was dead-lettered; resubmit these cases",
                        chunk.seq, d.deliveries
                    )
                });
                if let Some(reason) = &dead_reason {
                    tracing::error!(
                        batch = batch_ref(&batch_id),
                        seq = chunk.seq,
                        deliveries = d.deliveries,
                        "dead-lettering a chunk"
                    );
                    self.queue.dead_letter(&d, reason).await?;
                }
                let (reply, rx) = oneshot::channel();
                let seq = chunk.seq;
                self.jobs
                    .send(Job::Chunk {
                        spec,
                        chunk: chunk.clone(),
                        dead_reason,
                        reply,
                    })
                    .map_err(|_| WorkerError::EngineGone)?;
                let started = Instant::now();
                let report = self.hold(&d, rx).await??;
                self.queue.complete_chunk(&d, seq, report).await?;
                let m = crate::metrics::registry();
                m.chunks.add(1);
                m.chunks_dead_lettered.add(u64::from(report.dead_lettered));
                m.chunk_seconds.observe(started.elapsed().as_secs_f64());
                // The batch may have failed (or been cancelled) while this chunk ran: its parts
                // then go now, as nobody will finalize them.
                if !self.cfg.keep_parts {
                    if let Ok(Some(p)) = self.queue.progress(&batch_id).await {
                        if matches!(p.state, BatchState::Failed | BatchState::Cancelled) {
                            let (dir, id) = (self.cfg.results_dir.clone(), batch_id.clone());
                            let _ = tokio::task::spawn_blocking(move || remove_parts(&dir, &id)).await;
                        }
                    }
                }
                self.stats.chunks += 1;
                self.stats.cases += report.cases;
                self.stats.dead_lettered += u64::from(report.dead_lettered);
                tracing::debug!(
                    batch = batch_ref(&batch_id),
                    seq,
                    cases = report.cases,
                    errors = report.errors,
                    "chunk committed"
                );
            }
            Task::Finalize { .. } => {
                let (reply, rx) = oneshot::channel();
                self.jobs
                    .send(Job::Finalize { spec, progress, reply })
                    .map_err(|_| WorkerError::EngineGone)?;
                let outcome = match self.hold(&d, rx).await? {
                    Ok(m) => {
                        tracing::info!(
                            batch = batch_ref(&batch_id),
                            cases = m.counts.cases,
                            errors = m.counts.cases_error,
                            routes = m.counts.routes,
                            seconds = m.timings.elapsed_seconds,
                            "batch tables written"
                        );
                        Finalized::Done
                    }
                    Err(e) => {
                        tracing::error!(batch = batch_ref(&batch_id), error = %e, "finalizing failed; the batch is failed");
                        Finalized::Failed {
                            message: format!("writing the tables failed: {e}"),
                        }
                    }
                };
                let done = outcome == Finalized::Done;
                let m = crate::metrics::registry();
                if done {
                    m.finalized_done.add(1);
                } else {
                    m.finalized_failed.add(1);
                }
                self.queue.complete_finalize(&d, outcome).await?;
                crate::fault::at(crate::fault::DONE_RECORDED);
                // Parts go only once DONE is recorded: a crash before this line leaves a
                // redelivered finalize everything it needs.
                if done && !self.cfg.keep_parts {
                    let (dir, id) = (self.cfg.results_dir.clone(), batch_id.clone());
                    let _ = tokio::task::spawn_blocking(move || remove_parts(&dir, &id)).await;
                }
                self.stats.finalized += 1;
            }
        }
        Ok(())
    }
}

/// A short, non-secret reference to a batch for logs: its first 8 hex digits (the full id is a
/// capability and stays out of logs).
fn batch_ref(batch_id: &str) -> &str {
    batch_id.get(..8).unwrap_or(batch_id)
}
