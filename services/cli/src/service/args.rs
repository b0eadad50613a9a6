//! The service commands' arguments (each flag with its THERMOSIEVE_* variable).

use super::*;

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
