//! The `thermosieve.v1.Screening` service and the server around it (health and reflection on).

use crate::auth::{batch_ref, tenant_of, Authenticator, Tenant, Tokens};
use crate::convert::{case_from_pb, case_row_to_pb, conditions_from_pb, status_to_pb, trend_rows_to_pb};
use crate::error::FrontError;
use crate::ingest::{batch_spec, is_batch_id, BatchOptions, Ingest, IngestLimits};
use std::collections::HashMap;
use std::future::Future;
use std::path::{Path, PathBuf};
use std::pin::Pin;
use std::sync::{Arc, Mutex};
use std::time::Duration;
use thermosieve_engine::species::{self, T_REF_K};
use thermosieve_engine::{Screener, TemperatureGrid};
use thermosieve_model::batch_dir;
use thermosieve_model::{BatchState, Progress};
use thermosieve_proto::v1 as pb;
use thermosieve_proto::v1::screening_server::{Screening, ScreeningServer};
use thermosieve_queue::Queue;
use thermosieve_worker::metrics;
use thermosieve_worker::process::ChunkProcessor;
use tokio::io::AsyncReadExt;
use tokio::net::TcpListener;
use tokio_stream::wrappers::{ReceiverStream, TcpListenerStream};
use tonic::transport::{Certificate, Identity, ServerTlsConfig};
use tonic::{Request, Response, Status, Streaming};

/// Most cases of one ScreenInline call, and species of one ResolveSpecies call.
pub const MAX_INLINE: usize = 100;
/// Bytes per FetchTable message.
pub const FETCH_CHUNK_BYTES: usize = 1 << 20;
/// Batch ids remembered by this front, to tell "lost by the queue" from "never existed".
const KNOWN_BATCHES: usize = 10_000;

/// Front configuration.
#[derive(Clone, Debug)]
pub struct FrontConfig {
    /// Where workers write batch folders (shared storage).
    pub results_dir: PathBuf,
    pub limits: IngestLimits,
    /// How often WatchBatch looks at the counters.
    pub watch_interval: Duration,
    /// A batch still receiving with no chunk for this long is failed as abandoned (its
    /// submitter, or the front that took it, went away).
    pub receiving_timeout: Duration,
}

/// State shared by all requests.
pub struct Front {
    queue: Arc<dyn Queue>,
    cfg: FrontConfig,
    /// Batches this front created: when, and for which tenant. A `std::sync::Mutex`: held only
    /// to insert or look up, never across an await.
    known: Mutex<HashMap<String, (u64, String)>>,
    inline: Arc<Mutex<ChunkProcessor>>,
    /// Submissions streaming now, per tenant (a `std::sync::Mutex`, never held across an await).
    submitting: Arc<Mutex<HashMap<String, usize>>>,
    /// Set when the server shuts down: open WatchBatch streams end at once.
    stopping: tokio::sync::watch::Sender<bool>,
}

impl Front {
    pub fn new(queue: Arc<dyn Queue>, cfg: FrontConfig) -> Front {
        Front {
            queue,
            cfg,
            known: Mutex::new(HashMap::new()),
            inline: Arc::new(Mutex::new(ChunkProcessor::new())),
            stopping: tokio::sync::watch::channel(false).0,
            submitting: Arc::new(Mutex::new(HashMap::new())),
        }
    }

    fn remember(&self, id: &str, tenant: &str) {
        let mut k = self.known.lock().unwrap_or_else(|e| e.into_inner());
        if k.len() >= KNOWN_BATCHES {
            k.clear();
        }
        k.insert(id.to_string(), (thermosieve_model::now_unix_ms(), tenant.to_string()));
    }

    fn check_id(id: &str) -> Result<(), FrontError> {
        if is_batch_id(id) {
            Ok(())
        } else {
            Err(FrontError::invalid(
                "batch_id",
                "expected the 32 hex digits returned by SubmitBatch",
            ))
        }
    }

