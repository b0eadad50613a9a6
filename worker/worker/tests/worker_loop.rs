//! The worker loop on the in-process queue (the embedded mode's backend), real processes of
//! time kept short: a chunk a crashed consumer held is reclaimed and computed once; a chunk
//! delivered more often than allowed is dead-lettered into error rows; a shutdown ends the loop.
//! The same loop on Redis is tested end to end in `tests/e2e`.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use std::path::Path;
use std::sync::Arc;
use std::time::Duration;
use thermosieve_model::{BatchSpec, BatchState, CaseInput, Chunk, Conditions, Progress, Table};
use thermosieve_queue::{MemoryQueue, Queue};
use thermosieve_worker::parts::read_parquet;
use thermosieve_worker::{run, WorkerConfig, WorkerStats};

const ID: &str = "100b0000000000000000000000000001";

fn spec() -> BatchSpec {
    BatchSpec {
        batch_id: ID.into(),
        temperatures_k: vec![298.15, 400.0],
        default_conditions: Conditions::default(),
        chunk_size: 3,
        label: "worker loop".into(),
        created_unix_ms: 0,
        tenant: String::new(),
    }
}

/// One chunk of three combustions, queued and sealed.
async fn one_chunk(q: &dyn Queue) {
    q.create_batch(&spec()).await.unwrap();
    let cases: Vec<CaseInput> = (0..3)
        .map(|i| CaseInput {
            case_id: format!("burn-{i}"),
            reaction: "2 H2(g) + O2(g) -> 2 H2O(l)".into(),
            row: i + 1,
            ..CaseInput::default()
        })
        .collect();
    q.enqueue(
        &Chunk {
            batch_id: ID.into(),
            seq: 0,
            cases: cases.into(),
        },
        u64::MAX,
    )
    .await
    .unwrap();
    q.seal(ID).await.unwrap();
}

fn config(dir: &Path, max_deliveries: u64) -> WorkerConfig {
    let mut cfg = WorkerConfig::new(dir);
    cfg.threads = 1;
    cfg.consumer = "loop".into();
    cfg.block = Duration::from_millis(100);
    cfg.reclaim_idle = Duration::from_millis(300);
    cfg.max_deliveries = max_deliveries;
    cfg
}

/// Start the loop; the sender stops it.
fn start(q: Arc<dyn Queue>, cfg: WorkerConfig) -> (tokio::sync::oneshot::Sender<()>, tokio::task::JoinHandle<WorkerStats>) {
    let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
    let handle = tokio::spawn(async move {
        run(q, cfg, async move {
            let _ = stopped.await;
        })
        .await
        .unwrap()
    });
    (stop, handle)
}

async fn wait_final(q: &dyn Queue) -> Progress {
    for _ in 0..3000 {
        if let Some(p) = q.progress(ID).await.unwrap() {
            if p.state.is_final() {
                return p;
            }
        }
        tokio::time::sleep(Duration::from_millis(20)).await;
    }
    panic!("batch not final within 60 s: {:?}", q.progress(ID).await.unwrap());
}

fn case_column(dir: &Path, column: &str) -> Vec<String> {
    let df = read_parquet(&dir.join(ID).join(Table::Cases.file_name())).unwrap();
    let c = df.column(column).unwrap().str().unwrap();
    (0..df.height()).map(|i| c.get(i).unwrap_or_default().to_string()).collect()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_chunk_a_crashed_consumer_held_is_reclaimed_and_computed_once() {
    let tmp = tempfile::tempdir().unwrap();
    let q: Arc<dyn Queue> = Arc::new(MemoryQueue::new());
    one_chunk(q.as_ref()).await;
    // A consumer reads the chunk and dies without acknowledging it.
    let lost = q.poll("crashed", Duration::from_millis(200)).await.unwrap().unwrap();
    assert_eq!(lost.deliveries, 1);
    let (stop, handle) = start(q.clone(), config(tmp.path(), 3));
    let p = wait_final(q.as_ref()).await;
    assert_eq!(
        (p.state, p.chunks_done, p.chunks_dead, p.cases_done, p.cases_error),
        (BatchState::Done, 1, 0, 3, 0)
    );
    let _ = stop.send(());
    let stats = handle.await.unwrap();
    assert_eq!((stats.chunks, stats.cases, stats.finalized), (1, 3, 1));
    assert_eq!(case_column(tmp.path(), "case_id"), ["burn-0", "burn-1", "burn-2"]);
    assert_eq!(case_column(tmp.path(), "status"), ["ok", "ok", "ok"]);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_chunk_delivered_too_often_becomes_error_rows_and_a_dead_letter() {
    let tmp = tempfile::tempdir().unwrap();
    let memory = Arc::new(MemoryQueue::new());
    let q: Arc<dyn Queue> = memory.clone();
    one_chunk(q.as_ref()).await;
    // One delivery allowed: the crashed consumer used it, so the reclaimed one is too many.
    q.poll("crashed", Duration::from_millis(200)).await.unwrap().unwrap();
    let (stop, handle) = start(q.clone(), config(tmp.path(), 1));
    let p = wait_final(q.as_ref()).await;
    assert_eq!((p.state, p.chunks_dead, p.cases_error), (BatchState::Done, 1, 3));
    let _ = stop.send(());
    assert_eq!(handle.await.unwrap().dead_lettered, 1);
    assert_eq!(memory.dead_letters().len(), 1);
    assert_eq!(case_column(tmp.path(), "status"), ["error", "error", "error"]);
    for m in case_column(tmp.path(), "error_message") {
        assert!(m.contains("dead-lettered") && m.contains("resubmit"), "{m}");
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_shutdown_ends_an_idle_loop_without_waiting_out_its_poll() {
    let tmp = tempfile::tempdir().unwrap();
    let q: Arc<dyn Queue> = Arc::new(MemoryQueue::new());
    let mut cfg = config(tmp.path(), 3);
    // A poll that would block for a minute: the shutdown must not wait for it.
    cfg.block = Duration::from_secs(60);
    let (stop, handle) = start(q, cfg);
    tokio::time::sleep(Duration::from_millis(200)).await;
    let _ = stop.send(());
    let stats = tokio::time::timeout(Duration::from_secs(30), handle)
        .await
        .expect("the loop ended on shutdown, not after its 60 s poll")
        .unwrap();
    assert_eq!(stats, WorkerStats::default());
}
