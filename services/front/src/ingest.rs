//! Taking in one batch: validate the options, make the batch id, cut the case stream into
//! chunks, enqueue them with backpressure, seal the batch.
//!
//! Routes: all steps of one route go into the same chunk. The steps of a route must arrive
//! contiguously (one after the other; their step order does not matter). Nothing is buffered
//! per route beyond the chunk being filled, so memory stays flat in the batch size; a step whose
//! route was already closed (other cases came in between) becomes an error row saying so. The
//! front remembers closed routes as 64-bit hashes only (8 bytes per route). A route longer than
//! [`MAX_ROUTE_STEPS`] steps keeps its first steps and reports the rest as error rows.

use crate::error::FrontError;
use std::collections::hash_map::DefaultHasher;
use std::collections::HashSet;
use std::hash::{Hash, Hasher};
use std::sync::Arc;
use std::time::{Duration, Instant};
use thermosieve_engine::thermo::TemperatureGrid;
use thermosieve_model::{now_unix_ms, BatchSpec, CaseInput, Chunk, Conditions};
use thermosieve_queue::{Queue, QueueError};

/// Most steps in one route.
pub const MAX_ROUTE_STEPS: usize = 1000;
/// Longest case id and reaction text accepted, bytes.
pub const MAX_CASE_ID_BYTES: usize = 256;
pub const MAX_REACTION_BYTES: usize = 4096;
pub const MAX_ROUTE_ID_BYTES: usize = 256;
/// Chunk size bounds.
pub const MAX_CHUNK_SIZE: usize = 10_000;
/// A chunk is closed at the next route boundary once its cases hold this many bytes, whatever
/// their count: it bounds a worker's chunk in memory and a queue entry in Redis. With the
/// default queue depth of 256 chunks this caps what Redis holds near 256 MiB of cases even
/// when every case carries the largest `extra` allowed (at 8 MiB that was 1.66 GB measured).
pub const MAX_CHUNK_BYTES: usize = 1 << 20;
/// Free-form columns (`extra`) of one case: at most this many, and this many bytes in all.
pub const MAX_EXTRA_KEYS: usize = 32;
pub const MAX_EXTRA_BYTES: usize = 4096;

/// The bytes a case holds, roughly (texts plus a fixed part for the numbers).
fn case_bytes(c: &CaseInput) -> usize {
    let extra: usize = c.conditions.extra.iter().map(|(k, v)| k.len() + v.len()).sum();
    256 + c.case_id.len() + c.reaction.len() + c.route_id.as_ref().map_or(0, String::len) + extra
}

/// Limits of the front.
#[derive(Clone, Debug)]
pub struct IngestLimits {
    /// Cases per chunk when the client asks for none.
    pub default_chunk_size: usize,
    /// Queue depth (chunks waiting or in flight) above which submissions are refused.
    pub max_queue_depth: u64,
    /// How long a submission waits for the queue to drain below the limit before failing.
    pub enqueue_wait: Duration,
    /// Submissions streaming at once, in all and per tenant; more are RESOURCE_EXHAUSTED.
    pub max_submissions: usize,
    pub max_submissions_per_tenant: usize,
}

impl Default for IngestLimits {
    fn default() -> Self {
        IngestLimits {
            default_chunk_size: 2000,
            max_queue_depth: 256,
            enqueue_wait: Duration::from_secs(30),
            max_submissions: 64,
            max_submissions_per_tenant: 8,
        }
    }
}

/// Batch options as a client gives them.
#[derive(Clone, Debug, Default)]
pub struct BatchOptions {
    /// Empty: the default process grid.
    pub temperatures_k: Vec<f64>,
    pub default_conditions: Conditions,
    /// 0: the front's default.
    pub chunk_size: usize,
    pub label: String,
}

/// What a finished submission reports.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Submitted {
    pub batch_id: String,
    pub cases: u64,
    pub input_errors: u64,
    pub chunks: u64,
}

