//! `fetch` against a front that misbehaves (a peer written for this test, over real gRPC on
//! loopback): it writes only the known table names, only inside `--out`, checks the byte count,
//! and leaves no partial file behind.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use std::pin::Pin;
use std::process::Command;
use thermosieve_proto::v1 as pb;
use thermosieve_proto::v1::screening_server::{Screening, ScreeningServer};
use tonic::{Request, Response, Status, Streaming};

/// Answers every FetchTable with one message: `data` under `file_name`, announcing `total`.
struct Hostile {
    file_name: String,
    total: u64,
}

type Chunks = Pin<Box<dyn tokio_stream::Stream<Item = Result<pb::TableChunk, Status>> + Send>>;
type Statuses = Pin<Box<dyn tokio_stream::Stream<Item = Result<pb::BatchStatus, Status>> + Send>>;

#[tonic::async_trait]
impl Screening for Hostile {
    async fn submit_batch(&self, _: Request<Streaming<pb::SubmitBatchRequest>>) -> Result<Response<pb::SubmitBatchResponse>, Status> {
        Err(Status::unimplemented("test peer"))
    }
    async fn get_batch_status(&self, _: Request<pb::GetBatchStatusRequest>) -> Result<Response<pb::BatchStatus>, Status> {
        Err(Status::unimplemented("test peer"))
    }
    type WatchBatchStream = Statuses;
    async fn watch_batch(&self, _: Request<pb::WatchBatchRequest>) -> Result<Response<Statuses>, Status> {
        Err(Status::unimplemented("test peer"))
    }
    async fn cancel_batch(&self, _: Request<pb::CancelBatchRequest>) -> Result<Response<pb::BatchStatus>, Status> {
        Err(Status::unimplemented("test peer"))
    }
    type FetchTableStream = Chunks;
    async fn fetch_table(&self, _: Request<pb::FetchTableRequest>) -> Result<Response<Chunks>, Status> {
        let chunk = pb::TableChunk {
            data: b"PAR1 not really".to_vec(),
            offset: 0,
            total_bytes: self.total,
            file_name: self.file_name.clone(),
        };
        Ok(Response::new(Box::pin(tokio_stream::iter(vec![Ok(chunk)]))))
    }
    async fn screen_inline(&self, _: Request<pb::ScreenInlineRequest>) -> Result<Response<pb::ScreenInlineResponse>, Status> {
        Err(Status::unimplemented("test peer"))
    }
    async fn resolve_species(&self, _: Request<pb::ResolveSpeciesRequest>) -> Result<Response<pb::ResolveSpeciesResponse>, Status> {
        Err(Status::unimplemented("test peer"))
    }
}

/// Start the peer on a free loopback port in a runtime of its own; returns its address.
fn start(peer: Hostile) -> std::net::SocketAddr {
    let rt = tokio::runtime::Runtime::new().unwrap();
    let listener = rt.block_on(tokio::net::TcpListener::bind("127.0.0.1:0")).unwrap();
    let addr = listener.local_addr().unwrap();
    std::thread::spawn(move || {
        rt.block_on(
            tonic::transport::Server::builder()
                .add_service(ScreeningServer::new(peer))
                .serve_with_incoming(tokio_stream::wrappers::TcpListenerStream::new(listener)),
        )
    });
    addr
}

fn fetch(addr: std::net::SocketAddr, out: &std::path::Path) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_thermosieve"))
        .args(["fetch", "0123456789abcdef0123456789abcdef", "--front"])
        .arg(format!("http://{addr}"))
        .arg("--out")
        .arg(out)
        .env("THERMOSIEVE_LOG", "warn")
        .output()
        .unwrap()
}

fn names(dir: &std::path::Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect()
}

#[test]
fn fetch_writes_only_known_names_inside_out_and_checks_the_size() {
    let root = tempfile::tempdir().unwrap();
    let out = root.path().join("out");
    let outside = root.path().join("escaped.parquet");
    let absolute = root.path().join("absolute.parquet");
    for name in [
        "../escaped.parquet".to_string(),
        absolute.display().to_string(),
        "cases.parquet/../../x".into(),
    ] {
        let o = fetch(
            start(Hostile {
                file_name: name.clone(),
                total: 15,
            }),
            &out,
        );
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(1), "{name}: {err}");
        assert!(err.contains("refusing"), "{name}: {err}");
        assert!(!outside.exists() && !absolute.exists(), "{name}: a file was written outside --out");
        assert!(names(&out).is_empty(), "{name}: left {:?}", names(&out));
    }
    // The right name, but fewer bytes than announced: refused, nothing left.
    let o = fetch(
        start(Hostile {
            file_name: "cases.parquet".into(),
            total: 1000,
        }),
        &out,
    );
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(err.contains("15 bytes arrived of the 1000 announced"), "{err}");
    assert!(names(&out).is_empty(), "left {:?}", names(&out));
}
