//! Operational metrics of this process in the Prometheus text format (version 0.0.4), and a
//! small HTTP listener that serves them at `/metrics`.
//!
//! One registry per process (counters are process-wide atomics): the worker counts chunks,
//! cases by outcome, errors by kind, dead letters, finalizations and chunk latency; the front
//! counts submissions and cancellations and adds the queue's gauges when scraped.

use std::fmt::Write as _;
use std::sync::atomic::{AtomicU64, Ordering};
use tokio::io::{AsyncReadExt, AsyncWriteExt};

/// Upper bounds of the chunk-latency histogram, seconds.
pub const CHUNK_SECONDS_BUCKETS: [f64; 11] = [0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0, 30.0, 60.0, 300.0];

/// A monotonically increasing counter.
#[derive(Default)]
pub struct Counter(AtomicU64);

impl Counter {
    pub fn add(&self, n: u64) {
        self.0.fetch_add(n, Ordering::Relaxed);
    }
    pub fn get(&self) -> u64 {
        self.0.load(Ordering::Relaxed)
    }
}

/// A histogram with [`CHUNK_SECONDS_BUCKETS`] (cumulative on output).
#[derive(Default)]
pub struct Histogram {
    buckets: [AtomicU64; 11],
    count: AtomicU64,
    /// Sum in microseconds.
    sum_us: AtomicU64,
}

impl Histogram {
    pub fn observe(&self, seconds: f64) {
        if let Some(i) = CHUNK_SECONDS_BUCKETS.iter().position(|&b| seconds <= b) {
            self.buckets[i].fetch_add(1, Ordering::Relaxed);
        }
        self.count.fetch_add(1, Ordering::Relaxed);
        self.sum_us.fetch_add((seconds * 1e6) as u64, Ordering::Relaxed);
    }
}

/// The process's counters.
#[derive(Default)]
pub struct Registry {
    pub chunks: Counter,
    pub chunks_dead_lettered: Counter,
    pub cases_ok: Counter,
    /// Error rows by kind: input (the case could not be read or validated), engine (the
    /// reaction could not be screened), dead-lettered; and ok rows whose process view failed.
    pub errors_input: Counter,
    pub errors_engine: Counter,
    pub errors_dead_letter: Counter,
    pub process_errors: Counter,
    pub finalized_done: Counter,
    pub finalized_failed: Counter,
    pub chunk_seconds: Histogram,
    pub submissions_accepted: Counter,
    pub submissions_refused: Counter,
    pub submissions_failed: Counter,
    pub cancellations: Counter,
}

/// This process's registry.
pub fn registry() -> &'static Registry {
    static R: std::sync::OnceLock<Registry> = std::sync::OnceLock::new();
    R.get_or_init(Registry::default)
}

/// Gauges read when scraped (the queue's, on the front).
#[derive(Clone, Debug, Default)]
pub struct Gauges {
    /// The queue's snapshot; `None` when the queue did not answer.
    pub queue: Option<thermosieve_queue::QueueStats>,
}

fn family(out: &mut String, name: &str, kind: &str, help: &str) {
    let _ = writeln!(out, "# HELP {name} {help}\n# TYPE {name} {kind}");
}