/// A new batch id: 128 random bits as 32 lowercase hex digits.
///
/// # Errors
/// When the system's random source fails.
pub fn new_batch_id() -> Result<String, FrontError> {
    let mut b = [0u8; 16];
    getrandom::fill(&mut b).map_err(FrontError::Random)?;
    Ok(b.iter().map(|x| format!("{x:02x}")).collect())
}

/// Whether `id` looks like a server-made batch id.
pub fn is_batch_id(id: &str) -> bool {
    id.len() == 32 && id.bytes().all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
}

/// Check batch options and turn them into a spec with a fresh id.
///
/// # Errors
/// `InvalidArgument` naming the field.
pub fn batch_spec(options: BatchOptions, limits: &IngestLimits) -> Result<BatchSpec, FrontError> {
    let grid = if options.temperatures_k.is_empty() {
        TemperatureGrid::default_process()
    } else {
        TemperatureGrid::new(options.temperatures_k).map_err(|e| FrontError::invalid("header.temperatures_k", e.to_string()))?
    };
    let chunk_size = match options.chunk_size {
        0 => limits.default_chunk_size,
        n if n > MAX_CHUNK_SIZE => {
            return Err(FrontError::invalid(
                "header.chunk_size",
                format!("{n} is more than the limit of {MAX_CHUNK_SIZE}"),
            ))
        }
        n => n,
    };
    if let Some(e) = options.default_conditions.range_errors().into_iter().next() {
        return Err(FrontError::invalid("header.default_conditions", e));
    }
    if options.label.len() > 1024 {
        return Err(FrontError::invalid("header.label", "longer than 1024 bytes"));
    }
    Ok(BatchSpec {
        batch_id: new_batch_id()?,
        temperatures_k: grid.temperatures_k().to_vec(),
        default_conditions: options.default_conditions,
        chunk_size,
        label: options.label,
        created_unix_ms: now_unix_ms(),
        tenant: String::new(),
    })
}

fn route_hash(route: &str) -> u64 {
    let mut h = DefaultHasher::new();
    route.hash(&mut h);
    h.finish()
}

/// One batch being received.
pub struct Ingest {
    queue: Arc<dyn Queue>,
    limits: IngestLimits,
    spec: BatchSpec,
    chunk: Vec<CaseInput>,
    seq: u64,
    route: Option<String>,
    route_steps: usize,
    closed_routes: HashSet<u64>,
    /// Approximate bytes of the chunk being filled (see [`case_bytes`]).
    chunk_bytes: usize,
    cases: u64,
    input_errors: u64,
}

impl Ingest {
    /// Check the queue depth, record the batch and get ready for cases.
    ///
    /// # Errors
    /// `QueueFull` when the queue is over its limit, queue errors.
    pub async fn start(queue: Arc<dyn Queue>, spec: BatchSpec, limits: IngestLimits) -> Result<Ingest, FrontError> {
        let depth = queue.depth().await?;
        if depth > limits.max_queue_depth {
            return Err(FrontError::QueueFull {
                depth,
                limit: limits.max_queue_depth,
            });
        }
        queue.create_batch(&spec).await?;
        tracing::info!(batch = crate::auth::batch_ref(&spec.batch_id), tenant = %spec.tenant, chunk_size = spec.chunk_size, grid_points = spec.temperatures_k.len(), "batch created");
        Ok(Ingest {
            queue,
            limits,
            spec,
            chunk: Vec::new(),
            seq: 0,
            route: None,
            route_steps: 0,
            closed_routes: HashSet::new(),
            chunk_bytes: 0,
            cases: 0,
            input_errors: 0,
        })
    }

    pub fn batch_id(&self) -> &str {
        &self.spec.batch_id
    }

    pub fn spec(&self) -> &BatchSpec {
        &self.spec
    }