    /// Refuse a batch of another tenant exactly as one that does not exist (NOT_FOUND), so a
    /// caller learns nothing about other tenants' batches.
    async fn authorize(&self, id: &str, tenant: &Tenant) -> Result<(), FrontError> {
        Self::check_id(id)?;
        let owner = match self.queue.batch_spec(id).await? {
            Some(spec) => Some(spec.tenant),
            None => self.known.lock().unwrap_or_else(|e| e.into_inner()).get(id).map(|(_, t)| t.clone()),
        };
        match owner {
            Some(owner) if owner == tenant.as_str() => Ok(()),
            _ => Err(FrontError::NotFound(id.to_string())),
        }
    }

    /// Progress of a batch the caller owns; see [`Front::progress`].
    async fn progress_for(&self, id: &str, tenant: &Tenant) -> Result<Progress, FrontError> {
        self.authorize(id, tenant).await?;
        self.progress(id).await
    }

    /// Progress of a batch; a batch this front created that the queue no longer knows is
    /// reported FAILED (the queue lost its state), never silently gone.
    async fn progress(&self, id: &str) -> Result<Progress, FrontError> {
        Self::check_id(id)?;
        if let Some(p) = self.queue.progress(id).await? {
            return Ok(p);
        }
        let created = self.known.lock().unwrap_or_else(|e| e.into_inner()).get(id).map(|(t, _)| *t);
        match created {
            Some(created_unix_ms) => Ok(Progress {
                state: BatchState::Failed,
                chunks_total: 0,
                chunks_done: 0,
                chunks_dead: 0,
                cases_total: 0,
                cases_done: 0,
                cases_error: 0,
                message: "the queue lost this batch's state (redis restarted without persistence?); resubmit it".into(),
                created_unix_ms,
                finished_unix_ms: None,
            }),
            None => Err(FrontError::NotFound(id.to_string())),
        }
    }

    /// A place among the submissions streaming now, or `Busy` when the front (or the tenant) is
    /// at its limit. Memory held by open submissions is bounded by these counts times one chunk.
    fn admit(&self, tenant: &Tenant) -> Result<Admitted, FrontError> {
        let limits = &self.cfg.limits;
        let mut m = self.submitting.lock().unwrap_or_else(|e| e.into_inner());
        let total: usize = m.values().sum();
        if total >= limits.max_submissions {
            return Err(FrontError::Busy(format!("{total} submissions are streaming, the front's limit")));
        }
        let mine = m.entry(tenant.as_str().to_string()).or_default();
        if *mine >= limits.max_submissions_per_tenant {
            return Err(FrontError::Busy(format!(
                "{mine} submissions of this tenant are streaming, its limit"
            )));
        }
        *mine += 1;
        Ok(Admitted {
            submitting: self.submitting.clone(),
            tenant: tenant.as_str().to_string(),
        })
    }

