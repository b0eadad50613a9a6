//! One set of state-machine checks run against both queue backends: the in-process queue and
//! Redis Streams on a real redis-server. What one backend does, the other must do too.

use super::*;
use thermosieve_model::{BatchSpec, CaseInput, Chunk, ChunkReport, Conditions, Task};
use thermosieve_queue::{Delivery, Finalized, MemoryQueue, QueueError};

fn spec(id: &str) -> BatchSpec {
    BatchSpec {
        batch_id: id.into(),
        temperatures_k: vec![300.0],
        default_conditions: Conditions::default(),
        chunk_size: 2,
        label: String::new(),
        created_unix_ms: thermosieve_model::now_unix_ms(),
        tenant: String::new(),
    }
}

fn chunk(id: &str, seq: u64, n: usize) -> Chunk {
    Chunk {
        batch_id: id.into(),
        seq,
        cases: (0..n)
            .map(|i| CaseInput {
                case_id: format!("c{seq}-{i}"),
                reaction: "CO + O2 -> CO2".into(),
                ..Default::default()
            })
            .collect(),
    }
}

fn report(cases: u64, errors: u64, dead: bool) -> ChunkReport {
    ChunkReport {
        cases,
        errors,
        dead_lettered: dead,
    }
}

async fn next(q: &Arc<dyn Queue>, consumer: &str) -> Delivery {
    q.poll(consumer, Duration::from_millis(200)).await.unwrap().expect("a task")
}

async fn state(q: &Arc<dyn Queue>, id: &str) -> BatchState {
    q.progress(id).await.unwrap().expect("known batch").state
}

/// A batch's whole life: chunks, one completed twice (counted once), finalize, done.
async fn lifecycle(q: &Arc<dyn Queue>, b: &str) {
    q.create_batch(&spec(b)).await.unwrap();
    assert_eq!(state(q, b).await, BatchState::Receiving);
    assert_eq!(q.batch_spec(b).await.unwrap().unwrap().batch_id, b);
    q.enqueue(&chunk(b, 0, 2), u64::MAX).await.unwrap();
    q.enqueue(&chunk(b, 1, 1), u64::MAX).await.unwrap();
    // A retry of an enqueue whose reply was lost adds nothing.
    q.enqueue(&chunk(b, 1, 1), u64::MAX).await.unwrap();
    q.seal(b).await.unwrap();
    assert_eq!(state(q, b).await, BatchState::Running);
    assert_eq!(q.progress(b).await.unwrap().unwrap().chunks_total, 2);
    let s = q.stats().await.unwrap();
    assert_eq!((s.waiting, s.in_flight), (2, 0));
    assert!(s.batches.contains(&(BatchState::Running, 1)), "{s:?}");
    let d0 = next(q, "w1").await;
    assert_eq!(d0.deliveries, 1);
    let s = q.stats().await.unwrap();
    assert_eq!((s.waiting, s.in_flight), (1, 1));
    assert!(matches!(&d0.task, Task::Chunk(c) if c.seq == 0 && c.cases.len() == 2));
    // Nobody completes d0 in time: it is reclaimed with a second delivery.
    let again = q.reclaim("w2", Duration::ZERO, 10).await.unwrap();
    assert_eq!(again.len(), 1);
    assert_eq!((again[0].entry_id.as_str(), again[0].deliveries), (d0.entry_id.as_str(), 2));
    q.complete_chunk(&d0, 0, report(2, 0, false)).await.unwrap();
    q.complete_chunk(&again[0], 0, report(2, 0, false)).await.unwrap();
    let p = q.progress(b).await.unwrap().unwrap();
    assert_eq!((p.chunks_done, p.cases_done, p.state), (1, 2, BatchState::Running));
    let d1 = next(q, "w1").await;
    q.complete_chunk(&d1, 1, report(1, 1, false)).await.unwrap();
    let p = q.progress(b).await.unwrap().unwrap();
    assert_eq!(
        (p.chunks_total, p.chunks_done, p.cases_total, p.cases_done, p.cases_error, p.state),
        (2, 2, 3, 3, 1, BatchState::Finalizing)
    );
    let f = next(q, "w1").await;
    assert_eq!(f.task, Task::Finalize { batch_id: b.into() });
    q.complete_finalize(&f, Finalized::Done).await.unwrap();
    let p = q.progress(b).await.unwrap().unwrap();
    assert_eq!(p.state, BatchState::Done);
    assert!(p.finished_unix_ms.is_some());
    // A final state is final: neither a cancel nor a failure changes it.
    assert_eq!(q.stop_batch(b, BatchState::Cancelled, "late").await.unwrap(), BatchState::Done);
    assert_eq!(state(q, b).await, BatchState::Done);
    assert_eq!(q.depth().await.unwrap(), 0);
}

