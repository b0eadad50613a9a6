//! The service commands. `anyhow` lives here (binary start-up and reporting) and nowhere below.

use anyhow::{bail, Context};
use indicatif::{ProgressBar, ProgressStyle};
use std::net::SocketAddr;
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::Arc;
use std::time::Duration;
use thermosieve_front::auth::{Bearer, Tokens};
use thermosieve_front::ingest::{BatchOptions, IngestLimits};
use thermosieve_front::input::{self, Format};
use thermosieve_front::{convert, Access, Front, FrontConfig};
use thermosieve_model::Table;
use thermosieve_proto::v1 as pb;
use thermosieve_proto::v1::screening_client::ScreeningClient;
use thermosieve_queue::{Queue, RedisConfig, RedisQueue};
use thermosieve_worker::WorkerConfig;

/// Exit code: the batch ended failed or cancelled.
const EXIT_BATCH_FAILED: u8 = 4;

#[derive(clap::Args, Debug)]
pub struct RunArgs {
    /// Input table: .csv, .tsv, .jsonl or .parquet; required columns case_id, reaction.
    pub input: PathBuf,
    /// Folder for the batch folder (`<out>/<batch_id>/cases.parquet` ...).
    #[arg(long, env = "THERMOSIEVE_OUT")]
    pub out: PathBuf,
    /// Grid temperatures in K, comma-separated (default 273.15 to 623.15 K in 25 K steps).
    #[arg(long, value_delimiter = ',', env = "THERMOSIEVE_TEMPERATURES_K")]
    pub temperatures_k: Option<Vec<f64>>,
    /// Input format when the extension does not tell: csv, tsv, jsonl, parquet.
    #[arg(long, env = "THERMOSIEVE_FORMAT")]
    pub format: Option<String>,
    /// Cases per chunk.
    #[arg(long, default_value_t = 2000, env = "THERMOSIEVE_CHUNK_SIZE")]
    pub chunk_size: usize,
    /// Engine threads (default: all cores).
    #[arg(long, env = "THERMOSIEVE_THREADS")]
    pub threads: Option<usize>,
    /// Free text stored in the manifest.
    #[arg(long, default_value = "", env = "THERMOSIEVE_LABEL")]
    pub label: String,
}

#[derive(clap::Args, Debug)]
pub struct RedisArgs {
    /// Redis URL (a password belongs in this variable, never on a command line).
    #[arg(
        long,
        default_value = "redis://127.0.0.1:6379/",
        env = "THERMOSIEVE_REDIS_URL",
        hide_env_values = true
    )]
    pub redis_url: String,
    /// Key prefix in Redis.
    #[arg(long, default_value = "thermosieve", env = "THERMOSIEVE_REDIS_PREFIX")]
    pub redis_prefix: String,
    /// Hours a finished batch's state is kept in Redis.
    #[arg(long, default_value_t = 168, env = "THERMOSIEVE_RETENTION_HOURS")]
    pub retention_hours: u64,
}