    async fn submit(&self, mut stream: Streaming<pb::SubmitBatchRequest>, tenant: &Tenant) -> Result<pb::SubmitBatchResponse, FrontError> {
        let _admitted = self.admit(tenant).inspect_err(|_| metrics::registry().submissions_refused.add(1))?;
        let first = stream
            .message()
            .await
            .map_err(|s| FrontError::invalid("item", format!("stream broke off: {}", s.message())))?;
        let header = match first.and_then(|m| m.item) {
            Some(pb::submit_batch_request::Item::Header(h)) => h,
            _ => return Err(FrontError::invalid("item.header", "the first message must be a header")),
        };
        let options = BatchOptions {
            temperatures_k: header.temperatures_k,
            default_conditions: conditions_from_pb(header.default_conditions),
            chunk_size: header.chunk_size as usize,
            label: header.label,
        };
        let mut spec = batch_spec(options, &self.cfg.limits)?;
        spec.tenant = tenant.as_str().to_string();
        let mut ingest = Ingest::start(self.queue.clone(), spec, self.cfg.limits.clone())
            .await
            .inspect_err(|_| metrics::registry().submissions_refused.add(1))?;
        self.remember(ingest.batch_id(), &ingest.spec().tenant);
        // Every way out but success fails the batch through the guard, and so does dropping this
        // future (the client went away, the front stops): no batch stays RECEIVING with nobody
        // to finish it.
        let guard = Unfinished {
            queue: Some(self.queue.clone()),
            batch_id: ingest.batch_id().to_string(),
            results_dir: self.cfg.results_dir.clone(),
        };
        loop {
            let msg = match stream.message().await {
                Ok(Some(m)) => m,
                Ok(None) => break,
                Err(s) => {
                    guard.fail(format!("the submission stream broke off: {}", s.message())).await;
                    return Err(FrontError::invalid("item", format!("stream broke off: {}", s.message())));
                }
            };
            let r = match msg.item {
                Some(pb::submit_batch_request::Item::Case(c)) => ingest.push(case_from_pb(c)).await,
                Some(pb::submit_batch_request::Item::Cases(list)) => {
                    let mut r = Ok(());
                    for c in list.cases {
                        r = ingest.push(case_from_pb(c)).await;
                        if r.is_err() {
                            break;
                        }
                    }
                    r
                }
                Some(pb::submit_batch_request::Item::Header(_)) => {
                    Err(FrontError::invalid("item.header", "only the first message may be a header"))
                }
                None => Err(FrontError::invalid("item", "empty message: set header, case or cases")),
            };
            if let Err(e) = r {
                guard.fail(e.to_string()).await;
                return Err(e);
            }
        }
        let s = match ingest.finish().await {
            Ok(s) => s,
            Err(e) => {
                guard.fail(e.to_string()).await;
                return Err(e);
            }
        };
        guard.done();
        metrics::registry().submissions_accepted.add(1);
        Ok(pb::SubmitBatchResponse {
            batch_id: s.batch_id,
            cases_received: s.cases,
            input_errors: s.input_errors,
            chunks: s.chunks,
        })
    }
}

/// A submission's place among those streaming now; given back when dropped.
struct Admitted {
    submitting: Arc<Mutex<HashMap<String, usize>>>,
    tenant: String,
}

impl Drop for Admitted {
    fn drop(&mut self) {
        let mut m = self.submitting.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(n) = m.get_mut(&self.tenant) {
            *n -= 1;
            if *n == 0 {
                m.remove(&self.tenant);
            }
        }
    }
}

/// A submission not yet complete (see [`Front::submit`]): failed with a reason by
/// [`Unfinished::fail`], or, when dropped unfinished, failed in a task of its own.
struct Unfinished {
    /// `None` once the submission ended either way.
    queue: Option<Arc<dyn Queue>>,
    batch_id: String,
    results_dir: PathBuf,
}

impl Unfinished {
    /// The submission completed: nothing to fail.
    fn done(mut self) {
        self.queue = None;
    }

    /// Fail the batch with `reason` and remove its parts (chunks still queued are skipped by the
    /// workers, which also remove what a chunk in flight leaves).
    async fn fail(mut self, reason: String) {
        if let Some(queue) = self.queue.take() {
            fail_submission(
                queue,
                std::mem::take(&mut self.batch_id),
                std::mem::take(&mut self.results_dir),
                reason,
            )
            .await;
        }
    }
}

impl Drop for Unfinished {
    fn drop(&mut self) {
        let (Some(queue), Ok(rt)) = (self.queue.take(), tokio::runtime::Handle::try_current()) else {
            return;
        };
        let reason = "the submission ended before it was complete (client gone or front stopped); resubmit it";
        rt.spawn(fail_submission(
            queue,
            std::mem::take(&mut self.batch_id),
            std::mem::take(&mut self.results_dir),
            reason.to_string(),
        ));
    }
}