/// Edges: an empty batch, a sealed batch, an unknown batch.
async fn edges(q: &Arc<dyn Queue>, b: &str) {
    q.create_batch(&spec(b)).await.unwrap();
    q.seal(b).await.unwrap();
    assert_eq!(state(q, b).await, BatchState::Finalizing);
    assert!(matches!(
        q.enqueue(&chunk(b, 0, 1), u64::MAX).await,
        Err(QueueError::WrongState { .. })
    ));
    let f = next(q, "w1").await;
    q.complete_finalize(
        &f,
        Finalized::Failed {
            message: "writing the tables failed: disk full".into(),
        },
    )
    .await
    .unwrap();
    let p = q.progress(b).await.unwrap().unwrap();
    assert_eq!(p.state, BatchState::Failed);
    assert!(p.message.contains("disk full"), "{}", p.message);
    let unknown = format!("{b}-never");
    assert!(q.progress(&unknown).await.unwrap().is_none());
    assert!(q.batch_spec(&unknown).await.unwrap().is_none());
    assert!(matches!(
        q.enqueue(&chunk(&unknown, 0, 1), u64::MAX).await,
        Err(QueueError::UnknownBatch(_))
    ));
    assert!(matches!(q.seal(&unknown).await, Err(QueueError::UnknownBatch(_))));
}

/// The depth limit is checked where the chunk is added; cancelling stops a receiving batch and
/// its queued chunks are still handed out (workers skip them) until acknowledged.
async fn depth_and_cancel(q: &Arc<dyn Queue>, b: &str) {
    q.create_batch(&spec(b)).await.unwrap();
    q.enqueue(&chunk(b, 0, 1), 1).await.unwrap();
    match q.enqueue(&chunk(b, 1, 1), 1).await {
        Err(QueueError::Full { depth }) => assert_eq!(depth, 1),
        other => panic!("{other:?}"),
    }
    assert_eq!(q.progress(b).await.unwrap().unwrap().chunks_total, 1);
    assert_eq!(
        q.stop_batch(b, BatchState::Cancelled, "cancelled by a caller").await.unwrap(),
        BatchState::Cancelled
    );
    assert_eq!(
        q.stop_batch(b, BatchState::Failed, "too late").await.unwrap(),
        BatchState::Cancelled
    );
    assert!(matches!(
        q.enqueue(&chunk(b, 1, 1), u64::MAX).await,
        Err(QueueError::WrongState { .. })
    ));
    let d = next(q, "w1").await;
    q.discard(&d).await.unwrap();
    assert_eq!(q.depth().await.unwrap(), 0);
}

/// A lease renewed by its holder keeps a task from being reclaimed; a silent holder loses it.
async fn lease(q: &Arc<dyn Queue>, b: &str) {
    q.create_batch(&spec(b)).await.unwrap();
    q.enqueue(&chunk(b, 0, 1), u64::MAX).await.unwrap();
    q.seal(b).await.unwrap();
    let d = next(q, "w1").await;
    tokio::time::sleep(Duration::from_millis(150)).await;
    q.keep(&d, "w1").await.unwrap();
    assert!(q.reclaim("w2", Duration::from_millis(100), 10).await.unwrap().is_empty());
    tokio::time::sleep(Duration::from_millis(150)).await;
    let taken = q.reclaim("w2", Duration::from_millis(100), 10).await.unwrap();
    assert_eq!(taken.len(), 1);
    assert_eq!(taken[0].deliveries, 2, "a renewal is not a delivery");
    // Dead-lettered: its cases count as done and the chunk as dead.
    q.dead_letter(&taken[0], "delivered too often").await.unwrap();
    q.complete_chunk(&taken[0], 0, report(1, 1, true)).await.unwrap();
    let p = q.progress(b).await.unwrap().unwrap();
    assert_eq!((p.chunks_dead, p.cases_error, p.state), (1, 1, BatchState::Finalizing));
    let f = next(q, "w1").await;
    q.complete_finalize(&f, Finalized::Done).await.unwrap();
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn both_queue_backends_keep_the_same_state_machine() {
    let redis = RedisServer::start();
    let backends: [(&str, Arc<dyn Queue>); 2] = [("memory", Arc::new(MemoryQueue::new())), ("redis", redis_queue(&redis.url()).await)];
    for (name, q) in backends {
        lifecycle(&q, &format!("{name}-life")).await;
        edges(&q, &format!("{name}-edges")).await;
        depth_and_cancel(&q, &format!("{name}-depth")).await;
        lease(&q, &format!("{name}-lease")).await;
        assert_eq!(q.depth().await.unwrap(), 0, "{name}");
        let s = q.stats().await.unwrap();
        assert_eq!((s.waiting, s.in_flight, s.dead_letters), (0, 0, 1), "{name}");
        assert_eq!(
            s.batches,
            [
                (BatchState::Receiving, 0),
                (BatchState::Running, 0),
                (BatchState::Finalizing, 0),
                (BatchState::Done, 2),
                (BatchState::Failed, 1),
                (BatchState::Cancelled, 1),
            ],
            "{name}"
        );
    }
}
