//! The commands that run the service: `run` (embedded), `serve` (front), `work` (worker).

use super::*;

pub(super) async fn run(a: RunArgs) -> anyhow::Result<()> {
    let cases = open_input(&a.input, &a.format)?;
    let options = BatchOptions {
        temperatures_k: a.temperatures_k.unwrap_or_default(),
        chunk_size: a.chunk_size,
        label: a.label,
        ..BatchOptions::default()
    };
    std::fs::create_dir_all(&a.out).with_context(|| format!("creating {}", a.out.display()))?;
    let t0 = std::time::Instant::now();
    let outcome = thermosieve_cli::embedded::run_cases(cases, options, &a.out, threads(a.threads))
        .await
        .map_err(|e| match e {
            thermosieve_front::FrontError::InvalidArgument { field, reason } => {
                anyhow::Error::new(Usage(format!("{}: {reason}", field.replace("header.", "--").replace('_', "-"))))
            }
            other => anyhow::Error::new(other),
        })?;
    let s = &outcome.submitted;
    let p = &outcome.progress;
    let secs = t0.elapsed().as_secs_f64();
    println!(
        "batch {}: {} cases ({} ok, {} error) in {:.2} s ({:.0} cases/s)",
        s.batch_id,
        p.cases_done,
        p.cases_done - p.cases_error,
        p.cases_error,
        secs,
        p.cases_done as f64 / secs.max(1e-9)
    );
    for t in Table::ALL {
        println!("  {}", outcome.batch_dir.join(t.file_name()).display());
    }
    println!("caution: {}", thermosieve_engine::CAUTION);
    Ok(())
}

/// Start the `/metrics` listener on `addr`.
pub(super) async fn spawn_metrics<F, Fut>(addr: SocketAddr, body: F) -> anyhow::Result<()>
where
    F: Fn() -> Fut + Clone + Send + 'static,
    Fut: std::future::Future<Output = String> + Send + 'static,
{
    let listener = tokio::net::TcpListener::bind(addr)
        .await
        .with_context(|| format!("binding the metrics listener {addr}"))?;
    tracing::info!(%addr, "metrics at /metrics");
    tokio::spawn(thermosieve_worker::metrics::serve(listener, body));
    Ok(())
}

pub(super) async fn redis_queue(r: &RedisArgs) -> anyhow::Result<Arc<dyn Queue>> {
    let mut cfg = RedisConfig::new(r.redis_url.clone());
    cfg.prefix = r.redis_prefix.clone();
    cfg.retention = Duration::from_secs(r.retention_hours * 3600);
    // The URL may hold a password: never print it.
    let q = RedisQueue::connect(cfg)
        .await
        .context("connecting to redis (THERMOSIEVE_REDIS_URL)")?;
    Ok(Arc::new(q))
}

pub(super) async fn serve(a: ServeArgs) -> anyhow::Result<()> {
    let queue = redis_queue(&a.redis).await?;
    std::fs::create_dir_all(&a.results_dir).with_context(|| format!("creating {}", a.results_dir.display()))?;
    let cfg = FrontConfig {
        results_dir: a.results_dir,
        limits: IngestLimits {
            default_chunk_size: a.chunk_size,
            max_queue_depth: a.max_queue_depth,
            enqueue_wait: Duration::from_secs(a.enqueue_wait_s),
            max_submissions: a.max_submissions.max(1),
            max_submissions_per_tenant: a.max_submissions_per_tenant.max(1),
        },
        watch_interval: Duration::from_millis(250),
        receiving_timeout: Duration::from_secs(a.receiving_timeout_s.max(1)),
    };
    let access = Access {
        tls: match (&a.tls_cert, &a.tls_key) {
            (Some(cert), Some(key)) => Some(Access::tls_from_files(cert, key, a.tls_client_ca.as_deref())?),
            _ => None,
        },
        tokens: a.tokens_file.as_deref().map(Tokens::from_file).transpose()?,
    };
    if !a.listen.ip().is_loopback() && (access.tls.is_none() || access.tokens.is_none()) {
        tracing::warn!(
            listen = %a.listen,
            "the front listens beyond loopback without TLS and tokens: anyone who reaches the port can submit, and read a batch given its id"
        );
    }
    if let Some(addr) = a.metrics_listen {
        let q = queue.clone();
        spawn_metrics(addr, move || thermosieve_front::service::metrics_text(q.clone())).await?;
    }
    let listener = tokio::net::TcpListener::bind(a.listen)
        .await
        .with_context(|| format!("binding {}", a.listen))?;
    println!("listening on {}", listener.local_addr()?);
    thermosieve_front::serve(listener, Arc::new(Front::new(queue, cfg)), access, shutdown_signal()).await?;
    Ok(())
}

pub(super) async fn work(a: WorkArgs) -> anyhow::Result<()> {
    let queue = redis_queue(&a.redis).await?;
    let mut cfg = WorkerConfig::new(&a.results_dir);
    cfg.threads = threads(a.threads);
    if let Some(c) = a.consumer {
        cfg.consumer = c;
    } else {
        let host = std::fs::read_to_string("/etc/hostname")
            .map(|h| h.trim().to_string())
            .unwrap_or_else(|_| "worker".into());
        cfg.consumer = format!("{host}-{}", std::process::id());
    }
    cfg.reclaim_idle = Duration::from_secs(a.reclaim_idle_s.max(1));
    cfg.max_deliveries = a.max_deliveries.max(1);
    cfg.keep_parts = a.keep_parts;
    if let Some(addr) = a.metrics_listen {
        spawn_metrics(addr, || async {
            thermosieve_worker::metrics::render(thermosieve_worker::metrics::registry(), None)
        })
        .await?;
    }
    tracing::info!(consumer = %cfg.consumer, threads = cfg.threads, "worker starting");
    let stats = thermosieve_worker::run(queue, cfg, shutdown_signal()).await?;
    println!(
        "worker stopped: {} chunks, {} cases, {} dead-lettered, {} batches finalized",
        stats.chunks, stats.cases, stats.dead_lettered, stats.finalized
    );
    Ok(())
}