async fn fail_submission(queue: Arc<dyn Queue>, id: String, results_dir: PathBuf, reason: String) {
    tracing::warn!(batch = batch_ref(&id), reason = %reason, "submission failed; failing the batch");
    metrics::registry().submissions_failed.add(1);
    if let Err(e) = queue.stop_batch(&id, BatchState::Failed, &reason).await {
        tracing::error!(batch = batch_ref(&id), error = %e, "could not mark the batch failed");
    }
    let _ = tokio::task::spawn_blocking(move || thermosieve_worker::finalize::remove_parts(&results_dir, &id)).await;
}

type BoxStream<T> = Pin<Box<dyn tokio_stream::Stream<Item = Result<T, Status>> + Send + 'static>>;

/// The tonic service; cheap to clone.
#[derive(Clone)]
pub struct ScreeningService(pub Arc<Front>);

#[tonic::async_trait]
impl Screening for ScreeningService {
    async fn submit_batch(&self, request: Request<Streaming<pb::SubmitBatchRequest>>) -> Result<Response<pb::SubmitBatchResponse>, Status> {
        let tenant = tenant_of(&request);
        Ok(Response::new(self.0.submit(request.into_inner(), &tenant).await?))
    }

    async fn get_batch_status(&self, request: Request<pb::GetBatchStatusRequest>) -> Result<Response<pb::BatchStatus>, Status> {
        let tenant = tenant_of(&request);
        let id = request.into_inner().batch_id;
        let p = self.0.progress_for(&id, &tenant).await?;
        Ok(Response::new(status_to_pb(&id, &p)))
    }

    type WatchBatchStream = BoxStream<pb::BatchStatus>;

    async fn watch_batch(&self, request: Request<pb::WatchBatchRequest>) -> Result<Response<Self::WatchBatchStream>, Status> {
        let tenant = tenant_of(&request);
        let id = request.into_inner().batch_id;
        let first = self.0.progress_for(&id, &tenant).await?;
        let (tx, rx) = tokio::sync::mpsc::channel(4);
        let front = self.0.clone();
        let mut stopping = front.stopping.subscribe();
        tokio::spawn(async move {
            let mut last = first;
            if tx.send(Ok(status_to_pb(&id, &last))).await.is_err() {
                return;
            }
            while !last.state.is_final() {
                tokio::select! {
                    _ = tokio::time::sleep(front.cfg.watch_interval) => {}
                    _ = async { drop(stopping.wait_for(|s| *s).await) } => {
                        let _ = tx.send(Err(Status::unavailable("the front is shutting down; watch the batch again"))).await;
                        return;
                    }
                }
                let p = match front.progress(&id).await {
                    Ok(p) => p,
                    Err(e) => {
                        let _ = tx.send(Err(e.into())).await;
                        return;
                    }
                };
                if p != last {
                    if tx.send(Ok(status_to_pb(&id, &p))).await.is_err() {
                        return;
                    }
                    last = p;
                }
            }
        });
        Ok(Response::new(Box::pin(ReceiverStream::new(rx))))
    }

    async fn cancel_batch(&self, request: Request<pb::CancelBatchRequest>) -> Result<Response<pb::BatchStatus>, Status> {
        let tenant = tenant_of(&request);
        let id = request.into_inner().batch_id;
        self.0.authorize(&id, &tenant).await?;
        self.0
            .queue
            .stop_batch(&id, BatchState::Cancelled, "cancelled by a caller")
            .await
            .map_err(FrontError::from)?;
        tracing::info!(batch = batch_ref(&id), tenant = tenant.as_str(), "batch cancelled");
        metrics::registry().cancellations.add(1);
        let p = self.0.progress(&id).await?;
        Ok(Response::new(status_to_pb(&id, &p)))
    }

    type FetchTableStream = BoxStream<pb::TableChunk>;