    /// Check one case (a bad one becomes an error row) and add it to the current chunk.
    ///
    /// # Errors
    /// `QueueFull` when the queue stays over its limit, queue errors.
    pub async fn push(&mut self, mut case: CaseInput) -> Result<(), FrontError> {
        self.cases += 1;
        if case.row == 0 {
            case.row = self.cases;
        }
        validate_case(&mut case);
        let same_route = case.route_id.is_some() && case.route_id == self.route;
        if same_route {
            self.route_steps += 1;
            if self.route_steps > MAX_ROUTE_STEPS && case.input_error.is_none() {
                case.input_error = Some(format!(
                    "row {}, column route_id: route has more than {MAX_ROUTE_STEPS} steps; the rest are not screened",
                    case.row
                ));
            }
        } else {
            if let Some(r) = self.route.take() {
                self.closed_routes.insert(route_hash(&r));
            }
            if self.chunk.len() >= self.spec.chunk_size || self.chunk_bytes >= MAX_CHUNK_BYTES {
                self.flush().await?;
            }
            if let Some(r) = &case.route_id {
                if self.closed_routes.contains(&route_hash(r)) && case.input_error.is_none() {
                    case.input_error = Some(format!(
                        "row {}, column route_id: route {r:?} already ended earlier in the input; the steps of a route must be submitted one after the other",
                        case.row
                    ));
                }
            }
            self.route = case.route_id.clone();
            self.route_steps = 1;
        }
        if case.input_error.is_some() {
            self.input_errors += 1;
        }
        self.chunk_bytes += case_bytes(&case);
        self.chunk.push(case);
        Ok(())
    }

    async fn flush(&mut self) -> Result<(), FrontError> {
        if self.chunk.is_empty() {
            return Ok(());
        }
        let chunk = Chunk {
            batch_id: self.spec.batch_id.clone(),
            seq: self.seq,
            cases: std::mem::take(&mut self.chunk).into(),
        };
        // The queue checks its depth and adds in one step; a full queue is waited on up to
        // `enqueue_wait`, then the submission is refused.
        let deadline = Instant::now() + self.limits.enqueue_wait;
        loop {
            match self.queue.enqueue(&chunk, self.limits.max_queue_depth).await {
                Ok(()) => break,
                Err(QueueError::Full { .. }) if Instant::now() < deadline => {
                    tokio::time::sleep(Duration::from_millis(100)).await;
                }
                // A slow or briefly unreachable Redis: try again (adding a chunk twice is a no-op).
                Err(e) if e.retryable() && Instant::now() < deadline => {
                    tracing::warn!(error = %e, "enqueueing a chunk failed; retrying");
                    tokio::time::sleep(Duration::from_millis(500)).await;
                }
                Err(QueueError::Full { depth }) => {
                    return Err(FrontError::QueueFull {
                        depth,
                        limit: self.limits.max_queue_depth,
                    })
                }
                Err(e) => return Err(e.into()),
            }
        }
        self.chunk_bytes = 0;
        self.seq += 1;
        Ok(())
    }

    /// Enqueue the last chunk and seal the batch.
    ///
    /// # Errors
    /// As [`Ingest::push`].
    pub async fn finish(mut self) -> Result<Submitted, FrontError> {
        self.flush().await?;
        self.queue.seal(&self.spec.batch_id).await?;
        tracing::info!(batch = crate::auth::batch_ref(&self.spec.batch_id), tenant = %self.spec.tenant, cases = self.cases, chunks = self.seq, input_errors = self.input_errors, "batch sealed");
        Ok(Submitted {
            batch_id: self.spec.batch_id.clone(),
            cases: self.cases,
            input_errors: self.input_errors,
            chunks: self.seq,
        })
    }
}