#[derive(clap::Args, Debug)]
pub struct ServeArgs {
    /// Address to listen on. Loopback by default; to expose the front, give an address and
    /// set --tls-cert/--tls-key and --tokens-file.
    #[arg(long, default_value = "127.0.0.1:50051", env = "THERMOSIEVE_LISTEN")]
    pub listen: SocketAddr,
    /// The front's TLS certificate chain (PEM); with --tls-key, the front speaks only TLS.
    #[arg(long, env = "THERMOSIEVE_TLS_CERT", requires = "tls_key")]
    pub tls_cert: Option<PathBuf>,
    /// The private key of --tls-cert (PEM file).
    #[arg(long, env = "THERMOSIEVE_TLS_KEY", requires = "tls_cert")]
    pub tls_key: Option<PathBuf>,
    /// CA certificate (PEM): clients must present a certificate it signed.
    #[arg(long, env = "THERMOSIEVE_TLS_CLIENT_CA", requires = "tls_cert")]
    pub tls_client_ca: Option<PathBuf>,
    /// Serve Prometheus metrics at http://ADDR/metrics (off when not given).
    #[arg(long, env = "THERMOSIEVE_METRICS_LISTEN")]
    pub metrics_listen: Option<SocketAddr>,
    /// Bearer tokens: one `tenant token` pair per line; each tenant sees only its own batches.
    /// Without it every caller is one anonymous tenant.
    #[arg(long, env = "THERMOSIEVE_TOKENS_FILE")]
    pub tokens_file: Option<PathBuf>,
    /// Results folder shared with the workers.
    #[arg(long, env = "THERMOSIEVE_RESULTS_DIR")]
    pub results_dir: PathBuf,
    #[command(flatten)]
    pub redis: RedisArgs,
    /// Default cases per chunk.
    #[arg(long, default_value_t = 2000, env = "THERMOSIEVE_CHUNK_SIZE")]
    pub chunk_size: usize,
    /// Queue depth (chunks) above which submissions get RESOURCE_EXHAUSTED.
    /// Redis holds about this many chunks' cases at most (a chunk is at most about 1 MiB of case
    /// text: a 2,000-case chunk of the demo is about 0.9 MB in Redis).
    #[arg(long, default_value_t = 256, env = "THERMOSIEVE_MAX_QUEUE_DEPTH")]
    pub max_queue_depth: u64,
    /// Seconds a submission waits for queue room before RESOURCE_EXHAUSTED.
    #[arg(long, default_value_t = 30, env = "THERMOSIEVE_ENQUEUE_WAIT_S")]
    pub enqueue_wait_s: u64,
    /// Submissions streaming at once, in all; more get RESOURCE_EXHAUSTED.
    #[arg(long, default_value_t = 64, env = "THERMOSIEVE_MAX_SUBMISSIONS")]
    pub max_submissions: usize,
    /// Submissions streaming at once per tenant (token).
    #[arg(long, default_value_t = 8, env = "THERMOSIEVE_MAX_SUBMISSIONS_PER_TENANT")]
    pub max_submissions_per_tenant: usize,
    /// Seconds a batch may stay receiving without a new chunk before it is failed as abandoned.
    #[arg(long, default_value_t = 600, env = "THERMOSIEVE_RECEIVING_TIMEOUT_S")]
    pub receiving_timeout_s: u64,
}

#[derive(clap::Args, Debug)]
pub struct WorkArgs {
    /// Results folder shared with the front.
    #[arg(long, env = "THERMOSIEVE_RESULTS_DIR")]
    pub results_dir: PathBuf,
    #[command(flatten)]
    pub redis: RedisArgs,
    /// Engine threads (default: all cores).
    #[arg(long, env = "THERMOSIEVE_THREADS")]
    pub threads: Option<usize>,
    /// Consumer name (unique per worker; default: hostname-pid).
    #[arg(long, env = "THERMOSIEVE_CONSUMER")]
    pub consumer: Option<String>,
    /// Seconds a chunk may stay unacknowledged before another worker reclaims it.
    #[arg(long, default_value_t = 60, env = "THERMOSIEVE_RECLAIM_IDLE_S")]
    pub reclaim_idle_s: u64,
    /// Deliveries after which a chunk is dead-lettered (its cases become error rows).
    #[arg(long, default_value_t = 3, env = "THERMOSIEVE_MAX_DELIVERIES")]
    pub max_deliveries: u64,
    /// Keep part files after finalizing.
    #[arg(long, env = "THERMOSIEVE_KEEP_PARTS")]
    pub keep_parts: bool,
    /// Serve Prometheus metrics at http://ADDR/metrics (off when not given).
    #[arg(long, env = "THERMOSIEVE_METRICS_LISTEN")]
    pub metrics_listen: Option<SocketAddr>,
}

/// How a client reaches the front.
#[derive(clap::Args, Debug)]
pub struct FrontArgs {
    /// Front address; https://… for a front with TLS.
    #[arg(long, default_value = "http://127.0.0.1:50051", env = "THERMOSIEVE_FRONT")]
    pub front: String,
    /// CA certificate (PEM) that signed the front's certificate (needed for https://).
    #[arg(long, env = "THERMOSIEVE_TLS_CA")]
    pub tls_ca: Option<PathBuf>,
    /// This client's certificate (PEM), for a front that requires client certificates.
    #[arg(long, env = "THERMOSIEVE_TLS_CLIENT_CERT", requires = "tls_client_key")]
    pub tls_client_cert: Option<PathBuf>,
    /// The private key of --tls-client-cert (PEM file).
    #[arg(long, env = "THERMOSIEVE_TLS_CLIENT_KEY", requires = "tls_client_cert")]
    pub tls_client_key: Option<PathBuf>,
    /// File holding this client's bearer token. The token may instead be given in the
    /// environment variable THERMOSIEVE_TOKEN; never on a command line.
    #[arg(long, env = "THERMOSIEVE_TOKEN_FILE")]
    pub token_file: Option<PathBuf>,
}