    async fn fetch_table(&self, request: Request<pb::FetchTableRequest>) -> Result<Response<Self::FetchTableStream>, Status> {
        let tenant = tenant_of(&request);
        let r = request.into_inner();
        let p = self.0.progress_for(&r.batch_id, &tenant).await?;
        if p.state != BatchState::Done {
            return Err(FrontError::FailedPrecondition(format!("batch {} is {}, not done", r.batch_id, p.state.as_str())).into());
        }
        let Some(table) = crate::convert::table_from_pb(r.table) else {
            return Err(FrontError::invalid(
                "table",
                "expected TABLE_CASES, TABLE_TRENDS, TABLE_ROUTES, TABLE_SPECIES or TABLE_MANIFEST",
            )
            .into());
        };
        let name = table.file_name();
        // Not a server-made id: no such batch (authorize has refused it already).
        let path = batch_dir(&self.0.cfg.results_dir, &r.batch_id)
            .map_err(|_| FrontError::NotFound(r.batch_id.clone()))?
            .join(name);
        let io = |source| FrontError::Io {
            path: path.display().to_string(),
            source,
        };
        let mut file = tokio::fs::File::open(&path).await.map_err(io)?;
        let total = file.metadata().await.map_err(io)?.len();
        let (tx, rx) = tokio::sync::mpsc::channel(2);
        tokio::spawn(async move {
            let mut offset = 0u64;
            loop {
                let mut buf = vec![0u8; FETCH_CHUNK_BYTES];
                let n = match file.read(&mut buf).await {
                    Ok(0) => break,
                    Ok(n) => n,
                    Err(e) => {
                        let _ = tx.send(Err(Status::internal(format!("reading {name}: {e}")))).await;
                        break;
                    }
                };
                buf.truncate(n);
                let msg = pb::TableChunk {
                    data: buf,
                    offset,
                    total_bytes: total,
                    file_name: name.to_string(),
                };
                offset += n as u64;
                if tx.send(Ok(msg)).await.is_err() {
                    break;
                }
            }
        });
        Ok(Response::new(Box::pin(ReceiverStream::new(rx))))
    }

    async fn screen_inline(&self, request: Request<pb::ScreenInlineRequest>) -> Result<Response<pb::ScreenInlineResponse>, Status> {
        let r = request.into_inner();
        if r.cases.len() > MAX_INLINE {
            return Err(FrontError::invalid(
                "cases",
                format!("{} cases; ScreenInline takes at most {MAX_INLINE} (use SubmitBatch)", r.cases.len()),
            )
            .into());
        }
        let options = BatchOptions {
            temperatures_k: r.temperatures_k,
            default_conditions: conditions_from_pb(r.default_conditions),
            chunk_size: 0,
            label: String::new(),
        };
        let spec = batch_spec(options, &self.0.cfg.limits).map_err(|e| match e {
            FrontError::InvalidArgument { field, reason } => FrontError::InvalidArgument {
                field: field.replace("header.", ""),
                reason,
            },
            other => other,
        })?;
        let cases: Vec<_> = r
            .cases
            .into_iter()
            .enumerate()
            .map(|(i, c)| {
                let mut c = case_from_pb(c);
                if c.row == 0 {
                    c.row = i as u64 + 1;
                }
                crate::ingest::validate_case(&mut c);
                c
            })
            .collect();
        let processor = self.0.inline.clone();
        let case_rows =
            tokio::task::spawn_blocking(move || processor.lock().unwrap_or_else(|e| e.into_inner()).screen_cases(&spec, &cases))
                .await
                .map_err(|source| FrontError::Task {
                    what: "the engine on inline cases",
                    source,
                })?;
        Ok(Response::new(pb::ScreenInlineResponse {
            cases: case_rows.iter().map(case_row_to_pb).collect(),
            trends: case_rows.iter().flat_map(trend_rows_to_pb).collect(),
            engine_version: thermosieve_engine::VERSION.to_string(),
            caution: thermosieve_engine::CAUTION.to_string(),
        }))
    }

