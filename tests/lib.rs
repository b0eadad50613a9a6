//! thermosieve-e2e: helpers for the cross-crate tests in `e2e/`: a real `redis-server` per test
//! on a free loopback port (never 6379, no persistence), the demo input, and table reading.
//! It must not be a dependency of any production crate.

use polars::prelude::*;
use std::net::TcpListener;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// The workspace root.
pub fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default()
}

/// `examples/nightly_screen.csv`.
pub fn demo_csv() -> PathBuf {
    root().join("examples").join("nightly_screen.csv")
}

/// A redis-server of this test's own, killed on drop.
pub struct RedisServer {
    child: Option<Child>,
    pub port: u16,
    /// Append-only file on (fsync on every write), so a restart keeps the data.
    aof: bool,
    dir: tempfile::TempDir,
}

impl RedisServer {
    /// Start `redis-server` on a free port with persistence off.
    ///
    /// # Panics
    /// When redis-server is not installed (with a message that says how to install it) or
    /// does not answer within 10 s.
    pub fn start() -> RedisServer {
        RedisServer::start_with(false)
    }

    /// Start `redis-server` on a free port with the append-only file on (`appendfsync always`).
    ///
    /// # Panics
    /// As [`RedisServer::start`].
    pub fn start_with_aof() -> RedisServer {
        RedisServer::start_with(true)
    }

    fn start_with(aof: bool) -> RedisServer {
        let port = TcpListener::bind("127.0.0.1:0")
            .and_then(|l| l.local_addr())
            .map(|a| a.port())
            .expect("no free loopback port");
        let mut server = RedisServer {
            child: None,
            port,
            aof,
            dir: tempfile::tempdir().expect("temp dir"),
        };
        server.restart();
        server
    }

    /// Kill the server at once (SIGKILL): no shutdown save.
    pub fn kill(&mut self) {
        if let Some(mut c) = self.child.take() {
            let _ = c.kill();
            let _ = c.wait();
        }
    }

    /// Start the server again on the same port and folder (after [`RedisServer::kill`]); with
    /// the append-only file on it comes back with its data.
    ///
    /// # Panics
    /// As [`RedisServer::start`].
    pub fn restart(&mut self) {
        self.kill();
        let bin = std::env::var("THERMOSIEVE_TEST_REDIS_SERVER").unwrap_or_else(|_| "redis-server".into());
        let persistence: &[&str] = if self.aof {
            &["--appendonly", "yes", "--appendfsync", "always"]
        } else {
            &["--appendonly", "no"]
        };
        let child = Command::new(&bin)
            .args(["--port", &self.port.to_string(), "--bind", "127.0.0.1", "--save", ""])
            .args(persistence)
            .arg("--dir")
            .arg(self.dir.path())
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap_or_else(|e| panic!("cannot start {bin:?} ({e}): these tests need a real redis-server (Redis 7+). Install it with `apt-get install -y redis-server` (or run scripts/test.sh, which does), or point THERMOSIEVE_TEST_REDIS_SERVER at the binary."));
        self.child = Some(child);
        let port = self.port;
        let deadline = Instant::now() + Duration::from_secs(10);
        // Ready when it answers PING (a bare connect can succeed before it serves).
        while !pong(port) {
            assert!(
                Instant::now() < deadline,
                "redis-server on port {port} did not answer PING within 10 s"
            );
            std::thread::sleep(Duration::from_millis(20));
        }
    }

    pub fn url(&self) -> String {
        format!("redis://127.0.0.1:{}/", self.port)
    }
}

impl Drop for RedisServer {
    fn drop(&mut self) {
        self.kill();
    }
}

/// Read a Parquet file.
///
/// # Panics
/// When the file cannot be read.
pub fn read_table(path: &Path) -> DataFrame {
    let f = std::fs::File::open(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    ParquetReader::new(f).finish().unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// Read Parquet bytes.
///
/// # Panics
/// When the bytes are not Parquet.
pub fn read_table_bytes(bytes: Vec<u8>) -> DataFrame {
    ParquetReader::new(std::io::Cursor::new(bytes)).finish().expect("parquet bytes")
}

/// The key-value metadata of a Parquet file.
///
/// # Panics
/// When the file cannot be read.
pub fn table_metadata(path: &Path) -> Vec<(String, String)> {
    let f = std::fs::File::open(path).expect("open");
    let mut r = ParquetReader::new(f);
    let md = r.get_metadata().expect("metadata");
    md.key_value_metadata
        .as_ref()
        .map(|kv| kv.iter().map(|k| (k.key.clone(), k.value.clone().unwrap_or_default())).collect())
        .unwrap_or_default()
}

/// The strings of a column (nulls as `None`).
///
/// # Panics
/// When the column is missing or not a string column.
pub fn strings(df: &DataFrame, name: &str) -> Vec<Option<String>> {
    let c = df
        .column(name)
        .unwrap_or_else(|e| panic!("{name}: {e}"))
        .str()
        .expect("string column")
        .clone();
    (0..c.len()).map(|i| c.get(i).map(String::from)).collect()
}

/// The numbers of a column.
///
/// # Panics
/// When the column is missing or not Float64.
pub fn floats(df: &DataFrame, name: &str) -> Vec<Option<f64>> {
    let c = df
        .column(name)
        .unwrap_or_else(|e| panic!("{name}: {e}"))
        .f64()
        .expect("f64 column")
        .clone();
    (0..c.len()).map(|i| c.get(i)).collect()
}

fn pong(port: u16) -> bool {
    use std::io::{Read, Write};
    let Ok(mut s) = std::net::TcpStream::connect(("127.0.0.1", port)) else {
        return false;
    };
    let _ = s.set_read_timeout(Some(Duration::from_millis(500)));
    if s.write_all(b"PING\r\n").is_err() {
        return false;
    }
    let mut buf = [0u8; 7];
    s.read_exact(&mut buf).is_ok() && &buf == b"+PONG\r\n"
}