#[derive(clap::Args, Debug)]
pub struct SubmitArgs {
    /// Input table: .csv, .tsv, .jsonl or .parquet.
    pub input: PathBuf,
    #[command(flatten)]
    pub front: FrontArgs,
    /// Grid temperatures in K, comma-separated.
    #[arg(long, value_delimiter = ',', env = "THERMOSIEVE_TEMPERATURES_K")]
    pub temperatures_k: Option<Vec<f64>>,
    /// Input format when the extension does not tell.
    #[arg(long, env = "THERMOSIEVE_FORMAT")]
    pub format: Option<String>,
    /// Cases per chunk (0: the front's default).
    #[arg(long, default_value_t = 0, env = "THERMOSIEVE_CHUNK_SIZE")]
    pub chunk_size: u32,
    /// Free text stored in the manifest.
    #[arg(long, default_value = "", env = "THERMOSIEVE_LABEL")]
    pub label: String,
}

#[derive(clap::Args, Debug)]
pub struct WatchArgs {
    /// The batch id printed by submit.
    pub batch_id: String,
    #[command(flatten)]
    pub front: FrontArgs,
}

#[derive(clap::Args, Debug)]
pub struct FetchArgs {
    /// The batch id printed by submit.
    pub batch_id: String,
    /// Folder to write cases.parquet, trends.parquet, routes.parquet, species.parquet and manifest.json into.
    #[arg(long, env = "THERMOSIEVE_OUT")]
    pub out: PathBuf,
    #[command(flatten)]
    pub front: FrontArgs,
}

pub enum Cmd {
    Run(RunArgs),
    Serve(ServeArgs),
    Work(WorkArgs),
    Submit(SubmitArgs),
    Watch(WatchArgs),
    Fetch(FetchArgs),
}

/// An error that means "you asked for something invalid" (exit 2) rather than "it broke" (exit 1).
#[derive(Debug)]
struct Usage(String);

impl std::fmt::Display for Usage {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for Usage {}

/// The batch ended failed or cancelled (exit 4).
#[derive(Debug)]
struct BatchEnded(String);

impl std::fmt::Display for BatchEnded {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for BatchEnded {}

pub fn main(cmd: Cmd) -> ExitCode {
    let logs = tracing_subscriber::fmt()
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_env("THERMOSIEVE_LOG").unwrap_or_else(|_| tracing_subscriber::EnvFilter::new("info")),
        )
        .with_writer(std::io::stderr);
    // THERMOSIEVE_LOG_FORMAT=json: one JSON object per line, for log collectors.
    if std::env::var("THERMOSIEVE_LOG_FORMAT").is_ok_and(|f| f.eq_ignore_ascii_case("json")) {
        logs.json().init();
    } else {
        logs.init();
    }
    let rt = match tokio::runtime::Builder::new_multi_thread().enable_all().build() {
        Ok(rt) => rt,
        Err(e) => {
            eprintln!("error: cannot start the async runtime: {e}");
            return ExitCode::FAILURE;
        }
    };
    let r = rt.block_on(async move {
        match cmd {
            Cmd::Run(a) => run(a).await,
            Cmd::Serve(a) => serve(a).await,
            Cmd::Work(a) => work(a).await,
            Cmd::Submit(a) => submit(a).await,
            Cmd::Watch(a) => watch(a).await,
            Cmd::Fetch(a) => fetch(a).await,
        }
    });
    match r {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            if e.downcast_ref::<Usage>().is_some() {
                ExitCode::from(2)
            } else if e.downcast_ref::<BatchEnded>().is_some() {
                ExitCode::from(EXIT_BATCH_FAILED)
            } else {
                ExitCode::FAILURE
            }
        }
    }
}

