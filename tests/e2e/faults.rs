//! Faults a service left running meets: Redis killed and restarted mid-batch (with and without
//! its data), a submission that breaks off. Real redis-server, real gRPC on loopback, no process
//! other than Redis restarted.

use super::*;
use tonic_health::pb::health_check_response::ServingStatus;
use tonic_health::pb::health_client::HealthClient;
use tonic_health::pb::HealthCheckRequest;

/// The demo's cases under fresh ids, `copies` times: a batch long enough to fault in the middle.
fn many_cases(copies: usize) -> Vec<thermosieve_model::CaseInput> {
    let demo = demo_cases();
    (0..copies)
        .flat_map(|k| {
            demo.iter().cloned().map(move |mut c| {
                c.case_id = format!("{}#{k}", c.case_id);
                c.route_id = c.route_id.map(|r| format!("{r}#{k}"));
                c
            })
        })
        .collect()
}

async fn health(addr: std::net::SocketAddr) -> i32 {
    let channel = tonic::transport::Channel::from_shared(format!("http://{addr}"))
        .unwrap()
        .connect()
        .await
        .expect("health connects");
    let mut h = HealthClient::new(channel);
    h.check(HealthCheckRequest { service: String::new() })
        .await
        .map_or(-1, |r| r.into_inner().status)
}

async fn wait_health(addr: std::net::SocketAddr, want: ServingStatus) {
    let deadline = tokio::time::Instant::now() + Duration::from_secs(20);
    while health(addr).await != want as i32 {
        assert!(tokio::time::Instant::now() < deadline, "health never became {want:?}");
        tokio::time::sleep(Duration::from_millis(100)).await;
    }
}