/// The registry (and `gauges`) as Prometheus text.
pub fn render(r: &Registry, gauges: Option<Gauges>) -> String {
    let mut o = String::new();
    family(&mut o, "thermosieve_chunks_total", "counter", "Chunks committed by this worker.");
    let _ = writeln!(o, "thermosieve_chunks_total {}", r.chunks.get());
    family(
        &mut o,
        "thermosieve_chunks_dead_lettered_total",
        "counter",
        "Chunks dead-lettered by this worker.",
    );
    let _ = writeln!(o, "thermosieve_chunks_dead_lettered_total {}", r.chunks_dead_lettered.get());
    family(&mut o, "thermosieve_cases_total", "counter", "Case rows written, by outcome.");
    let errors = r.errors_input.get() + r.errors_engine.get() + r.errors_dead_letter.get();
    let _ = writeln!(o, "thermosieve_cases_total{{outcome=\"ok\"}} {}", r.cases_ok.get());
    let _ = writeln!(o, "thermosieve_cases_total{{outcome=\"error\"}} {errors}");
    family(
        &mut o,
        "thermosieve_case_errors_total",
        "counter",
        "Error rows by kind; process: ok rows whose process view failed.",
    );
    for (kind, c) in [
        ("input", &r.errors_input),
        ("engine", &r.errors_engine),
        ("dead_letter", &r.errors_dead_letter),
        ("process", &r.process_errors),
    ] {
        let _ = writeln!(o, "thermosieve_case_errors_total{{kind=\"{kind}\"}} {}", c.get());
    }
    family(
        &mut o,
        "thermosieve_batches_finalized_total",
        "counter",
        "Finalizations by outcome.",
    );
    let _ = writeln!(
        o,
        "thermosieve_batches_finalized_total{{outcome=\"done\"}} {}",
        r.finalized_done.get()
    );
    let _ = writeln!(
        o,
        "thermosieve_batches_finalized_total{{outcome=\"failed\"}} {}",
        r.finalized_failed.get()
    );
    family(
        &mut o,
        "thermosieve_chunk_seconds",
        "histogram",
        "Time to compute and write one chunk.",
    );
    let mut cumulative = 0;
    for (b, n) in CHUNK_SECONDS_BUCKETS.iter().zip(&r.chunk_seconds.buckets) {
        cumulative += n.load(Ordering::Relaxed);
        let _ = writeln!(o, "thermosieve_chunk_seconds_bucket{{le=\"{b}\"}} {cumulative}");
    }
    let count = r.chunk_seconds.count.load(Ordering::Relaxed);
    let _ = writeln!(o, "thermosieve_chunk_seconds_bucket{{le=\"+Inf\"}} {count}");
    let _ = writeln!(
        o,
        "thermosieve_chunk_seconds_sum {}",
        r.chunk_seconds.sum_us.load(Ordering::Relaxed) as f64 / 1e6
    );
    let _ = writeln!(o, "thermosieve_chunk_seconds_count {count}");
    family(
        &mut o,
        "thermosieve_submissions_total",
        "counter",
        "Batch submissions by outcome (front).",
    );
    for (outcome, c) in [
        ("accepted", &r.submissions_accepted),
        ("refused", &r.submissions_refused),
        ("failed", &r.submissions_failed),
    ] {
        let _ = writeln!(o, "thermosieve_submissions_total{{outcome=\"{outcome}\"}} {}", c.get());
    }
    family(
        &mut o,
        "thermosieve_cancellations_total",
        "counter",
        "Batches cancelled through the front.",
    );
    let _ = writeln!(o, "thermosieve_cancellations_total {}", r.cancellations.get());
    if let Some(g) = gauges {
        family(&mut o, "thermosieve_queue_up", "gauge", "1 when the queue answered this scrape.");
        let _ = writeln!(o, "thermosieve_queue_up {}", u8::from(g.queue.is_some()));
        if let Some(q) = g.queue {
            family(
                &mut o,
                "thermosieve_queue_tasks",
                "gauge",
                "Queue tasks: waiting (not yet read by a worker: the lag) and in flight (read, not yet acknowledged).",
            );
            let _ = writeln!(o, "thermosieve_queue_tasks{{stage=\"waiting\"}} {}", q.waiting);
            let _ = writeln!(o, "thermosieve_queue_tasks{{stage=\"in_flight\"}} {}", q.in_flight);
            family(
                &mut o,
                "thermosieve_queue_dead_letters",
                "gauge",
                "Chunks dead-lettered and kept for inspection.",
            );
            let _ = writeln!(o, "thermosieve_queue_dead_letters {}", q.dead_letters);
            family(
                &mut o,
                "thermosieve_batches",
                "gauge",
                "Batches whose state the queue keeps, by state.",
            );
            for (state, n) in &q.batches {
                let _ = writeln!(o, "thermosieve_batches{{state=\"{}\"}} {n}", state.as_str());
            }
        }
    }
    o
}