fn format_arg(f: &Option<String>) -> anyhow::Result<Option<Format>> {
    match f {
        None => Ok(None),
        Some(s) => Format::parse(s)
            .map(Some)
            .ok_or_else(|| Usage(format!("--format {s:?}: expected csv, tsv, jsonl or parquet")).into()),
    }
}

fn open_input(path: &std::path::Path, format: &Option<String>) -> anyhow::Result<input::Cases> {
    input::open(path, format_arg(format)?).map_err(|e| Usage(e.to_string()).into())
}

async fn shutdown_signal() {
    let ctrl_c = tokio::signal::ctrl_c();
    #[cfg(unix)]
    {
        let mut term = match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(s) => s,
            Err(e) => {
                tracing::warn!(error = %e, "cannot listen for SIGTERM; only ctrl-c stops this process");
                let _ = ctrl_c.await;
                return;
            }
        };
        tokio::select! {
            _ = ctrl_c => {}
            _ = term.recv() => {}
        }
    }
    #[cfg(not(unix))]
    let _ = ctrl_c.await;
    tracing::info!("shutdown requested");
}

fn threads(t: Option<usize>) -> usize {
    t.unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()))
        .max(1)
}

async fn run(a: RunArgs) -> anyhow::Result<()> {
    let cases = open_input(&a.input, &a.format)?;
    let options = BatchOptions {
        temperatures_k: a.temperatures_k.unwrap_or_default(),
        chunk_size: a.chunk_size,
        label: a.label,
        ..BatchOptions::default()
    };
    std::fs::create_dir_all(&a.out).with_context(|| format!("creating {}", a.out.display()))?;
    let t0 = std::time::Instant::now();
    let outcome = thermosieve_front::embedded::run_cases(cases, options, &a.out, threads(a.threads))
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
async fn spawn_metrics<F, Fut>(addr: SocketAddr, body: F) -> anyhow::Result<()>
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

async fn redis_queue(r: &RedisArgs) -> anyhow::Result<Arc<dyn Queue>> {
    let mut cfg = RedisConfig::new(r.redis_url.clone());
    cfg.prefix = r.redis_prefix.clone();
    cfg.retention = Duration::from_secs(r.retention_hours * 3600);
    // The URL may hold a password: never print it.
    let q = RedisQueue::connect(cfg)
        .await
        .context("connecting to redis (THERMOSIEVE_REDIS_URL)")?;
    Ok(Arc::new(q))
}

async fn serve(a: ServeArgs) -> anyhow::Result<()> {
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

async fn work(a: WorkArgs) -> anyhow::Result<()> {
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

type Client = ScreeningClient<tonic::service::interceptor::InterceptedService<tonic::transport::Channel, Bearer>>;

fn read_pem(path: &std::path::Path, what: &str) -> anyhow::Result<Vec<u8>> {
    std::fs::read(path).with_context(|| format!("reading {what} {}", path.display()))
}

/// The token from --token-file, else from THERMOSIEVE_TOKEN; none when neither is set.
fn bearer(a: &FrontArgs) -> anyhow::Result<Bearer> {
    let token = match &a.token_file {
        Some(p) => Some(
            std::fs::read_to_string(p)
                .with_context(|| format!("reading the token file {}", p.display()))?
                .trim()
                .to_string(),
        ),
        None => std::env::var("THERMOSIEVE_TOKEN").ok().map(|t| t.trim().to_string()),
    };
    Bearer::new(token.as_deref().filter(|t| !t.is_empty())).map_err(|e| Usage(e.to_string()).into())
}

async fn client(a: &FrontArgs) -> anyhow::Result<Client> {
    let front = &a.front;
    let mut endpoint = tonic::transport::Endpoint::from_shared(front.clone()).map_err(|e| Usage(format!("--front {front:?}: {e}")))?;
    if front.starts_with("https://") {
        let Some(ca) = &a.tls_ca else {
            return Err(Usage(format!(
                "--front {front}: https needs --tls-ca (THERMOSIEVE_TLS_CA), the CA that signed the front's certificate"
            ))
            .into());
        };
        let mut tls = tonic::transport::ClientTlsConfig::new()
            .ca_certificate(tonic::transport::Certificate::from_pem(read_pem(ca, "the CA certificate")?));
        if let (Some(cert), Some(key)) = (&a.tls_client_cert, &a.tls_client_key) {
            tls = tls.identity(tonic::transport::Identity::from_pem(
                read_pem(cert, "the client certificate")?,
                read_pem(key, "the client key")?,
            ));
        }
        endpoint = endpoint.tls_config(tls).context("TLS settings")?;
    } else if a.tls_ca.is_some() || a.tls_client_cert.is_some() {
        return Err(Usage(format!("--front {front}: TLS settings given, but the address is not https://")).into());
    }
    let channel = endpoint
        .connect()
        .await
        .with_context(|| format!("connecting to the front at {front} (THERMOSIEVE_FRONT)"))?;
    Ok(ScreeningClient::with_interceptor(channel, bearer(a)?).max_decoding_message_size(64 << 20))
}

fn status_error(what: &str, s: tonic::Status) -> anyhow::Error {
    match s.code() {
        tonic::Code::InvalidArgument | tonic::Code::NotFound | tonic::Code::Unauthenticated => {
            Usage(format!("{what}: {}", s.message())).into()
        }
        _ => anyhow::anyhow!("{what}: {} ({:?})", s.message(), s.code()),
    }
}

async fn submit(a: SubmitArgs) -> anyhow::Result<()> {
    let cases = open_input(&a.input, &a.format)?;
    let mut c = client(&a.front).await?;
    let header = pb::BatchHeader {
        temperatures_k: a.temperatures_k.unwrap_or_default(),
        default_conditions: None,
        chunk_size: a.chunk_size,
        label: a.label,
    };
    let (tx, rx) = tokio::sync::mpsc::channel::<pb::SubmitBatchRequest>(256);
    // Reading the file is blocking I/O: a thread of its own feeds the stream.
    let reader = tokio::task::spawn_blocking(move || {
        if tx
            .blocking_send(pb::SubmitBatchRequest {
                item: Some(pb::submit_batch_request::Item::Header(header)),
            })
            .is_err()
        {
            return;
        }
        for message in convert::case_messages(cases) {
            if tx.blocking_send(message).is_err() {
                return;
            }
        }
    });
    let r = c
        .submit_batch(tokio_stream::wrappers::ReceiverStream::new(rx))
        .await
        .map_err(|s| status_error("submit", s))?
        .into_inner();
    let _ = reader.await;
    eprintln!(
        "submitted {} cases ({} input errors) in {} chunks",
        r.cases_received, r.input_errors, r.chunks
    );
    eprintln!("caution: {}", thermosieve_engine::CAUTION);
    println!("{}", r.batch_id);
    Ok(())
}

fn state_name(s: i32) -> &'static str {
    match pb::BatchState::try_from(s) {
        Ok(pb::BatchState::Receiving) => "receiving",
        Ok(pb::BatchState::Running) => "running",
        Ok(pb::BatchState::Finalizing) => "finalizing",
        Ok(pb::BatchState::Done) => "done",
        Ok(pb::BatchState::Failed) => "failed",
        Ok(pb::BatchState::Cancelled) => "cancelled",
        _ => "unknown",
    }
}

/// How long `watch` keeps trying while the front or its queue is unavailable.
const WATCH_OUTAGE_LIMIT: Duration = Duration::from_secs(600);

async fn watch(a: WatchArgs) -> anyhow::Result<()> {
    let mut c = client(&a.front).await?;
    let bar = ProgressBar::new(0);
    bar.set_style(
        ProgressStyle::with_template("{spinner} {msg:>10} [{bar:40}] {pos}/{len} cases  {per_sec}  eta {eta}")
            .unwrap_or_else(|_| ProgressStyle::default_bar())
            .progress_chars("=> "),
    );
    let mut last: Option<pb::BatchStatus> = None;
    // A front restarting or a queue briefly gone (UNAVAILABLE) is waited out with backoff, up
    // to WATCH_OUTAGE_LIMIT; any other error ends the watch.
    let mut outage: Option<std::time::Instant> = None;
    let mut backoff = Duration::from_millis(250);
    loop {
        let r = async {
            let mut stream = c
                .watch_batch(pb::WatchBatchRequest {
                    batch_id: a.batch_id.clone(),
                })
                .await?
                .into_inner();
            while let Some(s) = stream.message().await? {
                outage = None;
                bar.set_length(s.cases_total);
                bar.set_position(s.cases_done);
                bar.set_message(state_name(s.state));
                last = Some(s);
            }
            Ok::<(), tonic::Status>(())
        }
        .await;
        match r {
            Ok(()) => break,
            Err(s) if s.code() == tonic::Code::Unavailable => {
                let since = *outage.get_or_insert_with(std::time::Instant::now);
                if since.elapsed() > WATCH_OUTAGE_LIMIT {
                    return Err(status_error("watch", s));
                }
                bar.set_message("waiting");
                tracing::warn!(error = s.message(), "the front is unavailable; watching again shortly");
                tokio::time::sleep(backoff).await;
                backoff = (backoff * 2).min(Duration::from_secs(5));
            }
            Err(s) => return Err(status_error("watch", s)),
        }
    }
    bar.finish();
    let Some(s) = last else {
        bail!("the front ended the watch without a status")
    };
    println!(
        "batch {}: {} — {} cases, {} errors, {} chunks dead-lettered, {:.1} s{}",
        s.batch_id,
        state_name(s.state),
        s.cases_done,
        s.cases_error,
        s.chunks_dead_lettered,
        s.elapsed_seconds,
        if s.message.is_empty() {
            String::new()
        } else {
            format!(" ({})", s.message)
        }
    );
    println!("caution: {}", thermosieve_engine::CAUTION);
    if s.state != pb::BatchState::Done as i32 {
        return Err(BatchEnded(format!("batch {} ended {}", s.batch_id, state_name(s.state))).into());
    }
    Ok(())
}

/// A file being fetched: removed when dropped unless it was completed.
struct Partial(PathBuf);

impl Drop for Partial {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.0);
    }
}

