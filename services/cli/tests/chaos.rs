//! Chaos on real processes: a redis-server, `thermosieve serve` and `thermosieve work`
//! processes on loopback.
//! - One of two workers is killed with SIGKILL every 0.3–1 s and started again while batches
//!   run: every case must come back exactly once and the batch DONE, three runs in a row.
//! - The finalizing worker is stopped dead at each step of finalization (the worker's
//!   `fault-points`, which test builds turn on): a fresh worker finishes the batch.
//! - Redis is killed and restarted from its append-only file while the finalizer is between
//!   steps: the batch ends DONE without restarting any other process.
//!
//! Times are printed against a run without faults (never asserted).

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

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

    /// A front and `workers` workers on `redis`.
    fn start(redis: RedisServer, workers: usize) -> Plant {
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
        for _ in 0..workers {
            let w = plant.worker();
            plant.workers.push(w);
        }
        plant
    }

    fn worker(&mut self) -> Child {
        self.worker_stopping_at(None)
    }

    /// A worker; with `fault`, `THERMOSIEVE_FAULT_AT` set to it (see the worker's `fault`
    /// module).
    fn worker_stopping_at(&mut self, fault: Option<&str>) -> Child {
        self.started += 1;
        let mut c = bin();
        c.args(["work", "--threads", "1", "--reclaim-idle-s", "1", "--max-deliveries", "1000"])
            .args(["--consumer", &format!("chaos-{}", self.started)]);
        self.env(&mut c);
        if let Some(point) = fault {
            c.env("THERMOSIEVE_FAULT_AT", point);
        }
        c.spawn().unwrap()
    }

    fn batch_dir(&self, id: &str) -> PathBuf {
        self.results.path().join(id)
    }

    /// The batch's state as the queue holds it (read from Redis directly).
    fn state(&self, id: &str) -> String {
        use thermosieve_queue::Queue;
        let rt = tokio::runtime::Builder::new_current_thread().enable_all().build().unwrap();
        rt.block_on(async {
            let q = thermosieve_queue::RedisQueue::connect(thermosieve_queue::RedisConfig::new(self.redis.url()))
                .await
                .unwrap();
            q.progress(id)
                .await
                .unwrap()
                .map(|p| p.state.as_str().to_string())
                .unwrap_or_default()
        })
    }

    /// Wait (up to 60 s) for `done`.
    fn wait_for(&self, what: &str, mut done: impl FnMut() -> bool) {
        let deadline = Instant::now() + Duration::from_secs(60);
        while !done() {
            assert!(Instant::now() < deadline, "waited 60 s for {what}");
            std::thread::sleep(Duration::from_millis(50));
        }
    }

    /// `watch <id>` to its end; true when it exits 0 (DONE).
    fn watch_done(&self, id: &str) -> bool {
        let mut c = bin();
        c.args(["watch", id]);
        self.env(&mut c);
        c.status().unwrap().success()
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
    let mut plant = Plant::start(RedisServer::start(), 2);
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

/// Kill the finalizing worker at each step of finalization (tables written; manifest written;
/// DONE recorded, parts not yet removed): a worker started afterwards finishes the batch or
/// recognises it finished, every case is in `cases.parquet` exactly once, and no part file is
/// left behind.
#[test]
fn a_worker_stopped_dead_at_any_step_of_finalization_leaves_a_batch_that_still_ends_done() {
    use std::os::unix::process::ExitStatusExt;
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("screen.csv");
    let ids = write_input(&input, 1);
    let mut plant = Plant::start(RedisServer::start(), 0);
    for point in thermosieve_worker::fault::POINTS {
        let t0 = Instant::now();
        let mut faulty = plant.worker_stopping_at(Some(point));
        let id = plant.run(&["submit", input.to_str().unwrap(), "--chunk-size", "500"]);
        let deadline = Instant::now() + Duration::from_secs(120);
        let status = loop {
            if let Some(s) = faulty.try_wait().unwrap() {
                break s;
            }
            assert!(Instant::now() < deadline, "{point}: the worker never reached the point");
            std::thread::sleep(Duration::from_millis(20));
        };
        // SIGABRT: it stopped at the point, not for another reason.
        assert_eq!(status.signal(), Some(6), "{point}: worker ended {status}");
        let state = plant.state(&id);
        let parts = plant.batch_dir(&id).join("parts");
        if point == thermosieve_worker::fault::DONE_RECORDED {
            assert_eq!(state, "done", "{point}");
            assert!(parts.is_dir(), "{point}: the parts should still be there");
        } else {
            assert_eq!(state, "finalizing", "{point}");
        }
        let mut healthy = plant.worker();
        assert!(plant.watch_done(&id), "{point}: batch {id} did not end DONE");
        let got = plant.fetch_case_ids(&id, &dir.path().join(point));
        assert_each_once(&got, &ids, point);
        plant.wait_for(&format!("{point}: the parts to be removed"), || !parts.exists());
        let leftovers: Vec<_> = std::fs::read_dir(plant.batch_dir(&id))
            .unwrap()
            .flatten()
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| n.contains(".tmp-"))
            .collect();
        assert!(leftovers.is_empty(), "{point}: temporary files left: {leftovers:?}");
        let _ = healthy.kill();
        let _ = healthy.wait();
        eprintln!(
            "worker stopped at {point}: {} cases DONE after {:.1} s",
            ids.len(),
            t0.elapsed().as_secs_f64()
        );
    }
}

/// Redis killed (SIGKILL) and started again from its append-only file while the finalizer sits
/// between steps: the same front, worker and `watch` carry on, and the batch ends DONE with
/// every case once.
#[test]
fn a_redis_restart_while_finalizing_ends_done_without_restarting_anything_else() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("screen.csv");
    let ids = write_input(&input, 1);
    let mut plant = Plant::start(RedisServer::start_with_aof(), 0);
    // (fault point, the file whose appearance shows the finalizer is paused there)
    let pauses = [
        (thermosieve_worker::fault::TABLES_WRITTEN, "species.parquet"),
        (thermosieve_worker::fault::MANIFEST_WRITTEN, "manifest.json"),
    ];
    for (point, sign) in pauses {
        let t0 = Instant::now();
        let mut worker = plant.worker_stopping_at(Some(&format!("{point}:sleep=3000")));
        let id = plant.run(&["submit", input.to_str().unwrap(), "--chunk-size", "500"]);
        let mut watch = bin();
        watch.args(["watch", &id]);
        plant.env(&mut watch);
        let mut watch = watch.spawn().unwrap();
        let sign = plant.batch_dir(&id).join(sign);
        plant.wait_for(&format!("{point}: {}", sign.display()), || sign.exists());
        plant.redis.kill();
        std::thread::sleep(Duration::from_millis(500));
        plant.redis.restart();
        let status = watch.wait().unwrap();
        assert!(status.success(), "{point}: watch of {id} ended {status}");
        assert_eq!(plant.state(&id), "done", "{point}");
        assert!(
            worker.try_wait().unwrap().is_none(),
            "{point}: the worker should have lived through it"
        );
        let got = plant.fetch_case_ids(&id, &dir.path().join(point));
        assert_each_once(&got, &ids, point);
        let parts = plant.batch_dir(&id).join("parts");
        plant.wait_for(&format!("{point}: the parts to be removed"), || !parts.exists());
        let _ = worker.kill();
        let _ = worker.wait();
        eprintln!(
            "redis restarted while paused at {point}: {} cases DONE after {:.1} s (3 s of it the pause)",
            ids.len(),
            t0.elapsed().as_secs_f64()
        );
    }
}