async fn wait_chunks_done(client: &mut ScreeningClient<tonic::transport::Channel>, id: &str, n: u64) {
    let deadline = tokio::time::Instant::now() + Duration::from_secs(60);
    loop {
        let s = client
            .get_batch_status(pb::GetBatchStatusRequest { batch_id: id.into() })
            .await
            .expect("status")
            .into_inner();
        if s.chunks_done >= n {
            assert!(s.chunks_done < s.chunks_total, "the batch ended before the fault: {s:?}");
            return;
        }
        assert!(tokio::time::Instant::now() < deadline, "{s:?}");
        tokio::time::sleep(Duration::from_millis(20)).await;
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_redis_restart_with_its_data_mid_batch_is_ridden_out_and_the_batch_completes() {
    let mut svc = Service::start_with(
        1,
        |c| c.reclaim_idle = Duration::from_secs(30),
        thermosieve_front::Access::default(),
        RedisServer::start_with_aof(),
        |_| {},
    )
    .await;
    let mut client = svc.client().await;
    let cases = many_cases(3);
    // The same batch without a fault first, for the time it takes (printed, not asserted).
    let t0 = std::time::Instant::now();
    let calm = submit(&mut client, &cases, 50).await;
    wait_done(&mut client, &calm).await;
    let calm_s = t0.elapsed().as_secs_f64();
    let t0 = std::time::Instant::now();
    let id = submit(&mut client, &cases, 50).await;
    wait_chunks_done(&mut client, &id, 3).await;

    // Redis dies (no shutdown save: only the append-only file keeps the state). Health follows.
    svc.redis.kill();
    wait_health(svc.addr, ServingStatus::NotServing).await;
    let e = client
        .get_batch_status(pb::GetBatchStatusRequest { batch_id: id.clone() })
        .await
        .unwrap_err();
    assert_eq!(e.code(), tonic::Code::Unavailable, "{e}");
    tokio::time::sleep(Duration::from_millis(500)).await;
    svc.redis.restart();
    wait_health(svc.addr, ServingStatus::Serving).await;

    // Nobody restarts the front or the worker: the batch finishes, every case exactly once.
    let done = wait_done(&mut client, &id).await;
    let faulted = t0.elapsed();
    assert_eq!(done.cases_done, cases.len() as u64);
    let table = read_table_bytes(fetch(&mut client, &id, pb::Table::Cases).await);
    each_case_once(&table, &cases);
    eprintln!(
        "batch of {} cases: {calm_s:.1} s without a fault, {:.1} s with a redis restart",
        cases.len(),
        faulted.as_secs_f64()
    );
    svc.stop().await;
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_redis_restart_without_its_data_reports_the_batch_failed() {
    let mut svc = Service::start(1, |_| {}).await;
    let mut client = svc.client().await;
    let cases = many_cases(3);
    let id = submit(&mut client, &cases, 50).await;
    wait_chunks_done(&mut client, &id, 2).await;
    svc.redis.kill();
    svc.redis.restart();
    // The batch is reported FAILED with a message that says why, never NOT_FOUND or a hang.
    let deadline = tokio::time::Instant::now() + Duration::from_secs(30);
    let s = loop {
        match client.get_batch_status(pb::GetBatchStatusRequest { batch_id: id.clone() }).await {
            Ok(s) if s.get_ref().state == pb::BatchState::Failed as i32 => break s.into_inner(),
            Ok(s) => panic!("{:?}", s.into_inner()),
            Err(e) => {
                assert_eq!(e.code(), tonic::Code::Unavailable, "{e}");
                assert!(tokio::time::Instant::now() < deadline, "{e}");
                tokio::time::sleep(Duration::from_millis(100)).await;
            }
        }
    };
    assert!(s.message.contains("lost this batch's state"), "{s:?}");
    // Watching it ends at once, FAILED.
    let mut w = client
        .watch_batch(pb::WatchBatchRequest { batch_id: id.clone() })
        .await
        .expect("watch")
        .into_inner();
    let last = w.message().await.expect("watch stream").expect("a status");
    assert_eq!(last.state, pb::BatchState::Failed as i32);
    // The service keeps working: a new batch completes on the same processes.
    let small = &cases[..40];
    let id2 = submit(&mut client, small, 0).await;
    let done = wait_done(&mut client, &id2).await;
    assert_eq!(done.cases_done, small.len() as u64);
    svc.stop().await;
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_submission_that_breaks_off_fails_its_batch_and_leaves_no_parts() {
    let svc = Service::start(1, |_| {}).await;
    let mut client = svc.client().await;
    let cases = many_cases(1);
    // A client that sends a header and some chunks' worth of cases, then vanishes without
    // closing its stream.
    let (tx, rx) = tokio::sync::mpsc::channel::<pb::SubmitBatchRequest>(16);
    let call = tokio::spawn(async move { client.submit_batch(tokio_stream::wrappers::ReceiverStream::new(rx)).await });
    tx.send(pb::SubmitBatchRequest {
        item: Some(pb::submit_batch_request::Item::Header(pb::BatchHeader {
            chunk_size: 20,
            ..Default::default()
        })),
    })
    .await
    .unwrap();
    for m in thermosieve_cli::submit::case_messages(cases[..300].iter().cloned()) {
        tx.send(m).await.unwrap();
    }
    let mut redis = redis::Client::open(svc.redis.url())
        .unwrap()
        .get_multiplexed_async_connection()
        .await
        .unwrap();
    // Wait until the front has enqueued chunks of it, then drop the client mid-stream.
    let key = loop {
        let keys: Vec<String> = redis::cmd("KEYS").arg("thermosieve:batch:*").query_async(&mut redis).await.unwrap();
        if let Some(k) = keys.into_iter().find(|k| !k.ends_with(":done")) {
            let chunks: Option<u64> = redis::cmd("HGET")
                .arg(&k)
                .arg("chunks_total")
                .query_async(&mut redis)
                .await
                .unwrap();
            if chunks.unwrap_or(0) >= 5 {
                break k;
            }
        }
        tokio::time::sleep(Duration::from_millis(20)).await;
    };
    call.abort();
    drop(tx);
    let id = key.trim_start_matches("thermosieve:batch:").to_string();
    let deadline = tokio::time::Instant::now() + Duration::from_secs(20);
    loop {
        let state: Option<String> = redis::cmd("HGET").arg(&key).arg("state").query_async(&mut redis).await.unwrap();
        if state.as_deref() == Some("failed") {
            break;
        }
        assert!(tokio::time::Instant::now() < deadline, "batch state {state:?}");
        tokio::time::sleep(Duration::from_millis(50)).await;
    }
    let message: String = redis::cmd("HGET").arg(&key).arg("message").query_async(&mut redis).await.unwrap();
    assert!(message.contains("submission"), "{message}");
    // Its chunks are skipped and their parts removed: nothing of it stays on disk.
    let parts = svc.results.path().join(&id).join("parts");
    let deadline = tokio::time::Instant::now() + Duration::from_secs(20);
    while parts.exists() {
        let pending: u64 = redis::cmd("XLEN").arg("thermosieve:tasks").query_async(&mut redis).await.unwrap();
        assert!(
            tokio::time::Instant::now() < deadline,
            "{} still exists ({pending} entries queued)",
            parts.display()
        );
        tokio::time::sleep(Duration::from_millis(100)).await;
    }
    assert!(!svc.results.path().join(&id).join("cases.parquet").exists());
    svc.stop().await;
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_healthy_slow_chunk_keeps_its_lease_and_is_computed_once() {
    // Reclaim after 300 ms of silence, dead-letter on the second delivery: without a lease, the
    // other worker would take over a long chunk and it would come back as error rows.
    let svc = Service::start(2, |c| {
        c.reclaim_idle = Duration::from_millis(300);
        c.max_deliveries = 1;
    })
    .await;
    let mut client = svc.client().await;
    let cases = many_cases(3);
    let t0 = std::time::Instant::now();
    let id = submit(&mut client, &cases, 10_000).await;
    let done = wait_done(&mut client, &id).await;
    let secs = t0.elapsed().as_secs_f64();
    // The 1 MiB chunk cap cuts the 5,997 cases into a few long chunks, two running at a time:
    // on average each must outlast the 300 ms reclaim time (by half again) to prove a lease.
    let rounds = done.chunks_total.div_ceil(2) as f64;
    assert!(
        secs / rounds > 0.45,
        "{} chunks in {secs:.2} s: too short to prove a lease (each must outlast the 300 ms reclaim time)",
        done.chunks_total
    );
    assert_eq!(done.chunks_dead_lettered, 0, "{done:?}");
    let table = read_table_bytes(fetch(&mut client, &id, pb::Table::Cases).await);
    each_case_once(&table, &cases);
    // The demo's 5 deliberate error rows per copy, no more.
    assert_eq!(done.cases_error, 15, "{done:?}");
    svc.stop().await;
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_batch_left_receiving_is_failed_as_abandoned_on_both_backends() {
    let redis = RedisServer::start();
    let backends: [(&str, Arc<dyn Queue>); 2] = [
        ("memory", Arc::new(thermosieve_queue::MemoryQueue::new())),
        ("redis", redis_queue(&redis.url()).await),
    ];
    for (name, q) in backends {
        let limits = IngestLimits::default();
        let start = |q: Arc<dyn Queue>| {
            let spec = batch_spec(
                BatchOptions {
                    chunk_size: 2,
                    ..Default::default()
                },
                &limits,
            )
            .unwrap();
            Ingest::start(q, spec, limits.clone())
        };
        // A front took five cases, then went away without sealing.
        let mut gone = start(q.clone()).await.unwrap();
        for c in demo_cases().into_iter().take(5) {
            gone.push(c).await.unwrap();
        }
        let gone_id = gone.batch_id().to_string();
        drop(gone);
        let mut sealed = start(q.clone()).await.unwrap();
        for c in demo_cases().into_iter().take(3) {
            sealed.push(c).await.unwrap();
        }
        let sealed_id = sealed.finish().await.unwrap().batch_id;
        assert!(
            q.expire_receiving(Duration::from_secs(3600)).await.unwrap().is_empty(),
            "{name}: too early"
        );
        tokio::time::sleep(Duration::from_millis(50)).await;
        assert_eq!(
            q.expire_receiving(Duration::from_millis(10)).await.unwrap(),
            vec![gone_id.clone()],
            "{name}"
        );
        let p = q.progress(&gone_id).await.unwrap().unwrap();
        assert_eq!(
            (p.state, p.message.as_str()),
            (BatchState::Failed, thermosieve_queue::ABANDONED),
            "{name}"
        );
        assert_ne!(q.progress(&sealed_id).await.unwrap().unwrap().state, BatchState::Failed, "{name}");
        assert!(
            q.expire_receiving(Duration::from_millis(10)).await.unwrap().is_empty(),
            "{name}: twice"
        );
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_front_fails_a_submission_its_owner_abandoned() {
    let svc = Service::start_with(
        1,
        |_| {},
        thermosieve_front::Access::default(),
        RedisServer::start(),
        |f| f.receiving_timeout = Duration::from_millis(400),
    )
    .await;
    // Another front, sharing the queue, took some cases and crashed.
    let q = redis_queue(&svc.redis.url()).await;
    let limits = IngestLimits::default();
    let spec = batch_spec(BatchOptions::default(), &limits).unwrap();
    let mut gone = Ingest::start(q, spec, limits).await.unwrap();
    gone.push(demo_cases().remove(0)).await.unwrap();
    let id = gone.batch_id().to_string();
    drop(gone);
    let mut client = svc.client().await;
    let deadline = tokio::time::Instant::now() + Duration::from_secs(20);
    loop {
        let s = client
            .get_batch_status(pb::GetBatchStatusRequest { batch_id: id.clone() })
            .await
            .expect("status")
            .into_inner();
        if s.state == pb::BatchState::Failed as i32 {
            assert_eq!(s.message, thermosieve_queue::ABANDONED);
            break;
        }
        assert!(tokio::time::Instant::now() < deadline, "{s:?}");
        tokio::time::sleep(Duration::from_millis(100)).await;
    }
    svc.stop().await;
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn submissions_past_the_tenants_limit_are_refused_with_a_retry_hint() {
    let svc = Service::start_with(
        1,
        |_| {},
        thermosieve_front::Access::default(),
        RedisServer::start(),
        |f| f.limits.max_submissions_per_tenant = 2,
    )
    .await;
    // Two submissions stay open (header sent, stream not closed); a third is refused.
    let mut open = Vec::new();
    for _ in 0..2 {
        let mut c = svc.client().await;
        let (tx, rx) = tokio::sync::mpsc::channel::<pb::SubmitBatchRequest>(4);
        tx.send(pb::SubmitBatchRequest {
            item: Some(pb::submit_batch_request::Item::Header(pb::BatchHeader::default())),
        })
        .await
        .unwrap();
        let call = tokio::spawn(async move { c.submit_batch(tokio_stream::wrappers::ReceiverStream::new(rx)).await });
        open.push((tx, call));
    }
    tokio::time::sleep(Duration::from_millis(300)).await;
    let mut client = svc.client().await;
    let e = client
        .submit_batch(tokio_stream::iter(vec![pb::SubmitBatchRequest {
            item: Some(pb::submit_batch_request::Item::Header(pb::BatchHeader::default())),
        }]))
        .await
        .unwrap_err();
    assert_eq!(e.code(), tonic::Code::ResourceExhausted, "{e}");
    assert!(e.message().contains("retry in"), "{e}");
    assert!(e.metadata().get("retry-after").is_some(), "{e:?}");
    // Closing one frees its place.
    let (tx, call) = open.pop().unwrap();
    drop(tx);
    call.await.unwrap().expect("the open submission completes");
    let id = submit(&mut client, &demo_cases()[..3], 0).await;
    wait_done(&mut client, &id).await;
    drop(open);
    svc.stop().await;
}