/// Serve `GET /metrics` on `listener` until the task is dropped; `body` makes the text.
pub async fn serve<F, Fut>(listener: tokio::net::TcpListener, body: F)
where
    F: Fn() -> Fut + Clone + Send + 'static,
    Fut: std::future::Future<Output = String> + Send + 'static,
{
    loop {
        let Ok((mut stream, _)) = listener.accept().await else {
            continue;
        };
        let body = body.clone();
        tokio::spawn(async move {
            let mut buf = [0u8; 2048];
            let mut n = 0;
            // The request line and headers; nothing larger is needed or read.
            while n < buf.len() {
                match tokio::time::timeout(std::time::Duration::from_secs(5), stream.read(&mut buf[n..])).await {
                    Ok(Ok(0)) | Err(_) | Ok(Err(_)) => break,
                    Ok(Ok(k)) => {
                        n += k;
                        if buf[..n].windows(4).any(|w| w == b"\r\n\r\n") {
                            break;
                        }
                    }
                }
            }
            let request = String::from_utf8_lossy(&buf[..n]);
            let (status, text) = if request.starts_with("GET /metrics ") || request.starts_with("GET /metrics?") {
                ("200 OK", body().await)
            } else {
                ("404 Not Found", "only GET /metrics is served here\n".to_string())
            };
            let head = format!(
                "HTTP/1.1 {status}\r\nContent-Type: text/plain; version=0.0.4; charset=utf-8\r\nContent-Length: {}\r\nConnection: close\r\n\r\n",
                text.len()
            );
            let _ = stream.write_all(head.as_bytes()).await;
            let _ = stream.write_all(text.as_bytes()).await;
            let _ = stream.shutdown().await;
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_text_format_holds_cumulative_buckets_and_every_family() {
        let r = Registry::default();
        r.cases_ok.add(7);
        r.errors_engine.add(2);
        r.errors_input.add(1);
        r.chunk_seconds.observe(0.07);
        r.chunk_seconds.observe(3.0);
        let t = render(
            &r,
            Some(Gauges {
                queue: Some(thermosieve_queue::QueueStats {
                    waiting: 4,
                    in_flight: 1,
                    dead_letters: 0,
                    batches: vec![(thermosieve_model::BatchState::Running, 2)],
                }),
            }),
        );
        for line in [
            "thermosieve_cases_total{outcome=\"ok\"} 7",
            "thermosieve_cases_total{outcome=\"error\"} 3",
            "thermosieve_case_errors_total{kind=\"engine\"} 2",
            "thermosieve_chunk_seconds_bucket{le=\"0.05\"} 0",
            "thermosieve_chunk_seconds_bucket{le=\"0.1\"} 1",
            "thermosieve_chunk_seconds_bucket{le=\"2.5\"} 1",
            "thermosieve_chunk_seconds_bucket{le=\"5\"} 2",
            "thermosieve_chunk_seconds_bucket{le=\"+Inf\"} 2",
            "thermosieve_chunk_seconds_count 2",
            "thermosieve_chunk_seconds_sum 3.07",
            "thermosieve_queue_up 1",
            "thermosieve_queue_tasks{stage=\"waiting\"} 4",
            "thermosieve_queue_tasks{stage=\"in_flight\"} 1",
            "thermosieve_queue_dead_letters 0",
            "thermosieve_batches{state=\"running\"} 2",
            "# TYPE thermosieve_chunk_seconds histogram",
        ] {
            assert!(t.lines().any(|l| l == line), "missing {line:?} in\n{t}");
        }
    }
}