async fn fetch(a: FetchArgs) -> anyhow::Result<()> {
    let mut c = client(&a.front).await?;
    std::fs::create_dir_all(&a.out).with_context(|| format!("creating {}", a.out.display()))?;
    // Only these names are written, only inside --out: the name the front sends is checked, never used.
    for (table, name) in Table::ALL.map(|t| (convert::table_to_pb(t), t.file_name())) {
        let mut stream = c
            .fetch_table(pb::FetchTableRequest {
                batch_id: a.batch_id.clone(),
                table: table as i32,
            })
            .await
            .map_err(|s| status_error("fetch", s))?
            .into_inner();
        // Streamed to a temp file, renamed when complete: memory stays at one message.
        let tmp = Partial(a.out.join(format!(".fetch-{name}-{}.part", std::process::id())));
        let mut file = std::io::BufWriter::new(std::fs::File::create(&tmp.0).with_context(|| format!("writing {}", tmp.0.display()))?);
        let mut written = 0u64;
        let mut total = None;
        while let Some(chunk) = stream.message().await.map_err(|s| status_error("fetch", s))? {
            if chunk.file_name != name {
                bail!("fetch {name}: the front sent the file name {:?}; refusing it", chunk.file_name);
            }
            if chunk.offset != written || total.is_some_and(|t| t != chunk.total_bytes) {
                bail!(
                    "fetch {name}: the front sent bytes at offset {} of {} when {written} of {} had arrived",
                    chunk.offset,
                    chunk.total_bytes,
                    total.unwrap_or(chunk.total_bytes)
                );
            }
            total = Some(chunk.total_bytes);
            std::io::Write::write_all(&mut file, &chunk.data).with_context(|| format!("writing {}", tmp.0.display()))?;
            written += chunk.data.len() as u64;
        }
        std::io::Write::flush(&mut file).with_context(|| format!("writing {}", tmp.0.display()))?;
        drop(file);
        match total {
            None => bail!("the front sent no data for {name}"),
            Some(t) if t != written => bail!("fetch {name}: {written} bytes arrived of the {t} announced"),
            Some(_) => {}
        }
        let path = a.out.join(name);
        std::fs::rename(&tmp.0, &path).with_context(|| format!("writing {}", path.display()))?;
        println!("{} ({written} bytes)", path.display());
    }
    println!("caution: {}", thermosieve_engine::CAUTION);
    Ok(())
}
