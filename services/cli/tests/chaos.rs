//! Chaos on real processes: a redis-server, `thermosieve serve` and two `thermosieve work`
//! processes on loopback; one worker is killed with SIGKILL every 0.3–1 s and started again
//! while batches run. Every case must come back exactly once and the batch DONE, three runs in
//! a row. Times are printed against a run without faults (never asserted).

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};
use thermosieve_e2e::{demo_csv, read_table, strings, RedisServer};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_thermosieve"))
}

fn free_port() -> u16 {
    std::net::TcpListener::bind("127.0.0.1:0").unwrap().local_addr().unwrap().port()
}

/// The demo's rows `copies` times under fresh case and route ids; returns the ids.
fn write_input(path: &Path, copies: usize) -> Vec<String> {
    let mut r = csv::Reader::from_path(demo_csv()).unwrap();
    let headers = r.headers().unwrap().clone();
    let rows: Vec<csv::StringRecord> = r.records().map(Result::unwrap).collect();
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let (id, route) = (col("case_id"), col("route_id"));
    let mut w = csv::Writer::from_path(path).unwrap();
    w.write_record(&headers).unwrap();
    let mut ids = Vec::new();
    for k in 0..copies {
        for row in &rows {
            let fields: Vec<String> = row
                .iter()
                .enumerate()
                .map(|(i, f)| {
                    if (i == id || i == route) && !f.is_empty() {
                        format!("{f}#{k}")
                    } else {
                        f.to_string()
                    }
                })
                .collect();
            ids.push(fields[id].clone());
            w.write_record(&fields).unwrap();
        }
    }
    w.flush().unwrap();
    ids
}

struct Plant {
    redis: RedisServer,
    results: tempfile::TempDir,
    front: Child,
    front_addr: String,
    workers: Vec<Child>,
    started: usize,
}

impl Plant {
    fn env(&self, c: &mut Command) {
        c.env("THERMOSIEVE_REDIS_URL", self.redis.url())
            .env("THERMOSIEVE_RESULTS_DIR", self.results.path())
            .env("THERMOSIEVE_FRONT", &self.front_addr)
            .env("THERMOSIEVE_LOG", "error")
            .stdout(Stdio::null())
            .stderr(Stdio::null());
    }

    fn start() -> Plant {
        let redis = RedisServer::start();
        let results = tempfile::tempdir().unwrap();
        let port = free_port();
        let mut plant = Plant {
            redis,
            results,
            front: bin().arg("--help").stdout(Stdio::null()).spawn().unwrap(),
            front_addr: format!("http://127.0.0.1:{port}"),
            workers: Vec::new(),
            started: 0,
        };
        let _ = plant.front.wait();
        let mut c = bin();
        c.args(["serve", "--listen", &format!("127.0.0.1:{port}")]);
        plant.env(&mut c);
        plant.front = c.spawn().unwrap();
        let deadline = Instant::now() + Duration::from_secs(20);
        while std::net::TcpStream::connect(("127.0.0.1", port)).is_err() {
            assert!(Instant::now() < deadline, "the front did not listen");
            std::thread::sleep(Duration::from_millis(50));
        }
        for _ in 0..2 {
            let w = plant.worker();
            plant.workers.push(w);
        }
        plant
    }

    fn worker(&mut self) -> Child {
        self.started += 1;
        let mut c = bin();
        c.args(["work", "--threads", "1", "--reclaim-idle-s", "1", "--max-deliveries", "1000"])
            .args(["--consumer", &format!("chaos-{}", self.started)]);
        self.env(&mut c);
        c.spawn().unwrap()
    }

    fn run(&self, args: &[&str]) -> String {
        let mut c = bin();
        c.args(args);
        self.env(&mut c);
        let o = c.stdout(Stdio::piped()).output().unwrap();
        assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
        String::from_utf8_lossy(&o.stdout).trim().to_string()
    }

    /// Submit, then wait for the end, killing and restarting a worker every 0.3–1 s when
    /// `chaos`; returns (batch id, seconds, kills).
    fn batch(&mut self, input: &Path, chaos: bool, seed: u64) -> (String, f64, u32) {
        let t0 = Instant::now();
        let id = self.run(&["submit", input.to_str().unwrap(), "--chunk-size", "100"]);
        let mut watch = bin();
        watch.args(["watch", &id]);
        self.env(&mut watch);
        let mut watch = watch.spawn().unwrap();
        let mut rng = seed;
        let mut kills = 0;
        let status = loop {
            if let Some(s) = watch.try_wait().unwrap() {
                break s;
            }
            assert!(t0.elapsed() < Duration::from_secs(600), "batch not done in 600 s");
            if chaos {
                // xorshift: repeatable pauses of 0.3–1 s.
                rng ^= rng << 13;
                rng ^= rng >> 7;
                rng ^= rng << 17;
                std::thread::sleep(Duration::from_millis(300 + rng % 700));
                let victim = (rng >> 32) as usize % self.workers.len();
                let _ = self.workers[victim].kill();
                let _ = self.workers[victim].wait();
                self.workers[victim] = self.worker();
                kills += 1;
            } else {
                std::thread::sleep(Duration::from_millis(50));
            }
        };
        assert!(status.success(), "watch of {id} ended {status}");
        (id, t0.elapsed().as_secs_f64(), kills)
    }

    fn fetch_case_ids(&self, id: &str, out: &Path) -> Vec<String> {
        self.run(&["fetch", id, "--out", out.to_str().unwrap()]);
        strings(&read_table(&out.join("cases.parquet")), "case_id")
            .into_iter()
            .flatten()
            .collect()
    }
}

impl Drop for Plant {
    fn drop(&mut self) {
        for w in &mut self.workers {
            let _ = w.kill();
            let _ = w.wait();
        }
        let _ = self.front.kill();
        let _ = self.front.wait();
    }
}

fn assert_each_once(got: &[String], want: &[String], what: &str) {
    let mut seen: HashMap<&str, u32> = HashMap::new();
    for id in got {
        *seen.entry(id.as_str()).or_default() += 1;
    }
    let twice: Vec<_> = seen.iter().filter(|(_, &n)| n > 1).map(|(k, _)| *k).collect();
    assert!(twice.is_empty(), "{what}: cases twice: {:?}", &twice[..twice.len().min(5)]);
    let missing: Vec<_> = want.iter().filter(|id| !seen.contains_key(id.as_str())).collect();
    assert!(missing.is_empty(), "{what}: cases missing: {:?}", &missing[..missing.len().min(5)]);
    assert_eq!(got.len(), want.len(), "{what}");
}

#[test]
fn workers_killed_every_second_lose_no_case_and_write_none_twice() {
    let dir = tempfile::tempdir().unwrap();
    let input: PathBuf = dir.path().join("screen.csv");
    let ids = write_input(&input, 2);
    let mut plant = Plant::start();
    let (calm, calm_s, _) = plant.batch(&input, false, 0);
    assert_each_once(&plant.fetch_case_ids(&calm, &dir.path().join("calm")), &ids, "no faults");
    for run in 0..3u64 {
        let (id, secs, kills) = plant.batch(&input, true, 0x9e37_79b9_7f4a_7c15 ^ run);
        let got = plant.fetch_case_ids(&id, &dir.path().join(format!("chaos-{run}")));
        assert_each_once(&got, &ids, &format!("chaos run {run}"));
        assert!(
            kills >= 2,
            "run {run}: only {kills} kills; the batch ended too soon to test anything"
        );
        eprintln!(
            "chaos run {run}: {} cases, {kills} workers killed, {secs:.1} s (no faults: {calm_s:.1} s)",
            ids.len()
        );
    }
}