    async fn resolve_species(&self, request: Request<pb::ResolveSpeciesRequest>) -> Result<Response<pb::ResolveSpeciesResponse>, Status> {
        let r = request.into_inner();
        if r.species.len() > MAX_INLINE {
            return Err(FrontError::invalid("species", format!("{} species; at most {MAX_INLINE}", r.species.len())).into());
        }
        Ok(Response::new(pb::ResolveSpeciesResponse {
            species: r.species.into_iter().map(|s| resolve_one(&s)).collect(),
        }))
    }
}

/// What the engine would use for one written species: a formula (`H2O(l)`), a name
/// (`acetic anhydride(l)`), a CAS number, or a SMILES with an optional state (`CCO{l}`).
pub fn resolve_one(query: &str) -> pb::SpeciesInfo {
    let mut info = pb::SpeciesInfo {
        query: query.to_string(),
        ..Default::default()
    };
    let q = query.trim();
    let grid = TemperatureGrid::new(vec![T_REF_K]).expect("298.15 K is a valid grid");
    let mut screener = Screener::new(species::bundled(), grid);
    // A formula or name first; a SMILES when that fails. Characters only SMILES use decide which
    // error to show when both fail.
    let resolved = screener.species(q, 0).or_else(|first| {
        screener.smiles_species(q, 0).map_err(|second| {
            if q.contains(['=', '#', '[', '@', '/', '\\']) {
                second
            } else {
                first
            }
        })
    });
    match resolved {
        Err(e) => info.error = e.to_string(),
        Ok(p) => {
            let r = &p.resolved;
            let st = r.state(T_REF_K, T_REF_K.ln());
            let (lo, hi) = r.range_k();
            info.label = r.label.clone();
            info.formula = r.formula.hill();
            info.phase = r.phase.tag().to_string();
            info.source_line = r.source_line();
            info.valid_min_k = lo;
            info.valid_max_k = hi;
            info.delta_fh_298_kj_per_mol = st.h_j_per_mol / 1000.0;
            info.s_298_j_per_mol_k = st.s_j_per_mol_k;
            info.delta_fh_uncertainty_kj_per_mol = r.dhf_uncertainty_kj_per_mol;
            info.delta_fh_uncertainty_basis = r.sigma_basis.clone();
            info.notes = r.notes.clone();
        }
    }
    info
}

/// Who may reach the front, and how: TLS and bearer tokens. Both off by default, which suits a
/// front bound to loopback only.
#[derive(Default)]
pub struct Access {
    pub tls: Option<ServerTlsConfig>,
    pub tokens: Option<Tokens>,
}

impl Access {
    /// TLS from PEM files: the front's certificate chain and key, and optionally the CA whose
    /// client certificates are required.
    ///
    /// # Errors
    /// A file that cannot be read.
    pub fn tls_from_files(cert: &Path, key: &Path, client_ca: Option<&Path>) -> Result<ServerTlsConfig, FrontError> {
        let read = |p: &Path| {
            std::fs::read(p).map_err(|source| FrontError::Io {
                path: p.display().to_string(),
                source,
            })
        };
        let mut tls = ServerTlsConfig::new().identity(Identity::from_pem(read(cert)?, read(key)?));
        if let Some(ca) = client_ca {
            tls = tls.client_ca_root(Certificate::from_pem(read(ca)?));
        }
        Ok(tls)
    }
}

