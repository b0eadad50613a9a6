//! Embedded mode: front logic, an in-process queue and workers in one process, no Redis. The
//! `thermosieve run` command and the tests use it; it goes through the same ingest, queue
//! semantics, worker and finalizer as the service.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Duration;
use thermosieve_front::ingest::{batch_spec, BatchOptions, Ingest, IngestLimits, Submitted};
use thermosieve_front::FrontError;
use thermosieve_model::{BatchState, CaseInput, Progress};
use thermosieve_queue::{MemoryQueue, Queue};
use thermosieve_worker::{WorkerConfig, WorkerStats};

/// The outcome of an embedded run.
#[derive(Debug)]
pub struct RunOutcome {
    pub submitted: Submitted,
    pub progress: Progress,
    /// The batch folder with the tables.
    pub batch_dir: PathBuf,
    pub worker: WorkerStats,
}

/// Screen `cases` into `out_dir/<batch_id>/`.
///
/// # Errors
/// Invalid options, or a worker that cannot start.
pub async fn run_cases(
    cases: impl Iterator<Item = CaseInput> + Send,
    options: BatchOptions,
    out_dir: &Path,
    threads: usize,
) -> Result<RunOutcome, FrontError> {
    let memory = Arc::new(MemoryQueue::new());
    let queue: Arc<dyn Queue> = memory.clone();
    // Embedded mode has no other submitters: the queue may hold any depth, but stays bounded by
    // the workers' pace through the same backpressure as the service.
    let limits = IngestLimits {
        max_queue_depth: (threads as u64) * 8,
        enqueue_wait: Duration::from_secs(24 * 3600),
        ..IngestLimits::default()
    };
    let spec = batch_spec(options, &limits)?;
    let batch_id = spec.batch_id.clone();
    let mut cfg = WorkerConfig::new(out_dir);
    cfg.threads = threads.max(1);
    cfg.consumer = "embedded".into();
    cfg.block = Duration::from_millis(200);
    let (stop_tx, stop_rx) = tokio::sync::oneshot::channel::<()>();
    let mut worker = tokio::spawn(thermosieve_worker::run(queue.clone(), cfg, async move {
        let _ = stop_rx.await;
    }));
    let batch = async {
        let mut ingest = Ingest::start(queue.clone(), spec, limits).await?;
        for case in cases {
            ingest.push(case).await?;
        }
        let submitted = ingest.finish().await?;
        let progress = memory.wait_final(&batch_id).await.ok_or_else(|| FrontError::BatchEnded {
            state: "lost",
            message: "the in-process queue lost the batch".into(),
        })?;
        Ok::<_, FrontError>((submitted, progress))
    };
    // A worker returns only when told to stop: one that ends first (an engine thread that could
    // not start, a panic) would leave the batch waiting for ever.
    let (submitted, progress) = tokio::select! {
        ended = batch => ended?,
        early = &mut worker => {
            return Err(match early {
                Ok(Err(e)) => e.into(),
                Err(source) => FrontError::Task { what: "the worker", source },
                Ok(Ok(_)) => FrontError::BatchEnded {
                    state: "failed",
                    message: "the worker stopped before the batch ended".into(),
                },
            });
        }
    };
    let _ = stop_tx.send(());
    let worker = worker.await.map_err(|source| FrontError::Task {
        what: "the worker",
        source,
    })??;
    if progress.state != BatchState::Done {
        return Err(FrontError::BatchEnded {
            state: progress.state.as_str(),
            message: progress.message,
        });
    }
    Ok(RunOutcome {
        batch_dir: out_dir.join(&batch_id),
        submitted,
        progress,
        worker,
    })
}