/// The checks every case gets on every path (table rows, gRPC cases, ScreenInline): a failing
/// case becomes an error row naming its row and field.
pub fn validate_case(case: &mut CaseInput) {
    let extra_bytes: usize = case.conditions.extra.iter().map(|(k, v)| k.len() + v.len()).sum();
    let n = case.conditions.extra.len();
    let extra_error = (n > MAX_EXTRA_KEYS || extra_bytes > MAX_EXTRA_BYTES).then(|| {
        // Not kept, even on a row that is already an error: memory stays bounded.
        case.conditions.extra.clear();
        format!("extra columns: {n} columns of {extra_bytes} bytes; at most {MAX_EXTRA_KEYS} columns and {MAX_EXTRA_BYTES} bytes per case")
    });
    if case.input_error.is_some() {
        return;
    }
    let row = case.row;
    let ranges = case.conditions.range_errors();
    let err = if case.case_id.trim().is_empty() {
        case.case_id = format!("row-{row}");
        Some("column case_id: missing (every case needs an id; this row is reported as row-N)".to_string())
    } else if case.case_id.len() > MAX_CASE_ID_BYTES {
        case.case_id = format!("row-{row}");
        Some(format!(
            "column case_id: longer than {MAX_CASE_ID_BYTES} bytes (this row is reported as row-N)"
        ))
    } else if case.reaction.trim().is_empty() {
        Some("column reaction: missing (expected a reaction equation such as \"CO(g) + H2O(g) -> CO2(g) + H2(g)\")".to_string())
    } else if case.reaction.len() > MAX_REACTION_BYTES {
        Some(format!("column reaction: longer than {MAX_REACTION_BYTES} bytes"))
    } else if case.route_id.as_ref().is_some_and(|r| r.len() > MAX_ROUTE_ID_BYTES) {
        Some(format!("column route_id: longer than {MAX_ROUTE_ID_BYTES} bytes"))
    } else if let Some(e) = extra_error {
        Some(e)
    } else if case.step == Some(0) {
        Some("column step: expected a whole number ≥ 1, got 0".to_string())
    } else if let Some(p) = case.phase.as_deref().filter(|p| !thermosieve_model::PHASES.contains(p)) {
        Some(format!("column phase: expected one of gas, liquid, solid, standard, got {p:?}"))
    } else if !ranges.is_empty() {
        Some(format!("conditions: {}", ranges.join("; ")))
    } else {
        None
    };
    if let Some(e) = err {
        case.input_error = Some(format!("row {row}, {e}"));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use thermosieve_model::Task;
    use thermosieve_queue::MemoryQueue;

    fn case(id: &str, route: Option<&str>) -> CaseInput {
        CaseInput {
            case_id: id.into(),
            reaction: "CO + O2 -> CO2".into(),
            route_id: route.map(String::from),
            ..Default::default()
        }
    }

    #[tokio::test]
    async fn routes_stay_in_one_chunk_and_a_returning_route_is_an_error_row() {
        let q = Arc::new(MemoryQueue::new());
        let spec = batch_spec(
            BatchOptions {
                chunk_size: 2,
                ..Default::default()
            },
            &IngestLimits::default(),
        )
        .unwrap();
        let mut ing = Ingest::start(q.clone(), spec, IngestLimits::default()).await.unwrap();
        for (id, r) in [("a1", "A"), ("a2", "A"), ("a3", "A"), ("b1", "B"), ("x", ""), ("a4", "A")] {
            ing.push(case(id, (!r.is_empty()).then_some(r))).await.unwrap();
        }
        let s = ing.finish().await.unwrap();
        assert_eq!((s.cases, s.chunks, s.input_errors), (6, 3, 1));
        let mut chunks = Vec::new();
        while let Some(d) = q.poll("t", Duration::from_millis(5)).await.unwrap() {
            if let Task::Chunk(c) = d.task {
                chunks.push(c.cases.iter().map(|c| c.case_id.clone()).collect::<Vec<_>>());
            }
        }
        assert_eq!(chunks, vec![vec!["a1", "a2", "a3"], vec!["b1", "x"], vec!["a4"]]);
    }

    #[test]
    fn batch_ids_are_128_bit_hex_and_differ() {
        let (a, b) = (new_batch_id().unwrap(), new_batch_id().unwrap());
        assert!(is_batch_id(&a) && is_batch_id(&b) && a != b);
    }

    #[test]
    fn a_bad_grid_names_the_field() {
        let e = batch_spec(
            BatchOptions {
                temperatures_k: vec![5.0],
                ..Default::default()
            },
            &IngestLimits::default(),
        )
        .unwrap_err();
        assert!(e.to_string().starts_with("header.temperatures_k: "), "{e}");
    }
}