/// Serve the API, health and reflection on `listener` until `shutdown` completes. Health and
/// reflection answer without a token (probes, tools listing the API); every Screening call
/// needs one when `access.tokens` is set. On shutdown, open WatchBatch streams end at once.
///
/// # Errors
/// Transport errors, a TLS configuration rustls refuses, or a reflection service that cannot
/// read the descriptors.
pub async fn serve(
    listener: TcpListener,
    front: Arc<Front>,
    access: Access,
    shutdown: impl Future<Output = ()> + Send,
) -> Result<(), FrontError> {
    let (health, health_service) = tonic_health::server::health_reporter();
    health.set_serving::<ScreeningServer<ScreeningService>>().await;
    let reflection = tonic_reflection::server::Builder::configure()
        .register_encoded_file_descriptor_set(thermosieve_proto::FILE_DESCRIPTOR_SET)
        .register_encoded_file_descriptor_set(tonic_health::pb::FILE_DESCRIPTOR_SET)
        .build_v1()?;
    let addr = listener.local_addr().map_err(|source| FrontError::Io {
        path: "listener".into(),
        source,
    })?;
    tracing::info!(
        %addr,
        tls = access.tls.is_some(),
        tenants = access.tokens.as_ref().map_or(0, Tokens::len),
        "front listening"
    );
    let mut builder = tonic::transport::Server::builder();
    if let Some(tls) = access.tls {
        builder = builder.tls_config(tls)?;
    }
    let monitor = tokio::spawn(watch_queue_health(front.queue.clone(), health));
    let sweeper = tokio::spawn(expire_abandoned(
        front.queue.clone(),
        front.cfg.results_dir.clone(),
        front.cfg.receiving_timeout,
    ));
    let stopping = front.stopping.clone();
    let shutdown = async move {
        shutdown.await;
        stopping.send_replace(true);
    };
    let served = builder
        .add_service(health_service)
        .add_service(reflection)
        .add_service(ScreeningServer::with_interceptor(
            ScreeningService(front),
            Authenticator::new(access.tokens),
        ))
        .serve_with_incoming_shutdown(TcpListenerStream::new(listener), shutdown)
        .await
        .map_err(FrontError::from);
    monitor.abort();
    sweeper.abort();
    served
}

/// Fail batches left receiving by a submitter (or a front) that went away. Every front may run
/// this: failing a batch twice is harmless.
async fn expire_abandoned(queue: Arc<dyn Queue>, results_dir: PathBuf, timeout: Duration) {
    let every = (timeout / 4).clamp(Duration::from_millis(100), Duration::from_secs(30));
    loop {
        tokio::time::sleep(every).await;
        match queue.expire_receiving(timeout).await {
            Ok(ids) => {
                for id in ids {
                    tracing::warn!(batch = batch_ref(&id), "abandoned submission: batch failed");
                    let dir = results_dir.clone();
                    let _ = tokio::task::spawn_blocking(move || thermosieve_worker::finalize::remove_parts(&dir, &id)).await;
                }
            }
            Err(e) => tracing::debug!(error = %e, "could not look for abandoned submissions"),
        }
    }
}

/// The front's metrics text: its counters and the queue's gauges, read now.
pub async fn metrics_text(queue: Arc<dyn Queue>) -> String {
    let queue = tokio::time::timeout(Duration::from_secs(2), queue.stats())
        .await
        .ok()
        .and_then(Result::ok);
    metrics::render(metrics::registry(), Some(metrics::Gauges { queue }))
}

/// How often the front checks that it can reach the queue.
const HEALTH_EVERY: Duration = Duration::from_secs(1);

/// Health follows the queue: NOT_SERVING (for the whole server and for the Screening service)
/// while the queue does not answer, SERVING again when it does.
async fn watch_queue_health(queue: Arc<dyn Queue>, health: tonic_health::server::HealthReporter) {
    use tonic::server::NamedService;
    use tonic_health::ServingStatus;
    let names = ["", <ScreeningServer<ScreeningService> as NamedService>::NAME];
    let mut serving = true;
    loop {
        let reachable = matches!(tokio::time::timeout(Duration::from_secs(5), queue.depth()).await, Ok(Ok(_)));
        if reachable != serving {
            serving = reachable;
            let status = if serving {
                tracing::info!("the queue answers again: serving");
                ServingStatus::Serving
            } else {
                tracing::warn!("the queue does not answer: health reports NOT_SERVING");
                ServingStatus::NotServing
            };
            for name in names {
                health.set_service_status(name, status).await;
            }
        }
        tokio::time::sleep(HEALTH_EVERY).await;
    }
}
